//! The published parameters of the orthogonal sp3 tight-binding model for carbon of Xu, Wang,
//! Chan & Ho, J. Phys.: Condens. Matter 4 (1992) 6047, and the three radial functions built from
//! them: the hopping scale s(r), the pair term φ(r) and the embedding polynomial f(x).
//!
//! Units are eV and Å throughout. Each function returns its value and its first derivative, since
//! every caller needs both for forces. The matrix elements themselves (Slater-Koster) are built in
//! `model.rs`; this file knows nothing about atoms or matrices.

/// On-site energy of the 2s orbital (eV).
pub const E_S: f64 = -2.99;
/// On-site energy of the 2p orbitals (eV).
pub const E_P: f64 = 3.71;
/// Two-centre hopping integrals at r0 (eV).
pub const V_SS_SIGMA: f64 = -5.00;
pub const V_SP_SIGMA: f64 = 4.70;
pub const V_PP_SIGMA: f64 = 5.50;
pub const V_PP_PI: f64 = -1.55;

/// Both s(r) and φ(r) vanish from here on (Å): the neighbour-list cutoff.
pub const CUTOFF: f64 = 2.6;

/// Where s(r) switches from the exponential form to the cubic tail (Å).
pub const S_TAIL: f64 = 2.45;
const S_R0: f64 = 1.536329;
const S_N: f64 = 2.0;
const S_NC: f64 = 6.5;
const S_RC: f64 = 2.18;
const S_TAIL_COEFFS: [f64; 4] = [
    6.7392620074314e-3,
    -8.1885359517898e-2,
    0.1932365259144,
    0.3542874332380,
];

/// Where φ(r) switches from the exponential form to the cubic tail (Å).
pub const PHI_TAIL: f64 = 2.57;
const PHI_0: f64 = 8.18555;
const PHI_D0: f64 = 1.64;
const PHI_M: f64 = 3.30304;
/// 8.6655 as published; some public copies misprint it as 8.655 (domain notes §7).
const PHI_MC: f64 = 8.6655;
const PHI_DC: f64 = 2.1052;
const PHI_TAIL_COEFFS: [f64; 4] = [
    2.2504290109e-8,
    -1.4408640561e-6,
    2.1043303374e-5,
    6.6024390226e-5,
];

/// Coefficients c0..c4 of the embedding polynomial f(x) = Σ c_k x^k (eV).
const EMBED_COEFFS: [f64; 5] = [
    -2.5909765118191,
    0.5721151498619,
    -1.7896349903996e-3,
    2.3539221516757e-5,
    -1.24251169551587e-7,
];

/// (value, derivative) of a cubic Σ c_k t^k at t.
fn cubic(c: &[f64; 4], t: f64) -> (f64, f64) {
    let value = c[0] + t * (c[1] + t * (c[2] + t * c[3]));
    let slope = c[1] + t * (2.0 * c[2] + t * 3.0 * c[3]);
    (value, slope)
}

/// (value, derivative) of g(r) = (r0/r)^n exp{n[-(r/rc)^nc + (r0/rc)^nc]}, the common form of
/// s(r) and φ(r)/φ0: d ln g/dr = -(n/r)(1 + nc (r/rc)^nc).
fn scaled_exponential(r: f64, r0: f64, n: f64, nc: f64, rc: f64) -> (f64, f64) {
    let q = (r / rc).powf(nc);
    let value = (r0 / r).powf(n) * (n * (-q + (r0 / rc).powf(nc))).exp();
    (value, -value * n / r * (1.0 + nc * q))
}

/// Hopping scale s(r) and ds/dr: 1 at r0, a cubic tail from 2.45 Å, zero from 2.6 Å.
pub fn hopping_scale(r: f64) -> (f64, f64) {
    if r >= CUTOFF {
        (0.0, 0.0)
    } else if r > S_TAIL {
        cubic(&S_TAIL_COEFFS, r - S_TAIL)
    } else {
        scaled_exponential(r, S_R0, S_N, S_NC, S_RC)
    }
}

/// Pair term φ(r) and dφ/dr: a cubic tail from 2.57 Å, zero from 2.6 Å.
pub fn pair_term(r: f64) -> (f64, f64) {
    if r >= CUTOFF {
        (0.0, 0.0)
    } else if r > PHI_TAIL {
        cubic(&PHI_TAIL_COEFFS, r - PHI_TAIL)
    } else {
        let (g, dg) = scaled_exponential(r, PHI_D0, PHI_M, PHI_MC, PHI_DC);
        (PHI_0 * g, PHI_0 * dg)
    }
}

/// Embedding polynomial f(x) and df/dx for an atom whose pair terms sum to x (eV).
pub fn embedding(x: f64) -> (f64, f64) {
    let c = &EMBED_COEFFS;
    let value = c[0] + x * (c[1] + x * (c[2] + x * (c[3] + x * c[4])));
    let slope = c[1] + x * (2.0 * c[2] + x * (3.0 * c[3] + x * 4.0 * c[4]));
    (value, slope)
}

#[cfg(test)]
mod tests {
    use super::*;

    // Xu et al. (1992): the pieces of s and φ join with equal value and slope (domain notes §7).
    // The published coefficients are given to 13 digits, so the joins agree to ~1e-9.
    #[test]
    fn tails_join_the_exponential_forms_in_value_and_slope() {
        let (a, da) = scaled_exponential(S_TAIL, S_R0, S_N, S_NC, S_RC);
        let (b, db) = cubic(&S_TAIL_COEFFS, 0.0);
        assert!(
            (a - b).abs() < 1e-9 && (da - db).abs() < 1e-8,
            "{a} {b} {da} {db}"
        );
        let (a, da) = scaled_exponential(PHI_TAIL, PHI_D0, PHI_M, PHI_MC, PHI_DC);
        let (b, db) = cubic(&PHI_TAIL_COEFFS, 0.0);
        assert!(
            (PHI_0 * a - b).abs() < 1e-12 && (PHI_0 * da - db).abs() < 1e-10,
            "{} {b} {} {db}",
            PHI_0 * a,
            PHI_0 * da
        );
    }

    // The cubic tails reach zero value and slope at the 2.6 Å cutoff (Xu et al. 1992).
    #[test]
    fn tails_vanish_at_the_cutoff() {
        let (s, ds) = cubic(&S_TAIL_COEFFS, CUTOFF - S_TAIL);
        assert!(s.abs() < 1e-9 && ds.abs() < 1e-8, "{s} {ds}");
        let (p, dp) = cubic(&PHI_TAIL_COEFFS, CUTOFF - PHI_TAIL);
        assert!(p.abs() < 1e-12 && dp.abs() < 1e-10, "{p} {dp}");
    }

    #[test]
    fn derivatives_match_finite_differences() {
        let h = 1e-6;
        for r in [1.3, 1.45, 2.0, 2.44, 2.5, 2.58, 2.59] {
            for f in [hopping_scale, pair_term] {
                let numeric = (f(r + h).0 - f(r - h).0) / (2.0 * h);
                assert!((numeric - f(r).1).abs() < 1e-7, "r {r}");
            }
        }
        let numeric = (embedding(20.0 + h).0 - embedding(20.0 - h).0) / (2.0 * h);
        assert!((numeric - embedding(20.0).1).abs() < 1e-7);
    }
}
