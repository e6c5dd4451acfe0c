//! Hückel levels of a derivative's pi system: atoms carrying addends leave it, heteroatoms stay
//! with their own Coulomb and resonance parameters.
//!
//! Coulomb alpha_X = alpha + h_X beta and resonance beta_XY = k_XY beta (Van-Catledge, J. Org.
//! Chem. 45 (1980) 4801, as listed in the domain notes §8), so the matrix in units of beta has
//! h_X on the diagonal and k_XY on the bonds; eigenvalues x give orbital energies alpha + x beta
//! with beta < 0, larger x more bonding, the same convention as [`crate::score::huckel`]. A cage
//! nitrogen is three-coordinate and brings two pi electrons; the domain notes give it the
//! pyridine-type parameters (h 0.51, k_CN 1.02) and we follow them. Boron brings none (h -0.45,
//! k_CB 0.73). The plain-carbon spectrum of whole cages stays in `score`; this module adds the
//! weighted matrix and the electron bookkeeping for derivatives.

use super::{DeriveError, Hetero};
use crate::cage::Cage;
use faer::dyn_stack::{MemBuffer, MemStack};
use faer::linalg::evd::{self, ComputeEigenvectors};
use faer::{Mat, Par};

/// Van-Catledge (1980) Coulomb parameter h of a heteroatom (carbon is 0).
pub fn coulomb(atom: Option<Hetero>) -> f64 {
    match atom {
        None => 0.0,
        Some(Hetero::N) => 0.51,
        Some(Hetero::B) => -0.45,
    }
}

/// Van-Catledge (1980) resonance parameter k of a bond (C-C is 1).
pub fn resonance(a: Option<Hetero>, b: Option<Hetero>) -> f64 {
    use Hetero::{B, N};
    match (a, b) {
        (None, None) => 1.0,
        (Some(N), None) | (None, Some(N)) => 1.02,
        (Some(B), None) | (None, Some(B)) => 0.73,
        (Some(N), Some(N)) => 1.09,
        (Some(B), Some(B)) => 0.87,
        (Some(N), Some(B)) | (Some(B), Some(N)) => 0.66,
    }
}

/// Frontier levels of one derivative, in units of |beta|.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Levels {
    pub homo: f64,
    pub lumo: f64,
    /// HOMO - LUMO (0 within rounding for a partly filled degenerate level).
    pub gap: f64,
    /// Total pi energy 2 x (sum of filled x), in |beta| (alpha parts left out). Every pattern of
    /// one run has the same atoms and electrons, so differences are differences in pi binding.
    pub pi_energy: f64,
}

/// Pi electrons of the derivative: one per remaining carbon, two per N, none per B, minus the
/// charge.
pub fn electrons(cage: &Cage, removed: &[bool], hetero: &[Option<Hetero>], charge: i32) -> i64 {
    (0..cage.atoms())
        .filter(|&v| !removed[v])
        .map(|v| 1 + hetero[v].map_or(0, Hetero::extra_electrons))
        .sum::<i64>()
        - i64::from(charge)
}

/// Checks that `electrons` fill whole orbitals and leave a LUMO among `orbitals`; returns the
/// number of filled orbitals.
pub fn filled(electrons: i64, orbitals: usize) -> Result<usize, DeriveError> {
    if electrons % 2 != 0 {
        return Err(DeriveError::OddElectrons { electrons });
    }
    if electrons < 2 || electrons > 2 * orbitals as i64 - 2 {
        return Err(DeriveError::ElectronRange {
            electrons,
            orbitals,
        });
    }
    Ok((electrons / 2) as usize)
}

/// Eigenvalues (descending) of the weighted Hückel matrix of the remaining atoms, with faer's
/// self-adjoint eigensolver run sequentially (runs score many patterns in parallel already).
/// A hand-written Householder + QL routine was tried and was slower on 60 atoms (378 against
/// 285 µs, `benches/derivative.rs`, 2026-12-03), so the same solver as `score` is used.
pub fn spectrum(cage: &Cage, removed: &[bool], hetero: &[Option<Hetero>]) -> Vec<f64> {
    let mut index = vec![usize::MAX; cage.atoms()];
    let mut m = 0;
    for v in 0..cage.atoms() {
        if !removed[v] {
            index[v] = m;
            m += 1;
        }
    }
    let mut a = Mat::<f64>::zeros(m, m);
    for v in 0..cage.atoms() {
        if !removed[v] {
            a[(index[v], index[v])] = coulomb(hetero[v]);
        }
    }
    for &[u, v] in cage.edges() {
        let (u, v) = (u as usize, v as usize);
        if !removed[u] && !removed[v] {
            let k = resonance(hetero[u], hetero[v]);
            a[(index[u], index[v])] = k;
            a[(index[v], index[u])] = k;
        }
    }
    let mut s = faer::diag::Diag::<f64>::zeros(m);
    let scratch = evd::self_adjoint_evd_scratch::<f64>(
        m,
        ComputeEigenvectors::No,
        Par::Seq,
        Default::default(),
    );
    let mut buffer = MemBuffer::new(scratch);
    evd::self_adjoint_evd(
        a.as_ref(),
        s.as_mut(),
        None,
        Par::Seq,
        MemStack::new(&mut buffer),
        Default::default(),
    )
    .expect("invariant: the symmetric eigensolver converges on a small bounded matrix");
    let mut values: Vec<f64> = s.column_vector().iter().copied().collect();
    values.reverse();
    values
}

/// HOMO, LUMO, gap and pi energy with `filled` doubly occupied orbitals of the descending
/// spectrum `values` (checked by [`filled`]).
pub fn levels(values: &[f64], filled: usize) -> Levels {
    let (homo, lumo) = (values[filled - 1], values[filled]);
    Levels {
        homo,
        lumo,
        gap: homo - lumo,
        pi_energy: 2.0 * values[..filled].iter().sum::<f64>(),
    }
}
