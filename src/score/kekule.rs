//! Exact Kekulé structure counts (perfect matchings) of a cage, and one Kekulé structure.
//!
//! A plane graph has a Pfaffian orientation: orient the edges so that every bounded face has an
//! odd number of edges directed clockwise (Kasteleyn, in *Graph Theory and Theoretical Physics*,
//! 1967). The skew-symmetric signed adjacency matrix K of such an orientation has |Pf(K)| equal to
//! the number of perfect matchings. We compute Pf(K) exactly by sparse elimination modulo primes
//! just below 2^62 and the Chinese remainder theorem, never in floating point (the elimination
//! is in [`super::pfaffian`]); the number of primes comes from the Kahn–Lovász bound, so the
//! count is exact at any size. This module leaves bond orders (which reuse the orientation) to
//! [`super::bonds`].

pub use super::pfaffian::is_prime_u64;
use super::pfaffian::{abs_from_residues, pfaffian_mod, primes_below_2_62, SkewMatrix, Workspace};
use crate::cage::{Cage, EdgeId};
use num_bigint::BigUint;
use num_traits::One;
use std::cell::RefCell;
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
    let sides = FaceSides::new(cage);
    let (order, parent_edge) = dual_tree(cage, &sides);
    let mut forward = vec![true; cage.edges().len()];
    for &f in order.iter().rev() {
        let Some(parent) = parent_edge[f] else {
            continue;
        };
        let face = &cage.faces()[f];
        let (mut along, mut parent_forward_is_along) = (0, false);
        for (i, &e) in sides.of(f).iter().enumerate() {
            let low_to_high = face[i] < face[(i + 1) % face.len()];
            if e as usize == parent {
                parent_forward_is_along = low_to_high;
            } else if forward[e as usize] == low_to_high {
                along += 1;
            }
        }
        // The parent edge must make the total odd.
        forward[parent] = parent_forward_is_along == (along % 2 == 0);
    }
    forward
}

/// The edge index of every side of every face: side i of face f runs from faces[f][i] to
/// faces[f][i+1]. Built from the rotation system in O(edges), where a binary search per side
/// cost a tenth of a C100 count.
struct FaceSides {
    offset: Vec<usize>,
    edge: Vec<u32>,
}

impl FaceSides {
    fn new(cage: &Cage) -> FaceSides {
        let rotation = cage.rotation();
        let slot = |a: u32, b: u32| {
            let k = rotation[a as usize]
                .iter()
                .position(|&x| x == b)
                .expect("invariant: edges and face sides join rotation neighbours");
            3 * a as usize + k
        };
        // dart_edge[3v + k]: the edge from v to its k-th neighbour.
        let mut dart_edge = vec![0u32; 3 * cage.atoms()];
        for (e, &[u, v]) in cage.edges().iter().enumerate() {
            dart_edge[slot(u, v)] = e as u32;
            dart_edge[slot(v, u)] = e as u32;
        }
        let mut offset = Vec::with_capacity(cage.face_count() + 1);
        let mut edge = Vec::with_capacity(2 * cage.edges().len());
        offset.push(0);
        for face in cage.faces() {
            for (i, &a) in face.iter().enumerate() {
                edge.push(dart_edge[slot(a, face[(i + 1) % face.len()])]);
            }
            offset.push(edge.len());
        }
        FaceSides { offset, edge }
    }

    fn of(&self, f: usize) -> &[u32] {
        &self.edge[self.offset[f]..self.offset[f + 1]]
    }
}

/// BFS over the dual from face 0: visiting order and, for each face, the edge to its parent.
fn dual_tree(cage: &Cage, sides: &FaceSides) -> (Vec<usize>, Vec<Option<usize>>) {
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
                parent_edge[g] = Some(sides.of(f)[i] as usize);
                queue.push_back(g);
            }
        }
    }
    (order, parent_edge)
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
/// If a modulus is not an odd prime below 2^62 (checked by Miller–Rabin, [`is_prime_u64`]) or
/// appears twice.
pub fn kekule_count_with_primes(cage: &Cage, primes: &[u64]) -> BigUint {
    for (k, &p) in primes.iter().enumerate() {
        assert!(
            p % 2 == 1 && p < 1 << 62 && is_prime_u64(p),
            "{p} is not an odd prime below 2^62"
        );
        assert!(!primes[..k].contains(&p), "the prime {p} appears twice");
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

/// Largest matrix whose elimination buffers a thread keeps for the next call (a few hundred
/// kilobytes); bigger ones are rare and give theirs back.
const KEEP_WORKSPACE_UP_TO: usize = 4096;

/// |Pf| of a skew matrix from its residues modulo `primes` (whose product must exceed twice it).
fn abs_pfaffian(matrix: &SkewMatrix, primes: &[u64]) -> BigUint {
    thread_local! {
        // One per thread, kept between calls: a C100 count would otherwise spend a fifth of its
        // time allocating rows. Results never depend on what the buffers held before.
        static WORKSPACE: RefCell<Workspace> = RefCell::new(Workspace::default());
    }
    let residues: Vec<u64> = WORKSPACE.with(|cell| {
        let mut fresh = Workspace::default();
        let mut borrowed = cell.try_borrow_mut();
        let workspace = match borrowed.as_deref_mut() {
            Ok(ws) => ws,
            Err(_) => &mut fresh,
        };
        let residues = primes
            .iter()
            .map(|&p| pfaffian_mod(matrix, p, workspace))
            .collect();
        if matrix.n > KEEP_WORKSPACE_UP_TO {
            *workspace = Workspace::default();
        }
        residues
    });
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

/// Deterministic primality test, kept from the former 31-bit prime API; it is now
/// [`is_prime_u64`], exact for every 64-bit n.
pub fn is_prime_u32(n: u64) -> bool {
    is_prime_u64(n)
}

/// The Kasteleyn matrix (entries ±1 on the bonds), optionally without the two atoms of one bond
/// and with the remaining atoms renumbered in order: the minor whose Pfaffian counts the Kekulé
/// structures through that bond.
pub(crate) fn kasteleyn_matrix(cage: &Cage, without: Option<[u32; 2]>) -> SkewMatrix {
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
