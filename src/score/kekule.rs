//! Exact Kekulé structure counts (perfect matchings) of a cage, and one Kekulé structure.
//!
//! A plane graph has a Pfaffian orientation: orient the edges so that every bounded face has an
//! odd number of edges directed clockwise (Kasteleyn, in *Graph Theory and Theoretical Physics*,
//! 1967). The skew-symmetric signed adjacency matrix K of such an orientation has |Pf(K)| equal to
//! the number of perfect matchings. We compute Pf(K) exactly by elimination modulo several 31-bit
//! primes and the Chinese remainder theorem, never in floating point; the number of primes comes
//! from the Kahn–Lovász bound, so the count is exact at any size. This module leaves bond orders
//! (which reuse the orientation) to [`super::bonds`].

pub use super::pfaffian::is_prime_u64;
use super::pfaffian::{abs_from_residues, pfaffian_mod, primes_below_2_62, SkewMatrix, Workspace};
use crate::cage::{Cage, EdgeId};
use num_bigint::BigUint;
use num_traits::One;
use std::collections::VecDeque;

/// Edge orientation of a Pfaffian (Kasteleyn) orientation, aligned with [`Cage::edges`]: `true`
/// means the edge points from `edges[e][0]` to `edges[e][1]`.
///
/// Construction: the edges crossed by a spanning tree of the dual (rooted at face 0, the one
/// treated as unbounded) are the complement of a spanning tree of the cage; all other edges are
/// oriented low → high, then faces are fixed from the leaves of the dual tree up, each one by
/// orienting the edge to its parent face so that the face has an odd number of edges running
/// along its own traversal. Faces are all traversed in one sense, so "along" is "clockwise" in a
/// drawing with face 0 outside, or its mirror; both are Pfaffian because every alternating cycle
/// has even length.
pub fn kasteleyn_orientation(cage: &Cage) -> Vec<bool> {
    let (order, parent_edge) = dual_tree(cage);
    let edges = cage.edges();
    let mut forward = vec![true; edges.len()];
    let mut fixed: Vec<bool> = vec![true; edges.len()];
    for &e in parent_edge.iter().flatten() {
        fixed[e] = false;
    }
    for &f in order.iter().rev() {
        let Some(e) = parent_edge[f] else { continue };
        let along = count_along(cage, f, &forward, e);
        // The parent edge must make the total odd.
        let want_along = along % 2 == 0;
        forward[e] = edge_along_face(cage, f, e) == want_along;
        fixed[e] = true;
    }
    debug_assert!(fixed.iter().all(|&x| x));
    forward
}

/// BFS over the dual from face 0: visiting order and, for each face, the edge to its parent.
fn dual_tree(cage: &Cage) -> (Vec<usize>, Vec<Option<usize>>) {
    let faces = cage.faces();
    let mut parent_edge = vec![None; faces.len()];
    let mut seen = vec![false; faces.len()];
    let mut order = Vec::with_capacity(faces.len());
    let mut queue = VecDeque::from([0usize]);
    seen[0] = true;
    while let Some(f) = queue.pop_front() {
        order.push(f);
        for (i, &g) in cage.dual()[f].iter().enumerate() {
            let g = g as usize;
            if !seen[g] {
                seen[g] = true;
                parent_edge[g] = Some(face_edge(cage, f, i));
                queue.push_back(g);
            }
        }
    }
    (order, parent_edge)
}

/// Edge index of the i-th side of face f (from faces[f][i] to faces[f][i+1]).
fn face_edge(cage: &Cage, f: usize, i: usize) -> usize {
    let face = &cage.faces()[f];
    let (a, b) = (face[i], face[(i + 1) % face.len()]);
    let key = if a < b { [a, b] } else { [b, a] };
    cage.edges()
        .binary_search(&key)
        .expect("invariant: face sides are edges")
}

/// Whether the low → high direction of edge e runs along face f's traversal.
fn edge_along_face(cage: &Cage, f: usize, e: usize) -> bool {
    let face = &cage.faces()[f];
    let [lo, hi] = cage.edges()[e];
    (0..face.len()).any(|i| face[i] == lo && face[(i + 1) % face.len()] == hi)
}

/// Number of edges of face f, other than `skip`, directed along the face's traversal.
fn count_along(cage: &Cage, f: usize, forward: &[bool], skip: usize) -> usize {
    let face = &cage.faces()[f];
    (0..face.len())
        .filter(|&i| {
            let e = face_edge(cage, f, i);
            e != skip && forward[e] == (face[i] < face[(i + 1) % face.len()])
        })
        .count()
}

/// The number of Kekulé structures (perfect matchings) of the cage, exactly.
pub fn kekule_count(cage: &Cage) -> BigUint {
    abs_pfaffian(&kasteleyn_matrix(cage, None), &primes_for(cage.atoms()))
}

/// The count computed with the given primes (each an odd prime below 2^62, distinct), whose
/// product must exceed twice the true count; exposed so tests can vary the prime set, down to
/// primes so small that pivots vanish modulo them.
///
/// # Panics
/// If a modulus is not an odd prime below 2^62 (checked by Miller–Rabin, [`is_prime_u64`]).
pub fn kekule_count_with_primes(cage: &Cage, primes: &[u64]) -> BigUint {
    for &p in primes {
        assert!(
            p % 2 == 1 && p < 1 << 62 && is_prime_u64(p),
            "{p} is not an odd prime below 2^62"
        );
    }
    abs_pfaffian(&kasteleyn_matrix(cage, None), primes)
}

/// The number of Kekulé structures in which `edge` is a double bond, exactly: |Pf| of the
/// Kasteleyn matrix without the edge's two atoms (the numerator of its Pauling bond order).
pub fn kekule_count_containing(cage: &Cage, edge: EdgeId) -> BigUint {
    let [u, v] = cage.edges()[edge.index()];
    abs_pfaffian(
        &kasteleyn_matrix(cage, Some([u, v])),
        &primes_for(cage.atoms()),
    )
}

/// |Pf| of a skew matrix from its residues modulo `primes` (whose product must exceed twice it).
fn abs_pfaffian(matrix: &SkewMatrix, primes: &[u64]) -> BigUint {
    let mut workspace = Workspace::default();
    let residues: Vec<u64> = primes
        .iter()
        .map(|&p| pfaffian_mod(matrix, p, &mut workspace))
        .collect();
    abs_from_residues(&residues, primes)
}

/// Rigorous upper bound on the number of perfect matchings of a graph with n vertices of degree
/// 3: 6^(n/6) (Kahn–Lovász theorem, proved in Alon & Friedland, Electron. J. Combin. 15 (2008)
/// N13: pm(G) <= prod_v (d_v!)^(1/(2 d_v))). Rounded up to 6^ceil(n/6) to stay in integers.
pub fn matching_bound(atoms: usize) -> BigUint {
    BigUint::from(6u32).pow(atoms.div_ceil(6) as u32)
}

/// Enough of the largest primes below 2^62 that their product exceeds 2 * [`matching_bound`] + 1,
/// so the signed Pfaffian is recovered from its residues (one prime up to 138 atoms, four for
/// C540). Primes this wide halve the number of eliminations against 31-bit ones, and
/// Montgomery multiplication keeps each step as cheap.
pub fn primes_for(atoms: usize) -> Vec<u64> {
    let need = matching_bound(atoms) * 2u32 + 1u32;
    // Each prime exceeds 2^61, so ceil(bits / 61) of them always suffice.
    let primes = primes_below_2_62(need.bits().div_ceil(61) as usize);
    let mut product = BigUint::one();
    let mut used = 0;
    while product <= need {
        product *= primes[used];
        used += 1;
    }
    primes[..used].to_vec()
}

/// Deterministic primality for n < 2^32 (kept for callers of the former 31-bit prime API; the
/// test is [`is_prime_u64`]'s).
pub fn is_prime_u32(n: u64) -> bool {
    is_prime_u64(n)
}

/// The Kasteleyn matrix (entries ±1 on the bonds), optionally without the two atoms of one bond
/// and with the remaining atoms renumbered in order: the minor whose Pfaffian counts the Kekulé
/// structures through that bond.
fn kasteleyn_matrix(cage: &Cage, without: Option<[u32; 2]>) -> SkewMatrix {
    let forward = kasteleyn_orientation(cage);
    let n = cage.atoms();
    let index: Vec<Option<u32>> = match without {
        None => (0..n as u32).map(Some).collect(),
        Some(gone) => {
            let mut next = 0;
            (0..n as u32)
                .map(|v| {
                    (!gone.contains(&v)).then(|| {
                        next += 1;
                        next - 1
                    })
                })
                .collect()
        }
    };
    let entries = cage
        .edges()
        .iter()
        .zip(&forward)
        .filter_map(|(&[u, v], &f)| {
            let (a, b) = (index[u as usize]?, index[v as usize]?);
            Some((a, b, if f { 1 } else { -1 }))
        })
        .collect();
    SkewMatrix {
        n: n - 2 * usize::from(without.is_some()),
        entries,
    }
}

/// One Kekulé structure: the edges carrying double bonds in a maximum matching found by
/// petgraph's general-graph matching (Gabow's form of Edmonds' algorithm), sorted; `None` if the
/// cage has no perfect matching (never for a fullerene: Petersen's theorem covers every
/// bridgeless cubic graph). Deterministic for a given cage.
pub fn kekule_structure(cage: &Cage) -> Option<Vec<EdgeId>> {
    let graph =
        petgraph::graph::UnGraph::<(), ()>::from_edges(cage.edges().iter().map(|&[u, v]| (u, v)));
    let matching = petgraph::algo::maximum_matching(&graph);
    if !matching.is_perfect() {
        return None;
    }
    let mut edges: Vec<EdgeId> = matching
        .edges()
        .map(|(a, b)| {
            let (u, v) = (a.index() as u32, b.index() as u32);
            cage.edge_index(crate::cage::VertexId(u), crate::cage::VertexId(v))
                .expect("invariant: matched pairs are bonds")
        })
        .collect();
    edges.sort_unstable();
    Some(edges)
}
