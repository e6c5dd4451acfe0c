//! Filtered, ranked queries over one size of a catalogue. Chunks whose index summary cannot
//! match the filter are skipped unread; the rest are scanned column-wise and a record is only
//! built when it passes the filter and enters the top K.
//!
//! Ranking here is a screening heuristic over stored descriptors, not a prediction of real-world
//! stability. Printing is left to the CLI.

use super::chunk::{Chunk, ChunkStats};
use super::format::DataFile;
use super::record::{normalise_nmr, shell_code, PointGroup, Record};
use super::{data_file_name, CatalogueError};
use crate::cage::FaceSet;
pub use crate::score::rank::RankKey;
use crate::score::rank::{default_keys, RankField};
use crate::score::Shell;
use num_bigint::BigUint;
use std::cmp::Ordering;
use std::path::Path;

/// Conditions a record must meet; `None` means "any".
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Filter {
    pub max_pentagon_adjacencies: Option<u32>,
    pub min_gap: Option<f32>,
    pub shell: Option<Shell>,
    pub point_group: Option<PointGroup>,
    /// 13C NMR pattern in normal form (see [`normalise_nmr`]).
    pub nmr: Option<Vec<(u32, u32)>>,
    pub chiral: Option<bool>,
    /// Keep IPR cages only (used when an IPR query is answered from the complete list).
    pub ipr_only: bool,
}

/// A query over one size of one face set.
#[derive(Debug, Clone, PartialEq)]
pub struct Query {
    pub atoms: u32,
    pub face_set: FaceSet,
    /// IPR isomers only (answered from the IPR file, or from the complete list if that is all there is).
    pub ipr: bool,
    pub filter: Filter,
    /// Sort keys (the scorer's `--rank-by` keys); empty means [`default_keys`].
    pub rank_by: Vec<RankKey>,
    pub top: Option<usize>,
}

/// What ranking reads from a record, whether built or still in columns.
trait Ranked {
    fn pa(&self) -> u32;
    fn shell(&self) -> u8;
    fn homo(&self) -> f32;
    fn lumo(&self) -> f32;
    fn gap(&self) -> f32;
    fn strain(&self) -> f32;
    fn pi(&self) -> f32;
    fn kekule(&self) -> BigUint;
    fn automorphisms(&self) -> u32;
}

impl Ranked for Record {
    fn pa(&self) -> u32 {
        self.pentagon_adjacencies
    }
    fn shell(&self) -> u8 {
        shell_code(self.shell)
    }
    fn homo(&self) -> f32 {
        self.homo
    }
    fn lumo(&self) -> f32 {
        self.lumo
    }
    fn gap(&self) -> f32 {
        self.gap
    }
    fn strain(&self) -> f32 {
        self.hexagon_strain
    }
    fn pi(&self) -> f32 {
        self.pi_energy
    }
    fn kekule(&self) -> BigUint {
        self.kekule.clone()
    }
    fn automorphisms(&self) -> u32 {
        self.automorphisms
    }
}

/// Record `i` of a decoded chunk, read in place.
struct InChunk<'a>(&'a Chunk, usize);

impl Ranked for InChunk<'_> {
    fn pa(&self) -> u32 {
        self.0.pentagon_adjacencies(self.1)
    }
    fn shell(&self) -> u8 {
        self.0.shell_code(self.1)
    }
    fn homo(&self) -> f32 {
        self.0.homo(self.1)
    }
    fn lumo(&self) -> f32 {
        self.0.lumo(self.1)
    }
    fn gap(&self) -> f32 {
        self.0.gap(self.1)
    }
    fn strain(&self) -> f32 {
        self.0.hexagon_strain(self.1)
    }
    fn pi(&self) -> f32 {
        self.0.pi_energy(self.1)
    }
    fn kekule(&self) -> BigUint {
        self.0.kekule(self.1)
    }
    fn automorphisms(&self) -> u32 {
        self.0.automorphisms(self.1)
    }
}

/// Comparison by `keys` (each ascending unless marked descending), ties broken by position,
/// which within one data file is spiral (isomer-number) order: the scorer's ranking rule.
fn compare(a: &impl Ranked, pa: u64, b: &impl Ranked, pb: u64, keys: &[RankKey]) -> Ordering {
    for key in keys {
        let ord = match key.field {
            RankField::PentagonAdjacencies => a.pa().cmp(&b.pa()),
            RankField::Shell => a.shell().cmp(&b.shell()),
            RankField::HexagonStrain => a.strain().total_cmp(&b.strain()),
            RankField::Gap => a.gap().total_cmp(&b.gap()),
            RankField::Homo => a.homo().total_cmp(&b.homo()),
            RankField::Lumo => a.lumo().total_cmp(&b.lumo()),
            RankField::PiEnergy => a.pi().total_cmp(&b.pi()),
            RankField::Kekule => a.kekule().cmp(&b.kekule()),
            RankField::Automorphisms => a.automorphisms().cmp(&b.automorphisms()),
            RankField::Spiral => pa.cmp(&pb),
        };
        let ord = if key.descending { ord.reverse() } else { ord };
        if ord != Ordering::Equal {
            return ord;
        }
    }
    pa.cmp(&pb)
}

impl Filter {
    /// False when the chunk summary proves no record in it can match.
    fn may_match(&self, s: &ChunkStats) -> bool {
        let pa = self
            .max_pentagon_adjacencies
            .is_none_or(|m| s.min_pentagon_adjacencies <= m);
        let gap = self.min_gap.is_none_or(|g| s.max_gap >= g);
        let shell = self
            .shell
            .is_none_or(|sh| s.shells & (1 << shell_code(sh)) != 0);
        let group = self
            .point_group
            .is_none_or(|g| s.point_groups & (1 << g.code()) != 0);
        let chiral = self
            .chiral
            .is_none_or(|c| s.chirality & (1 << c as u8) != 0);
        let ipr = !self.ipr_only || s.ipr > 0;
        pa && gap && shell && group && chiral && ipr
    }

    fn matches_in_chunk(&self, c: &Chunk, i: usize) -> bool {
        self.max_pentagon_adjacencies
            .is_none_or(|m| c.pentagon_adjacencies(i) <= m)
            && self.min_gap.is_none_or(|g| c.gap(i) >= g)
            && self
                .shell
                .is_none_or(|sh| c.shell_code(i) == shell_code(sh))
            && self
                .point_group
                .is_none_or(|g| c.point_group_code(i) == g.code())
            && self.chiral.is_none_or(|ch| c.chiral(i) == ch)
            && (!self.ipr_only || c.ipr(i))
            && self.nmr.as_ref().is_none_or(|want| {
                let pairs: Vec<(u32, u32)> = c.nmr_pairs(i).collect();
                normalise_nmr(&pairs) == *want
            })
    }
}

/// Picks the data file answering `q`, and whether IPR must be filtered from the complete list.
fn choose_file(dir: &Path, q: &Query) -> Result<(DataFile, bool), CatalogueError> {
    let ipr_path = dir.join(data_file_name(q.face_set, q.atoms, true));
    let all_path = dir.join(data_file_name(q.face_set, q.atoms, false));
    let (path, ipr_only) = if q.ipr && ipr_path.exists() {
        (ipr_path, false)
    } else if all_path.exists() {
        (all_path, q.ipr)
    } else {
        let list = if q.ipr { "IPR or complete" } else { "complete" };
        let flag = if q.ipr { " --ipr" } else { "" };
        return Err(CatalogueError::Missing {
            dir: dir.to_path_buf(),
            what: format!(
                "{list} list of C{} ({}); build it with `cagerank enumerate {}{flag} --catalogue {}`",
                q.atoms,
                q.face_set,
                q.atoms,
                dir.display()
            ),
        });
    };
    let file = DataFile::open(&path)?;
    if let Some(s) = file.info.shard {
        return Err(CatalogueError::Missing {
            dir: dir.to_path_buf(),
            what: format!(
                "whole run in {} (it holds shard {s} only); merge the shards first",
                path.display()
            ),
        });
    }
    Ok((file, ipr_only))
}

/// Runs a query: matching records, best first, numbered, at most `top`.
pub fn query(dir: &Path, q: &Query) -> Result<Vec<Record>, CatalogueError> {
    let (mut file, ipr_only) = choose_file(dir, q)?;
    let filter = Filter {
        ipr_only: ipr_only || q.filter.ipr_only,
        ..q.filter.clone()
    };
    let default = default_keys();
    let keys: &[RankKey] = if q.rank_by.is_empty() {
        &default
    } else {
        &q.rank_by
    };
    let mut kept = Kept::new(q.top, keys);
    let mut position = 0u64;
    for c in 0..file.chunk_count() {
        let entry = &file.index.chunks[c];
        let records = entry.records as u64;
        if filter.may_match(&entry.stats) {
            let chunk = file.read_chunk(c)?;
            scan_chunk(&file, c, &chunk, position, &filter, &mut kept);
        }
        position += records;
    }
    Ok(kept.into_sorted())
}

fn scan_chunk(
    file: &DataFile,
    c: usize,
    chunk: &Chunk,
    base: u64,
    filter: &Filter,
    kept: &mut Kept,
) {
    let mut ipr_before = 0u64;
    for i in 0..chunk.len() {
        let ipr = chunk.ipr(i);
        if filter.matches_in_chunk(chunk, i) && kept.wants(&InChunk(chunk, i), base + i as u64) {
            let mut r = chunk.record(i);
            file.number(c, i, ipr_before, &mut r);
            kept.insert(r, base + i as u64);
        }
        ipr_before += ipr as u64;
    }
}

/// The best records so far, sorted best-first (bounded when `top` is set).
struct Kept<'k> {
    top: Option<usize>,
    keys: &'k [RankKey],
    list: Vec<(Record, u64)>,
}

impl<'k> Kept<'k> {
    fn new(top: Option<usize>, keys: &'k [RankKey]) -> Kept<'k> {
        Kept {
            top,
            keys,
            list: Vec::new(),
        }
    }

    /// Would a record with these values enter the list?
    fn wants(&self, r: &impl Ranked, pos: u64) -> bool {
        match (self.top, self.list.last()) {
            (None, _) => true,
            (Some(k), Some((worst, wpos))) if self.list.len() >= k => {
                compare(r, pos, worst, *wpos, self.keys) == Ordering::Less
            }
            (Some(k), _) => k > 0,
        }
    }

    fn insert(&mut self, r: Record, pos: u64) {
        if self.top.is_none() {
            self.list.push((r, pos));
            return;
        }
        let at = self
            .list
            .partition_point(|(x, xp)| compare(x, *xp, &r, pos, self.keys) == Ordering::Less);
        self.list.insert(at, (r, pos));
        if let Some(k) = self.top {
            self.list.truncate(k);
        }
    }

    fn into_sorted(mut self) -> Vec<Record> {
        if self.top.is_none() {
            let keys = self.keys;
            self.list
                .sort_by(|(a, pa), (b, pb)| compare(a, *pa, b, *pb, keys));
        }
        self.list.into_iter().map(|(r, _)| r).collect()
    }
}
