//! Sizing a cluster run before submitting it: units, isomers, CPU time and memory per task,
//! estimated from a short sample run.
//!
//! The sample runs whole units, enumerated and scored as `enumerate --catalogue` does, on one
//! thread, in the fixed pseudo-random order of `enumerate::deal` (so the first units sampled
//! are a simple random sample of the run's units), until a CPU-time budget is spent or every
//! unit has run. Search time is the sample mean scaled to all units, with a standard error from
//! the spread between units (sampling without replacement: Cochran, *Sampling Techniques*, 3rd
//! ed. 1977, eq. 2.12, finite-population correction included); scoring time is the sample's
//! cost per isomer times the isomer count, published where known, else scaled from the sample
//! (then unreliable: isomers sit in few units, and a sample that missed them all understates
//! both the count and its error). A sample that covers every unit is exact. Memory is the
//! sample process's peak resident size, which grows with the completion store: a lower bound
//! for a long task. This module measures and estimates; it writes nothing and prints nothing.

use crate::enumerate::{self, deal, Spec};
use crate::score;
use std::time::Duration;

/// What a sample run measured for one size, and its estimates for the whole run.
#[derive(Debug, Clone, PartialEq)]
pub struct Estimate {
    pub spec: Spec,
    /// Units the run is cut into (the grain of shards and resume).
    pub units: u32,
    /// Units the sample ran.
    pub sampled: u32,
    /// Isomers of the whole run: exact when every unit was sampled or the count is published.
    pub isomers: f64,
    /// Standard error of `isomers` (0 when exact).
    pub isomers_error: f64,
    /// True when `isomers` is the published count (OEIS A007894 / A046880, see
    /// `enumerate::published_count`) rather than scaled from the sample.
    pub isomers_published: bool,
    /// CPU seconds of the search alone (no scoring) over the whole run, and its standard error.
    pub search_seconds: f64,
    pub search_error: f64,
    /// Mean CPU seconds to score one isomer in the sample (0 if the sample found none).
    pub score_seconds: f64,
    /// CPU seconds to enumerate and score the whole run on one thread: search plus isomers
    /// times the scoring cost, and its standard error.
    pub cpu_seconds: f64,
    pub cpu_error: f64,
    /// Peak resident memory of the sampling process, bytes.
    pub peak_memory: u64,
}

impl Estimate {
    /// True when the sample ran every unit, so counts and times are measured, not scaled.
    pub fn exact(&self) -> bool {
        self.sampled == self.units
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

/// Runs units of `spec` (scoring every isomer for cage charge `charge`) on one thread until
/// `budget` CPU seconds are spent (at least one unit) or all have run, and scales the sample
/// to the run. Isomers sit in few units (in all C80, 91 of 2,032 hold them all), so a short
/// sample scales the search well and the isomer count poorly: where the count is published
/// it is used instead, and the scoring cost is the sample's cost per isomer times that count.
pub fn estimate(spec: &Spec, charge: i32, budget: Duration) -> Result<Estimate, PlanError> {
    let units = enumerate::units(spec);
    let order = deal::scrambled_order(units.len() as u32);
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(1)
        .build()
        .map_err(|e| PlanError::Threads(e.to_string()))?;
    let started = cpu_seconds();
    let (mut isomers, mut search) = (Vec::new(), Vec::new());
    let mut scoring = 0.0;
    for &u in &order {
        if !isomers.is_empty() && cpu_seconds() - started >= budget.as_secs_f64() {
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
    Ok(Estimate {
        spec: *spec,
        units: units.len() as u32,
        sampled,
        isomers: iso_total,
        isomers_error: iso_error,
        isomers_published: published.is_some(),
        search_seconds,
        search_error,
        score_seconds,
        cpu_seconds: search_seconds + iso_total * score_seconds,
        cpu_error: search_error + iso_error * score_seconds,
        peak_memory: peak_memory(),
    })
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
}
