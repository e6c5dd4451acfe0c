//! The cage model: a cubic plane graph together with its faces.
//!
//! A carbon cage is a 3-connected cubic plane graph; by Whitney's theorem its embedding is unique
//! up to reflection, so the rotation system (the cyclic order of neighbours at every vertex) fixes
//! the faces. [`Cage`] stores that rotation system, the faces traced from it, the edge list and the
//! dual (faces with their neighbouring faces in cyclic order).
//!
//! Nothing here assumes pentagons and hexagons: any face size from 3 to 8 is accepted, and which
//! sizes a cage family may use is the business of [`FaceSet`]. This module does no I/O.

use std::fmt;

/// Largest face size a cage may have (octagons); spiral arrays are sized from it.
pub const MAX_FACE: usize = 8;

/// Index of an atom (a vertex of the cage graph).
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct VertexId(pub u32);

/// Index of a face (a ring) of the cage.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct FaceId(pub u32);

/// Index of a bond (an edge) in [`Cage::edges`].
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct EdgeId(pub u32);

impl VertexId {
    pub fn index(self) -> usize {
        self.0 as usize
    }
}
impl FaceId {
    pub fn index(self) -> usize {
        self.0 as usize
    }
}
impl EdgeId {
    pub fn index(self) -> usize {
        self.0 as usize
    }
}

/// Which ring sizes a family of cages may use.
///
/// Euler's formula for a cubic polyhedron, sum over faces of (6 - size) = 12, ties the counts
/// together; the enumerator uses it as its budget. So a {4,6} cage has exactly six squares, a
/// {4,5,6} cage 2 f4 + f5 = 12, and a {5,6,7} cage f5 - f7 = 12: with heptagons the number of
/// pentagons at a given size is not fixed, so that family carries a bound on the heptagons
/// (domain notes §9), and cages with different bounds are different lists.
#[derive(
    Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, serde::Serialize, serde::Deserialize,
)]
pub enum FaceSet {
    /// Pentagons and hexagons: the classical fullerenes.
    Fullerene,
    /// Squares and hexagons (models of boron-nitride cages).
    SquareHexagon,
    /// Squares, pentagons and hexagons.
    SquarePentagonHexagon,
    /// Pentagons, hexagons and at most `heptagons` heptagons (carbon cages with heptagons).
    /// Appended last, so the catalogue's enum codes of the other sets do not change.
    PentagonHexagonHeptagon { heptagons: u8 },
}

/// Largest heptagon bound accepted: far beyond the one or two heptagons studied in practice,
/// and it keeps the names short.
pub const MAX_HEPTAGONS: u8 = 12;

impl FaceSet {
    /// The allowed face sizes in increasing order.
    pub fn sizes(self) -> &'static [u8] {
        match self {
            FaceSet::Fullerene => &[5, 6],
            FaceSet::SquareHexagon => &[4, 6],
            FaceSet::SquarePentagonHexagon => &[4, 5, 6],
            FaceSet::PentagonHexagonHeptagon { .. } => &[5, 6, 7],
        }
    }

    pub fn allows(self, size: u8) -> bool {
        self.sizes().contains(&size)
    }

    /// Most heptagons a cage of this set may have (0 for the sets without heptagons).
    pub fn heptagon_bound(self) -> u8 {
        match self {
            FaceSet::PentagonHexagonHeptagon { heptagons } => heptagons,
            _ => 0,
        }
    }

    /// The face size whose faces may not share an edge under the set's isolation rule: pentagons
    /// for fullerenes and heptagon cages (the isolated-pentagon rule), squares for the sets with
    /// squares (the isolated-square rule of BN cages; domain notes §9).
    pub fn isolated_size(self) -> u8 {
        match self {
            FaceSet::Fullerene | FaceSet::PentagonHexagonHeptagon { .. } => 5,
            FaceSet::SquareHexagon | FaceSet::SquarePentagonHexagon => 4,
        }
    }

    /// The family's name as written on the command line: `fullerene`, `4-6`, `4-5-6` or
    /// `5-6-7` (without the heptagon bound; see [`FaceSet`]'s `Display` for the full name).
    pub fn name(self) -> &'static str {
        match self {
            FaceSet::Fullerene => "fullerene",
            FaceSet::SquareHexagon => "4-6",
            FaceSet::SquarePentagonHexagon => "4-5-6",
            FaceSet::PentagonHexagonHeptagon { .. } => "5-6-7",
        }
    }

    /// The set named `name` (as [`FaceSet::name`] writes it), with `heptagons` as the bound of
    /// `5-6-7`, which needs one; the other sets refuse a bound. The error says what to write.
    pub fn parse(name: &str, heptagons: Option<u8>) -> Result<FaceSet, String> {
        let set = match name.trim().to_ascii_lowercase().as_str() {
            "fullerene" | "5-6" => FaceSet::Fullerene,
            "4-6" => FaceSet::SquareHexagon,
            "4-5-6" => FaceSet::SquarePentagonHexagon,
            "5-6-7" => {
                let Some(h) = heptagons else {
                    return Err(
                        "face set 5-6-7 needs a bound on the heptagons: add --heptagons H, \
                                e.g. --heptagons 1"
                            .to_string(),
                    );
                };
                if h > MAX_HEPTAGONS {
                    return Err(format!(
                        "--heptagons {h} is too many: at most {MAX_HEPTAGONS} heptagons are supported"
                    ));
                }
                return Ok(FaceSet::PentagonHexagonHeptagon { heptagons: h });
            }
            other => {
                return Err(format!(
                    "unknown face set '{}': use fullerene, 4-6, 4-5-6 or 5-6-7",
                    other
                        .chars()
                        .filter(|c| !c.is_control())
                        .collect::<String>()
                ))
            }
        };
        if heptagons.is_some() {
            return Err(format!(
                "--heptagons applies to face set 5-6-7 only, not {}; drop it",
                set.name()
            ));
        }
        Ok(set)
    }

    /// The set of a full name as [`FaceSet`]'s `Display` writes it (`5-6-7h2` included), e.g.
    /// from a file name or an isomer ID.
    pub fn from_label(label: &str) -> Option<FaceSet> {
        if let Some(h) = label.strip_prefix("5-6-7h") {
            let h: u8 = h.parse().ok()?;
            // Only the written form: "5-6-7h02" or "5-6-7h+2" name no set.
            return (h <= MAX_HEPTAGONS && label == format!("5-6-7h{h}"))
                .then_some(FaceSet::PentagonHexagonHeptagon { heptagons: h });
        }
        match label {
            "fullerene" => Some(FaceSet::Fullerene),
            "4-6" => Some(FaceSet::SquareHexagon),
            "4-5-6" => Some(FaceSet::SquarePentagonHexagon),
            _ => None,
        }
    }

    /// True if a cage with these face-size counts belongs to the set (sizes allowed and, for
    /// `5-6-7`, no more heptagons than the bound).
    pub fn admits(self, counts: &[usize; MAX_FACE + 1]) -> bool {
        counts
            .iter()
            .enumerate()
            .all(|(size, &n)| n == 0 || self.allows(size as u8))
            && counts[7] <= usize::from(self.heptagon_bound())
    }
}

impl fmt::Display for FaceSet {
    /// The full name, safe in file names and IDs: the family's name, and for `5-6-7` its
    /// heptagon bound (`5-6-7h2`), since lists with different bounds differ.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            FaceSet::PentagonHexagonHeptagon { heptagons } => write!(f, "5-6-7h{heptagons}"),
            other => f.write_str(other.name()),
        }
    }
}

/// Why a rotation system is not a cage.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum CageError {
    /// A vertex lists itself or a neighbour twice.
    BadNeighbours { vertex: u32 },
    /// `u` lists `v` as a neighbour but `v` does not list `u`.
    Asymmetric { u: u32, v: u32 },
    /// A neighbour index is out of range.
    OutOfRange { vertex: u32, neighbour: u32 },
    /// The traced faces do not satisfy Euler's formula V - E + F = 2, so the rotation system
    /// does not describe a sphere.
    NotSpherical {
        vertices: usize,
        edges: usize,
        faces: usize,
    },
    /// A face is smaller than 3 or larger than [`MAX_FACE`].
    FaceSize { face: usize, size: usize },
    /// Two faces share more than one edge, or a face meets itself: not 3-connected.
    NotPolyhedral { face: usize },
    /// Too few atoms for a closed cage.
    TooSmall { vertices: usize },
}

impl fmt::Display for CageError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            CageError::BadNeighbours { vertex } => {
                write!(
                    f,
                    "atom {vertex} is bonded to itself or twice to the same atom"
                )
            }
            CageError::Asymmetric { u, v } => {
                write!(
                    f,
                    "atom {u} lists atom {v} as a neighbour but not the reverse"
                )
            }
            CageError::OutOfRange { vertex, neighbour } => {
                write!(
                    f,
                    "atom {vertex} names neighbour {neighbour}, which does not exist"
                )
            }
            CageError::NotSpherical {
                vertices,
                edges,
                faces,
            } => write!(
                f,
                "the bonds do not form a closed cage: V - E + F = {vertices} - {edges} + {faces} \
                 is not 2 (Euler's formula)"
            ),
            CageError::FaceSize { face, size } => write!(
                f,
                "ring {face} has {size} atoms; cages here may have rings of 3 to {MAX_FACE} atoms"
            ),
            CageError::NotPolyhedral { face } => write!(
                f,
                "ring {face} shares more than one bond with another ring or touches itself: \
                 the graph is not a polyhedron"
            ),
            CageError::TooSmall { vertices } => {
                write!(
                    f,
                    "{vertices} atoms are too few for a closed cage (need at least 4)"
                )
            }
        }
    }
}

impl std::error::Error for CageError {}

/// A closed cubic cage: atoms, bonds and rings, with the rotation system that embeds it.
///
/// Invariants (checked by [`Cage::from_rotation`]): every vertex has three distinct neighbours,
/// adjacency is symmetric, faces satisfy Euler's formula, every face has 3..=8 vertices, and every
/// edge lies on exactly two distinct faces.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Cage {
    /// Neighbours of each vertex in rotation order (one consistent orientation).
    rotation: Vec<[u32; 3]>,
    /// Faces as vertex cycles, all traversed in the same orientation.
    faces: Vec<Vec<u32>>,
    /// Edges as sorted vertex pairs, in lexicographic order.
    edges: Vec<[u32; 2]>,
    /// The two faces on either side of each edge (aligned with `edges`).
    edge_faces: Vec<[u32; 2]>,
    /// For each face, the neighbouring faces in cyclic order (the dual's rotation system);
    /// `dual[f][i]` lies across the edge `faces[f][i]`–`faces[f][i+1]`.
    dual: Vec<Vec<u32>>,
}

impl Cage {
    /// Builds a cage from a rotation system, tracing its faces.
    ///
    /// The face to the left of the dart u→v continues with v→w, where w follows u in v's
    /// rotation; every dart lies on exactly one face.
    pub fn from_rotation(rotation: Vec<[u32; 3]>) -> Result<Cage, CageError> {
        let n = rotation.len();
        if n < 4 {
            return Err(CageError::TooSmall { vertices: n });
        }
        check_adjacency(&rotation)?;
        let faces = trace_faces(&rotation)?;
        let edges_count = 3 * n / 2;
        if n + faces.len() != edges_count + 2 {
            return Err(CageError::NotSpherical {
                vertices: n,
                edges: edges_count,
                faces: faces.len(),
            });
        }
        let (edges, edge_faces) = edge_tables(&rotation, &faces)?;
        let dual = dual_rotation(&faces, &edges, &edge_faces);
        for (i, nbrs) in dual.iter().enumerate() {
            let mut sorted = nbrs.clone();
            sorted.sort_unstable();
            sorted.dedup();
            if sorted.len() != nbrs.len() || sorted.contains(&(i as u32)) {
                return Err(CageError::NotPolyhedral { face: i });
            }
        }
        Ok(Cage {
            rotation,
            faces,
            edges,
            edge_faces,
            dual,
        })
    }

    /// Number of atoms.
    pub fn atoms(&self) -> usize {
        self.rotation.len()
    }

    pub fn face_count(&self) -> usize {
        self.faces.len()
    }

    /// The three neighbours of `v` in rotation order.
    pub fn neighbours(&self, v: VertexId) -> [VertexId; 3] {
        self.rotation[v.index()].map(VertexId)
    }

    /// The whole rotation system, as raw indices.
    pub fn rotation(&self) -> &[[u32; 3]] {
        &self.rotation
    }

    /// Faces as vertex cycles.
    pub fn faces(&self) -> &[Vec<u32>] {
        &self.faces
    }

    pub fn face(&self, f: FaceId) -> &[u32] {
        &self.faces[f.index()]
    }

    pub fn face_size(&self, f: FaceId) -> usize {
        self.faces[f.index()].len()
    }

    /// Edges as sorted vertex pairs in lexicographic order.
    pub fn edges(&self) -> &[[u32; 2]] {
        &self.edges
    }

    /// The two faces containing each edge (aligned with [`Cage::edges`]).
    pub fn edge_faces(&self) -> &[[u32; 2]] {
        &self.edge_faces
    }

    /// The index of edge {u, v}, if they are bonded.
    pub fn edge_index(&self, u: VertexId, v: VertexId) -> Option<EdgeId> {
        let key = if u <= v { [u.0, v.0] } else { [v.0, u.0] };
        self.edges
            .binary_search(&key)
            .ok()
            .map(|i| EdgeId(i as u32))
    }

    /// Neighbouring faces of each face in cyclic order.
    pub fn dual(&self) -> &[Vec<u32>] {
        &self.dual
    }

    /// Number of faces of each size, indexed by size (0..=MAX_FACE).
    pub fn face_size_counts(&self) -> [usize; MAX_FACE + 1] {
        let mut counts = [0; MAX_FACE + 1];
        for f in &self.faces {
            counts[f.len()] += 1;
        }
        counts
    }

    /// True if the cage belongs to `set`: every face size allowed, and no more heptagons than
    /// the set's bound.
    pub fn fits(&self, set: FaceSet) -> bool {
        set.admits(&self.face_size_counts())
    }

    /// Number of edges shared by two faces of `size` (squares for the isolated-square rule).
    pub fn adjacencies_of(&self, size: usize) -> usize {
        self.edge_faces
            .iter()
            .filter(|[a, b]| {
                self.faces[*a as usize].len() == size && self.faces[*b as usize].len() == size
            })
            .count()
    }

    /// True if the cage obeys its face set's isolation rule (see [`FaceSet::isolated_size`]).
    pub fn is_isolated(&self, set: FaceSet) -> bool {
        self.adjacencies_of(usize::from(set.isolated_size())) == 0
    }

    /// Number of edges shared by two pentagons (0 for an isolated-pentagon-rule cage).
    pub fn pentagon_adjacencies(&self) -> usize {
        self.edge_faces
            .iter()
            .filter(|[a, b]| {
                self.faces[*a as usize].len() == 5 && self.faces[*b as usize].len() == 5
            })
            .count()
    }

    /// Isolated pentagon rule: no two pentagons share an edge (Kroto 1987; Schmalz et al. 1988).
    pub fn is_ipr(&self) -> bool {
        self.pentagon_adjacencies() == 0
    }

    /// The leapfrog cage (the truncation of the dual): one atom per corner of every face, each
    /// face keeps its ring size and every old atom becomes a hexagon, so atoms triple (Fowler &
    /// Steer, J. Chem. Soc., Chem. Commun. (1987) 1403, from memory). Builds large cages
    /// without going through spirals.
    pub fn leapfrog(&self) -> Cage {
        let faces = &self.faces;
        let mut offset = vec![0u32; faces.len() + 1];
        for (f, face) in faces.iter().enumerate() {
            offset[f + 1] = offset[f] + face.len() as u32;
        }
        let id = |f: usize, i: usize| offset[f] + (i % faces[f].len()) as u32;
        let across = |f: usize, i: usize| {
            let g = self.dual[f][i] as usize;
            let j = self.dual[g]
                .iter()
                .position(|&h| h as usize == f)
                .expect("invariant: the dual is symmetric");
            id(g, j)
        };
        // Which of the two corner orders matches the stored orientation is tried, not derived.
        let build = |mirror: bool| {
            let mut rotation = vec![[0u32; 3]; offset[faces.len()] as usize];
            for (f, face) in faces.iter().enumerate() {
                let k = face.len();
                for i in 0..k {
                    let (next, prev) = (id(f, i + 1), id(f, i + k - 1));
                    rotation[id(f, i) as usize] = if mirror {
                        [prev, next, across(f, i)]
                    } else {
                        [next, prev, across(f, i)]
                    };
                }
            }
            Cage::from_rotation(rotation)
        };
        build(false)
            .or_else(|_| build(true))
            .expect("invariant: the leapfrog of a polyhedral cage is a cage")
    }

    /// The same cage with vertices renamed by `perm` (new index of old vertex v is `perm[v]`).
    /// Used by tests and by anything that must not depend on atom order.
    pub fn relabelled(&self, perm: &[u32]) -> Cage {
        let mut rotation = vec![[0u32; 3]; self.atoms()];
        for (v, nb) in self.rotation.iter().enumerate() {
            rotation[perm[v] as usize] = nb.map(|u| perm[u as usize]);
        }
        Cage::from_rotation(rotation).expect("relabelling preserves cage invariants")
    }
}

fn check_adjacency(rotation: &[[u32; 3]]) -> Result<(), CageError> {
    let n = rotation.len() as u32;
    for (v, nb) in rotation.iter().enumerate() {
        let v = v as u32;
        for &u in nb {
            if u >= n {
                return Err(CageError::OutOfRange {
                    vertex: v,
                    neighbour: u,
                });
            }
        }
        if nb[0] == nb[1] || nb[1] == nb[2] || nb[0] == nb[2] || nb.contains(&v) {
            return Err(CageError::BadNeighbours { vertex: v });
        }
        for &u in nb {
            if !rotation[u as usize].contains(&v) {
                return Err(CageError::Asymmetric { u: v, v: u });
            }
        }
    }
    Ok(())
}

fn position(nb: &[u32; 3], u: u32) -> usize {
    nb.iter()
        .position(|&x| x == u)
        .expect("adjacency checked symmetric")
}

/// Traces every face by following darts; each dart (u→v) is used once.
fn trace_faces(rotation: &[[u32; 3]]) -> Result<Vec<Vec<u32>>, CageError> {
    let n = rotation.len();
    let mut used = vec![[false; 3]; n];
    let mut faces = Vec::new();
    for start in 0..n {
        for k in 0..3 {
            if used[start][k] {
                continue;
            }
            let mut face = Vec::new();
            let (mut u, mut slot) = (start as u32, k);
            while !used[u as usize][slot] {
                used[u as usize][slot] = true;
                face.push(u);
                if face.len() > MAX_FACE {
                    return Err(CageError::FaceSize {
                        face: faces.len(),
                        size: face.len(),
                    });
                }
                let v = rotation[u as usize][slot];
                let back = position(&rotation[v as usize], u);
                slot = (back + 1) % 3;
                u = v;
            }
            if face.len() < 3 {
                return Err(CageError::FaceSize {
                    face: faces.len(),
                    size: face.len(),
                });
            }
            faces.push(face);
        }
    }
    Ok(faces)
}

type EdgeTables = (Vec<[u32; 2]>, Vec<[u32; 2]>);

fn edge_tables(rotation: &[[u32; 3]], faces: &[Vec<u32>]) -> Result<EdgeTables, CageError> {
    let mut edges: Vec<[u32; 2]> = rotation
        .iter()
        .enumerate()
        .flat_map(|(v, nb)| nb.iter().map(move |&u| [v as u32, u]))
        .filter(|[v, u]| v < u)
        .collect();
    edges.sort_unstable();
    let mut edge_faces = vec![[u32::MAX; 2]; edges.len()];
    for (fi, face) in faces.iter().enumerate() {
        for i in 0..face.len() {
            let (a, b) = (face[i], face[(i + 1) % face.len()]);
            let key = if a < b { [a, b] } else { [b, a] };
            let e = edges.binary_search(&key).expect("face darts are edges");
            let slot = if edge_faces[e][0] == u32::MAX { 0 } else { 1 };
            if edge_faces[e][slot] != u32::MAX || edge_faces[e][0] == fi as u32 {
                return Err(CageError::NotPolyhedral { face: fi });
            }
            edge_faces[e][slot] = fi as u32;
        }
    }
    Ok((edges, edge_faces))
}

fn dual_rotation(faces: &[Vec<u32>], edges: &[[u32; 2]], edge_faces: &[[u32; 2]]) -> Vec<Vec<u32>> {
    faces
        .iter()
        .enumerate()
        .map(|(fi, face)| {
            (0..face.len())
                .map(|i| {
                    let (a, b) = (face[i], face[(i + 1) % face.len()]);
                    let key = if a < b { [a, b] } else { [b, a] };
                    let e = edges.binary_search(&key).expect("face darts are edges");
                    let [x, y] = edge_faces[e];
                    if x == fi as u32 {
                        y
                    } else {
                        x
                    }
                })
                .collect()
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The cube as a rotation system: 8 vertices, 6 square faces.
    fn cube() -> Vec<[u32; 3]> {
        // Vertices 0-3 bottom square, 4-7 top square; rotations chosen consistently.
        vec![
            [1, 3, 4],
            [2, 0, 5],
            [3, 1, 6],
            [0, 2, 7],
            [7, 5, 0],
            [4, 6, 1],
            [5, 7, 2],
            [6, 4, 3],
        ]
    }

    #[test]
    fn cube_has_six_squares() {
        let c = Cage::from_rotation(cube()).unwrap();
        assert_eq!(c.face_count(), 6);
        assert!(c.faces().iter().all(|f| f.len() == 4));
        assert_eq!(c.edges().len(), 12);
        assert!(c.fits(FaceSet::SquareHexagon));
    }

    #[test]
    fn inconsistent_rotation_is_not_spherical() {
        let mut r = cube();
        r[0].swap(0, 1);
        assert!(matches!(
            Cage::from_rotation(r),
            Err(CageError::NotSpherical { .. })
                | Err(CageError::FaceSize { .. })
                | Err(CageError::NotPolyhedral { .. })
        ));
    }

    #[test]
    fn asymmetric_adjacency_is_rejected() {
        let mut r = cube();
        r[0] = [1, 3, 5];
        assert!(Cage::from_rotation(r).is_err());
    }
}
