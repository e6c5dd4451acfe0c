//! Sizing a cluster run before submitting it: units, isomers, CPU time and memory of each size,
//! measured on a sample where a CPU-time budget allows and modelled where it does not.
//!
//! A sample runs whole units, enumerated and scored as `enumerate --catalogue` does, on one
//! thread, in the fixed pseudo-random order of `enumerate::deal` (so the first units sampled
//! are a simple random sample of the run's units), until its share of the budget is spent or
//! every unit has run. Search time is the sample mean scaled to all units, with a standard error
//! from the spread between units (sampling without replacement: Cochran, *Sampling Techniques*,
//! 3rd ed. 1977, eq. 2.12, finite-population correction included); scoring time is the sample's
//! cost per isomer times the isomer count, published where known, else scaled from the sample
//! (then unreliable: isomers sit in few units, and a sample that missed them all understates
//! both the count and its error). A sample that covers every unit is exact.
//!
//! A [`Planner`] shares one budget over many sizes, smallest first: each size may spend the
//! budget left divided by the sizes still able to use it, and what a small size leaves goes to
//! the larger ones. A size whose mean unit would not fit its share (by the model of
//! `enumerate::estimate`, which a unit cannot be stopped part-way to check) is not sampled: its
//! row is the model's (published or fitted isomer count, cost per isomer anchored at measured
//! runs), with the model's stated accuracy. Memory is the model's bound for a task of the
//! requested threads and shards; the sample's peak resident size is reported beside it. This
//! module measures and estimates; it writes nothing and prints nothing.

use crate::enumerate::{self, deal, estimate as model, Spec};
use crate::score;
use std::time::Duration;

/// Where a row's figures come from.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Source {
    /// Every unit ran: counts and times are measured.
    Exact,
    /// Some units ran; totals are scaled from them, with a sampling standard error.
    Sampled,
    /// No unit ran: the model of `enumerate::estimate`.
    Modelled,
}

/// How far a modelled time may be off: `enumerate::estimate` lands within a factor of about
/// two of the measured runs it was checked against (C80-C120); further out it extrapolates
/// the fitted growth, so this is what can be stated, not a bound.
pub const MODEL_FACTOR: f64 = 2.0;

/// What is known or estimated of one size.
#[derive(Debug, Clone, PartialEq)]
pub struct Estimate {
    pub spec: Spec,
    pub source: Source,
    /// Units the run is cut into (the grain of shards and resume).
    pub units: u32,
    /// Units the sample ran (0 when modelled).
    pub sampled: u32,
    /// Isomers of the whole run: exact when every unit was sampled or the count is published.
    pub isomers: f64,
    /// Standard error of `isomers` (0 when exact or published, NaN when one unit gives no
    /// spread; a modelled count beyond the published tables has no standard error either).
    pub isomers_error: f64,
    /// True when `isomers` is the published count (OEIS A007894 / A046880, see
    /// `enumerate::published_count`).
    pub isomers_published: bool,
    /// True when `isomers` is the model's count (beyond the published tables, for modelled rows
    /// and part samples alike).
    pub isomers_modelled: bool,
    /// CPU seconds of the search alone (no scoring) over the whole run, and its standard error
    /// (sampled rows only).
    pub search_seconds: f64,
    pub search_error: f64,
    /// Mean CPU seconds to score one isomer in the sample (0 if the sample found none or the row
    /// is modelled).
    pub score_seconds: f64,
    /// CPU seconds to enumerate and score the whole run on one thread, and its standard error
    /// (sampled rows: of the search, and of the scoring where the count is not the model's;
    /// exact rows have 0, modelled rows NaN: see [`MODEL_FACTOR`]).
    pub cpu_seconds: f64,
    pub cpu_error: f64,
    /// The model's CPU seconds for the whole run on one thread, kept for every row so that
    /// sampled rows show how far the model is off at that size.
    pub model_seconds: f64,
    /// Peak memory of one task of the planned threads and shards, by the model (bytes).
    pub task_memory: f64,
    /// Peak resident memory of the sampling process so far (bytes; 0 when modelled).
    pub sample_memory: u64,
}

impl Estimate {
    /// True when the sample ran every unit, so counts and times are measured, not scaled.
    pub fn exact(&self) -> bool {
        self.source == Source::Exact
    }

    /// CPU seconds of one task when the run is split into `tasks` shards: the mean share, as
    /// every shard gets the same number of units (within one).
    pub fn cpu_per_task(&self, tasks: u32) -> f64 {
        self.cpu_seconds / f64::from(tasks.max(1))
    }
}

/// Errors of a sample run.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum PlanError {
    /// The worker pool could not be built.
    Threads(String),
}

impl std::fmt::Display for PlanError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            PlanError::Threads(e) => write!(f, "cannot start the sampling thread: {e}"),
        }
    }
}

impl std::error::Error for PlanError {}

/// What the sample is doing, for a progress display.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Progress {
    pub atoms: u32,
    /// Units of this size run so far, and the size's unit count.
    pub sampled: u32,
    pub units: u32,
    /// CPU seconds of the whole budget spent so far.
    pub spent: f64,
}

/// The shape of the cluster run being planned: it sets the memory each task needs.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Layout {
    pub tasks: u32,
    pub threads: u32,
    /// Cage charge Q the isomers are scored for.
    pub charge: i32,
}

/// Shares one CPU-time budget over the sizes of a plan (see the module doc).
pub struct Planner {
    layout: Layout,
    budget: f64,
    /// Most a single size may spend, if the user capped it.
    cap: Option<f64>,
    spent: f64,
    pool: rayon::ThreadPool,
}

impl Planner {
    /// A planner with `budget` CPU seconds in all, at most `cap` per size.
    pub fn new(layout: Layout, budget: Duration, cap: Option<Duration>) -> Result<Self, PlanError> {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(1)
            .build()
            .map_err(|e| PlanError::Threads(e.to_string()))?;
        Ok(Planner {
            layout,
            budget: budget.as_secs_f64(),
            cap: cap.map(|c| c.as_secs_f64()),
            spent: 0.0,
            pool,
        })
    }

    /// CPU seconds spent sampling so far.
    pub fn spent(&self) -> f64 {
        self.spent
    }

    /// The estimate of `specs[0]`, the smallest size not yet planned; `specs[1..]` are the
    /// sizes still to come, which it leaves their share of the budget.
    pub fn next(
        &mut self,
        specs: &[Spec],
        mut progress: impl FnMut(Progress),
    ) -> Result<Option<Estimate>, PlanError> {
        let Some(spec) = specs.first() else {
            return Ok(None);
        };
        let units = enumerate::units(spec);
        let modelled = self.modelled(spec, units.len() as u32);
        let Some(share) = self.share(specs) else {
            return Ok(Some(modelled));
        };
        let spent_before = self.spent;
        let e = sample(
            spec,
            &units,
            &self.pool,
            self.layout.charge,
            share,
            |sampled| {
                progress(Progress {
                    atoms: spec.atoms,
                    sampled,
                    units: units.len() as u32,
                    spent: spent_before,
                })
            },
        )?;
        self.spent += e.spent;
        let exact = e.sampled == units.len() as u32;
        // Beyond the published tables a part sample's own count is unreliable (isomers sit in
        // few units: a sample can miss them all), so the row takes the model's count, and the
        // model's scoring cost where the sample scored nothing.
        let (isomers, isomers_error, isomers_modelled, score_seconds) =
            if exact || e.isomers_published {
                (e.isomers, e.isomers_error, false, e.score_seconds)
            } else {
                let score = if e.score_seconds > 0.0 {
                    e.score_seconds
                } else {
                    model_score_seconds(spec)
                };
                (modelled.isomers, f64::NAN, true, score)
            };
        Ok(Some(Estimate {
            source: if exact {
                Source::Exact
            } else {
                Source::Sampled
            },
            units: units.len() as u32,
            sampled: e.sampled,
            isomers,
            isomers_error,
            isomers_published: e.isomers_published,
            isomers_modelled,
            search_seconds: e.search_seconds,
            search_error: e.search_error,
            score_seconds,
            cpu_seconds: e.search_seconds + isomers * score_seconds,
            cpu_error: if isomers_modelled {
                e.search_error
            } else {
                e.cpu_error
            },
            sample_memory: peak_memory(),
            ..modelled
        }))
    }

    /// The CPU seconds `specs[0]` may spend sampling, or None if it should not be sampled: the
    /// budget left, divided among the sizes whose mean unit (by the model) fits their share.
    fn share(&self, specs: &[Spec]) -> Option<f64> {
        let left = self.budget - self.spent;
        if left <= 0.0 {
            return None;
        }
        let unit_cost: Vec<f64> = specs.iter().map(mean_unit_seconds).collect();
        let mut able: Vec<bool> = vec![true; specs.len()];
        loop {
            let count = able.iter().filter(|&&a| a).count();
            if count == 0 || !able[0] {
                return None;
            }
            let share = self
                .cap
                .map_or(left / count as f64, |c| c.min(left / count as f64));
            let mut changed = false;
            for (a, &cost) in able.iter_mut().zip(&unit_cost) {
                if *a && cost > share {
                    *a = false;
                    changed = true;
                }
            }
            if !changed {
                return Some(share);
            }
        }
    }

    /// The model's row for `spec` (also the base of sampled rows: model time and task memory).
    fn modelled(&self, spec: &Spec, units: u32) -> Estimate {
        let one = model::estimate_on(spec, 1, 1, model::Work::Score);
        let task = model::estimate_on(
            spec,
            self.layout.threads as usize,
            self.layout.tasks,
            model::Work::Score,
        );
        Estimate {
            spec: *spec,
            source: Source::Modelled,
            units,
            sampled: 0,
            isomers: one.isomers,
            isomers_error: if one.published { 0.0 } else { f64::NAN },
            isomers_published: one.published,
            isomers_modelled: !one.published,
            search_seconds: f64::NAN,
            search_error: f64::NAN,
            score_seconds: 0.0,
            cpu_seconds: one.seconds,
            cpu_error: f64::NAN,
            model_seconds: one.seconds,
            task_memory: task.bytes,
            sample_memory: 0,
        }
    }
}

/// The model's CPU seconds for one mean unit of `spec` on one thread.
fn mean_unit_seconds(spec: &Spec) -> f64 {
    // The unit count is at least 2,000 for the sizes a plan is for (`enumerate::units`); the
    // exact count is not worth a level-by-level search of every size here.
    let units = 2000.0;
    model::estimate_on(spec, 1, 1, model::Work::Score).seconds / units
}

/// The model's CPU seconds to score one isomer of `spec` on one thread.
fn model_score_seconds(spec: &Spec) -> f64 {
    let scored = model::estimate_on(spec, 1, 1, model::Work::Score);
    let counted = model::estimate_on(spec, 1, 1, model::Work::Count);
    if scored.isomers > 0.0 {
        (scored.seconds - counted.seconds) / scored.isomers
    } else {
        0.0
    }
}

/// What one size's sample measured, scaled to the whole run.
struct Sample {
    sampled: u32,
    spent: f64,
    isomers: f64,
    isomers_error: f64,
    isomers_published: bool,
    search_seconds: f64,
    search_error: f64,
    score_seconds: f64,
    cpu_error: f64,
}

/// Runs `units` of `spec` (scoring every isomer for charge `charge`) on `pool` until `budget`
/// CPU seconds are spent (at least one unit) or all have run, and scales the sample to the
/// run. Isomers sit in few units (in all C80, 91 of 2,032 hold them all), so a short sample
/// scales the search well and the isomer count poorly: where the count is published it is used
/// instead, and the scoring cost is the sample's cost per isomer times that count.
fn sample(
    spec: &Spec,
    units: &[enumerate::Unit],
    pool: &rayon::ThreadPool,
    charge: i32,
    budget: f64,
    mut progress: impl FnMut(u32),
) -> Result<Sample, PlanError> {
    let order = deal::scrambled_order(units.len() as u32);
    let started = cpu_seconds();
    let (mut isomers, mut search) = (Vec::new(), Vec::new());
    let mut scoring = 0.0;
    for &u in &order {
        if !isomers.is_empty() && cpu_seconds() - started >= budget {
            break;
        }
        let before = cpu_seconds();
        let found = pool.install(|| enumerate::run_unit(spec, &units[u as usize]));
        let searched = cpu_seconds();
        for f in &found {
            // A failure to score is the run's problem, not the plan's: it costs the same time.
            let _ = score::describe_spiral(&f.spiral, charge);
        }
        scoring += cpu_seconds() - searched;
        search.push(searched - before);
        isomers.push(found.len() as f64);
        progress(isomers.len() as u32);
    }
    let n = units.len() as f64;
    let sampled = isomers.len() as u32;
    let found: f64 = isomers.iter().sum();
    let (mut iso_total, mut iso_error) = scale(&isomers, n);
    let published = enumerate::published_count(spec).filter(|_| sampled < units.len() as u32);
    if let Some(count) = published {
        (iso_total, iso_error) = (count as f64, 0.0);
    }
    let (search_seconds, search_error) = scale(&search, n);
    let score_seconds = if found > 0.0 { scoring / found } else { 0.0 };
    Ok(Sample {
        sampled,
        spent: cpu_seconds() - started,
        isomers: iso_total,
        isomers_error: iso_error,
        isomers_published: published.is_some(),
        search_seconds,
        search_error,
        score_seconds,
        cpu_error: search_error + iso_error * score_seconds,
    })
}

/// Estimates one size from a sample of at most `budget` CPU seconds (at least one unit), for a
/// run of `tasks` shards of one thread each.
pub fn estimate(spec: &Spec, charge: i32, budget: Duration) -> Result<Estimate, PlanError> {
    let layout = Layout {
        tasks: 1,
        threads: 1,
        charge,
    };
    let mut planner = Planner::new(layout, budget, None)?;
    // A size whose mean unit the model puts beyond the budget is still sampled here (one unit
    // at least): the caller asked for this size's sample.
    planner.budget = planner.budget.max(mean_unit_seconds(spec));
    Ok(planner
        .next(std::slice::from_ref(spec), |_| {})?
        .expect("one spec was given"))
}

/// The total over a population of `population` units estimated from a simple random sample
/// (mean times population) and its standard error, N s sqrt((1 - m/N) / m) (Cochran 1977).
fn scale(sample: &[f64], population: f64) -> (f64, f64) {
    let m = sample.len() as f64;
    if m == 0.0 {
        return (0.0, 0.0);
    }
    let mean = sample.iter().sum::<f64>() / m;
    let total = mean * population;
    if m < 2.0 || m >= population {
        return (total, if m >= population { 0.0 } else { f64::NAN });
    }
    let var = sample.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (m - 1.0);
    let error = population * (var * (1.0 - m / population) / m).sqrt();
    (total, error)
}

/// CPU seconds this process has used (user + system), from `getrusage`.
fn cpu_seconds() -> f64 {
    let usage = rusage();
    let secs = |t: libc::timeval| t.tv_sec as f64 + t.tv_usec as f64 * 1e-6;
    secs(usage.ru_utime) + secs(usage.ru_stime)
}

/// Peak resident memory of this process in bytes (Linux reports kibibytes).
fn peak_memory() -> u64 {
    (rusage().ru_maxrss.max(0) as u64) * 1024
}

fn rusage() -> libc::rusage {
    // SAFETY: getrusage only writes the struct it is given, which is plain data that zeroed
    // memory represents validly; RUSAGE_SELF cannot fail.
    unsafe {
        let mut usage: libc::rusage = std::mem::zeroed();
        libc::getrusage(libc::RUSAGE_SELF, &mut usage);
        usage
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_sample_of_every_unit_counts_exactly() {
        // OEIS A007894: 40 fullerenes with 40 atoms.
        let spec = Spec::fullerene(40, false).unwrap();
        let e = estimate(&spec, 0, Duration::from_secs(600)).unwrap();
        assert!(e.exact() && !e.isomers_published);
        assert_eq!(e.isomers, 40.0);
        assert_eq!(e.isomers_error, 0.0);
        assert!(e.cpu_seconds > 0.0);
    }

    #[test]
    fn scaling_a_sample_gives_the_textbook_total_and_error() {
        // Cochran (1977) eq. 2.12 by hand: sample 1, 2, 3 of N = 10, mean 2, s^2 = 1:
        // total 20, error 10 * sqrt(1 * (1 - 0.3) / 3) = 4.830...
        let (total, error) = scale(&[1.0, 2.0, 3.0], 10.0);
        assert_eq!(total, 20.0);
        assert!(
            (error - 10.0 * (0.7f64 / 3.0).sqrt()).abs() < 1e-12,
            "{error}"
        );
    }

    #[test]
    fn a_size_whose_unit_cannot_fit_the_budget_is_modelled_not_run() {
        // IPR C200: the model puts a mean unit near ten CPU minutes, so a one-second budget
        // must give the model's row at once (this test would take minutes if it sampled).
        let layout = Layout {
            tasks: 100,
            threads: 32,
            charge: 0,
        };
        let mut planner = Planner::new(layout, Duration::from_secs(1), None).unwrap();
        let specs = [Spec::fullerene(200, true).unwrap()];
        let e = planner.next(&specs, |_| {}).unwrap().unwrap();
        assert_eq!(e.source, Source::Modelled);
        assert_eq!(e.sampled, 0);
        assert_eq!(planner.spent(), 0.0);
        assert!(e.cpu_seconds > 1e5 && e.task_memory > 0.0);
    }
}
