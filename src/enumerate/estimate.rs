//! What an enumeration will cost before it starts: isomers, time and memory, from a model
//! fitted to published isomer counts and to runs measured on the project's 2-core machine.
//!
//! The point is to warn before a run that cannot finish (all C150, IPR C200, C100000), not to
//! predict minutes: within a factor of about two of the measured runs (C80-C104; all C104 with
//! pentagon starts, 2026-12-03: 155 s CPU against 132 s modelled, 0.92 GB against 0.94 GB),
//! orders of magnitude far beyond them. Printing them, and deciding when a run is long enough to warrant it, is
//! left to the CLI; this module only computes.
//!
//! * **Isomers.** The published count where the tables reach (OEIS A007894 to C100, A046880 to
//!   C120). Beyond, `c (n - n0)^9`: the number of fullerenes grows as n^9 (Thurston, "Shapes of
//!   polyhedra and triangulations of the sphere", Geom. Topol. Monographs 1 (1998) 511; from
//!   memory), and the shift n0 with the factor c are fitted through the two published counts
//!   20 atoms apart at the table's end (all: C80 and C100; IPR: C100 and C120), which absorbs
//!   the pre-asymptotic growth. It gives 2.1e8 for all C200 and 1.2e7 for IPR C200, against
//!   214,127,713 and 15,655,672 published (OEIS, from memory; see the tests).
//! * **Time.** Isomers times a cost per isomer, anchored at the largest runs measured
//!   (`REFERENCES`). The cost grows like n with pentagon starts only (each isomer is
//!   completed once per pentagon start that completes, at most 120 of them, and each
//!   completion winds and reads O(n) faces) and like n^2 with hexagon starts (completed
//!   hexagon-start sequences per isomer grow with the hexagon count, n/2 - 10). Measured per
//!   isomer over C72-C98 on 2 threads: 0.15-0.17 ms (pentagon starts) and 0.46-0.88 ms
//!   (hexagon starts, about n^2.1). Scoring adds the Hückel eigenvalue problem, O(n^3):
//!   0.8 ms per C100 isomer and core. Threads divide it (2 threads took 0.50-0.57 of 1).
//! * **Memory.** The completion store at its cap (`store::most_bytes`), the isomers of the
//!   units held at once (a window of units per thread) and each thread's search scratch.

use super::{lookup, store, units, window_units, worker_threads, Found, Spec};

/// A measured run that anchors the time model: on 2 threads, `--count-only`.
struct Reference {
    atoms: f64,
    seconds: f64,
    isomers: f64,
    /// Power of n in the cost per isomer (see the module doc).
    power: f64,
}

/// docs/performance.md (2026-12-02/03, the 2-core sandbox, `enumerate N --count-only --quiet
/// --threads 2`): all C100 with pentagon starts 43.8-49.3 s, all C100 default (hexagon
/// starts) 224-249 s, IPR C120 29.3-31.4 s, IPR C118 with hexagon starts 137.1 s.
const REFERENCES: [[Reference; 2]; 2] = [
    // complete lists: [pentagon starts, hexagon starts too]
    [
        Reference {
            atoms: 100.0,
            seconds: 45.0,
            isomers: 285_913.0,
            power: 1.0,
        },
        Reference {
            atoms: 100.0,
            seconds: 235.0,
            isomers: 285_914.0,
            power: 2.0,
        },
    ],
    // IPR lists
    [
        Reference {
            atoms: 120.0,
            seconds: 30.0,
            isomers: 10_774.0,
            power: 1.0,
        },
        Reference {
            atoms: 118.0,
            seconds: 137.1,
            isomers: 8_148.0,
            power: 2.0,
        },
    ],
];

/// Threads of the reference runs.
const REFERENCE_THREADS: f64 = 2.0;

/// Scoring one C100 isomer (the scalar descriptor set) takes 0.73-0.85 ms per core
/// (docs/performance.md, criterion, 2026-12-02); it grows as n^3 (dense eigenvalues).
const SCORE_SECONDS_C100: f64 = 0.8e-3;

/// Memory a scored isomer holds while its window waits to be printed or stored: the
/// descriptors with their NMR pattern, an upper bound checked against the type's size in the
/// tests.
pub const SCORED_BYTES: u64 = 512;

/// Search scratch per face and thread (winder, spiral reader, dual and rotation scratch), an
/// upper bound read off their per-face arrays.
const SCRATCH_BYTES_PER_FACE: u64 = 512;

/// Units per thread held at once: [`super::run_units_mapped`]'s window, and the counting
/// window of [`super::count_run`].
pub(super) const LIST_WINDOW: usize = 256;
pub(super) const COUNT_WINDOW: usize = 8;

/// What a run is expected to cost.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Estimate {
    /// Isomers on the whole list (not only this shard's part).
    pub isomers: f64,
    /// `isomers` is a published count rather than the model's.
    pub published: bool,
    /// Wall-clock time of the run (this shard's part).
    pub seconds: f64,
    /// Peak memory, at most about this.
    pub bytes: f64,
    /// Worker threads assumed (the request capped as the run will cap it).
    pub threads: usize,
}

/// What the run will do with each isomer.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Work {
    /// Count only (`--count-only`).
    Count,
    /// Score and list or store every isomer.
    Score,
}

/// The expected isomer count of `spec`'s list and whether it is the published one.
pub fn isomers(spec: &Spec) -> (f64, bool) {
    if let Some(c) = lookup::table_count(spec.atoms, spec.ipr) {
        return (c as f64, true);
    }
    let last = if spec.ipr { 120 } else { 100 };
    let model = shifted_power(last - 20, last, spec.ipr).map_or(0.0, |(c, n0)| {
        c * (f64::from(spec.atoms) - n0).max(0.0).powi(9)
    });
    (model, false)
}

/// `(c, n0)` with `c (n - n0)^9` through the published counts at `a` and `b` atoms.
fn shifted_power(a: u32, b: u32, ipr: bool) -> Option<(f64, f64)> {
    let ca = lookup::table_count(a, ipr)? as f64;
    let cb = lookup::table_count(b, ipr)? as f64;
    let ratio = (cb / ca).powf(1.0 / 9.0);
    // (b - n0) = ratio (a - n0)
    let n0 = (ratio * f64::from(a) - f64::from(b)) / (ratio - 1.0);
    let c = cb / (f64::from(b) - n0).powi(9);
    Some((c, n0))
}

/// Time and memory of enumerating `spec` on `threads` workers (0: one per core), as shard
/// part of `shards`, doing `work` with each isomer, on this machine: the thread count is capped
/// at its cores as the run will cap it.
pub fn estimate(spec: &Spec, threads: usize, shards: u32, work: Work) -> Estimate {
    estimate_on(spec, worker_threads(threads), shards, work)
}

/// As [`estimate`], for a run on `threads` workers of another machine (a cluster node), so not
/// capped at this one's cores. Times are this machine's per core.
pub fn estimate_on(spec: &Spec, threads: usize, shards: u32, work: Work) -> Estimate {
    let threads = threads.max(1);
    let (isomers, published) = isomers(spec);
    let n = f64::from(spec.atoms);
    let r = &REFERENCES[usize::from(spec.ipr)][usize::from(spec.all_starts)];
    let search = r.seconds / r.isomers * (n / r.atoms).powf(r.power) * REFERENCE_THREADS;
    let score = match work {
        Work::Count => 0.0,
        Work::Score => SCORE_SECONDS_C100 * (n / 100.0).powi(3),
    };
    let part = f64::from(shards.max(1));
    let seconds = isomers / part * (search + score) / threads as f64;

    let unit_count = units(spec).len().max(1) as f64;
    let faces = spec.faces() as u64;
    let per_isomer = (std::mem::size_of::<Found>() as u64 + faces + 16)
        + if work == Work::Score { SCORED_BYTES } else { 0 };
    // Counting keeps no isomer; listing holds a window of units' isomers at once, and a shard
    // has only its share of the units to fill the window with.
    let shard_units = (unit_count / part).ceil();
    let held = match work {
        Work::Count => 0.0,
        Work::Score => isomers * (window_units(spec, threads) as f64).min(shard_units) / unit_count,
    };
    let bytes = store::most_bytes(spec.all_starts) as f64
        + held * per_isomer as f64
        + (threads as u64 * faces * SCRATCH_BYTES_PER_FACE) as f64;
    Estimate {
        isomers,
        published,
        seconds,
        bytes,
        threads,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn spec(atoms: u64, ipr: bool) -> Spec {
        Spec::fullerene(atoms, ipr).expect("valid size")
    }

    #[test]
    fn modelled_counts_are_near_the_published_c200_counts() {
        // OEIS A007894 (from memory): 214,127,713 fullerenes with 200 atoms.
        let (all, published) = isomers(&spec(200, false));
        assert!(!published);
        assert!((all / 214_127_713.0 - 1.0).abs() < 0.25, "all C200: {all}");
        // OEIS A046880 (from memory): 15,655,672 IPR fullerenes with 200 atoms.
        let (ipr, _) = isomers(&spec(200, true));
        assert!((ipr / 15_655_672.0 - 1.0).abs() < 0.4, "IPR C200: {ipr}");
    }

    #[test]
    fn the_model_passes_through_its_anchors_and_grows_as_n_to_the_9th() {
        // The two anchors are reproduced exactly (OEIS A007894: C80 31,924, C100 285,914).
        let (c, n0) = shifted_power(80, 100, false).expect("in the table");
        assert!((c * (80.0 - n0).powi(9) / 31_924.0 - 1.0).abs() < 1e-9);
        assert!((c * (100.0 - n0).powi(9) / 285_914.0 - 1.0).abs() < 1e-9);
        // Far out, doubling n multiplies the count by about 2^9 (Thurston's exponent).
        let (a, _) = isomers(&spec(20_000, false));
        let (b, _) = isomers(&spec(40_000, false));
        assert!((b / a / 512.0 - 1.0).abs() < 0.01);
    }

    #[test]
    fn estimates_reproduce_the_measured_runs_they_were_not_anchored_on() {
        // docs/performance.md, 2 threads: all C90 with pentagon starts took 24.7 s, all C80
        // 4.8 s, IPR C110 6.3 s (completeness-check table). The model, anchored at C100 and
        // IPR C120, must land within a factor of three.
        for (atoms, ipr, measured) in [(90, false, 24.7), (80, false, 4.8), (110, true, 6.3)] {
            let mut s = spec(atoms, ipr);
            s.all_starts = false;
            let e = estimate(&s, 2, 1, Work::Count);
            let ratio = e.seconds * 2.0 / e.threads as f64 / measured;
            assert!((1.0 / 3.0..3.0).contains(&ratio), "C{atoms}: {ratio}");
        }
    }

    #[test]
    fn scored_isomers_fit_the_bytes_allowed_for_them() {
        let d = std::mem::size_of::<crate::score::Descriptors>() as u64;
        // The NMR pattern's heap part: a few dozen (lines, intensity) pairs at most for the
        // sizes that get listed.
        assert!(d + 64 * 8 <= SCORED_BYTES + 256, "{d} bytes");
    }

    #[test]
    fn absurd_sizes_are_flagged_by_time_and_memory_is_bounded() {
        let e = estimate(&spec(100_000, false), 2, 1, Work::Count);
        assert!(e.seconds > 1e20);
        // Counting keeps no isomer: the store's cap and the threads' scratch.
        assert!(e.bytes < 3e9, "{}", e.bytes);
        let small = estimate(&spec(60, false), 2, 1, Work::Count);
        assert!(small.published && small.isomers == 1812.0 && small.seconds < 5.0);
    }
}
