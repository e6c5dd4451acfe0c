//! The on-disk catalogue: a directory holding one data file per (face set, atom count, IPR or
//! complete) run, written crash-safely and resumably, merged from shards, verified, and queried.
//!
//! A run is cut by the enumerator into deterministic units; [`Writer`] commits each finished
//! unit durably and, when all are in, writes the data file as a pure function of the unit
//! results in unit order, so an interrupted and resumed run (or a merge of shards) gives the same
//! bytes as one uninterrupted run. Only this module touches catalogue files. It does not
//! enumerate or score: records arrive already scored. The byte layout is documented in
//! `docs/catalogue-format.md`.

pub mod chunk;
pub mod crc;
pub mod energies;
pub mod format;
pub mod lock;
pub mod merge;
pub mod query;
pub mod record;
pub mod resume;
pub mod stats;
pub mod verify;

pub use format::{DataFile, FORMAT_VERSION, SCHEMA_VERSION};
pub use merge::{merge, MergeReport};
pub use query::{query, Filter, Query, RankKey};
pub use record::{PointGroup, Record};
pub use resume::made_by;
pub use resume::{Finished, Writer};
pub use verify::{verify, VerifyReport};

use crate::cage::FaceSet;
use serde::{Deserialize, Serialize};
use std::fmt;
use std::io;
use std::path::{Path, PathBuf};

/// Environment variable naming the default catalogue directory.
pub const CATALOGUE_ENV: &str = "CAGERANK_CATALOGUE";
/// Default catalogue directory when the variable is unset (relative to the working directory;
/// the repository ships its catalogue there).
pub const DEFAULT_DIR: &str = "catalogues";
/// The catalogue shipped in the source tree this binary was built from, so that an installed
/// binary (`cargo install --path .`) finds it from any working directory.
const SHIPPED_DIR: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/catalogues");
/// File extension of catalogue data files.
pub const DATA_EXT: &str = "cgr";

/// The catalogue to read: `$CAGERANK_CATALOGUE` if set and non-empty, else `./catalogues` if it
/// exists, else the catalogue shipped with the source tree of this build if that still exists,
/// else `./catalogues` (whose absence the caller reports).
pub fn default_dir() -> PathBuf {
    if let Some(dir) = std::env::var_os(CATALOGUE_ENV).filter(|v| !v.is_empty()) {
        return PathBuf::from(dir);
    }
    let local = PathBuf::from(DEFAULT_DIR);
    let shipped = PathBuf::from(SHIPPED_DIR);
    if !local.is_dir() && shipped.is_dir() {
        shipped
    } else {
        local
    }
}

/// The catalogue to write when none is named: `$CAGERANK_CATALOGUE` if set and non-empty, else
/// `./catalogues`. Never the shipped catalogue of the source tree, which a run elsewhere must not
/// change behind the user's back.
pub fn default_write_dir() -> PathBuf {
    match std::env::var_os(CATALOGUE_ENV) {
        Some(v) if !v.is_empty() => PathBuf::from(v),
        _ => PathBuf::from(DEFAULT_DIR),
    }
}

/// A shard of a run, 1-based "K/N", and how the run's units were dealt to the N shards.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
pub struct ShardId {
    pub index: u32,
    pub count: u32,
    /// Format 4 on; older files read as [`Deal::RoundRobin`].
    pub deal: Deal,
}

/// How the units of a run are dealt to the shards of a split. Append only: the variant index
/// is stored in shard headers.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
pub enum Deal {
    /// Unit i to shard (i mod N) + 1: what format 3 and earlier wrote. Still read and merged.
    RoundRobin,
    /// Round-robin in a fixed pseudo-random order of the units (`enumerate::deal`): what
    /// `--shard` writes from format 4 on.
    Scrambled,
}

impl ShardId {
    /// The shard (1-based) that holds each unit of a run cut into `units` units, under this
    /// shard's dealing.
    pub fn owners(self, units: u32) -> Vec<u32> {
        match self.deal {
            Deal::RoundRobin => (0..units).map(|u| u % self.count + 1).collect(),
            Deal::Scrambled => crate::enumerate::deal::owners(units, self.count)
                .iter()
                .map(|k| k + 1)
                .collect(),
        }
    }

    /// The units (in increasing order) that this shard holds.
    pub fn units(self, units: u32) -> Vec<u32> {
        let owners = self.owners(units);
        (0..units)
            .filter(|&u| owners[u as usize] == self.index)
            .collect()
    }
}

impl fmt::Display for ShardId {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}/{}", self.index, self.count)
    }
}

/// What a data file holds and how it was made (the header's provenance).
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct RunInfo {
    pub face_set: FaceSet,
    pub atoms: u32,
    /// True for an IPR-only run, false for the complete list.
    pub ipr: bool,
    /// How many deterministic units the enumerator cut the run into.
    pub unit_count: u32,
    /// Length of the spiral prefix that defines a unit (provenance only).
    pub unit_depth: u32,
    /// Set for a partial catalogue written by `--shard K/N`.
    pub shard: Option<ShardId>,
    /// Program and version that computed the records, e.g. "cagerank 0.1.0".
    pub made_by: String,
    /// True if spirals were also started on hexagons (`--all-starts`): the unit list differs,
    /// and such a list holds the cages with no spiral starting on a pentagon.
    pub all_starts: bool,
    /// Cage charge Q the Hückel descriptors were computed for (format 3 on; older files are
    /// neutral runs). Part of the file name, so runs of several charges share a directory.
    pub charge: i32,
}

impl RunInfo {
    /// The same run without the shard (what a merge produces).
    pub fn whole(&self) -> RunInfo {
        RunInfo {
            shard: None,
            ..self.clone()
        }
    }

    /// The search this run is a result of (it decides the unit list).
    pub fn spec(&self) -> crate::enumerate::Spec {
        crate::enumerate::Spec {
            atoms: self.atoms,
            face_set: self.face_set,
            ipr: self.ipr,
            all_starts: self.all_starts,
        }
    }

    /// File name of this run's data file, e.g. `fullerene-c100-ipr.cgr` or
    /// `fullerene-c80-ipr-q-6.cgr`.
    pub fn file_name(&self) -> String {
        data_file_name(self.face_set, self.atoms, self.ipr, self.charge)
    }

    /// Human name, e.g. "C100 (IPR, fullerene)" or "C80 (IPR, fullerene, charge -6)". A run that
    /// started spirals only on pentagons where that is not known to find every cage says so, as
    /// its list may be short.
    pub fn label(&self) -> String {
        let list = if self.ipr { "IPR" } else { "all" };
        let spec = self.spec();
        let starts = if self.all_starts {
            ", all starts"
        } else if !spec.starts_verified() {
            ", pentagon starts only: may miss cages"
        } else {
            ""
        };
        let charge = if self.charge == 0 {
            String::new()
        } else {
            format!(", charge {:+}", self.charge)
        };
        format!(
            "C{} ({list}, {}{charge}{starts})",
            self.atoms, self.face_set
        )
    }
}

/// The data file of a run: `<face set>-c<atoms>-<all|ipr>.cgr` for a neutral cage, with
/// `-q<signed charge>` before the extension for a cage ion (`fullerene-c80-ipr-q-6.cgr`), so the
/// runs of several charges of one size sit side by side.
pub fn data_file_name(face_set: FaceSet, atoms: u32, ipr: bool, charge: i32) -> String {
    let list = if ipr { "ipr" } else { "all" };
    let charge = if charge == 0 {
        String::new()
    } else {
        format!("-q{charge:+}")
    };
    format!("{}-c{atoms}-{list}{charge}.{DATA_EXT}", face_set)
}

/// The data files in a catalogue directory, sorted by name.
pub fn data_files(dir: &Path) -> Result<Vec<PathBuf>, CatalogueError> {
    let entries = std::fs::read_dir(dir).map_err(|e| {
        if e.kind() == io::ErrorKind::NotFound {
            CatalogueError::NoDirectory {
                dir: dir.to_path_buf(),
            }
        } else {
            CatalogueError::io("list", dir, e)
        }
    })?;
    let mut out = Vec::new();
    for entry in entries {
        let path = entry
            .map_err(|e| CatalogueError::io("list", dir, e))?
            .path();
        if path.extension().is_some_and(|e| e == DATA_EXT) && path.is_file() {
            out.push(path);
        }
    }
    out.sort();
    Ok(out)
}

/// Which part of a file is damaged.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Place {
    Header,
    Index,
    Trailer,
    Chunk(u32),
    /// A file of committed units of a run in progress.
    Part,
}

impl fmt::Display for Place {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Place::Header => f.write_str("header"),
            Place::Index => f.write_str("index"),
            Place::Trailer => f.write_str("trailer"),
            Place::Chunk(i) => write!(f, "chunk {i}"),
            Place::Part => f.write_str("committed-units file"),
        }
    }
}

/// Everything that can go wrong with a catalogue; each message is one line saying what to do.
#[derive(Debug)]
pub enum CatalogueError {
    Io {
        action: &'static str,
        path: PathBuf,
        source: io::Error,
    },
    /// A checksum, length or decoded value does not fit.
    Corrupt {
        path: PathBuf,
        place: Place,
        detail: String,
    },
    /// Not a catalogue data file at all.
    Foreign { path: PathBuf },
    /// Written by a format or schema version this build does not read.
    Version {
        path: PathBuf,
        format: u16,
        schema: u16,
    },
    /// Another writer holds the catalogue.
    Locked { dir: PathBuf, holder: String },
    /// The catalogue directory cannot be written to.
    ReadOnly { dir: PathBuf },
    /// The catalogue directory does not exist.
    NoDirectory { dir: PathBuf },
    /// Existing files belong to a different run than the one requested.
    RunMismatch { path: PathBuf, detail: String },
    /// Shards that cannot be merged.
    Merge(String),
    /// The catalogue has nothing for what was asked.
    Missing { dir: PathBuf, what: String },
    /// The request itself cannot be answered by any catalogue (e.g. an impossible size).
    Request(String),
    /// A record handed to the writer is unfit to store.
    BadRecord { unit: u32, detail: String },
    /// `finish` was called before every unit was committed.
    Incomplete { dir: PathBuf, pending: usize },
}

impl CatalogueError {
    pub fn io(action: &'static str, path: &Path, source: io::Error) -> CatalogueError {
        CatalogueError::Io {
            action,
            path: path.to_path_buf(),
            source,
        }
    }

    pub fn corrupt(path: &Path, place: Place, detail: String) -> CatalogueError {
        CatalogueError::Corrupt {
            path: path.to_path_buf(),
            place,
            detail,
        }
    }

    /// True for errors that mean damaged or unreadable data.
    pub fn is_data_error(&self) -> bool {
        matches!(
            self,
            CatalogueError::Corrupt { .. }
                | CatalogueError::Foreign { .. }
                | CatalogueError::Version { .. }
        )
    }

    /// True for errors the user fixes by changing the request or the files (the CLI exits with
    /// code 2): damaged, foreign, misnamed or mismatched files, missing data, shards that do
    /// not merge, a read-only directory. Locks, I/O failures and internal errors are not.
    pub fn is_user_error(&self) -> bool {
        self.is_data_error()
            || matches!(
                self,
                CatalogueError::RunMismatch { .. }
                    | CatalogueError::Merge(_)
                    | CatalogueError::Missing { .. }
                    | CatalogueError::Request(_)
                    | CatalogueError::ReadOnly { .. }
                    | CatalogueError::NoDirectory { .. }
            )
    }
}

impl fmt::Display for CatalogueError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            CatalogueError::Io { action, path, source } => {
                write!(f, "cannot {action} {}: {source}", path.display())
            }
            CatalogueError::Corrupt { path, place, detail } => write!(
                f,
                "{}: {place} is damaged ({detail}); rebuild or restore this file",
                path.display()
            ),
            CatalogueError::Foreign { path } => write!(
                f,
                "{} is not a cagerank catalogue file; move it out of the catalogue directory",
                path.display()
            ),
            CatalogueError::Version { path, format, schema } => write!(
                f,
                "{}: format {format} / schema {schema} is not readable by this build \
                 (reads format {FORMAT_VERSION} / schema {SCHEMA_VERSION}); rebuild it with this version",
                path.display()
            ),
            CatalogueError::Locked { dir, holder } => write!(
                f,
                "catalogue {} is being written by {holder}; wait for it to finish, or use another catalogue directory",
                dir.display(),
            ),
            CatalogueError::ReadOnly { dir } => write!(
                f,
                "catalogue {} is read-only (no write permission); choose a writable directory with --catalogue DIR",
                dir.display()
            ),
            CatalogueError::RunMismatch { path, detail } => {
                write!(f, "{}: {detail}", path.display())
            }
            CatalogueError::Merge(msg) => f.write_str(msg),
            CatalogueError::Missing { dir, what } => {
                write!(f, "catalogue {} has no {what}", dir.display())
            }
            CatalogueError::Request(msg) => f.write_str(msg),
            CatalogueError::NoDirectory { dir } => write!(
                f,
                "catalogue directory {} does not exist; give an existing one with --catalogue DIR \
                 (or set CAGERANK_CATALOGUE), or build one with `cagerank enumerate SIZES --catalogue DIR`",
                dir.display()
            ),
            CatalogueError::BadRecord { unit, detail } => {
                write!(f, "unit {unit}: record cannot be stored ({detail})")
            }
            CatalogueError::Incomplete { dir, pending } => write!(
                f,
                "catalogue {}: {pending} unit(s) not yet committed; run the same command again to finish",
                dir.display()
            ),
        }
    }
}

impl std::error::Error for CatalogueError {}
