//! `cagerank identify`: name the isomer held in an XYZ or SDF file.
//!
//! Reads the file, asks `identify` for each structure's cage and canonical spiral, the isomer
//! numbers (`identify::numbers`) and the descriptors (`score`), and prints a block (or one JSON
//! line) per structure. Cages of other face sets (B/N or carbon) print their face-set IDs
//! (`B12N12:4-6-all-3 = B12N12:4-6-iso-1`). The science lives in the library.

use super::export::LazyBar;
use super::output::{write_line, Out};
use super::show::{nmr_text, symmetry_text};
use super::CliError;
use cagerank::automorphism;
use cagerank::cage::{Cage, FaceSet};
use cagerank::catalogue;
use cagerank::id::{IsomerId, List};
use cagerank::identify::numbers::{self, Number, Numbers};
use cagerank::identify::{self, Format, Identity, Options, Structure};
use cagerank::score::{self, boron_nitride, huckel, kekule, symmetry, Descriptors};
use cagerank::spiral::Spiral;
use serde_json::{json, Map, Value};
use std::path::PathBuf;

/// Shown with the descriptors (after the text, on stderr with `--json`).
const CAUTION: &str = "Caution: descriptors are screening heuristics, not predictions of \
real-world stability or safety; refine candidates with quantum chemistry.";

/// Files larger than this are refused rather than read into memory.
const MAX_FILE_BYTES: u64 = 1 << 30;

/// Identify the cage isomer(s) in an XYZ or SDF/MOL file (every frame or record).
///
/// Bonds are perceived from distances (sp2 carbon covalent radius 0.73 Å, Cordero et al. 2008,
/// plus a tolerance); every atom must be a carbon with three neighbours.
#[derive(clap::Args, Debug)]
pub struct Args {
    /// XYZ (.xyz) or MDL molfile/SD (.mol, .sdf) file; multi-frame and multi-record files allowed.
    #[arg(value_name = "FILE")]
    pub file: PathBuf,
    /// One JSON object per structure instead of text.
    #[arg(long)]
    pub json: bool,
    /// Elements to drop before bond perception, comma-separated (e.g. Sc,N for Sc3N@C80).
    #[arg(long, value_name = "ELEMENTS")]
    pub ignore_elements: Option<String>,
    /// Catalogue directory to read isomer numbers from (default: $CAGERANK_CATALOGUE, else
    /// ./catalogues, else the catalogue shipped with this build, when present; needed for the complete list beyond C84).
    #[arg(long, value_name = "DIR")]
    pub catalogue: Option<PathBuf>,
    #[command(flatten)]
    pub charge: super::ChargeArg,
    /// Added to the sum of covalent radii (Å) when deciding whether two atoms are bonded.
    #[arg(long, default_value_t = identify::perceive::DEFAULT_TOLERANCE, value_name = "ANGSTROM")]
    pub tolerance: f64,
    /// File format, when the extension does not say (xyz or sdf).
    #[arg(long, value_parser = parse_format, value_name = "FORMAT")]
    pub format: Option<Format>,
    /// Skip looking up isomer numbers (which may enumerate the whole size).
    #[arg(long)]
    pub no_numbers: bool,
}

fn parse_format(text: &str) -> Result<Format, String> {
    match text.to_ascii_lowercase().as_str() {
        "xyz" => Ok(Format::Xyz),
        "sdf" | "sd" | "mol" => Ok(Format::Sdf),
        _ => Err(format!("'{text}' is not a format; use xyz or sdf")),
    }
}

pub fn run(args: Args) -> Result<(), CliError> {
    let options = options(&args)?;
    let structures = read_structures(&args)?;
    let mut out = Out::stdout();
    let mut failed = 0;
    for (k, s) in structures.iter().enumerate() {
        let label = Label {
            index: k + 1,
            of: structures.len(),
            structure: s,
        };
        match identify::identify(s, &options) {
            Ok(id) => report(&mut out, &label, &id, &args)?,
            Err(e) if structures.len() == 1 => return Err(CliError::usage(e.to_string())),
            Err(e) => {
                failed += 1;
                report_error(&mut out, &label, &e.to_string(), args.json)?;
            }
        }
    }
    if args.json {
        eprintln!("{CAUTION}");
    } else {
        write_line(&mut out, CAUTION)?;
    }
    out.finish()?;
    match failed {
        0 => Ok(()),
        n => Err(CliError::usage(format!(
            "{n} of {} structures could not be identified (see above)",
            structures.len()
        ))),
    }
}

fn options(args: &Args) -> Result<Options, CliError> {
    if !(0.0..=1.5).contains(&args.tolerance) {
        return Err(CliError::usage(
            "--tolerance must be between 0 and 1.5 Å (default 0.40)",
        ));
    }
    let ignore = match &args.ignore_elements {
        Some(list) => identify::parse_element_list(list).map_err(CliError::usage)?,
        None => Vec::new(),
    };
    Ok(Options {
        ignore,
        tolerance: args.tolerance,
    })
}

fn read_structures(args: &Args) -> Result<Vec<Structure>, CliError> {
    let path = &args.file;
    let shown = path.display();
    let meta = std::fs::metadata(path)
        .map_err(|e| CliError::usage(format!("cannot read {shown}: {e}")))?;
    if meta.len() > MAX_FILE_BYTES {
        return Err(CliError::usage(format!(
            "{shown} is larger than 1 GiB; split it into smaller files"
        )));
    }
    let bytes =
        std::fs::read(path).map_err(|e| CliError::usage(format!("cannot read {shown}: {e}")))?;
    let format = args.format.or_else(|| Format::from_path(path));
    identify::read(&bytes, format).map_err(|e| CliError::usage(format!("{shown}: {e}")))
}

/// Which structure of the file a report is about.
struct Label<'a> {
    index: usize,
    of: usize,
    structure: &'a Structure,
}

impl Label<'_> {
    fn text(&self) -> String {
        let title = self.structure.title.trim();
        let title = if title.is_empty() {
            String::new()
        } else {
            format!(", \"{}\"", title.chars().take(60).collect::<String>())
        };
        format!(
            "structure {} of {} (line {}{title})",
            self.index, self.of, self.structure.line
        )
    }

    fn json(&self) -> Map<String, Value> {
        let mut m = Map::new();
        m.insert("structure".into(), json!(self.index));
        m.insert("line".into(), json!(self.structure.line));
        m.insert("title".into(), json!(self.structure.title));
        m
    }
}

fn report_error(
    out: &mut Out,
    label: &Label,
    message: &str,
    as_json: bool,
) -> Result<(), CliError> {
    if as_json {
        let mut m = label.json();
        m.insert("error".into(), json!(message));
        write_line(out, &Value::Object(m).to_string())
    } else {
        write_line(out, &format!("{}: not identified: {message}", label.text()))
    }
}

/// Numbers, descriptors and text for one identified structure.
fn report(out: &mut Out, label: &Label, id: &Identity, args: &Args) -> Result<(), CliError> {
    let Some(canonical) = &id.canonical else {
        return report_spiralless(out, label, id, args);
    };
    let numbers = if args.no_numbers {
        None
    } else {
        let dir = args
            .catalogue
            .clone()
            .or_else(|| Some(catalogue::default_dir()).filter(|d| d.is_dir()));
        let mut bar = LazyBar::new(format!("numbering C{}", id.cage.atoms()));
        let found = numbers::numbers_in(
            id.face_set,
            &canonical.spiral,
            id.cage.is_isolated(id.face_set),
            dir.as_deref(),
            &mut |done, total| bar.update(done, total),
        );
        bar.finish();
        Some(found.map_err(|e| CliError::failed(e.to_string()))?)
    };
    let d = score::describe(&id.cage, canonical, args.charge.charge)
        .map_err(|e| CliError::usage(e.to_string()))?;
    if args.json {
        let mut m = label.json();
        m.insert("ignored_atoms".into(), json!(id.ignored));
        m.insert("atoms".into(), json!(id.cage.atoms()));
        let ids: Vec<String> = numbers
            .map(|n| {
                n.ids_in(id.face_set, id.cage.atoms())
                    .iter()
                    .map(|i| i.to_string())
                    .collect()
            })
            .unwrap_or_default();
        m.insert("ids".into(), json!(ids));
        m.insert(
            "number".into(),
            json!(numbers.and_then(|n| n.complete.listed())),
        );
        m.insert(
            "ipr_number".into(),
            json!(numbers.and_then(|n| n.ipr.listed())),
        );
        m.insert(
            "spiral".into(),
            json!(score::spiral_numbers(&canonical.spiral)),
        );
        m.insert("ipr".into(), json!(id.cage.is_ipr()));
        m.insert("face_set".into(), json!(id.face_set.to_string()));
        m.insert("formula".into(), json!(id.formula()));
        m.insert("isolated".into(), json!(id.cage.is_isolated(id.face_set)));
        m.insert("charge".into(), json!(args.charge.charge));
        if let Value::Object(fields) = serde_json::to_value(&d)
            .map_err(|e| CliError::failed(format!("cannot encode JSON: {e}")))?
        {
            m.extend(fields);
        }
        let notes = numbers
            .map(|n| number_notes(&n, id.cage.atoms(), &canonical.spiral))
            .unwrap_or_default();
        m.insert("notes".into(), json!(notes));
        return write_line(out, &Value::Object(m).to_string());
    }
    let lines = text_block(
        label,
        id,
        &canonical.spiral,
        numbers,
        &d,
        args.charge.charge,
    );
    for line in lines {
        write_line(out, &line)?;
    }
    Ok(())
}

/// Both IDs of the cage, complete list first: `C84:all-51591 = C84:IPR-23`; a number not
/// computed shows as `?`.
fn id_text(set: FaceSet, atoms: usize, numbers: Option<Numbers>) -> String {
    let id = |list, k| IsomerId::of(set, atoms as u32, list, k);
    let Some(n) = numbers else {
        return id(List::All, 1).formula();
    };
    // An ID with its number replaced by `?`.
    let unknown = |list| id(list, 1).to_string().trim_end_matches('1').to_string() + "?";
    let mut parts = vec![match n.complete {
        Number::Listed(k) => id(List::All, k).to_string(),
        _ => unknown(List::All),
    }];
    match n.ipr {
        Number::Listed(k) => parts.push(id(List::Ipr, k).to_string()),
        Number::NotComputed { .. } => parts.push(unknown(List::Ipr)),
        Number::NotListed => {}
    }
    parts.join(" = ")
}

/// Why a number is missing and how to get it.
fn number_notes(n: &Numbers, atoms: usize, spiral: &Spiral) -> Vec<String> {
    let mut notes = Vec::new();
    let fullerene = spiral.sizes().iter().all(|&s| s == 5 || s == 6);
    if fullerene && spiral.sizes().first() != Some(&5) && n.complete.listed().is_none() {
        notes.push(format!(
            "this cage has no spiral starting on a pentagon: lists built with --pentagon-starts \
             (or by cagerank before hexagon starts became the default beyond C{}) leave it out, \
             and its number follows every pentagon-start C{atoms} cage; rebuild the C{atoms} \
             catalogue without --pentagon-starts to number it",
            cagerank::enumerate::PENTAGON_STARTS_CHECKED
        ));
    }
    for (list, number) in [("complete-list", n.complete), ("IPR-list", n.ipr)] {
        if let Number::NotComputed { limit } = number {
            notes.push(format!(
                "{list} number not computed: enumerating the C{atoms} list is only done here up \
                 to {limit} atoms; build a catalogue holding C{atoms} and pass --catalogue DIR"
            ));
        }
    }
    notes
}

fn text_block(
    label: &Label,
    id: &Identity,
    spiral: &Spiral,
    numbers: Option<Numbers>,
    d: &Descriptors,
    charge: i32,
) -> Vec<String> {
    let atoms = id.cage.atoms();
    let bn = bn_values(id);
    // A BN cage's symmetry is that of the coloured cage (B12N12: Th, its bare graph Oh).
    let group = bn
        .as_ref()
        .map_or(d.point_group.name(), |(group, _, _)| group.clone());
    let mut lines = vec![
        format!(
            "{}: {}  {}",
            label.text(),
            id_text(id.face_set, atoms, numbers),
            group
        ),
        format!("  canonical spiral      {spiral}"),
        cage_line(&id.cage, id.ignored),
    ];
    if id.face_set != FaceSet::Fullerene {
        let reading = if id.face_set == FaceSet::SquareHexagon && id.is_boron_nitride() {
            ", B and N alternate: the BN cage its ID names"
        } else {
            ""
        };
        lines.push(format!(
            "  face set              {} ({}{reading}; square adjacencies {})",
            id.face_set,
            id.formula(),
            id.cage.adjacencies_of(4)
        ));
        if let Some((_, line, _)) = &bn {
            lines.push(line.clone());
        }
    }
    if let Some((_, _, levels)) = &bn {
        // A BN cage: its symmetry and NMR are on the BN line; the carbon graph's Hückel levels,
        // Kekulé count and pentagon/hexagon counts would describe another molecule.
        lines.push(levels.clone());
    } else {
        lines.extend([
            format!("  symmetry              {}", symmetry_text(d)),
            format!("  13C NMR pattern       {}", nmr_text(&d.nmr)),
        ]);
        if id.face_set == FaceSet::Fullerene || id.cage.face_size_counts()[5] > 0 {
            let rule = match (id.face_set, id.cage.is_ipr()) {
                (FaceSet::Fullerene, true) => "IPR",
                (FaceSet::Fullerene, false) => "not IPR",
                (_, true) => "isolated pentagons",
                (_, false) => "pentagons touch",
            };
            lines.push(format!(
                "  pentagon adjacencies  {} ({rule})",
                d.pentagon_adjacencies
            ));
        }
        if id.face_set == FaceSet::Fullerene {
            lines.push(format!(
                "  hexagon neighbours    k=0..6: {:?}, strain (std. dev. of k) {:.4}",
                d.hexagon_neighbours, d.hexagon_strain
            ));
        }
        lines.extend([
            format!(
                "  Hückel (charge {charge:+})     HOMO {:.4}, LUMO {:.4}, gap {:.4} |beta|, {}",
                d.homo,
                d.lumo,
                d.gap,
                d.shell.name()
            ),
            format!("  Kekulé structures     {}", d.kekule),
        ]);
    }
    if let Some(n) = numbers {
        lines.extend(
            number_notes(&n, atoms, spiral)
                .into_iter()
                .map(|s| format!("  note: {s}")),
        );
    }
    lines
}

/// The BN cage's point group, a line with its symmetry and 11B/15N patterns and a line with its
/// heteroatom Hückel levels, for a 4-6 cage whose B and N alternate (the colouring's classes
/// follow the file: boron where the file has boron).
fn bn_values(id: &Identity) -> Option<(String, String, String)> {
    if !(id.face_set == FaceSet::SquareHexagon && id.is_boron_nitride()) {
        return None;
    }
    let canonical = id.canonical.as_ref()?;
    let bn = boron_nitride::describe_bn(&id.cage, canonical).ok()?;
    // The library puts boron on atom 0; if the file has nitrogen there, the classes swap.
    let (boron, nitrogen) = if id.elements.first().map(String::as_str) == Some("B") {
        (&bn.boron_nmr, &bn.nitrogen_nmr)
    } else {
        (&bn.nitrogen_nmr, &bn.boron_nmr)
    };
    let line = format!(
        "  BN cage               {}, {} automorphisms (bare cage {}); 11B {}; 15N {}",
        bn.point_group.name(),
        bn.automorphisms,
        bn.cage_point_group.name(),
        nmr_text(boron),
        nmr_text(nitrogen)
    );
    let levels = format!(
        "  BN Hückel             HOMO {:.4}, LUMO {:.4}, gap {:.4} |beta| (Van-Catledge 1980 parameters)",
        bn.homo, bn.lumo, bn.gap
    );
    Some((bn.point_group.name(), line, levels))
}

fn cage_line(cage: &Cage, ignored: usize) -> String {
    let counts = cage.face_size_counts();
    let dropped = if ignored > 0 {
        format!(" ({ignored} ignored atoms dropped)")
    } else {
        String::new()
    };
    let rings: String = [(4, "squares"), (7, "heptagons")]
        .iter()
        .filter(|&&(s, _)| counts[s] > 0)
        .map(|&(s, name)| format!(", {} {name}", counts[s]))
        .collect();
    format!(
        "  cage                  {} atoms{dropped}, {} bonds, {} pentagons, {} hexagons{rings}",
        cage.atoms(),
        cage.edges().len(),
        counts[5],
        counts[6]
    )
}

/// A closed fullerene with no face spiral: what can be known without one.
fn report_spiralless(
    out: &mut Out,
    label: &Label,
    id: &Identity,
    args: &Args,
) -> Result<(), CliError> {
    let cage = &id.cage;
    let hmo = huckel::summarize(&huckel::eigenvalues(cage), args.charge.charge)
        .map_err(|e| CliError::usage(e.to_string()))?;
    let kekule = kekule::kekule_count(cage).to_string();
    let sym = symmetry::symmetry(cage, &automorphism::automorphisms(cage));
    let note = "no face spiral: this cage has no canonical spiral, so it has no isomer number; \
                its symmetry comes from a direct automorphism search (spiral-less fullerenes \
                exist from 380 atoms)";
    if args.json {
        let mut m = label.json();
        m.insert("ignored_atoms".into(), json!(id.ignored));
        m.insert("atoms".into(), json!(cage.atoms()));
        m.insert("spiral".into(), Value::Null);
        m.insert("ipr".into(), json!(cage.is_ipr()));
        m.insert(
            "pentagon_adjacencies".into(),
            json!(cage.pentagon_adjacencies()),
        );
        m.insert("homo".into(), json!(hmo.homo));
        m.insert("lumo".into(), json!(hmo.lumo));
        m.insert("gap".into(), json!(hmo.gap));
        m.insert("shell".into(), json!(hmo.shell));
        m.insert("kekule".into(), json!(kekule));
        m.insert("automorphisms".into(), json!(sym.order));
        m.insert("point_group".into(), json!(sym.point_group));
        m.insert("chiral".into(), json!(sym.chiral));
        m.insert("nmr".into(), json!(sym.nmr));
        m.insert("notes".into(), json!([note]));
        return write_line(out, &Value::Object(m).to_string());
    }
    let lines = [
        format!("{}: C{} (no face spiral)", label.text(), cage.atoms()),
        cage_line(cage, id.ignored),
        format!(
            "  pentagon adjacencies  {} ({})",
            cage.pentagon_adjacencies(),
            if cage.is_ipr() { "IPR" } else { "not IPR" }
        ),
        format!(
            "  Hückel (charge {:+})     HOMO {:.4}, LUMO {:.4}, gap {:.4} |beta|, {}",
            args.charge.charge,
            hmo.homo,
            hmo.lumo,
            hmo.gap,
            hmo.shell.name()
        ),
        format!(
            "  symmetry              {}, {} automorphisms, {}",
            sym.point_group,
            sym.order,
            if sym.chiral { "chiral" } else { "achiral" }
        ),
        format!("  13C NMR pattern       {}", nmr_text(&sym.nmr)),
        format!("  Kekulé structures     {kekule}"),
        format!("  note: {note}"),
    ];
    for line in lines {
        write_line(out, &line)?;
    }
    Ok(())
}
