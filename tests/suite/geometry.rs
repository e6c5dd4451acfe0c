//! Checks of the 3D starting geometries: C60 against electron diffraction, small isomers for
//! sane bond lengths and contacts, the XYZ round trip, and two large C500 cages (a long tube and
//! an icosahedral one).

use cagerank::cage::Cage;
use cagerank::geometry::{self, bond_lengths, diameter, min_nonbonded};
use cagerank::score::symmetry::{symmetry, PointGroup};
use cagerank::spiral::{canonical_spiral, Spiral};

fn wind(atoms: u64, pentagons: &[u64]) -> Cage {
    Spiral::from_pentagon_indices(atoms, pentagons)
        .expect("test spiral winds")
        .to_cage()
}

fn c60() -> Cage {
    // from memory: Fowler & Manolopoulos, An Atlas of Fullerenes (1995), C60-Ih spiral.
    wind(60, &[1, 7, 9, 11, 13, 15, 18, 20, 22, 24, 26, 32])
}

fn is_hexagon_pair(cage: &Cage, e: usize) -> bool {
    let [f, g] = cage.edge_faces()[e];
    cage.faces()[f as usize].len() == 6 && cage.faces()[g as usize].len() == 6
}

fn spread(values: &[f64]) -> (f64, f64) {
    let lo = values.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = values.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    (lo, hi)
}

/// (edge index, length in Å) pairs.
type BondList = Vec<(usize, f64)>;

#[test]
fn c60_matches_gas_phase_electron_diffraction() {
    let cage = c60();
    let g = geometry::relax(&cage).unwrap();
    assert!(g.converged, "{g:?}");
    let lengths = bond_lengths(&cage, &g.coords);
    let (hex_hex, hex_pent): (BondList, BondList) = lengths
        .iter()
        .copied()
        .enumerate()
        .partition(|&(e, _)| is_hexagon_pair(&cage, e));
    let hex_hex: Vec<f64> = hex_hex.into_iter().map(|p| p.1).collect();
    let hex_pent: Vec<f64> = hex_pent.into_iter().map(|p| p.1).collect();
    assert_eq!((hex_hex.len(), hex_pent.len()), (30, 60));
    let (lo66, hi66) = spread(&hex_hex);
    let (lo65, hi65) = spread(&hex_pent);
    // Hedberg et al., Science 254 (1991) 410: 6:6 1.401(10) Å, 6:5 1.458(6) Å.
    // Note: the bond-order/length line is calibrated on these two values (see forcefield.rs),
    // so this checks that embedding and minimiser reach the calibrated minimum.
    assert!(
        (lo66 - 1.401).abs() < 0.02 && (hi66 - 1.401).abs() < 0.02,
        "6:6 {lo66}..{hi66}"
    );
    assert!(
        (lo65 - 1.458).abs() < 0.02 && (hi65 - 1.458).abs() < 0.02,
        "6:5 {lo65}..{hi65}"
    );
    // Ih symmetry to 1e-3 Å: all 6:6 bonds equal, all 6:5 bonds equal (common practice, no source).
    assert!(hi66 - lo66 < 1e-3 && hi65 - lo65 < 1e-3);
    // ... and every atom equidistant from the centre.
    let radii: Vec<f64> = g
        .coords
        .iter()
        .map(|c| (c[0] * c[0] + c[1] * c[1] + c[2] * c[2]).sqrt())
        .collect();
    let (rlo, rhi) = spread(&radii);
    assert!(rhi - rlo < 1e-3, "radii {rlo}..{rhi}");
    // Hedberg et al. (1991): cage diameter 7.113(10) Å.
    let d = diameter(&g.coords);
    assert!((d - 7.113).abs() < 0.05, "diameter {d}");
}

#[test]
fn c70_relaxes_to_sane_geometry() {
    // from memory: Atlas of Fullerenes (1995), C70-D5h spiral.
    let cage = wind(70, &[1, 7, 9, 11, 13, 15, 27, 29, 31, 33, 35, 37]);
    let g = geometry::relax(&cage).unwrap();
    assert!(g.converged, "{g:?}");
    let (lo, hi) = spread(&bond_lengths(&cage, &g.coords));
    // common practice, no source: C–C bonds of a neutral cage lie between double and single.
    assert!(lo > 1.33 && hi < 1.55, "{lo}..{hi}");
    assert!(min_nonbonded(&cage, &g.coords) > 2.0);
}

/// Bonds inferred from distances alone (a pair closer than 1.75 Å is bonded), as sorted pairs.
/// common practice, no source: C–C bonds are below 1.6 Å, non-bonded contacts above 2.0 Å.
fn bonds_by_distance(coords: &[[f64; 3]]) -> Vec<[u32; 2]> {
    let mut out = Vec::new();
    for i in 0..coords.len() {
        for j in i + 1..coords.len() {
            let d: f64 = (0..3)
                .map(|k| (coords[i][k] - coords[j][k]).powi(2))
                .sum::<f64>()
                .sqrt();
            if d < 1.75 {
                out.push([i as u32, j as u32]);
            }
        }
    }
    out
}

#[test]
fn every_isomer_c20_to_c50_relaxes_sanely_and_rereads_with_the_same_bonds() {
    use cagerank::enumerate::{enumerate, Options, Spec};
    let mut checked = 0;
    for atoms in (20..=50).step_by(2).filter(|&n| n != 22) {
        let spec = Spec::fullerene(atoms, false).unwrap();
        let mut isomers = Vec::new();
        enumerate(
            &spec,
            &Options::default(),
            |_, _| {},
            |iso| isomers.push(iso.spiral),
        )
        .unwrap();
        for spiral in isomers {
            let cage = spiral.to_cage();
            let g = geometry::relax(&cage).unwrap();
            let (lo, hi) = spread(&bond_lengths(&cage, &g.coords));
            // Issue 5 acceptance range: every bond within 1.33-1.55 Å (common practice, no source).
            assert!(
                lo >= 1.33 && hi <= 1.55,
                "C{atoms} {spiral}: bonds {lo:.3}..{hi:.3}"
            );
            // Issue 5: no two non-bonded atoms closer than 2.0 Å.
            let contact = min_nonbonded(&cage, &g.coords);
            assert!(contact >= 2.0, "C{atoms} {spiral}: contact {contact:.3}");
            let mut text = Vec::new();
            cagerank::export::xyz::write(&mut text, "re-read", &g.coords).unwrap();
            let back = cagerank::export::xyz::parse(std::str::from_utf8(&text).unwrap()).unwrap();
            assert_eq!(
                bonds_by_distance(&back.coords),
                cage.edges(),
                "C{atoms} {spiral}"
            );
            checked += 1;
        }
    }
    // OEIS A007894: 1+0+1+1+2+3+6+6+15+17+40+45+89+116+199+271 isomers for n = 20..50.
    assert_eq!(checked, 812);
}

#[test]
fn energy_and_residual_force_are_reported() {
    let cage = c60();
    let g = geometry::relax(&cage).unwrap();
    assert!(g.energy_ev.is_finite() && g.energy_ev >= 0.0);
    // Converged means the largest residual force is below the default threshold (1e-6 aJ/Å).
    assert!(g.max_force_ev_per_angstrom < 1e-6 * geometry::EV_PER_AJ);
}

/// A (5,5) nanotube capped by two C60 halves: C60-Ih cut across a five-fold axis with 44 rings
/// of 10 atoms inserted. Its spiral keeps C60's pattern (a polar pentagon, five pentagons at
/// 7-15, five near the end and the last face a pentagon); 238-246 and 252 put 440 atoms of
/// hexagons between the caps. The test checks the D5d symmetry this construction must have.
fn tube_c500() -> Cage {
    wind(500, &[1, 7, 9, 11, 13, 15, 238, 240, 242, 244, 246, 252])
}

/// The icosahedral C500, Goldberg polyhedron (5,0) (Goldberg, Tohoku Math. J. 43 (1937) 104).
/// The spiral is the canonical spiral of the dual of a frequency-5 geodesic icosahedron, read
/// once with `spiral::canonical_spiral`; the test checks the Ih symmetry it must have.
fn icosahedral_c500() -> Cage {
    wind(500, &[1, 56, 61, 66, 71, 76, 181, 186, 191, 196, 201, 252])
}

fn point_group(cage: &Cage) -> PointGroup {
    let canonical = canonical_spiral(cage).expect("the cage has a spiral");
    symmetry(cage, &canonical.automorphisms).point_group
}

/// Largest height (Å) of an atom bonded to a ring above that ring's plane, "above" being the
/// side to which most rings' neighbours do not lie: at most a few hundredths of an Å for a
/// convex cage, about 1 Å where a cap is dimpled inwards. Rings are traced in one orientation,
/// so Newell's normals of all rings point to the same side of the surface.
fn worst_bulge_beyond_a_ring(cage: &Cage, coords: &[[f64; 3]]) -> f64 {
    let mut heights = Vec::new();
    for face in cage.faces() {
        let p: Vec<[f64; 3]> = face.iter().map(|&v| coords[v as usize]).collect();
        let m = p.len() as f64;
        let c: [f64; 3] = std::array::from_fn(|d| p.iter().map(|q| q[d]).sum::<f64>() / m);
        let mut normal = [0.0; 3];
        for (i, a) in p.iter().enumerate() {
            let b = p[(i + 1) % p.len()];
            normal[0] += (a[1] - b[1]) * (a[2] + b[2]);
            normal[1] += (a[2] - b[2]) * (a[0] + b[0]);
            normal[2] += (a[0] - b[0]) * (a[1] + b[1]);
        }
        let length = normal.iter().map(|x| x * x).sum::<f64>().sqrt();
        for &v in face {
            for &w in &cage.rotation()[v as usize] {
                if !face.contains(&w) {
                    let q = coords[w as usize];
                    heights.push((0..3).map(|d| normal[d] * (q[d] - c[d])).sum::<f64>() / length);
                }
            }
        }
    }
    let side = if heights.iter().sum::<f64>() > 0.0 {
        -1.0
    } else {
        1.0
    };
    heights
        .iter()
        .map(|h| side * h)
        .fold(f64::NEG_INFINITY, f64::max)
}

#[test]
fn large_tube_and_icosahedral_cages_relax_to_valid_convex_geometries() {
    for (name, cage, group) in [
        ("tube", tube_c500(), PointGroup::Dd(5)),
        ("icosahedral", icosahedral_c500(), PointGroup::Ih),
    ] {
        assert_eq!(point_group(&cage), group, "{name}");
        assert_relaxes_valid_and_convex(name, &cage);
    }
}

/// Relaxes `cage` and checks convergence, the issue 5 acceptance ranges (as for C20-C50
/// above) and convexity: a dimpled cap satisfies both ranges, so no atom may lie more than
/// 0.05 Å beyond a ring (common practice, no source; a ring's neighbours lie well inside its
/// plane on a curved cage).
fn assert_relaxes_valid_and_convex(name: &str, cage: &Cage) {
    let g = geometry::relax(cage).unwrap();
    assert!(g.converged, "{name}: {g:?}");
    let (lo, hi) = spread(&bond_lengths(cage, &g.coords));
    assert!(lo >= 1.33 && hi <= 1.55, "{name}: bonds {lo:.3}..{hi:.3}");
    let contact = min_nonbonded(cage, &g.coords);
    assert!(contact >= 2.0, "{name}: contact {contact:.3}");
    let bulge = worst_bulge_beyond_a_ring(cage, &g.coords);
    assert!(bulge < 0.05, "{name}: an atom {bulge:.3} Å beyond a ring");
}

#[test]
fn a_thousand_atom_tube_relaxes_to_a_valid_convex_geometry() {
    // The same construction with 94 rings: no eigenvector triple separates its atoms (the caps
    // are squeezed), so the start comes from the stress-majorisation fallback.
    let cage = wind(1000, &[1, 7, 9, 11, 13, 15, 488, 490, 492, 494, 496, 502]);
    assert_relaxes_valid_and_convex("C1000 tube", &cage);
}

#[test]
fn tube_keeps_its_length_and_icosahedral_cage_its_roundness() {
    let tube = geometry::relax(&tube_c500()).unwrap();
    let radii = |coords: &[[f64; 3]]| -> Vec<f64> {
        coords
            .iter()
            .map(|c| (c[0] * c[0] + c[1] * c[1] + c[2] * c[2]).sqrt())
            .collect()
    };
    // 22 armchair periods of 2.46 Å (graphite lattice constant, from memory: Bacon, Acta Cryst. 4
    // (1951) 558) plus C60's diameter of 7.113 Å (Hedberg et al. 1991): about 61.2 Å.
    let length = diameter(&tube.coords);
    assert!((length - 61.2).abs() < 1.5, "tube length {length:.2}");
    // The atoms nearest the centre lie on the wall of the tube, whose radius is
    // a·sqrt(n² + nm + m²)/2π = 3.39 Å for (5,5) (from memory: Dresselhaus, Dresselhaus &
    // Saito, Carbon 33 (1995) 883), not on a pinched waist.
    let (rlo, _) = spread(&radii(&tube.coords));
    assert!(
        (rlo - 3.39).abs() < 0.3,
        "nearest atom {rlo:.2} Å from the centre"
    );
    let ico = geometry::relax(&icosahedral_c500()).unwrap();
    let (lo, hi) = spread(&radii(&ico.coords));
    assert!(hi / lo < 1.2, "icosahedral radii {lo:.2}..{hi:.2}");
}
