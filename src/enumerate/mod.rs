//! Enumeration of every cage isomer of one size by canonical face spirals.
//!
//! Method (Manolopoulos, May & Down 1991; Fowler & Manolopoulos, *An Atlas of Fullerenes*
//! 1995): generate face-size sequences depth-first, winding each new face at once so that a prefix
//! that jams is pruned immediately, bounded by the Euler curvature budget (sum of 6 - size over
//! the faces is 12) and, for IPR runs, by forbidding two pentagons to touch. A completed sequence
//! is kept only if it is the canonical spiral of its cage. Trying small faces first yields the
//! isomers in increasing spiral order, which is the order of the trade's isomer numbers.
//!
//! The search tree is cut at a fixed depth into [`Unit`]s (subtrees). The cut depends only on the
//! [`Spec`], never on threads or shards, so units are the grain of parallelism, of sharding across
//! machines and of resumable catalogue runs. This module does no I/O; scoring and storage are
//! left to `score` and `catalogue`.
//!
//! Completeness: a sequence that starts with the smallest face size of its cage (for a
//! fullerene, a pentagon) is tried first, and for most sizes that is enough; but it misses any
//! cage none of whose smallest-face starts completes. All C100 has one such cage (a Td cage;
//! pentagon starts give 285,913 of OEIS A007894's 285,914), which only a search that also tries
//! hexagon starts ([`Spec::all_starts`], several times slower) finds. [`Spec::fullerene`]
//! therefore turns hexagon starts on wherever pentagon starts alone have not been checked
//! complete: complete lists above [`PENTAGON_STARTS_CHECKED`] atoms and IPR lists above
//! [`PENTAGON_STARTS_CHECKED_IPR`]. Face spirals themselves are complete only below 380 atoms
//! (Wirz et al., J. Chem. Inf. Model. 54 (2014) 121); [`Spec::spiral_complete`] says so.
//!
//! Why no prefix of a hexagon-start sequence is rejected early (our own argument, not a
//! published result): the sequence is canonical only if every pentagon start of its cage jams,
//! and jams show late (for all C60-C90, half of them in the last four faces), so a prefix cannot
//! show that a start read inside it completes. Nor can another start borrow the prefix's own
//! completion: the spiral state after k faces (visited faces, open faces in order) determines
//! the state after k - 1 (remove the newest face, put back the faces it closed), so two starts
//! that share a state are the same start. Each such sequence is therefore wound to its leaf and
//! rejected there, which is why hexagon starts cost several times more (docs/performance.md).

pub mod deal;
pub mod estimate;
pub mod faces;
mod lookup;
mod store;

pub use estimate::{estimate, Estimate, Work};
pub use lookup::{isomer_numbered, number_of, number_of_from, published_count, End};

use crate::cage::FaceSet;
use crate::spiral::{
    check_fullerene_atoms, test_canonical, Canonicity, Dual, Reader, Record, RotationScratch,
    Spiral, SpiralError, Winder,
};
use rayon::prelude::*;
use std::cell::RefCell;
use std::fmt;
use std::ops::ControlFlow;
use std::str::FromStr;

/// Smallest atom count from which some fullerenes have no face spiral at all (T-C380;
/// Wirz, Tonner, Avery, Schwerdtfeger, J. Chem. Inf. Model. 54 (2014) 121).
pub const FIRST_SPIRALLESS_ATOMS: u32 = 380;

/// Every complete list up to this size is found whole by pentagon starts alone. Checked per
/// size: counts equal to OEIS A007894 for n = 20..70 (tests), and equal to the count of the
/// search with hexagon starts for every n = 72..98 (measured, docs/performance.md, completeness
/// checks). All C100 is not: one cage has no pentagon-start spiral.
pub const PENTAGON_STARTS_CHECKED: u32 = 98;

/// Every IPR list up to this size is found whole by pentagon starts alone: counts equal to
/// OEIS A046880 for n = 60..90, 100 (tests) and 120 (measured), and to the count of the search
/// with hexagon starts for every other n = 92..118 (measured, docs/performance.md, completeness
/// checks).
pub const PENTAGON_STARTS_CHECKED_IPR: u32 = 120;

/// The search wants at least this many units so that rayon can balance the load and a resumed
/// run loses little work.
const TARGET_UNITS: usize = 2000;

/// What to enumerate: one atom count, one face set, complete list or IPR only.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub struct Spec {
    pub atoms: u32,
    pub face_set: FaceSet,
    pub ipr: bool,
    /// Also try sequences that start with a face larger than the cage's smallest (several
    /// times slower). [`Spec::fullerene`] sets it wherever smallest-face starts alone are not
    /// checked complete; clearing it there gives a faster search that may miss cages, setting
    /// it elsewhere re-checks the smallest-face search.
    pub all_starts: bool,
}

impl Spec {
    /// Fullerenes (pentagons and hexagons) with `atoms` carbons, searched from every start
    /// where pentagon starts alone are not known to find every cage, so that the default list
    /// is complete (below 380 atoms, see [`Spec::spiral_complete`]).
    pub fn fullerene(atoms: u64, ipr: bool) -> Result<Spec, SpiralError> {
        check_fullerene_atoms(atoms)?;
        let mut spec = Spec {
            atoms: atoms as u32,
            face_set: FaceSet::Fullerene,
            ipr,
            all_starts: false,
        };
        spec.all_starts = !spec.smallest_starts_checked();
        Ok(spec)
    }

    /// Number of faces of every cage of this size (Euler: n/2 + 2).
    pub fn faces(&self) -> usize {
        self.atoms as usize / 2 + 2
    }

    /// False from 380 atoms on, where some cages have no face spiral and are missed.
    pub fn spiral_complete(&self) -> bool {
        self.atoms < FIRST_SPIRALLESS_ATOMS
    }

    /// True where starting only on the smallest face size is known to find every cage (see
    /// [`PENTAGON_STARTS_CHECKED`]); never for face sets with squares, which were not checked.
    pub fn smallest_starts_checked(&self) -> bool {
        let checked = match (self.face_set, self.ipr) {
            (FaceSet::Fullerene, false) => PENTAGON_STARTS_CHECKED,
            (FaceSet::Fullerene, true) => PENTAGON_STARTS_CHECKED_IPR,
            _ => 0,
        };
        self.atoms <= checked
    }

    /// True where this search finds every cage that has a face spiral: with `all_starts`, or
    /// where the smallest-face starts are checked complete.
    pub fn starts_verified(&self) -> bool {
        self.all_starts || self.smallest_starts_checked()
    }
}

/// A deterministic piece of the search: every sequence that starts with `prefix`.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Unit {
    pub index: u32,
    pub prefix: Vec<u8>,
}

/// One isomer found by the search.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Found {
    pub spiral: Spiral,
    /// Order of the automorphism group (number of starts reproducing the canonical spiral).
    pub automorphisms: u32,
    /// No two pentagons share an edge.
    pub ipr: bool,
}

/// An isomer with its numbers in the trade's lists.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Isomer {
    pub spiral: Spiral,
    pub automorphisms: u32,
    pub ipr: bool,
    /// Position in the complete list of its size; `None` in an IPR-only or sharded run.
    pub number: Option<u64>,
    /// Position in the IPR list; `None` for non-IPR isomers or in a sharded run.
    pub ipr_number: Option<u64>,
    /// The unit that produced it.
    pub unit: u32,
}

/// Part K of N of a run split across processes or machines (K is 1-based); which units it runs
/// is decided by [`deal`].
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub struct Shard {
    pub index: u32,
    pub count: u32,
}

impl FromStr for Shard {
    type Err = String;

    fn from_str(s: &str) -> Result<Shard, String> {
        let bad = || format!("shard '{s}' is not K/N with 1 <= K <= N, e.g. --shard 2/8");
        let (k, n) = s.split_once('/').ok_or_else(bad)?;
        let index: u32 = k.trim().parse().map_err(|_| bad())?;
        let count: u32 = n.trim().parse().map_err(|_| bad())?;
        if index == 0 || count == 0 || index > count {
            return Err(bad());
        }
        Ok(Shard { index, count })
    }
}

impl fmt::Display for Shard {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}/{}", self.index, self.count)
    }
}

/// How to run an enumeration.
#[derive(Debug, Clone, Copy, Default)]
pub struct Options {
    /// Worker threads; 0 means rayon's default (one per core).
    pub threads: usize,
    pub shard: Option<Shard>,
}

/// Why an enumeration could not run.
#[derive(Debug)]
pub enum EnumerateError {
    /// The thread pool could not be built.
    Threads(String),
}

impl fmt::Display for EnumerateError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            EnumerateError::Threads(e) => write!(f, "cannot start worker threads: {e}"),
        }
    }
}

impl std::error::Error for EnumerateError {}

/// Which total curvature budgets r remaining faces can use up exactly.
struct Budget {
    /// `reachable[r]` has bit b set if r faces can have total curvature b.
    reachable: Vec<u32>,
}

impl Budget {
    fn new(set: FaceSet, faces: usize) -> Budget {
        let mut reachable = vec![0u32; faces + 1];
        reachable[0] = 1;
        for r in 1..=faces {
            let mut bits = 0u32;
            for &s in set.sizes() {
                let c = 6 - s as u32;
                bits |= (reachable[r - 1] << c) & 0x1FFF;
            }
            reachable[r] = bits;
        }
        Budget { reachable }
    }

    fn feasible(&self, remaining_faces: usize, budget: u32) -> bool {
        budget <= 12 && self.reachable[remaining_faces] & (1 << budget) != 0
    }
}

/// Completions are remembered for prefixes with at most this many faces to go: the first store
/// level of IPR runs and of face sets of three sizes (whose codes hold two bits a face in a
/// `u32`).
const MEMO_DEPTH: usize = 16;

/// The first store level of complete lists of two face sizes (fullerenes), whose codes hold one
/// bit a face. Above 16 faces to go the search tree of a complete list grows faster than its
/// boundaries vary: all C90 on one thread wound 54 million faces with more than 16 to go and
/// looked up 18.5 million boundaries at 16, 97 % of them stored already. Entering the store at
/// 22 faces to go cut the faces wound by the search from 130 to 64 million (the replayed ones
/// stay at about 105 million); interleaved on two threads, all C100 took 40-51 s at 22 or 25
/// against 61-73 s at 16, all C90 13.7-14.8 s against 16.2-17.4 s, all C60 unchanged
/// (measured 2026-12-02; docs/performance.md as of commit 7fac3de). IPR runs keep
/// [`MEMO_DEPTH`]: deeper levels showed no effect there.
const COMPLETE_MEMO_DEPTH: usize = 22;

/// The deepest first store level any run uses (sizes the per-level statistics).
const MAX_MEMO_DEPTH: usize = COMPLETE_MEMO_DEPTH;

// A code of either width must hold every face below the first store level.
const _: () = assert!(2 * MEMO_DEPTH <= 32 && COMPLETE_MEMO_DEPTH <= 32);
const _: () = assert!(MEMO_DEPTH <= MAX_MEMO_DEPTH);

/// Bits a face takes in a completion code: one where the face set has two sizes.
fn code_bits(set: FaceSet) -> u32 {
    if set.sizes().len() <= 2 {
        1
    } else {
        2
    }
}

/// The first store level for `spec` (see [`COMPLETE_MEMO_DEPTH`]).
fn memo_depth(spec: &Spec) -> usize {
    if code_bits(spec.face_set) == 1 && !spec.ipr {
        COMPLETE_MEMO_DEPTH
    } else {
        MEMO_DEPTH
    }
}

/// Below the first level, boundaries are looked up only every third level (with two faces to
/// go, five, eight, ...). Each lookup in the store is a cache miss, and a hit replays the
/// levels below it anyway; looking up every level took about 15 % more time and three times
/// the memory for all C70 and IPR C100 (measured 2026-12-02; docs/performance.md as of commit
/// a023b6b).
fn looked_up(r: usize, depth: usize) -> bool {
    r == depth || r % 3 == 2
}

/// IPR runs look boundaries up only with at most this many open faces. Hit rates by faces to
/// go and open faces, IPR C110 on one thread, every lookup counted: with 8 to go, 97-99 % for
/// 5-7 open faces, 63 % for 11, 38 % for 13, 20 % for 15 and 0-11 % for 16-18 (2.3 million
/// lookups); with 11 to go, 56 % for 9 and 14 % for 13. Interleaved on two threads against
/// the level-wide rule: IPR C120 42.5 / 40.7 s against 59.1 / 49.8 s, IPR C110 12.0 / 12.6 /
/// 11.5 s against 14.4 / 16.7 / 13.7 s; 11 to 15 open faces were alike within the noise. The
/// same cut at 14 open faces made all C100 slower (110 s against 80 s), so complete lists keep
/// the level-wide rule (measured 2026-12-02; docs/performance.md as of commit f0d5fe2).
const IPR_MOST_OPEN: usize = 13;

thread_local! {
    /// Per-thread search scratch and memo statistics.
    static MEMO: RefCell<Memo> = RefCell::new(Memo::default());
}

/// Empties the completion store (keeping its memory), so that the next run finds nothing
/// stored, as in a fresh process (benchmarks; results never depend on the store).
pub fn forget_completions() {
    store::forget();
}

/// One thread's side of the memo (see [`Search::solve`]).
#[derive(Default)]
struct Memo {
    spec: Option<Spec>,
    /// Completion codes of the prefixes being searched.
    stack: Vec<u32>,
    /// Codes copied out of the store for replay.
    replay: Vec<u32>,
    /// Boundaries are looked up with at most this many faces to go; lowered while running
    /// when lookups at the deepest level rarely hit (IPR boundaries seldom repeat).
    depth: usize,
    /// Lookups and hits per number of faces to go.
    lookups: [u64; MAX_MEMO_DEPTH + 1],
    hits: [u64; MAX_MEMO_DEPTH + 1],
    /// Levels below the deepest given up for the same reason; complete lists only, as IPR runs
    /// choose their lookups by the number of open faces (see [`IPR_MOST_OPEN`]).
    skip: [bool; MAX_MEMO_DEPTH + 1],
}

impl Memo {
    /// Resets the statistics if they were gathered for another run.
    fn prepare(&mut self, spec: &Spec) {
        if self.spec != Some(*spec) {
            self.spec = Some(*spec);
            self.depth = memo_depth(spec);
            self.lookups = [0; MAX_MEMO_DEPTH + 1];
            self.hits = [0; MAX_MEMO_DEPTH + 1];
            self.skip = [false; MAX_MEMO_DEPTH + 1];
        }
        self.stack.clear();
    }

    /// Counts a lookup with `r` faces to go; every 4096 lookups at a level, gives that level
    /// up if fewer than one in five hit, as storing misses then costs more than the hits save
    /// (the deepest level by lowering `depth`, so that the search enters the memo one level
    /// lower; any other by skipping it).
    fn count(&mut self, r: usize, hit: bool) {
        self.lookups[r] += 1;
        self.hits[r] += u64::from(hit);
        if self.lookups[r] % 4096 == 0 && self.hits[r] * 5 < self.lookups[r] {
            if r == self.depth {
                self.depth -= 1;
            } else {
                self.skip[r] = true;
            }
        }
    }

    /// Copies the stored completions of boundary `key` into `self.replay`; false if unknown.
    fn recall(&mut self, key: u128) -> bool {
        store::recall(key, &mut self.replay)
    }

    /// Stores `stack[from..]` as the completions of boundary `key`.
    fn remember(&mut self, key: u128, from: usize) {
        store::remember(key, &self.stack[from..]);
    }
}

/// Depth-first spiral search below a prefix.
struct Search<'a> {
    spec: &'a Spec,
    budget: Budget,
    winder: Winder,
    reader: Reader,
    /// Scratch for the dual of each completed sequence.
    dual: Dual,
    rotation_scratch: RotationScratch,
    total: usize,
    /// An IPR fullerene run, where [`pentagons_fit`] bounds the pentagons still to come
    /// (except while cutting units, see [`units`]).
    isolated: bool,
    /// Stop after this many isomers (a lookup that needs only the first few of a unit);
    /// `usize::MAX` for all.
    limit: usize,
    /// Isomers found so far.
    found: usize,
    /// Keep each isomer found, or only count them (a count of C200 would otherwise hold a
    /// unit's hundred thousand spirals per thread).
    keep: bool,
}

/// What the search's winders keep (see [`Record`]): rotations where completed sequences are
/// dense, triangles for IPR runs, which reach one rarely.
fn record_for(spec: &Spec) -> Record {
    if spec.ipr {
        Record::Triangles
    } else {
        Record::Rotations
    }
}

/// With isolated pentagons, at most this many of the `r` faces still to come can be pentagons:
/// each face of a spiral is joined to the one before it, so no two of them are consecutive,
/// and when the face the next one joins (the one just placed, or the earliest open face) is a
/// pentagon, the next one is not (curvature left counts pentagons left in a fullerene).
fn pentagons_fit(r: usize, pentagons: u32, next_touches_pentagon: bool) -> bool {
    pentagons as usize <= (r + usize::from(!next_touches_pentagon)) / 2
}

impl<'a> Search<'a> {
    fn new(spec: &'a Spec) -> Search<'a> {
        let total = spec.faces();
        Search {
            spec,
            budget: Budget::new(spec.face_set, total),
            winder: Winder::new(total, spec.ipr).recording(record_for(spec)),
            reader: Reader::default(),
            dual: Dual::from_triangles(&[], &[]),
            rotation_scratch: RotationScratch::default(),
            total,
            isolated: spec.ipr && spec.face_set == FaceSet::Fullerene,
            limit: usize::MAX,
            found: 0,
            keep: true,
        }
    }

    /// May a face of size `s` come next? The first face must be the smallest size of the set
    /// (unless `all_starts`); any later face may follow. Only the first face is restricted, so
    /// the completions of a prefix never depend on it (see [`Search::solve`]'s key).
    fn allowed(&self, s: u8) -> bool {
        self.spec.all_starts
            || !self.winder.sizes().is_empty()
            || s == self.spec.face_set.sizes()[0]
    }

    fn used_budget(&self) -> u32 {
        self.winder.sizes().iter().map(|&s| 6 - s as u32).sum()
    }

    /// Pushes `s` if the budget allows and it winds; true on success.
    fn try_push(&mut self, s: u8, used: u32) -> bool {
        let k = self.winder.sizes().len();
        let left = 12 - used;
        let c = 6 - s as u32;
        let r = self.total - k - 1;
        if c > left || !self.budget.feasible(r, left - c) {
            return false;
        }
        if self.isolated && !pentagons_fit(r, left - c, s == 5) {
            return false;
        }
        if self.winder.push(s).is_err() {
            return false;
        }
        // The head may have changed: a pentagon there also keeps the next face a hexagon.
        let head_pentagon = self.isolated && self.winder.earliest_open_size() == Some(5);
        let fits = !head_pentagon || pentagons_fit(r, left - c, true);
        if fits && self.can_close(left - c) {
            true
        } else {
            self.winder.pop();
            false
        }
    }

    /// Closure bound: each middle face of size s lowers the boundary's free valency by at most
    /// s - 2 (it must keep one free edge), and the last face needs exactly its own size left, so
    /// with r faces to come and curvature `left` still to place the free valency can be at most
    /// sum(s - 2) + 2 = 4r - left + 2.
    fn can_close(&self, left: u32) -> bool {
        let r = (self.total - self.winder.sizes().len()) as u32;
        r == 0 || r == self.total as u32 - 1 || self.winder.open_valency() <= 4 * r + 2 - left
    }

    /// The viable prefixes one face longer than those of `level`, in spiral order.
    fn next_level(&mut self, level: &[Winder]) -> Vec<Winder> {
        let mut next = Vec::new();
        for w in level {
            self.winder.clone_from(w);
            let used = self.used_budget();
            for &s in self.spec.face_set.sizes() {
                if self.allowed(s) && self.try_push(s, used) {
                    next.push(self.winder.clone());
                    self.winder.pop();
                }
            }
        }
        next
    }

    /// Visits every canonical sequence below the current prefix (or the first
    /// [`Search::limit`]). Near the end of the sequence the search is handed to
    /// [`Search::solve`], which shares work between equal boundaries.
    ///
    /// Iterative, with an explicit stack of one small entry per face: the levels above the
    /// store are as many as the cage has faces less [`COMPLETE_MEMO_DEPTH`], and recursing
    /// once per face overflowed a worker thread's stack from about C10000 on (C100000 aborted).
    /// `solve` below it recurses at most [`MAX_MEMO_DEPTH`] levels.
    fn descend(&mut self, used: u32, out: &mut Vec<Found>, memo: &mut Memo) {
        let sizes = self.spec.face_set.sizes();
        // Per wound level from the starting prefix on: curvature used, next size to try.
        let mut levels: Vec<(u32, usize)> = vec![(used, 0)];
        while let Some(&(used, next)) = levels.last() {
            let enter_store = next == 0 && self.total - self.winder.sizes().len() <= memo.depth;
            if enter_store {
                let mark = memo.stack.len();
                self.solve(used, out, memo);
                memo.stack.truncate(mark);
            }
            if enter_store || next == sizes.len() || self.full() {
                levels.pop();
                if !levels.is_empty() {
                    self.winder.pop();
                }
                continue;
            }
            if let Some(top) = levels.last_mut() {
                top.1 = next + 1;
            }
            let s = sizes[next];
            if self.allowed(s) && self.try_push(s, used) {
                levels.push((used + 6 - s as u32, 0));
            }
        }
    }

    /// True once the search has found as many isomers as it was asked for.
    fn full(&self) -> bool {
        self.found >= self.limit
    }

    /// Runs every completion of the current prefix through [`Search::leaf`] and appends to
    /// `memo.stack` a code for each (the remaining faces, first face lowest, [`code_bits`]
    /// each), in search order.
    ///
    /// Which completions exist depends only on the open boundary (its free valencies, and for
    /// IPR which faces are pentagons), the faces left and the curvature left, not on how the
    /// boundary was reached; most prefixes near the end of the sequence share a boundary with an
    /// earlier one (about four nodes per distinct boundary for C60), so completions found once
    /// are replayed instead of searched again. Replaying winds the same faces in the same order,
    /// so the output does not depend on what the store holds.
    fn solve(&mut self, used: u32, out: &mut Vec<Found>, memo: &mut Memo) {
        let r = self.total - self.winder.sizes().len();
        if r == 0 {
            self.leaf(out);
            memo.stack.push(0);
            return;
        }
        let left = 12 - used;
        // Everything besides the boundary that decides the completions. The atom count is not
        // needed: winding depends on it only through the faces to go, so sizes share entries.
        // Nor are the first face and `all_starts`, which restrict only the first face
        // ([`Search::allowed`]): prefixes that start on a pentagon or a hexagon share entries.
        let set = match self.spec.face_set {
            FaceSet::Fullerene => 0,
            FaceSet::SquareHexagon => 1,
            FaceSet::SquarePentagonHexagon => 2,
            FaceSet::PentagonHexagonHeptagon { .. } => 3,
        };
        let header = (r as u32) << 12 | left << 8 | set << 6 | u32::from(self.spec.ipr) << 5;
        let key = if r <= memo.depth && looked_up(r, memo.depth) && self.worth_looking_up(r, memo) {
            self.winder.boundary_key(header, self.spec.ipr)
        } else {
            None
        };
        if let Some(k) = key {
            let found = memo.recall(k);
            memo.count(r, found);
            if found {
                self.replay(r, out, memo);
                return;
            }
        }
        let mark = memo.stack.len();
        let bits = code_bits(self.spec.face_set);
        for (i, &s) in self.spec.face_set.sizes().iter().enumerate() {
            if self.full() {
                // Stopped early: the codes below `mark` are not every completion, so they are
                // not stored.
                return;
            }
            if self.allowed(s) && self.try_push(s, used) {
                let child = memo.stack.len();
                self.solve(used + 6 - s as u32, out, memo);
                for code in &mut memo.stack[child..] {
                    *code = *code << bits | i as u32;
                }
                self.winder.pop();
            }
        }
        if let Some(k) = key {
            if !self.full() {
                memo.remember(k, mark);
            }
        }
    }

    /// Whether the boundary at `r` faces to go is worth a lookup (each is a cache miss, and a
    /// miss also stores the completions found). Complete lists give up levels that rarely hit
    /// (see [`Memo::count`]). IPR runs decide by the number of open faces instead, as their hit
    /// rate falls with it at every level (figures at [`IPR_MOST_OPEN`]).
    fn worth_looking_up(&self, r: usize, memo: &Memo) -> bool {
        if self.spec.ipr {
            self.winder.open_faces() <= IPR_MOST_OPEN
        } else {
            !memo.skip[r]
        }
    }

    /// Winds the completions in `memo.replay` (each `r` faces) onto the current prefix,
    /// visiting each leaf; consecutive completions share their first faces, which are kept
    /// wound.
    fn replay(&mut self, r: usize, out: &mut Vec<Found>, memo: &mut Memo) {
        let sizes = self.spec.face_set.sizes();
        let bits = code_bits(self.spec.face_set);
        let mask = (1u32 << bits) - 1;
        let codes = std::mem::take(&mut memo.replay);
        let mut wound = 0;
        let mut previous = 0u32;
        for &code in &codes {
            let keep = if wound == 0 {
                0
            } else {
                (((previous ^ code).trailing_zeros() / bits) as usize).min(r)
            };
            for _ in keep..wound {
                self.winder.pop();
            }
            for i in keep..r {
                let s = sizes[(code >> (bits as usize * i) & mask) as usize];
                self.winder.push_known(s);
            }
            wound = r;
            previous = code;
            self.leaf(out);
            memo.stack.push(code);
            if self.full() {
                break;
            }
        }
        for _ in 0..wound {
            self.winder.pop();
        }
        memo.replay = codes;
    }

    fn leaf(&mut self, out: &mut Vec<Found>) {
        let sizes = self.winder.sizes();
        match self.winder.record() {
            Record::Rotations => self.dual.assign(sizes, self.winder.rotations()),
            Record::Triangles => {
                self.dual
                    .rebuild(sizes, self.winder.triangles(), &mut self.rotation_scratch)
            }
        }
        if let Canonicity::Canonical { automorphisms } =
            test_canonical(&self.dual, sizes, &mut self.reader)
        {
            self.found += 1;
            if self.keep {
                let ipr = self.spec.ipr || !self.dual.pentagons_touch();
                out.push(Found {
                    spiral: Spiral::from_wound(sizes.to_vec()),
                    automorphisms,
                    ipr,
                });
            }
        }
    }
}

/// The units of a run, in spiral order. The cut depth grows until there are at least
/// [`TARGET_UNITS`] units (or the whole sequence is reached), so the list depends on `spec` only.
pub fn units(spec: &Spec) -> Vec<Unit> {
    if spec.face_set != FaceSet::Fullerene {
        return faces::units(spec);
    }
    let mut search = Search::new(spec);
    // Catalogues and shards record units by index, so the unit list must stay as it was when
    // they were written: the isolated-pentagon bound, added later, only prunes below the units
    // (a unit it rules out runs empty).
    search.isolated = false;
    // Level by level, keeping each prefix wound: the top of the tree is searched once, however
    // deep the cut ends up (IPR trees are narrow, so the cut can be thirty faces down).
    let mut level = vec![Winder::new(spec.faces(), spec.ipr).recording(record_for(spec))];
    let mut depth = 0;
    loop {
        if depth >= 2.min(spec.faces()) && (level.len() >= TARGET_UNITS || depth >= spec.faces()) {
            return level
                .iter()
                .enumerate()
                .map(|(i, w)| Unit {
                    index: i as u32,
                    prefix: w.sizes().to_vec(),
                })
                .collect();
        }
        level = search.next_level(&level);
        depth += 1;
    }
}

/// Levels below a unit's prefix at which the unit is cut into pieces that idle threads can take.
/// Unit sizes differ by orders of magnitude, and without this one huge unit at the end of a
/// window leaves the other threads waiting (most of a C100 run was its last window). Pieces are
/// concatenated in order, so output does not change.
const PIECE_LEVELS: usize = 3;

/// Every isomer whose canonical spiral starts with the unit's prefix, in spiral order.
pub fn run_unit(spec: &Spec, unit: &Unit) -> Vec<Found> {
    run_unit_with(spec, unit, usize::MAX, true).0
}

/// The first `limit` isomers of [`run_unit`]'s list (all of them if it is shorter), without
/// searching past the last one returned. A lookup of C1000:all-1 needs one isomer of a unit
/// whose whole list would never finish. With a limit the unit runs on the calling thread, as
/// its pieces would have to wait for the ones before them anyway.
pub fn run_unit_limited(spec: &Spec, unit: &Unit, limit: usize) -> Vec<Found> {
    run_unit_with(spec, unit, limit, true).0
}

/// The number of isomers [`run_unit`] would return, keeping none of them.
pub fn count_unit(spec: &Spec, unit: &Unit) -> u64 {
    run_unit_with(spec, unit, usize::MAX, false).1
}

/// The unit's first `limit` isomers (kept if `keep`) and how many there were.
fn run_unit_with(spec: &Spec, unit: &Unit, limit: usize, keep: bool) -> (Vec<Found>, u64) {
    if spec.face_set != FaceSet::Fullerene {
        let mut found = faces::run_unit(spec, unit);
        found.truncate(limit);
        let count = found.len() as u64;
        if !keep {
            found.clear();
        }
        return (found, count);
    }
    store::widen(spec.all_starts);
    let mut search = Search::new(spec);
    let mut used = 0;
    for &s in &unit.prefix {
        if !search.try_push(s, used) {
            return (Vec::new(), 0);
        }
        used += 6 - s as u32;
    }
    // Only cut where the pieces stay above the completion store's levels and the leaves.
    if limit < usize::MAX || spec.faces() <= unit.prefix.len() + memo_depth(spec) + PIECE_LEVELS {
        return run_piece(spec, &search.winder, limit, keep);
    }
    let mut pieces = vec![search.winder.clone()];
    for _ in 0..PIECE_LEVELS {
        pieces = search.next_level(&pieces);
    }
    let found: Vec<(Vec<Found>, u64)> = pieces
        .par_iter()
        .map(|w| run_piece(spec, w, usize::MAX, keep))
        .collect();
    let count = found.iter().map(|f| f.1).sum();
    (found.into_iter().flat_map(|f| f.0).collect(), count)
}

/// Every canonical sequence below the prefix wound in `prefix` (the first `limit`), on the
/// calling thread, kept if `keep`, and their number.
fn run_piece(spec: &Spec, prefix: &Winder, limit: usize, keep: bool) -> (Vec<Found>, u64) {
    let mut search = Search::new(spec);
    search.limit = limit;
    search.keep = keep;
    search.winder.clone_from(prefix);
    let used = search.used_budget();
    let mut out = Vec::new();
    // No parallel work may start inside this borrow: a thread waiting on it could be handed
    // another piece and borrow the memo twice.
    MEMO.with_borrow_mut(|memo| {
        memo.prepare(spec);
        search.descend(used, &mut out, memo);
    });
    (out, search.found as u64)
}

/// Streams every isomer in increasing spiral order. Memory stays bounded: units are run in
/// windows of 256 per thread, and each window's results are handed on before the next starts;
/// the completion store has a fixed cap.
/// `progress(done, total)` is called after each window with counts of this shard's units.
pub fn enumerate(
    spec: &Spec,
    opts: &Options,
    progress: impl FnMut(usize, usize),
    mut sink: impl FnMut(Isomer),
) -> Result<(), EnumerateError> {
    enumerate_until(spec, opts, progress, |iso| {
        sink(iso);
        ControlFlow::Continue(())
    })
}

/// As [`enumerate`], but the sink may stop the run early.
pub fn enumerate_until(
    spec: &Spec,
    opts: &Options,
    progress: impl FnMut(usize, usize),
    mut sink: impl FnMut(Isomer) -> ControlFlow<()>,
) -> Result<(), EnumerateError> {
    enumerate_mapped(spec, opts, progress, |_| (), |iso, ()| sink(iso))
}

/// Runs the given units on `threads` workers in windows, applying `map` to every isomer on the
/// worker that found it (e.g. scoring), and hands each window's results to `on_window` in unit
/// order. Callers that persist results (the catalogue) commit one window at a time, so an
/// interrupted run loses at most the window in flight.
pub fn run_units_mapped<R: Send>(
    spec: &Spec,
    units: &[Unit],
    threads: usize,
    map: impl Fn(&Found) -> R + Sync,
    mut on_window: impl FnMut(Vec<(u32, Vec<(Found, R)>)>) -> ControlFlow<()>,
) -> Result<(), EnumerateError> {
    let pool = pool(threads)?;
    let window = window_units(spec, pool.current_num_threads());
    for chunk in units.chunks(window) {
        let results: Vec<(u32, Vec<(Found, R)>)> = pool.install(|| {
            chunk
                .par_iter()
                .map(|u| {
                    let found = run_unit(spec, u);
                    let mapped = found.into_iter().map(|f| {
                        let r = map(&f);
                        (f, r)
                    });
                    (u.index, mapped.collect())
                })
                .collect()
        });
        if on_window(results).is_break() {
            break;
        }
    }
    Ok(())
}

/// As [`enumerate_until`], with `map` applied in parallel to every isomer before numbering.
pub fn enumerate_mapped<R: Send>(
    spec: &Spec,
    opts: &Options,
    mut progress: impl FnMut(usize, usize),
    map: impl Fn(&Found) -> R + Sync,
    mut sink: impl FnMut(Isomer, R) -> ControlFlow<()>,
) -> Result<(), EnumerateError> {
    let mine = own_units(spec, opts);
    let numbered = opts.shard.is_none();
    let (mut number, mut ipr_number, mut done) = (0u64, 0u64, 0usize);
    run_units_mapped(spec, &mine, opts.threads, map, |window| {
        done += window.len();
        progress(done, mine.len());
        for (unit, found) in window {
            for (f, r) in found {
                number += 1;
                ipr_number += u64::from(f.ipr);
                let iso = Isomer {
                    number: (numbered && !spec.ipr).then_some(number),
                    ipr_number: (numbered && f.ipr).then_some(ipr_number),
                    spiral: f.spiral,
                    automorphisms: f.automorphisms,
                    ipr: f.ipr,
                    unit,
                };
                sink(iso, r)?;
            }
        }
        ControlFlow::Continue(())
    })
}

/// Number of isomers of a size (all units, every thread).
pub fn count(spec: &Spec, threads: usize) -> Result<u64, EnumerateError> {
    let opts = Options {
        threads,
        shard: None,
    };
    count_run(spec, &opts, |_, _| {})
}

/// The units this run owns: all of them, or those [`deal`] gives its shard.
fn own_units(spec: &Spec, opts: &Options) -> Vec<Unit> {
    let all = units(spec);
    let Some(shard) = opts.shard else {
        return all;
    };
    let owners = deal::owners(all.len() as u32, shard.count);
    all.into_iter()
        .filter(|u| owners[u.index as usize] + 1 == shard.index)
        .collect()
}

/// Number of isomers of a run (this shard's units), keeping none of them, so that memory is
/// the store and the threads' scratch whatever the size. `progress(done, total)` is called
/// after each window of a few units per thread.
pub fn count_run(
    spec: &Spec,
    opts: &Options,
    mut progress: impl FnMut(usize, usize),
) -> Result<u64, EnumerateError> {
    let pool = pool(opts.threads)?;
    let mine = own_units(spec, opts);
    let (mut total, mut done) = (0u64, 0usize);
    progress(0, mine.len());
    for window in mine.chunks(estimate::COUNT_WINDOW * pool.current_num_threads()) {
        total += pool.install(|| window.par_iter().map(|u| count_unit(spec, u)).sum::<u64>());
        done += window.len();
        progress(done, mine.len());
    }
    Ok(total)
}

/// Most worker threads a run starts: the parallelism the operating system grants this process
/// (its cores, or fewer under an affinity mask or a cgroup quota). More threads only share the
/// same cores, and each costs a stack and search scratch of its own; a request for 100000
/// threads spent its time starting them. Larger requests are capped (the CLI says so).
pub fn max_threads() -> usize {
    std::thread::available_parallelism().map_or(1, std::num::NonZeroUsize::get)
}

/// The worker threads a run with `requested` threads (0: one per core) starts.
pub fn worker_threads(requested: usize) -> usize {
    let cap = max_threads();
    if requested == 0 {
        cap
    } else {
        requested.min(cap)
    }
}

fn pool(threads: usize) -> Result<rayon::ThreadPool, EnumerateError> {
    rayon::ThreadPoolBuilder::new()
        .num_threads(worker_threads(threads))
        .build()
        .map_err(|e| EnumerateError::Threads(e.to_string()))
}

/// Most isomers a window of results should hold at once (about 2-3 GB when scored).
const WINDOW_ISOMERS: f64 = 4e6;

/// Units per window of [`run_units_mapped`]: 256 per thread, fewer where the units are so
/// large that their isomers would fill memory (from all C130 on; a window of all C200 would
/// hold some 50 million scored isomers). Windows change memory, never output.
pub(crate) fn window_units(spec: &Spec, threads: usize) -> usize {
    let threads = threads.max(1);
    // Every run has at least TARGET_UNITS units, so this bounds the mean unit.
    let per_unit = estimate::isomers(spec).0 / TARGET_UNITS as f64;
    let fit = (WINDOW_ISOMERS / per_unit.max(1.0)) as usize;
    (estimate::LIST_WINDOW * threads).min(fit).max(threads)
}

/// The isomer with this number: in the complete list, or in the IPR list when `spec.ipr`. Runs
/// only the units up to the one holding it (see [`isomer_numbered`]).
pub fn find_by_number(spec: &Spec, number: u64) -> Option<Isomer> {
    isomer_numbered(spec, number, |_, _| {})
}

/// Complete-list and IPR-list numbers of a canonical fullerene spiral, found by running only the
/// units on one side of it (see [`number_of`]). `(None, None)` if the spiral is not canonical or
/// not a fullerene.
pub fn numbers_of(spiral: &Spiral) -> (Option<u64>, Option<u64>) {
    let number = |ipr| list_number_of(spiral, ipr).ok().flatten();
    (number(false), number(true))
}

/// Position of a canonical spiral in the complete list (`ipr` false) or the IPR list of its size;
/// `Ok(None)` if it is not on that list (or not a fullerene spiral).
pub fn list_number_of(spiral: &Spiral, ipr: bool) -> Result<Option<u64>, EnumerateError> {
    let Ok(spec) = Spec::fullerene(spiral.atoms() as u64, ipr) else {
        return Ok(None);
    };
    Ok(number_of(&spec, spiral, |_, _| {}).and_then(
        |iso| {
            if ipr {
                iso.ipr_number
            } else {
                iso.number
            }
        },
    ))
}

/// Every canonical spiral of the fullerenes with `atoms` carbons, on one thread (unit tests of
/// other modules use these as their cages).
#[cfg(test)]
pub(crate) fn fullerene_spirals(atoms: u64) -> Vec<Spiral> {
    let spec = Spec::fullerene(atoms, false).expect("valid size");
    let opts = Options {
        threads: 1,
        shard: None,
    };
    let mut out = Vec::new();
    enumerate(&spec, &opts, |_, _| {}, |iso| out.push(iso.spiral)).expect("enumeration runs");
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shard_parsing() {
        assert_eq!("2/3".parse::<Shard>(), Ok(Shard { index: 2, count: 3 }));
        assert!("0/3".parse::<Shard>().is_err());
        assert!("4/3".parse::<Shard>().is_err());
        assert!("x".parse::<Shard>().is_err());
    }

    #[test]
    fn small_counts_match_oeis() {
        // OEIS A007894: 1, 0, 1, 1, 2, 3, 6, 6, 15, 17, 40 fullerenes for n = 20..40.
        let expected = [
            (20, 1),
            (24, 1),
            (26, 1),
            (28, 2),
            (30, 3),
            (32, 6),
            (34, 6),
            (36, 15),
        ];
        for (n, c) in expected {
            let spec = Spec::fullerene(n, false).unwrap();
            assert_eq!(count(&spec, 1).unwrap(), c, "C{n}");
        }
    }
}
