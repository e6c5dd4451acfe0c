//! Point-group symmetry of a cage from its automorphism group: the Schoenflies symbol, chirality
//! and the 13C NMR pattern (orbits of atoms).
//!
//! The automorphisms come from the canonical spiral search ([`crate::spiral::canonical_spiral`]);
//! this module only classifies them. By Mani (1971) the automorphism group of a 3-connected plane
//! graph is realised as the point group of a convex polyhedron, so the abstract group, the orders
//! of its rotations and the kind of its improper elements fix the Schoenflies symbol. No geometry
//! is computed here.

use crate::cage::Cage;
use crate::spiral::Automorphism;
use serde::{Deserialize, Deserializer, Serialize, Serializer};
use std::collections::BTreeMap;
use std::fmt;
use std::str::FromStr;

/// A finite point group in Schoenflies notation.
///
/// The axial families carry their n (the order of the principal axis); [`PointGroup::S`] carries
/// the order 2n of its rotoreflection, as written (S4, S6, S8). Fullerenes use only the 28 groups
/// in [`FULLERENE_GROUPS`]; cages with squares or larger rings can have others (O, Oh, D4h, ...).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum PointGroup {
    C1,
    Cs,
    Ci,
    /// C_n, n >= 2.
    C(u32),
    /// C_nv, n >= 2.
    Cv(u32),
    /// C_nh, n >= 2.
    Ch(u32),
    /// S_2n with the stored value 2n >= 4.
    S(u32),
    /// D_n, n >= 2.
    D(u32),
    /// D_nh, n >= 2.
    Dh(u32),
    /// D_nd, n >= 2.
    Dd(u32),
    T,
    Td,
    Th,
    O,
    Oh,
    I,
    Ih,
    /// A group the classifier could not name; should not happen for a polyhedron (Mani 1971).
    Unclassified {
        order: u32,
    },
}

/// The 28 point groups that fullerenes can have (Fowler & Manolopoulos, An Atlas of Fullerenes).
pub const FULLERENE_GROUPS: [PointGroup; 28] = [
    PointGroup::I,
    PointGroup::Ih,
    PointGroup::T,
    PointGroup::Td,
    PointGroup::Th,
    PointGroup::Dd(6),
    PointGroup::Dh(6),
    PointGroup::D(6),
    PointGroup::Dd(5),
    PointGroup::Dh(5),
    PointGroup::D(5),
    PointGroup::Dd(3),
    PointGroup::Dh(3),
    PointGroup::D(3),
    PointGroup::Dd(2),
    PointGroup::Dh(2),
    PointGroup::D(2),
    PointGroup::S(6),
    PointGroup::S(4),
    PointGroup::Cv(3),
    PointGroup::Ch(3),
    PointGroup::C(3),
    PointGroup::Cv(2),
    PointGroup::Ch(2),
    PointGroup::C(2),
    PointGroup::Cs,
    PointGroup::Ci,
    PointGroup::C1,
];

impl PointGroup {
    /// The Schoenflies symbol as plain text, e.g. "D5h".
    pub fn name(self) -> String {
        match self {
            PointGroup::C1 => "C1".into(),
            PointGroup::Cs => "Cs".into(),
            PointGroup::Ci => "Ci".into(),
            PointGroup::C(n) => format!("C{n}"),
            PointGroup::Cv(n) => format!("C{n}v"),
            PointGroup::Ch(n) => format!("C{n}h"),
            PointGroup::S(m) => format!("S{m}"),
            PointGroup::D(n) => format!("D{n}"),
            PointGroup::Dh(n) => format!("D{n}h"),
            PointGroup::Dd(n) => format!("D{n}d"),
            PointGroup::T => "T".into(),
            PointGroup::Td => "Td".into(),
            PointGroup::Th => "Th".into(),
            PointGroup::O => "O".into(),
            PointGroup::Oh => "Oh".into(),
            PointGroup::I => "I".into(),
            PointGroup::Ih => "Ih".into(),
            PointGroup::Unclassified { order } => format!("unclassified-order-{order}"),
        }
    }

    /// Number of elements of the group (`None` for an unclassified group).
    pub fn order(self) -> Option<u32> {
        Some(match self {
            PointGroup::C1 => 1,
            PointGroup::Cs | PointGroup::Ci => 2,
            PointGroup::C(n) | PointGroup::S(n) => n,
            PointGroup::Cv(n) | PointGroup::Ch(n) | PointGroup::D(n) => 2 * n,
            PointGroup::Dh(n) | PointGroup::Dd(n) => 4 * n,
            PointGroup::T => 12,
            PointGroup::Td | PointGroup::Th | PointGroup::O => 24,
            PointGroup::Oh => 48,
            PointGroup::I => 60,
            PointGroup::Ih => 120,
            PointGroup::Unclassified { .. } => return None,
        })
    }

    /// True if the group has no improper elements (mirror planes, inversion, rotoreflections).
    pub fn is_chiral(self) -> bool {
        matches!(
            self,
            PointGroup::C1
                | PointGroup::C(_)
                | PointGroup::D(_)
                | PointGroup::T
                | PointGroup::O
                | PointGroup::I
        )
    }

    /// True for one of the 28 groups a fullerene can have.
    pub fn is_fullerene_group(self) -> bool {
        FULLERENE_GROUPS.contains(&self)
    }
}

impl fmt::Display for PointGroup {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.name())
    }
}

/// A string that is not a Schoenflies symbol this crate knows.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct PointGroupParseError(pub String);

impl fmt::Display for PointGroupParseError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "'{}' is not a Schoenflies symbol; use e.g. Ih, D5h, C2v, S6, Cs, C1",
            self.0
        )
    }
}

impl std::error::Error for PointGroupParseError {}

impl FromStr for PointGroup {
    type Err = PointGroupParseError;

    /// Parses a Schoenflies symbol such as "D5h", "S4", "Ih" (case of the suffix letter matters
    /// only as written: "Ih", "Td", "C2v").
    fn from_str(s: &str) -> Result<PointGroup, PointGroupParseError> {
        let bad = || PointGroupParseError(s.to_string());
        let fixed = match s {
            "C1" => Some(PointGroup::C1),
            "Cs" => Some(PointGroup::Cs),
            "Ci" | "S2" => Some(PointGroup::Ci),
            "T" => Some(PointGroup::T),
            "Td" => Some(PointGroup::Td),
            "Th" => Some(PointGroup::Th),
            "O" => Some(PointGroup::O),
            "Oh" => Some(PointGroup::Oh),
            "I" => Some(PointGroup::I),
            "Ih" => Some(PointGroup::Ih),
            _ => None,
        };
        if let Some(g) = fixed {
            return Ok(g);
        }
        let mut chars = s.chars();
        let family = chars.next().ok_or_else(bad)?;
        let rest = chars.as_str();
        let digits_end = rest
            .find(|c: char| !c.is_ascii_digit())
            .unwrap_or(rest.len());
        let n: u32 = rest[..digits_end].parse().map_err(|_| bad())?;
        let group = match (family, &rest[digits_end..]) {
            ('C', "") if n >= 2 => PointGroup::C(n),
            ('C', "v") if n >= 2 => PointGroup::Cv(n),
            ('C', "h") if n >= 2 => PointGroup::Ch(n),
            ('S', "") if n >= 4 && n % 2 == 0 => PointGroup::S(n),
            ('D', "") if n >= 2 => PointGroup::D(n),
            ('D', "h") if n >= 2 => PointGroup::Dh(n),
            ('D', "d") if n >= 2 => PointGroup::Dd(n),
            _ => return Err(bad()),
        };
        Ok(group)
    }
}

impl Serialize for PointGroup {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        serializer.serialize_str(&self.name())
    }
}

impl<'de> Deserialize<'de> for PointGroup {
    fn deserialize<D: Deserializer<'de>>(deserializer: D) -> Result<PointGroup, D::Error> {
        let text = String::deserialize(deserializer)?;
        text.parse().map_err(serde::de::Error::custom)
    }
}

/// Symmetry descriptors of one cage.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct Symmetry {
    /// Number of automorphisms (the order of the point group).
    pub order: u32,
    pub point_group: PointGroup,
    /// True if the group has no improper element, so the cage has a distinct mirror image.
    pub chiral: bool,
    /// 13C NMR pattern: (intensity = atoms per site, number of such lines), largest intensity first.
    pub nmr: Vec<(u32, u32)>,
}

/// Classifies the automorphism group of `cage` (identity included, as returned by
/// [`crate::spiral::canonical_spiral`]). An empty list is read as the trivial group.
pub fn symmetry(cage: &Cage, automorphisms: &[Automorphism]) -> Symmetry {
    let elements: Vec<Element> = automorphisms.iter().map(|a| Element::of(cage, a)).collect();
    let point_group = classify(&elements);
    Symmetry {
        order: automorphisms.len().max(1) as u32,
        point_group,
        chiral: elements.iter().all(|e| e.proper),
        nmr: nmr_pattern(cage.atoms(), automorphisms),
    }
}

/// What the classifier needs to know about one group element.
#[derive(Debug, Clone, Copy)]
struct Element {
    /// Order of the element (as a permutation of the atoms).
    order: u32,
    proper: bool,
    /// An improper involution that fixes an atom, an edge (as a set) or a face: a reflection in a
    /// plane, which must cut the surface. The inversion fixes no point of the surface.
    mirror: bool,
}

impl Element {
    fn of(cage: &Cage, a: &Automorphism) -> Element {
        let order = permutation_order(&a.atoms);
        let mirror = !a.proper && order == 2 && fixes_some_cell(cage, a);
        Element {
            order,
            proper: a.proper,
            mirror,
        }
    }
}

/// Order of a permutation: the least common multiple of its cycle lengths.
fn permutation_order(perm: &[u32]) -> u32 {
    let mut seen = vec![false; perm.len()];
    let mut order = 1u32;
    for start in 0..perm.len() {
        if seen[start] {
            continue;
        }
        let mut len = 0u32;
        let mut v = start;
        while !seen[v] {
            seen[v] = true;
            v = perm[v] as usize;
            len += 1;
        }
        order = lcm(order, len);
    }
    order
}

fn lcm(a: u32, b: u32) -> u32 {
    a / gcd(a, b) * b
}

fn gcd(mut a: u32, mut b: u32) -> u32 {
    while b != 0 {
        (a, b) = (b, a % b);
    }
    a
}

/// True if `a` maps some atom, some edge (as an unordered pair) or some face to itself.
fn fixes_some_cell(cage: &Cage, a: &Automorphism) -> bool {
    let fixes_atom = a.atoms.iter().enumerate().any(|(v, &w)| v as u32 == w);
    let fixes_face = a.faces.iter().enumerate().any(|(f, &g)| f as u32 == g);
    let fixes_edge = cage
        .edges()
        .iter()
        .any(|&[u, v]| a.atoms[u as usize] == v && a.atoms[v as usize] == u);
    fixes_atom || fixes_face || fixes_edge
}

/// The rotation subgroup, named by its order and the largest rotation order.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Rotations {
    Cyclic(u32),
    Dihedral(u32),
    Tetrahedral,
    Octahedral,
    Icosahedral,
    Unknown,
}

/// Finite rotation groups are C_n, D_n, T, O, I; they differ in order and largest element order.
fn rotation_group(order: u32, largest: u32) -> Rotations {
    match (order, largest) {
        (r, m) if r == m => Rotations::Cyclic(r),
        (12, 3) => Rotations::Tetrahedral,
        (24, 4) => Rotations::Octahedral,
        (60, 5) => Rotations::Icosahedral,
        (r, m) if r % 2 == 0 && m == r / 2 => Rotations::Dihedral(m),
        _ => Rotations::Unknown,
    }
}

/// Names the group from its rotation subgroup, its mirrors and whether it holds the inversion.
fn classify(elements: &[Element]) -> PointGroup {
    let order = elements.len().max(1) as u32;
    let proper: Vec<&Element> = elements.iter().filter(|e| e.proper).collect();
    let largest = proper.iter().map(|e| e.order).max().unwrap_or(1);
    let rotations = rotation_group(proper.len().max(1) as u32, largest);
    let unclassified = PointGroup::Unclassified { order };
    if proper.len() == elements.len() {
        return chiral_group(rotations).unwrap_or(unclassified);
    }
    if 2 * proper.len() != elements.len() {
        return unclassified;
    }
    let improper: Vec<&Element> = elements.iter().filter(|e| !e.proper).collect();
    let mirrors = improper.iter().filter(|e| e.mirror).count() as u32;
    let inversion = improper.iter().any(|e| e.order == 2 && !e.mirror);
    let has_rotoreflection = |m: u32| improper.iter().any(|e| e.order == m);
    achiral_group(rotations, mirrors, inversion, &has_rotoreflection).unwrap_or(unclassified)
}

fn chiral_group(rotations: Rotations) -> Option<PointGroup> {
    Some(match rotations {
        Rotations::Cyclic(1) => PointGroup::C1,
        Rotations::Cyclic(n) => PointGroup::C(n),
        Rotations::Dihedral(n) => PointGroup::D(n),
        Rotations::Tetrahedral => PointGroup::T,
        Rotations::Octahedral => PointGroup::O,
        Rotations::Icosahedral => PointGroup::I,
        Rotations::Unknown => return None,
    })
}

/// The achiral groups with a given rotation subgroup: C_nv has n mirrors, C_nh one (sigma_h),
/// S_2n none; D_nh has n + 1 mirrors, D_nd n; Th holds the inversion, Td does not.
fn achiral_group(
    rotations: Rotations,
    mirrors: u32,
    inversion: bool,
    has_rotoreflection: &dyn Fn(u32) -> bool,
) -> Option<PointGroup> {
    Some(match rotations {
        Rotations::Cyclic(1) if mirrors == 1 => PointGroup::Cs,
        Rotations::Cyclic(1) if inversion => PointGroup::Ci,
        Rotations::Cyclic(n) if n >= 2 && mirrors == n => PointGroup::Cv(n),
        Rotations::Cyclic(n) if n >= 2 && mirrors == 1 => PointGroup::Ch(n),
        Rotations::Cyclic(n) if n >= 2 && mirrors == 0 && has_rotoreflection(2 * n) => {
            PointGroup::S(2 * n)
        }
        Rotations::Dihedral(n) if mirrors == n + 1 => PointGroup::Dh(n),
        Rotations::Dihedral(n) if mirrors == n => PointGroup::Dd(n),
        Rotations::Tetrahedral if inversion && mirrors == 3 => PointGroup::Th,
        Rotations::Tetrahedral if !inversion && mirrors == 6 => PointGroup::Td,
        Rotations::Octahedral if inversion => PointGroup::Oh,
        Rotations::Icosahedral if inversion => PointGroup::Ih,
        _ => return None,
    })
}

/// Orbits of atoms under the group, as (orbit size, number of orbits of that size), largest
/// size first: each orbit is one set of symmetry-equivalent carbons, i.e. one 13C NMR line.
pub fn nmr_pattern(atoms: usize, automorphisms: &[Automorphism]) -> Vec<(u32, u32)> {
    let mut orbit_of = vec![u32::MAX; atoms];
    let mut sizes: BTreeMap<u32, u32> = BTreeMap::new();
    for start in 0..atoms {
        if orbit_of[start] != u32::MAX {
            continue;
        }
        orbit_of[start] = start as u32;
        let mut size = 1u32;
        for a in automorphisms {
            let image = a.atoms[start] as usize;
            if orbit_of[image] == u32::MAX {
                orbit_of[image] = start as u32;
                size += 1;
            }
        }
        *sizes.entry(size).or_insert(0) += 1;
    }
    sizes.into_iter().rev().collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::spiral::{canonical_spiral, Spiral};

    fn symmetry_of(cage: &Cage) -> Symmetry {
        let canon = canonical_spiral(cage).expect("small test cages have spirals");
        symmetry(cage, &canon.automorphisms)
    }

    fn fullerene(atoms: u64, pentagons: &[u64]) -> Cage {
        Spiral::from_pentagon_indices(atoms, pentagons)
            .unwrap()
            .to_cage()
    }

    /// The n-gonal prism: two n-gons joined by a ring of n squares (point group D_nh).
    fn prism(n: u32) -> Cage {
        let mut rotation = Vec::new();
        for i in 0..n {
            rotation.push([(i + 1) % n, (i + n - 1) % n, n + i]);
        }
        for i in 0..n {
            rotation.push([n + (i + n - 1) % n, n + (i + 1) % n, i]);
        }
        Cage::from_rotation(rotation).unwrap()
    }

    #[test]
    fn c60_is_ih_with_one_nmr_line() {
        // from memory: C60-Ih spiral (Atlas); one 13C line of 60 (Taylor et al., J. Chem. Soc.
        // Chem. Commun. 1990, 1423)
        let c = fullerene(60, &[1, 7, 9, 11, 13, 15, 18, 20, 22, 24, 26, 32]);
        let s = symmetry_of(&c);
        assert_eq!(
            (s.order, s.point_group, s.chiral),
            (120, PointGroup::Ih, false)
        );
        assert_eq!(s.nmr, vec![(60, 1)]);
    }

    #[test]
    fn c70_is_d5h_with_five_nmr_lines() {
        // from memory: C70-D5h spiral (Atlas); 13C lines 10:10:20:20:10 (Taylor, Hare,
        // Abdul-Sada, Kroto, J. Chem. Soc. Chem. Commun. 1990, 1423)
        let c = fullerene(70, &[1, 7, 9, 11, 13, 15, 27, 29, 31, 33, 35, 37]);
        let s = symmetry_of(&c);
        assert_eq!(
            (s.order, s.point_group, s.chiral),
            (20, PointGroup::Dh(5), false)
        );
        assert_eq!(s.nmr, vec![(20, 2), (10, 3)]);
        assert_eq!(s.point_group.name(), "D5h");
    }

    #[test]
    fn dodecahedron_is_ih() {
        // The regular dodecahedron has the full icosahedral group Ih of order 120.
        let c = Spiral::from_sizes(vec![5; 12]).unwrap().to_cage();
        let s = symmetry_of(&c);
        assert_eq!((s.order, s.point_group), (120, PointGroup::Ih));
        assert_eq!(s.nmr, vec![(20, 1)]);
    }

    #[test]
    fn prisms_are_dnh_and_the_cube_is_oh() {
        // Textbook point groups: the n-gonal prism is D_nh (order 4n) for n != 4; the cube
        // (n = 4) is Oh (order 48). The triangular prism is D3h.
        for n in 3..=8u32 {
            let s = symmetry_of(&prism(n));
            let expected = if n == 4 {
                PointGroup::Oh
            } else {
                PointGroup::Dh(n)
            };
            assert_eq!(s.point_group, expected, "prism {n}");
            assert_eq!(Some(s.order), expected.order(), "prism {n}");
        }
    }

    #[test]
    fn tetrahedron_is_td() {
        // The regular tetrahedron (K4) has point group Td of order 24.
        let c = Cage::from_rotation(vec![[1, 2, 3], [0, 3, 2], [0, 1, 3], [0, 2, 1]]).unwrap();
        let s = symmetry_of(&c);
        assert_eq!(
            (s.order, s.point_group, s.chiral),
            (24, PointGroup::Td, false)
        );
        assert_eq!(s.nmr, vec![(4, 1)]);
    }

    #[test]
    fn schoenflies_names_round_trip() {
        for g in FULLERENE_GROUPS {
            assert_eq!(g.name().parse::<PointGroup>(), Ok(g));
            assert_eq!(
                g.is_chiral(),
                !g.name().contains(['h', 'd', 'v', 's', 'i', 'S'])
            );
        }
        assert_eq!("S2".parse::<PointGroup>(), Ok(PointGroup::Ci));
        assert!("D1h".parse::<PointGroup>().is_err());
        assert!("X5".parse::<PointGroup>().is_err());
    }

    #[test]
    fn permutation_orders_are_cycle_lcms() {
        // lcm of cycle lengths: (0 1)(2 3 4) has order 6.
        assert_eq!(permutation_order(&[1, 0, 3, 4, 2]), 6);
        assert_eq!(permutation_order(&[0, 1, 2]), 1);
    }
}
