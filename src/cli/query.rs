//! `cagerank query`: ranked, filtered isomers of one size from a catalogue, as a table, CSV or
//! JSON lines (the same keys as `enumerate --json`, without per-bond arrays).
//!
//! Parsing and printing only; the search is `catalogue::query`.

use super::output::{write_line, Out};
use super::CliError;
use cagerank::cage::FaceSet;
use cagerank::catalogue::energies::{self, Energies, EnergyHeader, EnergyRecord};
use cagerank::catalogue::record::shell_from_name;
use cagerank::catalogue::{self, CatalogueError, Filter, PointGroup, Query, Record};
use cagerank::score::nmr::{format_pattern, parse_pattern};
use cagerank::score::rank::parse_keys;
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
    /// Catalogue directory [default: $CAGERANK_CATALOGUE, else ./catalogues].
    #[arg(long, value_name = "DIR")]
    pub catalogue: Option<PathBuf>,
    /// Number of atoms (cage size), e.g. 84.
    #[arg(long, value_name = "N")]
    pub atoms: u32,
    /// IPR isomers only (numbers are IPR-list numbers).
    #[arg(long)]
    pub ipr: bool,
    /// Face set of the cages: fullerene, 4-6, 4-5-6 or 5-6-7hH (5-6-7 with at most H
    /// heptagons, as enumerated with --faces 5-6-7 --heptagons H). With a set other than
    /// fullerene, --ipr reads the isolated list (no two squares, or for 5-6-7 pentagons, share
    /// an edge).
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
    /// order]. `relative_energy_kj` ranks by the tight-binding energies `cagerank screen` stored
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

fn parse_faces(text: &str) -> Result<FaceSet, CliError> {
    FaceSet::from_label(text.trim()).ok_or_else(|| {
        CliError::usage(format!(
            "unknown face set '{}'; use fullerene, 4-6, 4-5-6 or 5-6-7hH (H the heptagon bound \
             of the run, e.g. 5-6-7h1)",
            cagerank::id::printable(text)
        ))
    })
}

fn build_query(args: &Args) -> Result<Query, CliError> {
    let shell = match &args.shell {
        Some(s) => Some(shell_from_name(s).ok_or_else(|| {
            CliError::usage(format!(
                "unknown shell type '{s}'; use properly-closed, pseudo-closed, meta-closed, open-doublet or open"
            ))
        })?),
        None => None,
    };
    let point_group = match &args.point_group {
        Some(g) => Some(PointGroup::from_name(g).ok_or_else(|| {
            CliError::usage(format!(
                "'{g}' is not a point group a cage can have; use e.g. Ih, D5h, C2v, C1"
            ))
        })?),
        None => None,
    };
    let pattern =
        |text: &str| parse_pattern(text, args.atoms).map_err(|e| CliError::usage(e.to_string()));
    let nmr = args.nmr.as_deref().map(pattern).transpose()?;
    let nmr_merged = args.nmr_merged.as_deref().map(pattern).transpose()?;
    if args.nmr_lines == Some(0) {
        return Err(CliError::usage(
            "--nmr-lines 0 matches nothing; every cage has at least 1 line",
        ));
    }
    let chiral = match (args.chiral, args.achiral) {
        (true, _) => Some(true),
        (_, true) => Some(false),
        _ => None,
    };
    let rank_by = match args.rank_by.as_deref().map(split_energy_key) {
        Some((_, rest)) if rest.is_empty() => Vec::new(),
        Some((_, rest)) => parse_keys(&rest).map_err(|e| CliError::usage(e.to_string()))?,
        None => Vec::new(),
    };
    Ok(Query {
        atoms: args.atoms,
        face_set: parse_faces(&args.faces)?,
        ipr: args.ipr,
        charge: args.charge.charge,
        filter: Filter {
            max_pentagon_adjacencies: args.max_pentagon_adjacencies,
            min_gap: args.min_gap,
            shell,
            point_group,
            nmr,
            nmr_lines: args.nmr_lines,
            nmr_merged,
            chiral,
            ipr_only: false,
        },
        rank_by,
        top: args.top,
    })
}

/// The key that ranks by stored tight-binding energies (not a catalogue column).
const ENERGY_KEY: &str = "relative_energy_kj";

/// Splits `relative_energy_kj` (with its sign) out of a `--rank-by` list: whether it was there
/// and descending, and the other keys in their order.
fn split_energy_key(text: &str) -> (Option<bool>, String) {
    let mut energy = None;
    let mut rest = Vec::new();
    for key in text.split(',').map(str::trim).filter(|k| !k.is_empty()) {
        let descending = key.starts_with('-');
        if key.trim_start_matches(['-', '+']) == ENERGY_KEY {
            energy.get_or_insert(descending);
        } else {
            rest.push(key);
        }
    }
    (energy, rest.join(","))
}

/// Stored tight-binding energies of the queried run, joined to records by list number.
struct EnergyColumn {
    energies: Option<Energies>,
    ipr: bool,
}

impl EnergyColumn {
    fn read(dir: &std::path::Path, q: &Query) -> Result<EnergyColumn, CliError> {
        let key = EnergyHeader {
            face_set: q.face_set,
            atoms: q.atoms,
            ipr: q.ipr,
            charge: q.charge,
            model: cagerank::screen::MODEL.to_string(),
            max_force: 0.0,
            made_by: String::new(),
        };
        let energies = energies::read(dir, &key).map_err(catalogue_error)?;
        Ok(EnergyColumn {
            energies,
            ipr: q.ipr,
        })
    }

    /// The stored result for `r`, if its spiral matches the one stored under its number.
    fn get(&self, r: &Record) -> Option<(&EnergyRecord, Option<f64>)> {
        let energies = self.energies.as_ref()?;
        let number = if self.ipr { r.ipr_number } else { r.number }?;
        let e = energies
            .get(number)
            .filter(|e| e.special_faces == r.special_faces)?;
        Some((e, energies.relative_kj(e)))
    }

    fn relative_kj(&self, r: &Record) -> Option<f64> {
        self.get(r).and_then(|(_, rel)| rel)
    }

    fn is_empty(&self) -> bool {
        self.energies.as_ref().is_none_or(|e| e.records.is_empty())
    }
}

pub fn run(args: Args) -> Result<(), CliError> {
    let mut query = build_query(&args)?;
    if args.top == Some(0) {
        return Err(CliError::usage(
            "--top 0 would show nothing; give K >= 1 or leave it out",
        ));
    }
    let dir = catalogue_dir(&args.catalogue);
    let by_energy = args.rank_by.as_deref().and_then(|t| split_energy_key(t).0);
    if by_energy.is_some() {
        query.top = None;
    }
    let mut records = catalogue::query(&dir, &query).map_err(catalogue_error)?;
    let energy = EnergyColumn::read(&dir, &query)?;
    if let Some(descending) = by_energy {
        if energy.is_empty() {
            return Err(CliError::usage(format!(
                "no tight-binding energies are stored for C{} ({} list, charge {:+}) in {}; run `cagerank screen --atoms {}{}{} --catalogue {}` first",
                query.atoms,
                if query.ipr { "IPR" } else { "complete" },
                query.charge,
                dir.display(),
                query.atoms,
                if query.ipr { " --ipr" } else { "" },
                if query.charge == 0 { String::new() } else { format!(" --charge {}", query.charge) },
                dir.display()
            )));
        }
        // Stable: records with equal (or no) energy keep the order of the other keys.
        records.sort_by(
            |a, b| match (energy.relative_kj(a), energy.relative_kj(b)) {
                (Some(x), Some(y)) if descending => y.total_cmp(&x),
                (Some(x), Some(y)) => x.total_cmp(&y),
                (Some(_), None) => std::cmp::Ordering::Less,
                (None, Some(_)) => std::cmp::Ordering::Greater,
                (None, None) => std::cmp::Ordering::Equal,
            },
        );
        records.truncate(args.top.unwrap_or(usize::MAX));
    }
    let mut out = Out::stdout();
    // Every record of one run has the same electron count, so the SOMO column is all or none.
    let somo = records.iter().any(|r| r.somo.is_some());
    let energy = (!energy.is_empty()).then_some(&energy);
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

/// Column names; `somo` is shown only for runs with an odd electron count.
const COLUMNS: [&str; 14] = [
    "rank",
    "number",
    "ipr_number",
    "point_group",
    "pentagon_adjacencies",
    "shell",
    "hexagon_strain",
    "gap",
    "somo",
    "pi_energy",
    "kekule",
    "chiral",
    "nmr",
    "spiral",
];

/// Index of the `somo` column in [`COLUMNS`].
const SOMO: usize = 8;

/// Columns added when the run has stored tight-binding energies.
const ENERGY_COLUMNS: [&str; 2] = ["relative_energy_kj", "tb_gap_ev"];

fn columns(somo: bool, energy: Option<&EnergyColumn>) -> Vec<&'static str> {
    let mut names: Vec<&str> = COLUMNS
        .iter()
        .enumerate()
        .filter(|&(i, _)| somo || i != SOMO)
        .map(|(_, c)| *c)
        .collect();
    if energy.is_some() {
        names.splice(5..5, ENERGY_COLUMNS);
    }
    names
}

/// One row's cells; `missing` is written for values a record does not have ("-" in tables, an
/// empty cell in CSV so that numeric columns stay numeric).
fn cells(
    rank: usize,
    r: &Record,
    somo: bool,
    energy: Option<&EnergyColumn>,
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
    energy: Option<&EnergyColumn>,
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
    energy: Option<&EnergyColumn>,
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
    energy: Option<&EnergyColumn>,
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
