//! `cagerank enumerate`: list every isomer of the requested sizes, or write them scored into a
//! catalogue (resumably, committing finished units every few seconds).
//!
//! Before a long run it says what the run will cost (`enumerate::estimate`), and it caps the
//! thread count at what the machine offers; the text listing is a table per size whose columns
//! are grouped under the headings `show` uses (identity, topology, electronic structure,
//! symmetry), units in the labels. `--json` lines keep their keys.

use super::output::{counted, grouped, write_line, Out};
use super::progress;
use super::query::catalogue_error;
use super::sizes::{parse_sizes, Size};
use super::CliError;
use cagerank::cage::FaceSet;
use cagerank::catalogue::{self, made_by, Deal, Record, RunInfo, ShardId, Writer};
use cagerank::enumerate::{self, Found, Isomer, Options, Shard, Spec, Work};
use cagerank::id::{IsomerId, List};
use cagerank::score::{self, huckel, Descriptors, ScoreError, Scored};
use serde_json::json;
use std::ops::ControlFlow;
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

/// How long one batch of units should take before it is committed: a run killed at any
/// moment loses at most about this much work (more only when single units take longer).
/// One commit is one small file and an fsync, so a few seconds keep its cost invisible.
const COMMIT_EVERY: Duration = Duration::from_secs(3);

/// What `enumerate --help` says about size, time, memory and threads.
const LIMITS_HELP: &str = "\
Sizes and cost:
  Any even atom count from 20 (no fullerene has 22) up to 100000 is accepted. Finding one isomer
  near the start of a list takes seconds even at C1000 (`show C1000:1`), but a whole list grows
  as about n^9 (Thurston 1998):
  all C100 takes about 4 minutes on 2 threads, all C150 about half a day, IPR C200 about a week,
  C1000 about a million years. Before a run expected to take over a minute or 4 GB of memory, a
  note on stderr gives the isomer count, time and peak memory from a model fitted to measured
  runs (within a factor of about two up to C104, an order-of-magnitude guide beyond; --quiet
  hides it); the run then starts without asking.
  Memory stays bounded at any size: the completion store's cap (about 1 GB, 2 GB with hexagon
  starts), a window of units whose isomers are held at once, and each thread's scratch.
  --count-only keeps no isomer. --threads above the cores this process may use is capped to
  them, with a note.";

#[derive(clap::Args, Debug)]
#[command(after_long_help = LIMITS_HELP)]
pub struct Args {
    /// Atom counts: even numbers or inclusive ranges such as 60..100 (up to 100000; see the
    /// cost notes below).
    #[arg(required = true, value_name = "SIZES")]
    pub sizes: Vec<String>,
    /// Only isomers obeying the isolated-pentagon rule (no two pentagons share an edge).
    #[arg(long)]
    pub ipr: bool,
    /// Worker threads (default: one per core). Output does not depend on it. More threads
    /// than the machine offers (its cores, or this process's share of them) are capped to
    /// that, with a note.
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
    /// No progress bar and no notes, such as the estimate of time and memory printed before a
    /// run expected to take over a minute (warnings are still printed).
    #[arg(long)]
    pub quiet: bool,
    /// Also search spirals starting on a hexagon even where pentagon starts are checked to find
    /// every cage (up to C98, IPR C120): a completeness check, several times slower. Beyond
    /// that range hexagon starts are always searched (one C100 cage has no pentagon start).
    #[arg(long)]
    pub all_starts: bool,
    /// Search only spirals starting on a pentagon, also beyond C98 (IPR C120): several times
    /// faster there, but may miss cages (all C100 then gives 285,913 of 285,914). With another
    /// --faces, only spirals starting on the set's smallest face (a completeness check).
    #[arg(long, conflicts_with = "all_starts")]
    pub pentagon_starts: bool,
    #[command(flatten)]
    pub faces: super::cages::FacesArg,
    #[command(flatten)]
    pub charge: super::ChargeArg,
    /// Write scored isomers into this catalogue directory (resumable: run the same command again
    /// after an interruption). Default directory: $CAGERANK_CATALOGUE or ./catalogues. Runs of
    /// different --charge values are kept side by side (fullerene-c80-ipr-q-6.cgr).
    #[arg(long, value_name = "DIR", num_args = 0..=1)]
    pub catalogue: Option<Option<PathBuf>>,
}

pub fn run(mut args: Args) -> Result<(), CliError> {
    let set = args.faces.face_set()?;
    // For fullerenes --isolated is the isolated-pentagon rule, i.e. --ipr.
    args.ipr |= set == FaceSet::Fullerene && args.faces.isolated;
    let sizes = if set == FaceSet::Fullerene {
        parse_sizes(&args.sizes)?
    } else {
        super::cages::parse_sizes(&args.sizes, set)?
    };
    args.threads = super::capped_threads(args.threads, args.quiet);
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
    let set = args.faces.face_set()?;
    if set != FaceSet::Fullerene {
        let isolated = args.faces.isolated;
        return super::cages::spec(set, atoms, isolated, args.ipr, args.pentagon_starts);
    }
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
    if let Ok(set) = args.faces.face_set() {
        if set != FaceSet::Fullerene {
            return super::cages::count_line(args.json, set, atoms, args.faces.isolated, count);
        }
    }
    if args.json {
        json!({"atoms": atoms, "ipr": args.ipr, "isomers": count}).to_string()
    } else {
        let counted = if args.ipr {
            counted(count, "IPR isomer", "IPR isomers")
        } else {
            counted(count, "isomer", "isomers")
        };
        // A shard's count is only its part of the list.
        let part = args
            .shard
            .map_or(String::new(), |s| format!(" (shard {s})"));
        format!("C{atoms}{part}: {counted}")
    }
}

/// A run expected to take longer than this gets a note with its estimate first.
const LONG_RUN: Duration = Duration::from_secs(60);

/// So does one expected to need more memory than this.
const LARGE_RUN_BYTES: f64 = 4.0 * (1u64 << 30) as f64;

/// Says before a long or large run what it will take (one line on stderr; `--quiet` hides it).
fn announce(args: &Args, spec: &Spec, work: Work) {
    if args.quiet {
        return;
    }
    let shards = args.shard.map_or(1, |s| s.count);
    let e = enumerate::estimate(spec, args.threads, shards, work);
    if e.seconds < LONG_RUN.as_secs_f64() && e.bytes < LARGE_RUN_BYTES {
        return;
    }
    let list = if spec.ipr { "IPR isomers" } else { "isomers" };
    let isomers = if e.published {
        format!("{} {list} (published count)", grouped(e.isomers as u64))
    } else {
        format!("about {} {list} (modelled count)", approximately(e.isomers))
    };
    let part = args
        .shard
        .map_or(String::new(), |s| format!(" for shard {s}"));
    eprintln!(
        "cagerank: note: C{}: {isomers}; expect about {}{part} on {} and up to about {} of memory (modelled from measured runs; see `enumerate --help`)",
        spec.atoms,
        duration_text(e.seconds),
        counted(e.threads as u64, "thread", "threads"),
        bytes_text(e.bytes),
    );
}

/// Two significant figures, in scientific notation past a million.
fn approximately(x: f64) -> String {
    if x < 1e6 {
        grouped(x.round() as u64)
    } else {
        format!("{x:.1e}")
    }
}

/// "45 s", "3.9 min", "2.1 h", "5.0 days", "3.1e12 years".
fn duration_text(seconds: f64) -> String {
    const MINUTE: f64 = 60.0;
    const HOUR: f64 = 3600.0;
    const DAY: f64 = 86_400.0;
    const YEAR: f64 = 365.25 * DAY;
    if seconds < MINUTE {
        format!("{seconds:.0} s")
    } else if seconds < HOUR {
        format!("{:.1} min", seconds / MINUTE)
    } else if seconds < DAY {
        format!("{:.1} h", seconds / HOUR)
    } else if seconds < YEAR {
        format!("{:.1} days", seconds / DAY)
    } else {
        format!("{} years", approximately(seconds / YEAR))
    }
}

fn bytes_text(bytes: f64) -> String {
    const GB: f64 = 1e9;
    if bytes < GB {
        format!("{:.0} MB", bytes / 1e6)
    } else if bytes < 1e6 * GB {
        format!("{:.1} GB", bytes / GB)
    } else {
        format!("{:.1e} GB", bytes / GB)
    }
}

fn run_size(out: &mut Out, args: &Args, atoms: u64) -> Result<(), CliError> {
    if !args.count_only {
        score::check_size(atoms as usize).map_err(|e| CliError::usage(e.to_string()))?;
    }
    let spec = spec_for(args, atoms)?;
    if !args.count_only {
        huckel::occupation(atoms as usize, args.charge.charge)
            .map_err(|e| CliError::usage(e.to_string()))?;
    }
    let work = if args.count_only && args.catalogue.is_none() {
        Work::Count
    } else {
        Work::Score
    };
    announce(args, &spec, work);
    if let Some(dir) = &args.catalogue {
        return write_catalogue(out, args, &spec, dir.as_deref());
    }
    let opts = Options {
        threads: args.threads,
        shard: args.shard,
    };
    let bar = progress::bar(0, &format!("C{atoms}"), args.quiet);
    if args.count_only {
        let count = enumerate::count_run(&spec, &opts, |done, total| {
            bar.set_length(total as u64);
            bar.set_position(done as u64);
        })
        .map_err(|e| CliError::failed(e.to_string()))?;
        bar.finish_and_clear();
        return write_line(out, &count_line(args, atoms, count));
    }
    let table = Table::new(args, &spec);
    let other_set = args
        .faces
        .face_set()
        .ok()
        .filter(|&set| set != FaceSet::Fullerene);
    let mut header = (!args.json && other_set.is_none()).then(|| table.header(args, &spec));
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
            // The header waits for the first isomer, so that a failure prints nothing else.
            let header = header.take().unwrap_or_default();
            match scored
                .map_err(|e| CliError::failed(format!("scoring {}: {e}", iso.spiral)))
                .and_then(|d| {
                    header.iter().try_for_each(|h| write_line(out, h))?;
                    let line = if let Some(set) = other_set {
                        super::cages::isomer_line(args.json, set, atoms, &iso, d)
                    } else if args.json {
                        json_line(args, &iso, d)
                    } else {
                        table.row(&iso, &d)
                    };
                    write_line(out, &line)
                }) {
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
    if count == 0 && !args.json {
        write_line(out, &count_line(args, atoms, 0))?;
    }
    Ok(())
}

/// Enumerates the units the catalogue still lacks, scores them and commits them in batches of
/// about [`COMMIT_EVERY`]; a killed run resumes from the last committed batch.
fn write_catalogue(
    out: &mut Out,
    args: &Args,
    spec: &Spec,
    dir: Option<&Path>,
) -> Result<(), CliError> {
    let dir = dir.map_or_else(catalogue::default_write_dir, Path::to_path_buf);
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
    // A cluster task's log is often the only sign that a resubmitted task resumed rather than
    // started over, so the final line says how many units were already committed.
    let mine = catalogue::resume::units_of(writer.info()).len();
    let resumed = mine - pending.len().min(mine);
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
        let resumed = if resumed > 0 && !done.was_complete {
            format!(" (resumed: {resumed} of {mine} units were already committed)")
        } else {
            String::new()
        };
        format!(
            "C{}: {counted} written to {}{resumed}",
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
        let threads = enumerate::worker_threads(threads);
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

fn json_line(args: &Args, iso: &Isomer, d: Descriptors) -> String {
    let mut v = serde_json::to_value(Scored::new(&iso.spiral, iso.number, iso.ipr_number, d))
        .unwrap_or_default();
    if let Some(m) = v.as_object_mut() {
        m.insert("ipr".into(), json!(args.ipr));
        m.remove("rank");
    }
    v.to_string()
}

/// The text listing of one size: a title, a row of group headings (the ones `show` uses) over
/// a row of column labels with units, then one aligned row per isomer. Widths come from the
/// longest ID the list can hold, so every row of a size lines up.
struct Table {
    atoms: u32,
    /// Width of the ID column, and of the IPR-ID column (0: no such column).
    id: usize,
    ipr_id: usize,
}

/// Column widths after the IDs: pentagon adjacencies, gap, shell, point group.
const NP: usize = 13;
const GAP: usize = 12;
const SHELL: usize = 15;
const GROUP: usize = 11;

impl Table {
    fn new(args: &Args, spec: &Spec) -> Table {
        let (isomers, _) = enumerate::estimate::isomers(spec);
        let digits = (isomers.max(1.0).log10().floor() as usize + 1).max(1);
        let atoms = spec.atoms;
        let numbered = args.shard.is_none();
        // "C60:all-" or "C84:IPR-" before the number.
        let prefix = format!("C{atoms}:all-").len();
        let id = if numbered {
            prefix + digits
        } else {
            format!("C{atoms} (unit 0000)").len()
        };
        // No IPR fullerene has fewer than 60 atoms or 62-68 (OEIS A046880), so those lists
        // get no IPR-ID column.
        let has_ipr = atoms == 60 || atoms >= 70;
        let ipr_id = if numbered && !spec.ipr && has_ipr {
            prefix + digits
        } else {
            0
        };
        Table {
            atoms,
            id: id.max(8),
            ipr_id: if ipr_id == 0 { 0 } else { ipr_id.max(8) },
        }
    }

    fn header(&self, args: &Args, spec: &Spec) -> Vec<String> {
        let list = if spec.ipr {
            "IPR list"
        } else {
            "complete list"
        };
        let numbers = match args.shard {
            Some(s) => format!("shard {s}, numbered when the shards are merged"),
            None => "in spiral order".to_string(),
        };
        let ids = self.id + if self.ipr_id > 0 { 2 + self.ipr_id } else { 0 };
        let (id_label, ipr_label) = if spec.ipr {
            ("IPR ID", "")
        } else {
            ("ID", "IPR ID")
        };
        let mut labels = format!("{id_label:<w$}", w = self.id);
        if self.ipr_id > 0 {
            labels.push_str(&format!("  {ipr_label:<w$}", w = self.ipr_id));
        }
        vec![
            format!(
                "C{} {list}, {numbers}; Hückel values for charge {:+}",
                self.atoms, args.charge.charge
            ),
            format!(
                "{:<ids$}  {:<NP$}  {:<w$}  {:<GROUP$}  {}",
                "identity",
                "topology",
                "electronic structure (Hückel)",
                "symmetry",
                "identity",
                w = GAP + 2 + SHELL
            ),
            format!(
                "{labels}  {:>NP$}  {:>GAP$}  {:<SHELL$}  {:<GROUP$}  {}",
                "pentagon adj.",
                "gap (|beta|)",
                "shell",
                "point group",
                "canonical spiral (pentagon positions)"
            ),
        ]
    }

    fn row(&self, iso: &Isomer, d: &Descriptors) -> String {
        let atoms = self.atoms;
        let (id, ipr_id) = match (iso.number, iso.ipr_number) {
            (Some(n), i) => (
                IsomerId::new(atoms, List::All, n).to_string(),
                i.map(|i| IsomerId::new(atoms, List::Ipr, i).to_string()),
            ),
            (None, Some(i)) => (IsomerId::new(atoms, List::Ipr, i).to_string(), None),
            (None, None) => (format!("C{atoms} (unit {})", iso.unit), None),
        };
        let mut line = format!("{id:<w$}", w = self.id);
        if self.ipr_id > 0 {
            line.push_str(&format!(
                "  {:<w$}",
                ipr_id.unwrap_or_default(),
                w = self.ipr_id
            ));
        }
        format!(
            "{line}  {:>NP$}  {:>GAP$.4}  {:<SHELL$}  {:<GROUP$}  {}",
            d.pentagon_adjacencies,
            d.gap,
            d.shell.name(),
            d.point_group.name(),
            iso.spiral
        )
    }
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
