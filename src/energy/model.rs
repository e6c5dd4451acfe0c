//! The tight-binding Hamiltonian, its total energy and the analytic forces, evaluated in a
//! reusable workspace.
//!
//! Four orbitals per atom (s, px, py, pz) in an orthogonal basis; the two-centre hoppings follow
//! Slater & Koster, Phys. Rev. 94 (1954) 1498, scaled by s(r) from `params.rs`. The band energy is
//! Σ f_k ε_k with the occupations of `occupation.rs`; the repulsion is Σ_i f(Σ_j φ(r_ij)). Forces
//! are Hellmann-Feynman: dE_band/dR = Σ_ij ρ_ij dH_ij/dR with ρ = Σ_k f_k c_k c_kᵀ, and only the
//! 4×4 blocks of ρ for neighbour pairs are formed. Every level comes from `spectrum.rs`, but
//! eigenvectors only for the levels that hold electrons (the occupations decide how many, and a
//! partly filled group is always taken whole), about half the work of a full eigensolver's
//! vectors. Relaxation is left to `relax.rs`.

use super::occupation::fill;
use super::params::{
    embedding, hopping_scale, pair_term, CUTOFF, E_P, E_S, V_PP_PI, V_PP_SIGMA, V_SP_SIGMA,
    V_SS_SIGMA,
};
use super::spectrum::Eigensolver;
use super::{electron_count, EnergyError, EnergyParts, Frontier};
use faer::{Mat, Par};

/// Orbitals per atom.
const ORBITALS: usize = 4;

/// One neighbour pair i < j closer than the cutoff, with what the Hamiltonian and the forces need.
#[derive(Debug, Clone, Copy, Default)]
struct Pair {
    i: usize,
    j: usize,
    r: f64,
    /// Unit vector from i to j.
    u: [f64; 3],
    s: f64,
    ds: f64,
    dphi: f64,
}

/// A workspace for one cage size and charge: every buffer is allocated in [`Evaluator::new`], so
/// evaluations during a relaxation allocate nothing (the neighbour list only grows if a geometry
/// has more close pairs than any before it).
pub struct Evaluator {
    atoms: usize,
    electrons: usize,
    /// H's lower triangle; the eigensolver overwrites it with its Householder vectors.
    hamiltonian: Mat<f64>,
    solver: Eigensolver,
    /// Eigenvectors of the occupied levels, in the first columns.
    vectors: Mat<f64>,
    level_list: Vec<f64>,
    occupations: Vec<f64>,
    /// √f_k c_k laid out [atom][k][orbital], for the occupied k only.
    weighted: Vec<f64>,
    pairs: Vec<Pair>,
    embed_slope: Vec<f64>,
    parts: EnergyParts,
    frontier: Frontier,
}

impl std::fmt::Debug for Evaluator {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Evaluator")
            .field("atoms", &self.atoms)
            .field("electrons", &self.electrons)
            .finish_non_exhaustive()
    }
}

impl Evaluator {
    /// A workspace for `atoms` carbon atoms carrying total charge `charge` (N_el = 4n - Q).
    pub fn new(atoms: usize, charge: i32) -> Result<Evaluator, EnergyError> {
        let electrons = electron_count(atoms, charge)?;
        let dim = ORBITALS * atoms;
        // A fullerene atom has 3 bonded and 6 second neighbours within 2.6 Å; room for 16 each
        // covers strongly distorted cages without growing.
        let pair_capacity = (8 * atoms).min(atoms * atoms.saturating_sub(1) / 2);
        Ok(Evaluator {
            atoms,
            electrons,
            hamiltonian: Mat::zeros(dim, dim),
            solver: Eigensolver::new(dim),
            vectors: Mat::zeros(dim, dim),
            level_list: vec![0.0; dim],
            occupations: vec![0.0; dim],
            weighted: vec![0.0; dim * dim],
            pairs: Vec::with_capacity(pair_capacity),
            embed_slope: vec![0.0; atoms],
            parts: EnergyParts::default(),
            frontier: Frontier::default(),
        })
    }

    /// Number of atoms this workspace was built for.
    pub fn atoms(&self) -> usize {
        self.atoms
    }

    /// Number of valence electrons, 4n - Q.
    pub fn electrons(&self) -> usize {
        self.electrons
    }

    /// Run the eigensolver's dense steps (tridiagonalisation and back-transformation) on
    /// `threads` threads (0 = all, 1 = sequential, the default). Only worth it for cages of
    /// several hundred atoms; results with more than one thread may differ
    /// in the last bits from sequential ones, so outputs meant to be byte-identical stay at 1.
    pub fn set_threads(&mut self, threads: usize) {
        self.solver.set_par(if threads == 1 {
            Par::Seq
        } else {
            Par::rayon(threads)
        });
    }

    /// Band and repulsive energy of the last evaluation.
    pub fn parts(&self) -> EnergyParts {
        self.parts
    }

    /// Frontier levels of the last evaluation.
    pub fn frontier(&self) -> Frontier {
        self.frontier
    }

    /// Total energy (eV) at flat coordinates `[x0, y0, z0, x1, ...]` (Å); fills `grad` with
    /// dE/dx (eV/Å). Allocates nothing. Coordinates that are not finite, or two atoms at the same
    /// place, give NaN energy and gradient (a minimiser then rejects the step).
    pub fn energy_gradient(&mut self, coords: &[f64], grad: &mut [f64]) -> f64 {
        assert_eq!(coords.len(), 3 * self.atoms, "one xyz triple per atom");
        assert_eq!(grad.len(), coords.len(), "gradient matches coordinates");
        let repulsive = self.neighbours_and_repulsion(coords);
        let solved = self
            .diagonalise()
            .then(|| self.occupy())
            .filter(|&occupied| {
                self.solver
                    .lowest_vectors(self.hamiltonian.as_mut(), occupied, self.vectors.as_mut())
                    .is_ok()
            });
        let Some(occupied) = solved else {
            grad.iter_mut().for_each(|g| *g = f64::NAN);
            return self.undefined();
        };
        self.weigh_occupied(occupied);
        grad.iter_mut().for_each(|g| *g = 0.0);
        self.add_forces(occupied, grad);
        self.parts.band_ev + repulsive
    }

    /// Total energy (eV) at flat coordinates (Å), without forces (eigenvalues only); NaN where
    /// [`Self::energy_gradient`] gives NaN.
    pub fn energy(&mut self, coords: &[f64]) -> f64 {
        assert_eq!(coords.len(), 3 * self.atoms, "one xyz triple per atom");
        let repulsive = self.neighbours_and_repulsion(coords);
        if !self.diagonalise() {
            return self.undefined();
        }
        self.occupy();
        self.parts.band_ev + repulsive
    }

    /// Marks the last evaluation as undefined (NaN everywhere) and returns NaN.
    fn undefined(&mut self) -> f64 {
        self.parts = EnergyParts {
            band_ev: f64::NAN,
            repulsive_ev: f64::NAN,
        };
        self.frontier = Frontier {
            homo_ev: f64::NAN,
            lumo_ev: f64::NAN,
            gap_ev: f64::NAN,
            somo: None,
            partly_filled: false,
        };
        f64::NAN
    }

    /// Builds the pair list and the repulsive energy; leaves f'(x_i) in `embed_slope`.
    fn neighbours_and_repulsion(&mut self, coords: &[f64]) -> f64 {
        self.pairs.clear();
        let cutoff2 = CUTOFF * CUTOFF;
        let x = &mut self.embed_slope;
        x.iter_mut().for_each(|v| *v = 0.0);
        for i in 0..self.atoms {
            let a = &coords[3 * i..3 * i + 3];
            for j in i + 1..self.atoms {
                let b = &coords[3 * j..3 * j + 3];
                let d = [b[0] - a[0], b[1] - a[1], b[2] - a[2]];
                let r2 = d[0] * d[0] + d[1] * d[1] + d[2] * d[2];
                if r2 >= cutoff2 {
                    continue;
                }
                let r = r2.sqrt();
                let (s, ds) = hopping_scale(r);
                let (phi, dphi) = pair_term(r);
                x[i] += phi;
                x[j] += phi;
                self.pairs.push(Pair {
                    i,
                    j,
                    r,
                    u: [d[0] / r, d[1] / r, d[2] / r],
                    s,
                    ds,
                    dphi,
                });
            }
        }
        let mut repulsive = 0.0;
        for v in x.iter_mut() {
            let (f, df) = embedding(*v);
            repulsive += f;
            *v = df;
        }
        self.parts.repulsive_ev = repulsive;
        repulsive
    }

    /// Fills the lower triangle of H and computes all its levels into `level_list`; false if H
    /// is not finite (non-finite or coinciding atoms) or the solver fails. The eigenvectors are
    /// left for [`Eigensolver::lowest_vectors`], once the occupations say how many are needed.
    fn diagonalise(&mut self) -> bool {
        let h = &mut self.hamiltonian;
        h.fill(0.0);
        for a in 0..self.atoms {
            let o = ORBITALS * a;
            h[(o, o)] = E_S;
            for p in 1..ORBITALS {
                h[(o + p, o + p)] = E_P;
            }
        }
        for pair in &self.pairs {
            let block = hopping_block(pair.u, pair.s);
            let (oi, oj) = (ORBITALS * pair.i, ORBITALS * pair.j);
            // j > i, so row 4j+ν, column 4i+μ is in the lower triangle: <iμ|H|jν>.
            for (mu, row) in block.iter().enumerate() {
                for (nu, &value) in row.iter().enumerate() {
                    h[(oj + nu, oi + mu)] = value;
                }
            }
        }
        self.solver
            .levels(self.hamiltonian.as_mut(), &mut self.level_list)
            .is_ok()
    }

    /// Occupations, band energy and frontier; returns how many levels hold electrons.
    fn occupy(&mut self) -> usize {
        let (band, frontier, occupied) =
            fill(&self.level_list, self.electrons, &mut self.occupations);
        self.parts.band_ev = band;
        self.frontier = frontier;
        occupied
    }

    /// Copies √f_k c_k of the occupied levels into `weighted` ([atom][k][orbital]).
    fn weigh_occupied(&mut self, occupied: usize) {
        for k in 0..occupied {
            let w = self.occupations[k].sqrt();
            let column = self.vectors.col(k);
            for a in 0..self.atoms {
                let out = &mut self.weighted[(a * occupied + k) * ORBITALS..][..ORBITALS];
                for (mu, o) in out.iter_mut().enumerate() {
                    *o = w * column[ORBITALS * a + mu];
                }
            }
        }
    }

    /// Adds the band (Hellmann-Feynman) and repulsive forces of every pair to `grad`.
    fn add_forces(&self, occupied: usize, grad: &mut [f64]) {
        let stride = occupied * ORBITALS;
        for pair in &self.pairs {
            let wi = &self.weighted[pair.i * stride..][..stride];
            let wj = &self.weighted[pair.j * stride..][..stride];
            let rho = density_block(wi, wj);
            let mut g = band_pair_gradient(&rho, pair);
            // Repulsion: d/dd of f(x_i) + f(x_j) through φ(r_ij).
            let rep = (self.embed_slope[pair.i] + self.embed_slope[pair.j]) * pair.dphi;
            for (gd, ud) in g.iter_mut().zip(pair.u) {
                *gd += rep * ud;
            }
            for d in 0..3 {
                grad[3 * pair.j + d] += g[d];
                grad[3 * pair.i + d] -= g[d];
            }
        }
    }
}

/// <iμ|H|jν> for the unit vector u from i to j (Slater & Koster 1954, sp3 block), μ, ν = s, x,
/// y, z.
fn hopping_block(u: [f64; 3], s: f64) -> [[f64; 4]; 4] {
    let mut b = [[0.0; 4]; 4];
    b[0][0] = V_SS_SIGMA * s;
    for a in 0..3 {
        b[0][a + 1] = u[a] * V_SP_SIGMA * s;
        b[a + 1][0] = -u[a] * V_SP_SIGMA * s;
        for c in 0..3 {
            let delta = if a == c { V_PP_PI } else { 0.0 };
            b[a + 1][c + 1] = (u[a] * u[c] * (V_PP_SIGMA - V_PP_PI) + delta) * s;
        }
    }
    b
}

/// ρ_{iμ,jν} = Σ_k (√f_k c_{iμ,k})(√f_k c_{jν,k}) from the two atoms' weighted rows.
fn density_block(wi: &[f64], wj: &[f64]) -> [[f64; 4]; 4] {
    let mut rho = [[0.0; 4]; 4];
    for (a, b) in wi.chunks_exact(ORBITALS).zip(wj.chunks_exact(ORBITALS)) {
        for mu in 0..ORBITALS {
            for nu in 0..ORBITALS {
                rho[mu][nu] += a[mu] * b[nu];
            }
        }
    }
    rho
}

/// d/dd of 2 Σ_μν ρ_μν <iμ|H|jν>(d), d = R_j - R_i (both the ij and the ji block).
///
/// With u = d/r, a = ρ_s,p − ρ_p,s and P the p-p part of ρ, the pair's band energy is
/// 2 s(r) [V_ssσ ρ_ss + V_spσ a·u + (V_ppσ − V_ppπ) uᵀPu + V_ppπ tr P]; du/dd = (1 − uuᵀ)/r.
fn band_pair_gradient(rho: &[[f64; 4]; 4], pair: &Pair) -> [f64; 3] {
    let u = pair.u;
    let a: [f64; 3] = std::array::from_fn(|k| rho[0][k + 1] - rho[k + 1][0]);
    let pu: [f64; 3] = std::array::from_fn(|k| (0..3).map(|c| rho[k + 1][c + 1] * u[c]).sum());
    let ptu: [f64; 3] = std::array::from_fn(|k| (0..3).map(|c| rho[c + 1][k + 1] * u[c]).sum());
    let au: f64 = (0..3).map(|k| a[k] * u[k]).sum();
    let upu: f64 = (0..3).map(|k| u[k] * pu[k]).sum();
    let trace = rho[1][1] + rho[2][2] + rho[3][3];
    let dsig = V_PP_SIGMA - V_PP_PI;
    let radial = V_SS_SIGMA * rho[0][0] + V_SP_SIGMA * au + dsig * upu + V_PP_PI * trace;
    std::array::from_fn(|k| {
        let angular = V_SP_SIGMA * (a[k] - au * u[k]) + dsig * (pu[k] + ptu[k] - 2.0 * upu * u[k]);
        2.0 * (pair.ds * radial * u[k] + pair.s * angular / pair.r)
    })
}
