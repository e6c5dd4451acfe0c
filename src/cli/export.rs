//! `cagerank export`: write relaxed geometries of a shortlist as XYZ, SDF, JSON and input decks
//! for quantum-chemistry codes, with a multi-structure SDF and `manifest.csv`.
//!
//! The shortlist is either explicit IDs, the top K of a catalogue (`--catalogue`, or the default
//! catalogue when it holds the list), or — without one — the top K after enumerating and scoring
//! the whole size here. Explicit IDs may be pattern IDs of derivatives (`C60:IPR-1+2H:5`),
//! written with their addend or hetero atoms. Every file is named by an ID that says its list
//! (`C84_IPR-23.xyz`, `C60_IPR-1+2H-5.sdf`), and no file is replaced unless `--overwrite` says
//! so. The science (numbers, scores, geometry, file formats) lives in the library.

use super::CliError;
use cagerank::cage::FaceSet;
use cagerank::catalogue::energies::{self, EnergyHeader};
use cagerank::catalogue::query::{query, Filter, Query};
use cagerank::catalogue::{self, data_file_name, Record};
use cagerank::derivative::named::Named;
use cagerank::derivative::{DeriveError, Parent, PatternId};
use cagerank::enumerate::{self, Spec};
use cagerank::export::{self, deck, Entry, Format, Numbers, TightBinding, WriteOptions, CAUTION};
use cagerank::id::{IdError, IsomerId, List};
use cagerank::identify::numbers::{self, Located};
use cagerank::score::{self, boron_nitride, rank, Scored};
use cagerank::screen::{self, Candidates, ScreenSpec};
use cagerank::spiral::Spiral;
use std::path::{Path, PathBuf};

/// Export relaxed 3D geometries (screening heuristics; geometries are starting points only).
#[derive(clap::Args, Debug)]
pub struct Args {
    /// Catalogue directory to take the top K and isomer numbers from (default: the default
    /// catalogue when it holds the list, else enumerate and score here).
    #[arg(long, value_name = "DIR")]
    pub catalogue: Option<PathBuf>,
    /// Cage size (number of atoms); needed with --top.
    #[arg(long, value_name = "N")]
    pub atoms: Option<u64>,
    /// With --top: the face set and isolation rule of the list (4-6 cages are written as BN
    /// cages with B and N atoms, geometry from the carbon force field).
    #[command(flatten)]
    pub faces: super::cages::FacesArg,
    /// Use the isolated-pentagon list: bare IDs and the top K refer to IPR isomers.
    #[arg(long)]
    pub ipr: bool,
    /// Export the K best-ranked isomers of the size (K >= 1).
    #[arg(long, value_name = "K", conflicts_with = "ids")]
    pub top: Option<usize>,
    /// Export these isomers, e.g. C84:IPR-22,C84:IPR-23 or C84:all-51591, cages of other face
    /// sets, e.g. B12N12:4-6-iso-1 or C24:4-5-6-all-7, or derivatives by pattern ID, e.g.
    /// C60:IPR-1+2H:5 (see `cagerank derive`); a bare C84:23 is read in the IPR list with
    /// --ipr, else in the complete list.
    #[arg(long, value_name = "IDS")]
    pub ids: Option<String>,
    #[command(flatten)]
    pub charge: super::ChargeArg,
    /// Comma-separated formats: xyz, sdf, json, and input decks for orca, gaussian, xtb
    /// (xcontrol + run script, with the XYZ file), cp2k.
    #[arg(long, default_value = "xyz,sdf,json", value_name = "LIST")]
    pub format: String,
    /// Method for the one input deck asked for: ORCA keywords after `!` (default
    /// "r2SCAN-3c Opt"), a Gaussian route after `#` (default "B3LYP/6-31G(d)
    /// EmpiricalDispersion=GD3BJ Opt"), xtb options (default "--gfn 2 --opt"), or for CP2K
    /// functional, basis set and pseudopotential (default "PBE DZVP-MOLOPT-SR-GTH GTH-PBE-q4").
    #[arg(long, value_name = "TEXT")]
    pub method: Option<String>,
    /// Replace files that already exist in the output directory (otherwise nothing is written).
    #[arg(long)]
    pub overwrite: bool,
    /// Output directory (created if missing).
    #[arg(long, value_name = "DIR")]
    pub out: PathBuf,
}

/// One isomer to export: its ID, canonical spiral and list numbers.
type Pick = (IsomerId, Spiral, Numbers);

/// One item of the shortlist: a cage, or a derivative with its parent's ID and numbers.
enum Item {
    Cage(Pick),
    Pattern(IsomerId, Numbers, Box<Named>),
}

impl Item {
    fn stem(&self) -> String {
        match self {
            Item::Cage(p) => p.0.file_stem(),
            Item::Pattern(_, _, named) => named.file_stem(),
        }
    }
}

pub fn run(args: Args) -> Result<(), CliError> {
    let formats = Format::parse_list(&args.format).map_err(|e| CliError::usage(e.to_string()))?;
    let method = method(&args, &formats)?;
    let picks: Vec<Item> = match (&args.ids, args.top) {
        (Some(ids), None) => by_ids(ids, &args)?,
        _ => shortlist(&args)?.into_iter().map(Item::Cage).collect(),
    };
    let stems: Vec<String> = picks.iter().map(Item::stem).collect();
    export::check_targets(
        &export::planned_files(&stems, &formats),
        &args.out,
        args.overwrite,
    )
    .map_err(|e| CliError::usage(e.to_string()))?;
    std::fs::create_dir_all(&args.out)
        .map_err(|e| CliError::failed(format!("cannot create {}: {e}", args.out.display())))?;
    let mut entries: Vec<Entry> = Vec::with_capacity(picks.len());
    let energy_dir = numbers_dir(&args);
    for item in &picks {
        let (id, spiral, numbers) = match item {
            Item::Cage(pick) => pick,
            Item::Pattern(parent, numbers, named) => {
                let entry = export::derivative::prepare(*parent, *numbers, named)
                    .map_err(|e| CliError::failed(e.to_string()))?;
                if !entry.geometry.converged {
                    eprintln!(
                        "warning: {}: force-field relaxation of the parent stopped with residual force {:.2e} eV/Å",
                        named.id,
                        entry.geometry.max_force_ev_per_angstrom
                    );
                }
                entries.push(entry);
                continue;
            }
        };
        let mut entry =
            export::prepare(*id, spiral, *numbers, args.charge.charge).map_err(|e| match e {
                export::ExportError::Score(_) | export::ExportError::BoronNitride { .. } => {
                    CliError::usage(e.to_string())
                }
                _ => CliError::failed(e.to_string()),
            })?;
        if let Some(dir) = &energy_dir {
            attach_tight_binding(&mut entry, dir)?;
        }
        if entry.tight_binding.is_none() && !entry.geometry.converged {
            eprintln!(
                "warning: {id}: force-field relaxation stopped with residual force {:.2e} eV/Å",
                entry.geometry.max_force_ev_per_angstrom
            );
        }
        entries.push(entry);
    }
    let options = WriteOptions {
        overwrite: args.overwrite,
        method,
    };
    let written =
        export::write_all(&entries, &formats, &args.out, &options).map_err(|e| match e {
            export::ExportError::Exists { .. }
            | export::ExportError::SameFile { .. }
            | export::ExportError::ForeignManifest { .. } => CliError::usage(e.to_string()),
            _ => CliError::failed(e.to_string()),
        })?;
    for path in &written {
        println!("{}", path.display());
    }
    eprintln!("{CAUTION}");
    Ok(())
}

/// The checked `--method`, which needs exactly one deck format to apply to.
fn method(args: &Args, formats: &[Format]) -> Result<Option<String>, CliError> {
    let Some(text) = &args.method else {
        return Ok(None);
    };
    match Format::codes(formats).as_slice() {
        [code] => deck::check_method(*code, text)
            .map(Some)
            .map_err(CliError::usage),
        [] => Err(CliError::usage(
            "--method sets the method of an input deck; add one of orca, gaussian, xtb, cp2k to --format",
        )),
        _ => Err(CliError::usage(
            "--method applies to one input deck; export one of orca, gaussian, xtb, cp2k per run",
        )),
    }
}

fn shortlist(args: &Args) -> Result<Vec<Pick>, CliError> {
    match (&args.ids, args.top) {
        (None, Some(0)) => Err(CliError::usage(
            "--top 0 exports nothing; give K >= 1 (or list isomers with --ids)",
        )),
        (None, Some(k)) => {
            let atoms = args
                .atoms
                .ok_or_else(|| CliError::usage("--top needs --atoms N"))?;
            let set = args.faces.face_set()?;
            if set != FaceSet::Fullerene {
                let spec = super::cages::spec(set, atoms, args.faces.isolated, args.ipr, false)?;
                return match catalogue_for(args, &spec) {
                    Some(dir) => cages_from_catalogue(&dir, &spec, k, args.charge.charge),
                    None => cages_by_enumeration(&spec, k),
                };
            }
            let ipr = args.ipr || args.faces.isolated;
            let spec = Spec::fullerene(atoms, ipr).map_err(|e| CliError::usage(e.to_string()))?;
            match catalogue_for(args, &spec) {
                Some(dir) => from_catalogue(&dir, &spec, k, args.charge.charge),
                None => by_enumeration(&spec, k, args.charge.charge),
            }
        }
        _ => Err(CliError::usage(
            "say what to export: --top K (with --atoms N) or --ids C84:IPR-22,C84:IPR-23",
        )),
    }
}

/// The catalogue to read: `--catalogue`, or the default one if it holds this list.
fn catalogue_for(args: &Args, spec: &Spec) -> Option<PathBuf> {
    if let Some(dir) = &args.catalogue {
        return Some(dir.clone());
    }
    let dir = catalogue::default_dir();
    let file = dir.join(data_file_name(spec.face_set, spec.atoms, spec.ipr, 0));
    file.is_file().then(|| {
        eprintln!(
            "cagerank: note: taking the top K from the catalogue in {}",
            dir.display()
        );
        dir
    })
}

/// The catalogue used to look up numbers: `--catalogue`, else the default directory if present.
fn numbers_dir(args: &Args) -> Option<PathBuf> {
    args.catalogue
        .clone()
        .or_else(|| Some(catalogue::default_dir()).filter(|d| d.is_dir()))
}

/// Reads one `--ids` entry: an ID naming its list is taken as written, a bare one is in the
/// IPR list with `--ipr` and in the complete list without; an ID naming the complete list
/// together with `--ipr` is a contradiction and refused.
pub fn parse_id(text: &str, ipr: bool) -> Result<IsomerId, CliError> {
    let parsed = if ipr {
        IsomerId::parse(text, Some(List::Ipr))
    } else {
        match IsomerId::parse(text, None) {
            Err(IdError::NoList { .. }) => IsomerId::parse(text, Some(List::All)),
            other => other,
        }
    };
    parsed.map_err(|e| CliError::usage(e.to_string()))
}

/// Finds the isomer named by `id` (catalogue first, else a search up to it) with its number in
/// the other list too (searched for only with `both`; otherwise only if a catalogue has it).
pub fn locate(
    id: IsomerId,
    catalogue: Option<&Path>,
    both: bool,
) -> Result<(Spiral, Numbers), CliError> {
    let mut bar = LazyBar::new(format!("finding {id}"));
    let mut progress = |done, total| bar.update(done, total);
    let found = if both {
        numbers::locate(id, catalogue, &mut progress)
    } else {
        numbers::locate_in_list(id, catalogue, &mut progress)
    };
    bar.finish();
    match found.map_err(|e| match e {
        numbers::NumbersError::Size(_) | numbers::NumbersError::CageSize(_) => {
            CliError::usage(e.to_string())
        }
        other => CliError::failed(other.to_string()),
    })? {
        Some(Located { spiral, numbers }) => Ok((
            spiral,
            Numbers {
                number: numbers.complete.listed(),
                ipr_number: numbers.ipr.listed(),
            },
        )),
        None if id.face_set != FaceSet::Fullerene => Err(CliError::usage(format!(
            "{} ({}) has no isomer {} in the {} list; numbers start at 1 and end at the count \
             that `cagerank enumerate {} --faces {}{} --count-only` reports",
            id.formula(),
            id.face_set,
            id.number,
            if id.list.is_ipr() {
                "isolated"
            } else {
                "complete"
            },
            id.atoms,
            id.face_set.name(),
            enumerate_flags(id)
        ))),
        None => Err(CliError::usage(format!(
            "C{} has no isomer {} in the {}; numbers start at 1 and end at the count that \
             `cagerank enumerate --count-only {}{}` reports",
            id.atoms,
            id.number,
            id.list.words(),
            id.atoms,
            if id.list.is_ipr() { " --ipr" } else { "" }
        ))),
    }
}

/// The `enumerate` flags after `--faces SET` that list `id`'s list: the heptagon bound and
/// `--isolated`.
fn enumerate_flags(id: IsomerId) -> String {
    let mut flags = String::new();
    if let FaceSet::PentagonHexagonHeptagon { heptagons } = id.face_set {
        flags.push_str(&format!(" --heptagons {heptagons}"));
    }
    if id.list.is_ipr() {
        flags.push_str(" --isolated");
    }
    flags
}

/// A progress bar that appears only once a search reports progress, so a catalogue lookup
/// that takes milliseconds draws nothing (bars are hidden off a terminal).
pub struct LazyBar {
    what: String,
    bar: Option<indicatif::ProgressBar>,
}

impl LazyBar {
    pub fn new(what: String) -> LazyBar {
        LazyBar { what, bar: None }
    }

    /// Called with (units done, units to run).
    pub fn update(&mut self, done: usize, total: usize) {
        if self.bar.is_none() {
            // The first report may already be some way in: start the rate and ETA from there.
            let bar = super::progress::bar(total as u64, &self.what, false);
            bar.set_position(done as u64);
            bar.reset_eta();
            self.bar = Some(bar);
        }
        if let Some(bar) = &self.bar {
            bar.set_length(total as u64);
            bar.set_position(done as u64);
        }
    }

    pub fn finish(self) {
        if let Some(bar) = self.bar {
            bar.finish_and_clear();
        }
    }
}

fn by_ids(ids: &str, args: &Args) -> Result<Vec<Item>, CliError> {
    let mut asked: Vec<String> = Vec::new();
    for text in ids.split(',').map(str::trim).filter(|s| !s.is_empty()) {
        if asked.iter().any(|a| a == text) {
            eprintln!(
                "cagerank: note: {} is listed more than once; exported once",
                cagerank::id::printable(text)
            );
            continue;
        }
        asked.push(text.to_string());
    }
    if asked.is_empty() {
        return Err(CliError::usage(
            "--ids is empty; list IDs like C84:IPR-22,C84:IPR-23 or C60:IPR-1+2H:5",
        ));
    }
    let dir = numbers_dir(args);
    let mut out: Vec<Item> = Vec::new();
    for text in asked {
        if is_pattern(&text) {
            let (parent, numbers, named) = locate_pattern(
                &text,
                args.ipr,
                dir.as_deref(),
                true,
                Some(args.charge.charge),
            )?;
            check_atoms(args, parent)?;
            let duplicate = out
                .iter()
                .any(|item| matches!(item, Item::Pattern(_, _, other) if other.id == named.id));
            if duplicate {
                eprintln!(
                    "cagerank: note: {} is listed more than once; exported once",
                    named.id
                );
                continue;
            }
            out.push(Item::Pattern(parent, numbers, Box::new(named)));
            continue;
        }
        let id = parse_id(&text, args.ipr)?;
        check_atoms(args, id)?;
        let (spiral, numbers) = locate(id, dir.as_deref(), true)?;
        let first = out.iter().find_map(|item| match item {
            Item::Cage(p) if p.1 == spiral => Some(p.0),
            _ => None,
        });
        // The text differed (`C70:ipr-1` after `C70:IPR-1`), the ID or the isomer may not.
        match first {
            Some(first) if first == id => {
                eprintln!("cagerank: note: {id} is listed more than once; exported once");
                continue;
            }
            Some(first) => {
                eprintln!(
                    "cagerank: note: {id} is the same isomer as {first}; exported once, as {first}"
                );
                continue;
            }
            None => {}
        }
        out.push(Item::Cage((id, spiral, numbers)));
    }
    Ok(out)
}

/// Refuses an ID whose size contradicts `--atoms`.
fn check_atoms(args: &Args, id: IsomerId) -> Result<(), CliError> {
    match args.atoms {
        Some(a) if a != u64::from(id.atoms) => Err(CliError::usage(format!(
            "{id} does not have the {a} atoms given by --atoms"
        ))),
        _ => Ok(()),
    }
}

/// True for a pattern ID (`C60:IPR-1+2H:5`): isomer IDs never contain `+`.
pub fn is_pattern(text: &str) -> bool {
    text.contains('+')
}

/// Finds the pattern a pattern ID names: its parent through [`locate`] (catalogue or search;
/// both list numbers with `both`), then the pattern in the parent's list, scored with `charge`
/// (`None`: whatever charge scores, for callers that need only sites and symmetry). Every
/// failure is the user's to fix (exit 2), with the library's one-line reason.
pub fn locate_pattern(
    text: &str,
    ipr: bool,
    catalogue: Option<&Path>,
    both: bool,
    charge: Option<i32>,
) -> Result<(IsomerId, Numbers, Named), CliError> {
    let usage = |e: DeriveError| CliError::usage(e.to_string());
    let pattern = PatternId::parse(text).map_err(usage)?;
    let parent_id = parse_id(&pattern.parent, ipr)?;
    let (spiral, numbers) = locate(parent_id, catalogue, both)?;
    let parent = Parent::new(parent_id.to_string(), &spiral).map_err(usage)?;
    let named = match charge {
        Some(q) => Named::new(parent, &pattern, q),
        None => Named::any_charge(parent, &pattern),
    }
    .map_err(usage)?;
    Ok((parent_id, numbers, named))
}

/// The ID of a listed isomer in the list the user asked for.
fn id_in(spec: &Spec, numbers: Numbers) -> Option<IsomerId> {
    let list = List::from_ipr(spec.ipr);
    let n = if spec.ipr {
        numbers.ipr_number
    } else {
        numbers.number
    };
    Some(IsomerId::of(spec.face_set, spec.atoms, list, n?))
}

/// The top K of a face-set catalogue, in the set's default order (`catalogue::query` ranks
/// non-fullerene lists by `score::boron_nitride::default_order` when no keys are given).
fn cages_from_catalogue(
    dir: &Path,
    spec: &Spec,
    k: usize,
    charge: i32,
) -> Result<Vec<Pick>, CliError> {
    if charge != 0 {
        return Err(CliError::usage(
            "face-set catalogues are scored neutral; leave out --charge with --faces",
        ));
    }
    let q = Query {
        atoms: spec.atoms,
        face_set: spec.face_set,
        ipr: spec.ipr,
        charge: 0,
        filter: Filter::default(),
        rank_by: Vec::new(),
        top: Some(k),
    };
    let records = query(dir, &q).map_err(super::query::catalogue_error)?;
    picks_from_records(dir, spec, &records)
}

/// Enumerates a face-set list here, ranks it in the set's default order
/// (`score::boron_nitride::default_order`) and keeps the K best.
fn cages_by_enumeration(spec: &Spec, k: usize) -> Result<Vec<Pick>, CliError> {
    let mut isomers = Vec::new();
    enumerate::enumerate(
        spec,
        &enumerate::Options::default(),
        |_, _| {},
        |iso| isomers.push(iso),
    )
    .map_err(|e| CliError::failed(e.to_string()))?;
    let spirals: Vec<Spiral> = isomers.iter().map(|i| i.spiral.clone()).collect();
    let mut facts = Vec::with_capacity(spirals.len());
    for (spiral, d) in spirals.iter().zip(score::describe_all(&spirals, 0)) {
        let d = d.map_err(|e| CliError::failed(e.to_string()))?;
        facts.push(
            boron_nitride::facts_of_spiral(spiral, spec.face_set, d.gap).ok_or_else(|| {
                CliError::failed("an enumerated 4-6 cage is not a BN cage (internal error)")
            })?,
        );
    }
    picks(
        spec,
        &isomers,
        boron_nitride::ranked_order(spec.face_set, &facts),
        k,
    )
}

/// The top K from a catalogue: by stored tight-binding energy when a screen of this size, list
/// and charge stored some, else by the screening order of the cage (or cage ion).
fn from_catalogue(dir: &Path, spec: &Spec, k: usize, charge: i32) -> Result<Vec<Pick>, CliError> {
    let screen_spec = ScreenSpec {
        face_set: FaceSet::Fullerene,
        atoms: spec.atoms,
        ipr: spec.ipr,
        charge,
        candidates: Candidates::All,
        settings: cagerank::energy::Settings::default(),
    };
    let ranked = screen::ranked(dir, &screen_spec).map_err(super::screen::screen_error)?;
    let by_energy: Vec<&Record> = ranked
        .iter()
        .filter(|r| r.rank.is_some())
        .map(|r| &r.record)
        .collect();
    let records: Vec<Record> = if !by_energy.is_empty() {
        eprintln!(
            "cagerank: note: ranked by the tight-binding energies stored for charge {charge:+} ({} relaxed)",
            by_energy.len()
        );
        by_energy.into_iter().take(k).cloned().collect()
    } else if charge != 0 {
        eprintln!(
            "cagerank: note: no energies stored for charge {charge:+}: ranked by the screening order of the cage ion (run `cagerank screen` to rank by energy)"
        );
        screen::select(dir, &screen_spec)
            .map_err(super::screen::screen_error)?
            .into_iter()
            .take(k)
            .map(|c| c.record)
            .collect()
    } else {
        let q = Query {
            atoms: spec.atoms,
            face_set: FaceSet::Fullerene,
            ipr: spec.ipr,
            charge: 0,
            filter: Filter::default(),
            rank_by: Vec::new(),
            top: Some(k),
        };
        query(dir, &q).map_err(super::query::catalogue_error)?
    };
    picks_from_records(dir, spec, &records)
}

/// The picks of catalogue records, in their order, with IDs in the spec's list.
fn picks_from_records(dir: &Path, spec: &Spec, records: &[Record]) -> Result<Vec<Pick>, CliError> {
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
            let id = id_in(spec, numbers).ok_or_else(|| {
                CliError::usage(format!(
                    "the catalogue in {} holds C{} only as shards, whose records have no isomer \
                     numbers; merge the shards first (cagerank merge)",
                    dir.display(),
                    spec.atoms
                ))
            })?;
            Ok((id, spiral, numbers))
        })
        .collect()
}

/// Replaces the force-field geometry by the tight-binding one where a screen of the entry's
/// list and charge stored it in `dir`.
fn attach_tight_binding(entry: &mut Entry, dir: &Path) -> Result<(), CliError> {
    if entry.id.face_set != FaceSet::Fullerene {
        // The tight-binding screen runs for fullerenes only.
        return Ok(());
    }
    let key = EnergyHeader {
        face_set: FaceSet::Fullerene,
        atoms: entry.id.atoms,
        ipr: entry.id.list.is_ipr(),
        charge: entry.charge,
        model: screen::MODEL.to_string(),
        max_force: 0.0,
        made_by: String::new(),
    };
    let Some(stored) = energies::read(dir, &key).map_err(super::query::catalogue_error)? else {
        return Ok(());
    };
    let faces = catalogue::record::special_faces_of(&entry.spiral);
    if let Some(e) = stored
        .get(entry.id.number)
        .filter(|e| e.special_faces == faces && e.rankable())
    {
        let tb = TightBinding {
            energy_ev: e.energy_ev,
            relative_kj: stored.relative_kj(e),
            gap_ev: e.gap_ev,
            max_force: e.max_force,
        };
        entry.use_tight_binding(e.coords.clone(), tb);
    }
    Ok(())
}

/// Enumerates the size, scores every isomer and keeps the K best by the default rank.
fn by_enumeration(spec: &Spec, k: usize, charge: i32) -> Result<Vec<Pick>, CliError> {
    let mut isomers = Vec::new();
    let bar = super::progress::bar(0, &format!("C{} enumerate", spec.atoms), false);
    enumerate::enumerate(
        spec,
        &enumerate::Options::default(),
        |done, total| {
            bar.set_length(total as u64);
            bar.set_position(done as u64);
        },
        |iso| isomers.push(iso),
    )
    .map_err(|e| CliError::failed(e.to_string()))?;
    bar.finish_and_clear();
    let spirals: Vec<Spiral> = isomers.iter().map(|i| i.spiral.clone()).collect();
    // Scored in slices so that a bar can show progress (C84 alone has 51,592 isomers).
    let mut bar = LazyBar::new(format!("C{} score", spec.atoms));
    let mut described = Vec::with_capacity(spirals.len());
    for slice in spirals.chunks(4096) {
        described.extend(score::describe_all(slice, charge));
        bar.update(described.len(), spirals.len());
    }
    bar.finish();
    let mut scored = Vec::with_capacity(isomers.len());
    for (iso, d) in isomers.iter().zip(described) {
        let d = d.map_err(|e| CliError::failed(e.to_string()))?;
        scored.push(Scored::new(&iso.spiral, iso.number, iso.ipr_number, d));
    }
    rank::rank(&mut scored, &rank::default_keys());
    let mut order: Vec<usize> = (0..scored.len()).collect();
    order.sort_by_key(|&i| scored[i].rank);
    picks(spec, &isomers, order, k)
}

/// The first `k` of `order` (indices into `isomers`) as picks with their IDs.
fn picks(
    spec: &Spec,
    isomers: &[enumerate::Isomer],
    order: Vec<usize>,
    k: usize,
) -> Result<Vec<Pick>, CliError> {
    order
        .into_iter()
        .take(k)
        .map(|i| {
            let numbers = Numbers {
                number: isomers[i].number,
                ipr_number: isomers[i].ipr_number,
            };
            let id = id_in(spec, numbers).ok_or_else(|| {
                CliError::failed("an enumerated isomer has no number (internal inconsistency)")
            })?;
            Ok((id, isomers[i].spiral.clone(), numbers))
        })
        .collect()
}
