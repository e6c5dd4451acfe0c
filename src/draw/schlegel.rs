//! Schlegel diagrams: a plane drawing of a cage seen through one face, computed as a Tutte
//! barycentric embedding (Tutte, Proc. London Math. Soc. 13 (1963) 743).
//!
//! The outer face is pinned to a regular polygon and every other atom sits at the weighted
//! average of its neighbours. For a 3-connected plane graph and any positive weights this places
//! every face as a convex polygon with no edge crossings (Tutte 1963 for equal weights; Floater,
//! Comput. Aided Geom. Des. 14 (1997) 231 for general positive weights). A few rounds of
//! re-weighting by edge length spread the crowded centre while keeping that guarantee.
//! Rendering to SVG is left to `svg.rs`.

use crate::cage::Cage;
use crate::spiral::Automorphism;

/// Which kind of face to look through.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum OuterFace {
    /// The face with the largest stabiliser (ties: larger face, then lower index).
    Auto,
    Pentagon,
    Hexagon,
}

/// Rounds of length re-weighting after the plain Tutte solve.
/// Common practice, no source: a handful of rounds evens out edge lengths visibly.
const REWEIGHT_ROUNDS: usize = 6;

/// Number of automorphisms fixing face `f` (1 if none are given).
pub fn stabiliser(f: usize, automorphisms: &[Automorphism]) -> usize {
    automorphisms
        .iter()
        .filter(|a| a.faces.get(f) == Some(&(f as u32)))
        .count()
        .max(1)
}

/// Picks the outer face: among faces of the wanted size, the one with the largest stabiliser
/// under the automorphism group (the most symmetric view). `None` if no face has that size.
pub fn choose_outer(
    cage: &Cage,
    automorphisms: &[Automorphism],
    outer: OuterFace,
) -> Option<usize> {
    let wanted = match outer {
        OuterFace::Auto => None,
        OuterFace::Pentagon => Some(5),
        OuterFace::Hexagon => Some(6),
    };
    (0..cage.face_count())
        .filter(|&f| wanted.is_none_or(|s| cage.faces()[f].len() == s))
        .max_by_key(|&f| {
            (
                stabiliser(f, automorphisms),
                cage.faces()[f].len(),
                std::cmp::Reverse(f),
            )
        })
}

/// Plane positions of all atoms with face `outer` on the unit circle.
pub fn embed(cage: &Cage, outer: usize) -> Vec<[f64; 2]> {
    embed_with(cage, outer, REWEIGHT_ROUNDS)
}

/// As [`embed`] with a chosen number of re-weighting rounds (0 = plain Tutte embedding).
pub fn embed_with(cage: &Cage, outer: usize, rounds: usize) -> Vec<[f64; 2]> {
    let n = cage.atoms();
    let boundary = &cage.faces()[outer];
    let mut fixed: Vec<Option<[f64; 2]>> = vec![None; n];
    let m = boundary.len() as f64;
    for (i, &v) in boundary.iter().enumerate() {
        let angle = std::f64::consts::FRAC_PI_2 + 2.0 * std::f64::consts::PI * i as f64 / m;
        fixed[v as usize] = Some([angle.cos(), angle.sin()]);
    }
    let mut weights = vec![1.0; cage.edges().len()];
    let mut points = solve(cage, &fixed, &weights);
    for _ in 0..rounds {
        reweight(cage, &points, &mut weights);
        points = solve(cage, &fixed, &weights);
    }
    points
}

/// New weight of each edge ∝ its current length (normalised), so long edges pull harder and
/// short ones relax; all weights stay positive, which keeps the drawing planar.
fn reweight(cage: &Cage, points: &[[f64; 2]], weights: &mut [f64]) {
    for (w, &[a, b]) in weights.iter_mut().zip(cage.edges()) {
        let (p, q) = (points[a as usize], points[b as usize]);
        let len = ((p[0] - q[0]).powi(2) + (p[1] - q[1]).powi(2)).sqrt();
        *w *= len.max(1e-6);
    }
    let mean = weights.iter().sum::<f64>() / weights.len() as f64;
    weights.iter_mut().for_each(|w| *w /= mean);
}

/// Solves the weighted Laplacian system for the free atoms (dense Cholesky: the interior block
/// of a connected graph's Laplacian with a fixed boundary is symmetric positive definite).
fn solve(cage: &Cage, fixed: &[Option<[f64; 2]>], weights: &[f64]) -> Vec<[f64; 2]> {
    let free: Vec<usize> = (0..cage.atoms()).filter(|&v| fixed[v].is_none()).collect();
    let mut slot = vec![usize::MAX; cage.atoms()];
    for (i, &v) in free.iter().enumerate() {
        slot[v] = i;
    }
    let k = free.len();
    let mut matrix = vec![0.0; k * k];
    let mut rhs = vec![[0.0; 2]; k];
    for (&[a, b], &w) in cage.edges().iter().zip(weights) {
        for (u, v) in [(a as usize, b as usize), (b as usize, a as usize)] {
            if slot[u] == usize::MAX {
                continue;
            }
            matrix[slot[u] * k + slot[u]] += w;
            match fixed[v] {
                Some(p) => {
                    rhs[slot[u]][0] += w * p[0];
                    rhs[slot[u]][1] += w * p[1];
                }
                None => matrix[slot[u] * k + slot[v]] -= w,
            }
        }
    }
    let solution = cholesky_solve(&mut matrix, k, rhs);
    (0..cage.atoms())
        .map(|v| fixed[v].unwrap_or_else(|| solution[slot[v]]))
        .collect()
}

/// In-place Cholesky factorisation A = L Lᵀ and two triangular solves for two right-hand sides.
fn cholesky_solve(a: &mut [f64], k: usize, mut b: Vec<[f64; 2]>) -> Vec<[f64; 2]> {
    for j in 0..k {
        let mut d = a[j * k + j];
        for p in 0..j {
            d -= a[j * k + p] * a[j * k + p];
        }
        let d = d.max(1e-300).sqrt();
        a[j * k + j] = d;
        for i in j + 1..k {
            let mut s = a[i * k + j];
            for p in 0..j {
                s -= a[i * k + p] * a[j * k + p];
            }
            a[i * k + j] = s / d;
        }
    }
    for i in 0..k {
        for p in 0..i {
            let l = a[i * k + p];
            b[i][0] -= l * b[p][0];
            b[i][1] -= l * b[p][1];
        }
        b[i][0] /= a[i * k + i];
        b[i][1] /= a[i * k + i];
    }
    for i in (0..k).rev() {
        for p in i + 1..k {
            let l = a[p * k + i];
            b[i][0] -= l * b[p][0];
            b[i][1] -= l * b[p][1];
        }
        b[i][0] /= a[i * k + i];
        b[i][1] /= a[i * k + i];
    }
    b
}
