//! `cagerank enumerate`: list every isomer of the requested sizes, or write them scored into a
//! catalogue (resumably, committing finished units every few seconds).

use super::output::{counted, write_line, Out};
use super::progress;
use super::query::catalogue_error;
use super::sizes::{parse_sizes, Size};
use super::CliError;
use cagerank::catalogue::{self, made_by, Deal, Record, RunInfo, ShardId, Writer};
use cagerank::enumerate::{self, Found, Isomer, Options, Shard, Spec};
use cagerank::score::{self, huckel, Descriptors, ScoreError, Scored};
use serde_json::json;
use std::ops::ControlFlow;
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

/// How long one batch of units should take before it is committed: a run killed at any
/// moment loses at most about this much work (more only when single units take longer).
/// One commit is one small file and an fsync, so a few seconds keep its cost invisible.
const COMMIT_EVERY: Duration = Duration::from_secs(3);

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
    /// No progress bar and no notes (warnings are still printed).
    #[arg(long)]
    pub quiet: bool,
    /// Also search spirals starting on a hexagon even where pentagon starts are checked to find
    /// every cage (up to C98, IPR C120): a completeness check, several times slower. Beyond
    /// that range hexagon starts are always searched (one C100 cage has no pentagon start).
    #[arg(long)]
    pub all_starts: bool,
    /// Search only spirals starting on a pentagon, also beyond C98 (IPR C120): several times
    /// faster there, but may miss cages (all C100 then gives 285,913 of 285,914).
    #[arg(long, conflicts_with = "all_starts")]
    pub pentagon_starts: bool,
    #[command(flatten)]
    pub charge: super::ChargeArg,
    /// Write scored isomers into this catalogue directory (resumable: run the same command again
    /// after an interruption). Default directory: $CAGERANK_CATALOGUE or ./catalogues. Runs of
    /// different --charge values are kept side by side (fullerene-c80-ipr-q-6.cgr).
    #[arg(long, value_name = "DIR", num_args = 0..=1, default_missing_value = "")]
    pub catalogue: Option<PathBuf>,
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
    spec.all_starts = (spec.all_starts || args.all_starts) && !args.pentagon_starts;
    if !spec.spiral_complete() {
        eprintln!(
            "cagerank: warning: from {} atoms on some cages have no face spiral; the list for C{atoms} may be incomplete",
            enumerate::FIRST_SPIRALLESS_ATOMS
        );
    } else if !spec.starts_verified() {
        eprintln!(
            "cagerank: warning: spirals starting on a pentagon are checked to find every cage only up to C{} (IPR C{}); all C100 misses 1 of 285,914 cages this way. Drop --pentagon-starts for a complete list of C{atoms}",
            enumerate::PENTAGON_STARTS_CHECKED,
            enumerate::PENTAGON_STARTS_CHECKED_IPR
        );
    } else if !spec.smallest_starts_checked() && !args.all_starts && !args.quiet {
        // Verified yet not checked for pentagon starts: the default turned hexagon starts on.
        eprintln!(
            "cagerank: note: C{atoms} is searched from hexagon starts too, as pentagon starts alone are checked complete only up to C{} (IPR C{}); this is several times slower, and --pentagon-starts skips it at the risk of missing cages",
            enumerate::PENTAGON_STARTS_CHECKED,
            enumerate::PENTAGON_STARTS_CHECKED_IPR
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
        let counted = if args.ipr {
            counted(count, "IPR isomer", "IPR isomers")
        } else {
            counted(count, "isomer", "isomers")
        };
        format!("C{atoms}: {counted}")
    }
}

fn run_size(out: &mut Out, args: &Args, atoms: u64) -> Result<(), CliError> {
    let spec = spec_for(args, atoms)?;
    if !args.count_only {
        huckel::occupation(atoms as usize, args.charge.charge)
            .map_err(|e| CliError::usage(e.to_string()))?;
    }
    if let Some(dir) = &args.catalogue {
        return write_catalogue(out, args, &spec, dir);
    }
    let opts = Options {
        threads: args.threads,
        shard: args.shard,
    };
    let bar = progress::bar(0, &format!("C{atoms}"), args.quiet);
    let mut count = 0u64;
    let mut failure = None;
    let score = |f: &Found| {
        (!args.count_only).then(|| score::describe_spiral(&f.spiral, args.charge.charge))
    };
    enumerate::enumerate_mapped(
        &spec,
        &opts,
        |done, total| {
            bar.set_length(total as u64);
            bar.set_position(done as u64);
        },
        score,
        |iso, scored| {
            count += 1;
            let Some(scored) = scored else {
                return ControlFlow::Continue(());
            };
            match scored
                .map_err(|e| CliError::failed(format!("scoring {}: {e}", iso.spiral)))
                .and_then(|d| write_line(out, &isomer_line(args, atoms, &iso, d)))
            {
                // Nobody reads the rest (e.g. `| head`): stop instead of enumerating on.
                Ok(()) if out.is_closed() => ControlFlow::Break(()),
                Ok(()) => ControlFlow::Continue(()),
                Err(e) => {
                    failure = Some(e);
                    ControlFlow::Break(())
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

/// Enumerates the units the catalogue still lacks, scores them and commits them in batches of
/// about [`COMMIT_EVERY`]; a killed run resumes from the last committed batch.
fn write_catalogue(out: &mut Out, args: &Args, spec: &Spec, dir: &Path) -> Result<(), CliError> {
    let dir = if dir.as_os_str().is_empty() {
        catalogue::default_dir()
    } else {
        dir.to_path_buf()
    };
    let all_units = enumerate::units(spec);
    let info = RunInfo {
        face_set: spec.face_set,
        atoms: spec.atoms,
        ipr: spec.ipr,
        unit_count: all_units.len() as u32,
        unit_depth: all_units.first().map_or(0, |u| u.prefix.len() as u32),
        shard: args.shard.map(|s| ShardId {
            index: s.index,
            count: s.count,
            deal: Deal::Scrambled,
        }),
        made_by: made_by(),
        all_starts: spec.all_starts,
        charge: args.charge.charge,
    };
    let mut writer = Writer::open(&dir, info).map_err(catalogue_error)?;
    let pending: std::collections::BTreeSet<u32> = writer.pending_units().into_iter().collect();
    let todo: Vec<_> = all_units
        .into_iter()
        .filter(|u| pending.contains(&u.index))
        .collect();
    let bar = progress::bar(todo.len() as u64, &format!("C{}", spec.atoms), args.quiet);
    let mut failure = None;
    let to_record = |f: &Found| -> Result<Record, String> {
        let d = score::describe_spiral(&f.spiral, args.charge.charge)
            .map_err(|e: ScoreError| e.to_string())?;
        Record::from_descriptors(&f.spiral, f.ipr, &d)
    };
    let mut batches = Batches::new(args.threads);
    while failure.is_none() {
        let Some(batch) = batches.next(&todo) else {
            break;
        };
        let started = Instant::now();
        enumerate::run_units_mapped(spec, batch, args.threads, to_record, |window| {
            let mut batch: Vec<(u32, Vec<Record>)> = Vec::with_capacity(window.len());
            for (unit, found) in window {
                let mut records = Vec::with_capacity(found.len());
                for (f, r) in found {
                    match r {
                        Ok(rec) => records.push(rec),
                        Err(e) => {
                            failure = Some(CliError::failed(format!("scoring {}: {e}", f.spiral)));
                            return ControlFlow::Break(());
                        }
                    }
                }
                batch.push((unit, records));
            }
            let refs: Vec<(u32, &[Record])> =
                batch.iter().map(|(u, r)| (*u, r.as_slice())).collect();
            if let Err(e) = writer.commit_units(&refs) {
                failure = Some(catalogue_error(e));
                return ControlFlow::Break(());
            }
            bar.inc(batch.len() as u64);
            ControlFlow::Continue(())
        })
        .map_err(|e| CliError::failed(e.to_string()))?;
        batches.took(started.elapsed());
    }
    bar.finish_and_clear();
    if let Some(e) = failure {
        return Err(e);
    }
    let done = writer.finish().map_err(catalogue_error)?;
    let line = if args.json {
        json!({"atoms": spec.atoms, "ipr": spec.ipr, "isomers": done.records,
               "catalogue": done.path.display().to_string()})
        .to_string()
    } else {
        let counted = if spec.ipr {
            counted(done.records, "IPR isomer", "IPR isomers")
        } else {
            counted(done.records, "isomer", "isomers")
        };
        format!(
            "C{}: {counted} written to {}",
            spec.atoms,
            done.path.display()
        )
    };
    write_line(out, &line)
}

/// Cuts the units still to do into consecutive batches sized so that each takes about
/// [`COMMIT_EVERY`], from the time the previous batch took. Unit costs vary by orders of
/// magnitude along the spiral order, so the size follows them, growing at most twofold per
/// step (a run of cheap units must not make the next batch of dear ones huge) and shrinking
/// at most fourfold; batch boundaries change only when units are committed, never the bytes
/// written.
struct Batches {
    at: usize,
    size: usize,
    least: usize,
    most: usize,
}

impl Batches {
    fn new(threads: usize) -> Batches {
        let threads = if threads == 0 {
            rayon::current_num_threads()
        } else {
            threads
        }
        .max(1);
        Batches {
            at: 0,
            size: 4 * threads,
            least: threads,
            // A C90 run has about 2000 units; 64 per thread keeps even an all-cheap stretch
            // to a few dozen commits per run.
            most: 64 * threads,
        }
    }

    fn next<'u, T>(&mut self, units: &'u [T]) -> Option<&'u [T]> {
        let start = self.at;
        if start >= units.len() {
            return None;
        }
        self.at = (start + self.size).min(units.len());
        Some(&units[start..self.at])
    }

    fn took(&mut self, elapsed: Duration) {
        let ratio = COMMIT_EVERY.as_secs_f64() / elapsed.as_secs_f64().max(1e-3);
        let next = (self.size as f64 * ratio.clamp(0.25, 2.0)).round() as usize;
        self.size = next.clamp(self.least, self.most);
    }
}

fn isomer_line(args: &Args, atoms: u64, iso: &Isomer, d: Descriptors) -> String {
    if args.json {
        let mut v = serde_json::to_value(Scored::new(&iso.spiral, iso.number, iso.ipr_number, d))
            .unwrap_or_default();
        if let Some(m) = v.as_object_mut() {
            m.insert("ipr".into(), json!(args.ipr));
            m.remove("rank");
        }
        return v.to_string();
    }
    let id = match (iso.number, iso.ipr_number) {
        (Some(n), Some(i)) => format!("C{atoms}:{n} (IPR {i})"),
        (Some(n), None) => format!("C{atoms}:{n}"),
        (None, Some(i)) => format!("C{atoms} IPR:{i}"),
        (None, None) => format!("C{atoms} unit {}", iso.unit),
    };
    format!(
        "{id:<22} {:<5} Np {:>2}  gap {:>7.4}  {:<15} spiral {}",
        d.point_group.name(),
        d.pentagon_adjacencies,
        d.gap,
        d.shell.name(),
        iso.spiral
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn batches_cover_every_unit_once_in_order_and_follow_the_time_taken() {
        let units: Vec<u32> = (0..5000).collect();
        let mut b = Batches::new(2);
        let mut seen = Vec::new();
        let mut sizes = Vec::new();
        // Fast units (0.1 s a batch) grow the batch, at most twofold per step and up to 64
        // units per thread; then slow ones (30 s a batch) shrink it fourfold per step, to one
        // unit per thread.
        let mut step = 0;
        while let Some(batch) = b.next(&units) {
            seen.extend_from_slice(batch);
            sizes.push(batch.len());
            let took = if step < 6 { 0.1 } else { 30.0 };
            b.took(Duration::from_secs_f64(took));
            step += 1;
        }
        assert_eq!(seen, units);
        assert_eq!(&sizes[..10], &[8, 16, 32, 64, 128, 128, 128, 32, 8, 2]);
        assert!(sizes[10..sizes.len() - 1].iter().all(|&s| s == 2));
        // A batch that took exactly the target keeps its size.
        let mut b = Batches::new(1);
        b.took(COMMIT_EVERY);
        assert_eq!(b.size, 4);
    }
}
