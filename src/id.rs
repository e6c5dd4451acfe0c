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
//! ```
//! use cagerank::id::{IsomerId, List};
//! let id = IsomerId::parse("C84:IPR-23", None).unwrap();
//! assert_eq!((id.atoms, id.list, id.number), (84, List::Ipr, 23));
//! assert_eq!(id.to_string(), "C84:IPR-23");
//! assert_eq!(id.file_stem(), "C84_IPR-23");
//! assert_eq!(IsomerId::parse("C84:23", Some(List::All)).unwrap().to_string(), "C84:all-23");
//! ```

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
        IsomerId {
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
        let body = body.strip_prefix(['C', 'c']).unwrap_or(body).trim_start();
        let (size, rest) = body
            .split_once(':')
            .or_else(|| body.split_once('_'))
            .ok_or_else(malformed)?;
        let atoms: u32 = parse_digits(size).ok_or_else(malformed)?;
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
        Ok(IsomerId::new(atoms, list, number))
    }

    /// The ID with `_` for `:`, safe as a file name on every common file system.
    pub fn file_stem(&self) -> String {
        format!("C{}_{}-{}", self.atoms, self.list.tag(), self.number)
    }
}

impl fmt::Display for IsomerId {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "C{}:{}-{}", self.atoms, self.list.tag(), self.number)
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
    for (list, tag) in [(List::Ipr, "ipr"), (List::All, "all")] {
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
