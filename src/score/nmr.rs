//! The 13C NMR pattern of a cage as text, and matching a measured spectrum against it.
//!
//! A pattern is held as `(intensity, lines)` pairs: `intensity` atoms are equivalent under the
//! point group and give one line, and `lines` such lines occur (the orbits come from
//! [`super::symmetry`]). The normal form merges equal intensities and lists the largest first.
//! Every text, printed or parsed, uses the literature's `LINESxINTENSITY` order, smallest
//! intensity first: C70-D5h is `3x10,2x20` (five lines 10:10:20:20:10; Taylor, Hare, Abdul-Sada,
//! Kroto, J. Chem. Soc. Chem. Commun. 1990, 1423, from memory) and C60-Ih `1x60`.
//!
//! Measured spectra often show fewer lines than a candidate predicts, because lines of
//! different sites fall on the same shift by accident. [`merges_into`] accepts a candidate when
//! its lines can be grouped into the measured ones with equal intensity sums. This module
//! computes no symmetry and reads no files.

use std::collections::HashSet;
use std::fmt;

/// Why a pattern text cannot be used.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum NmrError {
    /// Nothing but separators.
    Empty,
    /// A term that is not `LINESxINTENSITY` with whole numbers.
    Junk { term: String },
    /// A term with zero lines or zero intensity.
    Zero { term: String },
    /// Lines times intensity do not add up to the atom count.
    Total { total: u64, atoms: u32 },
}

impl fmt::Display for NmrError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            NmrError::Empty => f.write_str(
                "empty 13C NMR pattern; write LINESxINTENSITY terms, e.g. 3x10,2x20 for C70-D5h",
            ),
            NmrError::Junk { term } => write!(
                f,
                "13C NMR term '{term}' is not LINESxINTENSITY (whole numbers, e.g. 3x10 for three \
                 lines of intensity 10)"
            ),
            NmrError::Zero { term } => write!(
                f,
                "13C NMR term '{term}' has a zero count; every term needs at least 1 line of \
                 intensity at least 1"
            ),
            NmrError::Total { total, atoms } => write!(
                f,
                "13C NMR pattern accounts for {total} atoms (lines x intensity summed), but the \
                 cage has {atoms}; the terms must add up to the atom count"
            ),
        }
    }
}

impl std::error::Error for NmrError {}

/// Normal form: equal intensities merged, largest intensity first, no zero counts. Two
/// patterns describe the same spectrum iff their normal forms are equal.
pub fn normalise(pattern: &[(u32, u32)]) -> Vec<(u32, u32)> {
    let mut out: Vec<(u32, u32)> = Vec::new();
    let mut sorted: Vec<(u32, u32)> = pattern
        .iter()
        .copied()
        .filter(|&(i, n)| i > 0 && n > 0)
        .collect();
    sorted.sort_by_key(|p| std::cmp::Reverse(p.0));
    for (intensity, lines) in sorted {
        match out.last_mut() {
            Some(last) if last.0 == intensity => last.1 += lines,
            _ => out.push((intensity, lines)),
        }
    }
    out
}

/// `LINESxINTENSITY` terms, smallest intensity first, e.g. `3x10,2x20`, from `(intensity,
/// lines)` pairs in any order.
pub fn format_pattern(pattern: &[(u32, u32)]) -> String {
    let terms: Vec<String> = normalise(pattern)
        .iter()
        .rev()
        .map(|&(intensity, lines)| format!("{lines}x{intensity}"))
        .collect();
    terms.join(",")
}

/// Total number of lines.
pub fn line_count(pattern: &[(u32, u32)]) -> u64 {
    pattern.iter().map(|&(_, n)| u64::from(n)).sum()
}

/// Parses `LINESxINTENSITY` terms separated by commas (e.g. `3x10,2x20`) for a cage of `atoms`
/// atoms into the normal form (`(intensity, lines)`, largest intensity first). Terms may repeat
/// an intensity; lines times intensity must add up to `atoms`.
pub fn parse_pattern(text: &str, atoms: u32) -> Result<Vec<(u32, u32)>, NmrError> {
    let mut pairs = Vec::new();
    for term in text.split(',').map(str::trim).filter(|t| !t.is_empty()) {
        let junk = || NmrError::Junk {
            term: term.to_string(),
        };
        let (lines, intensity) = term.split_once(['x', 'X', '×']).ok_or_else(junk)?;
        let number = |s: &str| {
            let s = s.trim();
            // Digits only: no signs, no spaces inside, no decimals.
            if s.is_empty() || !s.bytes().all(|b| b.is_ascii_digit()) {
                return Err(junk());
            }
            s.parse::<u32>().map_err(|_| junk())
        };
        let (lines, intensity) = (number(lines)?, number(intensity)?);
        if lines == 0 || intensity == 0 {
            return Err(NmrError::Zero {
                term: term.to_string(),
            });
        }
        pairs.push((intensity, lines));
    }
    if pairs.is_empty() {
        return Err(NmrError::Empty);
    }
    let total: u64 = pairs
        .iter()
        .map(|&(i, n)| u64::from(i) * u64::from(n))
        .sum();
    if total != u64::from(atoms) {
        return Err(NmrError::Total { total, atoms });
    }
    Ok(normalise(&pairs))
}

/// True if the lines of `candidate` can be split into groups, one group per line of `measured`,
/// each group's intensities adding up to that measured line's intensity (lines that coincide by
/// accident add up). Both patterns are `(intensity, lines)` pairs; equal patterns always match.
pub fn merges_into(candidate: &[(u32, u32)], measured: &[(u32, u32)]) -> bool {
    let candidate = normalise(candidate);
    let measured = normalise(measured);
    let total =
        |p: &[(u32, u32)]| -> u64 { p.iter().map(|&(i, n)| u64::from(i) * u64::from(n)).sum() };
    if total(&candidate) != total(&measured) || line_count(&measured) > line_count(&candidate) {
        return false;
    }
    if candidate == measured {
        return true;
    }
    // Every measured line needs at least one candidate line no more intense than itself.
    let smallest = candidate.last().map_or(0, |p| p.0);
    if measured.iter().any(|&(i, _)| i < smallest) {
        return false;
    }
    let targets: Vec<u32> = measured
        .iter()
        .flat_map(|&(i, n)| std::iter::repeat_n(i, n as usize))
        .collect();
    let values: Vec<u32> = candidate.iter().map(|p| p.0).collect();
    let mut left: Vec<u32> = candidate.iter().map(|p| p.1).collect();
    let mut failed = HashSet::new();
    fill(&targets, 0, &values, &mut left, &mut failed)
}

/// Assigns candidate lines (`left[k]` lines of intensity `values[k]`) to `targets[t..]`, one
/// target at a time, remembering the states that cannot be completed. Targets are sorted
/// largest first, and equal targets are filled in the same way, so each remaining multiset is
/// searched once per target position.
fn fill(
    targets: &[u32],
    t: usize,
    values: &[u32],
    left: &mut [u32],
    failed: &mut HashSet<(usize, Vec<u32>)>,
) -> bool {
    if t == targets.len() {
        return left.iter().all(|&n| n == 0);
    }
    if failed.contains(&(t, left.to_vec())) {
        return false;
    }
    let ok = group(targets, t, targets[t], 0, values, left, failed);
    if !ok {
        failed.insert((t, left.to_vec()));
    }
    ok
}

/// Chooses how many lines of each intensity from `k` on go into target `t`, with `need` still
/// to cover (at least one line per group, since every measured line was seen).
fn group(
    targets: &[u32],
    t: usize,
    need: u32,
    k: usize,
    values: &[u32],
    left: &mut [u32],
    failed: &mut HashSet<(usize, Vec<u32>)>,
) -> bool {
    if need == 0 {
        return fill(targets, t + 1, values, left, failed);
    }
    if k == values.len() {
        return false;
    }
    let most = left[k].min(need / values[k]);
    for take in (0..=most).rev() {
        left[k] -= take;
        let ok = group(
            targets,
            t,
            need - take * values[k],
            k + 1,
            values,
            left,
            failed,
        );
        left[k] += take;
        if ok {
            return true;
        }
    }
    false
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn c70_and_c60_read_and_print_in_the_literature_order() {
        // C70-D5h: five lines 10:10:20:20:10 (Taylor et al., Chem. Commun. 1990, 1423, from
        // memory), i.e. three lines of intensity 10 and two of 20.
        assert_eq!(parse_pattern("3x10,2x20", 70), Ok(vec![(20, 2), (10, 3)]));
        assert_eq!(
            parse_pattern("2x20, 1x10 ,2x10", 70),
            Ok(vec![(20, 2), (10, 3)])
        );
        assert_eq!(format_pattern(&[(20, 2), (10, 3)]), "3x10,2x20");
        assert_eq!(format_pattern(&[(10, 1), (20, 2), (10, 2)]), "3x10,2x20");
        // C60-Ih: one line of all 60 atoms (Taylor et al. 1990, from memory).
        assert_eq!(format_pattern(&[(60, 1)]), "1x60");
        assert_eq!(parse_pattern("1x60", 60), Ok(vec![(60, 1)]));
    }

    #[test]
    fn bad_patterns_are_refused_with_the_reason() {
        assert_eq!(parse_pattern(" , ", 60), Err(NmrError::Empty));
        assert!(matches!(
            parse_pattern("0x1", 60),
            Err(NmrError::Zero { .. })
        ));
        assert!(matches!(
            parse_pattern("60x0", 60),
            Err(NmrError::Zero { .. })
        ));
        assert!(matches!(
            parse_pattern("8y10", 60),
            Err(NmrError::Junk { .. })
        ));
        assert!(matches!(
            parse_pattern("-1x60", 60),
            Err(NmrError::Junk { .. })
        ));
        assert!(matches!(
            parse_pattern("1.5x40", 60),
            Err(NmrError::Junk { .. })
        ));
        assert!(matches!(
            parse_pattern("99999999999x1", 60),
            Err(NmrError::Junk { .. })
        ));
        // 3x10,2x20 is C70's 70 atoms, not C60's 60.
        assert_eq!(
            parse_pattern("3x10,2x20", 60),
            Err(NmrError::Total {
                total: 70,
                atoms: 60
            })
        );
        for e in [NmrError::Empty, NmrError::Total { total: 1, atoms: 2 }] {
            assert!(!e.to_string().contains('\n'));
            assert!(!e.to_string().contains("multiplicity"));
        }
    }

    /// Brute force: try every assignment of candidate lines to measured lines (fine for the
    /// handful of lines below; common practice, no source).
    fn brute(candidate: &[u32], targets: &[u32]) -> bool {
        fn go(c: &[u32], sums: &mut Vec<u32>, targets: &[u32]) -> bool {
            match c.split_first() {
                None => sums.iter().zip(targets).all(|(s, t)| s == t),
                Some((&x, rest)) => (0..sums.len()).any(|j| {
                    sums[j] += x;
                    let ok = sums[j] <= targets[j] && go(rest, sums, targets);
                    sums[j] -= x;
                    ok
                }),
            }
        }
        let mut sums = vec![0; targets.len()];
        go(candidate, &mut sums, targets) && !targets.is_empty()
    }

    fn pairs(lines: &[u32]) -> Vec<(u32, u32)> {
        normalise(&lines.iter().map(|&i| (i, 1)).collect::<Vec<_>>())
    }

    #[test]
    fn merged_lines_match_exactly_when_a_brute_force_grouping_exists() {
        // C70 with two intensity-10 lines on one shift: measured 1x10,3x20.
        assert!(merges_into(&[(20, 2), (10, 3)], &[(20, 3), (10, 1)]));
        // ... nor as two lines of 35, which no sum of tens makes.
        assert!(!merges_into(&[(20, 2), (10, 3)], &[(35, 2)]));
        let cases: [(&[u32], &[u32]); 8] = [
            (&[2, 2, 2, 1, 1], &[4, 2, 2]),
            (&[2, 2, 2, 1, 1], &[3, 3, 2]),
            (&[2, 2, 2, 1, 1], &[5, 3]),
            (&[4, 4, 2], &[6, 4]),
            (&[4, 4, 2], &[5, 5]),
            (&[6, 3, 3], &[9, 3]),
            (&[6, 3, 3], &[4, 8]),
            (&[1, 1, 1, 1], &[2, 2]),
        ];
        for (candidate, measured) in cases {
            assert_eq!(
                merges_into(&pairs(candidate), &pairs(measured)),
                brute(candidate, measured),
                "{candidate:?} into {measured:?}"
            );
        }
        // More measured lines than predicted can never come from merging.
        assert!(!merges_into(&[(60, 1)], &[(30, 2)]));
    }
}
