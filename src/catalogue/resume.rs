//! Resumable writing of one run: each finished unit is committed durably as its own file in a
//! work directory; when every unit of the run (or shard) is in, the data file is written from
//! the committed units in unit order and the work directory removed. Because the data file is a
//! pure function of the unit results, a run killed at any moment and started again yields the
//! same bytes as an uninterrupted one. No finished unit is lost; units in flight are redone.
//! Every committed-units file carries the run it belongs to, so one copied in from another run
//! (another size, list, charge or shard) is refused instead of merged in. How often to commit
//! is the caller's choice (the CLI commits every few seconds).

use super::chunk;
use super::crc::crc32;
use super::format::{write_atomic, DataFile, DataWriter};
use super::lock::Lock;
use super::record::Record;
use super::{CatalogueError, Place, RunInfo};
use std::collections::{BTreeMap, BTreeSet};
use std::fs;
use std::path::{Path, PathBuf};

/// Committed-units files since format 3: they name their run. (`\x89CGRUNT\n` files, without
/// it, belonged to work directories that format 3 no longer resumes.)
const PART_MAGIC: [u8; 8] = *b"\x89CGRPRT\n";
const RUN_MAGIC: [u8; 8] = *b"\x89CGRRUN\n";

/// The program name and version recorded as provenance in every file.
pub fn made_by() -> String {
    format!("cagerank {}", env!("CARGO_PKG_VERSION"))
}

/// What [`Writer::finish`] produced.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Finished {
    pub path: PathBuf,
    pub records: u64,
    /// True if the data file was already complete when the writer was opened.
    pub was_complete: bool,
}

/// Writes one run (or one shard of it) into a catalogue directory, resumably.
///
/// ```no_run
/// # use cagerank::catalogue::{Writer, RunInfo, Record};
/// # fn records_of(unit: u32) -> Vec<Record> { Vec::new() }
/// # fn demo(info: RunInfo) -> Result<(), cagerank::catalogue::CatalogueError> {
/// let mut w = Writer::open("catalogues".as_ref(), info)?;
/// for unit in w.pending_units() {
///     w.commit_unit(unit, &records_of(unit))?;
/// }
/// w.finish()?;
/// # Ok(()) }
/// ```
#[derive(Debug)]
pub struct Writer {
    info: RunInfo,
    dest: PathBuf,
    work: PathBuf,
    pending: BTreeSet<u32>,
    complete: bool,
    _lock: Lock,
}

impl Writer {
    /// Opens (creating if needed) catalogue `dir` for the run `info`, takes the writer lock and
    /// finds which units are still to do. Refuses if the directory holds a different run for the
    /// same data file, finished or unfinished.
    pub fn open(dir: &Path, info: RunInfo) -> Result<Writer, CatalogueError> {
        fs::create_dir_all(dir).map_err(|e| super::lock::write_error(dir, dir, e))?;
        let lock = Lock::acquire(dir)?;
        let dest = dir.join(info.file_name());
        let work = dir.join(format!("{}.work", info.file_name()));
        let complete = existing_run_matches(&dest, &info)?;
        let pending = if complete {
            remove_work_dir(&work)?;
            BTreeSet::new()
        } else {
            prepare_work_dir(&work, &info)?;
            let mine = units_of(&info);
            let done = committed_parts(&work, &info, &mine)?;
            mine.into_iter().filter(|u| !done.contains_key(u)).collect()
        };
        Ok(Writer {
            info,
            dest,
            work,
            pending,
            complete,
            _lock: lock,
        })
    }

    pub fn info(&self) -> &RunInfo {
        &self.info
    }

    /// Units of this run (or shard) not yet committed, in increasing order.
    pub fn pending_units(&self) -> Vec<u32> {
        self.pending.iter().copied().collect()
    }

    /// Durably records the result of one unit (records in spiral order). Numbers in the records
    /// are ignored: they are assigned from positions when the catalogue is read.
    pub fn commit_unit(&mut self, unit: u32, records: &[Record]) -> Result<(), CatalogueError> {
        self.commit_units(&[(unit, records)])
    }

    /// Durably records several finished units at once (one file, one fsync): cheaper than
    /// [`commit_unit`](Writer::commit_unit) when units are small. All or none become committed.
    pub fn commit_units(&mut self, batch: &[(u32, &[Record])]) -> Result<(), CatalogueError> {
        let Some(&(first, _)) = batch.first() else {
            return Ok(());
        };
        let mut seen = BTreeSet::new();
        for &(unit, records) in batch {
            if !self.pending.contains(&unit) || !seen.insert(unit) {
                let detail = if units_of(&self.info).contains(&unit) {
                    "was already committed".to_string()
                } else {
                    format!(
                        "is not a unit of this run or shard ({} units)",
                        self.info.unit_count
                    )
                };
                return Err(CatalogueError::BadRecord { unit, detail });
            }
            validate(&self.info, unit, records)?;
        }
        write_atomic(
            &part_path(&self.work, first),
            &part_bytes(&self.info, batch),
        )?;
        for (unit, _) in batch {
            self.pending.remove(unit);
        }
        Ok(())
    }

    /// Writes the data file from the committed units and removes the work directory.
    pub fn finish(self) -> Result<Finished, CatalogueError> {
        if self.complete {
            let records = DataFile::open(&self.dest)?.record_count();
            return Ok(Finished {
                path: self.dest.clone(),
                records,
                was_complete: true,
            });
        }
        if !self.pending.is_empty() {
            let dir = self.dest.parent().unwrap_or(Path::new(".")).to_path_buf();
            return Err(CatalogueError::Incomplete {
                dir,
                pending: self.pending.len(),
            });
        }
        let mine = units_of(&self.info);
        let parts = committed_parts(&self.work, &self.info, &mine)?;
        let mut out = DataWriter::create(&self.dest, &self.info)?;
        let mut cache: (Option<PathBuf>, BTreeMap<u32, Vec<Record>>) = (None, BTreeMap::new());
        let mut total = 0u64;
        for &unit in &mine {
            let part = parts.get(&unit).expect("invariant: no unit pending");
            if cache.0.as_ref() != Some(part) {
                cache = (Some(part.clone()), read_part(part, &self.info, &mine)?);
            }
            let records = cache.1.remove(&unit).unwrap_or_default();
            total += records.len() as u64;
            out.end_unit(unit, records.len() as u64);
            for r in records {
                out.push(r)?;
            }
        }
        let path = out.finish()?;
        remove_work_dir(&self.work)?;
        Ok(Finished {
            path,
            records: total,
            was_complete: false,
        })
    }
}

/// The units a run or shard is responsible for, in increasing order.
pub fn units_of(info: &RunInfo) -> BTreeSet<u32> {
    match info.shard {
        None => (0..info.unit_count).collect(),
        Some(s) => s.units(info.unit_count).into_iter().collect(),
    }
}

fn existing_run_matches(dest: &Path, info: &RunInfo) -> Result<bool, CatalogueError> {
    if !dest.exists() {
        return Ok(false);
    }
    let existing = DataFile::open(dest)?;
    if existing.info != *info {
        let hint = if existing.info.all_starts != info.all_starts {
            let flag = if existing.info.all_starts {
                "--all-starts"
            } else {
                "--pentagon-starts"
            };
            format!("; to resume it, run again with {flag}")
        } else {
            String::new()
        };
        return Err(CatalogueError::RunMismatch {
            path: dest.to_path_buf(),
            detail: format!(
                "already holds a different run ({}); delete it or use another catalogue directory{hint}",
                describe(&existing.info)
            ),
        });
    }
    Ok(true)
}

/// One line describing the settings of a run, for mismatch messages.
pub fn describe(info: &RunInfo) -> String {
    let shard = info
        .shard
        .map_or("whole run".to_string(), |s| format!("shard {s}"));
    format!(
        "{}, {} units, {shard}, made by {}",
        info.label(),
        info.unit_count,
        info.made_by
    )
}

/// The run settings of a work directory's `run` file, if it is one this version wrote.
pub fn read_run_file(bytes: &[u8]) -> Option<RunInfo> {
    let body = bytes.strip_prefix(&RUN_MAGIC)?;
    let (crc, body) = body.split_at_checked(4)?;
    if crc32(body).to_le_bytes() != crc {
        return None;
    }
    postcard::from_bytes(body).ok()
}

fn run_file_bytes(info: &RunInfo) -> Vec<u8> {
    let body = postcard::to_stdvec(info).expect("invariant: run info serializes");
    let mut out = RUN_MAGIC.to_vec();
    out.extend_from_slice(&crc32(&body).to_le_bytes());
    out.extend_from_slice(&body);
    out
}

fn prepare_work_dir(work: &Path, info: &RunInfo) -> Result<(), CatalogueError> {
    let run = work.join("run");
    if run.exists() {
        let bytes = fs::read(&run).map_err(|e| CatalogueError::io("read", &run, e))?;
        if bytes != run_file_bytes(info) {
            let theirs = read_run_file(&bytes).map_or_else(
                || "unreadable or from another version".to_string(),
                |other| describe(&other),
            );
            return Err(CatalogueError::RunMismatch {
                path: work.to_path_buf(),
                detail: format!(
                    "holds an unfinished run with other settings ({theirs}) than requested ({}); \
                     finish that run with its own command or delete this directory",
                    describe(info)
                ),
            });
        }
        return remove_stale_temps(work);
    }
    fs::create_dir_all(work).map_err(|e| CatalogueError::io("create", work, e))?;
    write_atomic(&run, &run_file_bytes(info))
}

/// Leftover `.tmp` files are writes that a crash interrupted before their rename.
fn remove_stale_temps(work: &Path) -> Result<(), CatalogueError> {
    for entry in fs::read_dir(work).map_err(|e| CatalogueError::io("list", work, e))? {
        let path = entry
            .map_err(|e| CatalogueError::io("list", work, e))?
            .path();
        if path.extension().is_some_and(|e| e == "tmp") {
            fs::remove_file(&path).map_err(|e| CatalogueError::io("remove", &path, e))?;
        }
    }
    Ok(())
}

fn remove_work_dir(work: &Path) -> Result<(), CatalogueError> {
    if work.exists() {
        fs::remove_dir_all(work).map_err(|e| CatalogueError::io("remove", work, e))?;
        super::format::sync_dir(work)?;
    }
    Ok(())
}

fn part_path(work: &Path, first_unit: u32) -> PathBuf {
    work.join(format!("part-{first_unit:08}.part"))
}

/// Which committed part file holds each unit. A part file is only ever visible complete
/// (atomic rename); one that fails its checksum anyway (disk damage) is removed, so its units
/// are redone rather than trusted. One that is intact but belongs to another run, or holds a
/// unit twice, is refused: it was copied in by hand, and deleting it could lose someone's work.
fn committed_parts(
    work: &Path,
    info: &RunInfo,
    mine: &BTreeSet<u32>,
) -> Result<BTreeMap<u32, PathBuf>, CatalogueError> {
    let mut map = BTreeMap::new();
    let mut names = Vec::new();
    for entry in fs::read_dir(work).map_err(|e| CatalogueError::io("list", work, e))? {
        let path = entry
            .map_err(|e| CatalogueError::io("list", work, e))?
            .path();
        if path.extension().is_some_and(|e| e == "part") {
            names.push(path);
        }
    }
    names.sort();
    for path in names {
        match read_part(&path, info, mine) {
            Ok(units) => {
                for unit in units.into_keys() {
                    if let Some(other) = map.insert(unit, path.clone()) {
                        return Err(CatalogueError::RunMismatch {
                            path: path.clone(),
                            detail: format!(
                                "holds unit {unit}, which {} holds too; one of them was copied in \
                                 by hand, so delete it",
                                other.display()
                            ),
                        });
                    }
                }
            }
            Err(e @ CatalogueError::RunMismatch { .. }) => return Err(e),
            Err(_) => {
                fs::remove_file(&path).map_err(|e| CatalogueError::io("remove", &path, e))?;
            }
        }
    }
    Ok(map)
}

/// Checks the committed-units files of the work directory `work` against the run in its `run`
/// file without changing anything (for `verify`): the run settings, and a list of problems.
pub fn check_work_dir(work: &Path) -> Result<(RunInfo, Vec<CatalogueError>), CatalogueError> {
    let run = work.join("run");
    let bytes = fs::read(&run).map_err(|e| CatalogueError::io("read", &run, e))?;
    let info = read_run_file(&bytes).ok_or_else(|| {
        CatalogueError::corrupt(
            &run,
            Place::Part,
            "not a run file of this version; delete the work directory and run again".into(),
        )
    })?;
    let mut problems = Vec::new();
    let name = work.file_name().and_then(|n| n.to_str()).unwrap_or("");
    if name != format!("{}.work", info.file_name()) {
        problems.push(CatalogueError::RunMismatch {
            path: work.to_path_buf(),
            detail: format!(
                "holds a run of {}, whose work directory is {}.work; it was renamed by hand",
                info.label(),
                info.file_name()
            ),
        });
    }
    let mut seen = BTreeSet::new();
    let mine = units_of(&info);
    for entry in fs::read_dir(work).map_err(|e| CatalogueError::io("list", work, e))? {
        let path = entry
            .map_err(|e| CatalogueError::io("list", work, e))?
            .path();
        if path.extension().is_none_or(|e| e != "part") {
            continue;
        }
        match read_part(&path, &info, &mine) {
            Ok(units) => {
                if let Some(u) = units.keys().find(|&&u| !seen.insert(u)) {
                    problems.push(CatalogueError::RunMismatch {
                        path,
                        detail: format!("holds unit {u}, which another committed file holds too"),
                    });
                }
            }
            Err(e) => problems.push(e),
        }
    }
    Ok((info, problems))
}

/// Records must be storable: right atom count, special faces increasing within the spiral.
fn validate(info: &RunInfo, unit: u32, records: &[Record]) -> Result<(), CatalogueError> {
    let faces = info.atoms / 2 + 2;
    for r in records {
        let bad = |detail: String| CatalogueError::BadRecord { unit, detail };
        if r.atoms != info.atoms {
            return Err(bad(format!(
                "has {} atoms, run is C{}",
                r.atoms, info.atoms
            )));
        }
        let increasing = r.special_faces.windows(2).all(|w| w[0].0 < w[1].0);
        let in_range = r
            .special_faces
            .iter()
            .all(|&(p, s)| p >= 1 && p <= faces && s != 6);
        if !increasing || !in_range {
            return Err(bad(format!(
                "spiral {} is not a valid face list",
                r.spiral_text()
            )));
        }
    }
    Ok(())
}

/// Part file: magic, u32 length R and postcard `RunInfo` of the run (R bytes), u32 length L
/// and the unit list (unit, record count; L bytes), CRC-32 of run info, list and body, then
/// the zstd chunk body holding the batch's records in batch order.
fn part_bytes(info: &RunInfo, batch: &[(u32, &[Record])]) -> Vec<u8> {
    let all: Vec<Record> = batch.iter().flat_map(|(_, r)| r.iter().cloned()).collect();
    let units: Vec<(u32, u64)> = batch.iter().map(|(u, r)| (*u, r.len() as u64)).collect();
    let run = postcard::to_stdvec(info).expect("invariant: run info serializes");
    let list = postcard::to_stdvec(&units).expect("invariant: unit list serializes");
    let body = chunk::encode(&all);
    let mut out = PART_MAGIC.to_vec();
    out.extend_from_slice(&(run.len() as u32).to_le_bytes());
    out.extend_from_slice(&run);
    out.extend_from_slice(&(list.len() as u32).to_le_bytes());
    out.extend_from_slice(&list);
    let crc = crc32(&[&run[..], &list[..], &body[..]].concat());
    out.extend_from_slice(&crc.to_le_bytes());
    out.extend_from_slice(&body);
    out
}

/// Reads a part file of the run `info` back into its units' records. Damage (checksum,
/// lengths) is `Corrupt`; an intact file of another run, or naming units outside `mine` (the
/// run's or shard's units), is `RunMismatch`.
fn read_part(
    path: &Path,
    info: &RunInfo,
    mine: &BTreeSet<u32>,
) -> Result<BTreeMap<u32, Vec<Record>>, CatalogueError> {
    let bytes = fs::read(path).map_err(|e| CatalogueError::io("read", path, e))?;
    let corrupt = |d: String| {
        CatalogueError::corrupt(
            path,
            Place::Part,
            format!("{d}; delete this file and run the same command again to redo its units"),
        )
    };
    if bytes.len() < 12 || bytes[..8] != PART_MAGIC {
        return Err(corrupt("not a committed-units file of this version".into()));
    }
    let mut at = 8usize;
    let field = |at: &mut usize| -> Option<&[u8]> {
        let len = u32::from_le_bytes(bytes.get(*at..*at + 4)?.try_into().ok()?) as usize;
        let start = *at + 4;
        let slice = bytes.get(start..start.checked_add(len)?)?;
        *at = start + len;
        Some(slice)
    };
    let run = field(&mut at).ok_or_else(|| corrupt("truncated".into()))?;
    let list = field(&mut at).ok_or_else(|| corrupt("truncated".into()))?;
    let crc = bytes
        .get(at..at + 4)
        .map(|b| u32::from_le_bytes(b.try_into().expect("invariant: 4 bytes")))
        .ok_or_else(|| corrupt("truncated".into()))?;
    let body = &bytes[at + 4..];
    if crc32(&[run, list, body].concat()) != crc {
        return Err(corrupt("checksum mismatch".into()));
    }
    let theirs: RunInfo = postcard::from_bytes(run).map_err(|e| corrupt(e.to_string()))?;
    if theirs != *info {
        return Err(CatalogueError::RunMismatch {
            path: path.to_path_buf(),
            detail: format!(
                "holds units of another run ({}) than this work directory's ({}); it was copied \
                 in by hand, so delete it",
                describe(&theirs),
                describe(info)
            ),
        });
    }
    let units: Vec<(u32, u64)> = postcard::from_bytes(list).map_err(|e| corrupt(e.to_string()))?;
    if let Some(&(u, _)) = units.iter().find(|&&(u, _)| !mine.contains(&u)) {
        return Err(CatalogueError::RunMismatch {
            path: path.to_path_buf(),
            detail: format!("holds unit {u}, which is not a unit of this run or shard; delete it"),
        });
    }
    let chunk = chunk::decode(body, info.atoms).map_err(corrupt)?;
    let expected: u64 = units.iter().map(|u| u.1).sum();
    if chunk.len() as u64 != expected {
        return Err(corrupt(format!(
            "holds {} records, expected {expected}",
            chunk.len()
        )));
    }
    let mut out = BTreeMap::new();
    let mut at = 0usize;
    for (unit, count) in units {
        out.insert(
            unit,
            (at..at + count as usize).map(|i| chunk.record(i)).collect(),
        );
        at += count as usize;
    }
    Ok(out)
}
