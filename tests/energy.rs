//! Checks of the tight-binding energy model (`src/energy`): bulk carbon from periodic k-point
//! sums, analytic forces against finite differences, relaxed C60 against electron diffraction,
//! an independent numpy implementation at fixed geometries, invariances, charges and the bond
//! graph check. Each check names its source.

mod common;

use cagerank::cage::Cage;
use cagerank::energy::params::{
    embedding, hopping_scale, pair_term, CUTOFF, E_P, E_S, PHI_TAIL, S_TAIL, V_PP_PI, V_PP_SIGMA,
    V_SP_SIGMA, V_SS_SIGMA,
};
use cagerank::energy::{self, EnergyError, Evaluator, Settings};
use cagerank::enumerate::{find_by_number, Spec};
use cagerank::score::symmetry::{symmetry, PointGroup};
use cagerank::spiral::canonical_spiral;
use cagerank::spiral::Spiral;
use nalgebra::DMatrix;
use proptest::prelude::*;
use std::f64::consts::PI;
use std::sync::OnceLock;

fn c60() -> Cage {
    // from memory: Fowler & Manolopoulos, An Atlas of Fullerenes (1995), C60-Ih spiral.
    Spiral::from_pentagon_indices(60, &[1, 7, 9, 11, 13, 15, 18, 20, 22, 24, 26, 32])
        .expect("C60 spiral winds")
        .to_cage()
}

fn flat(coords: &[[f64; 3]]) -> Vec<f64> {
    coords.iter().flatten().copied().collect()
}

fn distance(a: [f64; 3], b: [f64; 3]) -> f64 {
    (0..3).map(|k| (a[k] - b[k]).powi(2)).sum::<f64>().sqrt()
}

/// The force-field geometry of C60, computed once.
fn c60_start() -> &'static [[f64; 3]] {
    static START: OnceLock<Vec<[f64; 3]>> = OnceLock::new();
    START.get_or_init(|| {
        cagerank::geometry::relax(&c60())
            .expect("C60 embeds")
            .coords
    })
}

/// The tight-binding relaxed neutral C60, computed once.
fn c60_relaxed() -> &'static energy::Relaxed {
    static RELAXED: OnceLock<energy::Relaxed> = OnceLock::new();
    RELAXED.get_or_init(|| {
        energy::relax_from(&c60(), c60_start(), 0, Settings::default()).expect("C60 relaxes")
    })
}

// ---------------------------------------------------------------------------------------------
// 1. Bulk carbon: periodic cells and k-point sums.
// ---------------------------------------------------------------------------------------------

/// A periodic crystal: lattice vectors (only the first `periodic` are summed over) and basis.
struct Crystal {
    cell: [[f64; 3]; 3],
    basis: Vec<[f64; 3]>,
    periodic: usize,
}

/// Slater & Koster, Phys. Rev. 94 (1954) 1498, table I: <aμ|H|bν> for the unit vector u from a
/// to b, written out here independently of the crate's Hamiltonian.
fn slater_koster(u: [f64; 3], s: f64) -> [[f64; 4]; 4] {
    let [l, m, n] = u;
    let pp = |a: f64, b: f64, same: bool| {
        a * b * V_PP_SIGMA - a * b * V_PP_PI + if same { V_PP_PI } else { 0.0 }
    };
    let rows = [
        [V_SS_SIGMA, l * V_SP_SIGMA, m * V_SP_SIGMA, n * V_SP_SIGMA],
        [
            -l * V_SP_SIGMA,
            pp(l, l, true),
            pp(l, m, false),
            pp(l, n, false),
        ],
        [
            -m * V_SP_SIGMA,
            pp(m, l, false),
            pp(m, m, true),
            pp(m, n, false),
        ],
        [
            -n * V_SP_SIGMA,
            pp(n, l, false),
            pp(n, m, false),
            pp(n, n, true),
        ],
    ];
    rows.map(|row| row.map(|v| v * s))
}

/// Total energy per atom (eV) with a Γ-centred `mesh`^periodic k-point grid (the grid contains
/// the K points of graphene when `mesh` is a multiple of 3). The Bloch Hamiltonian
/// H(k)_{aμ,bν} = Σ_R <aμ,0|H|bν,R> exp(i k·R) is Hermitian; it is diagonalised as the real
/// symmetric [[Re, -Im], [Im, Re]], whose spectrum is H(k)'s with every level twice, so the
/// lowest 4·(atoms) of its levels sum to the band energy of 4 electrons per atom.
fn bulk_energy_per_atom(crystal: &Crystal, mesh: usize) -> f64 {
    let atoms = crystal.basis.len();
    let dim = 4 * atoms;
    let range: i32 = 3;
    let span = |axis: usize| if axis < crystal.periodic { range } else { 0 };
    let mut hops = Vec::new();
    let mut pair_sums = Vec::with_capacity(atoms);
    for (a, pa) in crystal.basis.iter().enumerate() {
        let mut sum = 0.0;
        for (b, pb) in crystal.basis.iter().enumerate() {
            for m0 in -span(0)..=span(0) {
                for m1 in -span(1)..=span(1) {
                    for m2 in -span(2)..=span(2) {
                        let m = [m0, m1, m2];
                        let d: [f64; 3] = std::array::from_fn(|k| {
                            pb[k] - pa[k]
                                + (0..3)
                                    .map(|i| m[i] as f64 * crystal.cell[i][k])
                                    .sum::<f64>()
                        });
                        let r = d.iter().map(|v| v * v).sum::<f64>().sqrt();
                        if !(1e-9..CUTOFF).contains(&r) {
                            continue;
                        }
                        sum += pair_term(r).0;
                        let u = d.map(|v| v / r);
                        hops.push((a, b, m, slater_koster(u, hopping_scale(r).0)));
                    }
                }
            }
        }
        pair_sums.push(sum);
    }
    let repulsive: f64 = pair_sums.iter().map(|&x| embedding(x).0).sum();
    let points: usize = mesh.pow(crystal.periodic as u32);
    let mut band = 0.0;
    for index in 0..points {
        let mut f = [0.0; 3];
        let mut rest = index;
        for fi in f.iter_mut().take(crystal.periodic) {
            *fi = (rest % mesh) as f64 / mesh as f64;
            rest /= mesh;
        }
        let mut real = DMatrix::<f64>::zeros(2 * dim, 2 * dim);
        for a in 0..atoms {
            for mu in 0..4 {
                let e = if mu == 0 { E_S } else { E_P };
                real[(4 * a + mu, 4 * a + mu)] = e;
                real[(dim + 4 * a + mu, dim + 4 * a + mu)] = e;
            }
        }
        for (a, b, m, block) in &hops {
            let phase = 2.0 * PI * (0..3).map(|i| f[i] * m[i] as f64).sum::<f64>();
            let (c, s) = (phase.cos(), phase.sin());
            for (mu, row) in block.iter().enumerate() {
                for (nu, &h) in row.iter().enumerate() {
                    let (i, j) = (4 * a + mu, 4 * b + nu);
                    real[(i, j)] += h * c;
                    real[(dim + i, dim + j)] += h * c;
                    real[(i, dim + j)] -= h * s;
                    real[(dim + i, j)] += h * s;
                }
            }
        }
        let mut levels: Vec<f64> = real.symmetric_eigenvalues().iter().copied().collect();
        levels.sort_by(f64::total_cmp);
        band += levels[..4 * atoms].iter().sum::<f64>();
    }
    (band / points as f64 + repulsive) / atoms as f64
}

/// Golden-section search for the bond length (Å) with the lowest energy per atom in [lo, hi].
fn minimum_bond(energy: impl Fn(f64) -> f64, mut lo: f64, mut hi: f64) -> (f64, f64) {
    let ratio = (5f64.sqrt() - 1.0) / 2.0;
    let mut a = hi - ratio * (hi - lo);
    let mut b = lo + ratio * (hi - lo);
    let (mut fa, mut fb) = (energy(a), energy(b));
    while hi - lo > 1e-5 {
        if fa < fb {
            hi = b;
            (b, fb) = (a, fa);
            a = hi - ratio * (hi - lo);
            fa = energy(a);
        } else {
            lo = a;
            (a, fa) = (b, fb);
            b = lo + ratio * (hi - lo);
            fb = energy(b);
        }
    }
    let d = (lo + hi) / 2.0;
    (d, energy(d))
}

fn diamond(bond: f64) -> Crystal {
    let h = 2.0 * bond / 3f64.sqrt(); // half the cubic lattice constant a = 4 d / √3
    Crystal {
        cell: [[0.0, h, h], [h, 0.0, h], [h, h, 0.0]],
        basis: vec![[0.0; 3], [h / 2.0; 3]],
        periodic: 3,
    }
}

fn graphene(bond: f64) -> Crystal {
    let a = 3f64.sqrt() * bond;
    let cell = [
        [a, 0.0, 0.0],
        [a / 2.0, a * 3f64.sqrt() / 2.0, 0.0],
        [0.0, 0.0, 20.0],
    ];
    let third: [f64; 3] = std::array::from_fn(|k| (cell[0][k] + cell[1][k]) / 3.0);
    Crystal {
        cell,
        basis: vec![[0.0; 3], third],
        periodic: 2,
    }
}

// Computed from the published parameters (domain notes §7, Xu et al. 1992) with periodic
// k-point sums, not published figures: diamond bond 1.539 Å and -8.392 eV/atom. A 12³ grid
// is within 1e-6 eV/atom of 16³ (an insulator; measured when this test was written).
#[test]
fn diamond_bond_and_cohesive_energy_from_the_published_parameters() {
    let (bond, e) = minimum_bond(|d| bulk_energy_per_atom(&diamond(d), 12), 1.45, 1.65);
    assert!((bond - 1.539).abs() < 5e-4, "diamond bond {bond:.5}");
    assert!((e + 8.392).abs() < 5e-4, "diamond energy {e:.5}");
}

// Computed from the published parameters (domain notes §7) as above: graphene bond 1.418 Å and
// -8.407 eV/atom. Graphene is a semimetal: a Γ-centred 48² grid (through the K points) is
// within 5e-5 eV/atom of 96² (-8.40729 against -8.40733, measured when this test was written).
#[test]
fn graphene_bond_and_cohesive_energy_from_the_published_parameters() {
    let (bond, e) = minimum_bond(|d| bulk_energy_per_atom(&graphene(d), 48), 1.35, 1.5);
    assert!((bond - 1.418).abs() < 5e-4, "graphene bond {bond:.5}");
    assert!((e + 8.407).abs() < 5e-4, "graphene energy {e:.5}");
}

// ---------------------------------------------------------------------------------------------
// 2. Analytic forces against central finite differences.
// ---------------------------------------------------------------------------------------------

/// C60 blown up by 4.8 %, so that the 6:6-side second neighbours (2.47 Å) move to about 2.585 Å,
/// inside both cutoff tails, and the pentagon-side ones (2.35 Å) to about 2.46 Å, inside the tail
/// of s only; then pushed off symmetry by fixed displacements up to 0.01 Å.
fn distorted_c60() -> Vec<f64> {
    let mut x = flat(c60_start());
    for (k, v) in x.iter_mut().enumerate() {
        let wobble = ((k * 7919 + 13) % 101) as f64 / 50.0 - 1.0;
        *v = *v * 1.048 + 0.01 * wobble;
    }
    x
}

fn pair_distances(x: &[f64]) -> Vec<(usize, usize, f64)> {
    let n = x.len() / 3;
    let mut out = Vec::new();
    for i in 0..n {
        for j in i + 1..n {
            let d = (0..3)
                .map(|k| (x[3 * i + k] - x[3 * j + k]).powi(2))
                .sum::<f64>();
            out.push((i, j, d.sqrt()));
        }
    }
    out
}

// Central differences (E(x+h) - E(x-h)) / 2h with h = 1e-5 Å: truncation error ~h² |E'''| and
// rounding error ~1e-16 |E| / h ~ 1e-8 eV/Å for |E| ~ 500 eV (common practice, no source).
#[test]
fn analytic_forces_match_finite_differences_including_both_cutoff_tails() {
    let x = distorted_c60();
    let pairs = pair_distances(&x);
    let in_s_tail: Vec<_> = pairs
        .iter()
        .filter(|p| p.2 > S_TAIL && p.2 < CUTOFF)
        .collect();
    let in_phi_tail: Vec<_> = pairs
        .iter()
        .filter(|p| p.2 > PHI_TAIL && p.2 < CUTOFF)
        .collect();
    assert!(
        in_s_tail.len() >= 10,
        "{} pairs in the s tail",
        in_s_tail.len()
    );
    assert!(
        in_phi_tail.len() >= 10,
        "{} pairs in the φ tail",
        in_phi_tail.len()
    );
    // Every coordinate of atoms in pairs inside both tails, and of a few in the s tail only.
    let mut atoms: Vec<usize> = in_phi_tail
        .iter()
        .flat_map(|p| [p.0, p.1])
        .take(8)
        .collect();
    atoms.extend(in_s_tail.iter().map(|p| p.0).take(4));
    atoms.sort_unstable();
    atoms.dedup();
    for charge in [0, -6, -1] {
        let mut evaluator = Evaluator::new(60, charge).unwrap();
        let mut grad = vec![0.0; x.len()];
        evaluator.energy_gradient(&x, &mut grad);
        let h = 1e-5;
        for &a in &atoms {
            for d in 0..3 {
                let k = 3 * a + d;
                let mut p = x.clone();
                p[k] += h;
                let up = evaluator.energy(&p);
                p[k] -= 2.0 * h;
                let down = evaluator.energy(&p);
                let numeric = (up - down) / (2.0 * h);
                assert!(
                    (numeric - grad[k]).abs() < 2e-6,
                    "Q {charge} atom {a} axis {d}: analytic {} numeric {numeric}",
                    grad[k]
                );
            }
        }
    }
}

// ---------------------------------------------------------------------------------------------
// 3. Relaxed C60.
// ---------------------------------------------------------------------------------------------

#[test]
fn c60_relaxes_to_icosahedral_bonds_energy_and_gap() {
    let cage = c60();
    let relaxed = c60_relaxed();
    assert!(relaxed.converged && relaxed.graph_kept && !relaxed.perturbed);
    assert!(relaxed.max_force < 1e-3);
    let mut lengths: Vec<f64> = cage
        .edges()
        .iter()
        .map(|&[a, b]| distance(relaxed.coords[a as usize], relaxed.coords[b as usize]))
        .collect();
    lengths.sort_by(f64::total_cmp);
    let (short, long) = lengths.split_at(30);
    // Ih: 30 6:6 and 60 6:5 bonds, exactly two distinct lengths (equal within 1e-4 Å at a
    // 1e-3 eV/Å force threshold; common practice, no source), the classes well apart.
    assert!(
        short[29] - short[0] < 1e-4 && long[59] - long[0] < 1e-4,
        "{lengths:?}"
    );
    assert!(long[0] - short[29] > 0.03);
    let (r66, r65) = (short[15], long[30]);
    // Computed from the published parameters (domain notes §7): 6:6 1.396 Å, 6:5 1.458 Å.
    assert!((r66 - 1.396).abs() < 1e-3, "6:6 {r66}");
    assert!((r65 - 1.458).abs() < 1e-3, "6:5 {r65}");
    // Hedberg et al., Science 254 (1991) 410: 1.401(10) Å and 1.458(6) Å.
    assert!((r66 - 1.401).abs() < 0.010 && (r65 - 1.458).abs() < 0.006);
    // Computed from the published parameters (domain notes §7): -8.0085 eV/atom, gap 1.62 eV.
    // This model gives 1.6147 eV here (the numpy reference agrees at fixed geometries, and a
    // 1e-5 eV/Å force threshold changes nothing), so the gap is checked to 0.01 eV.
    let per_atom = relaxed.energy_ev / 60.0;
    assert!((per_atom + 8.0085).abs() < 1e-4, "{per_atom}");
    assert!(
        (relaxed.frontier.gap_ev - 1.62).abs() < 0.01,
        "{:?}",
        relaxed.frontier
    );
    assert!(relaxed.frontier.somo.is_none() && !relaxed.frontier.partly_filled);
    assert!((relaxed.band_ev + relaxed.repulsive_ev - relaxed.energy_ev).abs() < 1e-9);
}

// ---------------------------------------------------------------------------------------------
// 5. Invariances.
// ---------------------------------------------------------------------------------------------

/// The rotation Rz(a) Ry(b) Rz(c).
fn rotation(a: f64, b: f64, c: f64) -> [[f64; 3]; 3] {
    let rz = |t: f64| {
        let (s, c) = t.sin_cos();
        [[c, -s, 0.0], [s, c, 0.0], [0.0, 0.0, 1.0]]
    };
    let (sb, cb) = b.sin_cos();
    let ry = [[cb, 0.0, sb], [0.0, 1.0, 0.0], [-sb, 0.0, cb]];
    let mul = |p: [[f64; 3]; 3], q: [[f64; 3]; 3]| -> [[f64; 3]; 3] {
        std::array::from_fn(|i| std::array::from_fn(|j| (0..3).map(|k| p[i][k] * q[k][j]).sum()))
    };
    mul(mul(rz(a), ry), rz(c))
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(12))]

    // The energy of a free cluster depends only on its interatomic distances: invariant under
    // rotation, translation and relabelling (to ~1e-9 relative; common practice, no source).
    #[test]
    fn energy_is_invariant_under_rotation_translation_and_relabelling(
        angles in (0.0..2.0 * PI, 0.0..PI, 0.0..2.0 * PI),
        shift in (-5.0..5.0f64, -5.0..5.0f64, -5.0..5.0f64),
        seed in any::<u64>(),
        charge in prop::sample::select(vec![0, -1, -6]),
    ) {
        let x = distorted_c60();
        let mut evaluator = Evaluator::new(60, charge).unwrap();
        let reference = evaluator.energy(&x);
        let r = rotation(angles.0, angles.1, angles.2);
        let t = [shift.0, shift.1, shift.2];
        let perm = common::random_perm(60, seed);
        let mut y = vec![0.0; x.len()];
        for a in 0..60 {
            let p = perm[a] as usize;
            for i in 0..3 {
                y[3 * p + i] = t[i] + (0..3).map(|k| r[i][k] * x[3 * a + k]).sum::<f64>();
            }
        }
        let moved = evaluator.energy(&y);
        prop_assert!(((moved - reference) / reference).abs() < 1e-9, "{reference} {moved}");
    }
}

// ---------------------------------------------------------------------------------------------
// 6. Charges.
// ---------------------------------------------------------------------------------------------

#[test]
fn charges_that_leave_no_electrons_or_no_empty_level_are_errors() {
    // N_el = 4n - Q (domain notes §7).
    assert_eq!(energy::electron_count(60, 0), Ok(240));
    assert_eq!(energy::electron_count(60, -3), Ok(243));
    assert_eq!(energy::electron_count(60, 239), Ok(1));
    for charge in [240, 300, i32::MAX] {
        assert!(matches!(
            energy::electron_count(60, charge),
            Err(EnergyError::NoElectrons { .. })
        ));
    }
    for charge in [-240, i32::MIN] {
        assert!(matches!(
            energy::electron_count(60, charge),
            Err(EnergyError::TooManyElectrons { .. })
        ));
    }
    let message = energy::relax(&c60(), 1000, Settings::default())
        .unwrap_err()
        .to_string();
    assert!(
        !message.contains('\n') && message.contains("choose a charge"),
        "{message}"
    );
    assert!(Evaluator::new(60, i32::MIN).is_err() && Evaluator::new(60, i32::MAX).is_err());
}

#[test]
fn an_odd_electron_count_on_a_distorted_cage_gives_a_somo() {
    let x = distorted_c60();
    let mut closed = Evaluator::new(60, 0).unwrap();
    closed.energy(&x);
    let mut odd = Evaluator::new(60, 1).unwrap();
    odd.energy(&x);
    let frontier = odd.frontier();
    let somo = frontier
        .somo
        .expect("239 electrons leave one level singly filled");
    assert!(!frontier.partly_filled);
    // One electron fewer than the closed shell: the SOMO is the neutral HOMO level.
    assert_eq!(somo.level_ev, closed.frontier().homo_ev);
    assert_eq!(frontier.homo_ev, somo.level_ev);
    assert!(somo.gap_below_ev > 0.0 && somo.gap_above_ev > 0.0);
    assert_eq!(frontier.gap_ev, somo.gap_above_ev);
    assert_eq!(frontier.lumo_ev, closed.frontier().lumo_ev);
}

/// C60⁻ relaxed from the Ih force-field geometry, computed once.
fn c60_anion() -> &'static energy::Relaxed {
    static RELAXED: OnceLock<energy::Relaxed> = OnceLock::new();
    RELAXED.get_or_init(|| {
        energy::relax_from(&c60(), c60_start(), -1, Settings::default()).expect("C60- relaxes")
    })
}

// C60⁻ puts one electron into the threefold t1u LUMO (Hückel picture, domain notes §3): at the
// Ih geometry the level is partly filled, a symmetric saddle point of a Jahn-Teller-active ion.
#[test]
fn c60_anion_is_partly_filled_at_ih_and_relaxes_again_from_a_perturbation() {
    let mut evaluator = Evaluator::new(60, -1).unwrap();
    evaluator.energy(&flat(&c60_relaxed().coords));
    let at_ih = evaluator.frontier();
    assert!(at_ih.partly_filled && at_ih.gap_ev == 0.0 && at_ih.somo.is_none());
    let relaxed = c60_anion();
    assert!(
        relaxed.perturbed && relaxed.converged && relaxed.graph_kept,
        "{relaxed:?}"
    );
    // Deterministic: the same bits again.
    let again = energy::relax_from(&c60(), c60_start(), -1, Settings::default()).unwrap();
    assert_eq!(again.energy_ev.to_bits(), relaxed.energy_ev.to_bits());
    assert_eq!(again.coords, relaxed.coords);
}

#[test]
fn c60_anion_energy_does_not_depend_on_atom_order() {
    let relaxed = c60_anion();
    let perm = common::random_perm(60, 2024);
    let cage = c60().relabelled(&perm);
    let mut start = vec![[0.0; 3]; 60];
    for (a, &p) in perm.iter().enumerate() {
        start[p as usize] = c60_start()[a];
    }
    let other = energy::relax_from(&cage, &start, -1, Settings::default()).unwrap();
    assert!(other.perturbed);
    // Relabelled, the perturbation pushes other atoms, so the run may end in another of the
    // equivalent Jahn-Teller minima: energies agree to what the force threshold resolves.
    assert!(
        (other.energy_ev - relaxed.energy_ev).abs() < 1e-4,
        "{} {}",
        other.energy_ev,
        relaxed.energy_ev
    );
}

// ---------------------------------------------------------------------------------------------
// 7. The bond graph check.
// ---------------------------------------------------------------------------------------------

#[test]
fn a_squeezed_non_bonded_pair_is_flagged_as_a_rearranged_cage() {
    let cage = c60();
    let relaxed = c60_relaxed();
    assert!(energy::keeps_graph(&cage, &relaxed.coords));
    // Two atoms across a hexagon (para, about 2.8 Å apart) pulled to 1.5 Å.
    let hexagon = cage.faces().iter().find(|f| f.len() == 6).unwrap();
    let (a, b) = (hexagon[0] as usize, hexagon[3] as usize);
    let mut coords = relaxed.coords.clone();
    let (pa, pb) = (coords[a], coords[b]);
    let mid: [f64; 3] = std::array::from_fn(|k| (pa[k] + pb[k]) / 2.0);
    let half = distance(pa, pb) / 2.0;
    for (atom, p) in [(a, pa), (b, pb)] {
        coords[atom] = std::array::from_fn(|k| mid[k] + (p[k] - mid[k]) * 0.75 / half);
    }
    assert!((distance(coords[a], coords[b]) - 1.5).abs() < 1e-9);
    assert!(!energy::keeps_graph(&cage, &coords));
    // A bond stretched to 2 Å breaks the graph too.
    let [u, v] = cage.edges()[0].map(|x| x as usize);
    let mut coords = relaxed.coords.clone();
    let (pu, pv) = (coords[u], coords[v]);
    coords[v] = std::array::from_fn(|k| pu[k] + (pv[k] - pu[k]) * 2.0 / distance(pu, pv));
    assert!(!energy::keeps_graph(&cage, &coords));
}

#[test]
fn wrong_starting_geometries_are_errors() {
    let cage = c60();
    assert!(matches!(
        energy::relax_from(&cage, &c60_start()[..59], 0, Settings::default()),
        Err(EnergyError::WrongAtomCount {
            atoms: 60,
            coords: 59
        })
    ));
    let mut bad = c60_start().to_vec();
    bad[7][1] = f64::NAN;
    assert!(matches!(
        energy::relax_from(&cage, &bad, 0, Settings::default()),
        Err(EnergyError::NonFiniteCoordinate { atom: 7 })
    ));
}

// ---------------------------------------------------------------------------------------------
// 4. An independent numpy implementation at fixed geometries (scripts/reference_tb.py).
// ---------------------------------------------------------------------------------------------

const TB_DATA: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/data/tb");

fn isomer(atoms: u64, ipr: bool, number: u64) -> Cage {
    find_by_number(&Spec::fullerene(atoms, ipr).expect("valid size"), number)
        .expect("the isomer exists")
        .spiral
        .to_cage()
}

/// The cages whose geometries are committed under tests/data/tb: (file, cage, point group).
fn reference_cages() -> Vec<(&'static str, Cage, PointGroup)> {
    vec![
        ("c60_start.xyz", c60(), PointGroup::Ih),
        ("c60_distorted.xyz", c60(), PointGroup::Ih),
        // from memory: Atlas of Fullerenes (1995), C70-D5h spiral.
        (
            "c70_start.xyz",
            Spiral::from_pentagon_indices(70, &[1, 7, 9, 11, 13, 15, 27, 29, 31, 33, 35, 37])
                .expect("C70 spiral winds")
                .to_cage(),
            PointGroup::Dh(5),
        ),
        // C82:9 (C2v), the cage of La@C82, and C84:23 (D2d), a major C84 isomer (IPR numbers,
        // from memory: Atlas of Fullerenes 1995).
        ("c82_9_start.xyz", isomer(82, true, 9), PointGroup::Cv(2)),
        ("c84_23_start.xyz", isomer(84, true, 23), PointGroup::Dd(2)),
    ]
}

/// Regenerates the committed geometries (force-field starts, and the distorted C60 of the force
/// check). Run once by hand: `cargo test --release --test energy -- --ignored write_reference`.
#[test]
#[ignore]
fn write_reference_geometries() {
    for (file, cage, group) in reference_cages() {
        let canonical = canonical_spiral(&cage).expect("the cage has a spiral");
        assert_eq!(
            symmetry(&cage, &canonical.automorphisms).point_group,
            group,
            "{file}"
        );
        let coords: Vec<[f64; 3]> = if file == "c60_distorted.xyz" {
            distorted_c60()
                .chunks(3)
                .map(|c| [c[0], c[1], c[2]])
                .collect()
        } else {
            cagerank::geometry::relax(&cage).expect("embeds").coords
        };
        let mut text = Vec::new();
        let comment = format!("{file}: {} atoms, force-field geometry", cage.atoms());
        cagerank::export::xyz::write(&mut text, &comment, &coords).expect("writes to memory");
        std::fs::write(format!("{TB_DATA}/{file}"), text).expect("writes the file");
    }
}

// scripts/reference_tb.py (numpy, written independently from the published formulas) at the
// committed geometries; its output is tests/data/tb/reference.json, made with the command it
// records. Agreement to 1e-6 eV (and eV/Å for the forces).
#[test]
fn energies_and_forces_agree_with_the_numpy_reference() {
    let text = std::fs::read_to_string(format!("{TB_DATA}/reference.json")).unwrap();
    let reference: serde_json::Value = serde_json::from_str(&text).unwrap();
    let cases = reference["cases"].as_array().unwrap();
    assert_eq!(cases.len(), 7);
    for case in cases {
        let file = case["file"].as_str().unwrap();
        let charge = case["charge"].as_i64().unwrap() as i32;
        let xyz = std::fs::read_to_string(format!("{TB_DATA}/{file}")).unwrap();
        let x = flat(&cagerank::export::xyz::parse(&xyz).unwrap().coords);
        let mut evaluator = Evaluator::new(x.len() / 3, charge).unwrap();
        let mut grad = vec![0.0; x.len()];
        let total = evaluator.energy_gradient(&x, &mut grad);
        let parts = evaluator.parts();
        let frontier = evaluator.frontier();
        let max_force = grad
            .chunks(3)
            .map(|g| g.iter().map(|v| v * v).sum::<f64>().sqrt())
            .fold(0.0, f64::max);
        let norm = grad.iter().map(|v| v * v).sum::<f64>().sqrt();
        let expect = |key: &str, value: f64| {
            let want = case[key].as_f64().unwrap();
            assert!(
                (value - want).abs() < 1e-6,
                "{file} Q {charge} {key}: {value} vs {want}"
            );
        };
        assert_eq!(
            case["electrons"].as_u64(),
            Some(evaluator.electrons() as u64)
        );
        expect("band_ev", parts.band_ev);
        expect("repulsive_ev", parts.repulsive_ev);
        expect("total_ev", total);
        expect("homo_ev", frontier.homo_ev);
        expect("lumo_ev", frontier.lumo_ev);
        expect("gap_ev", frontier.gap_ev);
        expect("max_force", max_force);
        expect("gradient_norm", norm);
        assert_eq!(
            case["partly_filled"].as_bool(),
            Some(frontier.partly_filled)
        );
        // The odd cases are SOMOs on cages with no degenerate frontier level.
        assert_eq!(
            frontier.somo.is_some(),
            evaluator.electrons() % 2 == 1,
            "{file}"
        );
    }
}

// ---------------------------------------------------------------------------------------------
// 8. The eigensolver (all levels, vectors of the lowest only) against nalgebra.
// ---------------------------------------------------------------------------------------------

/// Checks `Eigensolver` on the symmetric `a` against nalgebra's symmetric eigendecomposition:
/// levels, residuals and orthonormality of the lowest `count` vectors, and their projector, by
/// inverse iteration and by the divide-and-conquer fallback. Backward-stable solvers give
/// eigenvalues and residuals within a small multiple of nε‖A‖, and a projector onto levels
/// separated by a gap g within ~ε‖A‖/g (Golub & Van Loan, Matrix Computations, 4th ed. 2013,
/// §8.1-8.2, from memory); the tolerances below leave a factor of about 100 (common practice,
/// no source).
fn check_eigensolver(a: &DMatrix<f64>, count: usize, label: &str) {
    use cagerank::energy::spectrum::Eigensolver;
    let n = a.nrows();
    let norm = (0..n)
        .map(|i| (0..n).map(|j| a[(i, j)].abs()).sum::<f64>())
        .fold(0.0, f64::max);
    let reference = a.clone().symmetric_eigen();
    let mut order: Vec<usize> = (0..n).collect();
    order.sort_by(|&x, &y| reference.eigenvalues[x].total_cmp(&reference.eigenvalues[y]));
    let gap = reference.eigenvalues[order[count]] - reference.eigenvalues[order[count - 1]];
    assert!(gap > 1e-3 * norm, "{label}: choose a count at a gap");
    let mut solver = Eigensolver::new(n);
    for fallback in [false, true] {
        let mut work = faer::Mat::<f64>::from_fn(n, n, |i, j| a[(i, j)]);
        let mut levels = vec![0.0; n];
        solver.levels(work.as_mut(), &mut levels).unwrap();
        for (k, &o) in order.iter().enumerate() {
            let want = reference.eigenvalues[o];
            assert!(
                (levels[k] - want).abs() < 1e-13 * n as f64 * norm,
                "{label}: level {k} {} vs {want}",
                levels[k]
            );
        }
        let mut vectors = faer::Mat::<f64>::zeros(n, n);
        if fallback {
            solver
                .lowest_vectors_by_divide_and_conquer(work.as_mut(), count, vectors.as_mut())
                .unwrap();
        } else {
            solver
                .lowest_vectors(work.as_mut(), count, vectors.as_mut())
                .unwrap();
        }
        let v = DMatrix::<f64>::from_fn(n, count, |i, k| vectors[(i, k)]);
        let residual = a * &v - &v * DMatrix::from_diagonal(&levels[..count].to_vec().into());
        assert!(
            residual.amax() < 1e-13 * n as f64 * norm,
            "{label} (fallback {fallback}): residual {}",
            residual.amax()
        );
        let overlap = v.transpose() * &v - DMatrix::<f64>::identity(count, count);
        assert!(
            overlap.amax() < 1e-10,
            "{label} (fallback {fallback}): orthonormality {}",
            overlap.amax()
        );
        let lowest =
            DMatrix::<f64>::from_fn(n, count, |i, k| reference.eigenvectors[(i, order[k])]);
        let projector = &v * v.transpose() - &lowest * lowest.transpose();
        assert!(
            projector.amax() < 1e-13 * n as f64 * norm / gap,
            "{label} (fallback {fallback}): projector {}",
            projector.amax()
        );
    }
}

fn random_symmetric(n: usize, seed: u64) -> DMatrix<f64> {
    use rand::{Rng, SeedableRng};
    let mut rng = rand::rngs::StdRng::seed_from_u64(seed);
    let m = DMatrix::<f64>::from_fn(n, n, |_, _| rng.gen_range(-1.0..1.0));
    (&m + m.transpose()) * 0.5
}

/// A count at the widest gap among the levels from a third to two thirds of the spectrum.
fn count_at_a_gap(a: &DMatrix<f64>) -> usize {
    let mut levels: Vec<f64> = a.clone().symmetric_eigenvalues().iter().copied().collect();
    levels.sort_by(f64::total_cmp);
    let n = levels.len();
    (n / 3..2 * n / 3)
        .max_by(|&x, &y| (levels[x] - levels[x - 1]).total_cmp(&(levels[y] - levels[y - 1])))
        .unwrap()
}

#[test]
fn eigensolver_agrees_with_nalgebra_on_random_matrices() {
    for (n, seed) in [(2, 1), (3, 2), (40, 3), (150, 4)] {
        let a = random_symmetric(n, seed);
        let count = if n < 4 { 1 } else { count_at_a_gap(&a) };
        check_eigensolver(&a, count, &format!("random {n}"));
    }
}

// A ⊕ A has every level twice; with the rows shuffled the tridiagonal form splits only to
// rounding, unshuffled it splits exactly. A diagonal matrix splits into 1x1 blocks.
#[test]
fn eigensolver_agrees_with_nalgebra_on_degenerate_and_split_matrices() {
    let block = random_symmetric(30, 5);
    let mut doubled = DMatrix::<f64>::zeros(60, 60);
    doubled.view_mut((0, 0), (30, 30)).copy_from(&block);
    doubled.view_mut((30, 30), (30, 30)).copy_from(&block);
    let count = 2 * count_at_a_gap(&block);
    check_eigensolver(&doubled, count, "A+A");
    let perm = common::random_perm(60, 7);
    let shuffled =
        DMatrix::<f64>::from_fn(60, 60, |i, j| doubled[(perm[i] as usize, perm[j] as usize)]);
    check_eigensolver(&shuffled, count, "A+A shuffled");
    let diagonal = DMatrix::<f64>::from_fn(12, 12, |i, j| {
        if i == j {
            [3.0, -1.0, 2.0, -1.0, 0.0, 5.0][i % 6]
        } else {
            0.0
        }
    });
    check_eigensolver(&diagonal, 6, "diagonal");
}

// The Hamiltonian of C60 at its Ih force-field geometry, built here with this file's own
// Slater-Koster blocks: 3-, 4- and 5-fold degenerate levels; 120 levels below the HOMO-LUMO gap.
#[test]
fn eigensolver_agrees_with_nalgebra_on_the_c60_hamiltonian() {
    let x = c60_start();
    let n = 4 * x.len();
    let mut h = DMatrix::<f64>::zeros(n, n);
    for (i, a) in x.iter().enumerate() {
        h[(4 * i, 4 * i)] = E_S;
        for p in 1..4 {
            h[(4 * i + p, 4 * i + p)] = E_P;
        }
        for (j, b) in x.iter().enumerate() {
            let r = distance(*a, *b);
            if i == j || r >= CUTOFF {
                continue;
            }
            let u: [f64; 3] = std::array::from_fn(|k| (b[k] - a[k]) / r);
            let block = slater_koster(u, hopping_scale(r).0);
            for (mu, row) in block.iter().enumerate() {
                for (nu, &v) in row.iter().enumerate() {
                    h[(4 * i + mu, 4 * j + nu)] = v;
                }
            }
        }
    }
    check_eigensolver(&h, 120, "C60");
}

// ---------------------------------------------------------------------------------------------
// Large cages.
// ---------------------------------------------------------------------------------------------

/// Icosahedral C540: the leapfrog of the leapfrog of C60 (each leapfrog triples the atoms and
/// keeps the point group: Fowler & Steer 1987, from memory), the Goldberg cage (3,3).
/// Ignored: about 1 min on one core (about 17 evaluations of a 2160-orbital Hamiltonian, 2-4 s
/// each). Run with
/// `cargo test --release --test energy -- --ignored c540 --nocapture`.
#[test]
#[ignore]
fn c540_relaxes_keeping_its_bonds_between_c60_and_graphene() {
    let cage = c60().leapfrog().leapfrog();
    let canonical = canonical_spiral(&cage).expect("C540 has a spiral");
    assert_eq!(
        symmetry(&cage, &canonical.automorphisms).point_group,
        PointGroup::Ih
    );
    let clock = std::time::Instant::now();
    let relaxed = energy::relax(&cage, 0, Settings::default()).unwrap();
    eprintln!(
        "C540-Ih: {:.1} s, {} iterations, {:.5} eV/atom, gap {:.3} eV",
        clock.elapsed().as_secs_f64(),
        relaxed.iterations,
        relaxed.energy_ev / 540.0,
        relaxed.frontier.gap_ev
    );
    assert!(relaxed.converged && relaxed.graph_kept && !relaxed.perturbed);
    // Flatter than C60, so lower per atom, but still above flat graphene (both computed from the
    // published parameters, domain notes §7).
    let per_atom = relaxed.energy_ev / 540.0;
    assert!(per_atom < -8.0085 && per_atom > -8.407, "{per_atom}");
}

// ---------------------------------------------------------------------------------------------
// Allocation: the workspace and the minimiser allocate up front, not per evaluation or step.
// ---------------------------------------------------------------------------------------------

/// Counts allocations made by the current thread (tests run on several threads at once).
struct CountingAllocator;

thread_local! {
    static ALLOCATIONS: std::cell::Cell<usize> = const { std::cell::Cell::new(0) };
}

unsafe impl std::alloc::GlobalAlloc for CountingAllocator {
    unsafe fn alloc(&self, layout: std::alloc::Layout) -> *mut u8 {
        ALLOCATIONS.with(|c| c.set(c.get() + 1));
        unsafe { std::alloc::System.alloc(layout) }
    }
    unsafe fn dealloc(&self, ptr: *mut u8, layout: std::alloc::Layout) {
        unsafe { std::alloc::System.dealloc(ptr, layout) }
    }
}

#[global_allocator]
static COUNTER: CountingAllocator = CountingAllocator;

fn allocations() -> usize {
    ALLOCATIONS.with(|c| c.get())
}

#[test]
fn an_evaluation_allocates_nothing() {
    let x = distorted_c60();
    let mut evaluator = Evaluator::new(60, -1).unwrap();
    let mut grad = vec![0.0; x.len()];
    // The first evaluation on a thread may let faer's matrix-multiply kernels set up their
    // per-thread packing buffers (one allocation, seen when no other faer call ran here first).
    evaluator.energy_gradient(&x, &mut grad);
    let before = allocations();
    for _ in 0..3 {
        evaluator.energy_gradient(&x, &mut grad);
        evaluator.energy(&x);
    }
    assert_eq!(allocations() - before, 0);
}

#[test]
fn the_minimiser_allocates_the_same_however_many_steps_it_takes() {
    use cagerank::geometry::minimise::{lbfgs, Settings as MinSettings};
    // A stiff quadratic bowl, sum of (i+1) x_i^2: more steps for a tighter threshold.
    let count = |max_force: f64| {
        let mut x = vec![1.0; 30];
        let before = allocations();
        let out = lbfgs(
            &mut x,
            MinSettings {
                max_force,
                memory: 4,
                ..MinSettings::default()
            },
            |p, g| {
                let mut e = 0.0;
                for (i, (v, gi)) in p.iter().zip(g.iter_mut()).enumerate() {
                    e += (i + 1) as f64 * v * v;
                    *gi = 2.0 * (i + 1) as f64 * v;
                }
                e
            },
        );
        (allocations() - before, out.iterations)
    };
    let (loose, few) = count(1e-1);
    let (tight, many) = count(1e-9);
    assert!(many > few + 5, "{few} {many}");
    assert_eq!(loose, tight);
}

#[test]
fn undefined_geometries_give_nan_not_a_panic() {
    let mut evaluator = Evaluator::new(60, 0).unwrap();
    let mut grad = vec![0.0; 180];
    let mut x = distorted_c60();
    x[4] = f64::NAN;
    assert!(evaluator.energy_gradient(&x, &mut grad).is_nan());
    assert!(grad.iter().all(|g| g.is_nan()) && evaluator.parts().band_ev.is_nan());
    let mut x = distorted_c60();
    x.copy_within(0..3, 3);
    assert!(evaluator.energy(&x).is_nan());
    // The workspace is still good afterwards.
    assert!(evaluator.energy(&distorted_c60()).is_finite());
}

// The opt-in parallel eigensolver changes rounding only (common practice, no source: the same
// backward-stable algorithm with another summation order).
#[test]
fn the_parallel_eigensolver_agrees_with_the_sequential_one() {
    let x = distorted_c60();
    let mut evaluator = Evaluator::new(60, -1).unwrap();
    let mut grad = vec![0.0; x.len()];
    let sequential = evaluator.energy_gradient(&x, &mut grad);
    let sequential_grad = grad.clone();
    evaluator.set_threads(2);
    let parallel = evaluator.energy_gradient(&x, &mut grad);
    assert!((parallel - sequential).abs() < 1e-9 * sequential.abs());
    let worst = grad
        .iter()
        .zip(&sequential_grad)
        .map(|(a, b)| (a - b).abs())
        .fold(0.0, f64::max);
    assert!(worst < 1e-8, "{worst}");
}

// Every fullerene isomer C20-C36 (OEIS A007894: 1+0+1+1+2+3+6+6+15 = 35 cages), neutral and
// as the anion (odd, often a partly filled degenerate level), relaxes to convergence and keeps
// its bond graph: fullerenes are local minima of carbon potentials (common practice, no
// source), so a failure here is a bug in the forces, the filling or the saddle handling.
#[test]
fn every_small_fullerene_relaxes_and_keeps_its_bonds_neutral_and_as_anion() {
    use cagerank::enumerate::{enumerate, Options};
    let mut checked = 0;
    for atoms in (20..=36).step_by(2).filter(|&n| n != 22) {
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
            for charge in [0, -1] {
                let r = energy::relax(&cage, charge, Settings::default()).unwrap();
                assert!(
                    r.converged && r.graph_kept,
                    "C{atoms} {spiral} Q {charge}: {r:?}"
                );
                checked += 1;
            }
        }
    }
    assert_eq!(checked, 2 * 35);
}
