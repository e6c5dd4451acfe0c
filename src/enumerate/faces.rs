//! The spiral search for face sets other than the fullerenes': squares and hexagons (`4-6`,
//! models of boron-nitride cages), squares, pentagons and hexagons (`4-5-6`), and pentagons,
//! hexagons and a bounded number of heptagons (`5-6-7`).
//!
//! Same method as the fullerene search in the parent module (Manolopoulos, May & Down 1991):
//! face-size sequences are generated depth-first, each face wound at once so that a prefix that
//! jams is pruned, bounded by Euler's curvature budget (sum of 6 - size = 12; a heptagon gives
//! back one) and a closure bound on the boundary's free valency; a completed sequence is kept if
//! it is the lexicographically smallest spiral of its cage over every start and both senses
//! (`spiral::test_canonical`), so isomers come out in canonical-spiral order and are numbered in
//! it. The tree is cut into [`Unit`]s at a depth that depends on the [`Spec`] only, so sharding,
//! resume and numbering work exactly as for fullerenes. This search keeps no completion store:
//! these lists are far smaller than fullerene lists of the same size (six squares give few
//! places to put them), and a plain depth-first search is fast enough (figures in the README).
//!
//! The isolation rule (`Spec::ipr`, written `--isolated`) forbids two faces of
//! [`FaceSet::isolated_size`] to share an edge: squares for `4-6` and `4-5-6`, pentagons for
//! `5-6-7`. It is checked as each face is wound, from the atoms (dual triangles) the new face
//! closes, so an isolated run never winds past a forbidden contact.
//!
//! Completeness. Face-spiral completeness is proved for none of these sets (domain notes §9):
//! a cage none of whose starts gives a closed spiral would be missed. Runs therefore start
//! spirals on every face size by default ([`Spec::cages`] sets `all_starts`), so every cage
//! that has *some* face spiral is found; what was checked, and up to which size, is in the
//! README ("Other face sets") and in `tests/suite/cages.rs`. Scoring, storage and printing are left
//! to `score`, `catalogue` and `cli`; this module does no I/O.

use super::{Found, Spec, Unit};
use crate::cage::{FaceSet, MAX_HEPTAGONS};
use crate::spiral::{
    test_canonical, Canonicity, Dual, Reader, Record, RotationScratch, Spiral, Winder,
};
use rayon::prelude::*;
use std::fmt;

/// The unit cut goes down until there are at least this many units (or the sequence ends).
/// Fewer than for fullerenes: these trees are smaller, and a unit's overhead is winding its
/// prefix again.
const TARGET_UNITS: usize = 500;

/// Largest atom count accepted (the fullerene search's limit too).
pub const MAX_ATOMS: u64 = 100_000;

/// Why a cage size cannot be searched in a face set.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct SizeError {
    pub atoms: u64,
    pub face_set: FaceSet,
    pub reason: &'static str,
}

impl fmt::Display for SizeError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "no {} cage has {} atoms: {}",
            self.face_set, self.atoms, self.reason
        )
    }
}

impl std::error::Error for SizeError {}

impl Spec {
    /// Cages of any face set with `atoms` atoms; `isolated` asks for the set's isolation rule.
    /// For fullerenes this is [`Spec::fullerene`]. For the other sets spirals start on every
    /// face size, as smallest-size starts alone are not known to find every cage there.
    pub fn cages(atoms: u64, face_set: FaceSet, isolated: bool) -> Result<Spec, SizeError> {
        if face_set == FaceSet::Fullerene {
            return Spec::fullerene(atoms, isolated).map_err(|_| SizeError {
                atoms,
                face_set,
                reason: "a fullerene has 20 or an even number from 24 up to 100000 atoms",
            });
        }
        let bad = |reason| {
            Err(SizeError {
                atoms,
                face_set,
                reason,
            })
        };
        let smallest = smallest_atoms(face_set);
        if atoms % 2 == 1 {
            return bad("a cubic cage has an even number of atoms");
        }
        if atoms < smallest {
            return bad(match face_set {
                FaceSet::PentagonHexagonHeptagon { .. } => {
                    "the smallest such cage is the dodecahedron, 20 atoms"
                }
                _ => "the smallest such cage is the cube, 8 atoms",
            });
        }
        if atoms > MAX_ATOMS {
            return bad("too large for this tool (limit 100000 atoms)");
        }
        if face_set.heptagon_bound() > MAX_HEPTAGONS {
            return bad("the heptagon bound is above the supported maximum");
        }
        Ok(Spec {
            atoms: atoms as u32,
            face_set,
            ipr: isolated,
            all_starts: true,
        })
    }
}

/// Fewest atoms of a cage in the set (Euler: the cube has six squares and 8 atoms; a cage
/// without squares needs at least twelve pentagons, so 20 atoms).
pub fn smallest_atoms(face_set: FaceSet) -> u64 {
    match face_set {
        FaceSet::Fullerene | FaceSet::PentagonHexagonHeptagon { .. } => 20,
        FaceSet::SquareHexagon | FaceSet::SquarePentagonHexagon => 8,
    }
}

/// Curvature 6 - size of a face (negative for heptagons).
fn curvature(size: u8) -> i32 {
    6 - i32::from(size)
}

/// Depth-first spiral search for one spec.
struct Search<'a> {
    spec: &'a Spec,
    sizes: &'static [u8],
    winder: Winder,
    reader: Reader,
    dual: Dual,
    scratch: RotationScratch,
    total: usize,
    /// Curvature placed so far (sum of 6 - size).
    used: i32,
    heptagons: u32,
    /// Size that may not touch itself in an isolated run (0 if no rule applies).
    isolated: u8,
}

impl<'a> Search<'a> {
    fn new(spec: &'a Spec) -> Search<'a> {
        let total = spec.faces();
        let isolated = if spec.ipr {
            spec.face_set.isolated_size()
        } else {
            0
        };
        Search {
            spec,
            sizes: spec.face_set.sizes(),
            // The winder's own pentagon rule serves `5-6-7`; squares are checked here.
            winder: Winder::new(total, isolated == 5).recording(Record::Triangles),
            reader: Reader::default(),
            dual: Dual::from_triangles(&[], &[]),
            scratch: RotationScratch::default(),
            total,
            used: 0,
            heptagons: 0,
            isolated,
        }
    }

    /// The first face must be the set's smallest size unless the spec starts on every size.
    fn allowed(&self, s: u8) -> bool {
        self.spec.all_starts || !self.winder.sizes().is_empty() || s == self.sizes[0]
    }

    /// Can `r` more faces of the set carry curvature `left` with at most `heptagons_left`
    /// heptagons? Face curvatures are 2 (square), 1 (pentagon), 0 (hexagon), -1 (heptagon).
    fn feasible(&self, r: usize, left: i32, heptagons_left: i32) -> bool {
        let r = r as i32;
        match self.spec.face_set {
            FaceSet::Fullerene => (0..=r).contains(&left),
            FaceSet::SquareHexagon => (0..=2 * r).contains(&left) && left % 2 == 0,
            FaceSet::SquarePentagonHexagon => (0..=2 * r).contains(&left),
            // p - t = left, p + t <= r, t <= heptagons_left: the fewest heptagons is
            // max(0, -left).
            FaceSet::PentagonHexagonHeptagon { .. } => {
                let t = (-left).max(0);
                t <= heptagons_left && left + 2 * t <= r
            }
        }
    }

    /// Winds face `s` if the budget, the heptagon bound, the closure bound and the isolation
    /// rule allow; true on success (the face stays wound).
    fn try_push(&mut self, s: u8) -> bool {
        let k = self.winder.sizes().len();
        let r = self.total - k - 1;
        let left = 12 - self.used - curvature(s);
        let heptagons = self.heptagons + u32::from(s == 7);
        let heptagons_left = i32::from(self.spec.face_set.heptagon_bound()) - heptagons as i32;
        if heptagons_left < 0 || !self.feasible(r, left, heptagons_left) {
            return false;
        }
        let before = self.winder.triangles().len();
        if self.winder.push(s).is_err() {
            return false;
        }
        if !self.can_close(r, left) || (self.isolated == 4 && s == 4 && self.touches_own(before)) {
            self.winder.pop();
            return false;
        }
        self.used += curvature(s);
        self.heptagons = heptagons;
        true
    }

    fn pop(&mut self) {
        let s = *self.winder.sizes().last().expect("pop follows a push");
        self.used -= curvature(s);
        self.heptagons -= u32::from(s == 7);
        self.winder.pop();
    }

    /// Closure bound (as in the fullerene search): a middle face of size s lowers the free
    /// valency of the boundary by at most s - 2, and the last face needs exactly its size, so
    /// with r faces to come carrying curvature `left` the free valency is at most
    /// sum(s - 2) + 2 = 4r - left + 2.
    fn can_close(&self, r: usize, left: i32) -> bool {
        r == 0
            || r + 1 == self.total
            || i64::from(self.winder.open_valency()) <= 4 * r as i64 + 2 - i64::from(left)
    }

    /// Whether the face just wound (of the isolated size) shares an edge with another face of
    /// that size. Every face it was joined to shares an atom with it, recorded as a triangle
    /// from `before` on, except the first face, which the second joins without an atom.
    fn touches_own(&self, before: usize) -> bool {
        let sizes = self.winder.sizes();
        let k = sizes.len() - 1;
        let s = sizes[k];
        if k == 1 && sizes[0] == s {
            return true;
        }
        self.winder.triangles()[before..]
            .iter()
            .flatten()
            .any(|&f| f as usize != k && sizes[f as usize] == s)
    }

    /// Whether no two faces of the set's isolated size share an edge (any two faces around an
    /// atom share one of its edges).
    fn obeys_isolation(&self) -> bool {
        let sizes = self.winder.sizes();
        let s = self.spec.face_set.isolated_size();
        self.winder.triangles().iter().all(|t| {
            let n = t.iter().filter(|&&f| sizes[f as usize] == s).count();
            n < 2
        })
    }

    fn descend(&mut self, out: &mut Vec<Found>) {
        if self.winder.sizes().len() == self.total {
            self.leaf(out);
            return;
        }
        for &s in self.sizes {
            if self.allowed(s) && self.try_push(s) {
                self.descend(out);
                self.pop();
            }
        }
    }

    fn leaf(&mut self, out: &mut Vec<Found>) {
        let sizes = self.winder.sizes();
        self.dual
            .rebuild(sizes, self.winder.triangles(), &mut self.scratch);
        if let Canonicity::Canonical { automorphisms } =
            test_canonical(&self.dual, sizes, &mut self.reader)
        {
            let isolated = self.spec.ipr || self.obeys_isolation();
            out.push(Found {
                spiral: Spiral::from_wound(sizes.to_vec()),
                automorphisms,
                ipr: isolated,
            });
        }
    }
}

/// The units of a run in spiral order: the viable prefixes of the first depth (at least two
/// faces) with [`TARGET_UNITS`] of them, or whole sequences. Depends on the spec only.
pub(crate) fn units(spec: &Spec) -> Vec<Unit> {
    let mut search = Search::new(spec);
    let mut level: Vec<Vec<u8>> = vec![Vec::new()];
    let mut depth = 0;
    while !(depth >= 2.min(spec.faces()) && (level.len() >= TARGET_UNITS || depth >= spec.faces()))
    {
        let mut next = Vec::new();
        for prefix in &level {
            if !search.wind_prefix(prefix) {
                continue;
            }
            for &s in search.sizes {
                if search.allowed(s) && search.try_push(s) {
                    next.push(search.winder.sizes().to_vec());
                    search.pop();
                }
            }
        }
        level = next;
        depth += 1;
    }
    level
        .into_iter()
        .enumerate()
        .map(|(i, prefix)| Unit {
            index: i as u32,
            prefix,
        })
        .collect()
}

impl Search<'_> {
    /// Unwinds everything and winds `prefix`; false if it does not wind (a unit from another
    /// spec, or one the isolation rule rules out).
    fn wind_prefix(&mut self, prefix: &[u8]) -> bool {
        while !self.winder.sizes().is_empty() {
            self.pop();
        }
        for &s in prefix {
            if !self.try_push(s) {
                return false;
            }
        }
        true
    }
}

/// Every isomer whose canonical spiral starts with the unit's prefix, in spiral order. The unit
/// is cut into [`pieces`] that run in parallel and are concatenated in the order `descend`
/// visits them, so the output does not depend on the thread count. A few units hold most of a
/// run's work (one unit of 659 held half of an isolated 4-6 search of 180 atoms), and without
/// the cut two threads ran that search only 1.1 times faster than one.
pub(crate) fn run_unit(spec: &Spec, unit: &Unit) -> Vec<Found> {
    if unit.prefix.len() > spec.faces() {
        return Vec::new();
    }
    let found: Vec<Vec<Found>> = pieces(spec, &unit.prefix)
        .par_iter()
        .map_init(
            || Search::new(spec),
            |search, prefix| {
                let mut out = Vec::new();
                if search.rewind_to(prefix) {
                    search.descend(&mut out);
                }
                out
            },
        )
        .collect();
    found.into_iter().flatten().collect()
}

/// The subtree below `prefix` cut along its run of hexagons: the prefix followed by j hexagons
/// and one face of another size, for every j, and the prefix completed by hexagons alone, in
/// the order `descend` visits them (smaller sizes before the hexagon's subtree, heptagons
/// after it). The work of a prefix lies in where its few non-hexagon faces go, so each piece
/// takes a share of it, where cutting at a fixed depth left the all-hexagon piece with most of
/// it. Empty if `prefix` does not wind.
fn pieces(spec: &Spec, prefix: &[u8]) -> Vec<Vec<u8>> {
    let mut search = Search::new(spec);
    let mut out = Vec::new();
    if search.wind_prefix(prefix) {
        search.chain(&mut out);
    }
    out
}

impl Search<'_> {
    /// Appends the pieces of the wound prefix (see [`pieces`]) to `out`.
    fn chain(&mut self, out: &mut Vec<Vec<u8>>) {
        if self.winder.sizes().len() == self.total {
            out.push(self.winder.sizes().to_vec());
            return;
        }
        for &s in self.sizes {
            if self.allowed(s) && self.try_push(s) {
                if s == 6 {
                    self.chain(out);
                } else {
                    out.push(self.winder.sizes().to_vec());
                }
                self.pop();
            }
        }
    }

    /// Winds `prefix`, keeping the faces it shares with what is wound now; false if it does
    /// not wind.
    fn rewind_to(&mut self, prefix: &[u8]) -> bool {
        let shared = self
            .winder
            .sizes()
            .iter()
            .zip(prefix)
            .take_while(|(a, b)| a == b)
            .count();
        while self.winder.sizes().len() > shared {
            self.pop();
        }
        prefix[shared..].iter().all(|&s| self.try_push(s))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A unit's pieces, run and concatenated, give exactly what one depth-first descent from
    /// the unit's prefix gives (the same cages in the same order), for every unit of runs of
    /// each face set, with and without the isolation rule.
    #[test]
    fn pieces_concatenate_to_the_unit() {
        let specs = [
            Spec::cages(60, FaceSet::SquareHexagon, true),
            Spec::cages(40, FaceSet::SquareHexagon, false),
            Spec::cages(24, FaceSet::SquarePentagonHexagon, false),
            Spec::cages(32, FaceSet::PentagonHexagonHeptagon { heptagons: 1 }, false),
        ];
        for spec in specs {
            let spec = spec.expect("valid size");
            let mut total = 0;
            for unit in units(&spec) {
                let mut search = Search::new(&spec);
                let mut whole = Vec::new();
                if search.wind_prefix(&unit.prefix) {
                    search.descend(&mut whole);
                }
                total += whole.len();
                assert_eq!(
                    run_unit(&spec, &unit),
                    whole,
                    "{spec:?} unit {}",
                    unit.index
                );
            }
            assert!(total > 0, "{spec:?} found nothing");
        }
    }
}
