//! Isomer numbers (the trade's complete-list and IPR-list positions): the numbers of a canonical
//! spiral ([`numbers`]) and the isomer behind an ID ([`locate`]).
//!
//! A number is the position of the canonical spiral among all canonical spirals of that size
//! (Fowler & Manolopoulos, Atlas of Fullerenes 1995). A catalogue stores its records in that
//! order, so when one holds the size the number is a binary search (spiral to number) or a direct
//! index (number to spiral) through the catalogue's read API; nothing is enumerated. Otherwise
//! `enumerate::lookup` runs only the units on one side of the target. The complete list is still
//! only searched up to [`COMPLETE_LIST_MAX_ATOMS`] and the IPR list up to [`IPR_LIST_MAX_ATOMS`];
//! beyond them a number is reported as not computed, with the way to get it (a catalogue of that
//! size). Only catalogue files written as one whole run by a search known to find every cage are
//! trusted. Reading the files is left to `catalogue`; this module only asks it.

use crate::cage::FaceSet;
use crate::catalogue::{data_file_name, CatalogueError, DataFile};
use crate::enumerate::faces::SizeError;
use crate::enumerate::{self, Spec};
use crate::id::{IsomerId, List};
use crate::spiral::{Spiral, SpiralError};
use std::cmp::Ordering;
use std::path::Path;

/// Largest cage whose complete-list number is searched for without a catalogue. C84 has 51,592
/// isomers (OEIS A007894); a cage in the middle of the list costs half of them (about 10-15 s on
/// two cores), one near either end far less (IPR cages sit at the end: see `enumerate::lookup`).
/// Beyond this a catalogue is needed (a judgement call, not measured per machine).
pub const COMPLETE_LIST_MAX_ATOMS: usize = 84;

/// Largest cage whose IPR-list number is searched for without a catalogue (the IPR search prunes
/// hard; C120 has 10,774 IPR isomers, OEIS A046880). A judgement call, not measured per machine.
pub const IPR_LIST_MAX_ATOMS: usize = 120;

/// Largest cage of another face set (4-6, 4-5-6, 5-6-7) whose numbers are searched for without
/// a catalogue. These searches keep no completion store and count from the front only (no
/// published totals), so a number costs the whole list up to the isomer: all 4-5-6 cages of 40
/// atoms take a few seconds on two cores, and the lists grow about 1.6-fold per two atoms
/// (README, "Other face sets"). A judgement call, not measured per machine; beyond it a
/// catalogue of the size (`enumerate --faces ... --catalogue`) is needed.
pub const CAGES_MAX_ATOMS: usize = 40;

/// One isomer number, or why it is not given.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Number {
    /// Position in the list (1-based).
    Listed(u64),
    /// The cage is not on this list (a non-IPR cage has no IPR number).
    NotListed,
    /// Not computed: the size is beyond the search limit and no catalogue holds it.
    NotComputed { limit: usize },
}

impl Number {
    pub fn listed(self) -> Option<u64> {
        match self {
            Number::Listed(n) => Some(n),
            _ => None,
        }
    }
}

/// Complete-list and IPR-list numbers of a cage.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Numbers {
    pub complete: Number,
    pub ipr: Number,
}

impl Numbers {
    /// The IDs these numbers give, complete list first (`C84:all-51591`, `C84:IPR-23`).
    pub fn ids(&self, atoms: usize) -> Vec<IsomerId> {
        self.ids_in(FaceSet::Fullerene, atoms)
    }

    /// The IDs these numbers give in the lists of `set`, complete list first
    /// (`B12N12:4-6-all-3`, `B12N12:4-6-iso-1`).
    pub fn ids_in(&self, set: FaceSet, atoms: usize) -> Vec<IsomerId> {
        let atoms = atoms as u32;
        let mut out = Vec::new();
        if let Some(n) = self.complete.listed() {
            out.push(IsomerId::of(set, atoms, List::All, n));
        }
        if let Some(n) = self.ipr.listed() {
            out.push(IsomerId::of(set, atoms, List::Ipr, n));
        }
        out
    }
}

/// An isomer found by its ID: its canonical spiral and both numbers.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Located {
    pub spiral: Spiral,
    pub numbers: Numbers,
}

/// Why numbers could not be looked up.
#[derive(Debug)]
pub enum NumbersError {
    Catalogue(CatalogueError),
    /// No fullerene has this many atoms.
    Size(SpiralError),
    /// No cage of the ID's face set has this many atoms.
    CageSize(SizeError),
}

impl std::fmt::Display for NumbersError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            NumbersError::Catalogue(e) => write!(f, "cannot read the catalogue: {e}"),
            NumbersError::Size(e) => e.fmt(f),
            NumbersError::CageSize(e) => e.fmt(f),
        }
    }
}

impl std::error::Error for NumbersError {}

/// Called with (units done, units to run) while a list is searched; a catalogue lookup never
/// calls it.
pub type Progress<'a> = &'a mut dyn FnMut(usize, usize);

/// Numbers of a canonical fullerene spiral (`ipr`: the cage obeys the isolated-pentagon rule):
/// from the catalogue in `catalogue` when it holds the size, otherwise by searching the list
/// within the size limits.
pub fn numbers(
    spiral: &Spiral,
    ipr: bool,
    catalogue: Option<&Path>,
) -> Result<Numbers, NumbersError> {
    numbers_with_progress(spiral, ipr, catalogue, &mut |_, _| {})
}

/// As [`numbers`], reporting the progress of any search.
pub fn numbers_with_progress(
    spiral: &Spiral,
    ipr: bool,
    catalogue: Option<&Path>,
    progress: Progress,
) -> Result<Numbers, NumbersError> {
    numbers_in(FaceSet::Fullerene, spiral, ipr, catalogue, progress)
}

/// Numbers of a canonical spiral in the lists of `set` (`isolated`: the cage obeys the set's
/// isolation rule, so it has a number in the isolated list too), as [`numbers_with_progress`]
/// does for fullerenes. For the other face sets both lists are searched up to
/// [`CAGES_MAX_ATOMS`] when no catalogue holds them.
pub fn numbers_in(
    set: FaceSet,
    spiral: &Spiral,
    isolated: bool,
    catalogue: Option<&Path>,
    progress: Progress,
) -> Result<Numbers, NumbersError> {
    let ipr = isolated;
    let (complete, ipr_number) = match catalogue {
        Some(dir) => from_catalogue_in(dir, set, spiral, ipr).map_err(NumbersError::Catalogue)?,
        None => (None, (!ipr).then_some(Number::NotListed)),
    };
    let atoms = spiral.atoms();
    let (complete_limit, ipr_limit) = search_limits(set);
    let (complete, ipr_number) = match (complete, ipr_number) {
        (Some(c), Some(i)) => (c, i),
        (None, known_ipr) if atoms <= complete_limit => {
            // One pass over the complete list gives both numbers.
            let (c, i) = search(set, spiral, false, progress);
            (c, known_ipr.unwrap_or(i))
        }
        (c, i) => (
            c.unwrap_or(Number::NotComputed {
                limit: complete_limit,
            }),
            match i {
                Some(i) => i,
                None if atoms <= ipr_limit => search(set, spiral, true, progress).1,
                None => Number::NotComputed { limit: ipr_limit },
            },
        ),
    };
    Ok(Numbers {
        complete,
        ipr: ipr_number,
    })
}

/// Numbers of a canonical fullerene spiral by searching the lists, within the size limits.
pub fn by_enumeration(spiral: &Spiral, ipr: bool) -> Numbers {
    numbers_with_progress(spiral, ipr, None, &mut |_, _| {})
        .expect("invariant: without a catalogue nothing is read")
}

/// Largest sizes whose (complete, isolated) lists of `set` are searched without a catalogue.
fn search_limits(set: FaceSet) -> (usize, usize) {
    match set {
        FaceSet::Fullerene => (COMPLETE_LIST_MAX_ATOMS, IPR_LIST_MAX_ATOMS),
        _ => (CAGES_MAX_ATOMS, CAGES_MAX_ATOMS),
    }
}

/// (complete-list, IPR-list) numbers from one search of one list of `set`; the complete list
/// gives both, the IPR (isolated) list only the second.
fn search(set: FaceSet, spiral: &Spiral, ipr_list: bool, progress: Progress) -> (Number, Number) {
    let Ok(spec) = Spec::cages(spiral.atoms() as u64, set, ipr_list) else {
        return (Number::NotListed, Number::NotListed);
    };
    let listed = |n: Option<u64>| n.map_or(Number::NotListed, Number::Listed);
    match enumerate::number_of(&spec, spiral, progress) {
        Some(iso) => (listed(iso.number), listed(iso.ipr_number)),
        None => (Number::NotListed, Number::NotListed),
    }
}

/// Position of `spiral` in the complete or IPR list of its size, running only the units on one
/// side of it (lists come in increasing spiral order).
pub fn position_in_list(spiral: &Spiral, ipr: bool) -> Number {
    let (complete, ipr_number) = search(FaceSet::Fullerene, spiral, ipr, &mut |_, _| {});
    if ipr {
        ipr_number
    } else {
        complete
    }
}

/// Numbers read from the catalogue in `dir`: the complete-list file of the size gives both
/// numbers, the IPR-list file the IPR number. `None` for a list whose file is absent, sharded
/// or untrusted, so the caller can fall back to a search.
pub fn from_catalogue(
    dir: &Path,
    spiral: &Spiral,
    ipr: bool,
) -> Result<(Option<Number>, Option<Number>), CatalogueError> {
    from_catalogue_in(dir, FaceSet::Fullerene, spiral, ipr)
}

/// As [`from_catalogue`], in the data files of face set `set` (`ipr`: the cage obeys the set's
/// isolation rule).
pub fn from_catalogue_in(
    dir: &Path,
    set: FaceSet,
    spiral: &Spiral,
    ipr: bool,
) -> Result<(Option<Number>, Option<Number>), CatalogueError> {
    let atoms = spiral.atoms() as u32;
    let mut complete = None;
    let mut ipr_number = (!ipr).then_some(Number::NotListed);
    if let Some(mut file) = open_trusted(dir, set, atoms, false)? {
        let hit = find_spiral(&mut file, spiral)?;
        complete = Some(listed(hit.and_then(|h| h.0)));
        if ipr {
            ipr_number = Some(listed(hit.and_then(|h| h.1)));
        }
    }
    if ipr_number.is_none() {
        if let Some(mut file) = open_trusted(dir, set, atoms, true)? {
            let hit = find_spiral(&mut file, spiral)?;
            ipr_number = Some(listed(hit.and_then(|h| h.1)));
        }
    }
    Ok((complete, ipr_number))
}

fn listed(n: Option<u64>) -> Number {
    n.map_or(Number::NotListed, Number::Listed)
}

/// The isomer named by `id`, with both numbers: from the catalogue in `catalogue` when it holds
/// the list (a direct index), otherwise by searching the list up to the number; the other
/// list's number likewise (within the search limits). `Ok(None)` if the list is shorter than
/// the number. This is what `show C84:IPR-23` needs.
pub fn locate(
    id: IsomerId,
    catalogue: Option<&Path>,
    progress: Progress,
) -> Result<Option<Located>, NumbersError> {
    locate_with(id, catalogue, true, progress)
}

/// As [`locate`], but the other list's number is only read from a catalogue, never searched
/// for (it is `NotComputed` otherwise): for a caller that needs the cage, not both numbers.
pub fn locate_in_list(
    id: IsomerId,
    catalogue: Option<&Path>,
    progress: Progress,
) -> Result<Option<Located>, NumbersError> {
    locate_with(id, catalogue, false, progress)
}

fn locate_with(
    id: IsomerId,
    catalogue: Option<&Path>,
    search_other: bool,
    progress: Progress,
) -> Result<Option<Located>, NumbersError> {
    let spec = if id.face_set == FaceSet::Fullerene {
        Spec::fullerene(u64::from(id.atoms), id.list.is_ipr()).map_err(NumbersError::Size)?
    } else {
        Spec::cages(u64::from(id.atoms), id.face_set, id.list.is_ipr())
            .map_err(NumbersError::CageSize)?
    };
    let from_file = match catalogue {
        Some(dir) => by_number_in_catalogue(dir, id).map_err(NumbersError::Catalogue)?,
        None => None,
    };
    let (spiral, ipr, known) = match from_file {
        Some(Some((spiral, numbers))) => {
            let ipr = spiral.to_cage().is_isolated(id.face_set);
            (spiral, ipr, numbers)
        }
        Some(None) => return Ok(None),
        None => match enumerate::isomer_numbered(&spec, id.number, &mut *progress) {
            Some(iso) => (iso.spiral, iso.ipr, (iso.number, iso.ipr_number)),
            None => return Ok(None),
        },
    };
    let numbers = match known {
        (Some(c), Some(i)) => Numbers {
            complete: Number::Listed(c),
            ipr: Number::Listed(i),
        },
        (Some(c), None) if !ipr => Numbers {
            complete: Number::Listed(c),
            ipr: Number::NotListed,
        },
        (c, i) => {
            let mut rest = if search_other {
                numbers_in(id.face_set, &spiral, ipr, catalogue, progress)?
            } else {
                catalogue_only(id.face_set, &spiral, ipr, catalogue)?
            };
            if let Some(c) = c {
                rest.complete = Number::Listed(c);
            }
            if let Some(i) = i {
                rest.ipr = Number::Listed(i);
            }
            rest
        }
    };
    Ok(Some(Located { spiral, numbers }))
}

/// Numbers a catalogue gives, `NotComputed` for the rest.
fn catalogue_only(
    set: FaceSet,
    spiral: &Spiral,
    ipr: bool,
    catalogue: Option<&Path>,
) -> Result<Numbers, NumbersError> {
    let (complete, ipr_number) = match catalogue {
        Some(dir) => from_catalogue_in(dir, set, spiral, ipr).map_err(NumbersError::Catalogue)?,
        None => (None, None),
    };
    let not_computed = Number::NotComputed { limit: 0 };
    Ok(Numbers {
        complete: complete.unwrap_or(not_computed),
        ipr: ipr_number.unwrap_or(if ipr { not_computed } else { Number::NotListed }),
    })
}

/// A catalogue record's (complete-list number, IPR-list number).
type ListNumbers = (Option<u64>, Option<u64>);

/// The data file of one list if it exists, is one whole (numbered) run, and was made by a
/// search known to find every cage of that list.
fn open_trusted(
    dir: &Path,
    set: FaceSet,
    atoms: u32,
    ipr: bool,
) -> Result<Option<DataFile>, CatalogueError> {
    let path = dir.join(data_file_name(set, atoms, ipr, 0));
    if !path.is_file() {
        return Ok(None);
    }
    let file = DataFile::open(&path)?;
    let info = &file.info;
    let spec = Spec {
        atoms: info.atoms,
        face_set: info.face_set,
        ipr: info.ipr,
        all_starts: info.all_starts,
    };
    let trusted =
        info.shard.is_none() && info.atoms == atoms && info.ipr == ipr && info.face_set == set;
    Ok((trusted && spec.starts_verified() && spec.spiral_complete()).then_some(file))
}

/// The face sizes of a record's spiral (hexagons everywhere but its special faces).
fn record_sizes(faces: usize, special: &[(u32, u8)]) -> Vec<u8> {
    let mut sizes = vec![6u8; faces];
    for &(pos, size) in special {
        if let Some(slot) = (pos as usize).checked_sub(1).and_then(|i| sizes.get_mut(i)) {
            *slot = size;
        }
    }
    sizes
}

/// Binary search of a data file (records are stored in canonical-spiral order): the numbers of
/// the record with this spiral, or `None` if the file does not hold it.
fn find_spiral(
    file: &mut DataFile,
    spiral: &Spiral,
) -> Result<Option<ListNumbers>, CatalogueError> {
    let faces = spiral.sizes().len();
    let target = spiral.sizes();
    let chunks = file.chunk_count();
    // The last chunk whose first record is not after the target.
    let (mut lo, mut hi) = (0usize, chunks);
    while hi - lo > 1 {
        let mid = (lo + hi) / 2;
        let chunk = file.read_chunk(mid)?;
        if chunk.is_empty() {
            hi = mid;
            continue;
        }
        let first = record_sizes(faces, &chunk.record(0).special_faces);
        if first.as_slice() <= target {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    if chunks == 0 {
        return Ok(None);
    }
    let chunk = file.read_chunk(lo)?;
    let (mut a, mut b) = (0usize, chunk.len());
    while a < b {
        let mid = (a + b) / 2;
        let sizes = record_sizes(faces, &chunk.record(mid).special_faces);
        match sizes.as_slice().cmp(target) {
            Ordering::Less => a = mid + 1,
            Ordering::Greater => b = mid,
            Ordering::Equal => {
                let ipr_before = (0..mid).filter(|&j| chunk.ipr(j)).count() as u64;
                let mut record = chunk.record(mid);
                file.number(lo, mid, ipr_before, &mut record);
                return Ok(Some((record.number, record.ipr_number)));
            }
        }
    }
    Ok(None)
}

/// The isomer at `id`'s position read from a catalogue: `None` if no trusted file holds the
/// list, `Some(None)` if the list is shorter than the number.
fn by_number_in_catalogue(
    dir: &Path,
    id: IsomerId,
) -> Result<Option<Option<(Spiral, ListNumbers)>>, CatalogueError> {
    let own = open_trusted(dir, id.face_set, id.atoms, id.list.is_ipr())?;
    let (mut file, count_ipr) = match (own, id.list) {
        (Some(f), _) => (f, false),
        (None, List::Ipr) => match open_trusted(dir, id.face_set, id.atoms, false)? {
            Some(f) => (f, true),
            None => return Ok(None),
        },
        (None, List::All) => return Ok(None),
    };
    // Chunk c holds the records numbered after `before` (IPR records only when `count_ipr`).
    let mut before = 0u64;
    for c in 0..file.chunk_count() {
        let entry = &file.index.chunks[c];
        let here = if count_ipr {
            entry.stats.ipr
        } else {
            u64::from(entry.records)
        };
        if id.number > before + here {
            before += here;
            continue;
        }
        let chunk = file.read_chunk(c)?;
        let wanted = id.number - before;
        let mut ipr_seen = 0u64;
        for i in 0..chunk.len() {
            let is_ipr = chunk.ipr(i);
            let position = if count_ipr {
                ipr_seen + u64::from(is_ipr)
            } else {
                i as u64 + 1
            };
            if position == wanted && (!count_ipr || is_ipr) {
                let mut record = chunk.record(i);
                file.number(c, i, ipr_seen, &mut record);
                let path = file.path().to_path_buf();
                let spiral = record.spiral().map_err(|e| {
                    CatalogueError::corrupt(
                        &path,
                        crate::catalogue::Place::Chunk(c as u32),
                        format!("record {} does not wind: {e}", i + 1),
                    )
                })?;
                return Ok(Some(Some((spiral, (record.number, record.ipr_number)))));
            }
            ipr_seen += u64::from(is_ipr);
        }
        return Ok(Some(None));
    }
    Ok(Some(None))
}
