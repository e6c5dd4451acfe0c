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

/// Number of `f32` descriptor columns, in this order: penalty, strain, homo, lumo, gap, pi
/// energy, SOMO (NaN when there is none, i.e. for even electron counts).
const FLOATS: usize = 7;
/// Float columns of schema 1 chunks, which had no SOMO column.
const FLOATS_SCHEMA_1: usize = 6;

/// On-disk columns of one chunk (serialized with postcard; integers become varints). Read back
/// by [`Layout::parse`], not serde, so that unneeded columns can be skipped.
#[derive(Serialize, Default)]
#[cfg_attr(test, derive(Deserialize, Debug, PartialEq))]
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
    /// The seven float columns, each split into 4 byte planes (least significant first).
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
        r.somo.unwrap_or(f32::NAN),
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
    /// Schema 1 chunks get a NaN SOMO column on decoding.
    floats: [Vec<f32>; FLOATS],
}

/// Upper bound on a decompressed chunk, so a damaged length cannot ask for huge memory.
const MAX_RAW: usize = 1 << 30;

/// Reads the postcard encoding of [`Columns`] by hand. Serde's generic path cost more than
/// decompression, and a query needs only a few columns: the others are skipped by counting
/// varint terminators, never materialised. Must stay in step with the derived `Serialize`
/// (a test compares it with postcard's own decoder).
struct Cursor<'a> {
    bytes: &'a [u8],
    at: usize,
}

/// `count` LEB128 varints, still encoded.
#[derive(Clone, Copy)]
struct Varints<'a> {
    bytes: &'a [u8],
    count: usize,
}

impl<'a> Cursor<'a> {
    fn varint(&mut self, what: &str, max_bytes: usize) -> Result<u64, String> {
        let mut value = 0u64;
        for k in 0..max_bytes {
            let b = *self
                .bytes
                .get(self.at)
                .ok_or_else(|| format!("column {what} is cut short"))?;
            self.at += 1;
            value |= ((b & 0x7F) as u64) << (7 * k);
            if b & 0x80 == 0 {
                return Ok(value);
            }
        }
        Err(format!("column {what} holds an overlong varint"))
    }

    /// A sequence length; every item takes at least one byte, so it cannot exceed what is left.
    fn len(&mut self, what: &str) -> Result<usize, String> {
        let n = self.varint(what, 10)?;
        if n > (self.bytes.len() - self.at) as u64 {
            return Err(format!(
                "column {what} claims {n} entries, more than the bytes left"
            ));
        }
        Ok(n as usize)
    }

    fn bytes(&mut self, what: &str) -> Result<&'a [u8], String> {
        let n = self.len(what)?;
        let out = &self.bytes[self.at..self.at + n];
        self.at += n;
        Ok(out)
    }

    fn varints(&mut self, what: &str) -> Result<Varints<'a>, String> {
        let count = self.len(what)?;
        let start = self.at;
        let mut seen = 0usize;
        // Eight bytes at a time while the column surely goes on: each byte with its high bit
        // clear ends one varint (skipping is most of the work for columns a query does not read).
        while let Some(word) = self.bytes.get(self.at..self.at + 8) {
            let word = u64::from_le_bytes(word.try_into().expect("invariant: 8 bytes"));
            let ends = (!word & 0x8080_8080_8080_8080).count_ones() as usize;
            if seen + ends >= count {
                break;
            }
            seen += ends;
            self.at += 8;
        }
        while seen < count {
            let b = *self
                .bytes
                .get(self.at)
                .ok_or_else(|| format!("column {what} is cut short"))?;
            seen += (b & 0x80 == 0) as usize;
            self.at += 1;
        }
        Ok(Varints {
            bytes: &self.bytes[start..self.at],
            count,
        })
    }
}

impl Varints<'_> {
    /// Decodes into `out` (cleared first), rejecting values that do not fit a `u32`.
    fn decode_into(&self, what: &str, out: &mut Vec<u32>) -> Result<(), String> {
        out.clear();
        out.reserve(self.count);
        let b = self.bytes;
        let mut at = 0;
        while at < b.len() {
            if b[at] < 0x80 {
                out.push(b[at] as u32);
                at += 1;
                continue;
            }
            let mut value = 0u32;
            let mut k = 0;
            loop {
                let byte = b[at];
                at += 1;
                if k == 4 && byte > 0x0F {
                    return Err(format!("column {what} holds a value beyond u32"));
                }
                value |= ((byte & 0x7F) as u32) << (7 * k);
                k += 1;
                if byte & 0x80 == 0 {
                    break;
                }
            }
            out.push(value);
        }
        Ok(())
    }

    fn decode(&self, what: &str) -> Result<Vec<u32>, String> {
        let mut out = Vec::new();
        self.decode_into(what, &mut out)?;
        Ok(out)
    }
}

/// Where each column of a decompressed chunk lies; fixed-size columns are length-checked and
/// shell and point-group codes validated, so every accessor below is in bounds.
struct Layout<'a> {
    count: usize,
    flags: &'a [u8],
    point_group: &'a [u8],
    spiral_shared: Varints<'a>,
    spiral_new: Varints<'a>,
    spiral_delta: Varints<'a>,
    spiral_size: &'a [u8],
    pentagon_adjacencies: Varints<'a>,
    hexagon_neighbours: Varints<'a>,
    automorphisms: Varints<'a>,
    kekule_len: Varints<'a>,
    kekule: &'a [u8],
    nmr_len: Varints<'a>,
    nmr: Varints<'a>,
    floats: &'a [u8],
}

impl<'a> Layout<'a> {
    /// `floats` is the number of float columns the file's schema version stores.
    fn parse(raw: &'a [u8], floats: usize) -> Result<Layout<'a>, String> {
        let mut c = Cursor { bytes: raw, at: 0 };
        let count = c.varint("count", 5)?;
        let count = u32::try_from(count).map_err(|_| "count beyond u32".to_string())? as usize;
        let l = Layout {
            count,
            flags: c.bytes("flags")?,
            point_group: c.bytes("point_group")?,
            spiral_shared: c.varints("spiral_shared")?,
            spiral_new: c.varints("spiral_new")?,
            spiral_delta: c.varints("spiral_delta")?,
            spiral_size: c.bytes("spiral_size")?,
            pentagon_adjacencies: c.varints("pentagon_adjacencies")?,
            hexagon_neighbours: c.varints("hexagon_neighbours")?,
            automorphisms: c.varints("automorphisms")?,
            kekule_len: c.varints("kekule_len")?,
            kekule: c.bytes("kekule")?,
            nmr_len: c.varints("nmr_len")?,
            nmr: c.varints("nmr")?,
            floats: c.bytes("floats")?,
        };
        if c.at != raw.len() {
            return Err(format!("{} bytes after the last column", raw.len() - c.at));
        }
        let n = l.count;
        check_len("flags", l.flags.len(), n)?;
        check_len("point_group", l.point_group.len(), n)?;
        check_len("spiral_shared", l.spiral_shared.count, n)?;
        check_len("spiral_new", l.spiral_new.count, n)?;
        check_len("spiral_size", l.spiral_size.len(), l.spiral_delta.count)?;
        check_len("pentagon_adjacencies", l.pentagon_adjacencies.count, n)?;
        check_len("hexagon_neighbours", l.hexagon_neighbours.count, n * 7)?;
        check_len("automorphisms", l.automorphisms.count, n)?;
        check_len("kekule_len", l.kekule_len.count, n)?;
        check_len("nmr_len", l.nmr_len.count, n)?;
        check_len("floats", l.floats.len(), n * floats * 4)?;
        check_codes(l.flags, l.point_group)?;
        Ok(l)
    }
}

/// Reusable decompression context and buffers: reading a chunk allocates nothing once warm.
pub struct Scratch {
    /// Float columns per chunk in the schema being read.
    floats: usize,
    dctx: zstd::bulk::Decompressor<'static>,
    raw: Vec<u8>,
    pentagon_adjacencies: Vec<u32>,
    automorphisms: Vec<u32>,
    lens: Vec<u32>,
    kekule_start: Vec<usize>,
    nmr: Vec<u32>,
    nmr_start: Vec<usize>,
}

impl Default for Scratch {
    fn default() -> Scratch {
        Scratch::new()
    }
}

impl Scratch {
    /// Buffers for chunks of the current schema version.
    pub fn new() -> Scratch {
        Scratch::for_schema(super::SCHEMA_VERSION)
    }

    /// Buffers for chunks of descriptor schema `schema` (1 or 2; see [`super::SCHEMA_VERSION`]).
    pub fn for_schema(schema: u16) -> Scratch {
        Scratch {
            floats: if schema < 2 { FLOATS_SCHEMA_1 } else { FLOATS },
            dctx: zstd::bulk::Decompressor::new()
                .expect("invariant: a zstd context only fails to allocate when memory is out"),
            raw: Vec::new(),
            pentagon_adjacencies: Vec::new(),
            automorphisms: Vec::new(),
            lens: Vec::new(),
            kekule_start: Vec::new(),
            nmr: Vec::new(),
            nmr_start: Vec::new(),
        }
    }

    /// Decompresses into `raw`, sized from the frame header (the writer always records it).
    fn decompress(&mut self, body: &[u8]) -> Result<(), String> {
        let size = zstd::zstd_safe::get_frame_content_size(body)
            .map_err(|_| "zstd: not a zstd frame".to_string())?;
        match size {
            Some(n) if n <= MAX_RAW as u64 => {
                self.raw.clear();
                self.raw.reserve(n as usize);
                self.dctx
                    .decompress_to_buffer(body, &mut self.raw)
                    .map_err(|e| format!("zstd: {e}"))?;
                check_len("decompressed bytes", self.raw.len(), n as usize)
            }
            Some(n) => Err(format!("zstd: frame claims {n} bytes")),
            None => {
                self.raw = self
                    .dctx
                    .decompress(body, MAX_RAW)
                    .map_err(|e| format!("zstd: {e}"))?;
                Ok(())
            }
        }
    }

    /// Decodes a whole chunk body, checking everything (see [`decode`]).
    pub fn decode(&mut self, body: &[u8], atoms: u32) -> Result<Chunk, String> {
        self.decompress(body)?;
        Chunk::from_layout(&Layout::parse(&self.raw, self.floats)?, atoms, self.floats)
    }

    /// Decodes only the columns a scan needs; the others are length-checked and skipped.
    pub fn view(&mut self, body: &[u8], needs: Needs) -> Result<View<'_>, String> {
        self.decompress(body)?;
        let Scratch {
            floats,
            raw,
            pentagon_adjacencies,
            automorphisms,
            lens,
            kekule_start,
            nmr,
            nmr_start,
            ..
        } = self;
        let l = Layout::parse(raw, *floats)?;
        let n = l.count;
        pentagon_adjacencies.clear();
        automorphisms.clear();
        kekule_start.clear();
        nmr.clear();
        nmr_start.clear();
        if needs.pentagon_adjacencies {
            l.pentagon_adjacencies
                .decode_into("pentagon_adjacencies", pentagon_adjacencies)?;
        }
        if needs.automorphisms {
            l.automorphisms
                .decode_into("automorphisms", automorphisms)?;
        }
        if needs.kekule {
            l.kekule_len.decode_into("kekule_len", lens)?;
            starts_into("kekule", lens, 1, l.kekule.len(), kekule_start)?;
        }
        if needs.nmr {
            l.nmr_len.decode_into("nmr_len", lens)?;
            l.nmr.decode_into("nmr", nmr)?;
            starts_into("nmr", lens, 2, nmr.len(), nmr_start)?;
        }
        Ok(View {
            len: n,
            float_columns: *floats,
            flags: l.flags,
            point_group: l.point_group,
            floats: l.floats,
            kekule: if needs.kekule { l.kekule } else { &[] },
            pentagon_adjacencies,
            automorphisms,
            kekule_start,
            nmr,
            nmr_start,
        })
    }
}

/// Decodes a chunk body; `Err` says what is inconsistent (the caller names file and chunk).
pub fn decode(body: &[u8], atoms: u32) -> Result<Chunk, String> {
    Scratch::new().decode(body, atoms)
}

/// Columns a [`View`] decodes besides flags, point groups and floats (raw bytes, always there).
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct Needs {
    pub pentagon_adjacencies: bool,
    pub automorphisms: bool,
    pub kekule: bool,
    pub nmr: bool,
}

/// Some columns of a chunk, read in place for filtering and ranking. Spirals are not decoded
/// (nor checked): records that are kept are rebuilt from a full [`decode`]. Accessors of
/// columns not asked for in [`Needs`] panic.
pub struct View<'a> {
    len: usize,
    float_columns: usize,
    flags: &'a [u8],
    point_group: &'a [u8],
    floats: &'a [u8],
    kekule: &'a [u8],
    pentagon_adjacencies: &'a [u32],
    automorphisms: &'a [u32],
    kekule_start: &'a [usize],
    nmr: &'a [u32],
    nmr_start: &'a [usize],
}

impl View<'_> {
    #[inline]
    pub fn len(&self) -> usize {
        self.len
    }

    #[inline]
    pub fn is_empty(&self) -> bool {
        self.len == 0
    }

    #[inline]
    pub fn ipr(&self, i: usize) -> bool {
        self.flags[i] & 1 != 0
    }

    #[inline]
    pub fn chiral(&self, i: usize) -> bool {
        self.flags[i] & 2 != 0
    }

    #[inline]
    pub fn shell_code(&self, i: usize) -> u8 {
        self.flags[i] >> 2
    }

    #[inline]
    pub fn point_group_code(&self, i: usize) -> u8 {
        self.point_group[i]
    }

    #[inline]
    pub fn pentagon_adjacencies(&self, i: usize) -> u32 {
        self.pentagon_adjacencies[i]
    }

    /// Float column `f` (0 penalty, 1 strain, 2 HOMO, 3 LUMO, 4 gap, 5 pi energy, 6 SOMO) of
    /// record `i`, gathered from its four byte planes; NaN for a column the schema lacks.
    #[inline]
    pub fn float(&self, f: usize, i: usize) -> f32 {
        if f >= self.float_columns {
            return f32::NAN;
        }
        let n = self.len;
        let p = &self.floats[f * 4 * n..];
        f32::from_bits(u32::from_le_bytes([
            p[i],
            p[n + i],
            p[2 * n + i],
            p[3 * n + i],
        ]))
    }

    #[inline]
    pub fn automorphisms(&self, i: usize) -> u32 {
        self.automorphisms[i]
    }

    /// The Kekulé count as stored: little-endian bytes.
    #[inline]
    pub fn kekule_bytes(&self, i: usize) -> &[u8] {
        &self.kekule[self.kekule_start[i]..self.kekule_start[i + 1]]
    }

    /// The NMR pattern as flat (intensity, lines) pairs.
    #[inline]
    pub fn nmr_pairs(&self, i: usize) -> impl Iterator<Item = (u32, u32)> + Clone + '_ {
        self.nmr[self.nmr_start[i]..self.nmr_start[i + 1]]
            .chunks_exact(2)
            .map(|p| (p[0], p[1]))
    }
}

fn check_len(name: &str, got: usize, want: usize) -> Result<(), String> {
    if got == want {
        Ok(())
    } else {
        Err(format!("column {name} has {got} entries, expected {want}"))
    }
}

/// Cumulative start offsets from per-record lengths, checked against the flat column length.
fn starts_into(
    name: &str,
    lens: &[u32],
    per: usize,
    flat: usize,
    out: &mut Vec<usize>,
) -> Result<(), String> {
    out.clear();
    out.reserve(lens.len() + 1);
    let mut at = 0usize;
    out.push(0);
    for &l in lens {
        at = at.saturating_add(l as usize * per);
        out.push(at);
    }
    check_len(name, flat, at)
}

fn starts(name: &str, lens: &[u32], per: usize, flat: usize) -> Result<Vec<usize>, String> {
    let mut out = Vec::new();
    starts_into(name, lens, per, flat, &mut out)?;
    Ok(out)
}

impl Chunk {
    fn from_layout(l: &Layout<'_>, atoms: u32, float_columns: usize) -> Result<Chunk, String> {
        let n = l.count;
        let kekule_len = l.kekule_len.decode("kekule_len")?;
        let nmr_len = l.nmr_len.decode("nmr_len")?;
        let nmr = l.nmr.decode("nmr")?;
        let spiral = FrontCoded {
            shared: &l.spiral_shared.decode("spiral_shared")?,
            new: &l.spiral_new.decode("spiral_new")?,
            delta: &l.spiral_delta.decode("spiral_delta")?,
            size: l.spiral_size,
        };
        let (faces, face_start) = unfront(&spiral, n, atoms)?;
        Ok(Chunk {
            atoms,
            len: n,
            kekule_start: starts("kekule", &kekule_len, 1, l.kekule.len())?,
            nmr_start: starts("nmr", &nmr_len, 2, nmr.len())?,
            floats: unshuffle(l.floats, n, float_columns),
            faces,
            face_start,
            flags: l.flags.to_vec(),
            point_group: l.point_group.to_vec(),
            pentagon_adjacencies: l.pentagon_adjacencies.decode("pentagon_adjacencies")?,
            hexagon_neighbours: l.hexagon_neighbours.decode("hexagon_neighbours")?,
            automorphisms: l.automorphisms.decode("automorphisms")?,
            kekule: l.kekule.to_vec(),
            nmr,
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

    /// The singly occupied orbital, for odd electron counts.
    pub fn somo(&self, i: usize) -> Option<f32> {
        Some(self.floats[6][i]).filter(|x| !x.is_nan())
    }

    pub fn automorphisms(&self, i: usize) -> u32 {
        self.automorphisms[i]
    }

    pub fn kekule(&self, i: usize) -> BigUint {
        BigUint::from_bytes_le(&self.kekule[self.kekule_start[i]..self.kekule_start[i + 1]])
    }

    /// The NMR pattern as flat (intensity, lines) pairs.
    pub fn nmr_pairs(&self, i: usize) -> impl Iterator<Item = (u32, u32)> + Clone + '_ {
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
            somo: self.somo(i),
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

/// The spiral columns of a chunk, decoded.
struct FrontCoded<'a> {
    shared: &'a [u32],
    new: &'a [u32],
    delta: &'a [u32],
    size: &'a [u8],
}

/// Undoes the spiral front coding, checking positions increase and fit the face count.
fn unfront(c: &FrontCoded<'_>, n: usize, atoms: u32) -> Result<Unfronted, String> {
    let faces_total = atoms / 2 + 2;
    let mut faces: Vec<(u32, u8)> = Vec::with_capacity(c.delta.len() + n * 4);
    let mut start = Vec::with_capacity(n + 1);
    start.push(0usize);
    let mut next_new = 0usize;
    let mut prev = 0..0;
    for i in 0..n {
        let shared = c.shared[i] as usize;
        if shared > prev.len() {
            return Err(format!(
                "record {i}: spiral shares more faces than the previous one has"
            ));
        }
        let begin = faces.len();
        faces.extend_from_within(prev.start..prev.start + shared);
        let mut last = faces.last().filter(|_| shared > 0).map_or(0, |f| f.0);
        let new = c.new[i] as usize;
        let end_new = next_new
            .checked_add(new)
            .filter(|&e| e <= c.delta.len())
            .ok_or_else(|| format!("record {i}: spiral column too short"))?;
        for k in next_new..end_new {
            let pos = last
                .checked_add(c.delta[k])
                .filter(|&p| p > last && p <= faces_total);
            let pos =
                pos.ok_or_else(|| format!("record {i}: spiral position out of order or range"))?;
            faces.push((pos, c.size[k]));
            last = pos;
        }
        next_new = end_new;
        prev = begin..faces.len();
        start.push(faces.len());
    }
    check_len("spiral_delta", c.delta.len(), next_new)?;
    Ok((faces, start))
}

fn unshuffle(planes: &[u8], n: usize, columns: usize) -> [Vec<f32>; FLOATS] {
    std::array::from_fn(|f| {
        if f >= columns {
            return vec![f32::NAN; n];
        }
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
            somo: None,
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

    /// Records with values at every varint width, including `u32::MAX`.
    fn wide_records() -> Vec<Record> {
        (0..300u32)
            .map(|seed| {
                let wide =
                    [0, 127, 128, 16_383, 16_384, 1 << 21, 1 << 28, u32::MAX][seed as usize % 8];
                Record {
                    pentagon_adjacencies: wide,
                    automorphisms: wide ^ seed,
                    hexagon_neighbours: [wide, seed, 0, 1, 2, 3, wide / 3],
                    kekule: BigUint::from(wide as u64 * 1_000_003 + seed as u64),
                    nmr: vec![(wide, 1), (seed, 2)],
                    ..sample_record(seed)
                }
            })
            .collect()
    }

    #[test]
    fn hand_reader_agrees_with_postcard_and_views_agree_with_records() {
        let records = wide_records();
        let columns = Columns::from_records(&records);
        let raw = postcard::to_stdvec(&columns).expect("serializes");
        let by_serde: Columns = postcard::from_bytes(&raw).expect("postcard decodes");
        assert!(by_serde == columns);
        let chunk = decode(&encode(&records), 60).expect("decodes");
        let back: Vec<Record> = (0..chunk.len()).map(|i| chunk.record(i)).collect();
        assert_eq!(back, records);
        let body = encode(&records);
        let mut scratch = Scratch::new();
        let all = Needs {
            pentagon_adjacencies: true,
            automorphisms: true,
            kekule: true,
            nmr: true,
        };
        let view = scratch.view(&body, all).expect("view");
        assert_eq!(view.len(), records.len());
        for (i, r) in records.iter().enumerate() {
            assert_eq!(view.pentagon_adjacencies(i), r.pentagon_adjacencies);
            assert_eq!(view.automorphisms(i), r.automorphisms);
            assert_eq!(BigUint::from_bytes_le(view.kekule_bytes(i)), r.kekule);
            assert_eq!(view.nmr_pairs(i).collect::<Vec<_>>(), r.nmr);
            assert_eq!(view.float(1, i), r.hexagon_strain);
            assert_eq!(view.float(4, i), r.gap);
            assert_eq!(view.float(5, i), r.pi_energy);
            assert_eq!(view.ipr(i), r.ipr);
            assert_eq!(view.chiral(i), r.chiral);
            assert_eq!(view.point_group_code(i), r.point_group.code());
            assert_eq!(view.shell_code(i), shell_code(r.shell));
        }
        let few = scratch.view(&body, Needs::default()).expect("view");
        assert_eq!(few.len(), records.len());
    }

    #[test]
    fn varints_beyond_u32_and_trailing_bytes_are_errors() {
        let body = |raw: &[u8]| zstd::bulk::compress(raw, 1).expect("compresses");
        let good = postcard::to_stdvec(&Columns::from_records(&wide_records())).expect("ser");
        assert!(decode(&body(&good), 60).is_ok());
        let mut trailing = good.clone();
        trailing.push(0);
        assert!(decode(&body(&trailing), 60).is_err());
        // count = 2^32 (five varint bytes, the last one too large for a u32).
        assert!(decode(&body(&[0x80, 0x80, 0x80, 0x80, 0x10]), 60).is_err());
        for cut in [1, good.len() / 2, good.len() - 1] {
            assert!(decode(&body(&good[..cut]), 60).is_err(), "cut at {cut}");
        }
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
