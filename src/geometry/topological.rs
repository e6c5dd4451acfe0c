//! Topological coordinates: a first 3D embedding of a cage from its Hückel eigenvectors
//! (Manolopoulos & Fowler, J. Chem. Phys. 96 (1992) 7603).
//!
//! For a cubic cage the top adjacency eigenvector is constant (x = 3); the next three, the
//! p-type levels, vary like x, y and z over a sphere-like cage, so they serve as coordinates.
//! Scaling and checking the embedding happen here; relaxation is left to `forcefield`/`minimise`.

use crate::cage::Cage;
use crate::score::huckel::eigen_decomposition;

/// Mean bond length of the scaled embedding, in Å (between C60's 1.401 and 1.458 Å bonds;
/// Hedberg et al., Science 254 (1991) 410).
pub const START_BOND: f64 = 1.44;

/// How many eigenvectors below the top one are tried when the first three fail.
const CANDIDATE_LEVELS: usize = 6;
/// Smallest acceptable distance between two atoms, as a fraction of the mean bond length.
/// Common practice, no source: atoms that nearly coincide make a start the minimiser cannot untangle.
const MIN_SEPARATION: f64 = 0.3;
/// Sweeps of stress majorisation on a start no eigenvector triple makes usable. Common practice,
/// no source: the stress of a 1000-atom tube stops changing visibly after a few tens of sweeps.
const STRESS_SWEEPS: usize = 50;
/// Coefficients below this fraction of the largest one count as zero when counting nodal domains.
/// Common practice, no source: well above rounding (1e-15) and well below any real coefficient.
const NODE_TOLERANCE: f64 = 1e-8;

/// Topological coordinates of `cage` scaled to a mean bond of [`START_BOND`] Å, or `None` if no
/// triple of low-lying eigenvectors separates the atoms.
///
/// The three axes are Manolopoulos & Fowler's p-type eigenvectors: the highest levels below the
/// top one whose eigenvector has a single nodal surface, i.e. exactly two nodal domains. On a
/// near-spherical cage these are the first three levels; on an elongated one the first levels
/// are waves along the axis (cos kπz/L, k + 1 domains) and the two transverse p levels come
/// later, which is why the choice is by nodal domains and not by position. If that triple does
/// not separate the atoms, triples of the first [`CANDIDATE_LEVELS`] levels are tried in order;
/// if none does, the p-type start (else the best-separated one) is refined by stress
/// majorisation, see [`stress_majorised`].
///
/// Each axis is scaled by 1/sqrt(3 - x) (x its eigenvalue): for a normalised eigenvector c,
/// sum over bonds of (c_i - c_j)² = 3 - x, so the scaling makes each axis contribute equally to
/// bond lengths, which in the continuum limit gives an elongated cage its true aspect ratio.
pub fn coordinates(cage: &Cage) -> Option<Vec<[f64; 3]>> {
    let (values, vectors) = eigen_decomposition(cage);
    let p_type: Vec<usize> = (1..values.len())
        .filter(|&level| nodal_domains(cage, &vectors[level]) == 2)
        .take(3)
        .collect();
    let top = (1 + CANDIDATE_LEVELS).min(values.len());
    let preferred = <[usize; 3]>::try_from(p_type).ok();
    let mut p_start = None;
    let mut best: Option<(f64, Vec<[f64; 3]>)> = None;
    for triple in preferred.into_iter().chain(triples(1, top)) {
        let Some(coords) = embed(cage, &values, &vectors, triple) else {
            continue;
        };
        let separation = min_separation(&coords) / START_BOND;
        if separation >= MIN_SEPARATION {
            return Some(coords);
        }
        if Some(triple) == preferred {
            p_start = Some(coords.clone());
        }
        if best.as_ref().is_none_or(|(s, _)| separation > *s) {
            best = Some((separation, coords));
        }
    }
    let (separation, fallback) = best?;
    let refined = stress_majorised(cage, p_start.unwrap_or_else(|| fallback.clone()));
    if min_separation(&refined) / START_BOND > separation {
        Some(refined)
    } else {
        (separation > 0.0).then_some(fallback)
    }
}

/// Refines a start by stress majorisation (Gansner, Koren & North, Graph Drawing 2004, LNCS 3383,
/// p. 239): each atom in turn moves to the weighted mean of where every other atom would put it
/// at the target distance, the number of bonds between them times [`START_BOND`], with weights
/// 1/d² so near neighbours dominate. Used only when no eigenvector triple separates the atoms:
/// on a long tube (about 1000 atoms and up) the end caps are squeezed where cos(πz/L)
/// flattens, and the force field alone crumples them; graph distances spread them out. O(n²)
/// per sweep.
pub fn stress_majorised(cage: &Cage, mut coords: Vec<[f64; 3]>) -> Vec<[f64; 3]> {
    let n = coords.len();
    let hops = graph_distances(cage);
    for _ in 0..STRESS_SWEEPS {
        for i in 0..n {
            let mut sum = [0.0; 3];
            let mut weights = 0.0;
            for (j, &h) in hops[i * n..(i + 1) * n].iter().enumerate() {
                if j == i {
                    continue;
                }
                let target = f64::from(h) * START_BOND;
                let w = 1.0 / (target * target);
                let r = distance(coords[i], coords[j]).max(1e-9);
                for d in 0..3 {
                    sum[d] += w * (coords[j][d] + target * (coords[i][d] - coords[j][d]) / r);
                }
                weights += w;
            }
            coords[i] = sum.map(|s| s / weights);
        }
    }
    let factor = START_BOND / mean_bond(cage, &coords);
    coords.iter_mut().flatten().for_each(|c| *c *= factor);
    coords
}

/// Number of bonds on a shortest path between every two atoms, row-major n × n (breadth-first
/// search from every atom).
fn graph_distances(cage: &Cage) -> Vec<u32> {
    let n = cage.atoms();
    let mut out = vec![u32::MAX; n * n];
    let mut queue = std::collections::VecDeque::new();
    for source in 0..n {
        let row = &mut out[source * n..(source + 1) * n];
        row[source] = 0;
        queue.push_back(source);
        while let Some(i) = queue.pop_front() {
            for &j in &cage.rotation()[i] {
                let j = j as usize;
                if row[j] == u32::MAX {
                    row[j] = row[i] + 1;
                    queue.push_back(j);
                }
            }
        }
    }
    out
}

/// Number of nodal domains of `vector` on the cage: connected groups of bonded atoms whose
/// coefficients share a sign. Atoms with a coefficient that is zero to rounding (on a nodal
/// plane) belong to no domain, so rounding noise cannot split one.
pub fn nodal_domains(cage: &Cage, vector: &[f64]) -> usize {
    let largest = vector.iter().fold(0.0_f64, |m, c| m.max(c.abs()));
    let sign = |i: usize| {
        let c = vector[i];
        if c.abs() <= NODE_TOLERANCE * largest {
            0
        } else if c > 0.0 {
            1
        } else {
            -1
        }
    };
    let mut seen = vec![false; vector.len()];
    let mut stack = Vec::new();
    let mut domains = 0;
    for start in 0..vector.len() {
        if seen[start] || sign(start) == 0 {
            continue;
        }
        domains += 1;
        seen[start] = true;
        stack.push(start);
        while let Some(i) = stack.pop() {
            for &j in &cage.rotation()[i] {
                let j = j as usize;
                if !seen[j] && sign(j) == sign(i) {
                    seen[j] = true;
                    stack.push(j);
                }
            }
        }
    }
    domains
}

/// Index triples i < j < k in `from..to`, in lexicographic order so (1, 2, 3) comes first.
fn triples(from: usize, to: usize) -> Vec<[usize; 3]> {
    let mut out = Vec::new();
    for i in from..to {
        for j in i + 1..to {
            for k in j + 1..to {
                out.push([i, j, k]);
            }
        }
    }
    out
}

fn embed(
    cage: &Cage,
    values: &[f64],
    vectors: &[Vec<f64>],
    levels: [usize; 3],
) -> Option<Vec<[f64; 3]>> {
    let n = cage.atoms();
    let scale = levels.map(|l| 1.0 / (3.0 - values[l]).max(1e-9).sqrt());
    let mut coords: Vec<[f64; 3]> = (0..n)
        .map(|i| std::array::from_fn(|d| scale[d] * vectors[levels[d]][i]))
        .collect();
    let mean = mean_bond(cage, &coords);
    if !(mean.is_finite() && mean > 0.0) {
        return None;
    }
    let factor = START_BOND / mean;
    coords.iter_mut().flatten().for_each(|c| *c *= factor);
    Some(coords)
}

/// Mean bond length of `coords` over the bonds of `cage`.
pub fn mean_bond(cage: &Cage, coords: &[[f64; 3]]) -> f64 {
    let sum: f64 = cage
        .edges()
        .iter()
        .map(|&[a, b]| distance(coords[a as usize], coords[b as usize]))
        .sum();
    sum / cage.edges().len() as f64
}

pub fn distance(a: [f64; 3], b: [f64; 3]) -> f64 {
    ((a[0] - b[0]).powi(2) + (a[1] - b[1]).powi(2) + (a[2] - b[2]).powi(2)).sqrt()
}

/// Smallest distance between any two atoms.
pub fn min_separation(coords: &[[f64; 3]]) -> f64 {
    let mut best = f64::INFINITY;
    for (i, &a) in coords.iter().enumerate() {
        for &b in &coords[i + 1..] {
            best = best.min(distance(a, b));
        }
    }
    best
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::spiral::Spiral;

    #[test]
    fn c60_has_one_domain_at_the_top_level_two_at_p_and_more_at_d() {
        // from memory: Fowler & Manolopoulos, An Atlas of Fullerenes (1995), C60-Ih spiral.
        let cage =
            Spiral::from_pentagon_indices(60, &[1, 7, 9, 11, 13, 15, 18, 20, 22, 24, 26, 32])
                .unwrap()
                .to_cage();
        let (_, vectors) = eigen_decomposition(&cage);
        // Levels 1-3 are the t1u (p-type) level, 4-8 the hg (d-type) level (from memory: Hückel
        // spectrum of C60: 3, then x = 2.757 threefold, then x = 2.303 fivefold).
        let domains: Vec<usize> = (0..9).map(|l| nodal_domains(&cage, &vectors[l])).collect();
        assert_eq!(&domains[..4], &[1, 2, 2, 2]);
        assert!(domains[4..].iter().all(|&d| d >= 3), "{domains:?}");
    }

    #[test]
    fn a_long_tube_gets_separated_atoms() {
        // A (5,5) tube C500 capped by C60 halves (as in tests/suite/geometry.rs): its first five
        // levels below the top are waves along the axis, which put whole rings on one point.
        let cage = Spiral::from_pentagon_indices(
            500,
            &[1, 7, 9, 11, 13, 15, 238, 240, 242, 244, 246, 252],
        )
        .unwrap()
        .to_cage();
        let coords = coordinates(&cage).unwrap();
        assert!(min_separation(&coords) >= MIN_SEPARATION * START_BOND);
    }

    #[test]
    fn stress_majorisation_separates_the_squeezed_caps_of_a_longer_tube() {
        // The same construction with 94 rings (C1000): the p-type triple squeezes the caps.
        let cage = Spiral::from_pentagon_indices(
            1000,
            &[1, 7, 9, 11, 13, 15, 488, 490, 492, 494, 496, 502],
        )
        .unwrap()
        .to_cage();
        let (values, vectors) = eigen_decomposition(&cage);
        let p_type: Vec<usize> = (1..values.len())
            .filter(|&level| nodal_domains(&cage, &vectors[level]) == 2)
            .take(3)
            .collect();
        let start = embed(&cage, &values, &vectors, p_type.try_into().unwrap()).unwrap();
        assert!(min_separation(&start) < MIN_SEPARATION * START_BOND);
        let refined = stress_majorised(&cage, start);
        assert!(min_separation(&refined) >= MIN_SEPARATION * START_BOND);
        assert!((mean_bond(&cage, &refined) - START_BOND).abs() < 1e-9);
    }
}
