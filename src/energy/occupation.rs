//! How the electrons fill the tight-binding levels, and what the frontier looks like.
//!
//! Levels are grouped into degenerate shells: a level belongs to the current group when it lies
//! within [`DEGENERACY_TOL_EV`] of the group's lowest level. Electrons fill whole groups from the
//! bottom, two per orbital; the first group that cannot be filled completely shares what is left
//! equally among its orbitals. A shared group makes the band energy and the density matrix (and so
//! the forces) functions of the group's subspace alone, so they do not depend on which basis of a
//! degenerate level the eigensolver happens to return: the result is deterministic and invariant
//! under relabelling of the atoms. This module sees only sorted eigenvalues; it leaves the
//! Hamiltonian and the forces to `model.rs`.

use super::{Frontier, Somo};

/// Two levels closer than this (eV) belong to one degenerate group.
///
/// The Hamiltonian's spectral range is about 30 eV and faer's backward-stable solver returns
/// eigenvalues to ~1e-13 of that, so rounding splits a symmetric level by ~1e-12 eV. A symmetric
/// geometry from the force field (converged to 1e-6 aJ/Å, about 1e-7 Å in position) splits a
/// degenerate level by ~1e-6 eV. Real splittings that matter (Jahn-Teller distortions of
/// ~0.01 Å) are ~0.1 eV. 1e-5 eV sits between (common practice, no source).
pub const DEGENERACY_TOL_EV: f64 = 1e-5;

/// Fills `occupations` (one per level, 0..=2 electrons) for `electrons` electrons over the
/// ascending `levels`, and returns the band energy Σ f_k ε_k (eV), the frontier and the number of
/// levels with any electrons (all of them at the start of the list).
pub fn fill(levels: &[f64], electrons: usize, occupations: &mut [f64]) -> (f64, Frontier, usize) {
    occupations.iter_mut().for_each(|f| *f = 0.0);
    let mut remaining = electrons as f64;
    let mut start = 0;
    let mut previous: Option<(usize, usize)> = None;
    let mut band = 0.0;
    loop {
        let end = group_end(levels, start);
        let size = (end - start) as f64;
        let share = (remaining / size).min(2.0);
        for k in start..end {
            occupations[k] = share;
            band += share * levels[k];
        }
        remaining -= share * size;
        if remaining <= 0.0 || end == levels.len() {
            let frontier = frontier(levels, previous, (start, end), share < 2.0);
            return (band, frontier, end);
        }
        previous = Some((start, end));
        start = end;
    }
}

/// One past the last level of the group that starts at `start`.
fn group_end(levels: &[f64], start: usize) -> usize {
    let base = levels[start];
    let mut end = start + 1;
    while end < levels.len() && levels[end] - base <= DEGENERACY_TOL_EV {
        end += 1;
    }
    end
}

fn mean(levels: &[f64]) -> f64 {
    levels.iter().sum::<f64>() / levels.len() as f64
}

/// The frontier from the highest group with electrons (`top`, partly filled or not) and the full
/// group below it. A level that does not exist (no group above or below) is reported as +∞ gap.
fn frontier(
    levels: &[f64],
    below: Option<(usize, usize)>,
    top: (usize, usize),
    partial: bool,
) -> Frontier {
    let level = mean(&levels[top.0..top.1]);
    let above = (top.1 < levels.len()).then(|| mean(&levels[top.1..group_end(levels, top.1)]));
    let above = above.unwrap_or(f64::INFINITY);
    let degenerate = top.1 - top.0 > 1;
    if partial && degenerate {
        return Frontier {
            homo_ev: level,
            lumo_ev: level,
            gap_ev: 0.0,
            somo: None,
            partly_filled: true,
        };
    }
    let somo = partial.then(|| Somo {
        level_ev: level,
        gap_below_ev: below.map_or(f64::INFINITY, |(s, e)| level - mean(&levels[s..e])),
        gap_above_ev: above - level,
    });
    Frontier {
        homo_ev: level,
        lumo_ev: above,
        gap_ev: above - level,
        somo,
        partly_filled: false,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_threefold_level_shares_one_electron() {
        let levels = [-3.0, -1.0, 0.5, 0.5 + 1e-9, 0.5 - 1e-9 + 2e-9, 2.0];
        let mut f = [0.0; 6];
        let (band, frontier, used) = fill(&levels, 5, &mut f);
        assert_eq!(used, 5);
        assert!((f[2] - 1.0 / 3.0).abs() < 1e-15 && f[5] == 0.0);
        assert!((band - (-8.0 + 0.5)).abs() < 1e-8);
        assert!(frontier.partly_filled && frontier.gap_ev == 0.0 && frontier.somo.is_none());
    }

    #[test]
    fn a_single_electron_in_a_simple_level_is_a_somo() {
        let levels = [-3.0, -1.0, 0.5, 2.0];
        let mut f = [0.0; 4];
        let (_, frontier, _) = fill(&levels, 5, &mut f);
        let somo = frontier.somo.expect("odd count gives a SOMO");
        assert_eq!(
            (somo.level_ev, somo.gap_below_ev, somo.gap_above_ev),
            (0.5, 1.5, 1.5)
        );
        assert_eq!((frontier.homo_ev, frontier.lumo_ev), (0.5, 2.0));
        assert!(!frontier.partly_filled);
    }

    #[test]
    fn a_closed_shell_has_homo_below_lumo() {
        let levels = [-3.0, -1.0, -1.0, 0.5];
        let mut f = [0.0; 4];
        let (band, frontier, used) = fill(&levels, 6, &mut f);
        assert_eq!((used, band), (3, -10.0));
        assert_eq!(
            (frontier.homo_ev, frontier.lumo_ev, frontier.gap_ev),
            (-1.0, 0.5, 1.5)
        );
    }
}
