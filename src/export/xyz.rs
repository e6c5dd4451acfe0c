//! XYZ files: the atom count, one comment line, then `El x y z` in Å per atom — the plain format
//! every quantum-chemistry program reads. Bare cages are all carbon ([`write`]); derivatives
//! carry their addend and hetero atoms ([`write_atoms`]).
//!
//! The comment line carries the isomer or pattern ID, its point group and the screening caution. The parser
//! reads back only what [`write`] produces (for round-trip tests); general coordinate parsing for
//! identification lives in `identify`.

use std::io::{self, Write};

/// Writes one all-carbon structure. `comment` must be a single line (newlines are replaced by
/// spaces).
pub fn write(w: &mut impl Write, comment: &str, coords: &[[f64; 3]]) -> io::Result<()> {
    write_atoms(w, comment, coords.iter().map(|&c| ("C", c)))
}

/// Writes one structure of (element symbol, position) atoms.
pub fn write_atoms<'a>(
    w: &mut impl Write,
    comment: &str,
    atoms: impl ExactSizeIterator<Item = (&'a str, [f64; 3])>,
) -> io::Result<()> {
    writeln!(w, "{}", atoms.len())?;
    writeln!(w, "{}", comment.replace(['\n', '\r'], " "))?;
    for (element, c) in atoms {
        writeln!(w, "{element} {:>14.8} {:>14.8} {:>14.8}", c[0], c[1], c[2])?;
    }
    Ok(())
}

/// One structure read back: the comment line, the element symbols and the coordinates.
#[derive(Debug, Clone, PartialEq)]
pub struct XyzStructure {
    pub comment: String,
    pub elements: Vec<String>,
    pub coords: Vec<[f64; 3]>,
}

/// Why an XYZ text is not one of ours.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum XyzError {
    BadCount,
    BadAtomLine { line: usize },
    WrongAtomCount { expected: usize, found: usize },
}

impl std::fmt::Display for XyzError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            XyzError::BadCount => write!(f, "the first line of an XYZ file must be the atom count"),
            XyzError::BadAtomLine { line } => {
                write!(
                    f,
                    "line {line} is not `element x y z` with three finite numbers"
                )
            }
            XyzError::WrongAtomCount { expected, found } => {
                write!(
                    f,
                    "the XYZ header promises {expected} atoms but {found} follow"
                )
            }
        }
    }
}

impl std::error::Error for XyzError {}

/// Parses the first structure of an XYZ text written by [`write`] or [`write_atoms`].
pub fn parse(text: &str) -> Result<XyzStructure, XyzError> {
    let mut lines = text.lines();
    let count: usize = lines
        .next()
        .and_then(|l| l.trim().parse().ok())
        .ok_or(XyzError::BadCount)?;
    let comment = lines.next().unwrap_or("").to_string();
    let mut elements = Vec::with_capacity(count);
    let mut coords = Vec::with_capacity(count);
    for (i, line) in lines.take(count).enumerate() {
        let (element, xyz) = parse_atom(line).ok_or(XyzError::BadAtomLine { line: i + 3 })?;
        elements.push(element);
        coords.push(xyz);
    }
    if coords.len() != count {
        return Err(XyzError::WrongAtomCount {
            expected: count,
            found: coords.len(),
        });
    }
    Ok(XyzStructure {
        comment,
        elements,
        coords,
    })
}

fn parse_atom(line: &str) -> Option<(String, [f64; 3])> {
    let mut parts = line.split_whitespace();
    let element = parts.next()?;
    if !element.bytes().all(|b| b.is_ascii_alphabetic()) {
        return None;
    }
    let mut xyz = [0.0; 3];
    for v in &mut xyz {
        *v = parts.next()?.parse().ok().filter(|x: &f64| x.is_finite())?;
    }
    Some((element.to_string(), xyz))
}
