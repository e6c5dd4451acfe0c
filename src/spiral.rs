//! Face spirals: winding a face-size sequence into a cage, and reading spirals off a cage.
//!
//! Method: Manolopoulos, May & Down, Chem. Phys. Lett. 181 (1991) 105, and Fowler &
//! Manolopoulos, *An Atlas of Fullerenes* (1995). A spiral orders all faces so that each new face
//! touches the previous one and the earliest face of the growing patch that still has free edges.
//! Winding works on the dual triangulation: faces are dual vertices, atoms are dual triangles.
//!
//! The canonical spiral is the lexicographically smallest size sequence over all starts that
//! complete; the starts reproducing it are the cage's automorphisms. This module does no I/O and
//! knows nothing about scoring or storage.

use crate::cage::{Cage, FaceId, FaceSet, MAX_FACE};
use std::cmp::Ordering;
use std::fmt;

/// Why a face-size sequence does not wind into a closed cage.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum WindError {
    /// Fewer than 4 faces, or a face size outside 3..=8.
    BadSize { position: usize, size: u8 },
    /// Face `position` (0-based) cannot be attached: the open boundary has run out.
    Jam { position: usize },
    /// Face `position` would be closed by its neighbours before the last face.
    ClosedEarly { position: usize },
    /// Face `position` would need more neighbours than its size allows.
    Overfull { position: usize },
    /// The last face does not fit the hole left for it.
    LastFace { expected: usize, hole: usize },
    /// Two pentagons would share an edge, which the isolated-pentagon rule forbids.
    AdjacentPentagons { position: usize },
}

impl fmt::Display for WindError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            WindError::BadSize { position, size } => write!(
                f,
                "face {} has size {size}; face sizes must be 3 to {MAX_FACE}",
                position + 1
            ),
            WindError::Jam { position } => write!(
                f,
                "the spiral jams at face {}: no open boundary is left to attach it to",
                position + 1
            ),
            WindError::ClosedEarly { position } => write!(
                f,
                "the spiral closes too early: face {} is surrounded before the last face",
                position + 1
            ),
            WindError::Overfull { position } => write!(
                f,
                "face {} would need more neighbours than it has edges",
                position + 1
            ),
            WindError::LastFace { expected, hole } => write!(
                f,
                "the last face has size {expected} but the hole left for it has {hole} sides"
            ),
            WindError::AdjacentPentagons { position } => write!(
                f,
                "face {} puts two pentagons side by side (not an isolated-pentagon cage)",
                position + 1
            ),
        }
    }
}

impl std::error::Error for WindError {}

/// Why a user-supplied spiral is not acceptable.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum SpiralError {
    /// The atom count is not a possible cage size.
    BadAtoms { atoms: u64, reason: String },
    /// Wrong number of indices for the face set (a fullerene needs 12 pentagon positions).
    WrongCount { expected: usize, got: usize },
    /// An index is 0 or beyond the number of faces.
    OutOfRange { index: u64, faces: usize },
    /// Indices must strictly increase.
    NotIncreasing { index: u64 },
    /// The sequence does not wind into a closed cage.
    DoesNotClose(WindError),
}

impl fmt::Display for SpiralError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            SpiralError::BadAtoms { atoms, reason } => write!(f, "{atoms} atoms: {reason}"),
            SpiralError::WrongCount { expected, got } => write!(
                f,
                "a fullerene spiral lists exactly {expected} pentagon positions, got {got}"
            ),
            SpiralError::OutOfRange { index, faces } => write!(
                f,
                "pentagon position {index} is out of range: positions run from 1 to {faces} \
                 (the number of faces); pass --atoms if the cage is larger"
            ),
            SpiralError::NotIncreasing { index } => write!(
                f,
                "pentagon positions must strictly increase; {index} repeats or goes back"
            ),
            SpiralError::DoesNotClose(e) => write!(f, "not a valid spiral: {e}"),
        }
    }
}

impl std::error::Error for SpiralError {
    fn source(&self) -> Option<&(dyn std::error::Error + 'static)> {
        match self {
            SpiralError::DoesNotClose(e) => Some(e),
            _ => None,
        }
    }
}

/// A face spiral that is known to wind into a closed cage.
///
/// The only constructors wind the sequence, so a `Spiral` value is always valid (though not
/// necessarily canonical: see [`canonical_spiral`]).
#[derive(Debug, Clone, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct Spiral {
    sizes: Vec<u8>,
}

impl Spiral {
    /// Validates a face-size sequence by winding it.
    pub fn from_sizes(sizes: Vec<u8>) -> Result<Spiral, WindError> {
        wind_triangles(&sizes, false)?;
        Ok(Spiral { sizes })
    }

    /// A fullerene spiral from its 12 pentagon positions (1-based), as written in the literature.
    pub fn from_pentagon_indices(atoms: u64, indices: &[u64]) -> Result<Spiral, SpiralError> {
        check_fullerene_atoms(atoms)?;
        let faces = (atoms / 2 + 2) as usize;
        if indices.len() != 12 {
            return Err(SpiralError::WrongCount {
                expected: 12,
                got: indices.len(),
            });
        }
        let mut sizes = vec![6u8; faces];
        let mut prev = 0u64;
        for &i in indices {
            if i == 0 || i > faces as u64 {
                return Err(SpiralError::OutOfRange { index: i, faces });
            }
            if i <= prev {
                return Err(SpiralError::NotIncreasing { index: i });
            }
            prev = i;
            sizes[(i - 1) as usize] = 5;
        }
        Spiral::from_sizes(sizes).map_err(SpiralError::DoesNotClose)
    }

    /// Trusted constructor for sequences that came out of a successful winding.
    pub(crate) fn from_wound(sizes: Vec<u8>) -> Spiral {
        Spiral { sizes }
    }

    /// Face sizes in spiral order.
    pub fn sizes(&self) -> &[u8] {
        &self.sizes
    }

    /// Number of atoms of the cage it winds into (faces - 2, times 2).
    pub fn atoms(&self) -> usize {
        2 * (self.sizes.len() - 2)
    }

    /// 1-based positions of the faces of `size` (for a fullerene and size 5, the usual notation).
    pub fn positions_of(&self, size: u8) -> Vec<u32> {
        self.sizes
            .iter()
            .enumerate()
            .filter(|(_, &s)| s == size)
            .map(|(i, _)| i as u32 + 1)
            .collect()
    }

    /// The pentagon positions (the trade's notation for fullerene spirals).
    pub fn pentagon_indices(&self) -> Vec<u32> {
        self.positions_of(5)
    }

    /// The face set this spiral belongs to, if any of ours.
    pub fn face_set(&self) -> Option<FaceSet> {
        let has = |s: u8| self.sizes.contains(&s);
        if self.sizes.iter().any(|&s| !(4..=6).contains(&s)) {
            None
        } else if has(4) && has(5) {
            Some(FaceSet::SquarePentagonHexagon)
        } else if has(4) {
            Some(FaceSet::SquareHexagon)
        } else {
            Some(FaceSet::Fullerene)
        }
    }

    /// Winds the spiral into its cage.
    pub fn to_cage(&self) -> Cage {
        let tris = wind_triangles(&self.sizes, false).expect("a Spiral always winds");
        cage_from_triangles(&tris)
    }
}

impl fmt::Display for Spiral {
    /// Fullerenes print as pentagon positions; other cages as the full size sequence.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let list: Vec<String> = if self.face_set() == Some(FaceSet::Fullerene) {
            self.pentagon_indices()
                .iter()
                .map(|i| i.to_string())
                .collect()
        } else {
            self.sizes.iter().map(|s| s.to_string()).collect()
        };
        f.write_str(&list.join(" "))
    }
}

/// Checks that a fullerene with `atoms` carbons can exist (n = 20 or even n >= 24).
pub fn check_fullerene_atoms(atoms: u64) -> Result<(), SpiralError> {
    let reason = if atoms % 2 == 1 {
        "a cubic cage has an even number of atoms"
    } else if atoms < 20 {
        "the smallest fullerene has 20 atoms"
    } else if atoms == 22 {
        "no fullerene has 22 atoms"
    } else if atoms > 100_000 {
        "too large for this tool (limit 100000 atoms)"
    } else {
        return Ok(());
    };
    Err(SpiralError::BadAtoms {
        atoms,
        reason: reason.to_string(),
    })
}

// ---------------------------------------------------------------------------------------------
// Winding
// ---------------------------------------------------------------------------------------------

/// Undo record for one face added by [`Winder::push`].
#[derive(Debug, Clone, Copy)]
struct Frame {
    triangles: u32,
    /// Boundary head before the push.
    head: u32,
    /// Faces closed off the back of the boundary, in the order they were removed.
    popped: [u32; MAX_FACE],
    n_popped: u8,
    /// Whether the new face was appended to the boundary.
    pushed: bool,
    connected: [u32; MAX_FACE],
    n_connected: u8,
    /// Bit i set: join i put the new face at the backward end of the other face's row (see
    /// [`Winder::rotation`]).
    other_back: u8,
    /// Open valency before the push.
    open: u32,
}

impl Frame {
    const EMPTY: Frame = Frame {
        triangles: 0,
        head: 0,
        popped: [0; MAX_FACE],
        n_popped: 0,
        pushed: false,
        connected: [0; MAX_FACE],
        n_connected: 0,
        other_back: 0,
        open: 0,
    };
}

/// Incremental spiral winding with undo, shared by [`Spiral::from_sizes`] and the enumerator.
///
/// The open boundary of the patch is a cyclic list of faces `boundary[head..]`; the new face is
/// joined to its last entry (the previous face) and first entry (the earliest open face), and
/// every face whose valency is used up is closed, which joins the new face to the next one along.
#[derive(Debug, Clone)]
pub(crate) struct Winder {
    total: usize,
    forbid_adjacent_pentagons: bool,
    sizes: Vec<u8>,
    valency: Vec<u8>,
    boundary: Vec<u32>,
    head: usize,
    triangles: Vec<[u32; 3]>,
    /// Whether `triangles` or `rotation` is kept up to date.
    record: Record,
    /// One undo record per face: `frames[k]` belongs to face k while it is wound. Records stay
    /// after a pop for the next push to reuse, which writes only the fields it needs (building a
    /// whole record and copying it in was a measurable part of winding).
    frames: Vec<Frame>,
    /// Sum of the free valencies of the open boundary faces, kept as faces come and go.
    open: u32,
    /// Each face's neighbours so far, in rotation order (as in [`Dual::rebuild`], up to where
    /// the cycle starts). Around a face, its joins form a fan that grows at two ends: a new
    /// face joins the boundary's head (the earliest open face) at one end and its tail (the
    /// previous face) at the other. Entries at the forward end fill a row from index 0 up,
    /// those at the backward end from the face's size down, so a closed face's row is its
    /// rotation. Kept join by join (with [`Record::Rotations`]), so the enumerator reads each
    /// completed sequence without rebuilding its dual from the triangles.
    rotation: Vec<[u32; MAX_FACE]>,
    /// Per face: how many entries its row has at the backward end (the forward end has the
    /// rest of its joins).
    ///
    /// Rows of `rotation` and `back` are added as faces are first wound (and, like `frames`,
    /// kept after a pop), not allocated for the whole cage up front: a clone then costs the
    /// prefix, not the cage, which keeps the thousands of prefixes that cut a search into
    /// units small at any size (C100000's 2000 units took 4.9 GB with full-size rows).
    back: Vec<u8>,
}

/// What a [`Winder`] keeps of the atoms as it goes: the oriented triangles, from which the
/// cage and the dual are built, or each face's rotation, which is the dual already. Keeping
/// rotations costs every join a little and saves a rebuild at every completed sequence: for
/// complete lists, where completed sequences are dense, all C80 took about 16 % less time
/// (the rebuild was 16 % of its time); IPR runs complete a sequence rarely (leaves under 5 %
/// of IPR C120's time) and ran slower (69.9 s against 66.0 s), so they keep triangles.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Record {
    Triangles,
    Rotations,
}

impl Winder {
    /// A winder that keeps triangles.
    pub(crate) fn new(total_faces: usize, forbid_adjacent_pentagons: bool) -> Winder {
        Winder {
            total: total_faces,
            forbid_adjacent_pentagons,
            sizes: Vec::with_capacity(total_faces),
            valency: Vec::with_capacity(total_faces),
            boundary: Vec::with_capacity(total_faces),
            head: 0,
            triangles: Vec::with_capacity(2 * total_faces),
            record: Record::Triangles,
            frames: Vec::with_capacity(total_faces),
            open: 0,
            rotation: Vec::with_capacity(total_faces),
            back: Vec::with_capacity(total_faces),
        }
    }

    pub(crate) fn sizes(&self) -> &[u8] {
        &self.sizes
    }

    /// This (empty) winder keeping `record` instead.
    pub(crate) fn recording(mut self, record: Record) -> Winder {
        debug_assert!(self.sizes.is_empty(), "chosen before the first face");
        self.record = record;
        self
    }

    pub(crate) fn record(&self) -> Record {
        self.record
    }

    /// The atoms so far as oriented triangles of faces ([`Record::Triangles`]).
    pub(crate) fn triangles(&self) -> &[[u32; 3]] {
        debug_assert_eq!(self.record, Record::Triangles);
        &self.triangles
    }

    fn add_triangle(&mut self, triangle: [u32; 3]) {
        if self.record == Record::Triangles {
            self.triangles.push(triangle);
        }
    }

    /// Each wound face's neighbours in rotation order ([`Record::Rotations`]); complete for
    /// closed faces, so for every face once the sequence is wound to its end.
    pub(crate) fn rotations(&self) -> &[[u32; MAX_FACE]] {
        debug_assert_eq!(self.record, Record::Rotations);
        &self.rotation[..self.sizes.len()]
    }

    /// Size of the earliest open face, which the next face will join (`None` once closed).
    pub(crate) fn earliest_open_size(&self) -> Option<u8> {
        self.boundary
            .get(self.head)
            .map(|&f| self.sizes[f as usize])
    }

    /// Number of open boundary faces.
    pub(crate) fn open_faces(&self) -> usize {
        self.boundary.len() - self.head
    }

    /// Sum of the free valencies of the open boundary faces (the length of the patch's
    /// boundary circuit in the primal graph).
    pub(crate) fn open_valency(&self) -> u32 {
        self.open
    }

    /// Packs everything the rest of the winding depends on — the free valency of each open
    /// boundary face from the head on, and with `pentagon_flags` which of them are pentagons —
    /// after `header` (at most 18 bits). `None` if it does not fit in 128 bits.
    pub(crate) fn boundary_key(&self, header: u32, pentagon_flags: bool) -> Option<u128> {
        let open = &self.boundary[self.head..];
        let width = 3 + u32::from(pentagon_flags);
        if open.len() as u32 * width > 104 {
            return None;
        }
        let mut key = u128::from(header) << 6 | open.len() as u128;
        for &f in open {
            // Open faces keep between one and eight free edges: valency - 1 fits in three bits.
            let v = self.valency[f as usize];
            if !(1..=8).contains(&v) {
                return None;
            }
            let mut bits = u128::from(v - 1);
            if pentagon_flags {
                bits = bits << 1 | u128::from(self.sizes[f as usize] == 5);
            }
            key = key << width | bits;
        }
        Some(key)
    }

    /// Adds the next face; on error the state is left as before the call.
    pub(crate) fn push(&mut self, size: u8) -> Result<(), WindError> {
        self.push_with::<true>(size)
    }

    /// Adds a face known to wind, because it wound before onto a boundary that winds the same
    /// way (the enumerator's replays): the checks that cannot fail are left out, except in
    /// debug builds.
    pub(crate) fn push_known(&mut self, size: u8) {
        let wound = self.push_with::<{ cfg!(debug_assertions) }>(size);
        debug_assert!(wound.is_ok(), "a known face winds");
    }

    fn push_with<const CHECKED: bool>(&mut self, size: u8) -> Result<(), WindError> {
        let k = self.sizes.len();
        if !(3..=MAX_FACE as u8).contains(&size) || k >= self.total {
            return Err(WindError::BadSize { position: k, size });
        }
        if self.frames.len() == k {
            self.frames.push(Frame::EMPTY);
        }
        let frame = &mut self.frames[k];
        frame.triangles = self.triangles.len() as u32;
        frame.head = self.head as u32;
        frame.n_popped = 0;
        frame.pushed = false;
        frame.n_connected = 0;
        frame.other_back = 0;
        frame.open = self.open;
        self.sizes.push(size);
        self.valency.push(size);
        if self.back.len() == k {
            self.rotation.push([u32::MAX; MAX_FACE]);
            self.back.push(0);
        }
        self.back[k] = 0;
        let result = if k == 0 {
            self.boundary.clear();
            self.head = 0;
            self.append(0);
            Ok(())
        } else if k == 1 {
            self.connect::<CHECKED>(1, 0, false)
                .map(|()| self.append(1))
        } else if k + 1 < self.total {
            self.attach_middle::<CHECKED>(k)
        } else {
            self.attach_last::<CHECKED>(k)
        };
        match result {
            Ok(()) => {
                // Each join takes one free edge from the new face and one from an open face;
                // faces closed by it leave the boundary with none left.
                let joins = self.frames[k].n_connected as u32;
                self.open = self.open + size as u32 - 2 * joins;
            }
            Err(_) => self.pop(),
        }
        result
    }

    /// Removes the last face added.
    pub(crate) fn pop(&mut self) {
        let k = self.sizes.len().checked_sub(1).expect("pop matches a push");
        let frame = &self.frames[k];
        for (i, &c) in frame.connected[..frame.n_connected as usize]
            .iter()
            .enumerate()
        {
            self.valency[c as usize] += 1;
            self.back[c as usize] -= frame.other_back >> i & 1;
        }
        self.sizes.pop();
        self.valency.pop();
        self.triangles.truncate(frame.triangles as usize);
        if frame.pushed {
            self.boundary.pop();
        }
        for &f in frame.popped[..frame.n_popped as usize].iter().rev() {
            self.boundary.push(f);
        }
        self.head = frame.head as usize;
        self.open = frame.open;
    }

    /// Appends the newest face to the boundary, recording it for undo.
    fn append(&mut self, face: u32) {
        self.boundary.push(face);
        self.frames[face as usize].pushed = true;
    }

    /// Joins the newest face `k` to face `other`, recording it for undo; `other` goes to the
    /// backward end of k's row if `own_back`, and k to the opposite end of other's row.
    #[inline(always)]
    fn connect<const CHECKED: bool>(
        &mut self,
        k: u32,
        other: u32,
        own_back: bool,
    ) -> Result<(), WindError> {
        let position = k as usize;
        if CHECKED {
            if self.valency[position] == 0 {
                return Err(WindError::Overfull { position });
            }
            if self.valency[other as usize] == 0 {
                return Err(WindError::Jam { position });
            }
            if self.forbid_adjacent_pentagons
                && self.sizes[position] == 5
                && self.sizes[other as usize] == 5
            {
                return Err(WindError::AdjacentPentagons { position });
            }
            let frame = &self.frames[position];
            if frame.connected[..frame.n_connected as usize].contains(&other) {
                return Err(WindError::Jam { position });
            }
        }
        let frame = &mut self.frames[position];
        let join = frame.n_connected;
        frame.connected[join as usize] = other;
        frame.n_connected += 1;
        let o = other as usize;
        if self.record == Record::Rotations {
            frame.other_back |= u8::from(!own_back) << join;
            Self::place(
                &mut self.rotation[position],
                &mut self.back[position],
                self.sizes[position],
                self.valency[position],
                other,
                own_back,
            );
            Self::place(
                &mut self.rotation[o],
                &mut self.back[o],
                self.sizes[o],
                self.valency[o],
                k,
                !own_back,
            );
        }
        self.valency[position] -= 1;
        self.valency[o] -= 1;
        Ok(())
    }

    /// Writes neighbour `y` at one end of a row that holds `size - valency` entries so far,
    /// `back` of them at the backward end.
    #[inline(always)]
    fn place(
        row: &mut [u32; MAX_FACE],
        back: &mut u8,
        size: u8,
        valency: u8,
        y: u32,
        at_back: bool,
    ) {
        let index = if at_back {
            *back += 1;
            size - *back
        } else {
            size - valency - *back
        };
        // The index is below the face's size, so the mask (a power of two, checked below) changes
        // nothing but drops the bounds check from the hottest join path.
        const _: () = assert!(MAX_FACE.is_power_of_two());
        row[index as usize & (MAX_FACE - 1)] = y;
    }

    fn attach_middle<const CHECKED: bool>(&mut self, k: usize) -> Result<(), WindError> {
        let kk = k as u32;
        if CHECKED && self.boundary.len() - self.head < 2 {
            return Err(WindError::Jam { position: k });
        }
        let mut first = self.boundary[self.head];
        let mut last = *self.boundary.last().expect("boundary has two faces");
        // Around the new face the head comes just before the previous face.
        self.connect::<CHECKED>(kk, last, false)?;
        self.connect::<CHECKED>(kk, first, true)?;
        self.add_triangle([first, last, kk]);
        loop {
            if self.valency[first as usize] == 0 {
                if CHECKED && self.boundary.len() - self.head <= 2 {
                    return Err(WindError::ClosedEarly { position: k });
                }
                self.head += 1;
                let next = self.boundary[self.head];
                self.connect::<CHECKED>(kk, next, true)?;
                self.add_triangle([next, first, kk]);
                first = next;
            } else if self.valency[last as usize] == 0 {
                if CHECKED && self.boundary.len() - self.head <= 2 {
                    return Err(WindError::ClosedEarly { position: k });
                }
                let gone = self.boundary.pop().expect("boundary has faces");
                let frame = &mut self.frames[k];
                frame.popped[frame.n_popped as usize] = gone;
                frame.n_popped += 1;
                let next = *self.boundary.last().expect("boundary has faces");
                self.connect::<CHECKED>(kk, next, false)?;
                self.add_triangle([kk, last, next]);
                last = next;
            } else {
                break;
            }
        }
        if CHECKED && self.valency[k] == 0 {
            return Err(WindError::ClosedEarly { position: k });
        }
        self.append(kk);
        Ok(())
    }

    fn attach_last<const CHECKED: bool>(&mut self, k: usize) -> Result<(), WindError> {
        let kk = k as u32;
        let open = &self.boundary[self.head..];
        if CHECKED
            && (open.len() != self.sizes[k] as usize
                || open.iter().any(|&f| self.valency[f as usize] != 1))
        {
            return Err(WindError::LastFace {
                expected: self.sizes[k] as usize,
                hole: open.len(),
            });
        }
        // Copied out (a face has at most MAX_FACE sides) because joining needs `self` mutably.
        let mut ring = [0u32; MAX_FACE];
        ring[..open.len()].copy_from_slice(open);
        let hole = &ring[..open.len()];
        // The last face's rotation is the hole backwards; each face of the hole has one place
        // left.
        for &f in hole {
            self.connect::<CHECKED>(kk, f, true)?;
        }
        for i in 0..hole.len() {
            let (x, y) = (hole[i], hole[(i + 1) % hole.len()]);
            self.add_triangle([y, x, kk]);
        }
        self.head = self.boundary.len();
        Ok(())
    }
}

/// Winds a whole sequence and returns the dual triangles (one per atom).
pub(crate) fn wind_triangles(sizes: &[u8], ipr: bool) -> Result<Vec<[u32; 3]>, WindError> {
    if sizes.len() < 4 {
        return Err(WindError::BadSize {
            position: sizes.len(),
            size: 0,
        });
    }
    let mut w = Winder::new(sizes.len(), ipr);
    for &s in sizes {
        w.push(s)?;
    }
    Ok(w.triangles)
}

/// Builds the cage (primal graph) from oriented dual triangles: each triangle is an atom, and two
/// atoms are bonded when their triangles share a dual edge.
pub(crate) fn cage_from_triangles(triangles: &[[u32; 3]]) -> Cage {
    let faces = triangles
        .iter()
        .flatten()
        .copied()
        .max()
        .map_or(0, |m| m as usize + 1);
    // owner[a] lists (b, triangle) for every directed dual edge a→b.
    let mut owner: Vec<Vec<(u32, u32)>> = vec![Vec::with_capacity(MAX_FACE); faces];
    for (t, &[a, b, c]) in triangles.iter().enumerate() {
        owner[a as usize].push((b, t as u32));
        owner[b as usize].push((c, t as u32));
        owner[c as usize].push((a, t as u32));
    }
    let across = |x: u32, y: u32| -> u32 {
        owner[y as usize]
            .iter()
            .find(|(to, _)| *to == x)
            .map(|&(_, t)| t)
            .expect("a closed triangulation has both orientations of every edge")
    };
    let rotation = triangles
        .iter()
        .map(|&[a, b, c]| [across(a, b), across(b, c), across(c, a)])
        .collect();
    Cage::from_rotation(rotation).expect("a wound spiral is a valid cage")
}

// ---------------------------------------------------------------------------------------------
// Reading spirals off a cage
// ---------------------------------------------------------------------------------------------

/// The direction in which a spiral turns, relative to the stored rotation of the cage.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Sense {
    Clockwise,
    Anticlockwise,
}

/// Where a spiral starts: a first face, an adjacent second face, and a sense.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub struct Start {
    pub first: FaceId,
    pub second: FaceId,
    pub sense: Sense,
}

/// Reusable buffers for [`Dual::rebuild`].
#[derive(Debug, Default)]
pub(crate) struct RotationScratch {
    succ: Vec<[(u32, u32); MAX_FACE]>,
    filled: Vec<u8>,
    next: Vec<u32>,
}

/// The dual triangulation in a compact form for fast spiral reading.
#[derive(Debug, Clone)]
pub(crate) struct Dual {
    size: Vec<u8>,
    nbr: Vec<[u32; MAX_FACE]>,
}

impl Dual {
    pub(crate) fn from_cage(cage: &Cage) -> Dual {
        let mut size = Vec::with_capacity(cage.face_count());
        let mut nbr = Vec::with_capacity(cage.face_count());
        for ring in cage.dual() {
            let mut a = [u32::MAX; MAX_FACE];
            a[..ring.len()].copy_from_slice(ring);
            size.push(ring.len() as u8);
            nbr.push(a);
        }
        Dual { size, nbr }
    }

    /// From wound triangles: in triangle (a, b, c), c follows b around a.
    pub(crate) fn from_triangles(sizes: &[u8], triangles: &[[u32; 3]]) -> Dual {
        let mut dual = Dual {
            size: Vec::new(),
            nbr: Vec::new(),
        };
        dual.rebuild(sizes, triangles, &mut RotationScratch::default());
        dual
    }

    /// As [`Dual::from_triangles`], reusing this dual's buffers and `scratch`.
    pub(crate) fn rebuild(
        &mut self,
        sizes: &[u8],
        triangles: &[[u32; 3]],
        scratch: &mut RotationScratch,
    ) {
        let f = sizes.len();
        // succ[x] lists pairs (y, z): z follows y around x.
        let RotationScratch { succ, filled, next } = scratch;
        succ.resize(f, [(u32::MAX, 0); MAX_FACE]);
        filled.clear();
        filled.resize(f, 0);
        next.resize(f, 0);
        self.size.clear();
        self.size.extend_from_slice(sizes);
        for &[a, b, c] in triangles {
            for (x, y, z) in [(a, b, c), (b, c, a), (c, a, b)] {
                let k = &mut filled[x as usize];
                succ[x as usize][*k as usize] = (y, z);
                *k += 1;
            }
        }
        // Rows are rewritten up to each face's size below, and nothing reads past that.
        self.nbr.resize(f, [u32::MAX; MAX_FACE]);
        for x in 0..f {
            let d = sizes[x] as usize;
            let pairs = &succ[x][..d];
            // Each neighbour of x starts exactly one pair, so `next` (indexed by face) holds
            // x's rotation; entries left by other faces are never read.
            for &(y, z) in pairs {
                next[y as usize] = z;
            }
            let mut cur = pairs[0].0;
            for slot in self.nbr[x].iter_mut().take(d) {
                *slot = cur;
                cur = next[cur as usize];
            }
            debug_assert_eq!(cur, pairs[0].0, "rotation closes around face {x}");
        }
    }

    /// As [`Dual::rebuild`] from a winder wound to its end, from the rotations it keeps (the
    /// enumerator calls this once per completed sequence).
    pub(crate) fn assign(&mut self, sizes: &[u8], rotations: &[[u32; MAX_FACE]]) {
        self.size.clear();
        self.size.extend_from_slice(sizes);
        self.nbr.clear();
        self.nbr.extend_from_slice(rotations);
    }

    pub(crate) fn faces(&self) -> usize {
        self.size.len()
    }

    /// True if two pentagons share an edge.
    pub(crate) fn pentagons_touch(&self) -> bool {
        (0..self.faces() as u32).any(|x| {
            self.size[x as usize] == 5
                && self
                    .neighbours(x)
                    .iter()
                    .any(|&y| self.size[y as usize] == 5)
        })
    }

    fn neighbours(&self, x: u32) -> &[u32] {
        &self.nbr[x as usize][..self.size[x as usize] as usize]
    }

    /// Every start (first face, second face, sense) whose first face has exactly `size`
    /// edges; callers try sizes in increasing order and stop after the first that completes.
    fn starts_of_size(&self, size: u8) -> impl Iterator<Item = Start> + '_ {
        (0..self.faces() as u32)
            .filter(move |&f| self.size[f as usize] == size)
            .flat_map(move |f| {
                self.neighbours(f).iter().flat_map(move |&g| {
                    [Sense::Anticlockwise, Sense::Clockwise].map(|sense| Start {
                        first: FaceId(f),
                        second: FaceId(g),
                        sense,
                    })
                })
            })
    }
}

/// How a spiral read from one start compares with a reference sequence.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Outcome {
    /// The start completes and its sequence is smaller.
    Smaller,
    /// The start completes and reproduces the reference exactly.
    Equal,
    /// The sequence is larger (decided at the first difference; it may or may not complete).
    Larger,
    /// The start does not complete.
    Jam,
}

/// Scratch space for reading spirals; reused across starts to avoid allocation.
#[derive(Debug, Default)]
pub(crate) struct Reader {
    /// Per face: the number of its neighbours not yet visited, and [`VISITED`] once it is
    /// visited itself. One byte for both, as a visit updates both for every neighbour.
    state: Vec<u8>,
    boundary: Vec<u32>,
    pub(crate) order: Vec<u32>,
    /// Starts sorted by their first ring, for [`test_canonical`].
    smaller: Vec<Start>,
    equal: Vec<Start>,
    /// The start that showed the previous sequence not canonical, tried first by
    /// [`test_canonical`].
    rejector: Option<Start>,
}

/// The flag in [`Reader::state`] of a visited face (face sizes stay below it).
const VISITED: u8 = 0x80;

impl Reader {
    /// Plain arrays reset per read: a cage has at most a few hundred faces, and indexing them
    /// directly is cheaper than tagging entries with a read counter.
    fn reset(&mut self, dual: &Dual) {
        self.state.clear();
        self.state.extend_from_slice(&dual.size);
        self.boundary.clear();
        self.order.clear();
    }

    fn visited(&self, x: u32) -> bool {
        self.state[x as usize] & VISITED != 0
    }

    fn rem(&self, x: u32) -> u8 {
        self.state[x as usize] & !VISITED
    }

    /// Marks `x` visited; returns how many of its neighbours were already visited.
    fn visit<const ORDER: bool>(&mut self, dual: &Dual, x: u32) -> usize {
        let state = &mut self.state;
        state[x as usize] |= VISITED;
        if ORDER {
            self.order.push(x);
        }
        let mut seen = 0;
        for &y in dual.neighbours(x) {
            // Every neighbour of y is counted in its remainder until visited, so this never
            // borrows from the flag.
            let s = &mut state[y as usize];
            *s -= 1;
            seen += usize::from(*s >> 7);
        }
        seen
    }

    /// Reads the spiral from `start`, comparing against `reference` (if given) as it goes.
    ///
    /// With a reference, returns `Larger` at the first position where this spiral is bigger;
    /// a smaller prefix is followed to the end because a jam later would disqualify it. Without
    /// a reference the spiral is read to the end (`Equal` means it completed; the face order is
    /// in `self.order`).
    pub(crate) fn read(&mut self, dual: &Dual, start: Start, reference: Option<&[u8]>) -> Outcome {
        self.read_with::<true>(dual, start, reference)
    }

    /// As [`Reader::read`] against `reference`, without recording the face order: the
    /// canonicity test needs only the outcome.
    fn compare(&mut self, dual: &Dual, start: Start, reference: &[u8]) -> Outcome {
        self.read_with::<false>(dual, start, Some(reference))
    }

    fn read_with<const ORDER: bool>(
        &mut self,
        dual: &Dual,
        start: Start,
        reference: Option<&[u8]>,
    ) -> Outcome {
        let f = dual.faces();
        self.reset(dual);
        let mut state = Ordering::Equal;
        let (a, b) = (start.first.0, start.second.0);
        let Some(pos) = dual.neighbours(a).iter().position(|&x| x == b) else {
            return Outcome::Jam;
        };
        for (k, &x) in [a, b].iter().enumerate() {
            if let (Some(r), Ordering::Equal) = (reference, state) {
                state = dual.size[x as usize].cmp(&r[k]);
                if state == Ordering::Greater {
                    return Outcome::Larger;
                }
            }
            self.visit::<ORDER>(dual, x);
            self.boundary.push(x);
        }
        let mut head = 0usize;
        let d = dual.size[a as usize] as usize;
        let third = match start.sense {
            Sense::Anticlockwise => dual.nbr[a as usize][(pos + 1) % d],
            Sense::Clockwise => dual.nbr[a as usize][(pos + d - 1) % d],
        };
        for k in 2..f {
            let next = if k == 2 {
                third
            } else {
                match self.apex(dual, head) {
                    Some(x) => x,
                    None => return Outcome::Jam,
                }
            };
            if self.visited(next) {
                return Outcome::Jam;
            }
            if let (Some(r), Ordering::Equal) = (reference, state) {
                state = dual.size[next as usize].cmp(&r[k]);
                if state == Ordering::Greater {
                    return Outcome::Larger;
                }
            }
            let open = self.boundary.len() - head;
            let seen = self.visit::<ORDER>(dual, next);
            if k + 1 == f {
                if open != seen || seen != dual.size[next as usize] as usize {
                    return Outcome::Jam;
                }
                break;
            }
            // Close the faces at both ends of the boundary whose neighbours are all placed;
            // each closure is one more join for the new face, as in winding.
            let mut joins = 2;
            loop {
                let open_now = self.boundary.len() - head;
                if open_now > 2 && self.rem(self.boundary[head]) == 0 {
                    head += 1;
                    joins += 1;
                } else if open_now > 2 && self.rem(*self.boundary.last().expect("open")) == 0 {
                    self.boundary.pop();
                    joins += 1;
                } else {
                    break;
                }
            }
            if joins != seen || self.rem(next) == 0 {
                return Outcome::Jam;
            }
            self.boundary.push(next);
        }
        match state {
            Ordering::Less => Outcome::Smaller,
            _ => Outcome::Equal,
        }
    }

    /// The unvisited face adjacent to both the earliest open face and the previous face.
    fn apex(&self, dual: &Dual, head: usize) -> Option<u32> {
        let first = self.boundary[head];
        let last = *self.boundary.last()?;
        let ring = dual.neighbours(first);
        let d = ring.len();
        let p = ring.iter().position(|&x| x == last)?;
        // Neighbours on either side of `last`; no `%`, as a division here is a measurable
        // part of reading a spiral.
        let u = ring[if p + 1 == d { 0 } else { p + 1 }];
        let v = ring[if p == 0 { d - 1 } else { p - 1 }];
        match (self.visited(u), self.visited(v)) {
            (false, true) => Some(u),
            (true, false) => Some(v),
            _ => None,
        }
    }
}

/// Result of canonicity test on a freshly wound sequence.
pub(crate) enum Canonicity {
    NotCanonical,
    /// Canonical, with this many starts reproducing it (the automorphism group order).
    Canonical {
        automorphisms: u32,
    },
}

/// Tests whether `sizes` (which wound into `dual`) is the canonical spiral of its cage, trying
/// only starts whose first face is no larger than the sequence's first face.
pub(crate) fn test_canonical(dual: &Dual, sizes: &[u8], reader: &mut Reader) -> Canonicity {
    // Consecutive sequences of the search share their first faces (about half of them for
    // C70), and a face's id is its position in the sequence, so the start that disqualified
    // the previous sequence usually disqualifies this one as well. Any start whose spiral
    // completes smaller proves the sequence not canonical, so trying it first is exact, and
    // when it works the starts need not be sorted at all (that sorting was a tenth of all
    // C80's time).
    if let Some(start) = reader.rejector {
        if (start.first.0 as usize) < dual.faces()
            && reader.compare(dual, start, sizes) == Outcome::Smaller
        {
            return Canonicity::NotCanonical;
        }
    }
    // A spiral's first terms are its first face and that face's ring of neighbours, so most
    // starts are settled without reading: a larger ring can only give a larger spiral. Starts
    // with a smaller ring are read first because they usually disqualify the sequence at once
    // (unless their spiral jams); starts with an equal ring decide the rest.
    let mut smaller = std::mem::take(&mut reader.smaller);
    let mut equal = std::mem::take(&mut reader.equal);
    smaller.clear();
    equal.clear();
    let verdict = test_starts(dual, sizes, reader, &mut smaller, &mut equal);
    reader.smaller = smaller;
    reader.equal = equal;
    verdict
}

/// A pentagon's ring of pentagons and hexagons as five bits, first neighbour highest and a
/// hexagon a one, so that comparing codes compares the rings term by term.
fn pentagon_ring_code(ring: &[u8]) -> Option<u8> {
    if ring.len() != 5 {
        return None;
    }
    ring.iter().try_fold(0u8, |code, &s| match s {
        5 => Some(code << 1),
        6 => Some(code << 1 | 1),
        _ => None,
    })
}

/// For each pentagon ring code, the ring read from each neighbour `pos` (the ring's own first
/// neighbour is 0) anticlockwise and clockwise, as codes: the enumerator compares these with the
/// sequence's first ring instead of comparing the face sizes one by one.
const PENTAGON_RING_READINGS: [[[u8; 2]; 5]; 32] = {
    let mut table = [[[0u8; 2]; 5]; 32];
    let mut code = 0;
    while code < 32 {
        let mut pos = 0;
        while pos < 5 {
            let (mut anticlockwise, mut clockwise) = (0u8, 0u8);
            let mut i = 0;
            while i < 5 {
                anticlockwise = anticlockwise << 1 | (code >> (4 - (pos + i) % 5)) as u8 & 1;
                clockwise = clockwise << 1 | (code >> (4 - (pos + 5 - i) % 5)) as u8 & 1;
                i += 1;
            }
            table[code][pos] = [anticlockwise, clockwise];
            pos += 1;
        }
        code += 1;
    }
    table
};

/// For each pentagon ring code, the smallest of its readings: a pentagon whose smallest reading
/// exceeds the sequence's own first ring can be passed over without looking at its ten starts.
const SMALLEST_PENTAGON_RING: [u8; 32] = {
    let mut table = [31u8; 32];
    let mut code = 0;
    while code < 32 {
        let mut pos = 0;
        while pos < 5 {
            let [anticlockwise, clockwise] = PENTAGON_RING_READINGS[code][pos];
            if anticlockwise < table[code] {
                table[code] = anticlockwise;
            }
            if clockwise < table[code] {
                table[code] = clockwise;
            }
            pos += 1;
        }
        code += 1;
    }
    table
};

fn test_starts(
    dual: &Dual,
    sizes: &[u8],
    reader: &mut Reader,
    smaller: &mut Vec<Start>,
    equal: &mut Vec<Start>,
) -> Canonicity {
    for f in 0..dual.faces() as u32 {
        let d = dual.size[f as usize] as usize;
        if d as u8 > sizes[0] {
            continue;
        }
        let ring = dual.neighbours(f);
        // The ring's sizes twice over, forwards and (below, where needed) backwards, so that
        // the ring read from any neighbour in either sense is one contiguous slice.
        let mut forward = [0u8; 2 * MAX_FACE];
        for (i, &g) in ring.iter().enumerate() {
            forward[i] = dual.size[g as usize];
            forward[i + d] = forward[i];
        }
        // A cage has more faces than any face has neighbours; `n` only guards the slice.
        let n = d.min(sizes.len() - 1);
        let want = &sizes[1..=n];
        let mut classify = |pos: usize, sense: Sense, order: Ordering| {
            let start = Start {
                first: FaceId(f),
                second: FaceId(ring[pos]),
                sense,
            };
            match order {
                Ordering::Less => smaller.push(start),
                Ordering::Equal => equal.push(start),
                Ordering::Greater => {}
            }
        };
        if d as u8 == sizes[0] {
            // Pentagon starts of a fullerene: compare five-bit ring codes, not face sizes.
            if let (Some(ring_code), Some(want_code)) =
                (pentagon_ring_code(&forward[..d]), pentagon_ring_code(want))
            {
                if SMALLEST_PENTAGON_RING[ring_code as usize] > want_code {
                    continue;
                }
                for (pos, readings) in PENTAGON_RING_READINGS[ring_code as usize]
                    .iter()
                    .enumerate()
                {
                    classify(pos, Sense::Anticlockwise, readings[0].cmp(&want_code));
                    classify(pos, Sense::Clockwise, readings[1].cmp(&want_code));
                }
                continue;
            }
        }
        let mut backward = [0u8; 2 * MAX_FACE];
        for i in 0..2 * d {
            backward[2 * d - 1 - i] = forward[i];
        }
        for pos in 0..d {
            for (sense, terms) in [
                (Sense::Anticlockwise, &forward[pos..pos + n]),
                (Sense::Clockwise, &backward[d - 1 - pos..d - 1 - pos + n]),
            ] {
                classify(
                    pos,
                    sense,
                    (d as u8).cmp(&sizes[0]).then_with(|| terms.cmp(want)),
                );
            }
        }
    }
    for &start in smaller.iter() {
        if reader.compare(dual, start, sizes) == Outcome::Smaller {
            reader.rejector = Some(start);
            return Canonicity::NotCanonical;
        }
    }
    let mut automorphisms = 0;
    for &start in equal.iter() {
        match reader.compare(dual, start, sizes) {
            Outcome::Smaller => {
                reader.rejector = Some(start);
                return Canonicity::NotCanonical;
            }
            Outcome::Equal => automorphisms += 1,
            Outcome::Larger | Outcome::Jam => {}
        }
    }
    Canonicity::Canonical { automorphisms }
}

/// One symmetry of a cage: a permutation of faces and of atoms.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Automorphism {
    /// `faces[f]` is the image of face f.
    pub faces: Vec<u32>,
    /// `atoms[v]` is the image of atom v.
    pub atoms: Vec<u32>,
    /// False for orientation-reversing (mirror-type) operations.
    pub proper: bool,
}

/// The canonical spiral of a cage and everything read off with it.
#[derive(Debug, Clone)]
pub struct Canonical {
    pub spiral: Spiral,
    /// The start that gives the canonical spiral (the first one found).
    pub start: Start,
    /// All symmetries of the cage, identity first.
    pub automorphisms: Vec<Automorphism>,
}

/// Reads the spiral from one start; `None` if it jams.
pub fn spiral_from(cage: &Cage, start: Start) -> Option<Spiral> {
    let dual = Dual::from_cage(cage);
    let mut r = Reader::default();
    match r.read(&dual, start, None) {
        Outcome::Equal => Some(Spiral::from_wound(
            r.order.iter().map(|&x| dual.size[x as usize]).collect(),
        )),
        _ => None,
    }
}

/// The best sequence so far, its first start, and the face orders of every start giving it.
type Best = (Vec<u8>, Start, Vec<(Start, Vec<u32>)>);

/// The canonical (lexicographically smallest) spiral of a cage with its automorphisms, or
/// `None` if no start completes (cages without any face spiral exist from 380 atoms on).
pub fn canonical_spiral(cage: &Cage) -> Option<Canonical> {
    let dual = Dual::from_cage(cage);
    let mut reader = Reader::default();
    let mut best: Option<Best> = None;
    let mut sizes: Vec<u8> = dual.size.clone();
    sizes.sort_unstable();
    sizes.dedup();
    for &s in &sizes {
        for start in dual.starts_of_size(s) {
            let reference = best.as_ref().map(|b| b.0.as_slice());
            match reader.read(&dual, start, reference) {
                Outcome::Smaller | Outcome::Equal if reference.is_none() => {
                    let seq = reader
                        .order
                        .iter()
                        .map(|&x| dual.size[x as usize])
                        .collect();
                    best = Some((seq, start, vec![(start, reader.order.clone())]));
                }
                Outcome::Smaller => {
                    let seq = reader
                        .order
                        .iter()
                        .map(|&x| dual.size[x as usize])
                        .collect();
                    best = Some((seq, start, vec![(start, reader.order.clone())]));
                }
                Outcome::Equal => {
                    if let Some(b) = best.as_mut() {
                        b.2.push((start, reader.order.clone()));
                    }
                }
                Outcome::Larger | Outcome::Jam => {}
            }
        }
        if best.is_some() {
            break;
        }
    }
    let (seq, start, orders) = best?;
    let automorphisms = automorphisms_from_orders(cage, start, &orders);
    Some(Canonical {
        spiral: Spiral::from_wound(seq),
        start,
        automorphisms,
    })
}

/// Turns the face orders of all starts that reproduce the canonical spiral into permutations:
/// the symmetry maps the i-th face of the reference spiral to the i-th face of the other.
fn automorphisms_from_orders(
    cage: &Cage,
    reference: Start,
    orders: &[(Start, Vec<u32>)],
) -> Vec<Automorphism> {
    let (_, base) = &orders[0];
    let mut atom_by_faces = std::collections::HashMap::with_capacity(cage.atoms());
    for (v, key) in atom_face_triples(cage).into_iter().enumerate() {
        atom_by_faces.insert(key, v as u32);
    }
    let triples = atom_face_triples(cage);
    orders
        .iter()
        .map(|(start, order)| {
            let mut faces = vec![0u32; order.len()];
            for (i, &f) in base.iter().enumerate() {
                faces[f as usize] = order[i];
            }
            let atoms = triples
                .iter()
                .map(|t| {
                    let mut img = t.map(|f| faces[f as usize]);
                    img.sort_unstable();
                    atom_by_faces[&img]
                })
                .collect();
            Automorphism {
                faces,
                atoms,
                proper: start.sense == reference.sense,
            }
        })
        .collect()
}

/// For every atom, the sorted triple of faces around it (unique in a polyhedron).
fn atom_face_triples(cage: &Cage) -> Vec<[u32; 3]> {
    let mut t = vec![[u32::MAX; 3]; cage.atoms()];
    let mut n = vec![0usize; cage.atoms()];
    for (fi, face) in cage.faces().iter().enumerate() {
        for &v in face {
            t[v as usize][n[v as usize]] = fi as u32;
            n[v as usize] += 1;
        }
    }
    for x in &mut t {
        x.sort_unstable();
    }
    t
}

#[cfg(test)]
mod tests {
    use super::*;

    // from memory: C60-Ih canonical spiral, Fowler & Manolopoulos, An Atlas of Fullerenes (1995)
    const C60_IH: [u64; 12] = [1, 7, 9, 11, 13, 15, 18, 20, 22, 24, 26, 32];
    // from memory: C70-D5h canonical spiral, same Atlas
    const C70_D5H: [u64; 12] = [1, 7, 9, 11, 13, 15, 27, 29, 31, 33, 35, 37];

    #[test]
    fn c60_winds_to_truncated_icosahedron() {
        let s = Spiral::from_pentagon_indices(60, &C60_IH).unwrap();
        let c = s.to_cage();
        assert_eq!(c.atoms(), 60);
        assert_eq!(c.edges().len(), 90);
        assert_eq!(c.face_size_counts()[5], 12);
        assert_eq!(c.face_size_counts()[6], 20);
        assert!(c.is_ipr());
    }

    #[test]
    fn c60_canonical_spiral_and_120_automorphisms() {
        // Atlas (memory): C60-Ih has the spiral above and the full icosahedral group, order 120.
        let c = Spiral::from_pentagon_indices(60, &C60_IH)
            .unwrap()
            .to_cage();
        let canon = canonical_spiral(&c).unwrap();
        assert_eq!(
            canon.spiral.pentagon_indices(),
            C60_IH.map(|x| x as u32).to_vec()
        );
        assert_eq!(canon.automorphisms.len(), 120);
        assert_eq!(canon.automorphisms.iter().filter(|a| a.proper).count(), 60);
    }

    #[test]
    fn c70_has_20_automorphisms() {
        // Atlas (memory): C70-D5h, group order 20.
        let c = Spiral::from_pentagon_indices(70, &C70_D5H)
            .unwrap()
            .to_cage();
        let canon = canonical_spiral(&c).unwrap();
        assert_eq!(
            canon.spiral.pentagon_indices(),
            C70_D5H.map(|x| x as u32).to_vec()
        );
        assert_eq!(canon.automorphisms.len(), 20);
    }

    #[test]
    fn automorphisms_preserve_bonds() {
        let c = Spiral::from_pentagon_indices(70, &C70_D5H)
            .unwrap()
            .to_cage();
        for a in canonical_spiral(&c).unwrap().automorphisms {
            for &[u, v] in c.edges() {
                let (x, y) = (a.atoms[u as usize], a.atoms[v as usize]);
                assert!(c
                    .neighbours(crate::cage::VertexId(x))
                    .contains(&crate::cage::VertexId(y)));
            }
        }
    }

    #[test]
    fn bad_spirals_are_rejected_with_reasons() {
        assert!(matches!(
            Spiral::from_pentagon_indices(60, &[1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12]),
            Err(SpiralError::DoesNotClose(_))
        ));
        assert!(matches!(
            Spiral::from_pentagon_indices(60, &[1, 2, 3]),
            Err(SpiralError::WrongCount { .. })
        ));
        assert!(matches!(
            Spiral::from_pentagon_indices(61, &C60_IH),
            Err(SpiralError::BadAtoms { .. })
        ));
        assert!(matches!(
            Spiral::from_pentagon_indices(22, &C60_IH),
            Err(SpiralError::BadAtoms { .. })
        ));
        let mut big = C60_IH;
        big[11] = 40;
        assert!(matches!(
            Spiral::from_pentagon_indices(60, &big),
            Err(SpiralError::OutOfRange { .. })
        ));
    }

    #[test]
    fn open_valency_is_kept_through_pushes_pops_and_failures() {
        // The winder keeps the boundary's free valency as faces come and go; it must equal the
        // sum over the open faces at every step, including after pushes that fail and undo.
        let open_sum = |w: &Winder| -> u32 {
            w.boundary[w.head..]
                .iter()
                .map(|&f| u32::from(w.valency[f as usize]))
                .sum()
        };
        let spirals = crate::enumerate::fullerene_spirals(44);
        let mut failures = 0;
        for spiral in &spirals {
            let mut w = Winder::new(spiral.sizes().len(), false);
            for &size in spiral.sizes() {
                // Try the other size first: it often fails, and must leave no trace.
                let other = if size == 5 { 6 } else { 5 };
                if w.push(other).is_ok() {
                    w.pop();
                } else {
                    failures += 1;
                }
                assert_eq!(w.open_valency(), open_sum(&w), "{spiral}");
                w.push(size).unwrap();
                assert_eq!(w.open_valency(), open_sum(&w), "{spiral}");
            }
            assert_eq!(w.open_valency(), 0);
        }
        assert!(failures > 0);
    }

    #[test]
    fn dodecahedron_winds() {
        let s = Spiral::from_sizes(vec![5; 12]).unwrap();
        let c = s.to_cage();
        assert_eq!(c.atoms(), 20);
        let canon = canonical_spiral(&c).unwrap();
        // Ih: 120 symmetries (the dodecahedron, a Platonic solid).
        assert_eq!(canon.automorphisms.len(), 120);
    }

    #[test]
    fn pentagon_ring_table_is_the_smallest_reading() {
        // Brute force over the 32 rings of pentagons and hexagons: read each ring from every
        // neighbour in both senses as face sizes and keep the lexicographically smallest.
        for code in 0u8..32 {
            let ring: Vec<u8> = (0..5).map(|j| 5 + (code >> (4 - j) & 1)).collect();
            let mut readings = Vec::new();
            for pos in 0..5 {
                readings.push((0..5).map(|i| ring[(pos + i) % 5]).collect::<Vec<u8>>());
                readings.push((0..5).map(|i| ring[(pos + 5 - i) % 5]).collect::<Vec<u8>>());
            }
            let smallest = readings.into_iter().min().unwrap();
            assert_eq!(pentagon_ring_code(&ring), Some(code));
            assert_eq!(
                Some(SMALLEST_PENTAGON_RING[code as usize]),
                pentagon_ring_code(&smallest),
                "ring {ring:?}"
            );
        }
        assert_eq!(pentagon_ring_code(&[5, 6, 6, 6]), None);
        assert_eq!(pentagon_ring_code(&[5, 6, 7, 6, 6]), None);
    }

    /// Why the enumerator does not prune a prefix as soon as a pentagon closed inside it has a
    /// smaller ring than the first face's: the smaller start can jam later, and then the
    /// sequence may still be canonical. For every C60 isomer, each pentagon start whose first
    /// ring is smaller than the canonical spiral's must jam (else the canonical spiral would be
    /// wrong), and some isomers do have such starts (measured: 10 of 1,812), so the cut would
    /// lose them.
    #[test]
    fn starts_with_a_smaller_first_ring_jam_and_would_make_a_ring_cut_lose_cages() {
        let mut reader = Reader::default();
        let mut cages_with_a_jamming_smaller_ring = 0;
        for spiral in crate::enumerate::fullerene_spirals(60) {
            let sizes = spiral.sizes();
            let dual = Dual::from_triangles(sizes, &wind_triangles(sizes, false).unwrap());
            let mut found = false;
            for start in dual.starts_of_size(5).collect::<Vec<_>>() {
                let ring = dual.neighbours(start.first.0);
                let pos = ring.iter().position(|&g| g == start.second.0).unwrap();
                let first_ring: Vec<u8> = (0..5)
                    .map(|i| match start.sense {
                        Sense::Anticlockwise => ring[(pos + i) % 5],
                        Sense::Clockwise => ring[(pos + 5 - i) % 5],
                    })
                    .map(|g| dual.size[g as usize])
                    .collect();
                if first_ring.as_slice() < &sizes[1..6] {
                    assert_eq!(
                        reader.read(&dual, start, Some(sizes)),
                        Outcome::Jam,
                        "{spiral}: a start with a smaller first ring completes"
                    );
                    found = true;
                }
            }
            cages_with_a_jamming_smaller_ring += usize::from(found);
        }
        assert!(cages_with_a_jamming_smaller_ring > 0);
    }

    /// Every start on a pentagon of `spiral`'s cage whose spiral completes, with that spiral's
    /// face sizes.
    fn completing_pentagon_starts(spiral: &Spiral) -> Vec<(Start, Vec<u8>)> {
        let dual = Dual::from_cage(&spiral.to_cage());
        let mut reader = Reader::default();
        let mut found = Vec::new();
        for start in dual.starts_of_size(5) {
            if reader.read(&dual, start, None) == Outcome::Equal {
                let sizes = reader.order.iter().map(|&x| dual.size[x as usize]);
                found.push((start, sizes.collect()));
            }
        }
        found
    }

    /// The canonicity test first tries the start that rejected the previous sequence. Over every
    /// completing pentagon-start spiral of every C50 isomer, a reader carrying that start from
    /// one sequence to the next must give the verdict of a fresh reader, and a sequence is
    /// canonical exactly when it is its cage's canonical spiral.
    #[test]
    fn the_remembered_rejecting_start_never_changes_a_verdict() {
        let verdict = |c: Canonicity| match c {
            Canonicity::NotCanonical => None,
            Canonicity::Canonical { automorphisms } => Some(automorphisms),
        };
        let mut carried = Reader::default();
        let (mut sequences, mut canonical) = (0, 0);
        for spiral in crate::enumerate::fullerene_spirals(50) {
            for (start, sizes) in completing_pentagon_starts(&spiral) {
                let wound = Dual::from_triangles(&sizes, &wind_triangles(&sizes, false).unwrap());
                let fresh = verdict(test_canonical(&wound, &sizes, &mut Reader::default()));
                let with_carried = verdict(test_canonical(&wound, &sizes, &mut carried));
                assert_eq!(with_carried, fresh, "{spiral}: start {start:?}");
                assert_eq!(fresh.is_some(), sizes == spiral.sizes(), "{spiral}");
                sequences += 1;
                canonical += usize::from(fresh.is_some());
            }
        }
        assert!(carried.rejector.is_some());
        // Each canonical sequence is met once per start reproducing it.
        assert!(
            sequences > 10 * canonical && canonical > 271,
            "{sequences} / {canonical}"
        );
    }

    /// The rotations a winder keeps join by join equal those rebuilt from its triangles, after
    /// any history of pushes and pops: consecutive sequences are wound by popping back to
    /// their common prefix, as the enumerator does. Every completing pentagon start of every
    /// C50 isomer, and every sequence of 4-6 cages with 24 to 40 atoms.
    #[test]
    fn kept_rotations_equal_the_rotations_rebuilt_from_triangles() {
        let mut sequences: Vec<Vec<u8>> = Vec::new();
        for spiral in crate::enumerate::fullerene_spirals(50) {
            sequences.extend(
                completing_pentagon_starts(&spiral)
                    .into_iter()
                    .map(|(_, s)| s),
            );
        }
        for atoms in (24..=40).step_by(2) {
            let spec = crate::enumerate::Spec {
                atoms,
                face_set: FaceSet::SquareHexagon,
                ipr: false,
                all_starts: true,
            };
            let opts = crate::enumerate::Options {
                threads: 1,
                shard: None,
            };
            crate::enumerate::enumerate(
                &spec,
                &opts,
                |_, _| {},
                |iso| sequences.push(iso.spiral.sizes().to_vec()),
            )
            .unwrap();
        }
        let same_cycle = |a: &[u32], b: &[u32]| {
            a.len() == b.len()
                && (0..a.len()).any(|s| (0..a.len()).all(|i| a[(s + i) % a.len()] == b[i]))
        };
        let mut winder = Winder::new(0, false);
        let mut previous: &[u8] = &[];
        let mut checked = 0;
        for sizes in &sequences {
            if sizes.len() != previous.len() {
                winder = Winder::new(sizes.len(), false).recording(Record::Rotations);
                previous = &[];
            }
            let common = sizes
                .iter()
                .zip(previous)
                .take_while(|(a, b)| a == b)
                .count();
            while winder.sizes().len() > common {
                winder.pop();
            }
            for &s in &sizes[winder.sizes().len()..] {
                winder.push(s).unwrap();
            }
            let rebuilt = Dual::from_triangles(sizes, &wind_triangles(sizes, false).unwrap());
            let mut kept = Dual::from_triangles(&[], &[]);
            kept.assign(sizes, winder.rotations());
            for x in 0..sizes.len() as u32 {
                assert!(
                    same_cycle(kept.neighbours(x), rebuilt.neighbours(x)),
                    "{sizes:?}: face {x}: kept {:?}, rebuilt {:?}",
                    kept.neighbours(x),
                    rebuilt.neighbours(x)
                );
            }
            previous = sizes;
            checked += 1;
        }
        // 271 C50 isomers (OEIS A007894), most with dozens of completing starts, and the 4-6
        // cages: a guard that the sequences were really wound, not a published value.
        assert!(checked > 5000, "{checked} sequences");
    }
}
