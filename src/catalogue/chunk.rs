//! Column-wise encoding of a run of records (one chunk): postcard of a struct of columns,
//! then zstd. Also the decoded struct-of-arrays form that queries scan without building a
//! [`Record`] per isomer, and the per-chunk summary the index keeps so queries can skip chunks.
//!
//! Why columns: neighbouring isomers in spiral order share long spiral prefixes and similar
//! small integers, so grouping like with like (and splitting floats into byte planes) lets zstd
//! find the redundancy. Checksums and file layout are left to `format`.

use super::record::{shell_code, shell_from_code, PointGroup, Record};
use num_bigint::BigUint;
use serde::{Deserialize, Serialize};

/// zstd level for chunks: a good size/speed trade-off for write-once data (common practice, no source).
const ZSTD_LEVEL: i32 = 12;

/// Number of `f32` descriptor columns, in this order: penalty, strain, homo, lumo, gap, pi energy.
const FLOATS: usize = 6;

/// On-disk columns of one chunk (serialized with postcard; integers become varints).
#[derive(Serialize, Deserialize, Default)]
struct Columns {
    count: u32,
    /// bit 0 IPR, bit 1 chiral, bits 2-4 shell code.
    flags: Vec<u8>,
    point_group: Vec<u8>,
    /// Spiral front coding: how many special faces are shared with the previous record,
    spiral_shared: Vec<u32>,
    /// how many new ones follow, their position deltas and their sizes.
    spiral_new: Vec<u32>,
    spiral_delta: Vec<u32>,
    spiral_size: Vec<u8>,
    pentagon_adjacencies: Vec<u32>,
    hexagon_neighbours: Vec<u32>,
    automorphisms: Vec<u32>,
    kekule_len: Vec<u32>,
    kekule: Vec<u8>,
    nmr_len: Vec<u32>,
    nmr: Vec<u32>,
    /// The six float columns, each split into 4 byte planes (least significant first).
    floats: Vec<u8>,
}

fn floats_of(r: &Record) -> [f32; FLOATS] {
    [
        r.pentagon_penalty_kj,
        r.hexagon_strain,
        r.homo,
        r.lumo,
        r.gap,
        r.pi_energy,
    ]
}

/// Length of the common prefix of two special-face lists.
fn shared_prefix(a: &[(u32, u8)], b: &[(u32, u8)]) -> usize {
    a.iter().zip(b).take_while(|(x, y)| x == y).count()
}

impl Columns {
    fn from_records(records: &[Record]) -> Columns {
        let mut c = Columns {
            count: records.len() as u32,
            ..Columns::default()
        };
        let mut prev: &[(u32, u8)] = &[];
        for r in records {
            c.push_spiral(prev, &r.special_faces);
            prev = &r.special_faces;
            c.push_scalars(r);
        }
        c.floats = float_planes(records);
        c
    }

    fn push_spiral(&mut self, prev: &[(u32, u8)], faces: &[(u32, u8)]) {
        let shared = shared_prefix(prev, faces);
        self.spiral_shared.push(shared as u32);
        self.spiral_new.push((faces.len() - shared) as u32);
        let mut last = if shared == 0 { 0 } else { faces[shared - 1].0 };
        for &(pos, size) in &faces[shared..] {
            self.spiral_delta.push(pos.wrapping_sub(last));
            self.spiral_size.push(size);
            last = pos;
        }
    }

    fn push_scalars(&mut self, r: &Record) {
        let flags = r.ipr as u8 | (r.chiral as u8) << 1 | shell_code(r.shell) << 2;
        self.flags.push(flags);
        self.point_group.push(r.point_group.code());
        self.pentagon_adjacencies.push(r.pentagon_adjacencies);
        self.hexagon_neighbours
            .extend_from_slice(&r.hexagon_neighbours);
        self.automorphisms.push(r.automorphisms);
        let k = r.kekule.to_bytes_le();
        self.kekule_len.push(k.len() as u32);
        self.kekule.extend_from_slice(&k);
        self.nmr_len.push(r.nmr.len() as u32);
        for &(m, n) in &r.nmr {
            self.nmr.push(m);
            self.nmr.push(n);
        }
    }
}

/// Byte-plane ("shuffle") layout of the float columns: plane b of column f holds byte b of
/// every value, so slowly varying exponents sit together.
fn float_planes(records: &[Record]) -> Vec<u8> {
    let n = records.len();
    let mut out = vec![0u8; n * FLOATS * 4];
    for (i, r) in records.iter().enumerate() {
        for (f, v) in floats_of(r).iter().enumerate() {
            for (b, byte) in v.to_bits().to_le_bytes().iter().enumerate() {
                out[(f * 4 + b) * n + i] = *byte;
            }
        }
    }
    out
}

/// Encodes records into one compressed chunk body.
pub fn encode(records: &[Record]) -> Vec<u8> {
    let columns = Columns::from_records(records);
    let raw = postcard::to_stdvec(&columns).expect("invariant: postcard serializes plain columns");
    zstd::bulk::compress(&raw, ZSTD_LEVEL).expect("invariant: zstd compresses in-memory bytes")
}

/// Upper bound on a decompressed chunk, so a damaged length cannot ask for huge memory.
const MAX_RAW: usize = 1 << 30;

/// A decoded chunk in struct-of-arrays form.
#[derive(Debug, Clone)]
pub struct Chunk {
    atoms: u32,
    len: usize,
    flags: Vec<u8>,
    point_group: Vec<u8>,
    faces: Vec<(u32, u8)>,
    face_start: Vec<usize>,
    pentagon_adjacencies: Vec<u32>,
    hexagon_neighbours: Vec<u32>,
    automorphisms: Vec<u32>,
    kekule: Vec<u8>,
    kekule_start: Vec<usize>,
    nmr: Vec<u32>,
    nmr_start: Vec<usize>,
    floats: [Vec<f32>; FLOATS],
}

/// Decodes a chunk body; `Err` says what is inconsistent (the caller names file and chunk).
pub fn decode(body: &[u8], atoms: u32) -> Result<Chunk, String> {
    let raw = zstd::bulk::decompress(body, MAX_RAW).map_err(|e| format!("zstd: {e}"))?;
    let c: Columns = postcard::from_bytes(&raw).map_err(|e| format!("postcard: {e}"))?;
    Chunk::from_columns(c, atoms)
}

fn check_len(name: &str, got: usize, want: usize) -> Result<(), String> {
    if got == want {
        Ok(())
    } else {
        Err(format!("column {name} has {got} entries, expected {want}"))
    }
}

/// Cumulative start offsets from per-record lengths, checked against the flat column length.
fn starts(name: &str, lens: &[u32], per: usize, flat: usize) -> Result<Vec<usize>, String> {
    let mut out = Vec::with_capacity(lens.len() + 1);
    let mut at = 0usize;
    out.push(0);
    for &l in lens {
        at = at.saturating_add(l as usize * per);
        out.push(at);
    }
    check_len(name, flat, at)?;
    Ok(out)
}

impl Chunk {
    fn from_columns(c: Columns, atoms: u32) -> Result<Chunk, String> {
        let n = c.count as usize;
        check_len("flags", c.flags.len(), n)?;
        check_len("point_group", c.point_group.len(), n)?;
        check_len("pentagon_adjacencies", c.pentagon_adjacencies.len(), n)?;
        check_len("hexagon_neighbours", c.hexagon_neighbours.len(), n * 7)?;
        check_len("automorphisms", c.automorphisms.len(), n)?;
        check_len("floats", c.floats.len(), n * FLOATS * 4)?;
        check_len("kekule_len", c.kekule_len.len(), n)?;
        check_len("nmr_len", c.nmr_len.len(), n)?;
        check_codes(&c.flags, &c.point_group)?;
        let (faces, face_start) = unfront(&c, atoms)?;
        Ok(Chunk {
            atoms,
            len: n,
            kekule_start: starts("kekule", &c.kekule_len, 1, c.kekule.len())?,
            nmr_start: starts("nmr", &c.nmr_len, 2, c.nmr.len())?,
            floats: unshuffle(&c.floats, n),
            faces,
            face_start,
            flags: c.flags,
            point_group: c.point_group,
            pentagon_adjacencies: c.pentagon_adjacencies,
            hexagon_neighbours: c.hexagon_neighbours,
            automorphisms: c.automorphisms,
            kekule: c.kekule,
            nmr: c.nmr,
        })
    }

    pub fn len(&self) -> usize {
        self.len
    }

    pub fn is_empty(&self) -> bool {
        self.len == 0
    }

    pub fn ipr(&self, i: usize) -> bool {
        self.flags[i] & 1 != 0
    }

    pub fn chiral(&self, i: usize) -> bool {
        self.flags[i] & 2 != 0
    }

    pub fn shell_code(&self, i: usize) -> u8 {
        self.flags[i] >> 2
    }

    pub fn point_group_code(&self, i: usize) -> u8 {
        self.point_group[i]
    }

    pub fn pentagon_adjacencies(&self, i: usize) -> u32 {
        self.pentagon_adjacencies[i]
    }

    pub fn penalty(&self, i: usize) -> f32 {
        self.floats[0][i]
    }

    pub fn homo(&self, i: usize) -> f32 {
        self.floats[2][i]
    }

    pub fn lumo(&self, i: usize) -> f32 {
        self.floats[3][i]
    }

    pub fn hexagon_strain(&self, i: usize) -> f32 {
        self.floats[1][i]
    }

    pub fn gap(&self, i: usize) -> f32 {
        self.floats[4][i]
    }

    pub fn pi_energy(&self, i: usize) -> f32 {
        self.floats[5][i]
    }

    pub fn automorphisms(&self, i: usize) -> u32 {
        self.automorphisms[i]
    }

    pub fn kekule(&self, i: usize) -> BigUint {
        BigUint::from_bytes_le(&self.kekule[self.kekule_start[i]..self.kekule_start[i + 1]])
    }

    /// The NMR pattern as flat (multiplicity, lines) pairs.
    pub fn nmr_pairs(&self, i: usize) -> impl Iterator<Item = (u32, u32)> + '_ {
        self.nmr[self.nmr_start[i]..self.nmr_start[i + 1]]
            .chunks_exact(2)
            .map(|p| (p[0], p[1]))
    }

    /// Builds the full record; numbers are left to the caller (they depend on the file).
    pub fn record(&self, i: usize) -> Record {
        let f = |col: usize| self.floats[col][i];
        let mut hex = [0u32; 7];
        hex.copy_from_slice(&self.hexagon_neighbours[i * 7..i * 7 + 7]);
        Record {
            atoms: self.atoms,
            number: None,
            ipr_number: None,
            special_faces: self.faces[self.face_start[i]..self.face_start[i + 1]].to_vec(),
            ipr: self.ipr(i),
            pentagon_adjacencies: self.pentagon_adjacencies[i],
            pentagon_penalty_kj: f(0),
            hexagon_neighbours: hex,
            hexagon_strain: f(1),
            homo: f(2),
            lumo: f(3),
            gap: f(4),
            shell: shell_from_code(self.shell_code(i)).expect("invariant: checked at decode"),
            pi_energy: f(5),
            kekule: self.kekule(i),
            automorphisms: self.automorphisms[i],
            point_group: PointGroup::from_code(self.point_group[i])
                .expect("invariant: checked at decode"),
            chiral: self.chiral(i),
            nmr: self.nmr_pairs(i).collect(),
        }
    }

    /// Summary kept in the index.
    pub fn stats(&self) -> ChunkStats {
        let mut s = ChunkStats::empty();
        for i in 0..self.len {
            s.add(
                self.pentagon_adjacencies[i],
                self.gap(i),
                self.shell_code(i),
                self.point_group[i],
                self.chiral(i),
                self.ipr(i),
            );
        }
        s
    }
}

fn check_codes(flags: &[u8], groups: &[u8]) -> Result<(), String> {
    if let Some(f) = flags.iter().find(|&&f| shell_from_code(f >> 2).is_none()) {
        return Err(format!("flags byte {f:#04x} has an unknown shell code"));
    }
    if let Some(g) = groups.iter().find(|&&g| PointGroup::from_code(g).is_none()) {
        return Err(format!("unknown point-group code {g}"));
    }
    Ok(())
}

/// Decoded spirals: every (position, size) entry, and where each record's entries start.
type Unfronted = (Vec<(u32, u8)>, Vec<usize>);

/// Undoes the spiral front coding, checking positions increase and fit the face count.
fn unfront(c: &Columns, atoms: u32) -> Result<Unfronted, String> {
    let n = c.count as usize;
    check_len("spiral_shared", c.spiral_shared.len(), n)?;
    check_len("spiral_new", c.spiral_new.len(), n)?;
    check_len("spiral_size", c.spiral_size.len(), c.spiral_delta.len())?;
    let faces_total = atoms / 2 + 2;
    let mut faces: Vec<(u32, u8)> = Vec::with_capacity(c.spiral_delta.len() + n * 4);
    let mut start = Vec::with_capacity(n + 1);
    start.push(0usize);
    let mut next_new = 0usize;
    let mut prev = 0..0;
    for i in 0..n {
        let shared = c.spiral_shared[i] as usize;
        if shared > prev.len() {
            return Err(format!(
                "record {i}: spiral shares more faces than the previous one has"
            ));
        }
        let begin = faces.len();
        faces.extend_from_within(prev.start..prev.start + shared);
        let mut last = faces.last().filter(|_| shared > 0).map_or(0, |f| f.0);
        let new = c.spiral_new[i] as usize;
        let end_new = next_new
            .checked_add(new)
            .filter(|&e| e <= c.spiral_delta.len())
            .ok_or_else(|| format!("record {i}: spiral column too short"))?;
        for k in next_new..end_new {
            let pos = last
                .checked_add(c.spiral_delta[k])
                .filter(|&p| p > last && p <= faces_total);
            let pos =
                pos.ok_or_else(|| format!("record {i}: spiral position out of order or range"))?;
            faces.push((pos, c.spiral_size[k]));
            last = pos;
        }
        next_new = end_new;
        prev = begin..faces.len();
        start.push(faces.len());
    }
    check_len("spiral_delta", c.spiral_delta.len(), next_new)?;
    Ok((faces, start))
}

fn unshuffle(planes: &[u8], n: usize) -> [Vec<f32>; FLOATS] {
    std::array::from_fn(|f| {
        (0..n)
            .map(|i| {
                let b = |k: usize| planes[(f * 4 + k) * n + i];
                f32::from_bits(u32::from_le_bytes([b(0), b(1), b(2), b(3)]))
            })
            .collect()
    })
}

/// Per-chunk summary used to skip chunks a query cannot match, and to number records.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct ChunkStats {
    pub min_pentagon_adjacencies: u32,
    pub max_pentagon_adjacencies: u32,
    pub min_gap: f32,
    pub max_gap: f32,
    /// Bit per shell code present.
    pub shells: u8,
    /// Bit per point-group code present.
    pub point_groups: u64,
    /// Bit 0: some achiral record; bit 1: some chiral record.
    pub chirality: u8,
    /// How many records are IPR.
    pub ipr: u64,
}

impl ChunkStats {
    pub fn empty() -> ChunkStats {
        ChunkStats {
            min_pentagon_adjacencies: u32::MAX,
            max_pentagon_adjacencies: 0,
            min_gap: f32::INFINITY,
            max_gap: f32::NEG_INFINITY,
            shells: 0,
            point_groups: 0,
            chirality: 0,
            ipr: 0,
        }
    }

    fn add(&mut self, pa: u32, gap: f32, shell: u8, group: u8, chiral: bool, ipr: bool) {
        self.min_pentagon_adjacencies = self.min_pentagon_adjacencies.min(pa);
        self.max_pentagon_adjacencies = self.max_pentagon_adjacencies.max(pa);
        self.min_gap = self.min_gap.min(gap);
        self.max_gap = self.max_gap.max(gap);
        self.shells |= 1 << shell;
        self.point_groups |= 1 << group;
        self.chirality |= 1 << chiral as u8;
        self.ipr += ipr as u64;
    }

    /// Summary of records about to be written.
    pub fn of_records(records: &[Record]) -> ChunkStats {
        let mut s = ChunkStats::empty();
        for r in records {
            let g = r.point_group.code();
            s.add(
                r.pentagon_adjacencies,
                r.gap,
                shell_code(r.shell),
                g,
                r.chiral,
                r.ipr,
            );
        }
        s
    }
}

#[cfg(test)]
pub(crate) mod tests {
    use super::*;
    use crate::score::Shell;

    /// A plausible C60-sized record, varied by `seed` (test data only).
    pub(crate) fn sample_record(seed: u32) -> Record {
        Record {
            atoms: 60,
            number: None,
            ipr_number: None,
            special_faces: vec![(1, 5), (7, 5), (9 + seed % 3, 5)],
            ipr: seed % 2 == 0,
            pentagon_adjacencies: seed % 5,
            pentagon_penalty_kj: 90.0 * (seed % 5) as f32,
            hexagon_neighbours: [0, 0, 0, 0, 0, 0, 20],
            hexagon_strain: 0.25 * seed as f32,
            homo: 0.618,
            lumo: -0.1386,
            gap: 0.7566 - 0.001 * seed as f32,
            shell: Shell::ProperlyClosed,
            pi_energy: 93.16,
            kekule: BigUint::from(12500u32 + seed),
            automorphisms: 120,
            point_group: PointGroup::from_name("Ih").expect("listed"),
            chiral: false,
            nmr: vec![(60, 1)],
        }
    }

    #[test]
    fn chunk_round_trips_and_summarises() {
        let records: Vec<Record> = (0..50).map(sample_record).collect();
        let chunk = decode(&encode(&records), 60).expect("decodes");
        let back: Vec<Record> = (0..chunk.len()).map(|i| chunk.record(i)).collect();
        assert_eq!(back, records);
        assert_eq!(chunk.stats(), ChunkStats::of_records(&records));
        assert_eq!(chunk.stats().ipr, 25);
    }

    #[test]
    fn garbage_body_is_an_error_not_a_panic() {
        assert!(decode(b"not zstd at all", 60).is_err());
        let raw = postcard::to_stdvec(&Columns {
            count: 3,
            ..Columns::default()
        })
        .expect("serializes");
        let body = zstd::bulk::compress(&raw, 1).expect("compresses");
        assert!(decode(&body, 60).is_err());
    }
}
