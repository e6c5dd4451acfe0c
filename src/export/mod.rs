//! Shortlist export for quantum chemistry: relaxed geometries written as XYZ, SDF (MDL V2000)
//! and JSON, one file per isomer named by its ID, plus a multi-structure SDF and `manifest.csv`.
//!
//! Writers take `impl Write`; [`write_atomic`] puts a file in place by temp file + fsync +
//! rename, so a crash never leaves a half-written file under the final name. Choosing *which*
//! isomers to export (catalogue query or enumeration and ranking) is the caller's business.

pub mod json;
pub mod manifest;
pub mod sdf;
pub mod xyz;

use crate::cage::{Cage, EdgeId};
use crate::geometry::{self, Geometry, GeometryError};
use crate::score::{self, FullRecord, ScoreError};
use crate::spiral::Spiral;
use std::fmt;
use std::fs::{self, File};
use std::io::{self, BufWriter, Write};
use std::path::{Path, PathBuf};

/// The caution carried by every exported file and drawing.
pub const CAUTION: &str = "Rankings are screening heuristics, not predictions of safety or \
real-world stability; geometries are force-field starting points to be refined with \
quantum-chemical methods; follow local rules and lab safety practice when handling carbon \
nanomaterials.";

/// One isomer ready to export: its cage, descriptors, geometry and one Kekulé structure.
#[derive(Debug, Clone)]
pub struct Entry {
    /// The ID as users write it, e.g. `C84:23`.
    pub id: String,
    pub spiral: Spiral,
    pub cage: Cage,
    pub charge: i32,
    /// The `show --json` record (descriptors, bonds, rings, spectra), atoms numbered as `cage`.
    pub record: FullRecord,
    pub geometry: Geometry,
    /// The double bonds of one Kekulé structure (a perfect matching).
    pub kekule: Vec<EdgeId>,
}

/// Output formats of an export.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Format {
    Xyz,
    Sdf,
    Json,
}

impl Format {
    pub fn extension(self) -> &'static str {
        match self {
            Format::Xyz => "xyz",
            Format::Sdf => "sdf",
            Format::Json => "json",
        }
    }

    /// Parses a comma-separated list such as `xyz,sdf`.
    pub fn parse_list(text: &str) -> Result<Vec<Format>, ExportError> {
        let mut out = Vec::new();
        for part in text.split(',').map(str::trim).filter(|p| !p.is_empty()) {
            let f = match part.to_ascii_lowercase().as_str() {
                "xyz" => Format::Xyz,
                "sdf" => Format::Sdf,
                "json" => Format::Json,
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
}

/// What can go wrong while preparing or writing an export.
#[derive(Debug)]
pub enum ExportError {
    UnknownFormat(String),
    Score(ScoreError),
    Geometry(GeometryError),
    /// The cage has no perfect matching, so no single/double bond assignment exists.
    NoKekule {
        id: String,
    },
    /// SDF V2000 cannot hold the cage.
    TooLargeForSdf {
        id: String,
        atoms: usize,
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
                    "unknown export format '{s}'; use a comma-separated list of xyz, sdf, json"
                )
            }
            ExportError::Score(e) => e.fmt(f),
            ExportError::Geometry(e) => e.fmt(f),
            ExportError::NoKekule { id } => {
                write!(f, "{id} has no Kekulé structure, so SDF bond orders cannot be assigned; export xyz or json instead")
            }
            ExportError::TooLargeForSdf { id, atoms } => write!(
                f,
                "{id} has {atoms} atoms; SDF V2000 holds at most {} — export xyz or json instead",
                sdf::MAX_ATOMS
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

/// Scores and relaxes the cage of `spiral` for export under the name `id`. Atoms are numbered
/// as `spiral` winds them, in the geometry and in the record alike.
pub fn prepare(
    id: &str,
    spiral: &Spiral,
    numbers: Numbers,
    charge: i32,
) -> Result<Entry, ExportError> {
    let cage = spiral.to_cage();
    let record = score::full_record(spiral, numbers.number, numbers.ipr_number, charge)
        .map_err(ExportError::Score)?;
    let geometry = geometry::relax(&cage).map_err(ExportError::Geometry)?;
    let kekule = score::kekule::kekule_structure(&cage)
        .ok_or_else(|| ExportError::NoKekule { id: id.to_string() })?;
    Ok(Entry {
        id: id.to_string(),
        spiral: spiral.clone(),
        cage,
        charge,
        record,
        geometry,
        kekule,
    })
}

/// A file name made from an ID: `C84:23` becomes `C84-23`; anything outside `[A-Za-z0-9._-]`
/// becomes `-`, and a leading dot is replaced so the file is never hidden or a path.
pub fn safe_file_stem(id: &str) -> String {
    let mut stem: String = id
        .chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() || c == '_' || c == '-' || c == '.' {
                c
            } else {
                '-'
            }
        })
        .collect();
    if stem.is_empty() || stem.starts_with('.') {
        stem.insert(0, 'x');
    }
    stem
}

/// The one-line comment for XYZ files: ID, point group, charge and the caution.
pub fn comment_line(entry: &Entry) -> String {
    format!(
        "{} {} charge={} | {}",
        entry.id,
        entry.record.descriptors.point_group.name(),
        entry.charge,
        CAUTION
    )
}

/// Scalar descriptors as (name, text) pairs, in a fixed order, for SDF data fields and CSV.
pub fn scalar_fields(entry: &Entry) -> Vec<(String, String)> {
    let d = &entry.record.descriptors;
    let g = &entry.geometry;
    let hexagons: Vec<String> = d.hexagon_neighbours.iter().map(u32::to_string).collect();
    let nmr: Vec<String> = d.nmr.iter().map(|(m, c)| format!("{c}x{m}")).collect();
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
        ("nmr".into(), nmr.join(" ")),
        ("ff_energy_ev".into(), format!("{:.6}", g.energy_ev)),
        (
            "ff_max_force_ev_per_angstrom".into(),
            format!("{:.2e}", g.max_force_ev_per_angstrom),
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
    let mut fields = vec![
        ("id".to_string(), entry.id.clone()),
        ("spiral".to_string(), entry.spiral.to_string()),
        (
            "point_group".to_string(),
            entry.record.descriptors.point_group.name(),
        ),
    ];
    fields.extend(scalar_fields(entry));
    fields.push(("caution".to_string(), CAUTION.to_string()));
    sdf::write_record(
        w,
        &sdf::Record {
            name: &entry.id,
            comment: "cagerank force-field starting geometry; refine with quantum chemistry",
            coords: &entry.geometry.coords,
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

/// Writes every entry in every format into `dir`, the combined `shortlist.sdf` (if SDF is
/// asked for) and `manifest.csv`. Returns the paths written.
pub fn write_all(
    entries: &[Entry],
    formats: &[Format],
    dir: &Path,
) -> Result<Vec<PathBuf>, ExportError> {
    check_sdf(entries, formats)?;
    let mut written = Vec::new();
    let mut files = Vec::with_capacity(entries.len());
    for entry in entries {
        let mut names = Vec::new();
        for &format in formats {
            let name = format!("{}.{}", safe_file_stem(&entry.id), format.extension());
            let path = dir.join(&name);
            write_atomic(&path, |w| write_one(w, entry, format))?;
            written.push(path);
            names.push(name);
        }
        files.push(names);
    }
    if formats.contains(&Format::Sdf) {
        let path = dir.join("shortlist.sdf");
        write_atomic(&path, |w| entries.iter().try_for_each(|e| write_sdf(w, e)))?;
        written.push(path);
    }
    let path = dir.join("manifest.csv");
    write_atomic(&path, |w| manifest::write(w, entries, &files))?;
    written.push(path);
    Ok(written)
}

fn write_one(w: &mut impl Write, entry: &Entry, format: Format) -> io::Result<()> {
    match format {
        Format::Xyz => xyz::write(w, &comment_line(entry), &entry.geometry.coords),
        Format::Sdf => write_sdf(w, entry),
        Format::Json => json::write(w, entry),
    }
}

fn check_sdf(entries: &[Entry], formats: &[Format]) -> Result<(), ExportError> {
    if !formats.contains(&Format::Sdf) {
        return Ok(());
    }
    match entries.iter().find(|e| e.cage.atoms() > sdf::MAX_ATOMS) {
        Some(e) => Err(ExportError::TooLargeForSdf {
            id: e.id.clone(),
            atoms: e.cage.atoms(),
        }),
        None => Ok(()),
    }
}
