//! `cagerank plan`: how big a cluster run will be, from a short sample run of each size (units,
//! isomers, CPU time and memory per task). Parsing and printing only; see `cagerank::plan`.

use super::output::{write_line, Out};
use super::sizes::{parse_sizes, Size};
use super::CliError;
use cagerank::enumerate::Spec;
use cagerank::plan::{self, Estimate};
use std::time::Duration;

/// Estimate a cluster run before submitting it.
#[derive(clap::Args, Debug)]
pub struct Args {
    /// Atom counts: even numbers or inclusive ranges such as 60..100.
    #[arg(required = true, value_name = "SIZES")]
    pub sizes: Vec<String>,
    /// Plan the IPR list only.
    #[arg(long)]
    pub ipr: bool,
    /// Array tasks (shards) the run will be split into.
    #[arg(long, default_value_t = 8)]
    pub tasks: u32,
    /// Threads (CPUs) per task.
    #[arg(long, default_value_t = 1)]
    pub threads: u32,
    #[command(flatten)]
    pub charge: super::ChargeArg,
    /// CPU seconds to spend sampling each size (at least one unit is run; a size whose units
    /// all fit is counted exactly).
    #[arg(long, default_value_t = 10.0, value_name = "SECONDS")]
    pub sample: f64,
}

pub fn run(args: Args) -> Result<(), CliError> {
    if args.tasks == 0 || args.threads == 0 {
        return Err(CliError::usage(
            "--tasks and --threads must be at least 1, e.g. --tasks 100 --threads 4",
        ));
    }
    if !(args.sample.is_finite() && args.sample > 0.0) {
        return Err(CliError::usage(
            "--sample must be a positive number of seconds, e.g. --sample 10",
        ));
    }
    let budget = Duration::from_secs_f64(args.sample);
    let mut out = Out::stdout();
    write_line(
        &mut out,
        &format!(
            "{:>6} {:>6} {:>7} {:>22} {:>22} {:>12} {:>12} {:>9}",
            "size",
            "units",
            "sampled",
            "isomers (± s.e.)",
            "CPU s total (± s.e.)",
            "CPU s/task",
            "wall s/task",
            "peak MB"
        ),
    )?;
    let (mut cpu, mut worst_memory) = (0.0, 0u64);
    for size in parse_sizes(&args.sizes)? {
        let Size::Atoms(n) = size else { continue };
        let spec = Spec::fullerene(n, args.ipr).map_err(|e| CliError::usage(e.to_string()))?;
        let e = plan::estimate(&spec, args.charge.charge, budget)
            .map_err(|e| CliError::failed(e.to_string()))?;
        cpu += e.cpu_seconds;
        worst_memory = worst_memory.max(e.peak_memory);
        write_line(&mut out, &row(&e, args.tasks, args.threads))?;
    }
    let per_task = cpu / f64::from(args.tasks);
    write_line(
        &mut out,
        &format!(
            "total: {cpu:.0} CPU s; {} tasks of {} thread(s): about {per_task:.0} CPU s and {:.0} s \
             wall each (balanced shares; heavy units make some tasks longer), peak memory of the \
             sample {:.0} MB",
            args.tasks,
            args.threads,
            per_task / f64::from(args.threads),
            worst_memory as f64 / 1e6
        ),
    )?;
    out.finish()
}

fn row(e: &Estimate, tasks: u32, threads: u32) -> String {
    // One sampled unit gives no spread, so no standard error.
    let pm = |error: f64| {
        if error.is_nan() {
            " ± ?".to_string()
        } else {
            format!(" ± {error:.0}")
        }
    };
    let isomers = if e.exact() {
        format!("{:.0} (exact)", e.isomers)
    } else if e.isomers_published {
        format!("{:.0} (published)", e.isomers)
    } else {
        format!("{:.0}{}", e.isomers, pm(e.isomers_error))
    };
    let cpu = if e.exact() {
        format!("{:.1}", e.cpu_seconds)
    } else {
        format!("{:.1}{}", e.cpu_seconds, pm(e.cpu_error))
    };
    let per_task = e.cpu_per_task(tasks);
    format!(
        "{:>6} {:>6} {:>7} {:>22} {:>22} {:>12.1} {:>12.1} {:>9.0}",
        format!("C{}", e.spec.atoms),
        e.units,
        e.sampled,
        isomers,
        cpu,
        per_task,
        per_task / f64::from(threads),
        e.peak_memory as f64 / 1e6
    )
}
