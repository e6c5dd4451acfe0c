//! Filtered, ranked queries over one size of a catalogue. Chunks whose index summary cannot
//! match the filter are skipped unread; the rest are scanned in place, decoding only the columns
//! the filter and the rank keys read (see [`View`]). The best K are kept in a bounded heap of
//! small rows; full records are built at the end, from the few chunks that hold them.
//!
//! The order is the scorer's: rows implement [`RankFields`] and are compared by
//! [`crate::score::rank::compare`]. Ranking here is a screening heuristic over stored
//! descriptors, not a prediction of real-world stability. Printing is left to the CLI.

use super::chunk::{ChunkStats, Needs, View};
use super::format::DataFile;
use super::record::{shell_code, shell_from_code, PointGroup, Record};
use super::{data_file_name, CatalogueError};
use crate::cage::FaceSet;
pub use crate::score::rank::RankKey;
use crate::score::rank::{self, default_keys, RankField, RankFields};
use crate::score::{nmr, Shell};
use crate::spiral::{check_fullerene_atoms, SpiralError};
use std::cmp::Ordering;
use std::collections::BinaryHeap;
use std::path::Path;

/// Conditions a record must meet; `None` means "any".
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Filter {
    pub max_pentagon_adjacencies: Option<u32>,
    pub min_gap: Option<f32>,
    pub shell: Option<Shell>,
    pub point_group: Option<PointGroup>,
    /// 13C NMR pattern in normal form (see [`nmr::normalise`]): the record's must equal it.
    pub nmr: Option<Vec<(u32, u32)>>,
    /// Number of 13C NMR lines the record's pattern must have.
    pub nmr_lines: Option<u64>,
    /// A measured 13C NMR pattern whose lines may be merged (accidentally coincident): the
    /// record matches if its lines group into these (see [`nmr::merges_into`]).
    pub nmr_merged: Option<Vec<(u32, u32)>>,
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
    /// Cage charge of the run to read (0 for the neutral cage; see [`super::RunInfo::charge`]).
    pub charge: i32,
    pub filter: Filter,
    /// Sort keys (the scorer's `--rank-by` keys); empty means [`default_keys`].
    pub rank_by: Vec<RankKey>,
    pub top: Option<usize>,
}

/// Float columns of a chunk, in [`View::float`] order.
const STRAIN: usize = 1;
const HOMO: usize = 2;
const LUMO: usize = 3;
const GAP: usize = 4;
const PI: usize = 5;

/// One matching record as ranking sees it: the values of the rank keys (others left at zero),
/// its position in the file (spiral order) and where to find it again. While scanning, the
/// Kekulé bytes are borrowed from the chunk (`K = &[u8]`); only rows that are kept own them,
/// so a scan ranking by Kekulé count does not allocate per record.
#[derive(Debug, Clone)]
struct Row<K = Vec<u8>> {
    position: u64,
    chunk: u32,
    index: u32,
    pentagon_adjacencies: u32,
    shell: Shell,
    hexagon_strain: f32,
    gap: f32,
    homo: f32,
    lumo: f32,
    pi_energy: f32,
    automorphisms: u32,
    /// Little-endian, without high zero bytes; empty unless ranking by Kekulé count.
    kekule: K,
}

impl<'v> Row<&'v [u8]> {
    /// Reads the fields `keys` use from record `i` of `view` (the view must hold their columns).
    fn read(
        view: &'v View<'_>,
        i: usize,
        chunk: usize,
        position: u64,
        keys: &[RankKey],
    ) -> Row<&'v [u8]> {
        let mut row: Row<&'v [u8]> = Row {
            position,
            chunk: chunk as u32,
            index: i as u32,
            pentagon_adjacencies: 0,
            shell: Shell::ProperlyClosed,
            hexagon_strain: 0.0,
            gap: 0.0,
            homo: 0.0,
            lumo: 0.0,
            pi_energy: 0.0,
            automorphisms: 0,
            kekule: &[],
        };
        for key in keys {
            match key.field {
                RankField::PentagonAdjacencies => {
                    row.pentagon_adjacencies = view.pentagon_adjacencies(i)
                }
                RankField::Shell => {
                    row.shell = shell_from_code(view.shell_code(i))
                        .expect("invariant: shell codes are checked when a chunk is read")
                }
                RankField::HexagonStrain => row.hexagon_strain = view.float(STRAIN, i),
                RankField::Gap => row.gap = view.float(GAP, i),
                RankField::Homo => row.homo = view.float(HOMO, i),
                RankField::Lumo => row.lumo = view.float(LUMO, i),
                RankField::PiEnergy => row.pi_energy = view.float(PI, i),
                RankField::Kekule => {
                    let bytes = view.kekule_bytes(i);
                    let len = bytes.iter().rposition(|&b| b != 0).map_or(0, |p| p + 1);
                    row.kekule = &bytes[..len];
                }
                RankField::Automorphisms => row.automorphisms = view.automorphisms(i),
                RankField::Spiral => {}
            }
        }
        row
    }

    fn owned(&self) -> Row {
        self.with_kekule(self.kekule.to_vec())
    }
}

impl<K> Row<K> {
    fn with_kekule<L>(&self, kekule: L) -> Row<L> {
        Row {
            position: self.position,
            chunk: self.chunk,
            index: self.index,
            pentagon_adjacencies: self.pentagon_adjacencies,
            shell: self.shell,
            hexagon_strain: self.hexagon_strain,
            gap: self.gap,
            homo: self.homo,
            lumo: self.lumo,
            pi_energy: self.pi_energy,
            automorphisms: self.automorphisms,
            kekule,
        }
    }
}

impl Row {
    fn borrowed(&self) -> Row<&[u8]> {
        self.with_kekule(&self.kekule[..])
    }
}

/// Stored `f32` values widen exactly to `f64`, so the order is the `f32` order.
impl<K: AsRef<[u8]>> RankFields for Row<K> {
    fn pentagon_adjacencies(&self) -> u32 {
        self.pentagon_adjacencies
    }
    fn shell(&self) -> Shell {
        self.shell
    }
    fn hexagon_strain(&self) -> f64 {
        self.hexagon_strain.into()
    }
    fn gap(&self) -> f64 {
        self.gap.into()
    }
    fn homo(&self) -> f64 {
        self.homo.into()
    }
    fn lumo(&self) -> f64 {
        self.lumo.into()
    }
    fn pi_energy(&self) -> f64 {
        self.pi_energy.into()
    }
    fn automorphisms(&self) -> u32 {
        self.automorphisms
    }
    /// Without high zero bytes, the longer number is larger; equal lengths compare from the
    /// most significant byte.
    fn cmp_kekule(&self, other: &Row<K>) -> Ordering {
        let (a, b) = (self.kekule.as_ref(), other.kekule.as_ref());
        a.len()
            .cmp(&b.len())
            .then_with(|| a.iter().rev().cmp(b.iter().rev()))
    }
    /// Within one data file, position is spiral (isomer-number) order.
    fn cmp_spiral(&self, other: &Row<K>) -> Ordering {
        self.position.cmp(&other.position)
    }
}

/// The columns a query reads besides flags, point groups and floats.
fn needs(filter: &Filter, keys: &[RankKey]) -> Needs {
    let uses = |f: RankField| keys.iter().any(|k| k.field == f);
    Needs {
        pentagon_adjacencies: filter.max_pentagon_adjacencies.is_some()
            || uses(RankField::PentagonAdjacencies),
        automorphisms: uses(RankField::Automorphisms),
        kekule: uses(RankField::Kekule),
        nmr: filter.nmr.is_some() || filter.nmr_lines.is_some() || filter.nmr_merged.is_some(),
    }
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

    fn matches_in_view(&self, c: &View<'_>, i: usize) -> bool {
        self.max_pentagon_adjacencies
            .is_none_or(|m| c.pentagon_adjacencies(i) <= m)
            && self.min_gap.is_none_or(|g| c.float(GAP, i) >= g)
            && self
                .shell
                .is_none_or(|sh| c.shell_code(i) == shell_code(sh))
            && self
                .point_group
                .is_none_or(|g| c.point_group_code(i) == g.code())
            && self.chiral.is_none_or(|ch| c.chiral(i) == ch)
            && (!self.ipr_only || c.ipr(i))
            && self.nmr.as_ref().is_none_or(|want| nmr_matches(c, i, want))
            && self
                .nmr_lines
                .is_none_or(|want| c.nmr_pairs(i).map(|(_, n)| u64::from(n)).sum::<u64>() == want)
            && self.nmr_merged.as_ref().is_none_or(|measured| {
                nmr::merges_into(&c.nmr_pairs(i).collect::<Vec<_>>(), measured)
            })
    }
}

/// Whether record `i`'s NMR pattern has the normal form `want`. Stored patterns are normally
/// already in normal form (strictly decreasing intensities, no zero counts), and then a
/// direct comparison decides without allocating.
fn nmr_matches(c: &View<'_>, i: usize, want: &[(u32, u32)]) -> bool {
    let pairs = c.nmr_pairs(i);
    let mut prev = u32::MAX;
    let normal = pairs.clone().all(|(m, n)| {
        let ok = m < prev && n > 0;
        prev = m;
        ok
    });
    if normal {
        pairs.eq(want.iter().copied())
    } else {
        nmr::normalise(&pairs.collect::<Vec<_>>()) == want
    }
}

/// Picks the data file answering `q`, and whether IPR must be filtered from the complete list.
fn choose_file(dir: &Path, q: &Query) -> Result<(DataFile, bool), CatalogueError> {
    if q.face_set == FaceSet::Fullerene {
        if let Err(e) = check_fullerene_atoms(u64::from(q.atoms)) {
            let reason = match e {
                SpiralError::BadAtoms { reason, .. } => reason,
                other => other.to_string(),
            };
            return Err(CatalogueError::Request(format!(
                "no catalogue holds C{} fullerenes ({reason}); ask for 20 atoms or an even number \
                 from 24 on, e.g. --atoms {}",
                q.atoms,
                nearest_fullerene_size(q.atoms)
            )));
        }
    }
    let ipr_path = dir.join(data_file_name(q.face_set, q.atoms, true, q.charge));
    let all_path = dir.join(data_file_name(q.face_set, q.atoms, false, q.charge));
    let (path, ipr_only) = if q.ipr && ipr_path.exists() {
        (ipr_path, false)
    } else if all_path.exists() {
        (all_path, q.ipr)
    } else {
        let list = if q.ipr { "IPR or complete" } else { "complete" };
        let flag = if q.ipr { " --ipr" } else { "" };
        let (charge_text, charge_flag) = if q.charge == 0 {
            (String::new(), String::new())
        } else {
            (
                format!(", charge {:+}", q.charge),
                format!(" --charge {}", q.charge),
            )
        };
        return Err(CatalogueError::Missing {
            dir: dir.to_path_buf(),
            what: format!(
                "{list} list of C{} ({}{charge_text}); build it with `cagerank enumerate {}{flag}{charge_flag} --catalogue {}`",
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

/// The fullerene size closest to `atoms` (the even size below an odd one), for suggestions.
fn nearest_fullerene_size(atoms: u32) -> u32 {
    match atoms {
        0..=21 => 20,
        22 | 23 => 24,
        n => n.min(100_000) - n.min(100_000) % 2,
    }
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
    let needs = needs(&filter, keys);
    let mut kept = Kept::new(q.top, keys);
    let mut position = 0u64;
    for c in 0..file.chunk_count() {
        let entry = &file.index.chunks[c];
        let records = entry.records as u64;
        if filter.may_match(&entry.stats) {
            let view = file.scan_chunk(c, needs)?;
            for i in 0..view.len() {
                if filter.matches_in_view(&view, i) {
                    kept.offer(Row::read(&view, i, c, position + i as u64, keys));
                }
            }
        }
        position += records;
    }
    build(&mut file, kept.into_sorted())
}

/// Full, numbered records for `rows` (in that order), reading each chunk they come from once.
fn build(file: &mut DataFile, rows: Vec<Row>) -> Result<Vec<Record>, CatalogueError> {
    let mut by_chunk: Vec<(u32, u32, usize)> = rows
        .iter()
        .enumerate()
        .map(|(rank, r)| (r.chunk, r.index, rank))
        .collect();
    by_chunk.sort_unstable();
    let mut out: Vec<Option<Record>> = vec![None; rows.len()];
    let mut at = 0;
    while at < by_chunk.len() {
        let c = by_chunk[at].0;
        let chunk = file.read_chunk(c as usize)?;
        let mut ipr_before = 0u64;
        let mut next = 0usize;
        while at < by_chunk.len() && by_chunk[at].0 == c {
            let (_, i, rank) = by_chunk[at];
            while next < i as usize {
                ipr_before += chunk.ipr(next) as u64;
                next += 1;
            }
            let mut r = chunk.record(i as usize);
            file.number(c as usize, i as usize, ipr_before, &mut r);
            out[rank] = Some(r);
            at += 1;
        }
    }
    Ok(out
        .into_iter()
        .map(|r| r.expect("invariant: every kept row was built"))
        .collect())
}

/// A row ordered by the query's keys, so that the heap's top is the worst row kept.
struct Ranked<'k> {
    row: Row,
    keys: &'k [RankKey],
}

impl PartialEq for Ranked<'_> {
    fn eq(&self, other: &Self) -> bool {
        self.cmp(other) == Ordering::Equal
    }
}

impl Eq for Ranked<'_> {}

impl PartialOrd for Ranked<'_> {
    fn partial_cmp(&self, other: &Self) -> Option<Ordering> {
        Some(self.cmp(other))
    }
}

impl Ord for Ranked<'_> {
    fn cmp(&self, other: &Self) -> Ordering {
        rank::compare(&self.row, &other.row, self.keys)
    }
}

/// The best rows so far: a max-heap of at most `top` (worst on top), or every row when `top`
/// is unset.
struct Kept<'k> {
    top: Option<usize>,
    keys: &'k [RankKey],
    heap: BinaryHeap<Ranked<'k>>,
    all: Vec<Row>,
}

impl<'k> Kept<'k> {
    fn new(top: Option<usize>, keys: &'k [RankKey]) -> Kept<'k> {
        Kept {
            top,
            keys,
            heap: BinaryHeap::with_capacity(top.unwrap_or(0).min(1 << 16) + 1),
            all: Vec::new(),
        }
    }

    /// Keeps `row` if it beats the worst kept one (or there is room).
    fn offer(&mut self, row: Row<&[u8]>) {
        let Some(k) = self.top else {
            self.all.push(row.owned());
            return;
        };
        if self.heap.len() < k {
            self.heap.push(Ranked {
                row: row.owned(),
                keys: self.keys,
            });
        } else if let Some(mut worst) = self.heap.peek_mut() {
            if rank::compare(&row, &worst.row.borrowed(), self.keys) == Ordering::Less {
                *worst = Ranked {
                    row: row.owned(),
                    keys: self.keys,
                };
            }
        }
    }

    fn into_sorted(self) -> Vec<Row> {
        match self.top {
            None => {
                let mut all = self.all;
                all.sort_unstable_by(|a, b| rank::compare(a, b, self.keys));
                all
            }
            Some(_) => self
                .heap
                .into_sorted_vec()
                .into_iter()
                .map(|r| r.row)
                .collect(),
        }
    }
}
