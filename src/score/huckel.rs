//! Hückel (HMO) spectrum of a cage: eigenvalues of the adjacency matrix, frontier orbitals,
//! shell type and pi energy, for the neutral cage or an ion of given charge.
//!
//! Orbital energies are alpha + x beta with beta < 0, so an eigenvalue x is in units of |beta| and
//! larger x is more bonding (Fowler & Manolopoulos, *An Atlas of Fullerenes*, 1995). An odd
//! electron count (La@C82 screened as C82^3-, a radical) leaves one singly occupied orbital
//! (SOMO) between the doubly occupied HOMO and the empty LUMO. The eigensolver is faer's
//! symmetric (self-adjoint) one: a textbook Householder + implicit QL (Wilkinson & Reinsch 1971)
//! was slower (1.3 ms for a C100, measured 2026-12-02), and faer's tridiagonalisation followed
//! by our own implicit QL was no faster. This module leaves bond orders to [`super::bonds`] and
//! ranking to [`super::rank`]; it never mutates a cage.

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
    /// Eigenvalue x of the highest doubly occupied orbital.
    pub homo: f64,
    /// Eigenvalue x of the lowest unoccupied orbital.
    pub lumo: f64,
    /// The gap that ranks: HOMO - LUMO for an even electron count, SOMO - LUMO for an odd one
    /// (>= 0; 0 within [`DEGENERACY_TOL`] when the frontier level is degenerate).
    pub gap: f64,
    /// Eigenvalue x of the singly occupied orbital: present exactly when the electron count is odd.
    pub somo: Option<f64>,
    /// Shell type after Fowler & Manolopoulos, or [`Shell::OpenDoublet`] for a radical.
    pub shell: Shell,
    /// Total pi energy per atom: (sum over occupied orbitals of occupation times x) / n, in
    /// |beta| (the alpha part, the same for every isomer of a size, is left out).
    pub pi_energy: f64,
}

impl HuckelSummary {
    /// HOMO - SOMO, the gap below the singly occupied orbital (odd electron counts only).
    pub fn homo_somo_gap(&self) -> Option<f64> {
        self.somo.map(|s| self.homo - s)
    }
}

/// Why a charge cannot be applied to a cage.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum HuckelError {
    /// n - Q leaves no doubly filled orbital (or is negative).
    TooFewElectrons { electrons: i64 },
    /// n - Q fills every orbital, so there is no LUMO.
    TooManyElectrons { electrons: i64, orbitals: usize },
}

impl fmt::Display for HuckelError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
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

/// How the n - Q pi electrons of a cage ion fill its orbitals (lowest energy first).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Occupation {
    /// n - Q.
    pub electrons: usize,
    /// Orbitals holding two electrons.
    pub doubly: usize,
    /// True if one more orbital holds a single electron (odd electron count: a doublet).
    pub single: bool,
}

/// The filling of the cage ion with `charge` (n - Q electrons), checking that at least one
/// orbital is doubly filled and one is left empty (so HOMO and LUMO exist).
pub fn occupation(atoms: usize, charge: i32) -> Result<Occupation, HuckelError> {
    let electrons = atoms as i64 - charge as i64;
    if electrons < 2 {
        return Err(HuckelError::TooFewElectrons { electrons });
    }
    // An odd count needs one orbital more (the SOMO), so 2n - 2 bounds both parities.
    if electrons > 2 * atoms as i64 - 2 {
        return Err(HuckelError::TooManyElectrons {
            electrons,
            orbitals: atoms,
        });
    }
    Ok(Occupation {
        electrons: electrons as usize,
        doubly: (electrons / 2) as usize,
        single: electrons % 2 == 1,
    })
}

/// Number of doubly filled orbitals of the cage ion with `charge` (see [`occupation`]).
pub fn filled_orbitals(atoms: usize, charge: i32) -> Result<usize, HuckelError> {
    occupation(atoms, charge).map(|o| o.doubly)
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
/// With m doubly filled orbitals, HOMO = x_(m) (1-based). An even count leaves LUMO = x_(m+1);
/// an odd one puts the last electron in SOMO = x_(m+1) and LUMO = x_(m+2), and the ranking gap
/// is SOMO - LUMO (`docs/ranking.md`). Shell types (Fowler & Manolopoulos) for even counts: open
/// if |HOMO - LUMO| <= [`DEGENERACY_TOL`]; otherwise an eigenvalue x counts as bonding only if
/// x > [`DEGENERACY_TOL`], so an x within the tolerance of 0 is non-bonding: properly closed =
/// HOMO bonding, LUMO not; pseudo-closed = both bonding; meta-closed = neither bonding. Odd
/// counts: an open-shell doublet when the SOMO is a level of its own (one unpaired electron in a
/// non-degenerate orbital), open when it is degenerate with the HOMO or the LUMO (a partly
/// filled degenerate level, as in C60^-).
pub fn summarize(eigenvalues: &[f64], charge: i32) -> Result<HuckelSummary, HuckelError> {
    let n = eigenvalues.len();
    let occ = occupation(n, charge)?;
    let m = occ.doubly;
    let doubly_sum: f64 = eigenvalues[..m].iter().sum();
    let homo = eigenvalues[m - 1];
    if !occ.single {
        let lumo = eigenvalues[m];
        return Ok(HuckelSummary {
            homo,
            lumo,
            gap: homo - lumo,
            somo: None,
            shell: shell_type(homo, lumo),
            pi_energy: 2.0 * doubly_sum / n as f64,
        });
    }
    let (somo, lumo) = (eigenvalues[m], eigenvalues[m + 1]);
    let degenerate = |a: f64, b: f64| (a - b).abs() <= DEGENERACY_TOL;
    let shell = if degenerate(homo, somo) || degenerate(somo, lumo) {
        Shell::Open
    } else {
        Shell::OpenDoublet
    };
    Ok(HuckelSummary {
        homo,
        lumo,
        gap: somo - lumo,
        somo: Some(somo),
        shell,
        pi_energy: (2.0 * doubly_sum + somo) / n as f64,
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
