//! Relaxation of a cage in the tight-binding model: L-BFGS, preconditioned with the bond graph's
//! Laplacian, from the force-field geometry (or a given start) to a force threshold; a second
//! run from a perturbed start when the first stops on a symmetric saddle point; and a check that
//! the relaxed bonds are still the cage's edges.
//!
//! The energy and forces come from [`Evaluator`]; the minimiser is
//! [`crate::geometry::minimise::lbfgs_preconditioned`]; the starting geometry comes from
//! [`crate::geometry::relax`].

use super::{EnergyError, Evaluator, Relaxed, Settings};
use crate::cage::Cage;
use crate::geometry::minimise::{self, max_atom_norm};

/// Two atoms closer than this (Å) are bonded, farther apart not. C–C bonds in cages are
/// 1.35-1.6 Å and non-bonded neighbours across a ring at least ~2.2 Å, so 1.8 Å is far from both
/// (common practice, no source).
pub const BOND_MAX: f64 = 1.8;

/// Size of the deterministic displacements (Å) of the perturbed second run: large enough to take
/// a Jahn-Teller-active cage well off its symmetric saddle, small against a bond (common practice,
/// no source).
const PERTURBATION: f64 = 0.015;

/// Stiffness scale μ (eV/Å²) of the preconditioner: a bond-stretching mode of the bond graph
/// (Laplacian eigenvalues up to ~6 for three bonds per atom) then costs up to ~60 eV/Å², about
/// the tight-binding C–C stretch of an atom held by three bonds of ~6 mdyn/Å ≈ 37 eV/Å² each
/// (from memory: typical aromatic C–C stretch force constants). The minimiser rescales the
/// preconditioner from the curvature it measures, so μ only sets the first step.
const STIFFNESS: f64 = 10.0;

/// Shift c (in units of μ) that makes L + c I positive definite (L is singular: translations
/// cost nothing). 0.1 is Packwood et al.'s stabilising shift; 0.02-0.2 gave the same iteration
/// counts on C60⁻, five C84 isomers and C100 (14-16 for C84).
const SHIFT: f64 = 0.1;

/// Relaxes `cage` with charge `charge` from the force-field geometry of
/// [`crate::geometry::relax`].
pub fn relax(cage: &Cage, charge: i32, settings: Settings) -> Result<Relaxed, EnergyError> {
    super::electron_count(cage.atoms(), charge)?;
    let start = crate::geometry::relax(cage)?;
    relax_from(cage, &start.coords, charge, settings)
}

/// Relaxes `cage` with charge `charge` from the coordinates `start` (Å, one per atom).
pub fn relax_from(
    cage: &Cage,
    start: &[[f64; 3]],
    charge: i32,
    settings: Settings,
) -> Result<Relaxed, EnergyError> {
    let atoms = cage.atoms();
    if start.len() != atoms {
        return Err(EnergyError::WrongAtomCount {
            atoms,
            coords: start.len(),
        });
    }
    if let Some(atom) = start.iter().position(|c| c.iter().any(|v| !v.is_finite())) {
        return Err(EnergyError::NonFiniteCoordinate { atom });
    }
    let mut evaluator = Evaluator::new(atoms, charge)?;
    evaluator.set_threads(settings.threads);
    let flat: Vec<f64> = start.iter().flatten().copied().collect();
    let mut precondition = GraphPreconditioner::new(cage);
    let mut best = run(&mut evaluator, &mut precondition, flat.clone(), settings);
    if best.frontier.partly_filled {
        let mut shifted = flat;
        perturb(&mut shifted);
        let mut second = run(&mut evaluator, &mut precondition, shifted, settings);
        second.iterations += best.iterations;
        second.evaluations += best.evaluations;
        second.perturbed = true;
        if second.energy_ev < best.energy_ev {
            best = second;
        } else {
            best.iterations = second.iterations;
            best.evaluations = second.evaluations;
            best.perturbed = true;
        }
    }
    best.graph_kept = keeps_graph(cage, &best.coords);
    Ok(best)
}

/// One L-BFGS run from `x`; the reported parts and frontier are the evaluator's at the final
/// point.
fn run(
    evaluator: &mut Evaluator,
    precondition: &mut GraphPreconditioner,
    mut x: Vec<f64>,
    settings: Settings,
) -> Relaxed {
    let outcome = minimise::lbfgs_preconditioned(
        &mut x,
        minimise::Settings {
            max_force: settings.max_force,
            max_iterations: settings.max_iterations,
            ..minimise::Settings::default()
        },
        |p, g| evaluator.energy_gradient(p, g),
        &mut |v: &mut [f64]| precondition.apply(v),
    );
    // A converged run's last evaluation was at the final point; otherwise it may have been a
    // rejected trial step, so the final point is evaluated again.
    let mut evaluations = outcome.evaluations;
    let (energy, max_force) = if outcome.converged {
        (outcome.value, outcome.max_force)
    } else {
        let mut grad = vec![0.0; x.len()];
        let energy = evaluator.energy_gradient(&x, &mut grad);
        evaluations += 1;
        (energy, max_atom_norm(&grad))
    };
    let parts = evaluator.parts();
    Relaxed {
        coords: centred(&x),
        energy_ev: energy,
        band_ev: parts.band_ev,
        repulsive_ev: parts.repulsive_ev,
        frontier: evaluator.frontier(),
        max_force,
        iterations: outcome.iterations,
        evaluations,
        converged: max_force < settings.max_force,
        graph_kept: false,
        perturbed: false,
    }
}

fn centred(x: &[f64]) -> Vec<[f64; 3]> {
    let n = (x.len() / 3).max(1) as f64;
    let centre: [f64; 3] = std::array::from_fn(|d| x.iter().skip(d).step_by(3).sum::<f64>() / n);
    x.chunks_exact(3)
        .map(|c| std::array::from_fn(|d| c[d] - centre[d]))
        .collect()
}

/// Adds fixed pseudo-random displacements in [-PERTURBATION, PERTURBATION] Å to every
/// coordinate: SplitMix64 (Steele, Lea & Flood, OOPSLA 2014) of the coordinate's index, so the
/// same cage always gets the same push.
fn perturb(x: &mut [f64]) {
    for (k, v) in x.iter_mut().enumerate() {
        let mut z = (k as u64 + 1).wrapping_mul(0x9E37_79B9_7F4A_7C15);
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^= z >> 31;
        let unit = (z >> 11) as f64 / (1u64 << 53) as f64;
        *v += PERTURBATION * (2.0 * unit - 1.0);
    }
}

/// True if the pairs of atoms closer than [`BOND_MAX`] are exactly the edges of `cage`: every
/// edge shorter, every other pair longer. False flags a cage that rearranged while relaxing.
pub fn keeps_graph(cage: &Cage, coords: &[[f64; 3]]) -> bool {
    let rotation = cage.rotation();
    coords.len() == cage.atoms()
        && coords.iter().enumerate().all(|(i, a)| {
            coords.iter().enumerate().skip(i + 1).all(|(j, b)| {
                let d2: f64 = (0..3).map(|k| (a[k] - b[k]).powi(2)).sum();
                let bonded = rotation[i].contains(&(j as u32));
                bonded == (d2 < BOND_MAX * BOND_MAX)
            })
        })
}

/// The preconditioner P = μ (L + c I) ⊗ I₃, L the Laplacian of the cage graph: a stiffness model
/// in which every bond is a spring, after the "Exp" preconditioner of Packwood, Kermode, Mones,
/// Bernstein, Woolley, Gould, Ortner & Csányi, J. Chem. Phys. 144 (2016) 164109, restricted to
/// bonded pairs with equal weights. It captures why plain L-BFGS is slow on cages (stiff bonds,
/// soft long-wavelength deformations) and halves the iterations (C84: 33 to 15). It depends only
/// on the graph, so it is factored once (dense Cholesky, n³/3) and applied per step (3n² per
/// component) without allocation.
struct GraphPreconditioner {
    n: usize,
    /// Lower Cholesky factor of L + c I, row-major.
    factor: Vec<f64>,
    column: Vec<f64>,
    scale: f64,
}

impl GraphPreconditioner {
    fn new(cage: &Cage) -> GraphPreconditioner {
        let n = cage.atoms();
        let mut a = vec![0.0; n * n];
        for i in 0..n {
            a[i * n + i] = SHIFT;
        }
        for &[u, v] in cage.edges() {
            let (u, v) = (u as usize, v as usize);
            a[u * n + u] += 1.0;
            a[v * n + v] += 1.0;
            a[u * n + v] -= 1.0;
            a[v * n + u] -= 1.0;
        }
        for j in 0..n {
            let mut d = a[j * n + j];
            for k in 0..j {
                d -= a[j * n + k] * a[j * n + k];
            }
            let d = d.sqrt();
            a[j * n + j] = d;
            for i in j + 1..n {
                let mut v = a[i * n + j];
                for k in 0..j {
                    v -= a[i * n + k] * a[j * n + k];
                }
                a[i * n + j] = v / d;
            }
        }
        GraphPreconditioner {
            n,
            factor: a,
            column: vec![0.0; n],
            scale: 1.0 / STIFFNESS,
        }
    }

    fn apply(&mut self, v: &mut [f64]) {
        let n = self.n;
        let l = &self.factor;
        for d in 0..3 {
            let b = &mut self.column;
            for i in 0..n {
                b[i] = v[3 * i + d];
            }
            for i in 0..n {
                let mut s = b[i];
                for k in 0..i {
                    s -= l[i * n + k] * b[k];
                }
                b[i] = s / l[i * n + i];
            }
            for i in (0..n).rev() {
                let mut s = b[i];
                for k in i + 1..n {
                    s -= l[k * n + i] * b[k];
                }
                b[i] = s / l[i * n + i];
            }
            for i in 0..n {
                v[3 * i + d] = self.scale * b[i];
            }
        }
    }
}
