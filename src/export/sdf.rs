//! SDF (MDL molfile V2000) records: a connection table with explicit single and double bonds
//! from one Kekulé structure, so that cheminformatics toolkits see every carbon with valence 4,
//! followed by the descriptors as `> <name>` data fields and `$$$$`. Bare cages are all carbon
//! ([`write_record`]); derivatives ([`write_molecule`]) carry other elements, formal charges
//! (`M  CHG`) and radical centres (`M  RAD`, doublet), as `derivative::structure` builds them.
//!
//! Layout follows the CTfile formats specification (MDL/BIOVIA, *CTfile Formats*). The V2000
//! table holds at most 999 atoms. The parser reads back only what this module writes.

use crate::derivative::structure::Atom;
use std::io::{self, Write};

/// Largest atom count a V2000 counts line can hold.
pub const MAX_ATOMS: usize = 999;

/// One SDF record to write.
pub struct Record<'a> {
    /// First header line (the molecule name): the isomer ID.
    pub name: &'a str,
    /// Third header line (free comment, cut to 80 characters).
    pub comment: &'a str,
    pub coords: &'a [[f64; 3]],
    /// Bonds as atom pairs (0-based) with order 1 or 2.
    pub bonds: &'a [([u32; 2], u8)],
    /// Data fields in order: (name, value).
    pub fields: &'a [(String, String)],
}

/// One SDF record of a molecule with any elements, charges and radical centres.
pub struct MoleculeRecord<'a> {
    pub name: &'a str,
    pub comment: &'a str,
    pub atoms: &'a [Atom],
    /// Bonds as atom pairs (0-based) with order 1 or 2.
    pub bonds: &'a [([u32; 2], u8)],
    pub fields: &'a [(String, String)],
}

/// Writes one all-carbon record including the closing `$$$$` line.
pub fn write_record(w: &mut impl Write, r: &Record<'_>) -> io::Result<()> {
    let atoms: Vec<Atom> = r
        .coords
        .iter()
        .map(|&position| Atom {
            element: "C",
            position,
            charge: 0,
            radical: false,
        })
        .collect();
    write_molecule(
        w,
        &MoleculeRecord {
            name: r.name,
            comment: r.comment,
            atoms: &atoms,
            bonds: r.bonds,
            fields: r.fields,
        },
    )
}

/// Writes one record including the closing `$$$$` line, with `M  CHG` and `M  RAD` property
/// lines (eight entries a line, as the specification allows) for charged and radical atoms.
pub fn write_molecule(w: &mut impl Write, r: &MoleculeRecord<'_>) -> io::Result<()> {
    if r.atoms.len() > MAX_ATOMS || r.bonds.len() > MAX_ATOMS {
        return Err(io::Error::new(
            io::ErrorKind::InvalidInput,
            format!(
                "SDF V2000 holds at most {MAX_ATOMS} atoms and bonds; use XYZ for larger cages"
            ),
        ));
    }
    writeln!(w, "{}", one_line(r.name, 80))?;
    // Header line 2: initials (2), program (8), date (10), dimension code "3D".
    writeln!(w, "  cagerank          3D")?;
    writeln!(w, "{}", one_line(r.comment, 80))?;
    writeln!(
        w,
        "{:>3}{:>3}  0  0  0  0  0  0  0  0999 V2000",
        r.atoms.len(),
        r.bonds.len()
    )?;
    for a in r.atoms {
        let [x, y, z] = a.position;
        writeln!(
            w,
            "{x:>10.4}{y:>10.4}{z:>10.4} {:<3} 0  0  0  0  0  0  0  0  0  0  0  0",
            a.element
        )?;
    }
    for ([a, b], order) in r.bonds {
        writeln!(w, "{:>3}{:>3}{:>3}  0  0  0  0", a + 1, b + 1, order)?;
    }
    let charges: Vec<(usize, i32)> = r
        .atoms
        .iter()
        .enumerate()
        .filter(|(_, a)| a.charge != 0)
        .map(|(i, a)| (i, i32::from(a.charge)))
        .collect();
    property_lines(w, "CHG", &charges)?;
    let radicals: Vec<(usize, i32)> = r
        .atoms
        .iter()
        .enumerate()
        .filter(|(_, a)| a.radical)
        .map(|(i, _)| (i, 2))
        .collect();
    property_lines(w, "RAD", &radicals)?;
    writeln!(w, "M  END")?;
    for (name, value) in r.fields {
        writeln!(w, "> <{}>", one_line(name, 60))?;
        for line in data_lines(value) {
            writeln!(w, "{line}")?;
        }
        writeln!(w)?;
    }
    writeln!(w, "$$$$")
}

/// `M  CHG` / `M  RAD` lines: count, then (atom, value) pairs, at most eight a line.
fn property_lines(w: &mut impl Write, tag: &str, items: &[(usize, i32)]) -> io::Result<()> {
    for chunk in items.chunks(8) {
        write!(w, "M  {tag}{:>3}", chunk.len())?;
        for (i, value) in chunk {
            write!(w, " {:>3} {:>3}", i + 1, value)?;
        }
        writeln!(w)?;
    }
    Ok(())
}

/// Longest data line the CTfile specification allows.
const MAX_DATA_LINE: usize = 200;

/// A data value as lines of at most [`MAX_DATA_LINE`] characters, broken between words; the
/// blank line that ends a field is written by the caller, so an empty value gives no lines.
fn data_lines(value: &str) -> Vec<String> {
    let mut lines = vec![String::new()];
    for word in value.split_whitespace() {
        let word: String = word.chars().take(MAX_DATA_LINE).collect();
        let last = lines.last_mut().expect("invariant: lines starts non-empty");
        if !last.is_empty() && last.chars().count() + 1 + word.chars().count() > MAX_DATA_LINE {
            lines.push(word);
        } else {
            if !last.is_empty() {
                last.push(' ');
            }
            last.push_str(&word);
        }
    }
    lines.retain(|l| !l.is_empty());
    lines
}

fn one_line(text: &str, max: usize) -> String {
    text.replace(['\n', '\r'], " ").chars().take(max).collect()
}

/// One record read back.
#[derive(Debug, Clone, PartialEq)]
pub struct ParsedRecord {
    pub name: String,
    /// Element symbol of every atom, in file order.
    pub elements: Vec<String>,
    pub coords: Vec<[f64; 3]>,
    /// (atom a, atom b, order), 0-based atoms.
    pub bonds: Vec<(u32, u32, u8)>,
    /// Formal charges from `M  CHG` lines: (0-based atom, charge).
    pub charges: Vec<(u32, i32)>,
    pub fields: Vec<(String, String)>,
}

/// Parses every record of a multi-structure SDF text written by this module; `None` if the
/// text is not in that form.
pub fn parse(text: &str) -> Option<Vec<ParsedRecord>> {
    text.split("$$$$")
        .map(|chunk| chunk.trim_start_matches(['\r', '\n']))
        .filter(|chunk| !chunk.trim().is_empty())
        .map(parse_record)
        .collect()
}

fn parse_record(chunk: &str) -> Option<ParsedRecord> {
    let lines: Vec<&str> = chunk.lines().collect();
    let counts = lines.get(3)?;
    let atoms: usize = counts.get(0..3)?.trim().parse().ok()?;
    let bonds: usize = counts.get(3..6)?.trim().parse().ok()?;
    let (elements, coords): (Vec<String>, Vec<[f64; 3]>) = lines
        .get(4..4 + atoms)?
        .iter()
        .map(|l| parse_atom(l))
        .collect::<Option<Vec<_>>>()?
        .into_iter()
        .unzip();
    let bond_lines = lines.get(4 + atoms..4 + atoms + bonds)?;
    let bonds = bond_lines
        .iter()
        .map(|l| parse_bond(l))
        .collect::<Option<Vec<_>>>()?;
    let mut rest = lines.get(4 + atoms + bonds.len()..)?;
    let mut charges = Vec::new();
    while let Some(line) = rest
        .first()
        .filter(|l| l.starts_with("M  ") && **l != "M  END")
    {
        if let Some(items) = line.strip_prefix("M  CHG") {
            charges.extend(parse_property(items)?);
        }
        rest = &rest[1..];
    }
    if rest.first() != Some(&"M  END") {
        return None;
    }
    Some(ParsedRecord {
        name: lines[0].to_string(),
        elements,
        coords,
        bonds,
        charges,
        fields: parse_fields(&rest[1..]),
    })
}

/// The (atom, value) pairs of a property line after its tag: a count, then pairs.
fn parse_property(items: &str) -> Option<Vec<(u32, i32)>> {
    let numbers: Vec<i32> = items
        .split_whitespace()
        .map(|t| t.parse().ok())
        .collect::<Option<_>>()?;
    let (&count, pairs) = numbers.split_first()?;
    if pairs.len() != 2 * usize::try_from(count).ok()? {
        return None;
    }
    pairs
        .chunks(2)
        .map(|p| Some((u32::try_from(p[0]).ok()?.checked_sub(1)?, p[1])))
        .collect()
}

fn parse_atom(line: &str) -> Option<(String, [f64; 3])> {
    let field = |a: usize, b: usize| line.get(a..b)?.trim().parse::<f64>().ok();
    let element = line.get(31..34)?.trim();
    if element.is_empty() || !element.bytes().all(|b| b.is_ascii_alphabetic()) {
        return None;
    }
    Some((
        element.to_string(),
        [field(0, 10)?, field(10, 20)?, field(20, 30)?],
    ))
}

fn parse_bond(line: &str) -> Option<(u32, u32, u8)> {
    let field = |a: usize, b: usize| line.get(a..b)?.trim().parse::<u32>().ok();
    let (a, b, order) = (field(0, 3)?, field(3, 6)?, field(6, 9)?);
    Some((
        a.checked_sub(1)?,
        b.checked_sub(1)?,
        u8::try_from(order).ok()?,
    ))
}

fn parse_fields(lines: &[&str]) -> Vec<(String, String)> {
    let mut out = Vec::new();
    let mut i = 0;
    while i < lines.len() {
        if let Some(name) = lines[i]
            .strip_prefix("> <")
            .and_then(|s| s.strip_suffix('>'))
        {
            let value: Vec<&str> = lines[i + 1..]
                .iter()
                .take_while(|l| !l.is_empty())
                .copied()
                .collect();
            i += 1 + value.len();
            out.push((name.to_string(), value.join(" ")));
        } else {
            i += 1;
        }
    }
    out
}
