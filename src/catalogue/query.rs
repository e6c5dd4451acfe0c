//! Filtered, ranked queries over one size of a catalogue. Chunks whose index summary cannot
//! match the filter are skipped unread; the rest are scanned in place, decoding only the columns
//! the filter and the rank keys read (see [`View`]). The best K are kept in a bounded heap of
//! small rows; full records are built at the end, from the few chunks that hold them.
//!
//! The order is the scorer's: rows implement [`RankFields`] and are compared by
//! [`crate::score::rank::compare`]. Ranking here is a screening heuristic over stored
//! descriptors, not a prediction of real-world stability. Printing is left to the CLI.
//!
//! [`Request`] is a query as a person writes it (the `cagerank query` options, the Python
//! package's keywords): [`answer`] parses its text fields, runs the query and joins the
//! tight-binding energies `screen` stored, so every front end gives the same rows and the same
//! one-line errors.

use super::chunk::{ChunkStats, Needs, View};
use super::energies::{self, Energies, EnergyHeader, EnergyRecord};
use super::format::DataFile;
use super::record::{shell_code, shell_from_code, shell_from_name, PointGroup, Record};
use super::{data_file_name, CatalogueError};
use crate::cage::FaceSet;
use crate::score::boron_nitride;
pub use crate::score::rank::RankKey;
use crate::score::rank::{self, default_keys, parse_keys, RankField, RankFields};
use crate::score::{nmr, Shell};
use crate::spiral::{check_fullerene_atoms, SpiralError};
use std::cmp::Ordering;
use std::collections::BinaryHeap;
use std::fmt;
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

/// Runs a query: matching records, best first, numbered, at most `top`. Without rank keys a
/// fullerene list is ranked by [`default_keys`] and a list of another face set by that set's
/// documented order ([`boron_nitride::default_order`]).
pub fn query(dir: &Path, q: &Query) -> Result<Vec<Record>, CatalogueError> {
    if q.face_set != FaceSet::Fullerene && q.rank_by.is_empty() {
        return query_in_set_order(dir, q);
    }
    query_by_keys(dir, q)
}

/// A face-set list in its set's default order: every matching record in spiral order, its
/// ranking facts (square or pentagon contacts and heptagons from the wound cage; the gap from
/// the record, or the BN gap of a 4-6 cage computed here), a stable sort (ties keep spiral
/// order), then `top`. These lists are small (all 4-5-6 cages of 32 atoms: 374), so holding
/// them whole is cheap.
fn query_in_set_order(dir: &Path, q: &Query) -> Result<Vec<Record>, CatalogueError> {
    let by_spiral = Query {
        rank_by: vec![RankKey {
            field: RankField::Spiral,
            descending: false,
        }],
        top: None,
        ..q.clone()
    };
    let records = query_by_keys(dir, &by_spiral)?;
    let mut facts = Vec::with_capacity(records.len());
    for r in &records {
        let spiral = r.spiral().map_err(|e| {
            CatalogueError::corrupt(
                &dir.join(data_file_name(q.face_set, q.atoms, q.ipr, q.charge)),
                crate::catalogue::Place::Index,
                format!("a record does not wind: {e}"),
            )
        })?;
        let fact = boron_nitride::facts_of_spiral(&spiral, q.face_set, f64::from(r.gap)).unwrap_or(
            boron_nitride::RankFacts {
                isolated_adjacencies: u32::MAX,
                heptagons: u32::MAX,
                gap: f64::NEG_INFINITY,
            },
        );
        facts.push(fact);
    }
    let order = boron_nitride::ranked_order(q.face_set, &facts);
    let mut slots: Vec<Option<Record>> = records.into_iter().map(Some).collect();
    Ok(order
        .into_iter()
        .take(q.top.unwrap_or(usize::MAX))
        .filter_map(|i| slots[i].take())
        .collect())
}

fn query_by_keys(dir: &Path, q: &Query) -> Result<Vec<Record>, CatalogueError> {
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

/// A query as a person writes it: the options of `cagerank query`, text where the user types
/// text. [`answer`] turns it into a [`Query`] with the CLI's checks and messages.
#[derive(Debug, Clone, PartialEq)]
pub struct Request {
    pub atoms: u32,
    pub ipr: bool,
    /// Face set name: `fullerene`, `4-6` or `4-5-6`.
    pub faces: String,
    pub charge: i32,
    pub top: Option<usize>,
    /// Sort keys, e.g. `pentagon_adjacencies,-gap`; may include [`ENERGY_KEY`].
    pub rank_by: Option<String>,
    pub max_pentagon_adjacencies: Option<u32>,
    pub min_gap: Option<f32>,
    /// Shell type name, e.g. `properly-closed`.
    pub shell: Option<String>,
    /// Schoenflies symbol, e.g. `D5h`.
    pub point_group: Option<String>,
    /// 13C NMR pattern `LINESxINTENSITY,...` that must match exactly.
    pub nmr: Option<String>,
    pub nmr_lines: Option<u64>,
    /// Measured 13C NMR pattern whose lines may have merged.
    pub nmr_merged: Option<String>,
    pub chiral: Option<bool>,
}

impl Request {
    /// Every isomer of one size and list, in the default order.
    pub fn new(atoms: u32, ipr: bool) -> Request {
        Request {
            atoms,
            ipr,
            faces: FaceSet::Fullerene.name().to_string(),
            charge: 0,
            top: None,
            rank_by: None,
            max_pentagon_adjacencies: None,
            min_gap: None,
            shell: None,
            point_group: None,
            nmr: None,
            nmr_lines: None,
            nmr_merged: None,
            chiral: None,
        }
    }

    /// The catalogue query this request asks for (without the energy key, which is not a
    /// catalogue column: see [`answer`]).
    pub fn to_query(&self) -> Result<Query, RequestError> {
        let invalid = |m: String| RequestError::Invalid(m);
        let shell = match &self.shell {
            Some(s) => Some(shell_from_name(s).ok_or_else(|| {
                invalid(format!(
                    "unknown shell type '{s}'; use properly-closed, pseudo-closed, meta-closed, open-doublet or open"
                ))
            })?),
            None => None,
        };
        let point_group = match &self.point_group {
            Some(g) => Some(PointGroup::from_name(g).ok_or_else(|| {
                invalid(format!(
                    "'{g}' is not a point group a cage can have; use e.g. Ih, D5h, C2v, C1"
                ))
            })?),
            None => None,
        };
        let pattern =
            |text: &str| nmr::parse_pattern(text, self.atoms).map_err(|e| invalid(e.to_string()));
        let nmr = self.nmr.as_deref().map(pattern).transpose()?;
        let nmr_merged = self.nmr_merged.as_deref().map(pattern).transpose()?;
        if self.nmr_lines == Some(0) {
            return Err(invalid(
                "--nmr-lines 0 matches nothing; every cage has at least 1 line".to_string(),
            ));
        }
        let rank_by = match self.rank_by.as_deref().map(split_energy_key) {
            Some((_, rest)) if rest.is_empty() => Vec::new(),
            Some((_, rest)) => parse_keys(&rest).map_err(|e| invalid(e.to_string()))?,
            None => Vec::new(),
        };
        Ok(Query {
            atoms: self.atoms,
            face_set: parse_faces(&self.faces)?,
            ipr: self.ipr,
            charge: self.charge,
            filter: Filter {
                max_pentagon_adjacencies: self.max_pentagon_adjacencies,
                min_gap: self.min_gap,
                shell,
                point_group,
                nmr,
                nmr_lines: self.nmr_lines,
                nmr_merged,
                chiral: self.chiral,
                ipr_only: false,
            },
            rank_by,
            top: self.top,
        })
    }
}

/// A face set by its name (`fullerene`, `4-6`, `4-5-6`).
pub fn parse_faces(text: &str) -> Result<FaceSet, RequestError> {
    FaceSet::from_label(text.trim()).ok_or_else(|| {
        RequestError::Invalid(format!(
            "unknown face set '{}'; use fullerene, 4-6, 4-5-6 or 5-6-7hH (H the heptagon bound \
             of the run, e.g. 5-6-7h1)",
            crate::id::printable(text)
        ))
    })
}

/// Why a [`Request`] got no answer.
#[derive(Debug)]
pub enum RequestError {
    /// The request itself is wrong (a bad name, pattern or count): the message says what to do.
    Invalid(String),
    /// The catalogue could not answer (see [`CatalogueError::is_user_error`]).
    Catalogue(CatalogueError),
}

impl fmt::Display for RequestError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            RequestError::Invalid(m) => f.write_str(m),
            RequestError::Catalogue(e) => e.fmt(f),
        }
    }
}

impl std::error::Error for RequestError {}

impl From<CatalogueError> for RequestError {
    fn from(e: CatalogueError) -> RequestError {
        RequestError::Catalogue(e)
    }
}

/// The key that ranks by stored tight-binding energies (not a catalogue column).
pub const ENERGY_KEY: &str = "relative_energy_kj";

/// Splits `relative_energy_kj` (with its sign) out of a rank-key list: whether it was there
/// and descending, and the other keys in their order.
fn split_energy_key(text: &str) -> (Option<bool>, String) {
    let mut energy = None;
    let mut rest = Vec::new();
    for key in text.split(',').map(str::trim).filter(|k| !k.is_empty()) {
        let descending = key.starts_with('-');
        if key.trim_start_matches(['-', '+']) == ENERGY_KEY {
            energy.get_or_insert(descending);
        } else {
            rest.push(key);
        }
    }
    (energy, rest.join(","))
}

/// Stored tight-binding energies of the queried run, joined to records by list number.
#[derive(Debug, Clone)]
pub struct StoredEnergies {
    energies: Option<Energies>,
    ipr: bool,
}

impl StoredEnergies {
    /// The energies `screen` stored for the run `q` reads (none is not an error).
    pub fn read(dir: &Path, q: &Query) -> Result<StoredEnergies, CatalogueError> {
        let key = EnergyHeader {
            face_set: q.face_set,
            atoms: q.atoms,
            ipr: q.ipr,
            charge: q.charge,
            model: crate::screen::MODEL.to_string(),
            max_force: 0.0,
            made_by: String::new(),
        };
        Ok(StoredEnergies {
            energies: energies::read(dir, &key)?,
            ipr: q.ipr,
        })
    }

    /// The stored result for `r` and its energy above the lowest, kJ/mol, if its spiral
    /// matches the one stored under its number.
    pub fn get(&self, r: &Record) -> Option<(&EnergyRecord, Option<f64>)> {
        let energies = self.energies.as_ref()?;
        let number = if self.ipr { r.ipr_number } else { r.number }?;
        let e = energies
            .get(number)
            .filter(|e| e.special_faces == r.special_faces)?;
        Some((e, energies.relative_kj(e)))
    }

    /// Energy of `r` above the lowest rankable isomer, kJ/mol.
    pub fn relative_kj(&self, r: &Record) -> Option<f64> {
        self.get(r).and_then(|(_, rel)| rel)
    }

    /// True when no energy is stored for the run.
    pub fn is_empty(&self) -> bool {
        self.energies.as_ref().is_none_or(|e| e.records.is_empty())
    }
}

/// The rows of a [`Request`], best first, with the stored energies to join to them.
#[derive(Debug, Clone)]
pub struct Answer {
    pub records: Vec<Record>,
    pub energies: StoredEnergies,
}

/// Answers `request` from the catalogue in `dir`: checks and parses it, queries, and when the
/// rank keys name [`ENERGY_KEY`] sorts by stored energy (isomers without one last, the other
/// keys breaking ties) before cutting to `top`.
pub fn answer(dir: &Path, request: &Request) -> Result<Answer, RequestError> {
    let mut q = request.to_query()?;
    if request.top == Some(0) {
        return Err(RequestError::Invalid(
            "--top 0 would show nothing; give K >= 1 or leave it out".to_string(),
        ));
    }
    let by_energy = request
        .rank_by
        .as_deref()
        .and_then(|t| split_energy_key(t).0);
    if by_energy.is_some() {
        q.top = None;
    }
    let mut records = query(dir, &q)?;
    let energies = StoredEnergies::read(dir, &q)?;
    if let Some(descending) = by_energy {
        if energies.is_empty() {
            return Err(RequestError::Invalid(no_energies(dir, &q)));
        }
        // Stable: records with equal (or no) energy keep the order of the other keys.
        records.sort_by(
            |a, b| match (energies.relative_kj(a), energies.relative_kj(b)) {
                (Some(x), Some(y)) if descending => y.total_cmp(&x),
                (Some(x), Some(y)) => x.total_cmp(&y),
                (Some(_), None) => Ordering::Less,
                (None, Some(_)) => Ordering::Greater,
                (None, None) => Ordering::Equal,
            },
        );
        records.truncate(request.top.unwrap_or(usize::MAX));
    }
    Ok(Answer { records, energies })
}

fn no_energies(dir: &Path, q: &Query) -> String {
    format!(
        "no tight-binding energies are stored for C{} ({} list, charge {:+}) in {}; run `cagerank screen --atoms {}{}{} --catalogue {}` first",
        q.atoms,
        if q.ipr { "IPR" } else { "complete" },
        q.charge,
        dir.display(),
        q.atoms,
        if q.ipr { " --ipr" } else { "" },
        if q.charge == 0 {
            String::new()
        } else {
            format!(" --charge {}", q.charge)
        },
        dir.display()
    )
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

/// The columns of a query's table and CSV, in order: `somo` only for runs with an odd electron
/// count, the two energy columns after `pentagon_adjacencies` when the run has stored energies.
/// The CLI and the Python package both print these, so they live here once.
pub fn columns(somo: bool, energies: bool) -> Vec<&'static str> {
    let mut names = vec![
        "rank",
        "number",
        "ipr_number",
        "point_group",
        "pentagon_adjacencies",
        "shell",
        "hexagon_strain",
        "gap",
        "pi_energy",
        "kekule",
        "chiral",
        "nmr",
        "spiral",
    ];
    if somo {
        names.insert(8, "somo");
    }
    if energies {
        names.splice(5..5, ["relative_energy_kj", "tb_gap_ev"]);
    }
    names
}
