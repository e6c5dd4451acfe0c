//! The catalogue's own compact record of one isomer: spiral, numbers and scalar descriptors.
//!
//! Stored floats are `f32` (seven significant digits are plenty for screening and halve the
//! storage); point group and shell are small codes. The scorer's richer types are converted into
//! a `Record` before they reach the catalogue; this module does not compute any descriptor.

use crate::cage::FaceSet;
use crate::score::symmetry::PointGroup as Symmetry;
use crate::score::{nmr, Descriptors, Scored, Shell};
use crate::spiral::{Spiral, SpiralError, WindError};
use num_bigint::BigUint;

/// Schoenflies symbols the catalogue can store; the code on disk is the index in this table.
/// Covers the 28 fullerene groups (Atlas of Fullerenes) and the others reachable by cubic cages
/// with squares. Never reorder: append only (and bump the schema version).
pub const POINT_GROUPS: [&str; 45] = [
    "C1", "Cs", "Ci", "C2", "C3", "C4", "C5", "C6", "C2v", "C3v", "C4v", "C5v", "C6v", "C2h",
    "C3h", "C4h", "C5h", "C6h", "S4", "S6", "S8", "S10", "S12", "D2", "D3", "D4", "D5", "D6",
    "D2d", "D3d", "D4d", "D5d", "D6d", "D2h", "D3h", "D4h", "D5h", "D6h", "T", "Td", "Th", "O",
    "Oh", "I", "Ih",
];

/// A Schoenflies point group as a one-byte code into [`POINT_GROUPS`].
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct PointGroup(u8);

impl PointGroup {
    /// Looks a symbol up case-insensitively ("d5h" finds "D5h").
    pub fn from_name(name: &str) -> Option<PointGroup> {
        POINT_GROUPS
            .iter()
            .position(|g| g.eq_ignore_ascii_case(name))
            .map(|i| PointGroup(i as u8))
    }

    pub fn from_code(code: u8) -> Option<PointGroup> {
        ((code as usize) < POINT_GROUPS.len()).then_some(PointGroup(code))
    }

    pub fn code(self) -> u8 {
        self.0
    }

    pub fn name(self) -> &'static str {
        POINT_GROUPS[self.0 as usize]
    }
}

/// Shell types in code order (the code on disk is the index). Append only: the open-shell
/// doublet (schema 2) came last, although it ranks before `Open`.
pub const SHELLS: [Shell; 5] = [
    Shell::ProperlyClosed,
    Shell::PseudoClosed,
    Shell::MetaClosed,
    Shell::Open,
    Shell::OpenDoublet,
];

pub fn shell_code(shell: Shell) -> u8 {
    SHELLS
        .iter()
        .position(|&s| s == shell)
        .expect("invariant: SHELLS lists every Shell") as u8
}

pub fn shell_from_code(code: u8) -> Option<Shell> {
    SHELLS.get(code as usize).copied()
}

/// Looks a shell type up by its name ("properly-closed", "pseudo-closed", "meta-closed",
/// "open-doublet", "open").
pub fn shell_from_name(name: &str) -> Option<Shell> {
    SHELLS
        .iter()
        .copied()
        .find(|s| s.name().eq_ignore_ascii_case(name))
}

/// One isomer as the catalogue stores it.
///
/// `number` / `ipr_number` are not stored: they are the record's position in the complete or IPR
/// list, filled in when reading a whole (unsharded) catalogue file, and ignored when writing.
#[derive(Debug, Clone, PartialEq)]
pub struct Record {
    pub atoms: u32,
    /// Position in the complete list of this size (1-based), when known.
    pub number: Option<u64>,
    /// Position in the IPR list of this size (1-based), when known and the cage is IPR.
    pub ipr_number: Option<u64>,
    /// Non-hexagonal faces of the canonical spiral: (1-based position, ring size), increasing.
    pub special_faces: Vec<(u32, u8)>,
    pub ipr: bool,
    pub pentagon_adjacencies: u32,
    pub pentagon_penalty_kj: f32,
    /// How many hexagons have k hexagon neighbours, k = 0..=6.
    pub hexagon_neighbours: [u32; 7],
    pub hexagon_strain: f32,
    /// Hückel HOMO (highest doubly occupied), LUMO and gap in units of |beta|; the gap is
    /// SOMO - LUMO when the electron count is odd.
    pub homo: f32,
    pub lumo: f32,
    pub gap: f32,
    /// Singly occupied orbital, present exactly for odd electron counts (schema 2 on).
    pub somo: Option<f32>,
    pub shell: Shell,
    pub pi_energy: f32,
    pub kekule: BigUint,
    pub automorphisms: u32,
    pub point_group: PointGroup,
    pub chiral: bool,
    /// 13C NMR pattern: (intensity, number of lines), largest intensity first (the normal form
    /// of [`nmr::normalise`]; printed as LINESxINTENSITY by [`nmr::format_pattern`]).
    pub nmr: Vec<(u32, u32)>,
}

/// The spiral part of a record, from a canonical spiral.
pub fn special_faces_of(spiral: &Spiral) -> Vec<(u32, u8)> {
    spiral
        .sizes()
        .iter()
        .enumerate()
        .filter(|(_, &s)| s != 6)
        .map(|(i, &s)| (i as u32 + 1, s))
        .collect()
}

impl Record {
    /// The canonical spiral, rebuilt (and re-wound, so a damaged record cannot give a bad cage).
    pub fn spiral(&self) -> Result<Spiral, SpiralError> {
        let faces = (self.atoms / 2 + 2) as usize;
        let mut sizes = vec![6u8; faces];
        for &(pos, size) in &self.special_faces {
            let slot = (pos as usize)
                .checked_sub(1)
                .and_then(|i| sizes.get_mut(i))
                .ok_or(SpiralError::OutOfRange {
                    index: pos as u64,
                    faces,
                })?;
            *slot = size;
        }
        Spiral::from_sizes(sizes).map_err(|e: WindError| SpiralError::DoesNotClose(e))
    }

    /// The spiral in the trade's notation: pentagon positions for fullerenes, else
    /// `position:size` for every non-hexagon.
    pub fn spiral_text(&self) -> String {
        let fullerene = self.special_faces.iter().all(|&(_, s)| s == 5);
        let parts: Vec<String> = self
            .special_faces
            .iter()
            .map(|&(p, s)| {
                if fullerene {
                    p.to_string()
                } else {
                    format!("{p}:{s}")
                }
            })
            .collect();
        parts.join(" ")
    }

    /// Which face set the spiral uses.
    pub fn face_set(&self) -> FaceSet {
        let has = |size: u8| self.special_faces.iter().any(|&(_, s)| s == size);
        match (has(4), has(5)) {
            (true, true) => FaceSet::SquarePentagonHexagon,
            (true, false) => FaceSet::SquareHexagon,
            _ => FaceSet::Fullerene,
        }
    }

    /// Total number of NMR lines.
    pub fn nmr_lines(&self) -> u64 {
        nmr::line_count(&self.nmr)
    }
}

impl Record {
    /// The stored form of a scored isomer: floats rounded to `f32`, point group and shell as
    /// codes, the Kekulé count as an integer, NMR in normal form. Numbers are left unset.
    pub fn from_descriptors(spiral: &Spiral, ipr: bool, d: &Descriptors) -> Result<Record, String> {
        let name = d.point_group.name();
        let point_group = PointGroup::from_name(&name)
            .ok_or_else(|| format!("point group {name} has no catalogue code"))?;
        let kekule = d
            .kekule
            .parse::<BigUint>()
            .map_err(|_| format!("Kekulé count '{}' is not a whole number", d.kekule))?;
        Ok(Record {
            atoms: spiral.atoms() as u32,
            number: None,
            ipr_number: None,
            special_faces: special_faces_of(spiral),
            ipr,
            pentagon_adjacencies: d.pentagon_adjacencies,
            pentagon_penalty_kj: d.pentagon_penalty_kj as f32,
            hexagon_neighbours: d.hexagon_neighbours,
            hexagon_strain: d.hexagon_strain as f32,
            homo: d.homo as f32,
            lumo: d.lumo as f32,
            gap: d.gap as f32,
            somo: d.somo.map(|x| x as f32),
            shell: d.shell,
            pi_energy: d.pi_energy as f32,
            kekule,
            automorphisms: d.automorphisms,
            point_group,
            chiral: d.chiral,
            nmr: nmr::normalise(&d.nmr),
        })
    }

    /// The scorer's descriptor record (stored `f32` values widened back to `f64`).
    pub fn descriptors(&self) -> Descriptors {
        Descriptors {
            pentagon_adjacencies: self.pentagon_adjacencies,
            pentagon_penalty_kj: self.pentagon_penalty_kj as f64,
            hexagon_neighbours: self.hexagon_neighbours,
            hexagon_strain: self.hexagon_strain as f64,
            homo: self.homo as f64,
            lumo: self.lumo as f64,
            gap: self.gap as f64,
            somo: self.somo.map(f64::from),
            shell: self.shell,
            pi_energy: self.pi_energy as f64,
            kekule: self.kekule.to_string(),
            automorphisms: self.automorphisms,
            point_group: self
                .point_group
                .name()
                .parse::<Symmetry>()
                .expect("invariant: every POINT_GROUPS name is a Schoenflies symbol"),
            chiral: self.chiral,
            nmr: self.nmr.clone(),
        }
    }

    /// The record as the scorer's JSON-lines type (same keys as `enumerate` output).
    pub fn to_scored(&self) -> Scored {
        let fullerene = self.special_faces.iter().all(|&(_, s)| s == 5);
        let spiral_numbers = if fullerene {
            self.special_faces.iter().map(|&(p, _)| p).collect()
        } else {
            let mut sizes = vec![6u32; (self.atoms / 2 + 2) as usize];
            for &(p, s) in &self.special_faces {
                if let Some(slot) = sizes.get_mut(p as usize - 1) {
                    *slot = s as u32;
                }
            }
            sizes
        };
        Scored {
            atoms: self.atoms as usize,
            number: self.number,
            ipr_number: self.ipr_number,
            spiral_numbers,
            descriptors: self.descriptors(),
            rank: None,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn point_group_codes_round_trip() {
        for (i, name) in POINT_GROUPS.iter().enumerate() {
            let g = PointGroup::from_name(name).expect("listed");
            assert_eq!(g.code() as usize, i);
            assert_eq!(PointGroup::from_code(g.code()), Some(g));
        }
        assert_eq!(PointGroup::from_name("d5h").map(|g| g.name()), Some("D5h"));
        assert!(PointGroup::from_name("Q7").is_none());
        assert!(PointGroup::from_code(POINT_GROUPS.len() as u8).is_none());
    }

    #[test]
    fn every_stored_point_group_is_a_scorer_point_group() {
        for name in POINT_GROUPS {
            let g: Symmetry = name.parse().expect("a Schoenflies symbol");
            assert_eq!(g.name(), name);
        }
    }

    #[test]
    fn c60_descriptors_round_trip_through_a_record() {
        // C60-Ih spiral (Atlas of Fullerenes, memory); descriptors computed by the scorer.
        let s = Spiral::from_pentagon_indices(60, &[1, 7, 9, 11, 13, 15, 18, 20, 22, 24, 26, 32])
            .expect("C60 spiral winds");
        let d = crate::score::describe_spiral(&s, 0).expect("C60 scores");
        let r = Record::from_descriptors(&s, true, &d).expect("storable");
        assert_eq!(r.point_group.name(), "Ih");
        // Klein, Schmalz, Hite, Seitz, JACS 108 (1986) 1301: 12500 Kekulé structures.
        assert_eq!(r.kekule, BigUint::from(12500u32));
        let back = r.descriptors();
        assert_eq!(back.kekule, d.kekule);
        assert_eq!(back.point_group, d.point_group);
        assert_eq!(back.gap as f32, d.gap as f32);
        assert_eq!(r.to_scored().spiral_numbers, s.pentagon_indices());
    }

    #[test]
    fn spiral_round_trips_through_special_faces() {
        // C60-Ih spiral 1 7 9 11 13 15 18 20 22 24 26 32 (Atlas of Fullerenes, memory).
        let s = Spiral::from_pentagon_indices(60, &[1, 7, 9, 11, 13, 15, 18, 20, 22, 24, 26, 32])
            .expect("C60 spiral winds");
        let faces = special_faces_of(&s);
        assert_eq!(faces.len(), 12);
        let r = Record {
            atoms: 60,
            special_faces: faces,
            ..crate::catalogue::chunk::tests::sample_record(0)
        };
        assert_eq!(r.spiral().expect("winds"), s);
        assert_eq!(r.spiral_text(), "1 7 9 11 13 15 18 20 22 24 26 32");
    }
}
