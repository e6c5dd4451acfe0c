//! Kekulé structures of the pi system left when some atoms leave it (they carry addends, or are
//! heteroatoms holding their own pi electrons): an exact count, and one structure.
//!
//! The remaining graph is a subgraph of a plane graph, hence planar, but no longer cubic and
//! possibly disconnected, with faces whose boundary walks may pass a bridge twice. Kasteleyn's
//! construction still applies component by component: trace the faces of each component from
//! the cage's rotation system restricted to the remaining atoms, orient a spanning tree at will,
//! then fix the other edges from the leaves of the dual spanning tree up so that every face but
//! one has an odd number of edges directed along its walk. For a cycle C of a connected plane
//! graph, summing over the faces inside C and using Euler's formula gives "edges along C ≡ 1 +
//! atoms inside C (mod 2)"; a cycle in the symmetric difference of two perfect matchings has an
//! even number of atoms inside, so it is oddly oriented and the orientation is Pfaffian
//! (Kasteleyn 1967; the same argument as [`crate::score::kekule`], which handles whole cages).
//! The count is |Pf| of the signed adjacency matrix, computed modulo primes below 2^31 and
//! rebuilt by the Chinese remainder theorem, with enough primes for the Kahn–Lovász bound
//! ([`crate::score::kekule::matching_bound`], which holds for maximum degree 3). The elimination
//! is dense here (remaining graphs of a derivative run are small and many); the sparse engine of
//! `score` stays private to it.

use crate::cage::Cage;
use crate::score::kekule::{is_prime_u64, matching_bound};
use num_bigint::BigUint;
use num_traits::{One, Zero};
use std::collections::VecDeque;
use std::sync::OnceLock;

/// The number of Kekulé structures (perfect matchings) of the cage without the atoms marked in
/// `removed`, exactly. Zero when the remaining pi system has no Kekulé structure.
pub fn count(cage: &Cage, removed: &[bool]) -> BigUint {
    let sub = Subgraph::new(cage, removed);
    if sub.size() % 2 == 1 || sub.has_odd_component() {
        return BigUint::zero();
    }
    if sub.size() == 0 {
        return BigUint::one();
    }
    let forward = sub.pfaffian_orientation();
    let primes = primes_for(sub.size());
    let residues: Vec<u64> = primes
        .iter()
        .map(|&p| sub.pfaffian_mod(&forward, p))
        .collect();
    abs_from_residues(&residues, &primes)
}

/// One Kekulé structure of the remaining graph as bonds `[u, v]` (cage atom indices, u < v), or
/// `None` if it has none; found with petgraph's maximum matching, deterministic for a cage.
pub fn structure(cage: &Cage, removed: &[bool]) -> Option<Vec<[u32; 2]>> {
    let (pairs, unmatched) = maximum_matching(cage, removed);
    unmatched.is_empty().then_some(pairs)
}

/// A maximum matching of the remaining graph: matched bonds (sorted) and unmatched atoms.
pub fn maximum_matching(cage: &Cage, removed: &[bool]) -> (Vec<[u32; 2]>, Vec<u32>) {
    let kept: Vec<[u32; 2]> = cage
        .edges()
        .iter()
        .copied()
        .filter(|&[u, v]| !removed[u as usize] && !removed[v as usize])
        .collect();
    let mut graph = petgraph::graph::UnGraph::<(), ()>::with_capacity(cage.atoms(), kept.len());
    for _ in 0..cage.atoms() {
        graph.add_node(());
    }
    for &[u, v] in &kept {
        graph.add_edge(u.into(), v.into(), ());
    }
    let matching = petgraph::algo::maximum_matching(&graph);
    let mut pairs: Vec<[u32; 2]> = matching
        .edges()
        .map(|(a, b)| {
            let (a, b) = (a.index() as u32, b.index() as u32);
            [a.min(b), a.max(b)]
        })
        .collect();
    pairs.sort_unstable();
    let unmatched = (0..cage.atoms() as u32)
        .filter(|&v| !removed[v as usize] && !matching.contains_node(v.into()))
        .collect();
    (pairs, unmatched)
}

/// The remaining graph: kept atoms renumbered 0..m in order, with the restricted rotation.
struct Subgraph {
    /// Cage index of each kept atom.
    atoms: Vec<u32>,
    /// Neighbours of each kept atom (new indices) in the cage's rotation order.
    rotation: Vec<Vec<u32>>,
    /// Edges (new indices, low < high).
    edges: Vec<[u32; 2]>,
    /// Component of each kept atom.
    component: Vec<u32>,
}

impl Subgraph {
    fn new(cage: &Cage, removed: &[bool]) -> Subgraph {
        let mut index = vec![u32::MAX; cage.atoms()];
        let atoms: Vec<u32> = (0..cage.atoms() as u32)
            .filter(|&v| !removed[v as usize])
            .collect();
        for (i, &v) in atoms.iter().enumerate() {
            index[v as usize] = i as u32;
        }
        let rotation: Vec<Vec<u32>> = atoms
            .iter()
            .map(|&v| {
                cage.rotation()[v as usize]
                    .iter()
                    .filter(|&&u| !removed[u as usize])
                    .map(|&u| index[u as usize])
                    .collect()
            })
            .collect();
        let mut edges: Vec<[u32; 2]> = rotation
            .iter()
            .enumerate()
            .flat_map(|(v, nb)| nb.iter().map(move |&u| [v as u32, u]))
            .filter(|[v, u]| v < u)
            .collect();
        edges.sort_unstable();
        let component = components(&rotation);
        Subgraph {
            atoms,
            rotation,
            edges,
            component,
        }
    }

    fn size(&self) -> usize {
        self.atoms.len()
    }

    fn has_odd_component(&self) -> bool {
        let mut sizes = vec![0usize; self.size()];
        for &c in &self.component {
            sizes[c as usize] += 1;
        }
        sizes.iter().any(|&s| s % 2 == 1)
    }

    fn edge_of(&self, a: u32, b: u32) -> usize {
        let key = [a.min(b), a.max(b)];
        self.edges
            .binary_search(&key)
            .expect("invariant: face darts are edges")
    }

    /// Faces as dart walks `(from, to)`, traced with the restricted rotation: the face left of
    /// u→v continues with v→w, w following u in v's rotation (as in [`Cage::from_rotation`]).
    fn faces(&self) -> Vec<Vec<(u32, u32)>> {
        let mut used: Vec<Vec<bool>> = self.rotation.iter().map(|r| vec![false; r.len()]).collect();
        let mut faces = Vec::new();
        for start in 0..self.size() {
            for slot in 0..self.rotation[start].len() {
                if used[start][slot] {
                    continue;
                }
                let mut walk = Vec::new();
                let (mut u, mut s) = (start, slot);
                while !used[u][s] {
                    used[u][s] = true;
                    let v = self.rotation[u][s] as usize;
                    walk.push((u as u32, v as u32));
                    let back = self.rotation[v]
                        .iter()
                        .position(|&x| x as usize == u)
                        .expect("invariant: adjacency is symmetric");
                    s = (back + 1) % self.rotation[v].len();
                    u = v;
                }
                faces.push(walk);
            }
        }
        faces
    }

    /// Edge orientation (`true`: low → high) with every face but one root face per component
    /// oddly oriented along its walk.
    fn pfaffian_orientation(&self) -> Vec<bool> {
        let faces = self.faces();
        let mut forward = vec![true; self.edges.len()];
        let tree = self.spanning_tree();
        // The face on each side of every non-tree edge, found through its two darts.
        let mut dart_face: std::collections::HashMap<(u32, u32), usize> =
            std::collections::HashMap::new();
        for (f, walk) in faces.iter().enumerate() {
            for &d in walk {
                dart_face.insert(d, f);
            }
        }
        let face_component: Vec<u32> = faces
            .iter()
            .map(|w| self.component[w[0].0 as usize])
            .collect();
        let mut seen = vec![false; faces.len()];
        let mut parent_edge: Vec<Option<usize>> = vec![None; faces.len()];
        let mut order = Vec::with_capacity(faces.len());
        let mut root_of_component = vec![false; self.size()];
        for root in 0..faces.len() {
            let c = face_component[root] as usize;
            if root_of_component[c] {
                continue;
            }
            root_of_component[c] = true;
            seen[root] = true;
            let mut queue = VecDeque::from([root]);
            while let Some(f) = queue.pop_front() {
                order.push(f);
                for &(a, b) in &faces[f] {
                    let e = self.edge_of(a, b);
                    if tree[e] {
                        continue;
                    }
                    let g = dart_face[&(b, a)];
                    if !seen[g] {
                        seen[g] = true;
                        parent_edge[g] = Some(e);
                        queue.push_back(g);
                    }
                }
            }
        }
        for &f in order.iter().rev() {
            let Some(parent) = parent_edge[f] else {
                continue;
            };
            let mut along = 0usize;
            let mut parent_low_to_high = false;
            for &(a, b) in &faces[f] {
                let e = self.edge_of(a, b);
                if e == parent {
                    parent_low_to_high = a < b;
                } else if forward[e] == (a < b) {
                    along += 1;
                }
            }
            forward[parent] = parent_low_to_high == (along % 2 == 0);
        }
        forward
    }

    /// A breadth-first spanning forest, as a flag per edge.
    fn spanning_tree(&self) -> Vec<bool> {
        let mut tree = vec![false; self.edges.len()];
        let mut seen = vec![false; self.size()];
        for root in 0..self.size() {
            if seen[root] {
                continue;
            }
            seen[root] = true;
            let mut queue = VecDeque::from([root as u32]);
            while let Some(v) = queue.pop_front() {
                for &u in &self.rotation[v as usize] {
                    if !seen[u as usize] {
                        seen[u as usize] = true;
                        tree[self.edge_of(u, v)] = true;
                        queue.push_back(u);
                    }
                }
            }
        }
        tree
    }

    /// Pf of the oriented signed adjacency matrix modulo p (an odd prime below 2^31), by
    /// eliminating 2 x 2 pivot blocks: Pf(A) = a_(i,i+1) Pf(Schur complement), with a sign flip
    /// for every exchange of rows and columns.
    fn pfaffian_mod(&self, forward: &[bool], p: u64) -> u64 {
        let m = self.size();
        let mut a = vec![vec![0u64; m]; m];
        for (e, &[u, v]) in self.edges.iter().enumerate() {
            let (x, y) = if forward[e] { (u, v) } else { (v, u) };
            a[x as usize][y as usize] = 1;
            a[y as usize][x as usize] = p - 1;
        }
        let mut pf = 1u64;
        let mut columns = Vec::with_capacity(m);
        let mut i = 0;
        while i + 1 < m {
            let Some(j) = (i + 1..m).find(|&j| a[i][j] != 0) else {
                return 0;
            };
            if j != i + 1 {
                a.swap(j, i + 1);
                for row in a.iter_mut() {
                    row.swap(j, i + 1);
                }
                pf = (p - pf) % p;
            }
            let pivot = a[i][i + 1];
            pf = pf * pivot % p;
            let inv = pow_mod(pivot, p - 2, p);
            let (head, tail) = a.split_at_mut(i + 2);
            let (ri, rj) = (&head[i], &head[i + 1]);
            // Only columns where a pivot row is nonzero change: the matrix stays sparse for
            // most of the elimination, and this skips its zeros.
            columns.clear();
            columns.extend((i + 2..m).filter(|&l| ri[l] != 0 || rj[l] != 0));
            for row in tail.iter_mut() {
                let (x, y) = (row[i], row[i + 1]);
                if x == 0 && y == 0 {
                    continue;
                }
                // A'[k][l] = A[k][l] - (A[k][i+1] A[i][l] - A[k][i] A[i+1][l]) / a.
                let (cy, cx) = (y * inv % p, (p - x) * inv % p);
                for &l in &columns {
                    let t = (cy * ri[l] + cx * rj[l]) % p;
                    row[l] = (row[l] + p - t) % p;
                }
            }
            i += 2;
        }
        pf
    }
}

fn components(rotation: &[Vec<u32>]) -> Vec<u32> {
    let mut component = vec![u32::MAX; rotation.len()];
    for root in 0..rotation.len() {
        if component[root] != u32::MAX {
            continue;
        }
        component[root] = root as u32;
        let mut queue = VecDeque::from([root]);
        while let Some(v) = queue.pop_front() {
            for &u in &rotation[v] {
                if component[u as usize] == u32::MAX {
                    component[u as usize] = root as u32;
                    queue.push_back(u as usize);
                }
            }
        }
    }
    component
}

fn pow_mod(mut base: u64, mut exp: u64, p: u64) -> u64 {
    let mut result = 1u64;
    base %= p;
    while exp > 0 {
        if exp & 1 == 1 {
            result = result * base % p;
        }
        base = base * base % p;
        exp >>= 1;
    }
    result
}

/// The largest primes below 2^31, descending (enough for a few thousand atoms).
fn primes_below_2_31() -> &'static [u64] {
    static PRIMES: OnceLock<Vec<u64>> = OnceLock::new();
    PRIMES.get_or_init(|| {
        ((1u64 << 30)..(1u64 << 31))
            .rev()
            .filter(|&q| q % 2 == 1 && is_prime_u64(q))
            .take(64)
            .collect()
    })
}

/// Enough primes that their product exceeds 2 x the matching bound + 1, so the signed Pfaffian
/// is recovered from its residues.
fn primes_for(atoms: usize) -> Vec<u64> {
    let need = matching_bound(atoms) * 2u32 + 1u32;
    let mut product = BigUint::one();
    let mut used = Vec::new();
    for &p in primes_below_2_31() {
        if product > need {
            break;
        }
        product *= p;
        used.push(p);
    }
    used
}

/// |x| for the integer x with the given residues, |x| < product / 2 (Garner's mixed radix).
fn abs_from_residues(residues: &[u64], primes: &[u64]) -> BigUint {
    let mut value = BigUint::zero();
    let mut modulus = BigUint::one();
    for (&r, &p) in residues.iter().zip(primes) {
        let current = (&value % p).to_u64_digits().first().copied().unwrap_or(0);
        let m_mod = (&modulus % p).to_u64_digits().first().copied().unwrap_or(0);
        let delta = (r + p - current) % p * pow_mod(m_mod, p - 2, p) % p;
        value += &modulus * delta;
        modulus *= p;
    }
    let half = &modulus >> 1;
    if value > half {
        modulus - value
    } else {
        value
    }
}
