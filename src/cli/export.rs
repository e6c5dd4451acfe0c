//! `cagerank export`: write relaxed geometries of a shortlist as XYZ, SDF and JSON, with a
//! multi-structure SDF and `manifest.csv`.
//!
//! The shortlist is either explicit IDs, the top K of a catalogue query (`--catalogue`), or —
//! without a catalogue — the top K after enumerating and scoring the whole size here. The
//! science (scores, geometry, file formats) lives in the library.

use super::CliError;
use cagerank::cage::FaceSet;
use cagerank::catalogue::query::{query, Filter, Query};
use cagerank::enumerate::{self, Spec};
use cagerank::export::{self, Entry, Format, Numbers, CAUTION};
use cagerank::score::{self, rank, Scored};
use cagerank::spiral::Spiral;
use std::path::PathBuf;

/// Export relaxed 3D geometries (screening heuristics; geometries are starting points only).
#[derive(clap::Args, Debug)]
pub struct Args {
    /// Catalogue directory to take the top K from (default: enumerate and score here).
    #[arg(long, value_name = "DIR")]
    pub catalogue: Option<PathBuf>,
    /// Cage size (number of carbon atoms); needed with --top.
    #[arg(long, value_name = "N")]
    pub atoms: Option<u64>,
    /// Use the isolated-pentagon list: IDs and the top K refer to IPR isomers.
    #[arg(long)]
    pub ipr: bool,
    /// Export the K best-ranked isomers of the size.
    #[arg(long, value_name = "K", conflicts_with = "ids")]
    pub top: Option<usize>,
    /// Export these isomers, e.g. C84:22,C84:23 (numbers in the IPR list with --ipr).
    #[arg(long, value_name = "IDS")]
    pub ids: Option<String>,
    #[command(flatten)]
    pub charge: super::ChargeArg,
    /// Comma-separated formats: xyz, sdf, json.
    #[arg(long, default_value = "xyz,sdf,json", value_name = "LIST")]
    pub format: String,
    /// Output directory (created if missing).
    #[arg(long, value_name = "DIR")]
    pub out: PathBuf,
}

/// One isomer to export: its ID, canonical spiral and list numbers.
type Pick = (String, Spiral, Numbers);

pub fn run(args: Args) -> Result<(), CliError> {
    let formats = Format::parse_list(&args.format).map_err(|e| CliError::usage(e.to_string()))?;
    let picks = shortlist(&args)?;
    std::fs::create_dir_all(&args.out)
        .map_err(|e| CliError::failed(format!("cannot create {}: {e}", args.out.display())))?;
    let mut entries: Vec<Entry> = Vec::with_capacity(picks.len());
    for (id, spiral, numbers) in &picks {
        let entry = export::prepare(id, spiral, *numbers, args.charge.charge)
            .map_err(|e| CliError::failed(e.to_string()))?;
        if !entry.geometry.converged {
            eprintln!(
                "warning: {id}: force-field relaxation stopped with residual force {:.2e} eV/Å",
                entry.geometry.max_force_ev_per_angstrom
            );
        }
        entries.push(entry);
    }
    let written = export::write_all(&entries, &formats, &args.out)
        .map_err(|e| CliError::failed(e.to_string()))?;
    for path in &written {
        println!("{}", path.display());
    }
    eprintln!("{CAUTION}");
    Ok(())
}

fn shortlist(args: &Args) -> Result<Vec<Pick>, CliError> {
    match (&args.ids, args.top) {
        (Some(ids), None) => by_ids(ids, args),
        (None, Some(k)) => {
            let atoms = args
                .atoms
                .ok_or_else(|| CliError::usage("--top needs --atoms N"))?;
            match &args.catalogue {
                Some(dir) => from_catalogue(dir, atoms, k, args.ipr),
                None => by_enumeration(atoms, k, args.ipr),
            }
        }
        _ => Err(CliError::usage(
            "say what to export: --top K (with --atoms N) or --ids C84:22,C84:23",
        )),
    }
}

/// Splits `C84:23` (or `84:23`) into the atom count and the number.
pub fn parse_id(text: &str) -> Result<(u64, u64), CliError> {
    let bad = || {
        CliError::usage(format!(
            "'{text}' is not an isomer ID; write the size and number like C84:23"
        ))
    };
    let body = text.trim().trim_start_matches(['C', 'c']);
    let (size, number) = body.split_once(':').ok_or_else(bad)?;
    let atoms: u64 = size.trim().parse().map_err(|_| bad())?;
    let number: u64 = number.trim().parse().map_err(|_| bad())?;
    if number == 0 {
        return Err(bad());
    }
    Ok((atoms, number))
}

/// Finds isomer `number` of C`atoms` in the complete list (or the IPR list with `ipr`).
pub fn find(atoms: u64, number: u64, ipr: bool) -> Result<(Spiral, Numbers), CliError> {
    let spec = Spec::fullerene(atoms, ipr).map_err(|e| CliError::usage(e.to_string()))?;
    let list = if ipr { "IPR list" } else { "complete list" };
    let iso = enumerate::find_by_number(&spec, number).ok_or_else(|| {
        CliError::usage(format!(
            "C{atoms} has no isomer {number} in the {list}; numbers start at 1"
        ))
    })?;
    Ok((
        iso.spiral,
        Numbers {
            number: iso.number,
            ipr_number: iso.ipr_number,
        },
    ))
}

fn by_ids(ids: &str, args: &Args) -> Result<Vec<Pick>, CliError> {
    let mut out = Vec::new();
    for id in ids.split(',').map(str::trim).filter(|s| !s.is_empty()) {
        let (atoms, number) = parse_id(id)?;
        if args.atoms.is_some_and(|a| a != atoms) {
            return Err(CliError::usage(format!(
                "{id} does not have the {} atoms given by --atoms",
                atoms
            )));
        }
        let (spiral, numbers) = find(atoms, number, args.ipr)?;
        out.push((format!("C{atoms}:{number}"), spiral, numbers));
    }
    if out.is_empty() {
        return Err(CliError::usage(
            "--ids is empty; list IDs like C84:22,C84:23",
        ));
    }
    Ok(out)
}

fn id_of(atoms: u64, numbers: Numbers, ipr: bool, spiral: &Spiral) -> String {
    let n = if ipr {
        numbers.ipr_number
    } else {
        numbers.number
    };
    match n {
        Some(n) => format!("C{atoms}:{n}"),
        None => format!("C{atoms}-spiral-{}", spiral.to_string().replace(' ', "-")),
    }
}

fn from_catalogue(
    dir: &std::path::Path,
    atoms: u64,
    k: usize,
    ipr: bool,
) -> Result<Vec<Pick>, CliError> {
    let atoms32 =
        u32::try_from(atoms).map_err(|_| CliError::usage(format!("{atoms} atoms is too many")))?;
    let q = Query {
        atoms: atoms32,
        face_set: FaceSet::Fullerene,
        ipr,
        charge: 0,
        filter: Filter::default(),
        rank_by: Vec::new(),
        top: Some(k),
    };
    let records = query(dir, &q).map_err(|e| CliError::failed(e.to_string()))?;
    records
        .iter()
        .map(|r| {
            let spiral = r
                .spiral()
                .map_err(|e| CliError::failed(format!("damaged catalogue record: {e}")))?;
            let numbers = Numbers {
                number: r.number,
                ipr_number: r.ipr_number,
            };
            Ok((id_of(atoms, numbers, ipr, &spiral), spiral, numbers))
        })
        .collect()
}

/// Enumerates the size, scores every isomer and keeps the K best by the default rank.
fn by_enumeration(atoms: u64, k: usize, ipr: bool) -> Result<Vec<Pick>, CliError> {
    let spec = Spec::fullerene(atoms, ipr).map_err(|e| CliError::usage(e.to_string()))?;
    let mut isomers = Vec::new();
    enumerate::enumerate(
        &spec,
        &enumerate::Options::default(),
        |_, _| {},
        |iso| isomers.push(iso),
    )
    .map_err(|e| CliError::failed(e.to_string()))?;
    let spirals: Vec<Spiral> = isomers.iter().map(|i| i.spiral.clone()).collect();
    let described = score::describe_all(&spirals, 0);
    let mut scored = Vec::with_capacity(isomers.len());
    for (iso, d) in isomers.iter().zip(described) {
        let d = d.map_err(|e| CliError::failed(e.to_string()))?;
        scored.push(Scored::new(&iso.spiral, iso.number, iso.ipr_number, d));
    }
    rank::rank(&mut scored, &rank::default_keys());
    let mut order: Vec<usize> = (0..scored.len()).collect();
    order.sort_by_key(|&i| scored[i].rank);
    Ok(order
        .into_iter()
        .take(k)
        .map(|i| {
            let numbers = Numbers {
                number: isomers[i].number,
                ipr_number: isomers[i].ipr_number,
            };
            let spiral = isomers[i].spiral.clone();
            (id_of(atoms, numbers, ipr, &spiral), spiral, numbers)
        })
        .collect())
}
