//! Relaxed electronic energies of carbon cages from the orthogonal sp3 tight-binding model of
//! Xu, Wang, Chan & Ho, J. Phys.: Condens. Matter 4 (1992) 6047 (parameters in [`params`]).
//!
//! Graph descriptors rank the experimentally made isomers poorly; a relaxed tight-binding energy
//! is the next cheapest screen. [`Evaluator`] gives the energy and analytic forces of one
//! geometry in a preallocated workspace; [`relax`] and [`relax_from`] minimise it with the L-BFGS
//! of [`crate::geometry::minimise`], preconditioned with the bond graph's Laplacian, from the
//! force-field geometry (or a given one).
//!
//! **Electrons.** A cage of n atoms and charge Q has N_el = 4n - Q valence electrons (an
//! endohedral such as La@C82 is modelled as the cage ion, C82 with Q = -3). Levels are grouped
//! into degenerate groups (within [`occupation::DEGENERACY_TOL_EV`] of the group's lowest level)
//! and the groups are filled from the bottom, two electrons per orbital; a group that cannot be
//! filled completely shares its electrons equally among its orbitals, so energy and forces
//! depend only on the group's subspace and never on which eigenvectors the solver returned.
//! Odd N_el is never refused.
//!
//! **Frontier** ([`Frontier`]). HOMO = the highest group with electrons, LUMO = the lowest group
//! with room. When that is the same group (a degenerate group partly filled, e.g. the 3-fold t1u
//! level of C60⁻ holding one electron) the gap is 0 and `partly_filled` is set. When the highest
//! group is a single orbital with one electron (odd N_el), it is the SOMO: `somo` is set,
//! `homo_ev` is the SOMO level, `lumo_ev` the lowest empty level, `gap_ev` = LUMO − SOMO, and
//! `gap_below_ev` = SOMO − highest doubly filled level. A level that does not exist (no empty
//! level at all) is reported as +∞.
//!
//! **Relaxation** stops when the largest force on any atom is below `Settings::max_force`. A
//! relaxation that ends with a partly filled degenerate group sits on a symmetric saddle point:
//! it is run again from a small deterministic perturbation and the lower energy is kept. At the
//! end the bond graph is checked ([`keeps_graph`]): a relaxed cage whose bonds (pairs closer than
//! [`BOND_MAX`]) are no longer the cage's edges is flagged, not hidden.
//!
//! **Limits.** A 0 K electronic energy of a bare cage: no zero-point energy, entropy, spin
//! polarisation or encapsulated metal. This module reads cages and coordinates; it does no I/O,
//! stores nothing and prints nothing (catalogue storage and the command line live elsewhere).
//!
//! ```
//! use cagerank::spiral::Spiral;
//! let c60 = Spiral::from_pentagon_indices(60, &[1, 7, 9, 11, 13, 15, 18, 20, 22, 24, 26, 32])
//!     .unwrap()
//!     .to_cage();
//! let relaxed = cagerank::energy::relax(&c60, 0, Default::default()).unwrap();
//! assert!(relaxed.converged && relaxed.graph_kept);
//! assert!((relaxed.energy_ev / 60.0 + 8.0085).abs() < 1e-3);
//! ```

pub mod model;
pub mod occupation;
pub mod params;
pub mod relax;
pub mod spectrum;

pub use model::Evaluator;
pub use relax::{keeps_graph, relax, relax_from, BOND_MAX};

use crate::geometry::GeometryError;
use std::fmt;

/// When a relaxation stops, and how many threads the eigensolver uses.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Settings {
    /// Converged when the largest force on any atom is below this (eV/Å).
    pub max_force: f64,
    /// Gives up (with `converged = false`) after this many L-BFGS iterations per run.
    pub max_iterations: usize,
    /// Eigensolver threads: 1 (the default) is sequential and bit-reproducible; 0 = all cores.
    pub threads: usize,
}

impl Default for Settings {
    fn default() -> Self {
        Settings {
            max_force: 1e-3,
            max_iterations: 2000,
            threads: 1,
        }
    }
}

/// Why an energy could not be computed.
#[derive(Debug, Clone, PartialEq)]
pub enum EnergyError {
    /// The charge leaves no valence electrons.
    NoElectrons { atoms: usize, charge: i32 },
    /// The charge leaves no empty level (8 electrons per atom or more).
    TooManyElectrons {
        atoms: usize,
        charge: i32,
        electrons: i64,
    },
    /// No force-field starting geometry could be built.
    NoStartGeometry(GeometryError),
    /// A starting geometry with the wrong number of atoms.
    WrongAtomCount { atoms: usize, coords: usize },
    /// A starting coordinate that is NaN or infinite.
    NonFiniteCoordinate { atom: usize },
}

impl fmt::Display for EnergyError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            EnergyError::NoElectrons { atoms, charge } => write!(
                f,
                "charge {charge:+} leaves no valence electrons on a {atoms}-atom cage \
                 (4 per atom minus the charge); choose a charge below {}",
                4 * atoms
            ),
            EnergyError::TooManyElectrons {
                atoms,
                charge,
                electrons,
            } => write!(
                f,
                "charge {charge:+} gives {electrons} valence electrons, which fill every level \
                 of a {atoms}-atom cage; choose a charge above -{}",
                4 * atoms
            ),
            EnergyError::NoStartGeometry(e) => write!(f, "no starting geometry: {e}"),
            EnergyError::WrongAtomCount { atoms, coords } => write!(
                f,
                "the starting geometry has {coords} atoms but the cage has {atoms}; give one \
                 position per atom"
            ),
            EnergyError::NonFiniteCoordinate { atom } => write!(
                f,
                "atom {} of the starting geometry has a coordinate that is not a finite \
                 number; fix the coordinates",
                atom + 1
            ),
        }
    }
}

impl std::error::Error for EnergyError {}

impl From<GeometryError> for EnergyError {
    fn from(e: GeometryError) -> Self {
        EnergyError::NoStartGeometry(e)
    }
}

/// Valence electrons of a cage of `atoms` carbon atoms with charge `charge`: N_el = 4n − Q,
/// which must leave at least one electron and at least one empty level (N_el < 8n).
pub fn electron_count(atoms: usize, charge: i32) -> Result<usize, EnergyError> {
    let electrons = 4 * atoms as i64 - charge as i64;
    if electrons < 1 {
        return Err(EnergyError::NoElectrons { atoms, charge });
    }
    if electrons >= 8 * atoms as i64 {
        return Err(EnergyError::TooManyElectrons {
            atoms,
            charge,
            electrons,
        });
    }
    Ok(electrons as usize)
}

/// The two parts of the total energy (eV).
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct EnergyParts {
    /// Σ f_k ε_k over the occupied levels.
    pub band_ev: f64,
    /// Σ_i f(Σ_j φ(r_ij)).
    pub repulsive_ev: f64,
}

/// Frontier levels (eV); see the module documentation for the conventions.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Frontier {
    pub homo_ev: f64,
    pub lumo_ev: f64,
    /// LUMO − HOMO; 0 when a degenerate group is partly filled.
    pub gap_ev: f64,
    /// Set when the highest occupied level is a single orbital holding one electron.
    pub somo: Option<Somo>,
    /// A degenerate group holds some but not all of its electrons.
    pub partly_filled: bool,
}

/// A singly occupied level (eV).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Somo {
    pub level_ev: f64,
    /// SOMO − highest doubly filled level.
    pub gap_below_ev: f64,
    /// Lowest empty level − SOMO.
    pub gap_above_ev: f64,
}

/// A relaxed cage.
#[derive(Debug, Clone, PartialEq)]
pub struct Relaxed {
    /// Cartesian coordinates (Å), centred on the origin.
    pub coords: Vec<[f64; 3]>,
    /// Total energy (eV) = band + repulsive.
    pub energy_ev: f64,
    pub band_ev: f64,
    pub repulsive_ev: f64,
    pub frontier: Frontier,
    /// Largest residual force on an atom (eV/Å).
    pub max_force: f64,
    /// L-BFGS iterations, summed over both runs when a perturbed run was made.
    pub iterations: usize,
    /// Energy and force evaluations (line-search trials and any final re-evaluation included),
    /// summed over both runs: what the relaxation cost.
    pub evaluations: usize,
    /// The largest force fell below `Settings::max_force`.
    pub converged: bool,
    /// The relaxed bonds are exactly the cage's edges (see [`keeps_graph`]).
    pub graph_kept: bool,
    /// A second relaxation from a perturbed start was run (the first ended on a partly filled
    /// degenerate level, a symmetric saddle point).
    pub perturbed: bool,
}
