//! Parsing of atom-count arguments: single even counts (`60`) or inclusive even ranges (`60..100`).

use super::CliError;
use cagerank::spiral::check_fullerene_atoms;

/// One requested size. `Empty` marks a size inside a range that has no fullerene (22), so that a
/// range reports it with zero isomers instead of failing.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Size {
    Atoms(u64),
    Empty(u64),
}

/// Expands the SIZES arguments in order; a size given alone must be a valid fullerene size.
pub fn parse_sizes(args: &[String]) -> Result<Vec<Size>, CliError> {
    let mut out = Vec::new();
    for arg in args {
        if let Some((a, b)) = arg.split_once("..") {
            let lo = parse_count(a, arg)?;
            let hi = parse_count(b, arg)?;
            if lo > hi || lo % 2 == 1 || hi % 2 == 1 {
                return Err(CliError::usage(format!(
                    "range '{arg}' must go from an even size up to an even size, e.g. 60..100"
                )));
            }
            for n in (lo..=hi).step_by(2) {
                match check_fullerene_atoms(n) {
                    Ok(()) => out.push(Size::Atoms(n)),
                    Err(_) if n == 22 => out.push(Size::Empty(n)),
                    Err(e) => return Err(CliError::usage(format!("in range '{arg}': {e}"))),
                }
            }
        } else {
            let n = parse_count(arg, arg)?;
            check_fullerene_atoms(n).map_err(|e| CliError::usage(e.to_string()))?;
            out.push(Size::Atoms(n));
        }
    }
    Ok(out)
}

fn parse_count(text: &str, arg: &str) -> Result<u64, CliError> {
    let t = text.trim().trim_start_matches(['C', 'c']);
    t.parse().map_err(|_| {
        CliError::usage(format!(
            "'{arg}' is not an atom count or range; use e.g. 60 or 60..100"
        ))
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ranges_expand_to_even_sizes() {
        let s = parse_sizes(&["20..26".to_string()]).unwrap();
        assert_eq!(
            s,
            vec![
                Size::Atoms(20),
                Size::Empty(22),
                Size::Atoms(24),
                Size::Atoms(26)
            ]
        );
        assert!(parse_sizes(&["22".to_string()]).is_err());
        assert!(parse_sizes(&["61".to_string()]).is_err());
        assert!(parse_sizes(&["60..59".to_string()]).is_err());
        assert!(parse_sizes(&["abc".to_string()]).is_err());
    }
}
