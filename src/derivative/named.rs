//! One pattern named by its ID (`C60:IPR-1+2H:5`), resolved on its parent: the listed sites,
//! the screening values, the pattern's own symmetry, its place in the default ranking of its
//! list, and the molecule built on given cage coordinates. This is what `show`, `export` and
//! `draw` need about a single derivative.
//!
//! Finding the parent's spiral from its isomer ID (catalogue or search) is the caller's job, as
//! is choosing cage coordinates (`geometry::relax` in the CLI) and writing files (`export`) or
//! pictures (`draw`). No I/O here.

use super::orbits::{Found, Search};
use super::score::{default_order, PatternScore, Scorer};
use super::structure::{self, Molecule};
use super::{burnside, find_pattern, DeriveError, Kind, Parent, PatternId};
use crate::spiral::Automorphism;
use num_bigint::BigUint;
use std::cmp::Ordering;
use std::collections::BTreeMap;
use std::ops::ControlFlow;

/// Largest list [`Named::rank`] scores whole to place one pattern in it. Scoring costs about
/// 0.3 ms of CPU per C60 pattern (docs/derivatives.md), so the limit keeps `show` within a
/// couple of seconds; C60 with 4 addends (4190 patterns) is inside it, with 5 (45718) outside.
pub const RANK_LIMIT: u64 = 5_000;

/// A resolved pattern. `id.parent` is the parent's label, so the ID text is canonical even when
/// the user wrote the parent another way (`C60:1` with `--ipr`).
#[derive(Debug, Clone)]
pub struct Named {
    pub id: PatternId,
    pub parent: Parent,
    pub search: Search,
    pub found: Found,
    pub score: PatternScore,
    /// Charge of the whole derivative (the pi system's charge in the Hückel count).
    pub charge: i32,
}

/// Where a pattern sits in the default screening order of its list.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Rank {
    /// 1 = best.
    pub position: u64,
    pub of: u64,
}

impl Named {
    /// Finds the pattern `id` names on `parent` and scores it with charge `charge`. Errors are
    /// the user's to fix (a number past the end of the list, an odd electron count, ...).
    pub fn new(parent: Parent, id: &PatternId, charge: i32) -> Result<Named, DeriveError> {
        let id = PatternId {
            parent: parent.label.clone(),
            ..id.clone()
        };
        let (search, found) = find_pattern(&parent, &id)?;
        let score = Scorer::new(&parent, &search, charge)?.score(&found, id.number, id.to_string());
        Ok(Named {
            id,
            parent,
            search,
            found,
            score,
            charge,
        })
    }

    /// As [`Named::new`] for callers that need only the sites and the pattern's symmetry (a
    /// drawing): charge 0, or +1 when the neutral pi system has an odd electron count (C60H)
    /// and so no closed shell to score.
    pub fn any_charge(parent: Parent, id: &PatternId) -> Result<Named, DeriveError> {
        match Named::new(parent.clone(), id, 0) {
            Err(DeriveError::OddElectrons { .. }) => Named::new(parent, id, 1),
            other => other,
        }
    }

    /// The derivative as a molecule on cage coordinates `coords` (Å, one per parent atom in the
    /// parent's numbering).
    pub fn molecule(&self, coords: &[[f64; 3]]) -> Molecule {
        structure::build(
            &self.parent,
            &self.search,
            &self.found.sites,
            coords,
            self.charge,
        )
    }

    /// Atoms left in the pi system (heteroatoms included) and the electrons they hold.
    pub fn pi_system(&self) -> (usize, i64) {
        let (removed, hetero) = super::score::effect(&self.parent, &self.search, &self.found.sites);
        let centres = removed.iter().filter(|&&r| !r).count();
        let electrons = super::huckel::electrons(&self.parent.cage, &removed, &hetero, self.charge);
        (centres, electrons)
    }

    /// The derivative's formula with its charge (`C60H2`, `C58N2`, `C62H4`, `C59N+`), counted
    /// from the pattern without building the molecule.
    pub fn formula(&self) -> String {
        let n = self.parent.cage.atoms();
        let k = self.search.base.len() + self.search.k;
        let mut counts: BTreeMap<&str, usize> = BTreeMap::new();
        match self.id.kind {
            Kind::Addend(a) => {
                counts.insert("C", n);
                counts.insert(a.symbol(), k);
            }
            Kind::Bridge(_) => {
                counts.insert("C", n + k);
                counts.insert("H", 2 * k);
            }
            Kind::Substitute(h) => {
                counts.insert("C", n - k);
                counts.insert(h.symbol(), k);
            }
        }
        structure::hill_formula(counts, self.charge)
    }

    /// The parent automorphisms that map the pattern onto itself (identity included).
    pub fn symmetry(&self) -> Vec<Automorphism> {
        self.search
            .group
            .automorphisms_of(&self.parent, &self.found.stabiliser)
    }

    /// Atoms the pattern changes, 0-based: addend carriers, heteroatoms, or bridge ends.
    pub fn marked_atoms(&self) -> Vec<u32> {
        self.score.atoms.iter().map(|a| a - 1).collect()
    }

    /// Bonds the pattern bridges (indices into the parent's edges); empty for atom patterns.
    pub fn marked_bonds(&self) -> Vec<u32> {
        if self.id.kind.on_bonds() {
            self.found.sites.clone()
        } else {
            Vec::new()
        }
    }

    /// The sites as text: `1, 2` for atoms, `12 (1-2), 40 (20-21)` for bonds with their atoms.
    pub fn sites_text(&self) -> String {
        let edges = self.parent.cage.edges();
        self.found
            .sites
            .iter()
            .map(|&s| match self.id.kind {
                Kind::Bridge(_) => {
                    let [a, b] = edges[s as usize];
                    format!("{} ({}-{})", s + 1, a + 1, b + 1)
                }
                _ => (s + 1).to_string(),
            })
            .collect::<Vec<_>>()
            .join(", ")
    }

    /// The pattern's place in the default screening order of its whole list (all patterns of
    /// the same parent, kind and K, with this charge), or `None` when the list is longer than
    /// `limit` and scoring it whole was not worth it.
    pub fn rank(&self, limit: u64) -> Option<Rank> {
        let count = burnside::count(&self.search);
        if count > BigUint::from(limit) {
            return None;
        }
        let scorer = Scorer::new(&self.parent, &self.search, self.charge).ok()?;
        let mut better = 0u64;
        let mut of = 0u64;
        self.search.stream(
            |f| scorer.score(f, 0, String::new()),
            |n, mut s| {
                of += 1;
                s.number = n;
                if default_order(&s, &self.score) == Ordering::Less {
                    better += 1;
                }
                ControlFlow::Continue(())
            },
        );
        Some(Rank {
            position: better + 1,
            of,
        })
    }

    /// File stem for the derivative's files, see [`PatternId::file_stem`].
    pub fn file_stem(&self) -> String {
        self.id.file_stem()
    }
}
