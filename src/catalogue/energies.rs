//! Relaxed tight-binding energies kept beside a catalogue's data files: one file per (face set,
//! size, list, cage charge), so energies for several charges of one size coexist.
//!
//! Relaxing a cage costs about a second, so a screen of hundreds of isomers must survive being
//! killed. Results go first to a journal (`NAME.journal`): each one is appended with its own
//! checksum and fsynced as soon as it is computed. A torn last entry (a kill during the write)
//! is dropped on the next open, every complete one is kept. When a screen ends, [`EnergyWriter::finish`]
//! writes the snapshot (`NAME`, records sorted by isomer number, zstd-compressed) atomically and
//! removes the journal, so the snapshot's bytes depend only on the set of results, never on the
//! order threads finished in. Readers merge the snapshot and any journal left by a killed run.
//!
//! This module stores and reads; it neither relaxes cages (that is `energy`) nor ranks them.
//! The byte layout is in `docs/catalogue-format.md`.

use super::crc::crc32;
use super::format::{sync_dir, write_atomic};
use super::{CatalogueError, Place};
use crate::cage::FaceSet;
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;
use std::fs::{self, File, OpenOptions};
use std::io::{Read, Seek, SeekFrom, Write};
use std::path::{Path, PathBuf};

/// File extension of energy files.
pub const ENERGY_EXT: &str = "energies";
const MAGIC: [u8; 8] = *b"\x89CGRTBE\n";
const END: [u8; 8] = *b"CGRTEND\n";
const JOURNAL_MAGIC: [u8; 8] = *b"\x89CGRTBJ\n";
/// Layout version of energy snapshots and journals.
pub const ENERGY_VERSION: u16 = 1;
/// Records written before the journal is read back whole (bounds a corrupt length field).
const MAX_ENTRY: u32 = 64 << 20;

/// What an energy file holds: the run it belongs to and how its energies were computed.
/// Energies with a different model or convergence threshold are never mixed into one file.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct EnergyHeader {
    pub face_set: FaceSet,
    pub atoms: u32,
    /// True when numbers are positions in the IPR list, false for the complete list.
    pub ipr: bool,
    /// Cage charge Q (the cage ion C_n^Q).
    pub charge: i32,
    /// The energy model, e.g. "tight binding, Xu et al. 1992".
    pub model: String,
    /// Largest residual force (eV/Å) the relaxations were converged to.
    pub max_force: f64,
    /// Program and version that wrote the file first.
    pub made_by: String,
}

impl EnergyHeader {
    /// File name of this run's energies, e.g. `fullerene-c84-ipr.energies` or
    /// `fullerene-c80-ipr-q-6.energies`.
    pub fn file_name(&self) -> String {
        energy_file_name(self.face_set, self.atoms, self.ipr, self.charge)
    }

    /// "C84 (IPR, charge -6)"-style label for messages.
    pub fn label(&self) -> String {
        let list = if self.ipr { "IPR" } else { "all" };
        format!("C{} ({list}, charge {:+})", self.atoms, self.charge)
    }

    /// Why `other` cannot share a file with `self`, if it cannot.
    fn mismatch(&self, other: &EnergyHeader) -> Option<String> {
        let key = |h: &EnergyHeader| (h.face_set, h.atoms, h.ipr, h.charge);
        if key(self) != key(other) {
            return Some(format!(
                "holds {} but {} was asked for",
                self.label(),
                other.label()
            ));
        }
        if self.model != other.model {
            return Some(format!(
                "holds energies from model '{}', not '{}'",
                self.model, other.model
            ));
        }
        if self.max_force != other.max_force {
            return Some(format!(
                "holds relaxations converged to {:e} eV/Å, not {:e}; use --max-force {:e} or another catalogue",
                self.max_force, other.max_force, self.max_force
            ));
        }
        None
    }
}

/// The file name for energies of one run and charge: the data file's name with the energy
/// extension (`fullerene-c80-ipr-q-6.energies`).
pub fn energy_file_name(face_set: FaceSet, atoms: u32, ipr: bool, charge: i32) -> String {
    let data = super::data_file_name(face_set, atoms, ipr, charge);
    let stem = data.strip_suffix(super::DATA_EXT).unwrap_or(&data);
    format!("{stem}{ENERGY_EXT}")
}

/// One relaxed isomer.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct EnergyRecord {
    /// Position in the run's list (the IPR list for IPR runs), 1-based.
    pub number: u64,
    /// Position in the complete list, when known.
    pub complete_number: Option<u64>,
    /// Non-hexagonal faces of the canonical spiral, as in [`super::Record`]: a guard against
    /// storing a result under the wrong number.
    pub special_faces: Vec<(u32, u8)>,
    /// Total energy (band + repulsive), eV.
    pub energy_ev: f64,
    pub band_ev: f64,
    pub repulsive_ev: f64,
    /// Highest level holding electrons, lowest with room, and their difference (eV).
    pub homo_ev: f64,
    pub lumo_ev: f64,
    pub gap_ev: f64,
    /// Singly occupied level of an odd-electron ion: (level, gap below, gap above), eV.
    pub somo: Option<[f64; 3]>,
    /// The frontier level is degenerate and partly filled (an open shell).
    pub partly_filled: bool,
    /// Largest residual force, eV/Å.
    pub max_force: f64,
    pub iterations: u32,
    pub converged: bool,
    /// The relaxed cage kept its bond graph; false means it rearranged and must not be ranked.
    pub graph_kept: bool,
    /// A second relaxation from a perturbed start was run (degenerate partly filled frontier).
    pub perturbed: bool,
    /// Relaxed coordinates, Å.
    pub coords: Vec<[f64; 3]>,
}

impl EnergyRecord {
    /// True if the record may be ranked: converged and still the same cage.
    pub fn rankable(&self) -> bool {
        self.graph_kept && self.converged
    }
}

/// All energies stored for one run and charge, sorted by number.
#[derive(Debug, Clone, PartialEq)]
pub struct Energies {
    pub header: EnergyHeader,
    pub records: Vec<EnergyRecord>,
}

/// kJ/mol per eV (CODATA 2018: e N_A / 1000, exact).
pub const KJ_PER_MOL_PER_EV: f64 = 96.485_332_123_310_02;

impl Energies {
    /// The lowest energy among rankable records: the zero of relative energies.
    pub fn lowest_ev(&self) -> Option<f64> {
        self.records
            .iter()
            .filter(|r| r.rankable())
            .map(|r| r.energy_ev)
            .min_by(f64::total_cmp)
    }

    /// Energy of `record` above the lowest rankable isomer of this run and charge, kJ/mol;
    /// `None` for a record that is not rankable.
    pub fn relative_kj(&self, record: &EnergyRecord) -> Option<f64> {
        let low = self.lowest_ev()?;
        record
            .rankable()
            .then_some((record.energy_ev - low) * KJ_PER_MOL_PER_EV)
    }

    /// The record of isomer `number`, if relaxed.
    pub fn get(&self, number: u64) -> Option<&EnergyRecord> {
        self.records
            .binary_search_by_key(&number, |r| r.number)
            .ok()
            .map(|i| &self.records[i])
    }
}

/// Reads the energies of one run and charge from `dir`: the snapshot, plus any results a killed
/// run left in its journal. `Ok(None)` when nothing was ever stored.
pub fn read(dir: &Path, key: &EnergyHeader) -> Result<Option<Energies>, CatalogueError> {
    let path = dir.join(key.file_name());
    let mut records = BTreeMap::new();
    let mut header = None;
    if path.exists() {
        let (h, recs) = read_snapshot(&path)?;
        check_key(&path, &h, key)?;
        records.extend(recs.into_iter().map(|r| (r.number, r)));
        header = Some(h);
    }
    let journal = journal_path(&path);
    if journal.exists() {
        let (h, recs, _) = read_journal(&journal)?;
        check_key(&journal, &h, key)?;
        records.extend(recs.into_iter().map(|r| (r.number, r)));
        header.get_or_insert(h);
    }
    Ok(header.map(|header| Energies {
        header,
        records: records.into_values().collect(),
    }))
}

/// The file names of every energy file in `dir`, sorted.
pub fn energy_files(dir: &Path) -> Result<Vec<PathBuf>, CatalogueError> {
    let entries = fs::read_dir(dir).map_err(|e| CatalogueError::io("list", dir, e))?;
    let mut out = Vec::new();
    for entry in entries {
        let path = entry
            .map_err(|e| CatalogueError::io("list", dir, e))?
            .path();
        if path.extension().is_some_and(|e| e == ENERGY_EXT) && path.is_file() {
            out.push(path);
        }
    }
    out.sort();
    Ok(out)
}

/// Only the model, size, list and charge must match for reading; any threshold is readable.
fn check_key(path: &Path, found: &EnergyHeader, key: &EnergyHeader) -> Result<(), CatalogueError> {
    let read_key = EnergyHeader {
        model: found.model.clone(),
        max_force: found.max_force,
        made_by: found.made_by.clone(),
        ..key.clone()
    };
    match found.mismatch(&read_key) {
        Some(detail) => Err(CatalogueError::RunMismatch {
            path: path.to_path_buf(),
            detail: format!("{detail}; the file was renamed or copied: move it away"),
        }),
        None => Ok(()),
    }
}

/// Adds results to one run's energies: journal first, snapshot at [`finish`](Self::finish).
/// The caller holds the catalogue lock.
pub struct EnergyWriter {
    path: PathBuf,
    journal: File,
    header: EnergyHeader,
    records: BTreeMap<u64, EnergyRecord>,
}

impl EnergyWriter {
    /// Opens (or starts) the energies of `header`'s run in `dir`, reading what is stored so
    /// finished relaxations are not redone. A stored file of another model or threshold is
    /// refused rather than mixed.
    pub fn open(dir: &Path, header: EnergyHeader) -> Result<EnergyWriter, CatalogueError> {
        let path = dir.join(header.file_name());
        let journal_path = journal_path(&path);
        let mut records = BTreeMap::new();
        let mut kept = header.clone();
        if path.exists() {
            let (h, recs) = read_snapshot(&path)?;
            refuse_mismatch(&path, &h, &header)?;
            records.extend(recs.into_iter().map(|r| (r.number, r)));
            kept = h;
        }
        let journal = if journal_path.exists() {
            let (h, recs, good_len) = read_journal(&journal_path)?;
            refuse_mismatch(&journal_path, &h, &header)?;
            records.extend(recs.into_iter().map(|r| (r.number, r)));
            let f = OpenOptions::new()
                .write(true)
                .open(&journal_path)
                .map_err(|e| CatalogueError::io("open", &journal_path, e))?;
            // Drop a torn last entry, so new entries follow the last complete one.
            f.set_len(good_len)
                .map_err(|e| CatalogueError::io("truncate", &journal_path, e))?;
            f
        } else {
            new_journal(&journal_path, &kept)?
        };
        Ok(EnergyWriter {
            path,
            journal,
            header: kept,
            records,
        })
    }

    /// True if isomer `number` is already relaxed (in the snapshot or the journal).
    pub fn has(&self, number: u64) -> bool {
        self.records.contains_key(&number)
    }

    /// How many results are stored.
    pub fn len(&self) -> usize {
        self.records.len()
    }

    pub fn is_empty(&self) -> bool {
        self.records.is_empty()
    }

    /// Stores one result durably (appended to the journal and fsynced) before returning.
    pub fn append(&mut self, record: EnergyRecord) -> Result<(), CatalogueError> {
        let body = postcard::to_stdvec(&record).expect("invariant: energy records serialize");
        let mut entry = Vec::with_capacity(body.len() + 8);
        entry.extend_from_slice(&(body.len() as u32).to_le_bytes());
        entry.extend_from_slice(&body);
        let crc = crc32(&entry);
        entry.extend_from_slice(&crc.to_le_bytes());
        let jp = journal_path(&self.path);
        let io = |action: &'static str| {
            let jp = jp.clone();
            move |e| CatalogueError::io(action, &jp, e)
        };
        self.journal.seek(SeekFrom::End(0)).map_err(io("seek"))?;
        self.journal.write_all(&entry).map_err(io("append to"))?;
        self.journal.sync_data().map_err(io("sync"))?;
        self.records.insert(record.number, record);
        Ok(())
    }

    /// Writes the snapshot (sorted by number) atomically and removes the journal.
    pub fn finish(self) -> Result<Energies, CatalogueError> {
        let energies = Energies {
            header: self.header,
            records: self.records.into_values().collect(),
        };
        write_atomic(&self.path, &snapshot_bytes(&energies))?;
        let jp = journal_path(&self.path);
        drop(self.journal);
        fs::remove_file(&jp).map_err(|e| CatalogueError::io("remove", &jp, e))?;
        sync_dir(&self.path)?;
        Ok(energies)
    }
}

fn refuse_mismatch(
    path: &Path,
    found: &EnergyHeader,
    asked: &EnergyHeader,
) -> Result<(), CatalogueError> {
    let asked = EnergyHeader {
        made_by: found.made_by.clone(),
        ..asked.clone()
    };
    match found.mismatch(&asked) {
        Some(detail) => Err(CatalogueError::RunMismatch {
            path: path.to_path_buf(),
            detail,
        }),
        None => Ok(()),
    }
}

fn journal_path(path: &Path) -> PathBuf {
    path.with_extension(format!("{ENERGY_EXT}.journal"))
}

fn header_block(magic: &[u8; 8], header: &EnergyHeader) -> Vec<u8> {
    let body = postcard::to_stdvec(header).expect("invariant: energy header serializes");
    let mut out = Vec::with_capacity(body.len() + 18);
    out.extend_from_slice(magic);
    out.extend_from_slice(&ENERGY_VERSION.to_le_bytes());
    out.extend_from_slice(&(body.len() as u32).to_le_bytes());
    out.extend_from_slice(&body);
    let crc = crc32(&out);
    out.extend_from_slice(&crc.to_le_bytes());
    out
}

fn new_journal(path: &Path, header: &EnergyHeader) -> Result<File, CatalogueError> {
    let bytes = header_block(&JOURNAL_MAGIC, header);
    write_atomic(path, &bytes)?;
    OpenOptions::new()
        .write(true)
        .open(path)
        .map_err(|e| CatalogueError::io("open", path, e))
}

/// Snapshot: header block, u32 body length, zstd(postcard(records)), CRC-32 of the body, end marker.
fn snapshot_bytes(energies: &Energies) -> Vec<u8> {
    let mut out = header_block(&MAGIC, &energies.header);
    let raw = postcard::to_stdvec(&energies.records).expect("invariant: records serialize");
    let body = zstd::encode_all(&raw[..], 12).expect("invariant: zstd encodes from memory");
    out.extend_from_slice(&(body.len() as u32).to_le_bytes());
    out.extend_from_slice(&body);
    out.extend_from_slice(&crc32(&body).to_le_bytes());
    out.extend_from_slice(&END);
    out
}

/// Reads a header block; returns the header and the offset after it.
fn parse_header(
    path: &Path,
    bytes: &[u8],
    magic: &[u8; 8],
) -> Result<(EnergyHeader, usize), CatalogueError> {
    if bytes.len() < 14 || &bytes[..8] != magic {
        return Err(CatalogueError::Foreign {
            path: path.to_path_buf(),
        });
    }
    let version = u16::from_le_bytes([bytes[8], bytes[9]]);
    if version != ENERGY_VERSION {
        return Err(CatalogueError::corrupt(
            path,
            Place::Header,
            format!("energy file version {version}, this build reads {ENERGY_VERSION}"),
        ));
    }
    let len = u32::from_le_bytes(bytes[10..14].try_into().expect("4 bytes")) as usize;
    let end = 14usize.saturating_add(len);
    let bad = |d: &str| CatalogueError::corrupt(path, Place::Header, d.to_string());
    if bytes.len() < end + 4 {
        return Err(bad("truncated"));
    }
    let crc = u32::from_le_bytes(bytes[end..end + 4].try_into().expect("4 bytes"));
    if crc32(&bytes[..end]) != crc {
        return Err(bad("checksum mismatch"));
    }
    let header: EnergyHeader =
        postcard::from_bytes(&bytes[14..end]).map_err(|e| bad(&e.to_string()))?;
    Ok((header, end + 4))
}

fn read_all(path: &Path) -> Result<Vec<u8>, CatalogueError> {
    let mut bytes = Vec::new();
    File::open(path)
        .and_then(|mut f| f.read_to_end(&mut bytes))
        .map_err(|e| CatalogueError::io("read", path, e))?;
    Ok(bytes)
}

fn read_snapshot(path: &Path) -> Result<(EnergyHeader, Vec<EnergyRecord>), CatalogueError> {
    let bytes = read_all(path)?;
    let (header, at) = parse_header(path, &bytes, &MAGIC)?;
    let bad = |d: String| CatalogueError::corrupt(path, Place::Chunk(0), d);
    let rest = &bytes[at..];
    if rest.len() < 4 + 4 + END.len() || rest[rest.len() - END.len()..] != END {
        return Err(CatalogueError::corrupt(
            path,
            Place::Trailer,
            "truncated".into(),
        ));
    }
    let len = u32::from_le_bytes(rest[..4].try_into().expect("4 bytes")) as usize;
    if rest.len() != 4 + len + 4 + END.len() {
        return Err(bad("body length does not match the file".into()));
    }
    let body = &rest[4..4 + len];
    let crc = u32::from_le_bytes(rest[4 + len..8 + len].try_into().expect("4 bytes"));
    if crc32(body) != crc {
        return Err(bad("checksum mismatch".into()));
    }
    let raw = zstd::decode_all(body).map_err(|e| bad(e.to_string()))?;
    let records: Vec<EnergyRecord> = postcard::from_bytes(&raw).map_err(|e| bad(e.to_string()))?;
    check_records(path, &header, &records)?;
    Ok((header, records))
}

/// Reads a journal's complete entries; also returns the length of its valid prefix.
fn read_journal(path: &Path) -> Result<(EnergyHeader, Vec<EnergyRecord>, u64), CatalogueError> {
    let bytes = read_all(path)?;
    let (header, mut at) = parse_header(path, &bytes, &JOURNAL_MAGIC)?;
    let mut records = Vec::new();
    while bytes.len() >= at + 4 {
        let len = u32::from_le_bytes(bytes[at..at + 4].try_into().expect("4 bytes"));
        let end = at + 4 + len as usize;
        if len > MAX_ENTRY || bytes.len() < end + 4 {
            break;
        }
        let crc = u32::from_le_bytes(bytes[end..end + 4].try_into().expect("4 bytes"));
        if crc32(&bytes[at..end]) != crc {
            break;
        }
        match postcard::from_bytes::<EnergyRecord>(&bytes[at + 4..end]) {
            Ok(r) => records.push(r),
            Err(_) => break,
        }
        at = end + 4;
    }
    check_records(path, &header, &records)?;
    Ok((header, records, at as u64))
}

fn check_records(
    path: &Path,
    header: &EnergyHeader,
    records: &[EnergyRecord],
) -> Result<(), CatalogueError> {
    for r in records {
        if r.number == 0 || r.coords.len() != header.atoms as usize {
            return Err(CatalogueError::corrupt(
                path,
                Place::Chunk(0),
                format!("record {} does not fit C{}", r.number, header.atoms),
            ));
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn header(charge: i32) -> EnergyHeader {
        EnergyHeader {
            face_set: FaceSet::Fullerene,
            atoms: 20,
            ipr: false,
            charge,
            model: "test model".into(),
            max_force: 1e-3,
            made_by: "test".into(),
        }
    }

    fn record(number: u64, energy: f64) -> EnergyRecord {
        EnergyRecord {
            number,
            complete_number: Some(number),
            special_faces: (1..=12).map(|p| (p, 5)).collect(),
            energy_ev: energy,
            band_ev: energy - 1.0,
            repulsive_ev: 1.0,
            homo_ev: -1.0,
            lumo_ev: 0.5,
            gap_ev: 1.5,
            somo: None,
            partly_filled: false,
            max_force: 5e-4,
            iterations: 10,
            converged: true,
            graph_kept: true,
            perturbed: false,
            coords: vec![[number as f64, 0.0, 0.0]; 20],
        }
    }

    fn tempdir(name: &str) -> PathBuf {
        let d =
            std::env::temp_dir().join(format!("cagerank-energies-{name}-{}", std::process::id()));
        let _ = fs::remove_dir_all(&d);
        fs::create_dir_all(&d).unwrap();
        d
    }

    // The snapshot depends on the set of results, not the order they arrived in.
    #[test]
    fn snapshot_bytes_do_not_depend_on_arrival_order() {
        let (a, b) = (tempdir("order-a"), tempdir("order-b"));
        let mut wa = EnergyWriter::open(&a, header(0)).unwrap();
        for n in [1, 2, 3] {
            wa.append(record(n, -(n as f64))).unwrap();
        }
        wa.finish().unwrap();
        let mut wb = EnergyWriter::open(&b, header(0)).unwrap();
        for n in [3, 1, 2] {
            wb.append(record(n, -(n as f64))).unwrap();
        }
        wb.finish().unwrap();
        let name = header(0).file_name();
        assert_eq!(
            fs::read(a.join(&name)).unwrap(),
            fs::read(b.join(&name)).unwrap()
        );
    }

    // A kill in the middle of an append leaves a torn entry: every complete one is kept.
    #[test]
    fn a_torn_journal_entry_loses_only_itself() {
        let dir = tempdir("torn");
        let mut w = EnergyWriter::open(&dir, header(-6)).unwrap();
        w.append(record(4, -2.0)).unwrap();
        w.append(record(7, -3.0)).unwrap();
        drop(w);
        let journal = journal_path(&dir.join(header(-6).file_name()));
        let len = fs::metadata(&journal).unwrap().len();
        OpenOptions::new()
            .write(true)
            .open(&journal)
            .unwrap()
            .set_len(len - 5)
            .unwrap();
        let read_back = read(&dir, &header(-6)).unwrap().unwrap();
        assert_eq!(read_back.records.len(), 1);
        let mut w = EnergyWriter::open(&dir, header(-6)).unwrap();
        assert!(w.has(4) && !w.has(7));
        w.append(record(7, -3.0)).unwrap();
        let done = w.finish().unwrap();
        assert_eq!(
            done.records.iter().map(|r| r.number).collect::<Vec<_>>(),
            [4, 7]
        );
        assert!(!journal.exists());
        let rel = done.relative_kj(done.get(4).unwrap()).unwrap();
        // 1 eV in kJ/mol (CODATA 2018).
        assert!((rel - 96.485_332_12).abs() < 1e-6, "{rel}");
    }

    #[test]
    fn charges_coexist_and_other_thresholds_are_refused() {
        let dir = tempdir("charges");
        let mut w = EnergyWriter::open(&dir, header(0)).unwrap();
        w.append(record(1, -1.0)).unwrap();
        w.finish().unwrap();
        let mut w = EnergyWriter::open(&dir, header(-6)).unwrap();
        w.append(record(1, -9.0)).unwrap();
        w.finish().unwrap();
        assert_eq!(
            read(&dir, &header(0)).unwrap().unwrap().records[0].energy_ev,
            -1.0
        );
        assert_eq!(
            read(&dir, &header(-6)).unwrap().unwrap().records[0].energy_ev,
            -9.0
        );
        let looser = EnergyHeader {
            max_force: 1e-2,
            ..header(0)
        };
        assert!(EnergyWriter::open(&dir, looser).is_err());
        // A file copied under another charge's name is refused when read.
        fs::copy(
            dir.join(header(0).file_name()),
            dir.join(header(2).file_name()),
        )
        .unwrap();
        let err = read(&dir, &header(2)).unwrap_err().to_string();
        assert!(
            err.contains("charge +0") && err.contains("charge +2"),
            "{err}"
        );
    }

    #[test]
    fn damage_is_reported_not_served() {
        let dir = tempdir("damage");
        let mut w = EnergyWriter::open(&dir, header(0)).unwrap();
        w.append(record(1, -1.0)).unwrap();
        w.finish().unwrap();
        let path = dir.join(header(0).file_name());
        let mut bytes = fs::read(&path).unwrap();
        let mid = bytes.len() - 20;
        bytes[mid] ^= 0xff;
        fs::write(&path, &bytes).unwrap();
        assert!(read(&dir, &header(0)).unwrap_err().is_data_error());
        fs::write(&path, b"not an energy file").unwrap();
        assert!(read(&dir, &header(0)).unwrap_err().is_data_error());
    }
}
