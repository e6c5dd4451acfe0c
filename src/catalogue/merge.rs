//! Merging shard catalogues (`--shard K/N` runs, possibly from different machines) into one.
//!
//! For each data file name, the shards must come from one run (same face set, size, list, unit
//! count, program version) and together cover it exactly once; then their records are
//! interleaved back into unit order and written as a whole-run file, byte-identical to what a
//! single unsharded run writes. Whole-run files in the inputs are copied through the same writer.

use super::format::{DataFile, DataWriter};
use super::lock::Lock;
use super::record::Record;
use super::resume::describe;
use super::{data_files, CatalogueError, RunInfo};
use std::collections::{BTreeMap, HashMap};
use std::fs;
use std::path::{Path, PathBuf};

/// What a merge wrote.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct MergeReport {
    /// Data files written, with their record counts.
    pub written: Vec<(PathBuf, u64)>,
    /// Data files already present in the destination with the same run (left as they were).
    pub unchanged: Vec<PathBuf>,
}

/// Merges the data files of the catalogue directories `inputs` into catalogue `into`.
pub fn merge(inputs: &[PathBuf], into: &Path) -> Result<MergeReport, CatalogueError> {
    let groups = group_inputs(inputs)?;
    check_one_run_per_split(&groups)?;
    // Every group is checked before anything is created, so a refused merge leaves no trace.
    let mut checked = Vec::with_capacity(groups.len());
    for (name, files) in groups {
        let whole = check_group(&name, &files)?;
        checked.push((name, files, whole));
    }
    fs::create_dir_all(into).map_err(|e| super::lock::write_error(into, into, e))?;
    let _lock = Lock::acquire(into)?;
    let mut report = MergeReport {
        written: Vec::new(),
        unchanged: Vec::new(),
    };
    for (name, files, whole) in checked {
        let dest = into.join(&name);
        if dest.exists() {
            let existing = DataFile::open(&dest)?;
            if existing.info != whole {
                return Err(CatalogueError::Merge(format!(
                    "{} already holds a different run ({}); delete it or merge into another directory",
                    dest.display(),
                    describe(&existing.info)
                )));
            }
            report.unchanged.push(dest);
            continue;
        }
        let records = write_merged(&dest, &whole, files)?;
        report.written.push((dest, records));
    }
    Ok(report)
}

/// Opens every data file of every input directory, grouped by file name.
fn group_inputs(inputs: &[PathBuf]) -> Result<BTreeMap<String, Vec<DataFile>>, CatalogueError> {
    let mut groups: BTreeMap<String, Vec<DataFile>> = BTreeMap::new();
    let mut charges: BTreeMap<String, (i32, PathBuf)> = BTreeMap::new();
    for dir in inputs {
        let files = data_files(dir)?;
        if files.is_empty() {
            return Err(CatalogueError::Missing {
                dir: dir.clone(),
                what: "data files to merge".into(),
            });
        }
        for path in files {
            let file = DataFile::open(&path)?;
            if file.info.shard.is_some() {
                check_one_charge(&mut charges, &file)?;
            }
            groups.entry(file.info.file_name()).or_default().push(file);
        }
    }
    Ok(groups)
}

/// Shards given together that belong to different runs (another size, face set or list) form
/// groups that are each incomplete; rather than report every group's missing shards, name two
/// shards of the same split that sit in different runs, which is what went wrong.
fn check_one_run_per_split(groups: &BTreeMap<String, Vec<DataFile>>) -> Result<(), CatalogueError> {
    let incomplete: Vec<&DataFile> = groups
        .values()
        .filter_map(|files| {
            let n = files[0].info.shard?.count;
            let present = files.iter().filter(|f| f.info.shard.is_some()).count();
            (present < n as usize).then_some(&files[0])
        })
        .collect();
    for (i, a) in incomplete.iter().enumerate() {
        let n = a.info.shard.map(|s| s.count);
        if let Some(b) = incomplete[i + 1..]
            .iter()
            .find(|b| b.info.shard.map(|s| s.count) == n)
        {
            return Err(CatalogueError::Merge(format!(
                "{} ({}) and {} ({}) are shards of different runs, and neither run has all \
                 its shards; merge the shards of one run together",
                a.path().display(),
                describe(&a.info),
                b.path().display(),
                describe(&b.info)
            )));
        }
    }
    Ok(())
}

/// Shards of one size and list must share a charge: records computed for different cage ions
/// cannot form one run (their descriptors differ), so such a mix is refused by name.
fn check_one_charge(
    seen: &mut BTreeMap<String, (i32, PathBuf)>,
    file: &DataFile,
) -> Result<(), CatalogueError> {
    let run = RunInfo {
        charge: 0,
        ..file.info.whole()
    }
    .file_name();
    match seen.get(&run) {
        Some((charge, other)) if *charge != file.info.charge => {
            Err(CatalogueError::Merge(format!(
                "{} (charge {:+}) and {} (charge {:+}) are shards of {} for different charges; \
             merge the shards of one charge at a time",
                other.display(),
                charge,
                file.path().display(),
                file.info.charge,
                file.info.label()
            )))
        }
        Some(_) => Ok(()),
        None => {
            seen.insert(run, (file.info.charge, file.path().to_path_buf()));
            Ok(())
        }
    }
}

/// Checks that the files of one group form exactly one run; returns the merged run's info.
fn check_group(name: &str, files: &[DataFile]) -> Result<RunInfo, CatalogueError> {
    let first = &files[0];
    let whole = first.info.whole();
    for f in &files[1..] {
        if f.info.whole() != whole {
            return Err(CatalogueError::Merge(format!(
                "{} and {} come from different runs or program versions ({} vs {}); \
                 re-run the odd one with the same version and settings",
                first.path().display(),
                f.path().display(),
                describe(&first.info),
                describe(&f.info)
            )));
        }
    }
    let mut by_shard: HashMap<Option<u32>, &DataFile> = HashMap::new();
    for f in files {
        let key = f.info.shard.map(|s| s.index);
        if let Some(other) = by_shard.insert(key, f) {
            let what = f
                .info
                .shard
                .map_or("the whole run".to_string(), |s| format!("shard {s}"));
            return Err(CatalogueError::Merge(format!(
                "overlap: {} and {} both hold {what} of {name}; give each shard once",
                other.path().display(),
                f.path().display()
            )));
        }
    }
    check_coverage(name, files)?;
    Ok(whole)
}

fn check_coverage(name: &str, files: &[DataFile]) -> Result<(), CatalogueError> {
    let counts: Vec<Option<u32>> = files
        .iter()
        .map(|f| f.info.shard.map(|s| s.count))
        .collect();
    if files.len() == 1 && counts[0].is_none() {
        return Ok(());
    }
    if counts.contains(&None) {
        let whole = files
            .iter()
            .find(|f| f.info.shard.is_none())
            .expect("invariant: found above");
        return Err(CatalogueError::Merge(format!(
            "overlap: {} holds the whole run of {name} and shards of it are given too",
            whole.path().display()
        )));
    }
    let n = counts[0].expect("invariant: all sharded");
    if let Some(f) = files
        .iter()
        .find(|f| f.info.shard.map(|s| s.count) != Some(n))
    {
        return Err(CatalogueError::Merge(format!(
            "{} is a shard of a {}-way split, others of a {n}-way split; shards must come from one split",
            f.path().display(),
            f.info.shard.map_or(1, |s| s.count)
        )));
    }
    let deal = files[0].info.shard.map(|s| s.deal);
    if let Some(f) = files.iter().find(|f| f.info.shard.map(|s| s.deal) != deal) {
        return Err(CatalogueError::Merge(format!(
            "{} and {} deal the units to shards differently (one was written by an older \
             version, which dealt them round-robin); rerun the older shards with this version",
            files[0].path().display(),
            f.path().display()
        )));
    }
    let present: Vec<u32> = files
        .iter()
        .filter_map(|f| f.info.shard.map(|s| s.index))
        .collect();
    let missing: Vec<String> = (1..=n)
        .filter(|k| !present.contains(k))
        .map(|k| format!("{k}/{n}"))
        .collect();
    if !missing.is_empty() {
        return Err(CatalogueError::Merge(format!(
            "missing shard(s) {} of {name}; run `--shard K/N` for them and merge all {n} together",
            missing.join(", ")
        )));
    }
    let shard = files[0].info.shard.expect("invariant: all sharded");
    let owners = shard.owners(files[0].info.unit_count);
    for f in files {
        check_units_complete(f, &owners)?;
    }
    Ok(())
}

/// A shard file must hold exactly the units its shard owns (`owners`: the shard of each unit).
fn check_units_complete(f: &DataFile, owners: &[u32]) -> Result<(), CatalogueError> {
    let shard = f.info.shard.expect("invariant: only shards are checked");
    let want: Vec<u32> = (0..f.info.unit_count)
        .filter(|&u| owners[u as usize] == shard.index)
        .collect();
    let have: Vec<u32> = f.index.units.iter().map(|u| u.0).collect();
    if want != have {
        return Err(CatalogueError::Merge(format!(
            "{} (shard {shard}) does not hold exactly the units of its shard; rebuild that shard",
            f.path().display()
        )));
    }
    Ok(())
}

/// Reads a data file record by record, chunk after chunk.
struct Stream {
    file: DataFile,
    next_chunk: usize,
    buffer: std::vec::IntoIter<Record>,
    unit_counts: HashMap<u32, u64>,
}

impl Stream {
    fn new(file: DataFile) -> Stream {
        let unit_counts = file.index.units.iter().copied().collect();
        Stream {
            file,
            next_chunk: 0,
            buffer: Vec::new().into_iter(),
            unit_counts,
        }
    }

    fn next(&mut self) -> Result<Record, CatalogueError> {
        loop {
            if let Some(r) = self.buffer.next() {
                return Ok(r);
            }
            if self.next_chunk >= self.file.chunk_count() {
                return Err(CatalogueError::corrupt(
                    self.file.path(),
                    super::Place::Index,
                    "fewer records than its units account for".into(),
                ));
            }
            let mut records = self.file.chunk_records(self.next_chunk)?;
            for r in &mut records {
                r.number = None;
                r.ipr_number = None;
            }
            self.buffer = records.into_iter();
            self.next_chunk += 1;
        }
    }
}

/// Interleaves the group's records back into unit order and writes the whole-run file.
fn write_merged(dest: &Path, whole: &RunInfo, files: Vec<DataFile>) -> Result<u64, CatalogueError> {
    let mut streams: BTreeMap<u32, Stream> = files
        .into_iter()
        .map(|f| (f.info.shard.map_or(1, |s| s.index), Stream::new(f)))
        .collect();
    // Coverage was checked against these owners, so every unit's shard is among the streams.
    let owners: Vec<u32> = match streams.values().next().and_then(|s| s.file.info.shard) {
        Some(shard) => shard.owners(whole.unit_count),
        None => vec![1; whole.unit_count as usize],
    };
    let mut out = DataWriter::create(dest, whole)?;
    let mut total = 0;
    for unit in 0..whole.unit_count {
        let stream = owners
            .get(unit as usize)
            .and_then(|k| streams.get_mut(k))
            .expect("invariant: coverage checked");
        let count = stream.unit_counts.get(&unit).copied().unwrap_or(0);
        for _ in 0..count {
            let mut r = stream.next()?;
            r.number = None;
            out.push(r)?;
        }
        out.end_unit(unit, count);
        total += count;
    }
    out.finish()?;
    Ok(total)
}
