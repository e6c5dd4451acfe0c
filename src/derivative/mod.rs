//! Cage derivatives: every distinct way to put k addends on atoms, k bridges across bonds, or k
//! heteroatoms in place of carbons, up to the symmetry of the parent cage, with the classical
//! screening values of each pattern.
//!
//! Two patterns are one isomer when an automorphism of the parent maps one onto the other
//! (Balasubramanian, J. Phys. Chem. 97 (1993) 6990, counts them by Pólya's theorem). Here a
//! pattern is a set of *sites* (atom indices, or bond indices into [`Cage::edges`]); its
//! canonical form is the lexicographically smallest sorted site list among its images, and the
//! patterns of one (parent, kind, k) are numbered 1, 2, ... in increasing canonical form, which
//! makes a pattern ID such as `C60:IPR-1+2H:7` stable: atoms and bonds are numbered as
//! [`Spiral::to_cage`] numbers them for the parent's canonical spiral, and that numbering is
//! fixed by the spiral alone.
//!
//! The parts, one file each: [`group`] (the parent's automorphisms acting on sites, and the
//! subgroups that keep a site list or an earlier pattern in place), [`orbits`] (orderly
//! generation of canonical forms, streamed in parallel in canonical order), [`burnside`] (exact
//! orbit counts with big integers, far beyond what can be listed), [`kekule`] (Kekulé counts of
//! the remaining pi system with deleted atoms, by a Pfaffian orientation of the plane subgraph),
//! [`huckel`] (Hückel levels with heteroatom parameters), [`score`] (the per-pattern record and
//! the default ranking), [`structure`] (3D positions of addend atoms and an SDF-ready
//! description), [`named`] (one pattern resolved from its ID for `show`, `export` and `draw`:
//! sites, scores, symmetry, rank in its list, molecule). This module owns the shared vocabulary: [`Kind`], [`Parent`], [`Problem`],
//! [`PatternId`] and [`DeriveError`]. It does no I/O; printing is the CLI's, files are
//! `export`'s. Rankings built here are screening heuristics, not predictions of real-world
//! stability or safety.

pub mod burnside;
pub mod group;
pub mod huckel;
pub mod kekule;
pub mod named;
pub mod orbits;
pub mod score;
pub mod structure;

use crate::cage::Cage;
use crate::spiral::{canonical_spiral, Automorphism, Spiral};
use std::fmt;

/// An atom addend: one atom bonded to one cage carbon, which leaves the pi system.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Addend {
    H,
    F,
    Cl,
}

impl Addend {
    pub fn symbol(self) -> &'static str {
        match self {
            Addend::H => "H",
            Addend::F => "F",
            Addend::Cl => "Cl",
        }
    }
}

/// Which bonds a bridging addend (a CH2 methano bridge) may span.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum BondFilter {
    /// Any bond.
    Any,
    /// Bonds shared by two hexagons (6:6 bonds, where cyclopropanation of C60 happens).
    HexHex,
    /// Bonds shared by a pentagon and a hexagon (6:5 bonds).
    PentHex,
}

impl BondFilter {
    /// The suffix written in pattern IDs after `CH2`: empty, `@66` or `@56`. Patterns are
    /// numbered within the filtered list, so the filter is part of the ID.
    pub fn suffix(self) -> &'static str {
        match self {
            BondFilter::Any => "",
            BondFilter::HexHex => "@66",
            BondFilter::PentHex => "@56",
        }
    }

    /// True if the bond between faces of these sizes passes the filter.
    pub fn accepts(self, face_sizes: [usize; 2]) -> bool {
        let mut s = face_sizes;
        s.sort_unstable();
        match self {
            BondFilter::Any => true,
            BondFilter::HexHex => s == [6, 6],
            BondFilter::PentHex => s == [5, 6],
        }
    }
}

/// A heteroatom replacing a cage carbon.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Hetero {
    /// Nitrogen: two pi electrons on a three-coordinate cage atom, one more than the carbon it
    /// replaces (domain notes §8).
    N,
    /// Boron: no pi electron, one fewer than carbon.
    B,
}

impl Hetero {
    pub fn symbol(self) -> &'static str {
        match self {
            Hetero::N => "N",
            Hetero::B => "B",
        }
    }

    /// Pi electrons this atom brings, minus the one of the carbon it replaces.
    pub fn extra_electrons(self) -> i64 {
        match self {
            Hetero::N => 1,
            Hetero::B => -1,
        }
    }
}

/// What a pattern places on the cage.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Kind {
    /// k atom addends on k distinct atoms.
    Addend(Addend),
    /// k CH2 bridges across k bonds that share no atom.
    Bridge(BondFilter),
    /// k heteroatoms in place of k carbons.
    Substitute(Hetero),
}

impl Kind {
    /// True when sites are bonds (indices into [`Cage::edges`]), false when they are atoms.
    pub fn on_bonds(self) -> bool {
        matches!(self, Kind::Bridge(_))
    }

    /// The token written in pattern IDs after k: `H`, `F`, `Cl`, `CH2`, `CH2@66`, `N`, `B`.
    pub fn token(self) -> String {
        match self {
            Kind::Addend(a) => a.symbol().to_string(),
            Kind::Bridge(f) => format!("CH2{}", f.suffix()),
            Kind::Substitute(h) => h.symbol().to_string(),
        }
    }

    /// Reads a token as written by [`Kind::token`] (case-insensitive element symbols).
    pub fn parse(token: &str) -> Option<Kind> {
        let t = token.trim();
        let kind = match t.to_ascii_uppercase().as_str() {
            "H" => Kind::Addend(Addend::H),
            "F" => Kind::Addend(Addend::F),
            "CL" => Kind::Addend(Addend::Cl),
            "CH2" => Kind::Bridge(BondFilter::Any),
            "CH2@66" => Kind::Bridge(BondFilter::HexHex),
            "CH2@56" => Kind::Bridge(BondFilter::PentHex),
            "N" => Kind::Substitute(Hetero::N),
            "B" => Kind::Substitute(Hetero::B),
            _ => return None,
        };
        Some(kind)
    }
}

/// Why a derivative request cannot be answered; each message says what to do instead.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum DeriveError {
    /// k is zero or larger than the number of sites available.
    TooMany {
        k: usize,
        available: usize,
        what: &'static str,
    },
    /// The pi system would hold an odd number of electrons, so no closed shell exists.
    OddElectrons { electrons: i64 },
    /// The electron count leaves no filled or no empty orbital.
    ElectronRange { electrons: i64, orbitals: usize },
    /// A pattern ID that does not parse.
    MalformedId { text: String },
    /// A well-formed pattern ID whose number is past the end of its list.
    NoSuchPattern { id: String, count: u64 },
    /// A site list names an atom or bond the cage does not have, or repeats one.
    BadSite { text: String },
    /// The listing would exceed the enumeration limit.
    TooLarge { count: String, limit: u64 },
    /// The earlier pattern of a sequential addition is of another kind.
    KindMismatch { base: String, asked: String },
    /// The parent has no face spiral, so atoms have no stable numbering for IDs.
    NoSpiral,
}

impl fmt::Display for DeriveError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            DeriveError::TooMany { k, available, what } => write!(
                f,
                "cannot place {k} on this cage: it has {available} {what} available; choose K \
                 from 1 to {available}"
            ),
            DeriveError::OddElectrons { electrons } => write!(
                f,
                "the derivative would have {electrons} pi electrons, an odd number, so no closed \
                 shell exists; change K by one or the charge by one (--charge)"
            ),
            DeriveError::ElectronRange {
                electrons,
                orbitals,
            } => write!(
                f,
                "the derivative would have {electrons} pi electrons in {orbitals} orbitals, \
                 leaving no filled or no empty level; choose another charge"
            ),
            DeriveError::MalformedId { text } => write!(
                f,
                "'{}' is not a pattern ID; write the parent, '+', K and the kind, ':', the \
                 number, like C60:IPR-1+2H:7 or C60:IPR-1+2CH2@66:3",
                crate::id::printable(text)
            ),
            DeriveError::NoSuchPattern { id, count } => write!(
                f,
                "{} does not exist: that list has {count} patterns, numbered from 1",
                crate::id::printable(id)
            ),
            DeriveError::BadSite { text } => write!(
                f,
                "{}; give 1-based atom numbers (or bond numbers with bridges), comma-separated, \
                 each once",
                crate::id::printable(text)
            ),
            DeriveError::TooLarge { count, limit } => write!(
                f,
                "{count} patterns exceed the listing limit of {limit}; use --count-only for the \
                 exact count, restrict the sites, or lower K"
            ),
            DeriveError::KindMismatch { base, asked } => write!(
                f,
                "the earlier pattern places {base} but {asked} was asked for; sequential \
                 addition keeps one kind of site"
            ),
            DeriveError::NoSpiral => write!(
                f,
                "this cage has no face spiral, so its atoms have no stable numbering for \
                 pattern IDs"
            ),
        }
    }
}

impl std::error::Error for DeriveError {}

/// A parent cage ready for derivatives: its ID text, canonical spiral, the cage wound from that
/// spiral (whose atom and bond numbering every pattern refers to) and its automorphisms.
#[derive(Debug, Clone)]
pub struct Parent {
    /// How pattern IDs name the parent, e.g. `C60:IPR-1`.
    pub label: String,
    pub spiral: Spiral,
    pub cage: Cage,
    /// The whole automorphism group, identity first.
    pub automorphisms: Vec<Automorphism>,
}

impl Parent {
    /// Winds `spiral`, reads its canonical spiral and symmetry, and renumbers the cage from the
    /// canonical spiral so that the same cage always gets the same atom numbers.
    pub fn new(label: impl Into<String>, spiral: &Spiral) -> Result<Parent, DeriveError> {
        let canonical = canonical_spiral(&spiral.to_cage()).ok_or(DeriveError::NoSpiral)?;
        let cage = canonical.spiral.to_cage();
        let automorphisms = canonical_spiral(&cage)
            .ok_or(DeriveError::NoSpiral)?
            .automorphisms;
        Ok(Parent {
            label: label.into(),
            spiral: canonical.spiral,
            cage,
            automorphisms,
        })
    }
}

/// One question about a parent: k sites of one kind, optionally only among given sites and on
/// top of an earlier pattern (sequential addition).
#[derive(Debug, Clone)]
pub struct Problem {
    pub kind: Kind,
    pub k: usize,
    /// If set, the new sites must come from this list (0-based atom or bond indices).
    pub allowed: Option<Vec<u32>>,
    /// Sites already taken by an earlier pattern of the same kind (0-based, sorted).
    pub base: Vec<u32>,
}

impl Problem {
    pub fn new(kind: Kind, k: usize) -> Problem {
        Problem {
            kind,
            k,
            allowed: None,
            base: Vec::new(),
        }
    }
}

/// Largest number of patterns a listing may hold (and score); beyond it only
/// [`burnside::count`] answers. At the measured cost of scoring (about 0.1-0.3 ms a C60
/// pattern on one core) a full listing at the limit takes a few minutes.
pub const LIST_LIMIT: u64 = 1_000_000;

/// Finds the pattern an ID names on `parent` (whose label the caller has matched): the search
/// of its list and the pattern itself. Refuses numbers past the end (checked by counting first)
/// and numbers above [`LIST_LIMIT`] (the walk to the pattern costs about its number; the list
/// itself may be longer).
pub fn find_pattern(
    parent: &Parent,
    id: &PatternId,
) -> Result<(orbits::Search, orbits::Found), DeriveError> {
    let search = orbits::Search::new(parent, &Problem::new(id.kind, id.k))?;
    let count = burnside::count(&search);
    if count < num_bigint::BigUint::from(id.number) {
        return Err(DeriveError::NoSuchPattern {
            id: id.to_string(),
            count: u64::try_from(&count).unwrap_or(u64::MAX),
        });
    }
    if id.number > LIST_LIMIT {
        return Err(DeriveError::TooLarge {
            count: count.to_string(),
            limit: LIST_LIMIT,
        });
    }
    let found = search
        .nth(id.number)
        .map_err(|seen| DeriveError::NoSuchPattern {
            id: id.to_string(),
            count: seen,
        })?;
    Ok((search, found))
}

/// A parsed pattern ID: `<parent>+<k><kind>:<number>`, e.g. `C60:IPR-1+2H:7`.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct PatternId {
    /// The parent's ID text as written (parse it with [`crate::id::IsomerId`]).
    pub parent: String,
    pub k: usize,
    pub kind: Kind,
    /// 1-based position in canonical order.
    pub number: u64,
}

impl PatternId {
    /// Splits at the last `+` (parent IDs contain none) and the last `:`.
    pub fn parse(text: &str) -> Result<PatternId, DeriveError> {
        let bad = || DeriveError::MalformedId {
            text: text.to_string(),
        };
        let (parent, rest) = text.trim().rsplit_once('+').ok_or_else(bad)?;
        let (body, number) = rest.rsplit_once(':').ok_or_else(bad)?;
        let digits = body.bytes().take_while(u8::is_ascii_digit).count();
        let k: usize = body[..digits].parse().map_err(|_| bad())?;
        let kind = Kind::parse(&body[digits..]).ok_or_else(bad)?;
        let number: u64 = number
            .trim()
            .parse()
            .ok()
            .filter(|&n| n >= 1)
            .ok_or_else(bad)?;
        if parent.trim().is_empty() || k == 0 {
            return Err(bad());
        }
        Ok(PatternId {
            parent: parent.trim().to_string(),
            k,
            kind,
            number,
        })
    }
}

impl PatternId {
    /// The stem of file names for this pattern: the parent's file stem (`C60_IPR-1`), `+`, K and
    /// the kind with `@` written `_`, `-` and the number: `C60_IPR-1+2H-5`,
    /// `C60_IPR-1+2CH2_66-3`. Only ASCII letters, digits, `_`, `-` and `+` occur (all portable
    /// in file names and safe in shells), and distinct IDs give distinct stems on
    /// case-insensitive file systems too (no two kind tokens differ only in case).
    pub fn file_stem(&self) -> String {
        let parent = match crate::id::IsomerId::parse(&self.parent, None) {
            Ok(id) => id.file_stem(),
            Err(_) => self
                .parent
                .chars()
                .map(|c| {
                    if c.is_ascii_alphanumeric() || c == '-' {
                        c
                    } else {
                        '_'
                    }
                })
                .collect(),
        };
        format!(
            "{parent}+{}{}-{}",
            self.k,
            self.kind.token().replace('@', "_"),
            self.number
        )
    }
}

impl fmt::Display for PatternId {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "{}+{}{}:{}",
            self.parent,
            self.k,
            self.kind.token(),
            self.number
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn pattern_ids_round_trip() {
        for text in [
            "C60:IPR-1+2H:7",
            "C60:all-1812+3CH2@66:12",
            "C70:IPR-1+2N:1",
        ] {
            assert_eq!(PatternId::parse(text).unwrap().to_string(), text);
        }
        for bad in [
            "C60:IPR-1",
            "C60:IPR-1+2X:1",
            "C60:IPR-1+0H:1",
            "C60+2H:0",
            "+2H:1",
        ] {
            assert!(PatternId::parse(bad).is_err(), "{bad}");
        }
    }

    #[test]
    fn file_stems_are_portable_and_distinct() {
        let stem = |t: &str| PatternId::parse(t).unwrap().file_stem();
        assert_eq!(stem("C60:IPR-1+2H:5"), "C60_IPR-1+2H-5");
        assert_eq!(stem("C60:all-1812+3CH2@66:12"), "C60_all-1812+3CH2_66-12");
        let tokens = ["H", "F", "Cl", "CH2", "CH2@66", "CH2@56", "N", "B"];
        let mut stems: Vec<String> = tokens
            .iter()
            .map(|t| stem(&format!("C60:IPR-1+2{t}:1")).to_ascii_lowercase())
            .collect();
        assert!(stems.iter().all(|s| s
            .bytes()
            .all(|b| b.is_ascii_alphanumeric() || b"_-+".contains(&b))));
        stems.sort();
        stems.dedup();
        assert_eq!(stems.len(), tokens.len());
    }
}
