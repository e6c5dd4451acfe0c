//! Exact pattern counts by orbit counting, far beyond what can be listed.
//!
//! Burnside's lemma: the number of orbits is the average over the group of the number of
//! patterns each element fixes (Pólya's theorem applied to fullerene derivatives by
//! Balasubramanian, J. Phys. Chem. 97 (1993) 6990). A set of atoms is fixed by g exactly when it
//! is a union of cycles of g, so g fixes the coefficient of x^k in the product over its cycles of
//! (1 + x^length) k-sets. For bridges the union must also share no atom: the cycles of g on
//! bonds that are themselves atom-disjoint are the candidates, two candidates conflict when they
//! share an atom, and the fixed bridge patterns are the independent families of candidates of
//! total size k, counted by the branching recursion I(R) = I(R - v) + x^|v| I(R - N[v]) with
//! memoisation on the remaining set (for the identity this is the matching polynomial). All
//! arithmetic is in big integers, truncated at degree k. The group and the allowed sites come
//! from [`super::orbits::Search`]; listing patterns is left to it.

use super::orbits::Search;
use num_bigint::BigUint;
use num_traits::{One, Zero};
use std::collections::HashMap;

/// The number of patterns of `search`, exactly.
pub fn count(search: &Search) -> BigUint {
    let group = &search.group;
    let total: BigUint = group
        .perms
        .iter()
        .map(|perm| fixed(search, perm))
        .fold(BigUint::zero(), |a, b| a + b);
    total / BigUint::from(group.order())
}

/// The number of patterns of size k fixed by one permutation of the sites.
fn fixed(search: &Search, perm: &[u32]) -> BigUint {
    let cycles = allowed_cycles(search, perm);
    let k = search.k;
    match search.ends() {
        None => {
            let mut poly = vec![BigUint::zero(); k + 1];
            poly[0] = BigUint::one();
            for c in &cycles {
                multiply_binomial(&mut poly, c.len());
            }
            poly.swap_remove(k)
        }
        Some(ends) => {
            let candidates: Vec<Candidate> = cycles
                .iter()
                .filter_map(|c| Candidate::new(c, ends))
                .collect();
            Families::new(&candidates, k).count()
        }
    }
}

/// The cycles of `perm` on the allowed sites (the allowed set is invariant under the group).
fn allowed_cycles(search: &Search, perm: &[u32]) -> Vec<Vec<u32>> {
    let mut seen = vec![false; perm.len()];
    let mut cycles = Vec::new();
    for start in 0..perm.len() {
        if seen[start] || !search.is_allowed(start as u32) {
            continue;
        }
        let mut cycle = Vec::new();
        let mut s = start;
        while !seen[s] {
            seen[s] = true;
            cycle.push(s as u32);
            s = perm[s] as usize;
        }
        cycles.push(cycle);
    }
    cycles
}

/// poly *= (1 + x^len), truncated at its current degree.
fn multiply_binomial(poly: &mut [BigUint], len: usize) {
    for d in (len..poly.len()).rev() {
        let (low, high) = poly.split_at_mut(d);
        high[0] += &low[d - len];
    }
}

/// A cycle of bonds that could be part of a fixed bridge pattern: its size and its atoms.
struct Candidate {
    size: usize,
    atoms: Vec<u32>,
}

impl Candidate {
    /// `None` if two bonds of the cycle share an atom.
    fn new(cycle: &[u32], ends: &[[u32; 2]]) -> Option<Candidate> {
        let mut atoms: Vec<u32> = cycle.iter().flat_map(|&e| ends[e as usize]).collect();
        atoms.sort_unstable();
        let before = atoms.len();
        atoms.dedup();
        (atoms.len() == before).then_some(Candidate {
            size: cycle.len(),
            atoms,
        })
    }
}

/// Independent families of candidates counted by total size, with memoisation.
struct Families {
    k: usize,
    sizes: Vec<usize>,
    /// Bitset of the candidates conflicting with each one (itself included).
    closed: Vec<Vec<u64>>,
    memo: HashMap<Vec<u64>, Vec<BigUint>>,
}

impl Families {
    fn new(candidates: &[Candidate], k: usize) -> Families {
        let n = candidates.len();
        let words = n.div_ceil(64).max(1);
        let mut by_atom: HashMap<u32, Vec<usize>> = HashMap::new();
        for (i, c) in candidates.iter().enumerate() {
            for &a in &c.atoms {
                by_atom.entry(a).or_default().push(i);
            }
        }
        let mut closed = vec![vec![0u64; words]; n];
        for (i, c) in candidates.iter().enumerate() {
            for a in &c.atoms {
                for &j in &by_atom[a] {
                    closed[i][j / 64] |= 1 << (j % 64);
                }
            }
        }
        Families {
            k,
            sizes: candidates.iter().map(|c| c.size).collect(),
            closed,
            memo: HashMap::new(),
        }
    }

    fn count(mut self) -> BigUint {
        let n = self.sizes.len();
        let mut all = vec![0u64; n.div_ceil(64).max(1)];
        for i in 0..n {
            all[i / 64] |= 1 << (i % 64);
        }
        let poly = self.polynomial(all);
        poly.into_iter().nth(self.k).unwrap_or_default()
    }

    /// The family polynomial of the remaining candidates, truncated at degree k.
    fn polynomial(&mut self, remaining: Vec<u64>) -> Vec<BigUint> {
        let Some(v) = first_set(&remaining) else {
            let mut one = vec![BigUint::zero(); self.k + 1];
            one[0] = BigUint::one();
            return one;
        };
        if let Some(p) = self.memo.get(&remaining) {
            return p.clone();
        }
        let mut without = remaining.clone();
        without[v / 64] &= !(1 << (v % 64));
        let mut result = self.polynomial(without);
        let size = self.sizes[v];
        if size <= self.k {
            let taken: Vec<u64> = remaining
                .iter()
                .zip(&self.closed[v])
                .map(|(r, c)| r & !c)
                .collect();
            let with = self.polynomial(taken);
            for d in size..=self.k {
                result[d] += &with[d - size];
            }
        }
        self.memo.insert(remaining, result.clone());
        result
    }
}

fn first_set(bits: &[u64]) -> Option<usize> {
    bits.iter()
        .enumerate()
        .find(|(_, w)| **w != 0)
        .map(|(i, w)| 64 * i + w.trailing_zeros() as usize)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn binomial_product_counts_subsets() {
        // (1 + x)^5 truncated at x^3: C(5, 3) = 10.
        let mut poly = vec![BigUint::zero(); 4];
        poly[0] = BigUint::one();
        for _ in 0..5 {
            multiply_binomial(&mut poly, 1);
        }
        assert_eq!(poly[3], BigUint::from(10u32));
    }
}
