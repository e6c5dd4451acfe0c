//! A derivative as a molecule: element, 3D position, formal charge and radical flag of every
//! atom, and bonds with orders from one Kekulé structure of the remaining pi system, ready for
//! an XYZ or SDF writer.
//!
//! Positions: cage atoms keep the coordinates the caller gives (e.g. from
//! [`crate::geometry::relax`]); an atom addend sits on the local surface normal of its carbon
//! (the sum of the three bond vectors pointing into the atom, turned outward from the centroid)
//! at a typical bond length; a CH2 bridge carbon sits above the middle of its bond along the
//! mean normal of the two ends, at a C-C single bond from both, with its hydrogens in the plane
//! through the normal perpendicular to the bond, at the tetrahedral angle. These are starting
//! points for a force field or quantum chemistry, not relaxed structures.
//!
//! Valences: a carbon with an addend or bridge has four single bonds; the remaining pi carbons
//! get double bonds from a maximum matching; heteroatoms keep three single bonds (N with its
//! lone pair, B with an empty p orbital), so the molecule is neutral when every pi carbon is
//! matched. Unmatched carbons carry the charge asked for (C+ or C-, one each; if there are too
//! few, double bonds are opened from the end of the list) and any left over are flagged as
//! radicals. Writing files (XYZ, SDF) is left to `export`.

use super::orbits::Search;
use super::{kekule, Addend, Kind, Parent};
use std::collections::BTreeMap;

/// Typical bond lengths in Å (sp3 carbon to H, F, Cl; C-C single), from memory: Allen et al.,
/// J. Chem. Soc. Perkin Trans. 2 (1987) S1.
pub const C_H: f64 = 1.09;
pub const C_F: f64 = 1.38;
pub const C_CL: f64 = 1.79;
pub const C_C_SINGLE: f64 = 1.51;

/// The H-C-H angle of the methano bridge: tetrahedral, 109.47°.
const HCH_DEGREES: f64 = 109.47;

/// One atom of the derivative.
#[derive(Debug, Clone, PartialEq)]
pub struct Atom {
    pub element: &'static str,
    pub position: [f64; 3],
    pub charge: i8,
    /// An unpaired electron (doublet), written as `M  RAD` in a molfile.
    pub radical: bool,
}

/// The whole molecule. Atoms: the cage atoms first, in cage order, then the addend atoms in
/// site order (a bridge is its carbon followed by its two hydrogens).
#[derive(Debug, Clone, PartialEq)]
pub struct Molecule {
    pub atoms: Vec<Atom>,
    /// Bonds as 0-based atom pairs (low, high) with order 1 or 2, sorted.
    pub bonds: Vec<([u32; 2], u8)>,
}

impl Molecule {
    pub fn charge(&self) -> i32 {
        self.atoms.iter().map(|a| i32::from(a.charge)).sum()
    }

    /// All electrons of the molecule: the atomic numbers minus the charge. Quantum-chemistry
    /// decks need it for the spin multiplicity.
    pub fn electrons(&self) -> i64 {
        self.atoms
            .iter()
            .map(|a| i64::from(atomic_number(a.element)))
            .sum::<i64>()
            - i64::from(self.charge())
    }

    /// Spin multiplicity of the lowest spin state: a singlet for an even electron count, a
    /// doublet for an odd one. A pattern with radical centres and an even count may instead be
    /// a triplet; choosing that is left to the user.
    pub fn multiplicity(&self) -> u32 {
        if self.electrons().rem_euclid(2) == 1 {
            2
        } else {
            1
        }
    }

    /// Carbons flagged as radical centres (no partner in the maximum matching, no charge).
    pub fn radical_centres(&self) -> usize {
        self.atoms.iter().filter(|a| a.radical).count()
    }

    /// Molecular formula in Hill order with the charge, see [`hill_formula`].
    pub fn formula(&self) -> String {
        let mut counts: BTreeMap<&str, usize> = BTreeMap::new();
        for a in &self.atoms {
            *counts.entry(a.element).or_default() += 1;
        }
        hill_formula(counts, self.charge())
    }
}

/// A formula in Hill order (C, then H, then the others alphabetically; Hill, J. Am. Chem. Soc.
/// 22 (1900) 478, from memory) with the charge as a suffix: `C60H2`, `C59N+`, `C60H2 2-`.
pub fn hill_formula(mut counts: BTreeMap<&str, usize>, charge: i32) -> String {
    let mut text = String::new();
    let mut put = |element: &str, n: usize| {
        if n == 0 {
            return;
        }
        text.push_str(element);
        if n > 1 {
            text.push_str(&n.to_string());
        }
    };
    for first in ["C", "H"] {
        if let Some(n) = counts.remove(first) {
            put(first, n);
        }
    }
    for (element, n) in counts {
        put(element, n);
    }
    match charge {
        0 => {}
        1 => text.push('+'),
        -1 => text.push('-'),
        q if q > 0 => text.push_str(&format!(" {q}+")),
        q => text.push_str(&format!(" {}-", -q)),
    }
    text
}

/// Atomic number of the elements a derivative can hold (0 for anything else, which `build`
/// never makes).
pub fn atomic_number(element: &str) -> u32 {
    match element {
        "H" => 1,
        "B" => 5,
        "C" => 6,
        "N" => 7,
        "F" => 9,
        "Cl" => 17,
        _ => 0,
    }
}

/// Builds the molecule for the new `sites` of `search` (plus its base) on the parent with cage
/// coordinates `coords` (Å, one per cage atom) and total charge `charge`.
pub fn build(
    parent: &Parent,
    search: &Search,
    sites: &[u32],
    coords: &[[f64; 3]],
    charge: i32,
) -> Molecule {
    let cage = &parent.cage;
    let (removed, hetero) = super::score::effect(parent, search, sites);
    let mut atoms: Vec<Atom> = (0..cage.atoms())
        .map(|v| Atom {
            element: hetero[v].map_or("C", |h| h.symbol()),
            position: coords[v],
            charge: 0,
            radical: false,
        })
        .collect();
    let mut bonds: Vec<([u32; 2], u8)> = cage.edges().iter().map(|&e| (e, 1)).collect();
    let normals = normals(parent, coords);
    let all: Vec<u32> = search.base.iter().chain(sites).copied().collect();
    match (search.kind, search.ends()) {
        (Kind::Addend(addend), _) => {
            for &v in &all {
                let (element, length) = addend_bond(addend);
                let index = atoms.len() as u32;
                atoms.push(neutral(
                    element,
                    along(coords[v as usize], normals[v as usize], length),
                ));
                bonds.push(([v, index], 1));
            }
        }
        (Kind::Bridge(_), Some(ends)) => {
            for &e in &all {
                add_bridge(&mut atoms, &mut bonds, ends[e as usize], coords, &normals);
            }
        }
        _ => {}
    }
    let pi_removed: Vec<bool> = removed
        .iter()
        .zip(&hetero)
        .map(|(&r, h)| r || h.is_some())
        .collect();
    place_double_bonds(cage, &pi_removed, charge, &mut atoms, &mut bonds);
    bonds.sort_unstable();
    Molecule { atoms, bonds }
}

fn neutral(element: &'static str, position: [f64; 3]) -> Atom {
    Atom {
        element,
        position,
        charge: 0,
        radical: false,
    }
}

fn addend_bond(addend: Addend) -> (&'static str, f64) {
    match addend {
        Addend::H => ("H", C_H),
        Addend::F => ("F", C_F),
        Addend::Cl => ("Cl", C_CL),
    }
}

/// Unit outward normal at every cage atom: the sum of the bond vectors into the atom, turned
/// away from the centroid.
pub fn normals(parent: &Parent, coords: &[[f64; 3]]) -> Vec<[f64; 3]> {
    let n = coords.len() as f64;
    let centroid = coords
        .iter()
        .fold([0.0; 3], |c, x| add(c, scale(*x, 1.0 / n)));
    parent
        .cage
        .rotation()
        .iter()
        .enumerate()
        .map(|(v, nb)| {
            let x = coords[v];
            let mut sum = nb
                .iter()
                .fold([0.0; 3], |s, &u| add(s, sub(x, coords[u as usize])));
            if dot(sum, sub(x, centroid)) < 0.0 {
                sum = scale(sum, -1.0);
            }
            if norm(sum) < 1e-9 {
                sum = sub(x, centroid);
            }
            unit(sum)
        })
        .collect()
}

fn add_bridge(
    atoms: &mut Vec<Atom>,
    bonds: &mut Vec<([u32; 2], u8)>,
    [u, v]: [u32; 2],
    coords: &[[f64; 3]],
    normals: &[[f64; 3]],
) {
    let (xu, xv) = (coords[u as usize], coords[v as usize]);
    let middle = scale(add(xu, xv), 0.5);
    let normal = unit(add(normals[u as usize], normals[v as usize]));
    let half = 0.5 * norm(sub(xu, xv));
    let height = (C_C_SINGLE * C_C_SINGLE - half * half).max(0.25).sqrt();
    let carbon = along(middle, normal, height);
    let side = unit(cross(normal, unit(sub(xv, xu))));
    let theta = (HCH_DEGREES / 2.0).to_radians();
    let c = atoms.len() as u32;
    atoms.push(neutral("C", carbon));
    for sign in [1.0, -1.0] {
        let direction = add(scale(normal, theta.cos()), scale(side, sign * theta.sin()));
        atoms.push(neutral("H", along(carbon, direction, C_H)));
    }
    bonds.extend([([u, c], 1), ([v, c], 1), ([c, c + 1], 1), ([c, c + 2], 1)]);
}

/// Double bonds from a maximum matching of the pi carbons; unmatched carbons take the charge,
/// then the radical flags.
fn place_double_bonds(
    cage: &crate::cage::Cage,
    pi_removed: &[bool],
    charge: i32,
    atoms: &mut [Atom],
    bonds: &mut [([u32; 2], u8)],
) {
    let (mut pairs, mut unmatched) = kekule::maximum_matching(cage, pi_removed);
    let need = charge.unsigned_abs() as usize;
    while unmatched.len() < need {
        let Some([a, b]) = pairs.pop() else { break };
        unmatched.extend([a, b]);
    }
    unmatched.sort_unstable();
    for (i, &v) in unmatched.iter().enumerate() {
        if i < need {
            atoms[v as usize].charge = if charge > 0 { 1 } else { -1 };
        } else {
            atoms[v as usize].radical = true;
        }
    }
    for pair in pairs {
        if let Some(bond) = bonds.iter_mut().find(|(b, _)| *b == pair) {
            bond.1 = 2;
        }
    }
}

fn along(x: [f64; 3], direction: [f64; 3], length: f64) -> [f64; 3] {
    add(x, scale(direction, length))
}

fn add(a: [f64; 3], b: [f64; 3]) -> [f64; 3] {
    [a[0] + b[0], a[1] + b[1], a[2] + b[2]]
}

fn sub(a: [f64; 3], b: [f64; 3]) -> [f64; 3] {
    [a[0] - b[0], a[1] - b[1], a[2] - b[2]]
}

fn scale(a: [f64; 3], s: f64) -> [f64; 3] {
    [a[0] * s, a[1] * s, a[2] * s]
}

fn dot(a: [f64; 3], b: [f64; 3]) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}

fn cross(a: [f64; 3], b: [f64; 3]) -> [f64; 3] {
    [
        a[1] * b[2] - a[2] * b[1],
        a[2] * b[0] - a[0] * b[2],
        a[0] * b[1] - a[1] * b[0],
    ]
}

fn norm(a: [f64; 3]) -> f64 {
    dot(a, a).sqrt()
}

fn unit(a: [f64; 3]) -> [f64; 3] {
    let n = norm(a);
    if n < 1e-12 {
        [0.0, 0.0, 1.0]
    } else {
        scale(a, 1.0 / n)
    }
}
