//! Shortlist export for quantum chemistry: relaxed geometries written as XYZ, SDF (MDL V2000),
//! JSON and input decks for ORCA, Gaussian, xTB and CP2K, one file per isomer named by its ID
//! (`C84_IPR-23.xyz`: the ID always says its list, see `id`), plus a multi-structure SDF and
//! `manifest.csv`. Derivatives (pattern IDs such as `C60:IPR-1+2H:5`, see [`derivative`]) go
//! through the same writers with their addend and hetero atoms, charges and radical centres;
//! cages of the other face sets (`B12N12:4-6-iso-1`, `C24:4-5-6-all-7`, see [`cages`]) with
//! their face counts, and 4-6 cages as boron-nitride cages.
//!
//! Writers take `impl Write`; [`write_atomic`] puts a file in place by temp file + fsync +
//! rename, so a crash never leaves a half-written file under the final name, and [`write_all`]
//! refuses to replace an existing file unless told to. Choosing *which* isomers to export
//! (catalogue query or enumeration and ranking) is the caller's business.

pub mod cages;
pub mod deck;
pub mod derivative;
pub mod json;
pub mod manifest;
pub mod sdf;
pub mod xyz;

use crate::cage::FaceSet;
use crate::cage::{Cage, EdgeId};
use crate::derivative::structure::Atom;
use crate::geometry::{self, Geometry, GeometryError};
use crate::id::IsomerId;
use crate::score::boron_nitride::{describe_bn, BnDescriptors};
use crate::score::{self, FullRecord, ScoreError};
use crate::spiral::{canonical_spiral, Spiral};
use deck::Code;
use std::collections::BTreeSet;
use std::fmt;
use std::fs::{self, File};
use std::io::{self, BufWriter, Write};
use std::path::{Path, PathBuf};

/// The caution carried by every exported file and drawing.
pub const CAUTION: &str = "Rankings are screening heuristics, not predictions of safety or \
real-world stability; geometries and energies (force field or tight binding) are starting \
points to be refined with quantum-chemical methods; follow local rules and lab safety practice when handling carbon \
nanomaterials.";

/// One isomer ready to export: its cage, descriptors, geometry and one Kekulé structure.
#[derive(Debug, Clone)]
pub struct Entry {
    /// The ID the isomer was asked for by, e.g. `C84:IPR-23`; it names the files.
    pub id: IsomerId,
    /// Its numbers in both lists, where known (an IPR cage has both).
    pub numbers: Numbers,
    pub spiral: Spiral,
    pub cage: Cage,
    pub charge: i32,
    /// The `show --json` record (descriptors, bonds, rings, spectra), atoms numbered as `cage`.
    pub record: FullRecord,
    /// Coordinates written to every file: the force-field starting geometry, replaced by the
    /// tight-binding one when a screen stored it (see [`Entry::use_tight_binding`]).
    pub geometry: Geometry,
    /// The stored tight-binding result whose geometry `geometry` holds, if any.
    pub tight_binding: Option<TightBinding>,
    /// The double bonds of one Kekulé structure (a perfect matching); empty for a BN cage,
    /// whose bonds are all written single (see [`cages`]).
    pub kekule: Vec<EdgeId>,
    /// The BN reading of a 4-6 cage (its atoms are then written as B and N).
    pub bn: Option<BnDescriptors>,
    /// Set when the entry is a derivative of this cage: the files then hold its molecule and
    /// are named by its pattern ID.
    pub derivative: Option<derivative::DerivativePart>,
}

/// What the manifest and XYZ comment say about a tight-binding geometry.
#[derive(Debug, Clone, PartialEq)]
pub struct TightBinding {
    /// Total energy, eV.
    pub energy_ev: f64,
    /// Above the lowest relaxed isomer of the same size, list and charge, kJ/mol.
    pub relative_kj: Option<f64>,
    /// Tight-binding HOMO-LUMO (or SOMO-LUMO) gap, eV.
    pub gap_ev: f64,
    /// Largest residual force, eV/Å.
    pub max_force: f64,
}

/// Output formats of an export.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Format {
    Xyz,
    Sdf,
    Json,
    /// An input deck for a quantum-chemistry code.
    Deck(Code),
}

/// Every format name `--format` accepts, in the order help lists them.
pub const FORMAT_NAMES: &str = "xyz, sdf, json, orca, gaussian, xtb, cp2k";

impl Format {
    /// Parses a comma-separated list such as `xyz,sdf,orca`; repeats are dropped.
    pub fn parse_list(text: &str) -> Result<Vec<Format>, ExportError> {
        let mut out = Vec::new();
        for part in text.split(',').map(str::trim).filter(|p| !p.is_empty()) {
            let f = match part.to_ascii_lowercase().as_str() {
                "xyz" => Format::Xyz,
                "sdf" => Format::Sdf,
                "json" => Format::Json,
                "orca" => Format::Deck(Code::Orca),
                "gaussian" => Format::Deck(Code::Gaussian),
                "xtb" => Format::Deck(Code::Xtb),
                "cp2k" => Format::Deck(Code::Cp2k),
                _ => return Err(ExportError::UnknownFormat(part.to_string())),
            };
            if !out.contains(&f) {
                out.push(f);
            }
        }
        if out.is_empty() {
            return Err(ExportError::UnknownFormat(text.to_string()));
        }
        Ok(out)
    }

    /// The deck formats among `formats`.
    pub fn codes(formats: &[Format]) -> Vec<Code> {
        formats
            .iter()
            .filter_map(|f| match f {
                Format::Deck(c) => Some(*c),
                _ => None,
            })
            .collect()
    }
}

/// What can go wrong while preparing or writing an export.
#[derive(Debug)]
pub enum ExportError {
    UnknownFormat(String),
    Score(ScoreError),
    Geometry(GeometryError),
    /// A 4-6 cage that cannot be read as a BN cage (it would need a cage charge, or its
    /// spiral is not canonical).
    BoronNitride {
        id: IsomerId,
        reason: String,
    },
    /// The cage has no perfect matching, so no single/double bond assignment exists.
    NoKekule {
        id: IsomerId,
    },
    /// SDF V2000 cannot hold the cage (or derivative).
    TooLargeForSdf {
        id: String,
        atoms: usize,
    },
    /// A file to write is already there and replacing was not asked for.
    Exists {
        path: PathBuf,
    },
    /// The directory's manifest has other columns than this version writes.
    ForeignManifest {
        path: PathBuf,
    },
    /// Two entries would write the same file.
    SameFile {
        name: String,
    },
    Io {
        path: PathBuf,
        source: io::Error,
    },
}

impl fmt::Display for ExportError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            ExportError::UnknownFormat(s) => {
                write!(
                    f,
                    "unknown export format '{}'; use a comma-separated list of {FORMAT_NAMES}",
                    crate::id::printable(s)
                )
            }
            ExportError::Score(e) => e.fmt(f),
            ExportError::Geometry(e) => e.fmt(f),
            ExportError::BoronNitride { id, reason } => write!(f, "{id}: {reason}"),
            ExportError::NoKekule { id } => {
                write!(f, "{id} has no Kekulé structure, so SDF bond orders cannot be assigned; export xyz or json instead")
            }
            ExportError::TooLargeForSdf { id, atoms } => write!(
                f,
                "{id} has {atoms} atoms; SDF V2000 holds at most {} — export xyz or json instead",
                sdf::MAX_ATOMS
            ),
            ExportError::Exists { path } => write!(
                f,
                "{} already exists; pass --overwrite to replace it, or choose another --out",
                path.display()
            ),
            ExportError::ForeignManifest { path } => write!(
                f,
                "{} has other columns than this version writes; choose another --out or move it away",
                path.display()
            ),
            ExportError::SameFile { name } => write!(
                f,
                "two isomers would both be written to {name}; list each isomer once"
            ),
            ExportError::Io { path, source } => {
                write!(
                    f,
                    "cannot write {}: {source}; check the directory exists and is writable",
                    path.display()
                )
            }
        }
    }
}

impl std::error::Error for ExportError {}

/// Where an isomer sits in the numbered lists (either may be unknown).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct Numbers {
    pub number: Option<u64>,
    pub ipr_number: Option<u64>,
}

/// Scores and relaxes the cage of `spiral` for export under the ID `id`. Atoms are numbered
/// as `spiral` winds them, in the geometry and in the record alike. A 4-6 ID gives the BN cage
/// (neutral only: the BN descriptors are those of the neutral cage), relaxed with the carbon
/// force field.
pub fn prepare(
    id: IsomerId,
    spiral: &Spiral,
    numbers: Numbers,
    charge: i32,
) -> Result<Entry, ExportError> {
    let cage = spiral.to_cage();
    let record = score::full_record(spiral, numbers.number, numbers.ipr_number, charge)
        .map_err(ExportError::Score)?;
    let geometry = geometry::relax(&cage).map_err(ExportError::Geometry)?;
    let bn = boron_nitride(id, &cage, charge)?;
    let kekule = if bn.is_some() {
        Vec::new()
    } else {
        score::kekule::kekule_structure(&cage).ok_or(ExportError::NoKekule { id })?
    };
    Ok(Entry {
        id,
        numbers,
        spiral: spiral.clone(),
        cage,
        charge,
        record,
        geometry,
        tight_binding: None,
        kekule,
        bn,
        derivative: None,
    })
}

/// The BN descriptors of a 4-6 cage (`None` for other face sets).
fn boron_nitride(
    id: IsomerId,
    cage: &Cage,
    charge: i32,
) -> Result<Option<BnDescriptors>, ExportError> {
    if id.face_set != FaceSet::SquareHexagon {
        return Ok(None);
    }
    let fail = |reason: String| ExportError::BoronNitride { id, reason };
    if charge != 0 {
        return Err(fail(
            "BN cages are exported neutral only (their descriptors are those of the neutral \
             cage); leave out --charge"
                .to_string(),
        ));
    }
    let canonical = canonical_spiral(cage).ok_or_else(|| fail("the cage has no spiral".into()))?;
    describe_bn(cage, &canonical)
        .map(Some)
        .map_err(|e| fail(e.to_string()))
}

impl Entry {
    /// Writes the stored tight-binding geometry instead of the force-field one. The coordinates
    /// must number atoms as `self.cage` does (both come from the canonical spiral).
    pub fn use_tight_binding(&mut self, coords: Vec<[f64; 3]>, tb: TightBinding) {
        if coords.len() == self.cage.atoms() {
            self.geometry.coords = coords;
            self.tight_binding = Some(tb);
        }
    }

    /// `tight_binding` or `force_field`: which geometry the files hold.
    pub fn geometry_source(&self) -> &'static str {
        if self.tight_binding.is_some() {
            "tight_binding"
        } else {
            "force_field"
        }
    }

    /// The stem every file of this entry shares: `C84_IPR-23`, or for a derivative
    /// `C60_IPR-1+2H-5`.
    pub fn stem(&self) -> String {
        match &self.derivative {
            Some(d) => d.stem.clone(),
            None => self.id.file_stem(),
        }
    }

    /// The ID the entry's files and manifest row are named by: the isomer ID, or the pattern
    /// ID of a derivative.
    pub fn name(&self) -> String {
        match &self.derivative {
            Some(d) => d.id.clone(),
            None => self.id.to_string(),
        }
    }

    /// Point group of what is written: the cage's, or the derivative's (its stabiliser's).
    pub fn point_group(&self) -> String {
        match &self.derivative {
            Some(d) => d.score.point_group.name(),
            None => match &self.bn {
                Some(bn) => bn.point_group.name(),
                None => self.record.descriptors.point_group.name(),
            },
        }
    }

    /// Atoms written: the cage's, or the whole derivative's.
    pub fn atom_count(&self) -> usize {
        match &self.derivative {
            Some(d) => d.molecule.atoms.len(),
            None => self.cage.atoms(),
        }
    }

    /// Element symbols and positions of every atom written.
    pub fn atoms(&self) -> Vec<(&'static str, [f64; 3])> {
        match &self.derivative {
            Some(d) => d
                .molecule
                .atoms
                .iter()
                .map(|a| (a.element, a.position))
                .collect(),
            None => cages::elements(self)
                .into_iter()
                .zip(self.geometry.coords.iter().copied())
                .collect(),
        }
    }

    /// Spin multiplicity written into decks and the XYZ comment (lowest spin state), from the
    /// electron count of the cage ion or of the derivative.
    pub fn multiplicity(&self) -> u32 {
        match &self.derivative {
            Some(d) => d.molecule.multiplicity(),
            None => deck::multiplicity(self.cage.atoms(), self.charge),
        }
    }

    /// One line saying what the structure is: ID, other-list ID, point group, charge.
    pub fn title(&self) -> String {
        if let Some(d) = &self.derivative {
            return format!(
                "{} {} {} (on {}) charge {} multiplicity {}, cagerank force-field cage geometry with addends placed",
                d.id,
                d.molecule.formula(),
                d.score.point_group.name(),
                self.id,
                self.charge,
                self.multiplicity(),
            );
        }
        let mut title = self.id.to_string();
        for other in self.other_ids() {
            title.push_str(&format!(" = {other}"));
        }
        let note = match &self.bn {
            Some(_) => format!(" ({})", cages::BN_GEOMETRY_NOTE),
            None => String::new(),
        };
        format!(
            "{title} {} charge {} multiplicity {}, cagerank {} geometry{note}",
            self.point_group(),
            self.charge,
            self.multiplicity(),
            self.geometry_source().replace('_', "-")
        )
    }

    /// The isomer's IDs in the lists other than the one it was asked by.
    fn other_ids(&self) -> Vec<IsomerId> {
        let atoms = self.id.atoms;
        [
            (crate::id::List::All, self.numbers.number),
            (crate::id::List::Ipr, self.numbers.ipr_number),
        ]
        .into_iter()
        .filter_map(|(list, n)| Some(IsomerId::of(self.id.face_set, atoms, list, n?)))
        .filter(|other| *other != self.id)
        .collect()
    }
}

/// The comment line of XYZ files, as `key=value` pairs that ASE's extended-XYZ reader accepts
/// (values with spaces quoted; a number missing from a list is left out, not written as junk):
/// `id=C84:IPR-23 list=IPR number=51591 ipr_number=23 point_group=D2d charge=0 ...`.
pub fn comment_line(entry: &Entry) -> String {
    let mut pairs = vec![("id".to_string(), entry.name())];
    if let Some(d) = &entry.derivative {
        pairs.extend([
            ("formula".to_string(), d.molecule.formula().replace(' ', "")),
            ("parent".to_string(), entry.id.to_string()),
            ("sites".to_string(), d.sites.clone()),
        ]);
    }
    pairs.push(("list".to_string(), entry.id.list_tag().to_string()));
    pairs.extend(cages::pairs(entry));
    if let Some(n) = entry.numbers.number {
        pairs.push(("number".into(), n.to_string()));
    }
    if let Some(n) = entry.numbers.ipr_number {
        pairs.push(("ipr_number".into(), n.to_string()));
    }
    pairs.extend([
        ("point_group".to_string(), entry.point_group()),
        ("charge".to_string(), entry.charge.to_string()),
        ("multiplicity".to_string(), entry.multiplicity().to_string()),
        ("spiral".to_string(), entry.spiral.to_string()),
        ("geometry".to_string(), entry.geometry_source().to_string()),
    ]);
    if let Some(tb) = &entry.tight_binding {
        pairs.push(("tb_energy_ev".into(), format!("{:.6}", tb.energy_ev)));
        if let Some(rel) = tb.relative_kj {
            pairs.push(("relative_energy_kj".into(), format!("{rel:.3}")));
        }
        pairs.push(("tb_gap_ev".into(), format!("{:.6}", tb.gap_ev)));
    }
    pairs
        .iter()
        .map(|(k, v)| {
            if v.contains(char::is_whitespace) || v.is_empty() {
                format!("{k}=\"{v}\"")
            } else {
                format!("{k}={v}")
            }
        })
        .collect::<Vec<_>>()
        .join(" ")
}

/// Scalar descriptors as (name, text) pairs, in a fixed order, for SDF data fields and CSV.
pub fn scalar_fields(entry: &Entry) -> Vec<(String, String)> {
    if let Some(part) = &entry.derivative {
        return derivative::scalar_fields(entry, part);
    }
    let d = &entry.record.descriptors;
    let g = &entry.geometry;
    let tb = entry.tight_binding.as_ref();
    let hexagons: Vec<String> = d.hexagon_neighbours.iter().map(u32::to_string).collect();

    vec![
        ("atoms".into(), entry.cage.atoms().to_string()),
        ("charge".into(), entry.charge.to_string()),
        (
            "pentagon_adjacencies".into(),
            d.pentagon_adjacencies.to_string(),
        ),
        (
            "pentagon_penalty_kj".into(),
            format!("{:.1}", d.pentagon_penalty_kj),
        ),
        ("hexagon_neighbours".into(), hexagons.join(" ")),
        ("hexagon_strain".into(), format!("{:.6}", d.hexagon_strain)),
        ("homo".into(), format!("{:.6}", d.homo)),
        ("lumo".into(), format!("{:.6}", d.lumo)),
        ("gap".into(), format!("{:.6}", d.gap)),
        ("shell".into(), d.shell.name().to_string()),
        ("pi_energy".into(), format!("{:.6}", d.pi_energy)),
        ("kekule".into(), d.kekule.clone()),
        ("automorphisms".into(), d.automorphisms.to_string()),
        ("chiral".into(), d.chiral.to_string()),
        ("nmr".into(), crate::score::nmr::format_pattern(&d.nmr)),
        ("ff_energy_ev".into(), format!("{:.6}", g.energy_ev)),
        (
            "ff_max_force_ev_per_angstrom".into(),
            format!("{:.2e}", g.max_force_ev_per_angstrom),
        ),
        ("geometry".into(), entry.geometry_source().to_string()),
        (
            "tb_energy_ev".into(),
            tb.map_or(String::new(), |t| format!("{:.6}", t.energy_ev)),
        ),
        (
            "relative_energy_kj".into(),
            tb.and_then(|t| t.relative_kj)
                .map_or(String::new(), |v| format!("{v:.3}")),
        ),
        (
            "tb_gap_ev".into(),
            tb.map_or(String::new(), |t| format!("{:.6}", t.gap_ev)),
        ),
        (
            "tb_max_force_ev_per_angstrom".into(),
            tb.map_or(String::new(), |t| format!("{:.2e}", t.max_force)),
        ),
    ]
}

/// Bonds with orders 1 or 2 from the entry's Kekulé structure.
pub fn bond_orders(entry: &Entry) -> Vec<([u32; 2], u8)> {
    let mut order = vec![1u8; entry.cage.edges().len()];
    for e in &entry.kekule {
        order[e.index()] = 2;
    }
    entry.cage.edges().iter().copied().zip(order).collect()
}

/// Writes the SDF record of one entry.
pub fn write_sdf(w: &mut impl Write, entry: &Entry) -> io::Result<()> {
    let number = |n: Option<u64>| n.map_or(String::new(), |n| n.to_string());
    let mut fields = vec![("id".to_string(), entry.name())];
    if entry.derivative.is_some() {
        fields.push(("parent".to_string(), entry.id.to_string()));
    }
    fields.extend([
        ("list".to_string(), entry.id.list_tag().to_string()),
        ("number".to_string(), number(entry.numbers.number)),
        ("ipr_number".to_string(), number(entry.numbers.ipr_number)),
        ("spiral".to_string(), entry.spiral.to_string()),
        ("point_group".to_string(), entry.point_group()),
    ]);
    fields.extend(cages::pairs(entry));
    fields.extend(scalar_fields(entry));
    if let Some(d) = &entry.derivative {
        fields.extend(derivative::extra_fields(d));
        fields.push(("caution".to_string(), CAUTION.to_string()));
        return sdf::write_molecule(
            w,
            &sdf::MoleculeRecord {
                name: &d.id,
                comment:
                    "cagerank force-field cage with addends placed; refine with quantum chemistry",
                atoms: &d.molecule.atoms,
                bonds: &d.molecule.bonds,
                fields: &fields,
            },
        );
    }
    fields.push(("caution".to_string(), CAUTION.to_string()));
    let name = entry.id.to_string();
    let comment = if entry.bn.is_some() {
        "cagerank starting geometry: carbon force field, B-N bond lengths not fitted"
    } else if entry.tight_binding.is_some() {
        "cagerank tight-binding geometry; refine with quantum chemistry"
    } else {
        "cagerank force-field starting geometry; refine with quantum chemistry"
    };
    let atoms: Vec<Atom> = entry
        .atoms()
        .into_iter()
        .map(|(element, position)| Atom {
            element,
            position,
            charge: 0,
            radical: false,
        })
        .collect();
    sdf::write_molecule(
        w,
        &sdf::MoleculeRecord {
            name: &name,
            comment,
            atoms: &atoms,
            bonds: &bond_orders(entry),
            fields: &fields,
        },
    )
}

/// Writes one file atomically: temp file in the same directory, fsync, rename.
pub fn write_atomic(
    path: &Path,
    fill: impl FnOnce(&mut BufWriter<File>) -> io::Result<()>,
) -> Result<(), ExportError> {
    let wrap = |source| ExportError::Io {
        path: path.to_path_buf(),
        source,
    };
    let name = path.file_name().and_then(|n| n.to_str()).unwrap_or("out");
    let tmp = path.with_file_name(format!(".{name}.tmp-{}", std::process::id()));
    let result = (|| {
        let mut w = BufWriter::new(File::create(&tmp)?);
        fill(&mut w)?;
        let file = w.into_inner().map_err(|e| e.into_error())?;
        file.sync_all()?;
        fs::rename(&tmp, path)
    })();
    if result.is_err() {
        let _ = fs::remove_file(&tmp);
    }
    result.map_err(wrap)
}

/// How [`write_all`] writes.
#[derive(Debug, Clone, Default)]
pub struct WriteOptions {
    /// Replace files that already exist (otherwise their presence is an error and nothing is
    /// written).
    pub overwrite: bool,
    /// Method text for the one deck format asked for (checked with [`deck::check_method`]);
    /// `None` uses each code's default.
    pub method: Option<String>,
}

/// The formats actually written: the xTB deck reads `{stem}.xyz`, so it brings XYZ along.
fn with_dependencies(formats: &[Format]) -> Vec<Format> {
    let mut formats = formats.to_vec();
    if formats.contains(&Format::Deck(Code::Xtb)) && !formats.contains(&Format::Xyz) {
        formats.insert(0, Format::Xyz);
    }
    formats
}

/// The names of the files written for an entry with file stem `stem`.
pub fn file_names(stem: &str, formats: &[Format]) -> Vec<String> {
    with_dependencies(formats)
        .into_iter()
        .flat_map(|format| match format {
            Format::Deck(code) => deck::file_names(code, stem),
            _ => vec![format!("{stem}.{}", extension(format))],
        })
        .collect()
}

/// Every file an export of entries with these stems writes into `dir`, in writing order.
pub fn planned_files(stems: &[String], formats: &[Format]) -> Vec<String> {
    let mut names: Vec<String> = stems.iter().flat_map(|s| file_names(s, formats)).collect();
    if formats.contains(&Format::Sdf) {
        names.push("shortlist.sdf".into());
    }
    names.push("manifest.csv".into());
    names
}

/// Files describing the whole directory: an export adds its rows and records to them, keeping
/// those of other isomers, so several exports can share one directory.
pub const SUMMARIES: [&str; 2] = ["shortlist.sdf", "manifest.csv"];

/// Refuses a set of files that names one file twice or, without `overwrite`, names a file that
/// already exists in `dir` (other than the [`SUMMARIES`], which are updated). Callers run it
/// before the slow work, and [`write_all`] again.
pub fn check_targets(names: &[String], dir: &Path, overwrite: bool) -> Result<(), ExportError> {
    if let Ok(text) = fs::read_to_string(dir.join("manifest.csv")) {
        if !text.is_empty() && !text.starts_with(manifest::HEADER_START) {
            return Err(ExportError::ForeignManifest {
                path: dir.join("manifest.csv"),
            });
        }
    }
    let mut seen = BTreeSet::new();
    for name in names {
        if !seen.insert(name.as_str()) {
            return Err(ExportError::SameFile { name: name.clone() });
        }
        let path = dir.join(name);
        if !overwrite && !SUMMARIES.contains(&name.as_str()) && fs::symlink_metadata(&path).is_ok()
        {
            return Err(ExportError::Exists { path });
        }
    }
    Ok(())
}

/// Writes every entry in every format into `dir`, the combined `shortlist.sdf` (if SDF is
/// asked for) and `manifest.csv`, with the names [`planned_files`] gives. Every name is checked
/// first ([`check_targets`]): if any file exists and `options.overwrite` is off, or two entries
/// would share a file, nothing is written. Returns the paths written.
pub fn write_all(
    entries: &[Entry],
    formats: &[Format],
    dir: &Path,
    options: &WriteOptions,
) -> Result<Vec<PathBuf>, ExportError> {
    check_sdf(entries, formats)?;
    let stems: Vec<String> = entries.iter().map(Entry::stem).collect();
    check_targets(&planned_files(&stems, formats), dir, options.overwrite)?;
    let formats = with_dependencies(formats);
    let files: Vec<Vec<String>> = stems.iter().map(|s| file_names(s, &formats)).collect();
    // The shared files are merged in memory first, so a foreign manifest stops the export
    // before anything is written.
    let ids: BTreeSet<String> = entries.iter().map(Entry::name).collect();
    let shortlist = if formats.contains(&Format::Sdf) {
        let mut ours = Vec::new();
        for e in entries {
            write_sdf(&mut ours, e).map_err(|source| io_error(dir, "shortlist.sdf", source))?;
        }
        Some(merged_shortlist(
            &read_existing(dir, "shortlist.sdf")?,
            &ours,
            &ids,
        ))
    } else {
        None
    };
    let mut ours = Vec::new();
    manifest::write(&mut ours, entries, &files)
        .map_err(|source| io_error(dir, "manifest.csv", source))?;
    let manifest = merged_manifest(dir, &read_existing(dir, "manifest.csv")?, &ours, &ids)?;
    let mut written = Vec::new();
    let mut put = |name: &str, fill: &mut dyn FnMut(&mut BufWriter<File>) -> io::Result<()>| {
        let path = dir.join(name);
        write_atomic(&path, fill)?;
        written.push(path);
        Ok::<(), ExportError>(())
    };
    for entry in entries {
        for &format in &formats {
            match format {
                Format::Deck(code) => {
                    for file in deck_files(entry, code, options) {
                        put(&file.name, &mut |w| w.write_all(file.text.as_bytes()))?;
                    }
                }
                _ => {
                    let name = format!("{}.{}", entry.stem(), extension(format));
                    put(&name, &mut |w| write_one(w, entry, format))?;
                }
            }
        }
    }
    if let Some(text) = shortlist {
        put("shortlist.sdf", &mut |w| w.write_all(&text))?;
    }
    put("manifest.csv", &mut |w| w.write_all(&manifest))?;
    Ok(written)
}

fn io_error(dir: &Path, name: &str, source: io::Error) -> ExportError {
    ExportError::Io {
        path: dir.join(name),
        source,
    }
}

/// The bytes of `dir/name`, empty if there is no such file.
fn read_existing(dir: &Path, name: &str) -> Result<Vec<u8>, ExportError> {
    match fs::read(dir.join(name)) {
        Ok(bytes) => Ok(bytes),
        Err(e) if e.kind() == io::ErrorKind::NotFound => Ok(Vec::new()),
        Err(source) => Err(io_error(dir, name, source)),
    }
}

/// The records of an existing multi-structure SDF whose name (first line) is not one of `ids`,
/// followed by `ours`.
fn merged_shortlist(existing: &[u8], ours: &[u8], ids: &BTreeSet<String>) -> Vec<u8> {
    let text = String::from_utf8_lossy(existing);
    let mut out = String::new();
    for record in text.split_inclusive("$$$$\n") {
        let name = record.lines().next().unwrap_or("").trim();
        if record.trim().is_empty() || ids.contains(name) {
            continue;
        }
        out.push_str(record);
    }
    let mut bytes = out.into_bytes();
    bytes.extend_from_slice(ours);
    bytes
}

/// An existing manifest's rows for other isomers, then ours under the same header. A manifest
/// with other columns (another version) is not mixed with ours.
fn merged_manifest(
    dir: &Path,
    existing: &[u8],
    ours: &[u8],
    ids: &BTreeSet<String>,
) -> Result<Vec<u8>, ExportError> {
    let existing = String::from_utf8_lossy(existing);
    let ours = String::from_utf8_lossy(ours);
    let mut old = existing.lines();
    let mut new = ours.lines();
    let header = new.next().unwrap_or("");
    let mut out = format!("{header}\n");
    if let Some(old_header) = old.next() {
        if old_header != header {
            return Err(ExportError::ForeignManifest {
                path: dir.join("manifest.csv"),
            });
        }
        for row in old {
            let id = row.split(',').next().unwrap_or("");
            if !row.trim().is_empty() && !ids.contains(id) {
                out.push_str(row);
                out.push('\n');
            }
        }
    }
    for row in new {
        out.push_str(row);
        out.push('\n');
    }
    Ok(out.into_bytes())
}

/// The deck files of one entry for one code.
fn deck_files(entry: &Entry, code: Code, options: &WriteOptions) -> Vec<deck::DeckFile> {
    let method = options
        .method
        .clone()
        .unwrap_or_else(|| code.default_method().to_string());
    let (title, stem) = (entry.title(), entry.stem());
    let atoms = entry.atoms();
    let elements: Vec<&str> = atoms.iter().map(|a| a.0).collect();
    let coords: Vec<[f64; 3]> = atoms.iter().map(|a| a.1).collect();
    let job = deck::Job {
        stem: &stem,
        title: &title,
        coords: &coords,
        elements: &elements,
        charge: entry.charge,
        multiplicity: entry.multiplicity(),
        method: &method,
    };
    deck::deck(code, &job)
}

/// File extension of a per-isomer format (decks name their own files).
fn extension(format: Format) -> &'static str {
    match format {
        Format::Xyz => "xyz",
        Format::Sdf => "sdf",
        Format::Json => "json",
        Format::Deck(_) => "inp",
    }
}

fn write_one(w: &mut impl Write, entry: &Entry, format: Format) -> io::Result<()> {
    match format {
        Format::Xyz => xyz::write_atoms(w, &comment_line(entry), entry.atoms().into_iter()),
        Format::Sdf => write_sdf(w, entry),
        Format::Json => json::write(w, entry),
        Format::Deck(_) => Ok(()),
    }
}

fn check_sdf(entries: &[Entry], formats: &[Format]) -> Result<(), ExportError> {
    if !formats.contains(&Format::Sdf) {
        return Ok(());
    }
    match entries.iter().find(|e| e.atom_count() > sdf::MAX_ATOMS) {
        Some(e) => Err(ExportError::TooLargeForSdf {
            id: e.name(),
            atoms: e.atom_count(),
        }),
        None => Ok(()),
    }
}
