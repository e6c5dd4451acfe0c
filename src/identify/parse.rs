//! What the coordinate readers share: the parsed structure, the error type, file-format choice
//! and the small field parsers (element symbols, coordinates).
//!
//! The readers themselves live in [`super::xyz`] and [`super::sdf`]; nothing here knows about
//! bonds or cages.

use std::fmt;
use std::path::Path;

/// Most atoms accepted in one structure (the same limit as for spirals).
pub const MAX_ATOMS: usize = 100_000;

/// Largest coordinate magnitude accepted, in Å; anything beyond is a unit or format mistake.
pub const MAX_COORDINATE: f64 = 1.0e6;

/// One atom: a normalised element symbol ("C", "Sc") and its position in Å.
#[derive(Debug, Clone, PartialEq)]
pub struct Atom {
    pub element: String,
    pub position: [f64; 3],
}

/// One structure of a file (an XYZ frame or an SD record).
#[derive(Debug, Clone, PartialEq)]
pub struct Structure {
    /// The comment line (XYZ) or name line (SDF).
    pub title: String,
    pub atoms: Vec<Atom>,
    /// 1-based line where the structure starts, for messages.
    pub line: usize,
}

/// A coordinate file format.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Format {
    Xyz,
    /// MDL molfile or SD file, V2000.
    Sdf,
}

impl Format {
    /// From the file extension (`.xyz`; `.sdf`, `.sd`, `.mol`), case-insensitive.
    pub fn from_path(path: &Path) -> Option<Format> {
        let ext = path.extension()?.to_str()?.to_ascii_lowercase();
        match ext.as_str() {
            "xyz" => Some(Format::Xyz),
            "sdf" | "sd" | "mol" => Some(Format::Sdf),
            _ => None,
        }
    }

    /// From the content: an XYZ file starts with an atom count, a molfile has its counts line
    /// (with `V2000`/`V3000`) fourth.
    pub fn sniff(text: &str) -> Option<Format> {
        let first = text.lines().find(|l| !l.trim().is_empty())?;
        if first.trim().parse::<u64>().is_ok() {
            return Some(Format::Xyz);
        }
        let fourth = text.lines().nth(3)?;
        (fourth.contains("V2000") || fourth.contains("V3000")).then_some(Format::Sdf)
    }
}

/// A file that could not be read, with the 1-based line where reading stopped.
#[derive(Debug, Clone, PartialEq)]
pub struct ParseError {
    pub line: usize,
    pub kind: ParseErrorKind,
}

/// What was wrong with the file.
#[derive(Debug, Clone, PartialEq)]
pub enum ParseErrorKind {
    /// Not UTF-8 text (the byte offset of the first bad byte).
    NotText {
        byte: usize,
    },
    /// No structure at all.
    Empty,
    /// Neither the extension nor the content says XYZ or SDF.
    UnknownFormat,
    /// An atom-count line that is not a count.
    BadCount {
        found: String,
    },
    TooManyAtoms {
        count: u64,
    },
    /// An XYZ frame with fewer atom lines than announced.
    Truncated {
        expected: usize,
        got: usize,
    },
    /// A molfile that stops inside its header, atom or bond block.
    UnexpectedEnd,
    BadAtomLine {
        found: String,
    },
    BadElement {
        found: String,
    },
    BadCoordinate {
        found: String,
    },
    BadBondLine {
        found: String,
    },
    Unsupported {
        what: String,
    },
}

impl fmt::Display for ParseError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        use ParseErrorKind::*;
        let line = self.line;
        match &self.kind {
            NotText { byte } => write!(
                f,
                "the file is not text (invalid UTF-8 at byte {byte}); give an XYZ or SDF file"
            ),
            Empty => write!(
                f,
                "the file holds no structure; give an XYZ or SDF file with atoms"
            ),
            UnknownFormat => write!(
                f,
                "cannot tell the file format; name the file .xyz, .sdf or .mol"
            ),
            BadCount { found } => write!(
                f,
                "line {line}: expected an atom count, found \"{found}\"; check the file is XYZ/SDF"
            ),
            TooManyAtoms { count } => write!(
                f,
                "line {line}: {count} atoms is more than the limit of {MAX_ATOMS} per structure"
            ),
            Truncated { expected, got } => write!(
                f,
                "line {line}: the structure announces {expected} atoms but the file ends after \
                 {got}; fix the atom count or complete the file"
            ),
            UnexpectedEnd => write!(
                f,
                "line {line}: the molfile ends inside its header, atom or bond block"
            ),
            BadAtomLine { found } => write!(
                f,
                "line {line}: expected an atom (element x y z), found \"{found}\""
            ),
            BadElement { found } => {
                write!(
                    f,
                    "line {line}: \"{found}\" is not an element symbol or atomic number"
                )
            }
            BadCoordinate { found } => write!(
                f,
                "line {line}: \"{found}\" is not a finite coordinate in Å (|x| <= {MAX_COORDINATE})"
            ),
            BadBondLine { found } => write!(
                f,
                "line {line}: expected a bond between two atoms of this record, found \"{found}\""
            ),
            Unsupported { what } => write!(f, "line {line}: {what}"),
        }
    }
}

impl std::error::Error for ParseError {}

/// Reads every structure of a file. `format` overrides detection from the content.
pub fn read(bytes: &[u8], format: Option<Format>) -> Result<Vec<Structure>, ParseError> {
    let text = std::str::from_utf8(bytes).map_err(|e| ParseError {
        line: 1 + bytes[..e.valid_up_to()]
            .iter()
            .filter(|&&b| b == b'\n')
            .count(),
        kind: ParseErrorKind::NotText {
            byte: e.valid_up_to(),
        },
    })?;
    if text.trim().is_empty() {
        return Err(ParseError {
            line: 1,
            kind: ParseErrorKind::Empty,
        });
    }
    let format = format.or_else(|| Format::sniff(text)).ok_or(ParseError {
        line: 1,
        kind: ParseErrorKind::UnknownFormat,
    })?;
    match format {
        Format::Xyz => super::xyz::parse(text),
        Format::Sdf => super::sdf::parse(text),
    }
}

/// Lines with 1-based numbers, read one at a time.
pub(crate) struct Cursor<'a> {
    lines: Vec<&'a str>,
    next: usize,
}

impl<'a> Cursor<'a> {
    pub(crate) fn new(text: &'a str) -> Cursor<'a> {
        Cursor {
            lines: text.lines().collect(),
            next: 0,
        }
    }

    /// The next line and its 1-based number.
    pub(crate) fn next(&mut self) -> Option<(usize, &'a str)> {
        let line = self.lines.get(self.next)?;
        self.next += 1;
        Some((self.next, line))
    }

    /// 1-based number of the line [`Cursor::next`] will return.
    pub(crate) fn line_number(&self) -> usize {
        self.next + 1
    }

    /// Skips blank lines; true if a non-blank line follows.
    pub(crate) fn skip_blank(&mut self) -> bool {
        while self
            .lines
            .get(self.next)
            .is_some_and(|l| l.trim().is_empty())
        {
            self.next += 1;
        }
        self.next < self.lines.len()
    }
}

/// Element symbols by atomic number (IUPAC), for files that write numbers instead of symbols.
const SYMBOLS: &str = "H He Li Be B C N O F Ne Na Mg Al Si P S Cl Ar K Ca Sc Ti V Cr Mn Fe Co Ni \
    Cu Zn Ga Ge As Se Br Kr Rb Sr Y Zr Nb Mo Tc Ru Rh Pd Ag Cd In Sn Sb Te I Xe Cs Ba La Ce Pr Nd \
    Pm Sm Eu Gd Tb Dy Ho Er Tm Yb Lu Hf Ta W Re Os Ir Pt Au Hg Tl Pb Bi Po At Rn Fr Ra Ac Th Pa U \
    Np Pu Am Cm Bk Cf Es Fm Md No Lr Rf Db Sg Bh Hs Mt Ds Rg Cn Nh Fl Mc Lv Ts Og";

/// A normalised element symbol from a file token: "C", "c", "C12" (an atom label) and "6" all
/// give "C". Labels are kept as letters only, so ghost or dummy atoms ("Bq", "X") survive and
/// can be dropped with --ignore-elements.
pub fn element_symbol(token: &str) -> Option<String> {
    if !token.is_empty() && token.bytes().all(|b| b.is_ascii_digit()) {
        let z: usize = token.parse().ok()?;
        return SYMBOLS
            .split_whitespace()
            .nth(z.checked_sub(1)?)
            .map(String::from);
    }
    let letters: String = token
        .chars()
        .take_while(|c| c.is_ascii_alphabetic())
        .collect();
    if letters.is_empty() || letters.len() > 3 {
        return None;
    }
    let mut out = letters[..1].to_ascii_uppercase();
    out.push_str(&letters[1..].to_ascii_lowercase());
    Some(out)
}

/// A finite coordinate of moderate size; Fortran exponents ("1.0D+00") are accepted.
pub(crate) fn parse_coordinate(line: usize, token: &str) -> Result<f64, ParseError> {
    let value: Option<f64> = token.replace(['D', 'd'], "e").parse().ok();
    match value {
        Some(x) if x.is_finite() && x.abs() <= MAX_COORDINATE => Ok(x),
        _ => Err(ParseError {
            line,
            kind: ParseErrorKind::BadCoordinate { found: clip(token) },
        }),
    }
}

/// At most 40 characters of a line, for quoting in messages.
pub(crate) fn clip(text: &str) -> String {
    let t = text.trim();
    match t.char_indices().nth(40) {
        Some((i, _)) => format!("{}...", &t[..i]),
        None => t.to_string(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn element_tokens_are_normalised() {
        assert_eq!(element_symbol("c").as_deref(), Some("C"));
        assert_eq!(element_symbol("SC").as_deref(), Some("Sc"));
        assert_eq!(element_symbol("C17").as_deref(), Some("C"));
        // IUPAC periodic table: Z = 6 is carbon, Z = 21 scandium.
        assert_eq!(element_symbol("6").as_deref(), Some("C"));
        assert_eq!(element_symbol("21").as_deref(), Some("Sc"));
        assert_eq!(element_symbol("0"), None);
        assert_eq!(element_symbol("119"), None);
        assert_eq!(element_symbol("1.5"), None);
    }

    #[test]
    fn coordinates_must_be_finite_and_moderate() {
        assert_eq!(parse_coordinate(1, "1.5D+00").unwrap(), 1.5);
        for bad in ["nan", "inf", "-infinity", "1e7", "x", ""] {
            assert!(parse_coordinate(1, bad).is_err(), "{bad}");
        }
    }

    #[test]
    fn format_is_sniffed_from_content() {
        assert_eq!(Format::sniff("\n 3\n"), Some(Format::Xyz));
        assert_eq!(
            Format::sniff("t\n\n\n  1  0  0  0  0  0  0  0  0  0999 V2000\n"),
            Some(Format::Sdf)
        );
        assert_eq!(Format::sniff("hello\nworld\n"), None);
    }

    #[test]
    fn invalid_utf8_is_reported_with_its_offset() {
        let err = read(b"2\n\xff\xfe", None).unwrap_err();
        assert_eq!(err.kind, ParseErrorKind::NotText { byte: 2 });
        assert_eq!(err.line, 2);
    }
}
