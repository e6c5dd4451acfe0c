//! Reader for MDL molfiles and SD files (V2000 connection tables), single- or multi-record.
//!
//! Layout per the CTfile formats specification (MDL/BIOVIA): three header lines, a counts line
//! (atoms in columns 1-3, bonds in 4-6, `V2000` in 35-39), an atom block (x, y, z in columns
//! 1-10, 11-20, 21-30, symbol in 32-34), a bond block, property lines up to `M  END`, and for SD
//! files data items up to `$$$$`. Fixed columns are read first and whitespace-separated fields
//! are accepted as a fallback, since many writers pad loosely. The bond block is checked for
//! shape and then skipped: bonds are perceived from distances so that XYZ and SDF input go
//! through the same checks. V3000 tables are refused with a message.

use super::{clip, Cursor, MAX_ATOMS};
use super::{element_symbol, parse_coordinate, Atom, ParseError, ParseErrorKind, Structure};

/// Reads every record of a molfile or SD file.
pub fn parse(text: &str) -> Result<Vec<Structure>, ParseError> {
    let mut lines = Cursor::new(text);
    let mut records = Vec::new();
    while lines.skip_blank() {
        records.push(read_record(&mut lines)?);
    }
    if records.is_empty() {
        return Err(ParseError {
            line: 1,
            kind: ParseErrorKind::Empty,
        });
    }
    Ok(records)
}

fn read_record(lines: &mut Cursor) -> Result<Structure, ParseError> {
    let first = lines.line_number();
    let mut header = Vec::with_capacity(3);
    for _ in 0..3 {
        let (_, l) = lines.next().ok_or_else(|| ended(first + header.len()))?;
        header.push(l);
    }
    let (count_line, counts) = lines.next().ok_or_else(|| ended(first + 3))?;
    let (atom_count, bond_count) = parse_counts(count_line, counts)?;
    let mut atoms = Vec::new();
    for _ in 0..atom_count {
        let (line, text) = lines
            .next()
            .ok_or_else(|| ended(count_line + atoms.len() + 1))?;
        atoms.push(parse_atom(line, text)?);
    }
    for k in 0..bond_count {
        let (line, text) = lines
            .next()
            .ok_or_else(|| ended(count_line + atom_count + k + 1))?;
        check_bond(line, text, atom_count)?;
    }
    skip_to_record_end(lines);
    Ok(Structure {
        title: header[0].trim().to_string(),
        atoms,
        line: first,
    })
}

fn ended(line: usize) -> ParseError {
    ParseError {
        line,
        kind: ParseErrorKind::UnexpectedEnd,
    }
}

/// Skips property lines and SD data items up to `$$$$` (or the end of a lone molfile).
fn skip_to_record_end(lines: &mut Cursor) {
    while let Some((_, text)) = lines.next() {
        if text.trim_end() == "$$$$" {
            break;
        }
    }
}

fn parse_counts(line: usize, text: &str) -> Result<(usize, usize), ParseError> {
    if text.contains("V3000") {
        return Err(ParseError {
            line,
            kind: ParseErrorKind::Unsupported {
                what: "V3000 molfiles are not supported; save the structure as V2000".into(),
            },
        });
    }
    let fixed = (field(text, 0, 3), field(text, 3, 6));
    let loose: Vec<&str> = text.split_whitespace().take(2).collect();
    let pair = match fixed {
        (Some(a), Some(b)) => Some((a, b)),
        _ if loose.len() == 2 => loose[0].parse().ok().zip(loose[1].parse().ok()),
        _ => None,
    };
    let Some((atoms, bonds)) = pair else {
        return Err(ParseError {
            line,
            kind: ParseErrorKind::BadCount { found: clip(text) },
        });
    };
    if atoms > MAX_ATOMS as u64 || bonds > 3 * MAX_ATOMS as u64 {
        return Err(ParseError {
            line,
            kind: ParseErrorKind::TooManyAtoms { count: atoms },
        });
    }
    Ok((atoms as usize, bonds as usize))
}

/// An unsigned integer in byte columns `from..to`, if the line has them.
fn field(text: &str, from: usize, to: usize) -> Option<u64> {
    text.get(from..to.min(text.len()))?.trim().parse().ok()
}

fn parse_atom(line: usize, text: &str) -> Result<Atom, ParseError> {
    fixed_atom(line, text).or_else(|_| loose_atom(line, text))
}

fn fixed_atom(line: usize, text: &str) -> Result<Atom, ParseError> {
    let bad = || ParseError {
        line,
        kind: ParseErrorKind::BadAtomLine { found: clip(text) },
    };
    let mut position = [0.0; 3];
    for (axis, slot) in position.iter_mut().enumerate() {
        let column = text.get(10 * axis..10 * axis + 10).ok_or_else(bad)?;
        *slot = parse_coordinate(line, column.trim())?;
    }
    let symbol = text.get(31..34.min(text.len())).ok_or_else(bad)?.trim();
    let element = element_symbol(symbol).ok_or_else(bad)?;
    Ok(Atom { element, position })
}

fn loose_atom(line: usize, text: &str) -> Result<Atom, ParseError> {
    let fields: Vec<&str> = text.split_whitespace().take(4).collect();
    if fields.len() < 4 {
        return Err(ParseError {
            line,
            kind: ParseErrorKind::BadAtomLine { found: clip(text) },
        });
    }
    let mut position = [0.0; 3];
    for (axis, slot) in position.iter_mut().enumerate() {
        *slot = parse_coordinate(line, fields[axis])?;
    }
    let element = element_symbol(fields[3]).ok_or(ParseError {
        line,
        kind: ParseErrorKind::BadElement {
            found: clip(fields[3]),
        },
    })?;
    Ok(Atom { element, position })
}

/// A bond line must name two atoms of this record.
fn check_bond(line: usize, text: &str, atoms: usize) -> Result<(), ParseError> {
    let fixed = field(text, 0, 3).zip(field(text, 3, 6));
    let loose = || {
        let mut it = text.split_whitespace().map(|t| t.parse::<u64>().ok());
        it.next().flatten().zip(it.next().flatten())
    };
    let ok = fixed
        .or_else(loose)
        .is_some_and(|(a, b)| (1..=atoms as u64).contains(&a) && (1..=atoms as u64).contains(&b));
    if ok {
        Ok(())
    } else {
        Err(ParseError {
            line,
            kind: ParseErrorKind::BadBondLine { found: clip(text) },
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const TWO: &str = "\
first
  cagerank

  2  1  0  0  0  0  0  0  0  0999 V2000
    0.0000    0.0000    0.0000 C   0  0  0  0  0  0  0  0  0  0  0  0
    1.4000    0.0000    0.0000 C   0  0  0  0  0  0  0  0  0  0  0  0
  1  2  1  0
M  END
> <note>
hello

$$$$
second
  cagerank

  1  0  0  0  0  0  0  0  0  0999 V2000
-1000.0000-1000.0000-1000.0000 C   0  0
M  END
$$$$
";

    #[test]
    fn reads_two_records_fixed_columns() {
        let recs = parse(TWO).unwrap();
        assert_eq!(recs.len(), 2);
        assert_eq!(recs[0].title, "first");
        assert_eq!(recs[0].atoms[1].position, [1.4, 0.0, 0.0]);
        // Columns that touch each other are still read (CTfile fixed columns).
        assert_eq!(recs[1].atoms[0].position, [-1000.0; 3]);
    }

    #[test]
    fn loose_whitespace_atoms_are_accepted() {
        let text = "x\n\n\n1 0 V2000\n 0.5 0.25 -1 C\nM  END\n";
        let recs = parse(text).unwrap();
        assert_eq!(recs[0].atoms[0].position, [0.5, 0.25, -1.0]);
    }

    #[test]
    fn bond_to_missing_atom_is_rejected() {
        let text = TWO.replace("  1  2  1  0", "  1  3  1  0");
        let err = parse(&text).unwrap_err();
        assert_eq!(err.line, 7);
        assert!(matches!(err.kind, ParseErrorKind::BadBondLine { .. }));
    }

    #[test]
    fn v3000_is_refused() {
        let text = "x\n\n\n  0  0  0     0  0            999 V3000\n";
        assert!(matches!(
            parse(text).unwrap_err().kind,
            ParseErrorKind::Unsupported { .. }
        ));
    }
}
