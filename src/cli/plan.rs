//! `cagerank plan`: how big a cluster run will be, per size and in total (units, isomers, CPU
//! time, wall time per task, memory per task), sampled within a CPU-time budget and modelled
//! beyond it. Parsing and printing only; see `cagerank::plan`.

use super::output::{write_line, Out};
use super::sizes::{parse_sizes, Size};
use super::CliError;
use cagerank::enumerate::Spec;
use cagerank::plan::{Estimate, Layout, Planner, Source, MODEL_FACTOR};
use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use std::io::IsTerminal;
use std::time::Duration;

/// Estimate a cluster run before submitting it.
#[derive(clap::Args, Debug)]
pub struct Args {
    /// Atom counts: even numbers or inclusive ranges such as 60..200.
    #[arg(required = true, value_name = "SIZES")]
    pub sizes: Vec<String>,
    /// Plan the IPR list only.
    #[arg(long)]
    pub ipr: bool,
    /// Array tasks (shards) the run will be split into (nodes, with one task per node).
    #[arg(long, default_value_t = 8)]
    pub tasks: u32,
    /// Threads (CPUs) per task (cores per node, with one task per node).
    #[arg(long, default_value_t = 1)]
    pub threads: u32,
    #[command(flatten)]
    pub charge: super::ChargeArg,
    /// CPU seconds to spend sampling, shared over the sizes smallest first; a size whose units
    /// cannot be sampled within its share is estimated by the model instead.
    #[arg(long, default_value_t = 60.0, value_name = "SECONDS")]
    pub budget: f64,
    /// At most this many CPU seconds of sampling for any one size.
    #[arg(long, value_name = "SECONDS")]
    pub sample: Option<f64>,
}

pub fn run(args: Args) -> Result<(), CliError> {
    if args.tasks == 0 || args.threads == 0 {
        return Err(CliError::usage(
            "--tasks and --threads must be at least 1, e.g. --tasks 100 --threads 32",
        ));
    }
    for (flag, value) in [("--budget", Some(args.budget)), ("--sample", args.sample)] {
        if let Some(v) = value {
            if !(0.0..1e9).contains(&v) {
                return Err(CliError::usage(format!(
                    "{flag} must be a number of CPU seconds from 0 up, e.g. {flag} 60"
                )));
            }
        }
    }
    let mut specs = Vec::new();
    for size in parse_sizes(&args.sizes)? {
        if let Size::Atoms(n) = size {
            specs.push(Spec::fullerene(n, args.ipr).map_err(|e| CliError::usage(e.to_string()))?);
        }
    }
    // The budget is shared smallest size first (see `cagerank::plan::Planner`).
    specs.sort_by_key(|s| s.atoms);
    specs.dedup();
    let layout = Layout {
        tasks: args.tasks,
        threads: args.threads,
        charge: args.charge.charge,
    };
    let budget = Duration::from_secs_f64(args.budget);
    let mut planner = Planner::new(layout, budget, args.sample.map(Duration::from_secs_f64))
        .map_err(|e| CliError::failed(e.to_string()))?;
    let bar = progress_bar(specs.len() as u64);
    let mut out = Out::stdout();
    print(&bar, &mut out, &header())?;
    let mut rows = Vec::new();
    for i in 0..specs.len() {
        bar.set_position(i as u64);
        let e = planner
            .next(&specs[i..], |p| {
                bar.set_message(format!(
                    "C{}: sampled {} of {} units; {:.0} of {:.0} CPU s of the budget spent",
                    p.atoms, p.sampled, p.units, p.spent, args.budget
                ))
            })
            .map_err(|e| CliError::failed(e.to_string()))?;
        let Some(e) = e else { break };
        print(&bar, &mut out, &row(&e, args.tasks, args.threads))?;
        rows.push(e);
    }
    bar.finish_and_clear();
    for line in totals(&rows, &args, planner.spent()) {
        write_line(&mut out, &line)?;
    }
    out.finish()
}

/// A bar over the sizes on a terminal (sampling a size can take the whole budget), hidden
/// otherwise.
fn progress_bar(sizes: u64) -> ProgressBar {
    if !std::io::stderr().is_terminal() {
        return ProgressBar::with_draw_target(Some(sizes), ProgressDrawTarget::hidden());
    }
    let pb = ProgressBar::new(sizes);
    let style = ProgressStyle::with_template("plan [{bar:20}] {pos}/{len} sizes  {msg}")
        .unwrap_or_else(|_| ProgressStyle::default_bar())
        .progress_chars("=> ");
    pb.set_style(style);
    pb.enable_steady_tick(Duration::from_millis(250));
    pb
}

/// Prints a row at once, above the bar, so a long plan shows its rows as they come.
fn print(bar: &ProgressBar, out: &mut Out, line: &str) -> Result<(), CliError> {
    bar.suspend(|| {
        write_line(out, line)?;
        out.flush()
    })
}

const WIDTHS: [usize; 9] = [6, 6, 7, 8, 22, 22, 10, 12, 9];

fn header() -> String {
    columns(&[
        "size",
        "units",
        "sampled",
        "source",
        "isomers",
        "CPU, 1 thread",
        "model",
        "wall/task",
        "task mem",
    ])
}

fn columns(cells: &[&str]) -> String {
    let mut line = String::new();
    for (i, (cell, width)) in cells.iter().zip(WIDTHS).enumerate() {
        if i > 0 {
            line.push(' ');
        }
        line.push_str(&format!("{cell:>width$}"));
    }
    line
}

fn row(e: &Estimate, tasks: u32, threads: u32) -> String {
    let isomers = match (e.source, e.isomers_published) {
        (Source::Exact, _) => format!("{} (exact)", grouped(e.isomers)),
        (_, true) => format!("{} (published)", grouped(e.isomers)),
        (_, false) if e.isomers_modelled => format!("{} (model)", compact(e.isomers)),
        (_, false) => format!("{}{}", grouped(e.isomers), plus_minus(e.isomers_error)),
    };
    let cpu = match e.source {
        Source::Exact => duration(e.cpu_seconds),
        Source::Sampled => format!(
            "{}{}",
            duration(e.cpu_seconds),
            plus_minus_time(e.cpu_error)
        ),
        Source::Modelled => format!("{} ×/÷ {MODEL_FACTOR:.0}", duration(e.cpu_seconds)),
    };
    let wall = e.cpu_per_task(tasks) / f64::from(threads);
    columns(&[
        &format!("C{}", e.spec.atoms),
        &e.units.to_string(),
        &e.sampled.to_string(),
        match e.source {
            Source::Exact => "exact",
            Source::Sampled => "sampled",
            Source::Modelled => "modelled",
        },
        &isomers,
        &cpu,
        &duration(e.model_seconds),
        &duration(wall),
        &bytes(e.task_memory),
    ])
}

fn totals(rows: &[Estimate], args: &Args, spent: f64) -> Vec<String> {
    let cpu: f64 = rows.iter().map(|e| e.cpu_seconds).sum();
    let measured: f64 = rows
        .iter()
        .filter(|e| e.source != Source::Modelled)
        .map(|e| e.cpu_seconds)
        .sum();
    // Sampling errors of different sizes are independent: they add in quadrature.
    let sampled_error = rows
        .iter()
        .filter(|e| e.source == Source::Sampled && e.cpu_error.is_finite())
        .map(|e| e.cpu_error.powi(2))
        .sum::<f64>()
        .sqrt();
    let modelled = cpu - measured;
    let per_task = cpu / f64::from(args.tasks);
    let memory = rows.iter().map(|e| e.task_memory).fold(0.0, f64::max);
    let sample_memory = rows.iter().map(|e| e.sample_memory).max().unwrap_or(0);
    let count = |s: Source| rows.iter().filter(|e| e.source == s).count();
    vec![
        format!(
            "total: {:.1} CPU h on one core of this machine ({} sizes: {} exact, {} sampled, {} modelled; \
             measured and sampled {:.2} CPU h ± {:.2} h, modelled {:.1} CPU h ×/÷ {MODEL_FACTOR:.0})",
            cpu / 3600.0,
            rows.len(),
            count(Source::Exact),
            count(Source::Sampled),
            count(Source::Modelled),
            (measured / 3600.0).abs(),
            (sampled_error / 3600.0).abs(),
            modelled / 3600.0,
        ),
        format!(
            "on {} task(s) of {} thread(s): about {} CPU and {} wall per task (mean share, threads \
             assumed to scale linearly; heavy units make some tasks longer); peak memory per task \
             about {} (model{})",
            args.tasks,
            args.threads,
            duration(per_task),
            duration(per_task / f64::from(args.threads)),
            bytes(memory),
            if sample_memory > 0 {
                format!("; this sample peaked at {}", bytes(sample_memory as f64))
            } else {
                String::new()
            },
        ),
        format!(
            "sampling took {spent:.0} of the {:.0} CPU s budget (--budget){}",
            args.budget,
            model_check(rows)
        ),
    ]
}

/// How far the model was off where it can be checked: the sampled CPU time over the model's at
/// the three largest sizes that were sampled (the nearest to the modelled ones).
fn model_check(rows: &[Estimate]) -> String {
    let checked: Vec<&Estimate> = rows
        .iter()
        .rev()
        .filter(|e| e.source != Source::Modelled && e.model_seconds > 0.0)
        .take(3)
        .collect();
    let (Some(last), Some(first)) = (checked.first(), checked.last()) else {
        return String::new();
    };
    let measured: f64 = checked.iter().map(|e| e.cpu_seconds).sum();
    let model: f64 = checked.iter().map(|e| e.model_seconds).sum();
    let sizes = if first.spec.atoms == last.spec.atoms {
        format!("C{}", last.spec.atoms)
    } else {
        format!("C{}-C{}", first.spec.atoms, last.spec.atoms)
    };
    format!(
        "; at {sizes} the sample took {:.2} times the model's CPU time",
        measured / model
    )
}

/// "±" and a standard error, or "± ?" where one sampled unit gives no spread.
fn plus_minus(error: f64) -> String {
    if error.is_nan() {
        " ± ?".to_string()
    } else if error == 0.0 {
        String::new()
    } else {
        format!(" ± {}", grouped(error))
    }
}

fn plus_minus_time(error: f64) -> String {
    if error.is_nan() {
        " ± ?".to_string()
    } else {
        format!(" ± {}", duration(error))
    }
}

/// 1,234,567
fn grouped(x: f64) -> String {
    super::output::grouped(x.max(0.0).round() as u64)
}

/// 1.2e7 for large modelled counts, whose digits mean nothing.
fn compact(x: f64) -> String {
    if x < 1e5 {
        grouped(x)
    } else {
        format!("{x:.1e}")
    }
}

/// Seconds in the unit that keeps them readable: 4.2 s, 3.1 min, 5.6 h, 2.3 d.
fn duration(seconds: f64) -> String {
    if !seconds.is_finite() {
        return "?".to_string();
    }
    if seconds < 120.0 {
        format!("{seconds:.1} s")
    } else if seconds < 2.0 * 3600.0 {
        format!("{:.1} min", seconds / 60.0)
    } else if seconds < 3.0 * 86400.0 {
        format!("{:.1} h", seconds / 3600.0)
    } else {
        format!("{:.1} d", seconds / 86400.0)
    }
}

fn bytes(b: f64) -> String {
    if b < 1e9 {
        format!("{:.0} MB", b / 1e6)
    } else {
        format!("{:.1} GB", b / 1e9)
    }
}
