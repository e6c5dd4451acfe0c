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

/// Eigenvalues (descending) of the weighted Hückel matrix of the remaining atoms.
pub fn spectrum(cage: &Cage, removed: &[bool], hetero: &[Option<Hetero>]) -> Vec<f64> {
    let mut index = vec![usize::MAX; cage.atoms()];
    let mut m = 0;
    for v in 0..cage.atoms() {
        if !removed[v] {
            index[v] = m;
            m += 1;
        }
    }
    let mut a = vec![vec![0.0f64; m]; m];
    for v in 0..cage.atoms() {
        if !removed[v] {
            a[index[v]][index[v]] = coulomb(hetero[v]);
        }
    }
    for &[u, v] in cage.edges() {
        let (u, v) = (u as usize, v as usize);
        if !removed[u] && !removed[v] {
            let k = resonance(hetero[u], hetero[v]);
            a[index[u]][index[v]] = k;
            a[index[v]][index[u]] = k;
        }
    }
    let (mut d, mut e) = tridiagonalise(&mut a);
    tridiagonal_eigenvalues(&mut d, &mut e);
    d.sort_by(|x, y| y.total_cmp(x));
    d
}

/// Householder reduction of a symmetric matrix to tridiagonal form, eigenvalues only: returns
/// the diagonal and the subdiagonal (`e[i]` couples i - 1 and i; `e[0]` is 0). Wilkinson &
/// Reinsch, *Handbook for Automatic Computation II* (1971), procedure tred1, from memory.
/// Written here rather than calling faer: a run scores thousands of 50-100 atom matrices, where
/// faer's general eigensolver spent several times longer per matrix (measured in
/// `benches/derivative.rs`); tests compare the values with nalgebra's eigensolver.
fn tridiagonalise(a: &mut [Vec<f64>]) -> (Vec<f64>, Vec<f64>) {
    let n = a.len();
    let mut d = vec![0.0; n];
    let mut e = vec![0.0; n];
    for i in (1..n).rev() {
        let l = i - 1;
        let scale: f64 = a[i][..=l].iter().map(|x| x.abs()).sum();
        if l == 0 || scale == 0.0 {
            e[i] = a[i][l];
            continue;
        }
        let mut h = 0.0;
        for x in &mut a[i][..=l] {
            *x /= scale;
            h += *x * *x;
        }
        let f = a[i][l];
        let g = if f >= 0.0 { -h.sqrt() } else { h.sqrt() };
        e[i] = scale * g;
        h -= f * g;
        a[i][l] = f - g;
        let mut f = 0.0;
        for j in 0..=l {
            let lower: f64 = a[j][..=j].iter().zip(&a[i][..=j]).map(|(x, y)| x * y).sum();
            let upper: f64 = (j + 1..=l).map(|k| a[k][j] * a[i][k]).sum();
            let g = lower + upper;
            e[j] = g / h;
            f += e[j] * a[i][j];
        }
        let hh = f / (h + h);
        for j in 0..=l {
            let f = a[i][j];
            let g = e[j] - hh * f;
            e[j] = g;
            for k in 0..=j {
                a[j][k] -= f * e[k] + g * a[i][k];
            }
        }
    }
    for (i, di) in d.iter_mut().enumerate() {
        *di = a[i][i];
    }
    e[0] = 0.0;
    (d, e)
}

/// Eigenvalues of a symmetric tridiagonal matrix by the QL algorithm with implicit shifts
/// (Wilkinson & Reinsch 1971, procedure tql1, from memory); `d` is overwritten with them.
fn tridiagonal_eigenvalues(d: &mut [f64], e: &mut [f64]) {
    let n = d.len();
    if n == 0 {
        return;
    }
    e.copy_within(1.., 0);
    e[n - 1] = 0.0;
    for l in 0..n {
        let mut iterations = 0;
        loop {
            let mut m = l;
            while m + 1 < n {
                let dd = d[m].abs() + d[m + 1].abs();
                if e[m].abs() <= f64::EPSILON * dd {
                    break;
                }
                m += 1;
            }
            if m == l {
                break;
            }
            iterations += 1;
            assert!(
                iterations <= 100,
                "invariant: QL converges on a bounded symmetric matrix"
            );
            let mut g = (d[l + 1] - d[l]) / (2.0 * e[l]);
            let mut r = g.hypot(1.0);
            g = d[m] - d[l] + e[l] / (g + r.copysign(g));
            let (mut s, mut c, mut p) = (1.0f64, 1.0f64, 0.0f64);
            let mut underflow = false;
            for i in (l..m).rev() {
                let f = s * e[i];
                let b = c * e[i];
                r = f.hypot(g);
                e[i + 1] = r;
                if r == 0.0 {
                    d[i + 1] -= p;
                    e[m] = 0.0;
                    underflow = true;
                    break;
                }
                s = f / r;
                c = g / r;
                g = d[i + 1] - p;
                r = (d[i] - g) * s + 2.0 * c * b;
                p = s * r;
                d[i + 1] = g + p;
                g = c * r - b;
            }
            if underflow {
                continue;
            }
            d[l] -= p;
            e[l] = g;
            e[m] = 0.0;
        }
    }
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
