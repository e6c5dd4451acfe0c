//! `cagerank enumerate`: list every isomer of the requested sizes.

use super::output::{write_line, Out};
use super::progress;
use super::sizes::{parse_sizes, Size};
use super::CliError;
use cagerank::enumerate::{self, Isomer, Options, Shard, Spec};
use serde_json::json;

#[derive(clap::Args, Debug)]
pub struct Args {
    /// Atom counts: even numbers or inclusive ranges such as 60..100.
    #[arg(required = true, value_name = "SIZES")]
    pub sizes: Vec<String>,
    /// Only isomers obeying the isolated-pentagon rule (no two pentagons share an edge).
    #[arg(long)]
    pub ipr: bool,
    /// Worker threads (default: one per core). Output does not depend on it.
    #[arg(long, default_value_t = 0)]
    pub threads: usize,
    /// Run part K of N (1-based) of the search, e.g. for a SLURM job array; isomer numbers are
    /// assigned when the shards are merged.
    #[arg(long, value_name = "K/N")]
    pub shard: Option<Shard>,
    /// Print only the number of isomers per size.
    #[arg(long)]
    pub count_only: bool,
    /// One JSON object per line instead of text.
    #[arg(long)]
    pub json: bool,
    /// No progress bar.
    #[arg(long)]
    pub quiet: bool,
    /// Also search sequences starting on a larger face (slow): a completeness check.
    #[arg(long)]
    pub all_starts: bool,
}

pub fn run(args: Args) -> Result<(), CliError> {
    let sizes = parse_sizes(&args.sizes)?;
    let mut out = Out::stdout();
    for size in sizes {
        match size {
            Size::Empty(n) => report_empty(&mut out, &args, n)?,
            Size::Atoms(n) => run_size(&mut out, &args, n)?,
        }
    }
    out.finish()
}

fn spec_for(args: &Args, atoms: u64) -> Result<Spec, CliError> {
    let mut spec = Spec::fullerene(atoms, args.ipr).map_err(|e| CliError::usage(e.to_string()))?;
    spec.all_starts = args.all_starts;
    if !spec.spiral_complete() {
        eprintln!(
            "cagerank: warning: from {} atoms on some cages have no face spiral; the list for C{atoms} may be incomplete",
            enumerate::FIRST_SPIRALLESS_ATOMS
        );
    }
    Ok(spec)
}

fn report_empty(out: &mut Out, args: &Args, atoms: u64) -> Result<(), CliError> {
    if args.count_only {
        write_line(out, &count_line(args, atoms, 0))?;
    }
    Ok(())
}

fn count_line(args: &Args, atoms: u64, count: u64) -> String {
    if args.json {
        json!({"atoms": atoms, "ipr": args.ipr, "isomers": count}).to_string()
    } else {
        let list = if args.ipr { "IPR isomers" } else { "isomers" };
        format!("C{atoms}: {count} {list}")
    }
}

fn run_size(out: &mut Out, args: &Args, atoms: u64) -> Result<(), CliError> {
    let spec = spec_for(args, atoms)?;
    let opts = Options {
        threads: args.threads,
        shard: args.shard,
    };
    let bar = progress::bar(0, &format!("C{atoms}"), args.quiet);
    let mut count = 0u64;
    let mut failure = None;
    enumerate::enumerate_until(
        &spec,
        &opts,
        |done, total| {
            bar.set_length(total as u64);
            bar.set_position(done as u64);
        },
        |iso| {
            count += 1;
            if args.count_only {
                return std::ops::ControlFlow::Continue(());
            }
            match write_line(out, &isomer_line(args, atoms, &iso)) {
                Ok(()) => std::ops::ControlFlow::Continue(()),
                Err(e) => {
                    failure = Some(e);
                    std::ops::ControlFlow::Break(())
                }
            }
        },
    )
    .map_err(|e| CliError::failed(e.to_string()))?;
    bar.finish_and_clear();
    if let Some(e) = failure {
        return Err(e);
    }
    if args.count_only {
        write_line(out, &count_line(args, atoms, count))?;
    }
    Ok(())
}

fn isomer_line(args: &Args, atoms: u64, iso: &Isomer) -> String {
    if args.json {
        return json!({
            "atoms": atoms,
            "ipr": args.ipr,
            "number": iso.number,
            "ipr_number": iso.ipr_number,
            "spiral": iso.spiral.pentagon_indices(),
            "automorphisms": iso.automorphisms,
        })
        .to_string();
    }
    let id = match (iso.number, iso.ipr_number) {
        (Some(n), Some(i)) => format!("C{atoms}:{n} (IPR {i})"),
        (Some(n), None) => format!("C{atoms}:{n}"),
        (None, Some(i)) => format!("C{atoms} IPR:{i}"),
        (None, None) => format!("C{atoms} unit {}", iso.unit),
    };
    format!(
        "{id:<24} spiral {:<48} symmetries {}",
        iso.spiral.to_string(),
        iso.automorphisms
    )
}
