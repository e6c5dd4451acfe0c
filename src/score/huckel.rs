//! Hückel (HMO) spectrum of a cage: eigenvalues of the adjacency matrix, frontier orbitals,
//! shell type and pi energy, for the neutral cage or an ion of given charge.
//!
//! Orbital energies are alpha + x beta with beta < 0, so an eigenvalue x is in units of |beta| and
//! larger x is more bonding (Fowler & Manolopoulos, *An Atlas of Fullerenes*, 1995). The
//! eigensolver is faer's symmetric (self-adjoint) one: a textbook Householder + implicit QL
//! (Wilkinson & Reinsch 1971) was slower (1.3 ms for a C100, measured 2026-12-02), and faer's
//! tridiagonalisation followed by our own implicit QL was no faster. This module leaves bond
//! orders to [`super::bonds`] and ranking to [`super::rank`]; it never mutates a cage.

use crate::cage::Cage;
use crate::score::Shell;
use faer::dyn_stack::{MemBuffer, MemStack};
use faer::linalg::evd::{self, ComputeEigenvectors};
use faer::{Mat, Par};
use std::fmt;

/// Two eigenvalues closer than this (in |beta|) belong to one degenerate level, and an eigenvalue
/// with |x| <= this counts as non-bonding (x = 0).
///
/// The adjacency matrix has entries 0/1 and spectral radius 3, so faer's backward-stable solver
/// returns eigenvalues to a few 1e-15; the smallest genuine splitting between distinct levels of
/// fullerenes up to a few hundred atoms is many orders of magnitude above 1e-6 (common practice,
/// no source), so 1e-6 separates rounding noise from real structure with a wide margin on both sides.
pub const DEGENERACY_TOL: f64 = 1e-6;

/// Frontier-orbital summary of a cage (or cage ion) in units of |beta|.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct HuckelSummary {
    /// Eigenvalue x of the highest occupied orbital.
    pub homo: f64,
    /// Eigenvalue x of the lowest unoccupied orbital.
    pub lumo: f64,
    /// HOMO - LUMO (>= 0; 0 within [`DEGENERACY_TOL`] for an open shell).
    pub gap: f64,
    /// Shell type after Fowler & Manolopoulos.
    pub shell: Shell,
    /// Total pi energy per atom: (sum over filled orbitals of 2 x) / n, in |beta| (the alpha
    /// part, the same for every isomer of a size, is left out).
    pub pi_energy: f64,
}

/// Why a charge cannot be applied to a cage.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum HuckelError {
    /// n - Q is odd: the cage ion would be a radical, which a closed-shell filling cannot describe.
    OddElectrons { electrons: i64 },
    /// n - Q leaves no filled orbital (or is negative).
    TooFewElectrons { electrons: i64 },
    /// n - Q fills every orbital, so there is no LUMO.
    TooManyElectrons { electrons: i64, orbitals: usize },
}

impl fmt::Display for HuckelError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            HuckelError::OddElectrons { electrons } => write!(
                f,
                "the cage ion would have {electrons} pi electrons, an odd number; choose an even \
                 charge (e.g. -6 or +2)"
            ),
            HuckelError::TooFewElectrons { electrons } => write!(
                f,
                "the cage ion would have {electrons} pi electrons; choose a charge that leaves at \
                 least 2"
            ),
            HuckelError::TooManyElectrons {
                electrons,
                orbitals,
            } => write!(
                f,
                "the cage ion would have {electrons} pi electrons but only {orbitals} orbitals \
                 (room for {} with a LUMO left); choose a less negative charge",
                2 * orbitals - 2
            ),
        }
    }
}

impl std::error::Error for HuckelError {}

/// Number of doubly filled orbitals of the cage ion with `charge` (n - Q electrons), checking that
/// at least one orbital is filled and one is empty.
pub fn filled_orbitals(atoms: usize, charge: i32) -> Result<usize, HuckelError> {
    let electrons = atoms as i64 - charge as i64;
    if electrons < 2 {
        return Err(HuckelError::TooFewElectrons { electrons });
    }
    if electrons % 2 != 0 {
        return Err(HuckelError::OddElectrons { electrons });
    }
    if electrons > 2 * atoms as i64 - 2 {
        return Err(HuckelError::TooManyElectrons {
            electrons,
            orbitals: atoms,
        });
    }
    Ok((electrons / 2) as usize)
}

/// The adjacency matrix (lower and upper triangle both filled).
fn adjacency(cage: &Cage) -> Mat<f64> {
    let n = cage.atoms();
    let mut a = Mat::<f64>::zeros(n, n);
    for &[u, v] in cage.edges() {
        a[(u as usize, v as usize)] = 1.0;
        a[(v as usize, u as usize)] = 1.0;
    }
    a
}

/// The Hückel spectrum, sorted descending (values only: the fast path).
pub fn eigenvalues(cage: &Cage) -> Vec<f64> {
    let (mut values, _) = solve(cage, ComputeEigenvectors::No);
    values.reverse();
    values
}

/// Eigenvalues sorted descending with their unit eigenvectors: `vectors[k][atom]` belongs to
/// `values[k]`. Used for Coulson bond orders and topological coordinates.
pub fn eigen_decomposition(cage: &Cage) -> (Vec<f64>, Vec<Vec<f64>>) {
    let n = cage.atoms();
    let (mut values, u) = solve(cage, ComputeEigenvectors::Yes);
    values.reverse();
    let u = u.expect("invariant: eigenvectors were requested");
    let vectors = (0..n)
        .rev()
        .map(|k| u.col(k).iter().copied().collect())
        .collect();
    (values, vectors)
}

/// faer's self-adjoint eigensolver on the adjacency matrix, run sequentially: callers score many
/// cages in parallel, so nested threading would only add overhead. Values ascending.
fn solve(cage: &Cage, want: ComputeEigenvectors) -> (Vec<f64>, Option<Mat<f64>>) {
    let n = cage.atoms();
    let a = adjacency(cage);
    let mut s = faer::diag::Diag::<f64>::zeros(n);
    let mut u = (want == ComputeEigenvectors::Yes).then(|| Mat::<f64>::zeros(n, n));
    let scratch = evd::self_adjoint_evd_scratch::<f64>(n, want, Par::Seq, Default::default());
    let mut buffer = MemBuffer::new(scratch);
    evd::self_adjoint_evd(
        a.as_ref(),
        s.as_mut(),
        u.as_mut().map(|u| u.as_mut()),
        Par::Seq,
        MemStack::new(&mut buffer),
        Default::default(),
    )
    .expect("invariant: the symmetric eigensolver converges on a 0/1 adjacency matrix");
    (s.column_vector().iter().copied().collect(), u)
}

/// HOMO, LUMO, gap, shell type and pi energy per atom of the cage ion with `charge`, from the
/// descending spectrum `eigenvalues`.
///
/// With m = (n - charge)/2 filled orbitals, HOMO = x_(m) and LUMO = x_(m+1) (1-based). Shell
/// types (Fowler & Manolopoulos): open if |HOMO - LUMO| <= [`DEGENERACY_TOL`]; otherwise an
/// eigenvalue x counts as bonding only if x > [`DEGENERACY_TOL`], so an x within the tolerance of
/// 0 is non-bonding: properly closed = HOMO bonding, LUMO not; pseudo-closed = both bonding;
/// meta-closed = neither bonding.
pub fn summarize(eigenvalues: &[f64], charge: i32) -> Result<HuckelSummary, HuckelError> {
    let n = eigenvalues.len();
    let m = filled_orbitals(n, charge)?;
    let (homo, lumo) = (eigenvalues[m - 1], eigenvalues[m]);
    let pi_energy = 2.0 * eigenvalues[..m].iter().sum::<f64>() / n as f64;
    Ok(HuckelSummary {
        homo,
        lumo,
        gap: homo - lumo,
        shell: shell_type(homo, lumo),
        pi_energy,
    })
}

fn shell_type(homo: f64, lumo: f64) -> Shell {
    let bonding = |x: f64| x > DEGENERACY_TOL;
    if (homo - lumo).abs() <= DEGENERACY_TOL {
        Shell::Open
    } else if bonding(lumo) {
        Shell::PseudoClosed
    } else if bonding(homo) {
        Shell::ProperlyClosed
    } else {
        Shell::MetaClosed
    }
}
