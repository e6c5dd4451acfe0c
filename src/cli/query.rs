//! `cagerank query`: ranked, filtered isomers of one size from a catalogue, as a table, CSV or
//! JSON lines (the same keys as `enumerate --json`, without per-bond arrays).
//!
//! Parsing and printing only; the search, its checks and the energy join are
//! `catalogue::query::answer`.

use super::output::{write_line, Out};
use super::CliError;
use cagerank::catalogue::query::{self as request, Request, RequestError, StoredEnergies};
use cagerank::catalogue::{self, CatalogueError, Record};
use cagerank::score::nmr::format_pattern;
use std::path::PathBuf;

const CAUTION: &str = "Caution: rankings are screening heuristics, not predictions of safety or \
real-world stability; refine candidates with quantum chemistry.";

/// Output formats of `query`.
#[derive(clap::ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum Format {
    Table,
    Csv,
    Json,
}

/// Rank and filter the isomers of one size stored in a catalogue.
///
/// Rankings are screening heuristics, not predictions of safety or real-world stability.
#[derive(clap::Args, Debug)]
pub struct Args {
    /// Catalogue directory [default: $CAGERANK_CATALOGUE, else ./catalogues, else the catalogue shipped with this build].
    #[arg(long, value_name = "DIR")]
    pub catalogue: Option<PathBuf>,
    /// Number of atoms (cage size), e.g. 84.
    #[arg(long, value_name = "N")]
    pub atoms: u32,
    /// IPR isomers only (numbers are IPR-list numbers).
    #[arg(long)]
    pub ipr: bool,
    /// Face set of the cages: fullerene, 4-6, 4-5-6 or 5-6-7hH (at most H heptagons). Without
    /// --rank-by, a non-fullerene list is ranked by its set's default order: 4-6 and 4-5-6
    /// fewest square adjacencies, then the largest gap (the BN gap for 4-6); 5-6-7 fewest
    /// heptagons, then fewest pentagon adjacencies, then the largest gap.
    #[arg(long, default_value = "fullerene", value_name = "SET")]
    pub faces: String,
    /// Read the run made for this cage charge (`enumerate --charge Q --catalogue`), e.g. -6 for
    /// M3N@C80 screened as C80^6-.
    #[command(flatten)]
    pub charge: super::ChargeArg,
    /// Show only the best K.
    #[arg(long, value_name = "K")]
    pub top: Option<usize>,
    /// Sort keys, e.g. pentagon_adjacencies,-gap ('-' = largest first) [default: the screening
    /// order for fullerenes, the set's default order for --faces]. `relative_energy_kj` ranks by the tight-binding energies `cagerank screen` stored
    /// (isomers without one come last, and the other keys break ties).
    #[arg(long, value_name = "KEY,...", allow_hyphen_values = true)]
    pub rank_by: Option<String>,
    /// Keep cages with at most this many pentagon adjacencies.
    #[arg(long, value_name = "N")]
    pub max_pentagon_adjacencies: Option<u32>,
    /// Keep cages whose Hückel HOMO-LUMO gap (in |beta|) is at least this.
    #[arg(long, value_name = "GAP")]
    pub min_gap: Option<f32>,
    /// Keep one shell type: properly-closed, pseudo-closed, meta-closed, open-doublet or open.
    #[arg(long, value_name = "TYPE")]
    pub shell: Option<String>,
    /// Keep one point group (Schoenflies symbol, e.g. D5h).
    #[arg(long, value_name = "GROUP")]
    pub point_group: Option<String>,
    /// Keep cages with exactly this 13C NMR pattern, written LINESxINTENSITY,... as in the
    /// literature: 3x10,2x20 is C70-D5h's 3 lines of intensity 10 and 2 of intensity 20. Lines
    /// times intensity must add up to --atoms.
    #[arg(long, value_name = "PATTERN")]
    pub nmr: Option<String>,
    /// Keep cages whose 13C NMR spectrum has this many lines (e.g. 19 for C76-D2).
    #[arg(long, value_name = "N")]
    pub nmr_lines: Option<u64>,
    /// Keep cages whose predicted lines can merge into this measured pattern (LINESxINTENSITY,
    /// e.g. 1x10,3x20 when two of C70's intensity-10 lines coincide): the predicted lines must
    /// group into the measured ones with equal intensity sums.
    #[arg(long, value_name = "PATTERN", conflicts_with = "nmr")]
    pub nmr_merged: Option<String>,
    /// Keep chiral cages only.
    #[arg(long, conflicts_with = "achiral")]
    pub chiral: bool,
    /// Keep achiral cages only.
    #[arg(long)]
    pub achiral: bool,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
}

/// The catalogue directory from an option or the documented default.
pub fn catalogue_dir(option: &Option<PathBuf>) -> PathBuf {
    option.clone().unwrap_or_else(catalogue::default_dir)
}

/// Damaged, mismatched or missing data and impossible requests are the user's to fix (exit 2);
/// I/O failures and locks held by others are failures (exit 1). Every command that touches a
/// catalogue maps its errors here, so the same bad input gives the same exit code everywhere.
pub fn catalogue_error(e: CatalogueError) -> CliError {
    if e.is_user_error() {
        CliError::usage(e.to_string())
    } else {
        CliError::failed(e.to_string())
    }
}

fn to_request(args: &Args) -> Request {
    Request {
        atoms: args.atoms,
        ipr: args.ipr,
        faces: args.faces.clone(),
        charge: args.charge.charge,
        top: args.top,
        rank_by: args.rank_by.clone(),
        max_pentagon_adjacencies: args.max_pentagon_adjacencies,
        min_gap: args.min_gap,
        shell: args.shell.clone(),
        point_group: args.point_group.clone(),
        nmr: args.nmr.clone(),
        nmr_lines: args.nmr_lines,
        nmr_merged: args.nmr_merged.clone(),
        chiral: match (args.chiral, args.achiral) {
            (true, _) => Some(true),
            (_, true) => Some(false),
            _ => None,
        },
    }
}

/// A bad request is the user's to fix; catalogue errors keep their own exit codes.
pub fn request_error(e: RequestError) -> CliError {
    match e {
        RequestError::Invalid(m) => CliError::usage(m),
        RequestError::Catalogue(e) => catalogue_error(e),
    }
}

pub fn run(args: Args) -> Result<(), CliError> {
    let dir = catalogue_dir(&args.catalogue);
    let answer = request::answer(&dir, &to_request(&args)).map_err(request_error)?;
    let records = answer.records;
    let mut out = Out::stdout();
    // Every record of one run has the same electron count, so the SOMO column is all or none.
    let somo = records.iter().any(|r| r.somo.is_some());
    let energy = (!answer.energies.is_empty()).then_some(&answer.energies);
    match args.format {
        Format::Table => print_table(&mut out, &records, somo, energy)?,
        Format::Csv => print_csv(&mut out, &records, somo, energy)?,
        Format::Json => print_json(&mut out, &records, energy)?,
    }
    if args.format == Format::Table {
        write_line(&mut out, CAUTION)?;
    } else {
        eprintln!("{CAUTION}");
    }
    out.finish()
}

fn columns(somo: bool, energy: Option<&StoredEnergies>) -> Vec<&'static str> {
    cagerank::catalogue::query::columns(somo, energy.is_some())
}

/// Index of the `somo` cell among the cells of [`cells`] before the energy columns go in.
const SOMO: usize = 8;

/// One row's cells; `missing` is written for values a record does not have ("-" in tables, an
/// empty cell in CSV so that numeric columns stay numeric).
fn cells(
    rank: usize,
    r: &Record,
    somo: bool,
    energy: Option<&StoredEnergies>,
    missing: &str,
) -> Vec<String> {
    let number_text = |n: Option<u64>| n.map_or(missing.to_string(), |n| n.to_string());
    let all: [String; 14] = [
        rank.to_string(),
        number_text(r.number),
        number_text(r.ipr_number),
        r.point_group.name().to_string(),
        r.pentagon_adjacencies.to_string(),
        r.shell.name().to_string(),
        format!("{:.4}", r.hexagon_strain),
        format!("{:.4}", r.gap),
        r.somo.map_or(missing.to_string(), |x| format!("{x:.4}")),
        format!("{:.4}", r.pi_energy),
        r.kekule.to_string(),
        r.chiral.to_string(),
        format_pattern(&r.nmr),
        r.spiral_text(),
    ];
    let mut row: Vec<String> = all
        .into_iter()
        .enumerate()
        .filter(|&(i, _)| somo || i != SOMO)
        .map(|(_, c)| c)
        .collect();
    if let Some(energy) = energy {
        let stored = energy.get(r);
        let rel = stored
            .and_then(|(_, rel)| rel)
            .map_or(missing.to_string(), |v| format!("{v:.1}"));
        let gap = stored.map_or(missing.to_string(), |(e, _)| format!("{:.3}", e.gap_ev));
        row.splice(5..5, [rel, gap]);
    }
    row
}

fn print_table(
    out: &mut Out,
    records: &[Record],
    somo: bool,
    energy: Option<&StoredEnergies>,
) -> Result<(), CliError> {
    let rows: Vec<Vec<String>> = records
        .iter()
        .enumerate()
        .map(|(i, r)| cells(i + 1, r, somo, energy, "-"))
        .collect();
    let names = columns(somo, energy);
    let mut widths: Vec<usize> = names.iter().map(|c| c.len()).collect();
    for row in &rows {
        for (w, cell) in widths.iter_mut().zip(row) {
            *w = (*w).max(cell.len());
        }
    }
    let line = |cells: Vec<&str>| {
        let padded: Vec<String> = cells
            .iter()
            .zip(&widths)
            .map(|(c, w)| format!("{c:<w$}"))
            .collect();
        padded.join("  ").trim_end().to_string()
    };
    write_line(out, &line(names))?;
    for row in &rows {
        write_line(out, &line(row.iter().map(String::as_str).collect()))?;
    }
    if records.is_empty() {
        write_line(out, "(no isomer matches)")?;
    }
    Ok(())
}

/// CSV quoting per RFC 4180: quote fields holding commas, quotes or spaces.
fn csv_field(s: &str) -> String {
    if s.contains([',', '"', ' ', '\n']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

fn print_csv(
    out: &mut Out,
    records: &[Record],
    somo: bool,
    energy: Option<&StoredEnergies>,
) -> Result<(), CliError> {
    write_line(out, &columns(somo, energy).join(","))?;
    for (i, r) in records.iter().enumerate() {
        let row: Vec<String> = cells(i + 1, r, somo, energy, "")
            .iter()
            .map(|c| csv_field(c))
            .collect();
        write_line(out, &row.join(","))?;
    }
    Ok(())
}

fn print_json(
    out: &mut Out,
    records: &[Record],
    energy: Option<&StoredEnergies>,
) -> Result<(), CliError> {
    for (i, r) in records.iter().enumerate() {
        let mut scored = r.to_scored();
        scored.rank = Some(i as u64 + 1);
        let mut value = serde_json::to_value(&scored)
            .map_err(|e| CliError::failed(format!("cannot encode JSON: {e}")))?;
        if let (Some(energy), Some(map)) = (energy, value.as_object_mut()) {
            let stored = energy.get(r);
            map.insert("energy_ev".into(), stored.map(|(e, _)| e.energy_ev).into());
            map.insert(
                "relative_energy_kj".into(),
                stored.and_then(|(_, rel)| rel).into(),
            );
            map.insert("tb_gap_ev".into(), stored.map(|(e, _)| e.gap_ev).into());
        }
        let text = value.to_string();
        write_line(out, &text)?;
    }
    Ok(())
}
