//! The data file of one (face set, atom count, IPR or complete) run: header, zstd chunks, index,
//! trailer; see `docs/catalogue-format.md` for the byte layout. Writing is streaming and atomic
//! (temp file, fsync, rename, fsync the directory); reading checks magic, versions and every
//! checksum, and names the file and the part (header, index, chunk i) that is damaged. A file
//! whose header describes another run than its name says (copied or renamed by hand) is refused.
//!
//! This module knows nothing about units in flight, locks or queries.

use super::chunk::{self, Chunk, ChunkStats, Needs, Scratch, View};
use super::crc::crc32;
use super::record::Record;
use super::{CatalogueError, Place, RunInfo};
use serde::{Deserialize, Serialize};
use std::fs::{self, File};
use std::io::{BufWriter, Read, Seek, SeekFrom, Write};
use std::path::{Path, PathBuf};

/// First bytes of every catalogue data file (PNG-style: a high byte and a newline catch
/// text-mode mangling).
pub const MAGIC: [u8; 8] = *b"\x89CGRCAT\n";
/// Last bytes of every complete data file.
pub const END_MAGIC: [u8; 8] = *b"CGRCEND\n";
/// Layout version of the file itself. Version 2 added `RunInfo::all_starts`, version 3
/// `RunInfo::charge`, version 4 the dealing of a shard (`ShardId::deal`); older files are still
/// read (as neutral runs, version 1 also as runs without hexagon starts, shards of versions 1
/// to 3 as dealt round-robin).
pub const FORMAT_VERSION: u16 = 4;
/// Whole-run files are still written as version 3: without a shard their header bytes are the
/// same in both layouts, so a whole run keeps the bytes it had (and older readers read it).
const WHOLE_RUN_FORMAT_VERSION: u16 = 3;
/// Version of the record fields and their meaning; bump when a descriptor changes. Schema 2
/// added the SOMO float column and the open-doublet shell code; schema 1 files still read.
pub const SCHEMA_VERSION: u16 = 2;
/// Records per chunk: small enough to skip finely, large enough to compress well
/// (common practice, no source).
pub const CHUNK_RECORDS: usize = 4096;

const PRELUDE: usize = 8 + 2 + 2 + 4;
const TRAILER: usize = 8 + 4 + 4 + 8;

/// Where one chunk lives and what it holds.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct ChunkEntry {
    pub offset: u64,
    pub len: u64,
    pub crc: u32,
    pub records: u32,
    pub stats: ChunkStats,
}

/// The index at the end of a data file.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, Default)]
pub struct Index {
    pub chunks: Vec<ChunkEntry>,
    /// (unit index, records it produced), in unit order, for every unit this file covers.
    pub units: Vec<(u32, u64)>,
}

/// Writes `bytes` to `path` atomically: temp file beside it, fsync, rename, fsync directory.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<(), CatalogueError> {
    let tmp = tmp_path(path);
    let io = |action| move |e| CatalogueError::io(action, path, e);
    let mut f = File::create(&tmp).map_err(io("create a temporary file for"))?;
    f.write_all(bytes).map_err(io("write"))?;
    f.sync_all().map_err(io("sync"))?;
    drop(f);
    fs::rename(&tmp, path).map_err(io("rename into place"))?;
    sync_dir(path)
}

/// The temporary name used while `path` is being written.
pub fn tmp_path(path: &Path) -> PathBuf {
    let mut name = path.as_os_str().to_owned();
    name.push(".tmp");
    PathBuf::from(name)
}

/// fsyncs the directory holding `path`, so a rename survives a power cut.
pub fn sync_dir(path: &Path) -> Result<(), CatalogueError> {
    let dir = path
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    File::open(dir)
        .and_then(|d| d.sync_all())
        .map_err(|e| CatalogueError::io("sync directory", dir, e))
}

/// The header bytes: magic, versions, length, postcard run info, CRC of all that.
fn header_bytes(info: &RunInfo) -> Vec<u8> {
    let body = postcard::to_stdvec(info).expect("invariant: run info serializes");
    let mut out = Vec::with_capacity(PRELUDE + body.len() + 4);
    out.extend_from_slice(&MAGIC);
    let version = if info.shard.is_some() {
        FORMAT_VERSION
    } else {
        WHOLE_RUN_FORMAT_VERSION
    };
    out.extend_from_slice(&version.to_le_bytes());
    out.extend_from_slice(&SCHEMA_VERSION.to_le_bytes());
    out.extend_from_slice(&(body.len() as u32).to_le_bytes());
    out.extend_from_slice(&body);
    let crc = crc32(&out);
    out.extend_from_slice(&crc.to_le_bytes());
    out
}

/// Streams records into a new data file; nothing is visible at `dest` until [`finish`].
///
/// [`finish`]: DataWriter::finish
pub struct DataWriter {
    dest: PathBuf,
    tmp: PathBuf,
    out: BufWriter<File>,
    pending: Vec<Record>,
    index: Index,
    offset: u64,
}

impl DataWriter {
    pub fn create(dest: &Path, info: &RunInfo) -> Result<DataWriter, CatalogueError> {
        let tmp = tmp_path(dest);
        let file = File::create(&tmp).map_err(|e| CatalogueError::io("create", &tmp, e))?;
        let mut w = DataWriter {
            dest: dest.to_path_buf(),
            tmp,
            out: BufWriter::new(file),
            pending: Vec::with_capacity(CHUNK_RECORDS),
            index: Index::default(),
            offset: 0,
        };
        w.write(&header_bytes(info))?;
        Ok(w)
    }

    fn write(&mut self, bytes: &[u8]) -> Result<(), CatalogueError> {
        self.out
            .write_all(bytes)
            .map_err(|e| CatalogueError::io("write", &self.tmp, e))?;
        self.offset += bytes.len() as u64;
        Ok(())
    }

    pub fn push(&mut self, record: Record) -> Result<(), CatalogueError> {
        self.pending.push(record);
        if self.pending.len() == CHUNK_RECORDS {
            self.flush_chunk()?;
        }
        Ok(())
    }

    /// Notes that the records pushed since the previous call came from `unit`.
    pub fn end_unit(&mut self, unit: u32, records: u64) {
        self.index.units.push((unit, records));
    }

    fn flush_chunk(&mut self) -> Result<(), CatalogueError> {
        if self.pending.is_empty() {
            return Ok(());
        }
        let body = chunk::encode(&self.pending);
        let entry = ChunkEntry {
            offset: self.offset,
            len: body.len() as u64,
            crc: crc32(&body),
            records: self.pending.len() as u32,
            stats: ChunkStats::of_records(&self.pending),
        };
        self.write(&body)?;
        self.index.chunks.push(entry);
        self.pending.clear();
        Ok(())
    }

    /// Writes the index and trailer, then makes the file durable and visible.
    pub fn finish(mut self) -> Result<PathBuf, CatalogueError> {
        self.flush_chunk()?;
        let index = postcard::to_stdvec(&self.index).expect("invariant: index serializes");
        let mut trailer = Vec::with_capacity(TRAILER);
        trailer.extend_from_slice(&self.offset.to_le_bytes());
        trailer.extend_from_slice(&(index.len() as u32).to_le_bytes());
        trailer.extend_from_slice(&crc32(&index).to_le_bytes());
        trailer.extend_from_slice(&END_MAGIC);
        self.write(&index)?;
        self.write(&trailer)?;
        let tmp = self.tmp.clone();
        let file = self
            .out
            .into_inner()
            .map_err(|e| CatalogueError::io("write", &tmp, e.into_error()))?;
        file.sync_all()
            .map_err(|e| CatalogueError::io("sync", &tmp, e))?;
        drop(file);
        fs::rename(&tmp, &self.dest).map_err(|e| CatalogueError::io("rename", &tmp, e))?;
        sync_dir(&self.dest)?;
        Ok(self.dest)
    }
}

/// An open, header- and index-checked data file. Chunks are read and checked on demand.
pub struct DataFile {
    path: PathBuf,
    file: File,
    pub info: RunInfo,
    pub index: Index,
    /// Records before each chunk, and IPR records before each chunk.
    before: Vec<(u64, u64)>,
    /// Compressed bytes of the last chunk read, and decoding buffers, reused across chunks.
    body: Vec<u8>,
    scratch: Scratch,
}

impl DataFile {
    pub fn open(path: &Path) -> Result<DataFile, CatalogueError> {
        let mut file = File::open(path).map_err(|e| CatalogueError::io("open", path, e))?;
        let len = file
            .metadata()
            .map_err(|e| CatalogueError::io("read", path, e))?
            .len();
        let corrupt = |place, detail: String| CatalogueError::corrupt(path, place, detail);
        let (info, schema, header_end) = read_header(path, &mut file, len)?;
        let (index, index_start) = read_index(path, &mut file, len)?;
        check_layout(&index, header_end, index_start).map_err(|(p, d)| corrupt(p, d))?;
        let mut before = Vec::with_capacity(index.chunks.len());
        let (mut n, mut ipr) = (0u64, 0u64);
        for c in &index.chunks {
            before.push((n, ipr));
            n += c.records as u64;
            ipr += c.stats.ipr;
        }
        let unit_total: u64 = index.units.iter().map(|u| u.1).sum();
        if unit_total != n {
            return Err(corrupt(
                Place::Index,
                format!("units account for {unit_total} records, chunks hold {n}"),
            ));
        }
        check_name(path, &info)?;
        Ok(DataFile {
            path: path.to_path_buf(),
            file,
            info,
            index,
            before,
            body: Vec::new(),
            scratch: Scratch::for_schema(schema),
        })
    }

    pub fn path(&self) -> &Path {
        &self.path
    }

    pub fn chunk_count(&self) -> usize {
        self.index.chunks.len()
    }

    pub fn record_count(&self) -> u64 {
        self.index.chunks.iter().map(|c| c.records as u64).sum()
    }

    pub fn ipr_count(&self) -> u64 {
        self.index.chunks.iter().map(|c| c.stats.ipr).sum()
    }

    /// Reads chunk `i`'s compressed bytes into `self.body` and checks them against the index.
    fn read_body(&mut self, i: usize) -> Result<(), CatalogueError> {
        let entry = &self.index.chunks[i];
        let place = Place::Chunk(i as u32);
        self.body.clear();
        self.body.resize(entry.len as usize, 0);
        self.file
            .seek(SeekFrom::Start(entry.offset))
            .and_then(|_| self.file.read_exact(&mut self.body))
            .map_err(|e| CatalogueError::corrupt(&self.path, place, format!("cannot read: {e}")))?;
        if crc32(&self.body) != entry.crc {
            return Err(CatalogueError::corrupt(
                &self.path,
                place,
                "checksum mismatch".into(),
            ));
        }
        Ok(())
    }

    fn check_count(&self, i: usize, got: usize) -> Result<(), CatalogueError> {
        let want = self.index.chunks[i].records;
        if got == want as usize {
            return Ok(());
        }
        let d = format!("holds {got} records, index says {want}");
        Err(CatalogueError::corrupt(
            &self.path,
            Place::Chunk(i as u32),
            d,
        ))
    }

    /// Reads, checksums and decodes chunk `i`; the record count must match the index.
    pub fn read_chunk(&mut self, i: usize) -> Result<Chunk, CatalogueError> {
        self.read_body(i)?;
        let chunk = self
            .scratch
            .decode(&self.body, self.info.atoms)
            .map_err(|d| CatalogueError::corrupt(&self.path, Place::Chunk(i as u32), d))?;
        self.check_count(i, chunk.len())?;
        Ok(chunk)
    }

    /// Reads and checksums chunk `i` and decodes only the columns in `needs` (for scans that
    /// filter and rank without building records; spirals are neither decoded nor checked).
    pub fn scan_chunk(&mut self, i: usize, needs: Needs) -> Result<View<'_>, CatalogueError> {
        self.read_body(i)?;
        let want = self.index.chunks[i].records as usize;
        let view = self
            .scratch
            .view(&self.body, needs)
            .map_err(|d| CatalogueError::corrupt(&self.path, Place::Chunk(i as u32), d))?;
        if view.len() != want {
            let d = format!("holds {} records, index says {want}", view.len());
            return Err(CatalogueError::corrupt(
                &self.path,
                Place::Chunk(i as u32),
                d,
            ));
        }
        Ok(view)
    }

    /// Whether records carry complete-list / IPR-list numbers (whole runs only, not shards).
    fn numbered(&self) -> bool {
        self.info.shard.is_none()
    }

    /// Fills in the list numbers of record `i` of chunk `c`, given IPR records before it in the chunk.
    pub fn number(&self, c: usize, i: usize, ipr_in_chunk: u64, record: &mut Record) {
        if !self.numbered() {
            return;
        }
        let (n, ipr) = self.before[c];
        let pos = n + i as u64 + 1;
        record.number = (!self.info.ipr).then_some(pos);
        record.ipr_number = record.ipr.then_some(if self.info.ipr {
            pos
        } else {
            ipr + ipr_in_chunk + 1
        });
    }

    /// All records of chunk `c` with their numbers.
    pub fn chunk_records(&mut self, c: usize) -> Result<Vec<Record>, CatalogueError> {
        let chunk = self.read_chunk(c)?;
        let mut ipr = 0;
        let mut out = Vec::with_capacity(chunk.len());
        for i in 0..chunk.len() {
            let mut r = chunk.record(i);
            self.number(c, i, ipr, &mut r);
            ipr += r.ipr as u64;
            out.push(r);
        }
        Ok(out)
    }

    /// Every record, in file order, numbered.
    pub fn all_records(&mut self) -> Result<Vec<Record>, CatalogueError> {
        let mut out = Vec::new();
        for c in 0..self.chunk_count() {
            out.extend(self.chunk_records(c)?);
        }
        Ok(out)
    }
}

fn read_exact_at(file: &mut File, at: u64, buf: &mut [u8]) -> std::io::Result<()> {
    file.seek(SeekFrom::Start(at))?;
    file.read_exact(buf)
}

/// A data file must sit under the name its header gives it: names are how readers pick the file
/// for a request (face set, size, list, charge), so a file copied or renamed by hand would
/// otherwise answer for another run.
fn check_name(path: &Path, info: &RunInfo) -> Result<(), CatalogueError> {
    let want = info.file_name();
    match path.file_name().and_then(|n| n.to_str()) {
        Some(name) if name == want => Ok(()),
        _ => Err(CatalogueError::RunMismatch {
            path: path.to_path_buf(),
            detail: format!(
                "header holds {}, whose file is {want}; the file was renamed or copied by hand, so \
                 rename it back or delete it",
                info.label()
            ),
        }),
    }
}

/// Header run info, descriptor schema version, and where the header ends.
fn read_header(
    path: &Path,
    file: &mut File,
    len: u64,
) -> Result<(RunInfo, u16, u64), CatalogueError> {
    let corrupt = |detail: String| CatalogueError::corrupt(path, Place::Header, detail);
    let mut prelude = [0u8; PRELUDE];
    if len < 8 || read_exact_at(file, 0, &mut prelude[..8]).is_err() || prelude[..8] != MAGIC {
        return Err(CatalogueError::Foreign {
            path: path.to_path_buf(),
        });
    }
    if (len as usize) < PRELUDE + 4 + TRAILER {
        return Err(CatalogueError::corrupt(
            path,
            Place::Trailer,
            format!("file is truncated ({len} bytes)"),
        ));
    }
    read_exact_at(file, 0, &mut prelude).map_err(|e| corrupt(e.to_string()))?;
    let format = u16::from_le_bytes([prelude[8], prelude[9]]);
    let schema = u16::from_le_bytes([prelude[10], prelude[11]]);
    if !(1..=FORMAT_VERSION).contains(&format) || !(1..=SCHEMA_VERSION).contains(&schema) {
        return Err(CatalogueError::Version {
            path: path.to_path_buf(),
            format,
            schema,
        });
    }
    let body_len = u32::from_le_bytes([prelude[12], prelude[13], prelude[14], prelude[15]]) as u64;
    let end = PRELUDE as u64 + body_len + 4;
    if end + TRAILER as u64 > len {
        return Err(corrupt(format!(
            "header length {body_len} runs past the end of the file"
        )));
    }
    let mut all = vec![0u8; end as usize];
    read_exact_at(file, 0, &mut all).map_err(|e| corrupt(e.to_string()))?;
    let (covered, crc) = all.split_at(end as usize - 4);
    if crc32(covered) != u32::from_le_bytes([crc[0], crc[1], crc[2], crc[3]]) {
        return Err(corrupt("checksum mismatch".into()));
    }
    let info = decode_run_info(format, &covered[PRELUDE..])
        .map_err(|e| corrupt(format!("postcard: {e}")))?;
    Ok((info, schema, end))
}

/// A shard as formats 1 to 3 wrote it: units dealt round-robin, no dealing recorded.
#[derive(Serialize, Deserialize)]
struct ShardIdV3 {
    index: u32,
    count: u32,
}

impl From<ShardIdV3> for super::ShardId {
    fn from(old: ShardIdV3) -> super::ShardId {
        super::ShardId {
            index: old.index,
            count: old.count,
            deal: super::Deal::RoundRobin,
        }
    }
}

/// `RunInfo` as format version 1 wrote it (no `all_starts`).
#[derive(Serialize, Deserialize)]
struct RunInfoV1 {
    face_set: crate::cage::FaceSet,
    atoms: u32,
    ipr: bool,
    unit_count: u32,
    unit_depth: u32,
    shard: Option<ShardIdV3>,
    made_by: String,
}

/// `RunInfo` as format version 2 wrote it (no `charge`).
#[derive(Serialize, Deserialize)]
struct RunInfoV2 {
    face_set: crate::cage::FaceSet,
    atoms: u32,
    ipr: bool,
    unit_count: u32,
    unit_depth: u32,
    shard: Option<ShardIdV3>,
    made_by: String,
    all_starts: bool,
}

/// `RunInfo` as format version 3 wrote it (shards without their dealing).
#[derive(Serialize, Deserialize)]
struct RunInfoV3 {
    face_set: crate::cage::FaceSet,
    atoms: u32,
    ipr: bool,
    unit_count: u32,
    unit_depth: u32,
    shard: Option<ShardIdV3>,
    made_by: String,
    all_starts: bool,
    charge: i32,
}

/// Decodes the header's run info as written by file format `format`.
fn decode_run_info(format: u16, bytes: &[u8]) -> Result<RunInfo, postcard::Error> {
    if format >= 4 {
        return postcard::from_bytes(bytes);
    }
    if format == 3 {
        let v3: RunInfoV3 = postcard::from_bytes(bytes)?;
        return Ok(RunInfo {
            face_set: v3.face_set,
            atoms: v3.atoms,
            ipr: v3.ipr,
            unit_count: v3.unit_count,
            unit_depth: v3.unit_depth,
            shard: v3.shard.map(Into::into),
            made_by: v3.made_by,
            all_starts: v3.all_starts,
            charge: v3.charge,
        });
    }
    let v2: RunInfoV2 = if format == 2 {
        postcard::from_bytes(bytes)?
    } else {
        let v1: RunInfoV1 = postcard::from_bytes(bytes)?;
        RunInfoV2 {
            face_set: v1.face_set,
            atoms: v1.atoms,
            ipr: v1.ipr,
            unit_count: v1.unit_count,
            unit_depth: v1.unit_depth,
            shard: v1.shard,
            made_by: v1.made_by,
            all_starts: false,
        }
    };
    Ok(RunInfo {
        face_set: v2.face_set,
        atoms: v2.atoms,
        ipr: v2.ipr,
        unit_count: v2.unit_count,
        unit_depth: v2.unit_depth,
        shard: v2.shard.map(Into::into),
        made_by: v2.made_by,
        all_starts: v2.all_starts,
        charge: 0,
    })
}

fn read_index(path: &Path, file: &mut File, len: u64) -> Result<(Index, u64), CatalogueError> {
    let mut trailer = [0u8; TRAILER];
    read_exact_at(file, len - TRAILER as u64, &mut trailer)
        .map_err(|e| CatalogueError::corrupt(path, Place::Trailer, e.to_string()))?;
    if trailer[16..] != END_MAGIC {
        let d = "end marker missing: the file is truncated or was not finished".to_string();
        return Err(CatalogueError::corrupt(path, Place::Trailer, d));
    }
    let offset = u64::from_le_bytes(trailer[..8].try_into().expect("invariant: 8 bytes"));
    let index_len = u32::from_le_bytes(trailer[8..12].try_into().expect("invariant: 4 bytes"));
    let crc = u32::from_le_bytes(trailer[12..16].try_into().expect("invariant: 4 bytes"));
    if offset.checked_add(index_len as u64 + TRAILER as u64) != Some(len) {
        let d = format!("index at {offset}+{index_len} does not end where the trailer starts");
        return Err(CatalogueError::corrupt(path, Place::Trailer, d));
    }
    let mut bytes = vec![0u8; index_len as usize];
    read_exact_at(file, offset, &mut bytes)
        .map_err(|e| CatalogueError::corrupt(path, Place::Index, e.to_string()))?;
    if crc32(&bytes) != crc {
        return Err(CatalogueError::corrupt(
            path,
            Place::Index,
            "checksum mismatch".into(),
        ));
    }
    let index = postcard::from_bytes(&bytes)
        .map_err(|e| CatalogueError::corrupt(path, Place::Index, format!("postcard: {e}")))?;
    Ok((index, offset))
}

/// Chunks must tile the space between header and index exactly.
fn check_layout(index: &Index, header_end: u64, index_start: u64) -> Result<(), (Place, String)> {
    let mut at = header_end;
    for (i, c) in index.chunks.iter().enumerate() {
        if c.offset != at {
            let d = format!("starts at byte {}, expected {at}", c.offset);
            return Err((Place::Chunk(i as u32), d));
        }
        at = at.saturating_add(c.len);
    }
    if at != index_start {
        return Err((
            Place::Index,
            format!("chunks end at byte {at}, index starts at {index_start}"),
        ));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::cage::FaceSet;

    // Files written before `all_starts` existed (format 1) still read, as pentagon-start runs,
    // and files before `charge` (formats 1 and 2) as neutral runs.
    #[test]
    fn format_1_and_2_headers_read_as_neutral_runs() {
        let old = RunInfoV1 {
            face_set: FaceSet::Fullerene,
            atoms: 60,
            ipr: false,
            unit_count: 2000,
            unit_depth: 9,
            shard: None,
            made_by: "cagerank 0.1.0".into(),
        };
        let bytes = postcard::to_stdvec(&old).expect("encodes");
        let info = decode_run_info(1, &bytes).expect("decodes");
        assert_eq!(
            (info.atoms, info.unit_count, info.all_starts, info.charge),
            (60, 2000, false, 0)
        );
        let v2 = RunInfoV2 {
            face_set: FaceSet::Fullerene,
            atoms: 60,
            ipr: false,
            unit_count: 2000,
            unit_depth: 9,
            shard: None,
            made_by: "cagerank 0.1.0".into(),
            all_starts: true,
        };
        let v2_bytes = postcard::to_stdvec(&v2).expect("encodes");
        let info2 = decode_run_info(2, &v2_bytes).expect("decodes");
        assert_eq!((info2.all_starts, info2.charge), (true, 0));
        let new = RunInfo {
            charge: -6,
            ..info2
        };
        let again = decode_run_info(3, &postcard::to_stdvec(&new).expect("encodes"));
        assert_eq!(again.expect("decodes"), new);
        assert!(decode_run_info(2, &bytes).is_err());
        assert!(decode_run_info(3, &v2_bytes).is_err());
    }
}
