//! Exact Kekulé structure counts (perfect matchings) of a cage, and one Kekulé structure.
//!
//! A plane graph has a Pfaffian orientation: orient the edges so that every bounded face has an
//! odd number of edges directed clockwise (Kasteleyn, in *Graph Theory and Theoretical Physics*,
//! 1967). The skew-symmetric signed adjacency matrix K of such an orientation has |Pf(K)| equal to
//! the number of perfect matchings. We compute Pf(K) exactly by elimination modulo several 31-bit
//! primes and the Chinese remainder theorem, never in floating point; the number of primes comes
//! from the Kahn–Lovász bound, so the count is exact at any size. This module leaves bond orders
//! (which reuse the orientation) to [`super::bonds`].

use crate::cage::{Cage, EdgeId};
use num_bigint::BigUint;
use num_traits::{One, Zero};
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
    let primes = primes_for(cage.atoms());
    kekule_count_with_primes(cage, &primes)
}

/// The count computed with the given primes (each an odd prime below 2^31, distinct), whose
/// product must exceed twice the true count; exposed so tests can vary the prime set.
pub fn kekule_count_with_primes(cage: &Cage, primes: &[u64]) -> BigUint {
    abs_pfaffian(&kasteleyn_matrix(cage), cage.atoms(), primes)
}

/// The number of Kekulé structures in which `edge` is a double bond, exactly: |Pf| of the
/// Kasteleyn matrix without the edge's two atoms (the numerator of its Pauling bond order).
pub fn kekule_count_containing(cage: &Cage, edge: EdgeId) -> BigUint {
    let n = cage.atoms();
    let [u, v] = cage.edges()[edge.index()].map(|x| x as usize);
    let full = kasteleyn_matrix(cage);
    let keep: Vec<usize> = (0..n).filter(|&i| i != u && i != v).collect();
    let minor: Vec<i8> = keep
        .iter()
        .flat_map(|&i| keep.iter().map(move |&j| (i, j)))
        .map(|(i, j)| full[i * n + j])
        .collect();
    abs_pfaffian(&minor, n - 2, &primes_for(n))
}

/// |Pf| of a dense skew matrix of -1/0/+1 entries, from its residues modulo `primes`.
fn abs_pfaffian(matrix: &[i8], n: usize, primes: &[u64]) -> BigUint {
    let residues: Vec<u64> = primes.iter().map(|&p| pfaffian_mod(matrix, n, p)).collect();
    symmetric_crt(&residues, primes)
}

/// Rigorous upper bound on the number of perfect matchings of a graph with n vertices of degree
/// 3: 6^(n/6) (Kahn–Lovász theorem, proved in Alon & Friedland, Electron. J. Combin. 15 (2008)
/// N13: pm(G) <= prod_v (d_v!)^(1/(2 d_v))). Rounded up to 6^ceil(n/6) to stay in integers.
pub fn matching_bound(atoms: usize) -> BigUint {
    BigUint::from(6u32).pow(atoms.div_ceil(6) as u32)
}

/// Enough of the largest primes below 2^31 that their product exceeds 2 * [`matching_bound`] + 1,
/// so the signed Pfaffian is recovered from its residues.
pub fn primes_for(atoms: usize) -> Vec<u64> {
    let need = matching_bound(atoms) * 2u32 + 1u32;
    let mut product = BigUint::one();
    let mut primes = Vec::new();
    let mut candidate = (1u64 << 31) - 1;
    while product <= need {
        if is_prime_u32(candidate) {
            primes.push(candidate);
            product *= candidate;
        }
        candidate -= 2;
    }
    primes
}

/// Deterministic Miller–Rabin for n < 3,215,031,751 with bases 2, 3, 5, 7 (Jaeschke, Math.
/// Comp. 61 (1993) 915).
pub fn is_prime_u32(n: u64) -> bool {
    if n < 2 {
        return false;
    }
    for p in [2u64, 3, 5, 7] {
        if n % p == 0 {
            return n == p;
        }
    }
    let (mut d, mut s) = (n - 1, 0);
    while d % 2 == 0 {
        d /= 2;
        s += 1;
    }
    [2u64, 3, 5, 7].iter().all(|&a| {
        let mut x = pow_mod(a, d, n);
        if x == 1 || x == n - 1 {
            return true;
        }
        for _ in 1..s {
            x = x * x % n;
            if x == n - 1 {
                return true;
            }
        }
        false
    })
}

fn pow_mod(mut b: u64, mut e: u64, m: u64) -> u64 {
    let mut r = 1 % m;
    b %= m;
    while e > 0 {
        if e & 1 == 1 {
            r = r * b % m;
        }
        b = b * b % m;
        e >>= 1;
    }
    r
}

/// The Kasteleyn matrix as a dense row-major n x n array of -1/0/+1.
fn kasteleyn_matrix(cage: &Cage) -> Vec<i8> {
    let n = cage.atoms();
    let mut k = vec![0i8; n * n];
    let forward = kasteleyn_orientation(cage);
    for (e, &[u, v]) in cage.edges().iter().enumerate() {
        let s = if forward[e] { 1 } else { -1 };
        k[u as usize * n + v as usize] = s;
        k[v as usize * n + u as usize] = -s;
    }
    k
}

/// Barrett reduction for a fixed modulus p < 2^31: reduces x < 2^62 without a division.
#[derive(Clone, Copy)]
struct Modulus {
    p: u64,
    m: u128,
}

impl Modulus {
    fn new(p: u64) -> Modulus {
        Modulus {
            p,
            m: (1u128 << 64) / p as u128,
        }
    }

    #[inline(always)]
    fn reduce(self, x: u64) -> u64 {
        let q = ((x as u128 * self.m) >> 64) as u64;
        let r = x - q * self.p;
        if r >= self.p {
            r - self.p
        } else {
            r
        }
    }

    fn inverse(self, a: u64) -> u64 {
        pow_mod(a, self.p - 2, self.p)
    }
}

/// Pf(K) mod p by skew-symmetric elimination: pivot on entry (k, k+1) (swapping a column in if
/// needed, which flips the sign), then clear row k by the congruence col_i -= t_i col_(k+1),
/// row_i -= t_i row_(k+1), which keeps skew-symmetry and the Pfaffian; Pf = prod of pivots.
/// Only the upper triangle is kept up to date.
fn pfaffian_mod(base: &[i8], n: usize, p: u64) -> u64 {
    let md = Modulus::new(p);
    let mut a: Vec<u64> = base
        .iter()
        .map(|&x| if x < 0 { p - 1 } else { x as u64 })
        .collect();
    let mut pf = 1u64;
    let mut k = 0;
    while k + 1 < n {
        let Some(j) = (k + 1..n).find(|&j| a[k * n + j] != 0) else {
            return 0;
        };
        if j != k + 1 {
            swap_index(&mut a, n, k + 1, j, p);
            pf = p - pf;
        }
        let pivot = a[k * n + k + 1];
        pf = md.reduce(pf * pivot);
        let inv = md.inverse(pivot);
        eliminate(&mut a, n, k, inv, md);
        k += 2;
    }
    pf % p
}

/// Swaps rows and columns r and s of the skew matrix, of which only the upper triangle is
/// stored up to date (entries below the diagonal are read as the negated mirror entry).
fn swap_index(a: &mut [u64], n: usize, r: usize, s: usize, p: u64) {
    let get = |a: &[u64], x: usize, y: usize| match x.cmp(&y) {
        std::cmp::Ordering::Less => a[x * n + y],
        std::cmp::Ordering::Greater => (p - a[y * n + x]) % p,
        std::cmp::Ordering::Equal => 0,
    };
    let old_r: Vec<u64> = (0..n).map(|m| get(a, r, m)).collect();
    let old_s: Vec<u64> = (0..n).map(|m| get(a, s, m)).collect();
    let mut set = |x: usize, y: usize, v: u64| {
        if x < y {
            a[x * n + y] = v;
        } else if x > y {
            a[y * n + x] = (p - v) % p;
        }
    };
    for m in (0..n).filter(|&m| m != r && m != s) {
        set(r, m, old_s[m]);
        set(s, m, old_r[m]);
    }
    set(r, s, old_s[r]);
}

/// One elimination step at pivot (k, k+1): for i > k+1 with t_i = a[k][i] / a[k][k+1] != 0,
/// a[i][j] += -t_i a[k+1][j] + t_j a[k+1][i] for k+1 < i < j (upper triangle only).
fn eliminate(a: &mut [u64], n: usize, k: usize, inv: u64, md: Modulus) {
    let p = md.p;
    let k1 = k + 1;
    let t: Vec<u64> = (k1 + 1..n).map(|i| md.reduce(a[k * n + i] * inv)).collect();
    let row1: Vec<u64> = a[k1 * n..(k1 + 1) * n].to_vec();
    for i in k1 + 1..n {
        let ti = t[i - k1 - 1];
        let ri = row1[i];
        if ti == 0 && ri == 0 {
            continue;
        }
        let (neg_ti, row) = (p - ti, &mut a[i * n..(i + 1) * n]);
        for j in i + 1..n {
            let tj = t[j - k1 - 1];
            // a[i][j] - t_i a[k+1][j] + t_j a[k+1][i], with a[k+1][i] = row1[i].
            let x = md.reduce(neg_ti * row1[j] + tj * ri);
            let y = row[j] + x;
            row[j] = if y >= p { y - p } else { y };
        }
    }
}

/// Recovers the signed value from residues (|value| < product / 2) and returns its absolute
/// value, by Garner's mixed-radix method.
fn symmetric_crt(residues: &[u64], primes: &[u64]) -> BigUint {
    let mut value = BigUint::zero();
    let mut modulus = BigUint::one();
    for (&r, &p) in residues.iter().zip(primes) {
        let current = (&value % p).to_u64_digits().first().copied().unwrap_or(0);
        let m_mod_p = (&modulus % p).to_u64_digits().first().copied().unwrap_or(0);
        let diff = (r + p - current) % p;
        let t = diff * pow_mod(m_mod_p, p - 2, p) % p;
        value += &modulus * t;
        modulus *= p;
    }
    let half = &modulus >> 1;
    if value > half {
        modulus - value
    } else {
        value
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
