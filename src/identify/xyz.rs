//! Reader for XYZ coordinate files, single- or multi-frame.
//!
//! Each frame is an atom count line, a comment line (kept as the frame's title), then one line
//! per atom: an element symbol (or atomic number) and x y z in Å; extra columns such as forces
//! or charges are ignored. Blank lines between frames are allowed. The reader never trusts the
//! announced count for allocation and stops with a line-numbered error on anything malformed.
//! It knows nothing about bonds or cages: that is left to [`super::perceive`] and
//! [`super::embed`].

use super::{element_symbol, parse_coordinate, Atom, Cursor, ParseError, ParseErrorKind};
use super::{Structure, MAX_ATOMS};

/// Reads every frame of an XYZ file.
pub fn parse(text: &str) -> Result<Vec<Structure>, ParseError> {
    let mut lines = Cursor::new(text);
    let mut frames = Vec::new();
    while lines.skip_blank() {
        let (count_line, count_text) = lines.next().expect("skip_blank saw a line");
        let count = parse_count(count_line, count_text)?;
        let (_, title) = lines.next().ok_or(ParseError {
            line: count_line + 1,
            kind: ParseErrorKind::Truncated {
                expected: count,
                got: 0,
            },
        })?;
        let atoms = read_atoms(&mut lines, count, count_line + 1)?;
        frames.push(Structure {
            title: title.trim().to_string(),
            atoms,
            line: count_line,
        });
    }
    if frames.is_empty() {
        return Err(ParseError {
            line: 1,
            kind: ParseErrorKind::Empty,
        });
    }
    Ok(frames)
}

fn parse_count(line: usize, text: &str) -> Result<usize, ParseError> {
    let token = text.split_whitespace().next().unwrap_or("");
    let bad = || ParseError {
        line,
        kind: ParseErrorKind::BadCount {
            found: super::clip(text),
        },
    };
    let count: u64 = token.parse().map_err(|_| bad())?;
    if text.split_whitespace().count() != 1 {
        return Err(bad());
    }
    if count > MAX_ATOMS as u64 {
        return Err(ParseError {
            line,
            kind: ParseErrorKind::TooManyAtoms { count },
        });
    }
    Ok(count as usize)
}

fn read_atoms(
    lines: &mut Cursor,
    count: usize,
    title_line: usize,
) -> Result<Vec<Atom>, ParseError> {
    let mut atoms = Vec::new();
    let mut last = title_line;
    while atoms.len() < count {
        let Some((line, text)) = lines.next() else {
            return Err(ParseError {
                line: last + 1,
                kind: ParseErrorKind::Truncated {
                    expected: count,
                    got: atoms.len(),
                },
            });
        };
        last = line;
        atoms.push(parse_atom(line, text)?);
    }
    Ok(atoms)
}

fn parse_atom(line: usize, text: &str) -> Result<Atom, ParseError> {
    let fields: Vec<&str> = text.split_whitespace().take(4).collect();
    if fields.len() < 4 {
        return Err(ParseError {
            line,
            kind: ParseErrorKind::BadAtomLine {
                found: super::clip(text),
            },
        });
    }
    let element = element_symbol(fields[0]).ok_or(ParseError {
        line,
        kind: ParseErrorKind::BadElement {
            found: super::clip(fields[0]),
        },
    })?;
    let mut position = [0.0; 3];
    for (axis, field) in fields[1..].iter().enumerate() {
        position[axis] = parse_coordinate(line, field)?;
    }
    Ok(Atom { element, position })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reads_two_frames_with_extra_columns() {
        let text = "2\nfirst\nC 0 0 0 0.1\nC 1.4 0 0\n\n1\nsecond\nc 0 0 1\n";
        let frames = parse(text).unwrap();
        assert_eq!(frames.len(), 2);
        assert_eq!(frames[0].title, "first");
        assert_eq!(frames[0].atoms[1].position, [1.4, 0.0, 0.0]);
        assert_eq!(frames[1].atoms[0].element, "C");
        assert_eq!(frames[1].line, 6);
    }

    #[test]
    fn truncated_frame_names_the_counts() {
        let err = parse("3\nx\nC 0 0 0\n").unwrap_err();
        assert!(matches!(
            err.kind,
            ParseErrorKind::Truncated {
                expected: 3,
                got: 1
            }
        ));
    }

    #[test]
    fn nan_coordinate_is_rejected() {
        let err = parse("1\nx\nC nan 0 0\n").unwrap_err();
        assert_eq!(err.line, 3);
        assert!(matches!(err.kind, ParseErrorKind::BadCoordinate { .. }));
    }
}
