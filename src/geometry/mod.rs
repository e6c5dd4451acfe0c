//! 3D starting geometries for carbon cages: topological coordinates from the Hückel
//! eigenvectors, relaxed with a published valence force field by L-BFGS.
//!
//! Elongated cages need care at both ends: the p-type eigenvectors are picked by their nodal
//! domains (see [`topological::coordinates`]), and a first, restrained minimisation keeps caps
//! that start flat from relaxing dimpled inwards (see [`forcefield::ForceField::add_inversion`]).
//!
//! The result is a starting point for quantum chemistry, not a refined structure. This module
//! reads a [`Cage`] and returns coordinates in Å; writing files is left to `export`, and bond
//! orders and eigenvectors come from `score`.
//!
//! ```
//! use cagerank::spiral::Spiral;
//! let c60 = Spiral::from_pentagon_indices(60, &[1, 7, 9, 11, 13, 15, 18, 20, 22, 24, 26, 32])
//!     .unwrap()
//!     .to_cage();
//! let g = cagerank::geometry::relax(&c60).unwrap();
//! assert_eq!(g.coords.len(), 60);
//! ```

pub mod forcefield;
pub mod minimise;
pub mod topological;

use crate::cage::Cage;
use crate::score::bonds::pauling_bond_orders;
use std::fmt;

/// 1 aJ in eV (CODATA 2018: 1 eV = 1.602176634e-19 J, exact).
pub const EV_PER_AJ: f64 = 1.0 / 0.160_217_663_4;

/// Force (aJ/Å) to which the restrained first stage of [`relax_with`] is taken. Common practice,
/// no source: loose enough to be cheap, tight enough that the cage's shape is settled.
const RESTRAINED_FORCE: f64 = 1e-2;

/// A relaxed cage geometry.
#[derive(Debug, Clone, PartialEq)]
pub struct Geometry {
    /// Cartesian coordinates in Å, one per atom, centred on the origin.
    pub coords: Vec<[f64; 3]>,
    /// Final force-field energy in eV (zero only for a strain-free cage).
    pub energy_ev: f64,
    /// Largest residual force on any atom, in eV/Å.
    pub max_force_ev_per_angstrom: f64,
    /// L-BFGS iterations used.
    pub iterations: usize,
    /// False if the minimiser stopped before the force threshold was met.
    pub converged: bool,
}

/// Why no geometry could be built.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum GeometryError {
    /// No triple of low-lying eigenvectors separated the atoms.
    NoEmbedding { atoms: usize },
}

impl fmt::Display for GeometryError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            GeometryError::NoEmbedding { atoms } => write!(
                f,
                "could not build topological coordinates for this {atoms}-atom cage \
                 (no Hückel eigenvectors separate the atoms); supply coordinates from elsewhere"
            ),
        }
    }
}

impl std::error::Error for GeometryError {}

/// Topological coordinates relaxed with the default settings.
pub fn relax(cage: &Cage) -> Result<Geometry, GeometryError> {
    relax_with(cage, minimise::Settings::default())
}

/// Topological coordinates relaxed with the given minimiser settings (forces in aJ/Å).
pub fn relax_with(cage: &Cage, settings: minimise::Settings) -> Result<Geometry, GeometryError> {
    let start = topological::coordinates(cage).ok_or(GeometryError::NoEmbedding {
        atoms: cage.atoms(),
    })?;
    let field = forcefield::ForceField::new(cage, &pauling_bond_orders(cage));
    let mut x: Vec<f64> = start.iter().flatten().copied().collect();
    // First with the inversion restraint, loosely, so no cap settles dimpled inwards; then the
    // force field alone from there, so the result is its minimum and not the restraint's.
    let orientation = field.orientation(&x);
    let restrained = minimise::lbfgs(
        &mut x,
        minimise::Settings {
            max_force: settings.max_force.max(RESTRAINED_FORCE),
            ..settings
        },
        |p, g| field.energy_gradient(p, g) + field.add_inversion(p, g, orientation),
    );
    let mut outcome = minimise::lbfgs(&mut x, settings, |p, g| field.energy_gradient(p, g));
    outcome.iterations += restrained.iterations;
    let coords = centred(x.chunks(3).map(|c| [c[0], c[1], c[2]]).collect());
    Ok(Geometry {
        coords,
        energy_ev: outcome.value * EV_PER_AJ,
        max_force_ev_per_angstrom: outcome.max_force * EV_PER_AJ,
        iterations: outcome.iterations,
        converged: outcome.converged,
    })
}

fn centred(mut coords: Vec<[f64; 3]>) -> Vec<[f64; 3]> {
    let n = coords.len().max(1) as f64;
    let centre: [f64; 3] = std::array::from_fn(|d| coords.iter().map(|c| c[d]).sum::<f64>() / n);
    for c in &mut coords {
        c.iter_mut().zip(&centre).for_each(|(x, m)| *x -= m);
    }
    coords
}

/// Length of every bond, aligned with `cage.edges()`.
pub fn bond_lengths(cage: &Cage, coords: &[[f64; 3]]) -> Vec<f64> {
    cage.edges()
        .iter()
        .map(|&[a, b]| topological::distance(coords[a as usize], coords[b as usize]))
        .collect()
}

/// Largest distance between two atoms (the cage diameter for a near-spherical cage).
pub fn diameter(coords: &[[f64; 3]]) -> f64 {
    let mut best: f64 = 0.0;
    for (i, &a) in coords.iter().enumerate() {
        for &b in &coords[i + 1..] {
            best = best.max(topological::distance(a, b));
        }
    }
    best
}

/// Smallest distance between two atoms that are not bonded.
pub fn min_nonbonded(cage: &Cage, coords: &[[f64; 3]]) -> f64 {
    let mut best = f64::INFINITY;
    for (i, &a) in coords.iter().enumerate() {
        let bonded = cage.rotation()[i];
        for (j, &b) in coords.iter().enumerate().skip(i + 1) {
            if !bonded.contains(&(j as u32)) {
                best = best.min(topological::distance(a, b));
            }
        }
    }
    best
}
