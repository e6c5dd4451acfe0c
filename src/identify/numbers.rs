//! Isomer numbers (the trade's complete-list and IPR-list positions) of an identified cage.
//!
//! A number is the position of the canonical spiral among all canonical spirals of that size
//! (Fowler & Manolopoulos, Atlas of Fullerenes 1995), so finding it means enumerating the list up
//! to the cage. That is cheap for small cages and slow for large ones, so the enumerator is only
//! run up to [`COMPLETE_LIST_MAX_ATOMS`] (complete list) and [`IPR_LIST_MAX_ATOMS`] (IPR list);
//! beyond that the number is reported as not computed, with the way to get it (a catalogue of that
//! size). Reading catalogues is left to `catalogue`; this module only asks it.

use crate::cage::FaceSet;
use crate::catalogue::record::special_faces_of;
use crate::catalogue::{data_file_name, CatalogueError, DataFile};
use crate::enumerate::{list_number_of, EnumerateError};
use crate::spiral::Spiral;
use std::path::Path;

/// Largest cage whose complete-list number is found by enumeration. C84 has 51592 (OEIS A007894)
/// isomers; C100's 285914 take minutes (hexagon starts included, docs/performance.md), too slow
/// to run per structure by default (threshold: a judgement call, not measured per machine).
pub const COMPLETE_LIST_MAX_ATOMS: usize = 84;

/// Largest cage whose IPR-list number is found by enumeration (the IPR search prunes hard; C120
/// has 10774 IPR isomers, OEIS A046880). A judgement call, not measured per machine.
pub const IPR_LIST_MAX_ATOMS: usize = 120;

/// One isomer number, or why it is not given.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Number {
    /// Position in the list (1-based).
    Listed(u64),
    /// The cage is not on this list (a non-IPR cage has no IPR number).
    NotListed,
    /// Not computed: the size is beyond the enumeration limit and no catalogue was given.
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

/// Why numbers could not be looked up.
#[derive(Debug)]
pub enum NumbersError {
    Catalogue(CatalogueError),
    Enumerate(EnumerateError),
}

impl std::fmt::Display for NumbersError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            NumbersError::Catalogue(e) => write!(f, "cannot read the catalogue: {e}"),
            NumbersError::Enumerate(e) => write!(f, "cannot enumerate to find the number: {e}"),
        }
    }
}

impl std::error::Error for NumbersError {}

/// Numbers of a canonical fullerene spiral: from the catalogue in `catalogue` when it holds the
/// size, otherwise by enumeration within the size limits.
pub fn numbers(
    spiral: &Spiral,
    ipr: bool,
    catalogue: Option<&Path>,
) -> Result<Numbers, NumbersError> {
    let (mut complete, mut ipr_number) = match catalogue {
        Some(dir) => from_catalogue(dir, spiral, ipr).map_err(NumbersError::Catalogue)?,
        None => (None, None),
    };
    if complete.is_none() || ipr_number.is_none() {
        let found = by_enumeration_for(spiral, ipr, complete.is_none(), ipr_number.is_none())
            .map_err(NumbersError::Enumerate)?;
        complete = complete.or(Some(found.complete));
        ipr_number = ipr_number.or(Some(found.ipr));
    }
    Ok(Numbers {
        complete: complete.expect("filled above"),
        ipr: ipr_number.expect("filled above"),
    })
}

/// Numbers of a canonical fullerene spiral by enumeration, within the size limits.
pub fn by_enumeration(spiral: &Spiral, ipr: bool) -> Result<Numbers, EnumerateError> {
    by_enumeration_for(spiral, ipr, true, true)
}

/// As [`by_enumeration`], running only the lists asked for (the others are `NotComputed`).
fn by_enumeration_for(
    spiral: &Spiral,
    ipr: bool,
    want_complete: bool,
    want_ipr: bool,
) -> Result<Numbers, EnumerateError> {
    let atoms = spiral.atoms();
    let complete = if !want_complete || atoms > COMPLETE_LIST_MAX_ATOMS {
        Number::NotComputed {
            limit: COMPLETE_LIST_MAX_ATOMS,
        }
    } else {
        position_in_list(spiral, false)?
    };
    let ipr = if !ipr {
        Number::NotListed
    } else if !want_ipr || atoms > IPR_LIST_MAX_ATOMS {
        Number::NotComputed {
            limit: IPR_LIST_MAX_ATOMS,
        }
    } else {
        position_in_list(spiral, true)?
    };
    Ok(Numbers { complete, ipr })
}

/// Position of `spiral` in the complete or IPR list of its size, stopping as soon as the list
/// passes it (lists come in increasing spiral order).
pub fn position_in_list(spiral: &Spiral, ipr: bool) -> Result<Number, EnumerateError> {
    Ok(list_number_of(spiral, ipr)?.map_or(Number::NotListed, Number::Listed))
}

/// Numbers read from the catalogue in `dir`: the complete-list file of the size gives both
/// numbers, the IPR-list file the IPR number. `None` for a list whose file is absent or sharded
/// (not numbered), so the caller can fall back to enumeration.
pub fn from_catalogue(
    dir: &Path,
    spiral: &Spiral,
    ipr: bool,
) -> Result<(Option<Number>, Option<Number>), CatalogueError> {
    let atoms = spiral.atoms() as u32;
    let wanted = special_faces_of(spiral);
    let mut complete = None;
    let mut ipr_number = (!ipr).then_some(Number::NotListed);
    let whole = dir.join(data_file_name(FaceSet::Fullerene, atoms, false, 0));
    if let Some(record) = find_record(&whole, &wanted)? {
        complete = Some(record.0.map_or(Number::NotListed, Number::Listed));
        if ipr {
            ipr_number = record.1.map(Number::Listed);
        }
    }
    let ipr_file = dir.join(data_file_name(FaceSet::Fullerene, atoms, true, 0));
    if ipr && ipr_number.is_none() {
        if let Some(record) = find_record(&ipr_file, &wanted)? {
            ipr_number = record.1.map(Number::Listed);
        }
    }
    Ok((complete, ipr_number))
}

/// A catalogue record's (complete-list number, IPR-list number).
type ListNumbers = (Option<u64>, Option<u64>);

/// (number, ipr_number) of the record with these special faces, if the file exists, is a whole
/// (numbered) run and holds it.
fn find_record(path: &Path, wanted: &[(u32, u8)]) -> Result<Option<ListNumbers>, CatalogueError> {
    if !path.exists() {
        return Ok(None);
    }
    let mut file = DataFile::open(path)?;
    if file.info.shard.is_some() {
        return Ok(None);
    }
    for c in 0..file.chunk_count() {
        if let Some(r) = file
            .chunk_records(c)?
            .into_iter()
            .find(|r| r.special_faces == wanted)
        {
            return Ok(Some((r.number, r.ipr_number)));
        }
    }
    Ok(None)
}
