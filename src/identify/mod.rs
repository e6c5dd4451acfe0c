//! Identify a cage from atomic coordinates: the reverse of spiral → cage → geometry.
//!
//! Pipeline: read the file ([`xyz`], [`sdf`]), drop atoms the user asked to ignore, perceive
//! bonds from distances ([`perceive`]), check that every atom is a cage atom (carbon, boron or
//! nitrogen: fullerenes, BN cages and doped cages alike) with three neighbours and that the
//! atoms form one piece, order each atom's neighbours from the 3D geometry ([`embed`]), trace
//! the faces ([`Cage::from_rotation`], which checks Euler's formula), find the face set the
//! rings belong to (fullerene, 4-6, 4-5-6, or 5-6-7 with as many heptagons as the cage has),
//! and read the canonical spiral. Isomer numbers come from the
//! enumerator or a catalogue ([`numbers`]). Every failure is a specific [`IdentifyError`]; no
//! input makes this module panic. Scoring and printing are left to `score` and `cli`.

pub mod embed;
pub mod numbers;
pub mod parse;
pub mod perceive;
pub mod sdf;
pub mod size;
pub mod xyz;

pub(crate) use parse::{clip, parse_coordinate, Cursor, MAX_ATOMS};
pub use parse::{element_symbol, read, Atom, Format, ParseError, ParseErrorKind, Structure};

use crate::cage::{Cage, CageError, FaceSet, MAX_FACE};
use crate::spiral::{canonical_spiral, Canonical};
use std::fmt;

/// How to turn a structure into a cage.
#[derive(Debug, Clone, PartialEq)]
pub struct Options {
    /// Normalised element symbols to drop before perception (endohedral or exohedral atoms).
    pub ignore: Vec<String>,
    /// Added to the sum of covalent radii when deciding bonds, in Å.
    pub tolerance: f64,
}

impl Default for Options {
    fn default() -> Options {
        Options {
            ignore: Vec::new(),
            tolerance: perceive::DEFAULT_TOLERANCE,
        }
    }
}

/// Why a structure is not a cage we can identify. Atom numbers are 1-based positions in the
/// structure as written in the file (ignored atoms included).
#[derive(Debug, Clone, PartialEq)]
pub enum IdentifyError {
    /// Nothing left once ignored elements are dropped.
    NoAtoms { ignored: usize },
    /// Atoms other than cage atoms (C, B, N) remain: element symbols with their counts.
    NotCarbon { elements: Vec<(String, usize)> },
    /// Two atoms nearly on top of each other.
    Duplicate { a: usize, b: usize, distance: f64 },
    /// Atoms without exactly three bonded neighbours: (atom, neighbour count).
    WrongNeighbours {
        atoms: Vec<(usize, usize)>,
        total: usize,
    },
    /// The atoms form several separate pieces (sizes, largest first).
    Pieces { sizes: Vec<usize> },
    /// Every atom is three-coordinate but the rings do not close into a sphere.
    NotClosed(CageError),
    /// A closed cage whose rings fit none of the face sets (a ring outside 4..7, or squares
    /// with heptagons): (ring size, count) of its rings other than pentagons and hexagons.
    FaceSet {
        atoms: usize,
        outside: Vec<(usize, usize)>,
    },
}

impl fmt::Display for IdentifyError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            IdentifyError::NoAtoms { ignored } => write!(
                f,
                "no atoms left after dropping {ignored} ignored atoms; check --ignore-elements"
            ),
            IdentifyError::NotCarbon { elements } => {
                let listed: Vec<String> =
                    elements.iter().map(|(e, n)| format!("{n} {e}")).collect();
                let names: Vec<&str> = elements.iter().map(|(e, _)| e.as_str()).collect();
                write!(
                    f,
                    "found atoms other than the cage elements C, B, N ({}): an exohedral \
                     derivative or an endohedral atom: give the bare cage or use \
                     --ignore-elements {}",
                    listed.join(", "),
                    names.join(",")
                )
            }
            IdentifyError::Duplicate { a, b, distance } => write!(
                f,
                "atoms {a} and {b} are only {distance:.3} Å apart: remove the duplicate atom"
            ),
            IdentifyError::WrongNeighbours { atoms, total } => {
                write_wrong_neighbours(f, atoms, *total)
            }
            IdentifyError::Pieces { sizes } => {
                let listed: Vec<String> = sizes.iter().map(|s| s.to_string()).collect();
                write!(
                    f,
                    "the atoms form {} separate pieces ({} atoms): give one cage per structure",
                    sizes.len(),
                    listed.join(" + ")
                )
            }
            IdentifyError::NotClosed(e) => write!(
                f,
                "not a closed cage: every atom has three neighbours, but the rings traced from \
                 the 3D geometry do not close ({e}); check the geometry"
            ),
            IdentifyError::FaceSet { atoms, outside } => {
                let listed: Vec<String> = outside
                    .iter()
                    .map(|(size, n)| format!("{n} of size {size}"))
                    .collect();
                write!(
                    f,
                    "a closed {atoms}-atom cage, but of none of the face sets identified \
                     (fullerene, 4-6, 4-5-6, 5-6-7): it has rings {}",
                    listed.join(", ")
                )
            }
        }
    }
}

/// Lists at most ten offending atoms, with a hint when the whole structure looks unbonded.
fn write_wrong_neighbours(
    f: &mut fmt::Formatter<'_>,
    atoms: &[(usize, usize)],
    total: usize,
) -> fmt::Result {
    const SHOWN: usize = 10;
    let listed: Vec<String> = atoms
        .iter()
        .take(SHOWN)
        .map(|(a, n)| format!("atom {a} has {n}"))
        .collect();
    write!(
        f,
        "every cage carbon needs exactly three bonded neighbours, but {} of {total} atoms do not: {}",
        atoms.len(),
        listed.join(", ")
    )?;
    if atoms.len() > SHOWN {
        write!(f, " (and {} more)", atoms.len() - SHOWN)?;
    }
    let isolated = atoms.iter().filter(|(_, n)| *n == 0).count();
    if 2 * isolated > total {
        write!(f, "; most atoms have no bonds: are the coordinates in Å?")?;
    }
    Ok(())
}

impl std::error::Error for IdentifyError {}

/// What is known about a structure that is a closed cage.
#[derive(Debug, Clone)]
pub struct Identity {
    /// Atoms dropped because of `Options::ignore`.
    pub ignored: usize,
    /// The cage, atoms numbered in file order (ignored atoms left out).
    pub cage: Cage,
    /// The face set whose lists number the cage; for 5-6-7 the heptagon bound is the cage's
    /// own heptagon count (the shortest such list that holds it).
    pub face_set: FaceSet,
    /// Element of every cage atom, in cage order (C, B or N).
    pub elements: Vec<String>,
    /// The canonical spiral and symmetries; `None` if no face spiral exists for this cage.
    pub canonical: Option<Canonical>,
}

/// Identifies one structure.
pub fn identify(structure: &Structure, options: &Options) -> Result<Identity, IdentifyError> {
    let (kept, positions) = keep_atoms(structure, &options.ignore)?;
    let cutoff = perceive::carbon_cutoff(options.tolerance);
    let neighbours = perceive::bonds(&positions, cutoff).map_err(|e| IdentifyError::Duplicate {
        a: kept[e.a] + 1,
        b: kept[e.b] + 1,
        distance: e.distance,
    })?;
    let cubic = three_neighbours(&neighbours, &kept, structure.atoms.len())?;
    check_one_piece(&cubic)?;
    let rotation = embed::rotation_system(&positions, &cubic);
    let cage = Cage::from_rotation(rotation).map_err(IdentifyError::NotClosed)?;
    let face_set = face_set_of(&cage)?;
    let canonical = canonical_spiral(&cage);
    Ok(Identity {
        ignored: structure.atoms.len() - kept.len(),
        cage,
        face_set,
        elements: kept
            .iter()
            .map(|&i| structure.atoms[i].element.clone())
            .collect(),
        canonical,
    })
}

impl Identity {
    /// The molecular formula in Hill order (`C60`, `B12N12`, `C58BN`).
    pub fn formula(&self) -> String {
        let count = |e: &str| self.elements.iter().filter(|x| *x == e).count();
        ["C", "B", "N"]
            .iter()
            .filter(|e| count(e) > 0)
            .map(|e| match count(e) {
                1 => e.to_string(),
                n => format!("{e}{n}"),
            })
            .collect()
    }

    /// True if B and N alternate over every bond and no carbon remains: the cage is written as
    /// the BN cage its 4-6 ID names.
    pub fn is_boron_nitride(&self) -> bool {
        self.elements.iter().all(|e| e == "B" || e == "N")
            && self
                .cage
                .edges()
                .iter()
                .all(|&[a, b]| self.elements[a as usize] != self.elements[b as usize])
    }
}

/// Indices (into the structure) and positions of the atoms that are not ignored; an error if
/// anything but carbon remains.
fn keep_atoms(
    structure: &Structure,
    ignore: &[String],
) -> Result<(Vec<usize>, Vec<[f64; 3]>), IdentifyError> {
    let kept: Vec<usize> = (0..structure.atoms.len())
        .filter(|&i| !ignore.contains(&structure.atoms[i].element))
        .collect();
    if kept.is_empty() {
        return Err(IdentifyError::NoAtoms {
            ignored: structure.atoms.len(),
        });
    }
    let mut others: Vec<(String, usize)> = Vec::new();
    for &i in &kept {
        let e = &structure.atoms[i].element;
        if !CAGE_ELEMENTS.contains(&e.as_str()) {
            match others.iter_mut().find(|(x, _)| x == e) {
                Some(entry) => entry.1 += 1,
                None => others.push((e.clone(), 1)),
            }
        }
    }
    if !others.is_empty() {
        return Err(IdentifyError::NotCarbon { elements: others });
    }
    let positions = kept.iter().map(|&i| structure.atoms[i].position).collect();
    Ok((kept, positions))
}

/// Elements read as cage atoms: carbon cages, boron-nitride cages, and cages doped with B or N.
const CAGE_ELEMENTS: [&str; 3] = ["C", "B", "N"];

fn three_neighbours(
    neighbours: &[Vec<u32>],
    kept: &[usize],
    total: usize,
) -> Result<Vec<[u32; 3]>, IdentifyError> {
    let wrong: Vec<(usize, usize)> = neighbours
        .iter()
        .enumerate()
        .filter(|(_, nb)| nb.len() != 3)
        .map(|(i, nb)| (kept[i] + 1, nb.len()))
        .collect();
    if !wrong.is_empty() {
        return Err(IdentifyError::WrongNeighbours {
            atoms: wrong,
            total,
        });
    }
    Ok(neighbours.iter().map(|nb| [nb[0], nb[1], nb[2]]).collect())
}

/// Sizes of the connected pieces of a cubic graph, largest first.
fn pieces(cubic: &[[u32; 3]]) -> Vec<usize> {
    let mut seen = vec![false; cubic.len()];
    let mut sizes = Vec::new();
    for start in 0..cubic.len() {
        if seen[start] {
            continue;
        }
        seen[start] = true;
        let (mut stack, mut size) = (vec![start], 0);
        while let Some(v) = stack.pop() {
            size += 1;
            for &u in &cubic[v] {
                if !std::mem::replace(&mut seen[u as usize], true) {
                    stack.push(u as usize);
                }
            }
        }
        sizes.push(size);
    }
    sizes.sort_unstable_by(|a, b| b.cmp(a));
    sizes
}

fn check_one_piece(cubic: &[[u32; 3]]) -> Result<(), IdentifyError> {
    let sizes = pieces(cubic);
    if sizes.len() > 1 {
        return Err(IdentifyError::Pieces { sizes });
    }
    Ok(())
}

/// The face set whose lists hold the cage: the smallest of fullerene, 4-6, 4-5-6 and 5-6-7
/// (with the cage's own heptagon count as bound) that allows all its rings.
fn face_set_of(cage: &Cage) -> Result<FaceSet, IdentifyError> {
    let counts = cage.face_size_counts();
    let heptagons = counts[7];
    let candidates = [
        FaceSet::Fullerene,
        FaceSet::SquareHexagon,
        FaceSet::SquarePentagonHexagon,
        FaceSet::PentagonHexagonHeptagon {
            heptagons: u8::try_from(heptagons).unwrap_or(u8::MAX),
        },
    ];
    let fits = |set: &FaceSet| {
        (0..=MAX_FACE).all(|s| counts[s] == 0 || set.allows(s as u8))
            && (heptagons == 0 || heptagons <= usize::from(set.heptagon_bound()))
    };
    if let Some(set) = candidates.iter().find(|set| fits(set)) {
        return Ok(*set);
    }
    let outside: Vec<(usize, usize)> = (0..=MAX_FACE)
        .filter(|&s| counts[s] > 0 && s != 5 && s != 6)
        .map(|s| (s, counts[s]))
        .collect();
    Err(IdentifyError::FaceSet {
        atoms: cage.atoms(),
        outside,
    })
}

/// Parses a comma-separated element list ("Sc,N", "sc, n") into normalised symbols.
pub fn parse_element_list(text: &str) -> Result<Vec<String>, String> {
    text.split(',')
        .map(str::trim)
        .filter(|t| !t.is_empty())
        .map(|t| {
            element_symbol(t)
                .filter(|e| e.len() == t.len() || t.bytes().all(|b| b.is_ascii_digit()))
                .ok_or_else(|| format!("\"{}\" is not an element symbol (e.g. Sc,N)", clip(t)))
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::spiral::Spiral;

    /// The regular dodecahedron (edge 1.44 Å), whose coordinates are known in closed form:
    /// (±1, ±1, ±1) and cyclic permutations of (0, ±1/phi, ±phi), edge 2/phi.
    fn dodecahedron() -> Structure {
        let phi = (1.0 + 5f64.sqrt()) / 2.0;
        let mut pts: Vec<[f64; 3]> = Vec::new();
        for x in [-1.0, 1.0] {
            for y in [-1.0, 1.0] {
                for z in [-1.0, 1.0] {
                    pts.push([x, y, z]);
                }
            }
        }
        for a in [-1.0, 1.0] {
            for b in [-1.0, 1.0] {
                pts.push([0.0, a / phi, b * phi]);
                pts.push([a / phi, b * phi, 0.0]);
                pts.push([b * phi, 0.0, a / phi]);
            }
        }
        // The edge of this dodecahedron is 2/phi; scale it to 1.44 Å.
        let s = 1.44 * phi / 2.0;
        Structure {
            title: "C20".into(),
            atoms: pts
                .into_iter()
                .map(|p| Atom {
                    element: "C".into(),
                    position: p.map(|x| x * s),
                })
                .collect(),
            line: 1,
        }
    }

    #[test]
    fn dodecahedron_is_c20() {
        let id = identify(&dodecahedron(), &Options::default()).unwrap();
        let canonical = id.canonical.expect("C20 has a spiral");
        // The dodecahedron: all 12 faces pentagons (Fowler & Manolopoulos, Atlas 1995).
        assert_eq!(canonical.spiral, Spiral::from_sizes(vec![5; 12]).unwrap());
        // Ih has order 120 (Atlas).
        assert_eq!(canonical.automorphisms.len(), 120);
    }

    #[test]
    fn endohedral_atom_is_named_and_can_be_ignored() {
        let mut s = dodecahedron();
        s.atoms.push(Atom {
            element: "Sc".into(),
            position: [0.0; 3],
        });
        let err = identify(&s, &Options::default()).unwrap_err();
        assert!(err.to_string().contains("--ignore-elements Sc"), "{err}");
        let options = Options {
            ignore: vec!["Sc".into()],
            ..Options::default()
        };
        assert_eq!(identify(&s, &options).unwrap().ignored, 1);
    }

    #[test]
    fn a_missing_atom_leaves_three_two_coordinate_atoms() {
        let mut s = dodecahedron();
        s.atoms.remove(0);
        match identify(&s, &Options::default()).unwrap_err() {
            IdentifyError::WrongNeighbours { atoms, total } => {
                assert_eq!(total, 19);
                assert_eq!(atoms.len(), 3);
                assert!(atoms.iter().all(|(_, n)| *n == 2));
            }
            other => panic!("unexpected {other}"),
        }
    }

    #[test]
    fn two_cages_are_two_pieces() {
        let mut s = dodecahedron();
        let far: Vec<Atom> = s
            .atoms
            .iter()
            .map(|a| Atom {
                element: "C".into(),
                position: [a.position[0] + 20.0, a.position[1], a.position[2]],
            })
            .collect();
        s.atoms.extend(far);
        assert_eq!(
            identify(&s, &Options::default()).unwrap_err(),
            IdentifyError::Pieces {
                sizes: vec![20, 20]
            }
        );
    }

    #[test]
    fn element_lists_are_normalised() {
        assert_eq!(
            parse_element_list("sc, N,,"),
            Ok(vec!["Sc".into(), "N".into()])
        );
        assert!(parse_element_list("Sc2").is_err());
    }
}
