//! Bond orders of a cage: Pauling orders (from Kekulé structures), Coulson pi bond orders (from
//! Hückel orbitals) and the ring pi-electron content of every face.
//!
//! Pauling orders use the Kasteleyn matrix K of [`super::kekule::kasteleyn_orientation`]: the
//! fraction of Kekulé structures in which edge uv is double is |(K^-1)_uv|, because
//! (K^-1)_uv = ±Pf(K minus rows/columns u, v) / Pf(K) and the minor counts the matchings of the
//! cage without u and v. They are computed in floating point (faer LU); exact counts live in
//! [`super::kekule`]. Coulson orders use [`super::huckel::eigen_decomposition`]. This module
//! never mutates a cage.

use crate::cage::Cage;
use crate::score::huckel::{self, HuckelError, DEGENERACY_TOL};
use crate::score::kekule::kasteleyn_orientation;
use faer::linalg::solvers::DenseSolveCore;
use faer::Mat;

/// Pauling bond order of every edge (aligned with [`Cage::edges`]): the fraction of Kekulé
/// structures in which the edge is a double bond. Every polyhedral cage is cubic and bridgeless,
/// so it has a Kekulé structure (Petersen's theorem) and K is invertible.
pub fn pauling_bond_orders(cage: &Cage) -> Vec<f64> {
    let n = cage.atoms();
    let forward = kasteleyn_orientation(cage);
    let mut k = Mat::<f64>::zeros(n, n);
    for (e, &[u, v]) in cage.edges().iter().enumerate() {
        let s = if forward[e] { 1.0 } else { -1.0 };
        k[(u as usize, v as usize)] = s;
        k[(v as usize, u as usize)] = -s;
    }
    let inverse = k.partial_piv_lu().inverse();
    cage.edges()
        .iter()
        .map(|&[u, v]| inverse[(u as usize, v as usize)].abs())
        .collect()
}

/// Coulson pi bond order p_uv = sum over orbitals of occupation x c_u c_v for every edge (aligned
/// with [`Cage::edges`]), for the cage ion with `charge` (n - charge pi electrons).
///
/// Orbitals are filled from the most bonding. If the last electrons only partly fill a
/// degenerate level (eigenvalues within [`DEGENERACY_TOL`]), they are spread evenly over all
/// orbitals of that level, which makes the result independent of the arbitrary basis the
/// eigensolver picks inside the level.
pub fn coulson_bond_orders(cage: &Cage, charge: i32) -> Result<Vec<f64>, HuckelError> {
    let electrons = huckel::occupation(cage.atoms(), charge)?.electrons;
    let (values, vectors) = huckel::eigen_decomposition(cage);
    let occupation = occupations(&values, electrons);
    Ok(cage
        .edges()
        .iter()
        .map(|&[u, v]| {
            let (u, v) = (u as usize, v as usize);
            occupation
                .iter()
                .zip(&vectors)
                .filter(|(&occ, _)| occ != 0.0)
                .map(|(&occ, c)| occ * c[u] * c[v])
                .sum()
        })
        .collect())
}

/// Electrons per orbital (descending eigenvalue order) for `electrons` electrons, with a partly
/// filled degenerate level shared evenly.
fn occupations(values: &[f64], electrons: usize) -> Vec<f64> {
    let mut occ = vec![0.0; values.len()];
    let mut left = electrons as f64;
    let mut start = 0;
    while start < values.len() && left > 0.0 {
        let end = (start..values.len())
            .find(|&i| values[start] - values[i] > DEGENERACY_TOL)
            .unwrap_or(values.len());
        let level = (end - start) as f64;
        let per = (left / level).min(2.0);
        occ[start..end].fill(per);
        left -= per * level;
        start = end;
    }
    occ
}

/// Ring pi-electron content of every face (aligned with [`Cage::faces`]): the sum of the Pauling
/// orders of its edges (Randić & Balaban, J. Chem. Inf. Comput. Sci. 44 (2004) 50; in a cage
/// every edge lies on two faces, so each double bond gives one electron to each). The contents
/// sum to n.
pub fn ring_pi_content(cage: &Cage, pauling: &[f64]) -> Vec<f64> {
    let mut content = vec![0.0; cage.face_count()];
    for (&[f, g], &p) in cage.edge_faces().iter().zip(pauling) {
        content[f as usize] += p;
        content[g as usize] += p;
    }
    content
}
