//! The parent's automorphism group acting on sites (atoms or bonds), and the subgroups that keep
//! a set of sites in place.
//!
//! An automorphism permutes atoms; it permutes bonds through their end atoms. Orbit listing and
//! counting ([`super::orbits`], [`super::burnside`]) only need these permutations; naming a
//! subgroup (point group, chirality) goes back to the parent's [`Automorphism`] values through
//! [`SiteGroup::elements`] and is left to [`crate::score::symmetry`].

use super::Parent;
use crate::cage::{Cage, VertexId};
use crate::spiral::Automorphism;

/// A group of permutations of `sites` sites, each one an automorphism of the parent.
#[derive(Debug, Clone)]
pub struct SiteGroup {
    /// Number of sites the permutations act on.
    pub sites: usize,
    /// Index of each element in the parent's automorphism list.
    pub elements: Vec<usize>,
    /// `perms[i][s]` is the image of site s under element i.
    pub perms: Vec<Vec<u32>>,
}

impl SiteGroup {
    /// The whole automorphism group of the parent acting on atoms (`on_bonds` false) or bonds.
    pub fn full(parent: &Parent, on_bonds: bool) -> SiteGroup {
        let cage = &parent.cage;
        let perms: Vec<Vec<u32>> = if parent.automorphisms.is_empty() {
            vec![identity(sites_of(cage, on_bonds))]
        } else {
            parent
                .automorphisms
                .iter()
                .map(|a| {
                    if on_bonds {
                        bond_permutation(cage, a)
                    } else {
                        a.atoms.clone()
                    }
                })
                .collect()
        };
        SiteGroup {
            sites: sites_of(cage, on_bonds),
            elements: (0..perms.len()).collect(),
            perms,
        }
    }

    pub fn order(&self) -> usize {
        self.perms.len()
    }

    /// The elements that map `set` onto itself (as a set).
    pub fn setwise_stabiliser(&self, set: &[u32]) -> SiteGroup {
        let mut member = vec![false; self.sites];
        for &s in set {
            member[s as usize] = true;
        }
        let keep: Vec<usize> = (0..self.order())
            .filter(|&i| {
                set.iter()
                    .all(|&s| member[self.perms[i][s as usize] as usize])
            })
            .collect();
        SiteGroup {
            sites: self.sites,
            elements: keep.iter().map(|&i| self.elements[i]).collect(),
            perms: keep.iter().map(|&i| self.perms[i].clone()).collect(),
        }
    }

    /// The parent automorphisms of the listed elements (indices into this group).
    pub fn automorphisms_of(&self, parent: &Parent, members: &[usize]) -> Vec<Automorphism> {
        members
            .iter()
            .filter_map(|&i| parent.automorphisms.get(self.elements[i]).cloned())
            .collect()
    }
}

/// Number of atoms, or of bonds when `on_bonds`.
pub fn sites_of(cage: &Cage, on_bonds: bool) -> usize {
    if on_bonds {
        cage.edges().len()
    } else {
        cage.atoms()
    }
}

fn identity(n: usize) -> Vec<u32> {
    (0..n as u32).collect()
}

/// The permutation of bond indices induced by an atom permutation.
pub fn bond_permutation(cage: &Cage, a: &Automorphism) -> Vec<u32> {
    cage.edges()
        .iter()
        .map(|&[u, v]| {
            let (x, y) = (a.atoms[u as usize], a.atoms[v as usize]);
            cage.edge_index(VertexId(x), VertexId(y))
                .expect("invariant: an automorphism maps bonds to bonds")
                .0
        })
        .collect()
}
