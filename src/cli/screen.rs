//! `cagerank screen`: the two-stage screen of one size (graph descriptors choose candidates,
//! tight-binding relaxations rank them), printed ranked by relative energy.
//!
//! Parsing and printing only; the stages are `cagerank::screen`.

use super::output::{write_line, Out};
use super::progress;
use super::query::catalogue_error;
use super::CliError;
use cagerank::cage::FaceSet;
use cagerank::catalogue::lock::Lock;
use cagerank::energy::Settings;
use cagerank::id::{IsomerId, List};
use cagerank::screen::{self, Candidates, Ranked, ScreenError, ScreenSpec};
use serde_json::json;
use std::path::PathBuf;

pub const CAUTION: &str = "Caution: tight-binding energies are 0 K electronic energies of a bare \
cage or cage ion (no zero-point energy, entropy, spin polarisation or metal atoms); the ranking \
is a screening heuristic, not a prediction of real-world stability or safety. Use the geometries \
as starting points for proper quantum chemistry.";

/// Output formats of `screen` and `energy`.
#[derive(clap::ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum Format {
    Table,
    Csv,
    Json,
}

/// Rank the isomers of one size by relaxed tight-binding energy (two stages).
///
/// Stage 1 takes candidates from the catalogue: every isomer within a margin of the fewest
/// pentagon adjacencies (1 for neutral cages, 3 for cage ions), best first by the screening
/// order, at most --candidates. Stage 2 relaxes them with the carbon tight-binding model of Xu et
/// al. (1992), stores each result in the catalogue as it finishes (a killed run loses none) and
/// prints all stored results ranked by energy. Screening heuristics, not stability predictions.
#[derive(clap::Args, Debug)]
pub struct Args {
    /// Number of atoms (cage size), e.g. 84.
    #[arg(long, value_name = "N")]
    pub atoms: u32,
    /// Screen the IPR list (numbers are IPR-list numbers).
    #[arg(long)]
    pub ipr: bool,
    #[command(flatten)]
    pub charge: super::ChargeArg,
    /// Catalogue directory, read and written (energies are stored in it) [default:
    /// $CAGERANK_CATALOGUE, else ./catalogues; never the shipped catalogue of the source tree].
    #[arg(long, value_name = "DIR")]
    pub catalogue: Option<PathBuf>,
    /// Relax at most K candidates from stage 1 [default: 100].
    #[arg(long, value_name = "K", conflicts_with = "all")]
    pub candidates: Option<usize>,
    /// Stage-1 margin: admit isomers with up to this many pentagon adjacencies above the fewest
    /// [default: 1 for neutral cages, 3 for cage ions].
    #[arg(long, value_name = "M", conflicts_with = "all")]
    pub margin: Option<u32>,
    /// Relax every isomer of the list (no stage-1 cut).
    #[arg(long)]
    pub all: bool,
    /// Print only the best T.
    #[arg(long, value_name = "T")]
    pub top: Option<usize>,
    /// Worker threads (default: one per core). Results do not depend on it.
    #[arg(long, default_value_t = 0)]
    pub threads: usize,
    /// Convergence: largest residual force on any atom, eV/Å.
    #[arg(long, value_name = "F", default_value_t = 1e-3)]
    pub max_force: f64,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
    /// No progress bar.
    #[arg(long)]
    pub quiet: bool,
}

pub fn screen_error(e: ScreenError) -> CliError {
    match e {
        ScreenError::Catalogue(e) => catalogue_error(e),
        ScreenError::Charge(m) => CliError::usage(m),
        e @ ScreenError::Energy { .. } => CliError::failed(e.to_string()),
    }
}

/// A force threshold that a relaxation can meet.
pub fn check_max_force(f: f64) -> Result<(), CliError> {
    if f.is_finite() && f > 0.0 {
        Ok(())
    } else {
        Err(CliError::usage(format!(
            "--max-force {f} is not a positive number; use e.g. 1e-3 (eV/Å)"
        )))
    }
}

fn spec_of(args: &Args) -> Result<ScreenSpec, CliError> {
    check_max_force(args.max_force)?;
    if args.candidates == Some(0) {
        return Err(CliError::usage(
            "--candidates 0 would relax nothing; give K >= 1 or --all",
        ));
    }
    if args.top == Some(0) {
        return Err(CliError::usage(
            "--top 0 would print nothing; give T >= 1 or leave it out",
        ));
    }
    let candidates = if args.all {
        Candidates::All
    } else {
        Candidates::Margin {
            margin: args.margin,
            max: args.candidates.unwrap_or(screen::DEFAULT_CANDIDATES),
        }
    };
    Ok(ScreenSpec {
        face_set: FaceSet::Fullerene,
        atoms: args.atoms,
        ipr: args.ipr,
        charge: args.charge.charge,
        candidates,
        settings: Settings {
            max_force: args.max_force,
            ..Settings::default()
        },
    })
}

pub fn run(args: Args) -> Result<(), CliError> {
    let spec = spec_of(&args)?;
    let threads = super::capped_threads(args.threads, args.quiet);
    let dir = args
        .catalogue
        .clone()
        .unwrap_or_else(cagerank::catalogue::default_write_dir);
    let candidates = screen::select(&dir, &spec).map_err(screen_error)?;
    let _lock = Lock::acquire(&dir).map_err(catalogue_error)?;
    let bar = progress::bar(0, &format!("C{} relaxing", spec.atoms), args.quiet);
    let outcome = screen::relax_candidates(&dir, &spec, &candidates, threads, &|done, total| {
        bar.set_length(total as u64);
        bar.set_position(done as u64);
    })
    .map_err(screen_error)?;
    bar.finish_and_clear();
    if !args.quiet {
        eprintln!(
            "cagerank: C{} {} charge {:+}: {} candidate(s), {} relaxed now, {} already stored",
            spec.atoms,
            List::from_ipr(spec.ipr).words(),
            spec.charge,
            candidates.len(),
            outcome.relaxed,
            outcome.reused
        );
    }
    let ranked = screen::ranked(&dir, &spec).map_err(screen_error)?;
    let shown = &ranked[..args.top.unwrap_or(usize::MAX).min(ranked.len())];
    print_ranked(shown, &spec, args.format)?;
    eprintln!("{CAUTION}");
    Ok(())
}

/// Prints ranked energies as a table, CSV or JSON lines.
pub fn print_ranked(rows: &[Ranked], spec: &ScreenSpec, format: Format) -> Result<(), CliError> {
    let mut out = Out::stdout();
    match format {
        Format::Table => {
            write_line(
                &mut out,
                &format!(
                    "{:>4}  {:<14} {:<5} {:>3}  {:>12}  {:>12}  {:>8}  {:>10}  note",
                    "rank",
                    "isomer",
                    "group",
                    "N_p",
                    "ΔE (kJ/mol)",
                    "E (eV)",
                    "gap (eV)",
                    "F (eV/Å)"
                ),
            )?;
            for r in rows {
                write_line(&mut out, &table_row(r, spec))?;
            }
        }
        Format::Csv => {
            write_line(&mut out, &CSV_COLUMNS.join(","))?;
            for r in rows {
                write_line(&mut out, &csv_row(r, spec))?;
            }
        }
        Format::Json => {
            for r in rows {
                write_line(&mut out, &json_row(r, spec).to_string())?;
            }
        }
    }
    out.finish()
}

fn id_of(r: &Ranked, spec: &ScreenSpec) -> IsomerId {
    IsomerId::new(spec.atoms, List::from_ipr(spec.ipr), r.energy.number)
}

/// Why a result is not ranked, or notes a chemist should see.
fn note(r: &Ranked) -> String {
    let mut notes = Vec::new();
    if !r.energy.graph_kept {
        notes.push("rearranged: bonds changed, not ranked");
    }
    if !r.energy.converged {
        notes.push("not converged, not ranked");
    }
    if r.energy.somo.is_some() {
        notes.push("open-shell doublet (gap is SOMO-LUMO)");
    } else if r.energy.partly_filled {
        notes.push("open shell");
    }
    if r.energy.perturbed {
        notes.push("relaxed again from a perturbed start");
    }
    notes.join("; ")
}

fn table_row(r: &Ranked, spec: &ScreenSpec) -> String {
    let rank = r.rank.map_or("-".to_string(), |k| k.to_string());
    let rel = r.relative_kj.map_or("-".to_string(), |v| format!("{v:.1}"));
    format!(
        "{:>4}  {:<14} {:<5} {:>3}  {:>12}  {:>12.4}  {:>8.3}  {:>10.1e}  {}",
        rank,
        id_of(r, spec).to_string(),
        r.record.point_group.name(),
        r.record.pentagon_adjacencies,
        rel,
        r.energy.energy_ev,
        r.energy.gap_ev,
        r.energy.max_force,
        note(r)
    )
}

const CSV_COLUMNS: [&str; 15] = [
    "rank",
    "id",
    "atoms",
    "ipr",
    "number",
    "ipr_number",
    "charge",
    "point_group",
    "pentagon_adjacencies",
    "energy_ev",
    "relative_energy_kj",
    "tb_gap_ev",
    "max_force",
    "converged",
    "graph_kept",
];

fn opt<T: ToString>(v: Option<T>) -> String {
    v.map_or(String::new(), |v| v.to_string())
}

fn csv_row(r: &Ranked, spec: &ScreenSpec) -> String {
    [
        opt(r.rank),
        id_of(r, spec).to_string(),
        spec.atoms.to_string(),
        r.record.ipr.to_string(),
        opt(r.record.number),
        opt(r.record.ipr_number),
        spec.charge.to_string(),
        r.record.point_group.name().to_string(),
        r.record.pentagon_adjacencies.to_string(),
        format!("{:.6}", r.energy.energy_ev),
        opt(r.relative_kj.map(|v| format!("{v:.3}"))),
        format!("{:.6}", r.energy.gap_ev),
        format!("{:.3e}", r.energy.max_force),
        r.energy.converged.to_string(),
        r.energy.graph_kept.to_string(),
    ]
    .join(",")
}

fn json_row(r: &Ranked, spec: &ScreenSpec) -> serde_json::Value {
    json!({
        "id": id_of(r, spec).to_string(),
        "atoms": spec.atoms,
        "ipr": r.record.ipr,
        "number": r.record.number,
        "ipr_number": r.record.ipr_number,
        "charge": spec.charge,
        "point_group": r.record.point_group.name(),
        "pentagon_adjacencies": r.record.pentagon_adjacencies,
        "energy_ev": r.energy.energy_ev,
        "relative_energy_kj": r.relative_kj,
        "tb_gap_ev": r.energy.gap_ev,
        "tb_homo_ev": r.energy.homo_ev,
        "tb_lumo_ev": r.energy.lumo_ev,
        "tb_somo_ev": r.energy.somo.map(|s| s[0]),
        "max_force": r.energy.max_force,
        "iterations": r.energy.iterations,
        "converged": r.energy.converged,
        "graph_kept": r.energy.graph_kept,
        "rank": r.rank,
    })
}
