//! Listing every pattern once: orderly generation of canonical site sets, streamed in canonical
//! order, in parallel, with bounded memory.
//!
//! Canonical form: a set of sites is canonical when its sorted list is the lexicographically
//! smallest among the sorted lists of its images under the group. For sets of one size that
//! order is "the set holding the smallest element of the symmetric difference comes first", and
//! under that order a canonical set minus its largest element is again canonical (if g maps the
//! prefix P below itself, the first difference lies below max P, so g maps P + {x} below
//! P + {x} for every x > max P). Depth-first search that adds sites in increasing order and
//! keeps only canonical sets therefore reaches every canonical set exactly once, through its
//! canonical prefixes (Read, Ann. Discrete Math. 2 (1978) 107, orderly generation; from
//! memory), and visits them in lexicographic order, which is the numbering order of pattern IDs.
//!
//! Parallelism: the canonical prefixes of a fixed depth are the work units, in lexicographic
//! order; a window of units runs on rayon's pool and its results are handed on unit by unit, so
//! the output order (and every pattern number) is the same for any thread count and memory is
//! bounded by one window. Bridges must not share atoms; that condition holds for subsets of a
//! valid set and is kept by automorphisms, so pruning with it keeps the search exhaustive.
//! Counting without listing is [`super::burnside`]'s job; scoring is [`super::score`]'s.

use super::group::{sites_of, SiteGroup};
use super::{DeriveError, Kind, Parent, Problem};
use rayon::prelude::*;
use std::ops::ControlFlow;

/// Units handed to the thread pool at once; their results are held until the window ends.
const WINDOW: usize = 256;

/// Smallest number of units worth splitting the search into.
const MIN_UNITS: usize = 64;

/// One listed pattern: its new sites (canonical, sorted, 0-based) and the elements of the
/// search group that fix it (indices into [`Search::group`]).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Found {
    pub sites: Vec<u32>,
    pub stabiliser: Vec<usize>,
}

/// A prepared search: which sites may be used, which may not be used together, and the group.
#[derive(Debug, Clone)]
pub struct Search {
    pub kind: Kind,
    pub k: usize,
    /// Sites of the earlier pattern (sequential addition), sorted; empty otherwise.
    pub base: Vec<u32>,
    /// The group acting: the parent's automorphisms that keep the allowed sites and the base.
    pub group: SiteGroup,
    allowed: Vec<bool>,
    /// End atoms of each site when sites are bonds (bridges may not share atoms).
    ends: Option<Vec<[u32; 2]>>,
    atoms: usize,
}

impl Search {
    /// Checks `problem` against the parent and prepares the search.
    pub fn new(parent: &Parent, problem: &Problem) -> Result<Search, DeriveError> {
        let cage = &parent.cage;
        let on_bonds = problem.kind.on_bonds();
        let sites = sites_of(cage, on_bonds);
        let what = if on_bonds { "bonds" } else { "atoms" };
        if let Some(&s) = problem
            .allowed
            .iter()
            .flatten()
            .chain(&problem.base)
            .find(|&&s| s as usize >= sites)
        {
            return Err(DeriveError::BadSite {
                text: format!("site {} is past the {sites} {what} of this cage", s + 1),
            });
        }
        let mut allowed = vec![problem.allowed.is_none(); sites];
        for &s in problem.allowed.iter().flatten() {
            allowed[s as usize] = true;
        }
        if let super::Kind::Bridge(filter) = problem.kind {
            for (e, faces) in cage.edge_faces().iter().enumerate() {
                let sizes = faces.map(|f| cage.faces()[f as usize].len());
                allowed[e] &= filter.accepts(sizes);
            }
        }
        let ends = on_bonds.then(|| cage.edges().to_vec());
        let mut base_atoms = vec![false; cage.atoms()];
        for &s in &problem.base {
            allowed[s as usize] = false;
            match &ends {
                Some(ends) => ends[s as usize]
                    .iter()
                    .for_each(|&a| base_atoms[a as usize] = true),
                None => base_atoms[s as usize] = true,
            }
        }
        if let Some(ends) = &ends {
            for (e, [u, v]) in ends.iter().enumerate() {
                allowed[e] &= !base_atoms[*u as usize] && !base_atoms[*v as usize];
            }
        }
        let mut available = allowed.iter().filter(|&&a| a).count();
        if on_bonds {
            // Bridges share no atom, so at most half the free atoms can carry them.
            let free_atoms = base_atoms.iter().filter(|&&b| !b).count();
            available = available.min(free_atoms / 2);
        }
        if problem.k == 0 || problem.k > available {
            return Err(DeriveError::TooMany {
                k: problem.k,
                available,
                what,
            });
        }
        let allowed_list: Vec<u32> = (0..sites as u32).filter(|&s| allowed[s as usize]).collect();
        let group = SiteGroup::full(parent, on_bonds)
            .setwise_stabiliser(&allowed_list)
            .setwise_stabiliser(&problem.base);
        Ok(Search {
            kind: problem.kind,
            k: problem.k,
            base: problem.base.clone(),
            group,
            allowed,
            ends,
            atoms: cage.atoms(),
        })
    }

    /// Number of sites (atoms or bonds) of the parent.
    pub fn sites(&self) -> usize {
        self.allowed.len()
    }

    pub fn is_allowed(&self, site: u32) -> bool {
        self.allowed[site as usize]
    }

    /// End atoms of each bond when sites are bonds.
    pub fn ends(&self) -> Option<&[[u32; 2]]> {
        self.ends.as_deref()
    }

    /// True if no image of `set` (sorted) under the group is lexicographically smaller.
    pub fn is_canonical(&self, set: &[u32]) -> bool {
        let mut image = Vec::with_capacity(set.len());
        self.group
            .perms
            .iter()
            .all(|p| compare_image(p, set, &mut image) != std::cmp::Ordering::Less)
    }

    /// The elements (indices into [`Search::group`]) mapping `set` onto itself.
    pub fn stabiliser(&self, set: &[u32]) -> Vec<usize> {
        let mut image = Vec::with_capacity(set.len());
        (0..self.group.order())
            .filter(|&i| {
                compare_image(&self.group.perms[i], set, &mut image) == std::cmp::Ordering::Equal
            })
            .collect()
    }

    /// The canonical form of any valid set of sites under the search group.
    pub fn canonical_form(&self, set: &[u32]) -> Vec<u32> {
        let mut best: Vec<u32> = set.to_vec();
        best.sort_unstable();
        for p in &self.group.perms {
            let mut image: Vec<u32> = set.iter().map(|&s| p[s as usize]).collect();
            image.sort_unstable();
            if image < best {
                best = image;
            }
        }
        best
    }

    /// Canonical children of a canonical prefix, in increasing order of the added site.
    fn children(&self, prefix: &[u32], used: &[bool]) -> Vec<u32> {
        let start = prefix.last().map_or(0, |&x| x as usize + 1);
        let mut set = prefix.to_vec();
        let mut out = Vec::new();
        for x in start..self.sites() {
            if !self.allowed[x] || !self.free(x, used) {
                continue;
            }
            set.push(x as u32);
            if self.is_canonical(&set) {
                out.push(x as u32);
            }
            set.pop();
        }
        out
    }

    fn free(&self, site: usize, used: &[bool]) -> bool {
        match &self.ends {
            Some(ends) => ends[site].iter().all(|&a| !used[a as usize]),
            None => true,
        }
    }

    fn mark(&self, site: u32, used: &mut [bool], value: bool) {
        if let Some(ends) = &self.ends {
            for &a in &ends[site as usize] {
                used[a as usize] = value;
            }
        }
    }

    /// Depth-first completion of `set` to size k, calling `out` on each canonical set in order.
    fn complete(&self, set: &mut Vec<u32>, used: &mut Vec<bool>, out: &mut dyn FnMut(&[u32])) {
        if set.len() == self.k {
            out(set);
            return;
        }
        for x in self.children(set, used) {
            self.mark(x, used, true);
            set.push(x);
            self.complete(set, used, out);
            set.pop();
            self.mark(x, used, false);
        }
    }

    fn used_by(&self, set: &[u32]) -> Vec<bool> {
        let mut used = vec![false; self.atoms];
        for &s in set {
            self.mark(s, &mut used, true);
        }
        used
    }

    /// The work units: canonical prefixes of the smallest depth that gives at least
    /// [`MIN_UNITS`] of them (or of depth k), in lexicographic order. Depends only on the search.
    pub fn units(&self) -> Vec<Vec<u32>> {
        let mut level: Vec<Vec<u32>> = vec![Vec::new()];
        while level.len() < MIN_UNITS && level.first().is_some_and(|p| p.len() < self.k) {
            level = level
                .iter()
                .flat_map(|p| {
                    let used = self.used_by(p);
                    self.children(p, &used).into_iter().map(move |x| {
                        let mut q = p.clone();
                        q.push(x);
                        q
                    })
                })
                .collect();
        }
        level
    }

    /// Lists every pattern in canonical order: `map` runs in parallel on each one, `sink` receives
    /// the results in order with their 1-based numbers and may stop the run.
    pub fn stream<T, M, S>(&self, map: M, mut sink: S)
    where
        T: Send,
        M: Fn(&Found) -> T + Sync,
        S: FnMut(u64, T) -> ControlFlow<()>,
    {
        let units = self.units();
        let mut number = 0u64;
        for window in units.chunks(WINDOW) {
            let results: Vec<Vec<T>> = window
                .par_iter()
                .map(|prefix| {
                    let mut found = Vec::new();
                    let mut set = prefix.clone();
                    let mut used = self.used_by(prefix);
                    self.complete(&mut set, &mut used, &mut |s| {
                        found.push(map(&Found {
                            sites: s.to_vec(),
                            stabiliser: self.stabiliser(s),
                        }))
                    });
                    found
                })
                .collect();
            for value in results.into_iter().flatten() {
                number += 1;
                if sink(number, value).is_break() {
                    return;
                }
            }
        }
    }

    /// Number of patterns, by listing them all (tests compare it with [`super::burnside`]).
    pub fn count_by_listing(&self) -> u64 {
        self.units()
            .par_iter()
            .map(|prefix| {
                let mut n = 0u64;
                let mut set = prefix.clone();
                let mut used = self.used_by(prefix);
                self.complete(&mut set, &mut used, &mut |_| n += 1);
                n
            })
            .sum()
    }

    /// The pattern with this 1-based number, and how many patterns were passed on the way.
    ///
    /// One thread, depth first, stopping at the pattern: its cost grows with `number`, not with
    /// the list. ([`Search::stream`] completes a whole window of units before handing on the
    /// first pattern, which for C60 with 8 addends is most of a 21-million list.)
    pub fn nth(&self, number: u64) -> Result<Found, u64> {
        let mut seen = 0u64;
        let mut hit: Option<Vec<u32>> = None;
        let mut set = Vec::with_capacity(self.k);
        let mut used = self.used_by(&[]);
        let _ = self.walk(&mut set, &mut used, &mut |s| {
            seen += 1;
            if seen == number {
                hit = Some(s.to_vec());
                ControlFlow::Break(())
            } else {
                ControlFlow::Continue(())
            }
        });
        hit.map(|sites| Found {
            stabiliser: self.stabiliser(&sites),
            sites,
        })
        .ok_or(seen)
    }

    /// As [`Search::complete`], but `out` may stop the walk.
    fn walk(
        &self,
        set: &mut Vec<u32>,
        used: &mut Vec<bool>,
        out: &mut dyn FnMut(&[u32]) -> ControlFlow<()>,
    ) -> ControlFlow<()> {
        if set.len() == self.k {
            return out(set);
        }
        for x in self.children(set, used) {
            self.mark(x, used, true);
            set.push(x);
            let flow = self.walk(set, used, out);
            set.pop();
            self.mark(x, used, false);
            flow?;
        }
        ControlFlow::Continue(())
    }

    /// Numbers of the given canonical forms in this search's list (`None` if not listed), found
    /// in one pass over the list.
    pub fn numbers_of(&self, forms: &[Vec<u32>]) -> Vec<Option<u64>> {
        let mut wanted: Vec<(usize, &Vec<u32>)> = forms.iter().enumerate().collect();
        wanted.sort_by(|a, b| a.1.cmp(b.1));
        let mut numbers = vec![None; forms.len()];
        let mut next = 0;
        self.stream(
            |f| f.sites.clone(),
            |n, sites| {
                while next < wanted.len() && *wanted[next].1 < sites {
                    next += 1;
                }
                while next < wanted.len() && *wanted[next].1 == sites {
                    numbers[wanted[next].0] = Some(n);
                    next += 1;
                }
                if next == wanted.len() {
                    ControlFlow::Break(())
                } else {
                    ControlFlow::Continue(())
                }
            },
        );
        numbers
    }
}

/// Compares the sorted image of `set` under `perm` with `set`, cheaply when the image's smallest
/// element already decides.
fn compare_image(perm: &[u32], set: &[u32], image: &mut Vec<u32>) -> std::cmp::Ordering {
    image.clear();
    image.extend(set.iter().map(|&s| perm[s as usize]));
    let min = image.iter().copied().min().unwrap_or(0);
    if let Some(&first) = set.first() {
        if min != first {
            return min.cmp(&first);
        }
    }
    image.sort_unstable();
    image.as_slice().cmp(set)
}
