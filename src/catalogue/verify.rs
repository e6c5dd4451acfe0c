//! `verify`: reads every data file of a catalogue completely (header, name, index, every chunk's
//! checksum and contents, index summaries against the decoded records, the records' Hückel
//! filling against the header's charge) and checks the committed-units files of runs still in
//! progress against their run. It reports; it never repairs.

use super::chunk::ChunkStats;
use super::format::DataFile;
use super::resume::check_work_dir;
use super::{data_files, CatalogueError, Place, RunInfo};
use crate::score::Shell;
use std::path::{Path, PathBuf};

/// The state of one data file.
#[derive(Debug)]
pub struct FileReport {
    pub path: PathBuf,
    /// Run label, chunk count and record count when readable.
    pub summary: Option<(String, usize, u64)>,
    pub problem: Option<CatalogueError>,
}

/// Everything `verify` found.
#[derive(Debug)]
pub struct VerifyReport {
    pub files: Vec<FileReport>,
    /// Work directories of unfinished runs (`*.work`), with the run label when readable.
    pub unfinished: Vec<(PathBuf, Option<String>)>,
    /// Problems in work directories: unreadable run files, misnamed directories, committed-units
    /// files of another run.
    pub work_problems: Vec<CatalogueError>,
}

impl VerifyReport {
    pub fn is_ok(&self) -> bool {
        self.files.iter().all(|f| f.problem.is_none()) && self.work_problems.is_empty()
    }
}

/// Checks every data file in `dir`. Fails only if the directory itself cannot be read.
pub fn verify(dir: &Path) -> Result<VerifyReport, CatalogueError> {
    let files = data_files(dir)?
        .into_iter()
        .map(|path| match verify_file(&path) {
            Ok(summary) => FileReport {
                path,
                summary: Some(summary),
                problem: None,
            },
            Err(e) => FileReport {
                path,
                summary: None,
                problem: Some(e),
            },
        })
        .collect();
    let mut unfinished = Vec::new();
    let mut work_problems = Vec::new();
    for work in unfinished_runs(dir)? {
        match check_work_dir(&work) {
            Ok((info, problems)) => {
                unfinished.push((work, Some(info.label())));
                work_problems.extend(problems);
            }
            Err(e) => {
                unfinished.push((work, None));
                work_problems.push(e);
            }
        }
    }
    Ok(VerifyReport {
        files,
        unfinished,
        work_problems,
    })
}

/// Whether a record's Hückel filling fits the run's charge: an odd electron count leaves a
/// singly occupied orbital (and an open shell), an even one none.
fn filling_fits(info: &RunInfo, somo: Option<f32>, shell: Shell) -> Result<(), String> {
    let odd = (i64::from(info.atoms) - i64::from(info.charge)) % 2 != 0;
    match (odd, somo.is_some()) {
        (true, false) => Err(format!(
            "no singly occupied orbital, but charge {:+} leaves an odd electron count",
            info.charge
        )),
        (false, true) => Err(format!(
            "a singly occupied orbital, but charge {:+} leaves an even electron count",
            info.charge
        )),
        (false, false) if shell == Shell::OpenDoublet => {
            Err("an open-shell doublet with an even electron count".into())
        }
        _ => Ok(()),
    }
}

/// Fully checks one data file; returns (label, chunks, records).
pub fn verify_file(path: &Path) -> Result<(String, usize, u64), CatalogueError> {
    let mut file = DataFile::open(path)?;
    for c in 0..file.chunk_count() {
        let chunk = file.read_chunk(c)?;
        let stored = file.index.chunks[c].stats;
        if !same_stats(&chunk.stats(), &stored) {
            let d = "index summary does not match the records".to_string();
            return Err(CatalogueError::corrupt(path, Place::Chunk(c as u32), d));
        }
        for i in 0..chunk.len() {
            let r = chunk.record(i);
            if let Err(d) = filling_fits(&file.info, r.somo, r.shell) {
                let d = format!("record {i} has {d} (header charge {:+})", file.info.charge);
                return Err(CatalogueError::corrupt(path, Place::Chunk(c as u32), d));
            }
            if r.spiral().is_err() {
                let d = format!(
                    "record {i} has a spiral that does not wind: {}",
                    r.spiral_text()
                );
                return Err(CatalogueError::corrupt(path, Place::Chunk(c as u32), d));
            }
        }
    }
    Ok((file.info.label(), file.chunk_count(), file.record_count()))
}

/// Bitwise comparison (so NaN summaries compare equal to themselves).
fn same_stats(a: &ChunkStats, b: &ChunkStats) -> bool {
    a.min_pentagon_adjacencies == b.min_pentagon_adjacencies
        && a.max_pentagon_adjacencies == b.max_pentagon_adjacencies
        && a.min_gap.to_bits() == b.min_gap.to_bits()
        && a.max_gap.to_bits() == b.max_gap.to_bits()
        && a.shells == b.shells
        && a.point_groups == b.point_groups
        && a.chirality == b.chirality
        && a.ipr == b.ipr
}

fn unfinished_runs(dir: &Path) -> Result<Vec<PathBuf>, CatalogueError> {
    let mut out = Vec::new();
    for entry in std::fs::read_dir(dir).map_err(|e| CatalogueError::io("list", dir, e))? {
        let path = entry
            .map_err(|e| CatalogueError::io("list", dir, e))?
            .path();
        if path.is_dir() && path.extension().is_some_and(|e| e == "work") {
            out.push(path);
        }
    }
    out.sort();
    Ok(out)
}
