//! Screening values of one pattern and the default ranking of patterns.
//!
//! Per pattern: whether the remaining pi system has a Kekulé structure (if not, the neutral
//! derivative is a radical), its exact Kekulé count, Hückel HOMO, LUMO, gap and total pi energy
//! with heteroatom parameters and the run's charge, where the sites sit (atoms on a pentagon or
//! only on hexagons; 6:6, 6:5, 5:5 bonds), and the pattern's own symmetry (the stabiliser's
//! point group and chirality, orbit size x stabiliser order = group order).
//!
//! Default ranking (reasons in `docs/derivatives.md`): patterns with a Kekulé structure first,
//! radicals last; then larger total Hückel pi energy (all patterns of a run have the same atoms
//! and electrons, so this is the pi binding kept after addition: the localisation-energy idea
//! of Wheland, J. Am. Chem. Soc. 64 (1942) 900, from memory); then larger HOMO-LUMO gap; then
//! more Kekulé structures; then the pattern number, so the order is total. These are screening
//! heuristics, not predictions of stability or safety. This module prints nothing.

use super::orbits::{Found, Search};
use super::{huckel, kekule, DeriveError, Kind, Parent};
use crate::score::symmetry::{self, PointGroup};
use num_bigint::BigUint;
use serde::Serialize;
use std::cmp::Ordering;

/// Everything reported about one pattern.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PatternScore {
    /// Pattern ID, e.g. `C60:IPR-1+2H:7` (for sequential runs, the ID within that run).
    pub id: String,
    pub number: u64,
    /// The new sites, 1-based (atoms, or bonds in [`crate::cage::Cage::edges`] order).
    pub sites: Vec<u32>,
    /// Every atom that left the pi system or was replaced, 1-based, sorted.
    pub atoms: Vec<u32>,
    /// Patterns in the orbit (symmetry-equivalent placements on the labelled cage).
    pub orbit: u64,
    /// Order of the stabiliser (the pattern's own symmetry group).
    pub stabiliser: u32,
    pub point_group: PointGroup,
    pub chiral: bool,
    /// False when the remaining pi system has no Kekulé structure (heteroatoms count as left
    /// out: N keeps its lone pair, B its empty orbital).
    pub kekule_structure: bool,
    /// A neutral addition pattern without a Kekulé structure: the derivative is a radical.
    /// (A charged run, or a substitution, may instead have a charge-separated structure.)
    pub radical: bool,
    /// Exact Kekulé count of the remaining pi system, as a decimal string.
    pub kekule: String,
    pub homo: f64,
    pub lumo: f64,
    pub gap: f64,
    pub pi_energy: f64,
    /// Sites on atoms that lie on at least one pentagon / only on hexagons (atom kinds).
    pub pentagon_atoms: u32,
    pub hexagon_atoms: u32,
    /// Bridged bonds by the rings they join (bridge kinds).
    pub bonds_66: u32,
    pub bonds_56: u32,
    pub bonds_55: u32,
    /// The exact count, kept for ranking.
    #[serde(skip)]
    pub kekule_count: BigUint,
}

/// What stays fixed across the patterns of one run.
pub struct Scorer<'a> {
    pub parent: &'a Parent,
    pub search: &'a Search,
    pub charge: i32,
    filled: usize,
    on_pentagon: Vec<bool>,
}

impl<'a> Scorer<'a> {
    /// Checks the electron count once for the run (the same for every pattern).
    pub fn new(
        parent: &'a Parent,
        search: &'a Search,
        charge: i32,
    ) -> Result<Scorer<'a>, DeriveError> {
        let cage = &parent.cage;
        let mut on_pentagon = vec![false; cage.atoms()];
        for face in cage.faces().iter().filter(|f| f.len() == 5) {
            for &v in face {
                on_pentagon[v as usize] = true;
            }
        }
        let taken = search.base.len() + search.k;
        let (left, hetero_extra) = match search.kind {
            Kind::Addend(_) => (taken, 0),
            Kind::Bridge(_) => (2 * taken, 0),
            Kind::Substitute(h) => (0, h.extra_electrons() * taken as i64),
        };
        let orbitals = cage.atoms() - left.min(cage.atoms());
        let electrons = orbitals as i64 + hetero_extra - i64::from(charge);
        let filled = huckel::filled(electrons, orbitals)?;
        Ok(Scorer {
            parent,
            search,
            charge,
            filled,
            on_pentagon,
        })
    }

    /// Scores one listed pattern; `id` is its full pattern ID.
    pub fn score(&self, found: &Found, number: u64, id: String) -> PatternScore {
        let cage = &self.parent.cage;
        let (removed, hetero) = effect(self.parent, self.search, &found.sites);
        let pi_removed: Vec<bool> = removed
            .iter()
            .zip(&hetero)
            .map(|(&r, h)| r || h.is_some())
            .collect();
        let count = kekule::count(cage, &pi_removed);
        let values = huckel::spectrum(cage, &removed, &hetero);
        let levels = huckel::levels(&values, self.filled);
        let autos = self
            .search
            .group
            .automorphisms_of(self.parent, &found.stabiliser);
        let sym = symmetry::symmetry(cage, &autos);
        let stabiliser = found.stabiliser.len().max(1) as u32;
        let mut score = PatternScore {
            id,
            number,
            sites: found.sites.iter().map(|s| s + 1).collect(),
            atoms: (0..cage.atoms() as u32)
                .filter(|&v| removed[v as usize] || hetero[v as usize].is_some())
                .map(|v| v + 1)
                .collect(),
            orbit: (self.search.group.order() / stabiliser as usize) as u64,
            stabiliser,
            point_group: sym.point_group,
            chiral: sym.chiral,
            kekule_structure: count > BigUint::ZERO,
            radical: count == BigUint::ZERO
                && self.charge == 0
                && !matches!(self.search.kind, Kind::Substitute(_)),
            kekule: count.to_string(),
            homo: levels.homo,
            lumo: levels.lumo,
            gap: levels.gap,
            pi_energy: levels.pi_energy,
            pentagon_atoms: 0,
            hexagon_atoms: 0,
            bonds_66: 0,
            bonds_56: 0,
            bonds_55: 0,
            kekule_count: count,
        };
        self.count_sites(&found.sites, &mut score);
        score
    }

    fn count_sites(&self, sites: &[u32], score: &mut PatternScore) {
        let cage = &self.parent.cage;
        match self.search.ends() {
            None => {
                for &s in sites {
                    if self.on_pentagon[s as usize] {
                        score.pentagon_atoms += 1;
                    } else {
                        score.hexagon_atoms += 1;
                    }
                }
            }
            Some(_) => {
                for &e in sites {
                    let [a, b] = cage.edge_faces()[e as usize];
                    let pentagons = [a, b]
                        .iter()
                        .filter(|&&f| cage.faces()[f as usize].len() == 5)
                        .count();
                    match pentagons {
                        0 => score.bonds_66 += 1,
                        1 => score.bonds_56 += 1,
                        _ => score.bonds_55 += 1,
                    }
                }
            }
        }
    }
}

/// Which atoms leave the pi system (addends, bridge ends, earlier pattern) and which carbons are
/// replaced, for the new sites `sites` of `search` together with its base.
pub fn effect(
    parent: &Parent,
    search: &Search,
    sites: &[u32],
) -> (Vec<bool>, Vec<Option<super::Hetero>>) {
    let n = parent.cage.atoms();
    let mut removed = vec![false; n];
    let mut hetero = vec![None; n];
    for &s in search.base.iter().chain(sites) {
        match (search.kind, search.ends()) {
            (Kind::Substitute(h), _) => hetero[s as usize] = Some(h),
            (_, Some(ends)) => ends[s as usize]
                .iter()
                .for_each(|&a| removed[a as usize] = true),
            (_, None) => removed[s as usize] = true,
        }
    }
    (removed, hetero)
}

/// The default screening order (see the module doc): best first.
pub fn default_order(a: &PatternScore, b: &PatternScore) -> Ordering {
    b.kekule_structure
        .cmp(&a.kekule_structure)
        .then_with(|| quantised(b.pi_energy).cmp(&quantised(a.pi_energy)))
        .then_with(|| quantised(b.gap).cmp(&quantised(a.gap)))
        .then_with(|| b.kekule_count.cmp(&a.kekule_count))
        .then_with(|| a.number.cmp(&b.number))
}

/// A level rounded to 1e-8 |beta|, so that patterns whose values agree up to rounding noise of
/// the eigensolver (about 1e-14) tie and fall through to the next key instead of being ordered
/// by noise.
fn quantised(x: f64) -> i64 {
    (x * 1e8).round() as i64
}
