//! Isomer IDs that always say which list their number belongs to.
//!
//! Isomers of C_n are numbered separately in the complete list and in the IPR list (Fowler &
//! Manolopoulos, *An Atlas of Fullerenes*, 1995), and papers write "C84:23" for either, so a bare
//! number is ambiguous: C84:23 is a C1 cage in the complete list and the D2d cage in the IPR
//! list. Every ID this crate prints carries its list: `C84:IPR-23` and `C84:all-23`, and file
//! names use the same text with `_` for `:` (`C84_IPR-23`). Input may still be written bare
//! (`C84:23`); the caller then says which list is meant. This module only parses and formats;
//! looking a number up is left to `enumerate` and `catalogue`.
//!
//! Cages of other face sets say their set after the colon, and their isolated list is `iso`
//! (the set's isolation rule, see [`FaceSet::isolated_size`]): `C24:4-5-6-all-7`,
//! `C40:5-6-7h1-iso-2`; a 4-6 cage is written as the BN cage it models, `B12N12:4-6-iso-1`
//! (`C24:4-6-iso-1` is read as the same ID). File stems again put `_` for `:`.
//!
//! ```
//! use cagerank::id::{IsomerId, List};
//! let id = IsomerId::parse("C84:IPR-23", None).unwrap();
//! assert_eq!((id.atoms, id.list, id.number), (84, List::Ipr, 23));
//! assert_eq!(id.to_string(), "C84:IPR-23");
//! assert_eq!(id.file_stem(), "C84_IPR-23");
//! assert_eq!(IsomerId::parse("C84:23", Some(List::All)).unwrap().to_string(), "C84:all-23");
//! ```

use crate::cage::FaceSet;
use std::fmt;

/// Which numbered list an isomer number belongs to.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum List {
    /// Every isomer of the size (the complete list).
    All,
    /// Only isomers obeying the isolated-pentagon rule.
    Ipr,
}

impl List {
    /// `List::Ipr` when `ipr`, else `List::All`.
    pub fn from_ipr(ipr: bool) -> List {
        if ipr {
            List::Ipr
        } else {
            List::All
        }
    }

    pub fn is_ipr(self) -> bool {
        self == List::Ipr
    }

    /// The tag written in IDs: `IPR` or `all`.
    pub fn tag(self) -> &'static str {
        match self {
            List::All => "all",
            List::Ipr => "IPR",
        }
    }

    /// Words for messages: "complete list" or "IPR list".
    pub fn words(self) -> &'static str {
        match self {
            List::All => "complete list",
            List::Ipr => "IPR list",
        }
    }
}

/// A numbered isomer: atom count, list and 1-based number in that list.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct IsomerId {
    /// The face set whose list is numbered (fullerenes unless the ID names another).
    pub face_set: FaceSet,
    pub atoms: u32,
    pub list: List,
    pub number: u64,
}

/// Why a text is not an isomer ID; the message says how to write one.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum IdError {
    /// Not of the form `C84:IPR-23`, `C84:all-23` or `C84:23`.
    Malformed { text: String },
    /// The ID names no list and the caller gave none.
    NoList { text: String },
    /// The ID names one list and the caller asked for the other.
    ListConflict { text: String, asked: List },
}

impl fmt::Display for IdError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            IdError::Malformed { text } => write!(
                f,
                "'{}' is not an isomer ID; write the size, the list and the number, like \
                 C84:IPR-23 (IPR list) or C84:all-23 (complete list)",
                printable(text)
            ),
            IdError::NoList { text } => write!(
                f,
                "'{}' does not say which list its number is in; write C84:IPR-23 or C84:all-23",
                printable(text)
            ),
            IdError::ListConflict { text, asked } => write!(
                f,
                "'{}' names the {} but the {} was asked for; drop --ipr or the list in the ID",
                printable(text),
                other(*asked).words(),
                asked.words()
            ),
        }
    }
}

impl std::error::Error for IdError {}

fn other(list: List) -> List {
    match list {
        List::All => List::Ipr,
        List::Ipr => List::All,
    }
}

/// The text with control characters shown as `?`, so a message never echoes raw bytes from a
/// file or terminal.
pub fn printable(text: &str) -> String {
    text.chars()
        .map(|c| if c.is_control() { '?' } else { c })
        .collect()
}

impl IsomerId {
    pub fn new(atoms: u32, list: List, number: u64) -> IsomerId {
        IsomerId::of(FaceSet::Fullerene, atoms, list, number)
    }

    /// An ID in the lists of `face_set`.
    pub fn of(face_set: FaceSet, atoms: u32, list: List, number: u64) -> IsomerId {
        IsomerId {
            face_set,
            atoms,
            list,
            number,
        }
    }

    /// Parses `C84:IPR-23`, `C84:all-23`, `C84_IPR-23` (a file stem), `84:ipr23`, or a bare
    /// `C84:23` whose list is `bare_list`. An ID naming the complete list while `bare_list` is
    /// the IPR list (`--ipr` given) is contradictory and refused; an ID naming the IPR list wins
    /// over a default of the complete list. Numbers start at 1.
    pub fn parse(text: &str, bare_list: Option<List>) -> Result<IsomerId, IdError> {
        let malformed = || IdError::Malformed {
            text: text.to_string(),
        };
        let body = text.trim();
        let (formula, rest) = body
            .split_once(':')
            .or_else(|| body.split_once('_'))
            .ok_or_else(malformed)?;
        let (atoms, boron_nitride) = parse_formula(formula.trim()).ok_or_else(malformed)?;
        let (face_set, rest) = split_face_set(rest.trim());
        if boron_nitride && face_set != FaceSet::SquareHexagon {
            return Err(malformed());
        }
        let rest = rest.trim();
        let (named, digits) = match split_list(rest) {
            Some((list, digits)) => (Some(list), digits),
            None => (None, rest),
        };
        let number: u64 = parse_digits(digits).ok_or_else(malformed)?;
        if number == 0 {
            return Err(malformed());
        }
        let list = match (named, bare_list) {
            // `--ipr` is a request; its absence is not, so only an ID naming the complete
            // list under `--ipr` contradicts the caller.
            (Some(List::All), Some(List::Ipr)) => {
                return Err(IdError::ListConflict {
                    text: text.to_string(),
                    asked: List::Ipr,
                });
            }
            (Some(n), _) => n,
            (None, Some(asked)) => asked,
            (None, None) => {
                return Err(IdError::NoList {
                    text: text.to_string(),
                })
            }
        };
        Ok(IsomerId::of(face_set, atoms, list, number))
    }

    /// The ID with `_` for `:`, safe as a file name on every common file system.
    pub fn file_stem(&self) -> String {
        self.to_string().replacen(':', "_", 1)
    }

    /// The molecular formula the ID starts with: `C84`, or `B12N12` for a 4-6 (BN) cage.
    pub fn formula(&self) -> String {
        if self.face_set == FaceSet::SquareHexagon && self.atoms % 2 == 0 {
            format!("B{0}N{0}", self.atoms / 2)
        } else {
            format!("C{}", self.atoms)
        }
    }

    /// The list's tag: `IPR`/`all` for fullerenes, `iso`/`all` for the other face sets.
    pub fn list_tag(&self) -> &'static str {
        match (self.face_set, self.list) {
            (FaceSet::Fullerene, list) => list.tag(),
            (_, List::Ipr) => "iso",
            (_, List::All) => "all",
        }
    }
}

impl fmt::Display for IsomerId {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.face_set == FaceSet::Fullerene {
            write!(f, "C{}:{}-{}", self.atoms, self.list.tag(), self.number)
        } else {
            write!(
                f,
                "{}:{}-{}-{}",
                self.formula(),
                self.face_set,
                self.list_tag(),
                self.number
            )
        }
    }
}

/// `C84`, `84` or `B12N12` → the atom count, and whether it was written as a BN formula.
fn parse_formula(text: &str) -> Option<(u32, bool)> {
    if let Some(rest) = text.strip_prefix(['B', 'b']) {
        let (b, n) = rest.split_once(['N', 'n'])?;
        let (b, n): (u32, u32) = (parse_digits(b)?, parse_digits(n)?);
        return (b == n).then_some((b.checked_add(n)?, true));
    }
    let digits = text.strip_prefix(['C', 'c']).unwrap_or(text).trim_start();
    Some((parse_digits(digits)?, false))
}

/// A leading face-set label and its `-` (`4-5-6-all-7` → 4-5-6, `all-7`); fullerenes when the
/// text starts with none.
fn split_face_set(text: &str) -> (FaceSet, &str) {
    let label_end = if let Some(bound) = text.strip_prefix("5-6-7h") {
        bound
            .find(|c: char| !c.is_ascii_digit())
            .map(|i| i + "5-6-7h".len())
    } else {
        ["4-5-6", "4-6", "fullerene"]
            .iter()
            .find(|l| text.starts_with(*l) && text[l.len()..].starts_with('-'))
            .map(|l| l.len())
    };
    match label_end.and_then(|end| Some((FaceSet::from_label(&text[..end])?, end))) {
        Some((set, end)) => (set, text[end..].strip_prefix('-').unwrap_or(&text[end..])),
        None => (FaceSet::Fullerene, text),
    }
}

/// ASCII digits only (no sign, no spaces inside), as a number that fits.
fn parse_digits<T: std::str::FromStr>(text: &str) -> Option<T> {
    let t = text.trim();
    (!t.is_empty() && t.bytes().all(|b| b.is_ascii_digit()))
        .then(|| t.parse().ok())
        .flatten()
}

/// `IPR-23`, `ipr23`, `all-23` → the list and the number's text.
fn split_list(text: &str) -> Option<(List, &str)> {
    for (list, tag) in [(List::Ipr, "ipr"), (List::Ipr, "iso"), (List::All, "all")] {
        if text.len() >= tag.len() && text[..tag.len()].eq_ignore_ascii_case(tag) {
            let rest = &text[tag.len()..];
            return Some((list, rest.strip_prefix('-').unwrap_or(rest)));
        }
    }
    None
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_written_form_round_trips() {
        for text in [
            "C84:IPR-23",
            "c84:ipr23",
            "C84_IPR-23",
            "84:IPR-23",
            " C84 : IPR-23 ",
        ] {
            let id = IsomerId::parse(text, None).unwrap();
            assert_eq!(id, IsomerId::new(84, List::Ipr, 23), "{text}");
        }
        let all = IsomerId::parse("C60:all-1812", None).unwrap();
        assert_eq!(all.to_string(), "C60:all-1812");
        assert_eq!(IsomerId::parse(&all.to_string(), None).unwrap(), all);
        assert_eq!(IsomerId::parse(&all.file_stem(), None).unwrap(), all);
    }

    #[test]
    fn a_bare_number_takes_the_callers_list_and_a_named_one_must_agree() {
        let bare = IsomerId::parse("C84:23", Some(List::Ipr)).unwrap();
        assert_eq!(bare.list, List::Ipr);
        assert!(matches!(
            IsomerId::parse("C84:23", None),
            Err(IdError::NoList { .. })
        ));
        assert!(matches!(
            IsomerId::parse("C84:all-23", Some(List::Ipr)),
            Err(IdError::ListConflict { .. })
        ));
        let named = IsomerId::parse("C84:IPR-23", Some(List::All)).unwrap();
        assert_eq!(named.list, List::Ipr);
    }

    #[test]
    fn other_face_sets_name_their_set_and_bn_cages_their_formula() {
        let bn = IsomerId::of(FaceSet::SquareHexagon, 24, List::Ipr, 1);
        assert_eq!(bn.to_string(), "B12N12:4-6-iso-1");
        assert_eq!(bn.file_stem(), "B12N12_4-6-iso-1");
        for text in ["B12N12:4-6-iso-1", "C24:4-6-iso-1", "B12N12_4-6-iso-1"] {
            assert_eq!(IsomerId::parse(text, None).unwrap(), bn, "{text}");
        }
        let h = IsomerId::of(
            FaceSet::PentagonHexagonHeptagon { heptagons: 1 },
            40,
            List::All,
            3,
        );
        assert_eq!(h.to_string(), "C40:5-6-7h1-all-3");
        assert_eq!(IsomerId::parse(&h.to_string(), None).unwrap(), h);
        let sq = IsomerId::parse("C24:4-5-6-all-7", None).unwrap();
        assert_eq!(sq.face_set, FaceSet::SquarePentagonHexagon);
        assert!(IsomerId::parse("B12N12:4-5-6-all-1", None).is_err());
        assert!(IsomerId::parse("B12N11:4-6-all-1", None).is_err());
    }

    #[test]
    fn junk_is_refused_without_echoing_control_bytes() {
        for text in [
            "", "C84", "C84:", "C84:0", "C84:-3", "C84:IPR-", "Cx:1", "C84:1.5", "C84:+2",
        ] {
            assert!(IsomerId::parse(text, Some(List::All)).is_err(), "{text:?}");
        }
        let message = IsomerId::parse("C84:\u{1b}[31m", Some(List::All))
            .unwrap_err()
            .to_string();
        assert!(!message.contains('\u{1b}'), "{message}");
    }
}
