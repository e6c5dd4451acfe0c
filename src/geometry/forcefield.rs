//! A valence force field for carbon cages: harmonic bond stretching with a reference length per
//! bond from its Pauling bond order, and harmonic bending of every ring angle.
//!
//! It exists only to turn topological coordinates into sensible starting geometries for quantum
//! chemistry; it does not rank isomers (valence force fields do not reproduce isomer energies:
//! Albertazzi et al., PCCP 1 (1999) 2913). Units: lengths in Å, energies in aJ (1 aJ = 6.2415 eV),
//! so force constants in aJ/Å² are numerically mdyn/Å. The minimiser lives in `minimise.rs`.

use crate::cage::Cage;

/// Stretch constant of a bond shared by two hexagons, in aJ/Å² (499.7 N/m).
/// From memory: Wu, Jelski & George, Chem. Phys. Lett. 137 (1987) 291, C60 valence force field.
const K_STRETCH_HEXAGON: f64 = 4.997;
/// Stretch constant of a bond lying in a smaller ring (a 6:5 or 5:5 bond), in aJ/Å² (390.7 N/m).
/// From memory: Wu, Jelski & George (1987), as above.
const K_STRETCH_SMALL_RING: f64 = 3.907;
/// Bending constant of an angle inside a pentagon (or smaller ring), in aJ/rad².
/// From memory: Wu, Jelski & George (1987), read as aJ/rad².
const K_BEND_SMALL_RING: f64 = 0.4788;
/// Bending constant of an angle inside a hexagon (or larger ring), in aJ/rad².
/// From memory: Wu, Jelski & George (1987), read as aJ/rad².
const K_BEND_HEXAGON: f64 = 0.800;

/// C60 Pauling bond orders of the 6:5 and 6:6 bonds (7/25 and 11/25; Klein, Schmalz, Hite &
/// Seitz, JACS 108 (1986) 1301 counts, ratios as in the domain notes).
const PAULING_C60_65: f64 = 7.0 / 25.0;
const PAULING_C60_66: f64 = 11.0 / 25.0;
/// C60 bond lengths by gas-phase electron diffraction (Hedberg et al., Science 254 (1991) 410).
const LENGTH_C60_65: f64 = 1.458;
const LENGTH_C60_66: f64 = 1.401;
/// Bounds for any reference length: a pure C=C double bond (ethylene, 1.339 Å) and a pure C–C
/// single bond (ethane, 1.535 Å). From memory: gas-phase values, CRC Handbook.
const LENGTH_DOUBLE: f64 = 1.339;
const LENGTH_SINGLE: f64 = 1.535;
/// Stiffness of the inversion restraint, in aJ/Å⁶ (the signed volume is in Å³). Common practice,
/// no source: a C60 atom's volume is about 1.5 Å³, so an inverted atom costs of the order of a
/// ring-angle term, enough to pop a dimple without distorting anything else.
const K_INVERSION: f64 = 1.0;

/// Reference bond length for a Pauling bond order.
///
/// Bond length falls linearly with Pauling bond order in fullerenes (from memory: Sedlar,
/// Anđelić, Gutman, Vukičević & Graovac, Chem. Phys. Lett. 427 (2006) 418). The line here is
/// calibrated on C60 alone: it passes through the two C60 bonds of Hedberg et al. (1991) at their
/// Pauling orders 7/25 and 11/25, and is clamped to the single/double bond range. Because of that
/// calibration, reproducing the C60 bond lengths checks the pipeline, not the relation.
pub fn reference_length(pauling_order: f64) -> f64 {
    let slope = (LENGTH_C60_66 - LENGTH_C60_65) / (PAULING_C60_66 - PAULING_C60_65);
    let r = LENGTH_C60_65 + slope * (pauling_order - PAULING_C60_65);
    r.clamp(LENGTH_DOUBLE, LENGTH_SINGLE)
}

/// One harmonic bond: E = k/2 (r - r0)².
#[derive(Debug, Clone, Copy)]
struct Stretch {
    a: usize,
    b: usize,
    k: f64,
    r0: f64,
}

/// One harmonic ring angle a–centre–b: E = k/2 (θ - θ0)².
#[derive(Debug, Clone, Copy)]
struct Bend {
    a: usize,
    centre: usize,
    b: usize,
    k: f64,
    theta0: f64,
}

/// The force field of one cage: every bond and every ring angle, plus the atoms' neighbours in
/// rotation order for the inversion restraint.
#[derive(Debug, Clone)]
pub struct ForceField {
    stretches: Vec<Stretch>,
    bends: Vec<Bend>,
    rotation: Vec<[usize; 3]>,
}

impl ForceField {
    /// Builds the terms of `cage`; `pauling` holds one bond order per edge of `cage.edges()`.
    pub fn new(cage: &Cage, pauling: &[f64]) -> ForceField {
        ForceField {
            stretches: stretches(cage, pauling),
            bends: bends(cage),
            rotation: cage
                .rotation()
                .iter()
                .map(|r| r.map(|v| v as usize))
                .collect(),
        }
    }

    /// +1 or -1: the sign most atoms give to their signed volume (see [`Self::add_inversion`])
    /// at `x`. A convex embedding gives every atom the same sign, which one depends only on
    /// the handedness of the coordinates.
    pub fn orientation(&self, x: &[f64]) -> f64 {
        let positive = (0..self.rotation.len())
            .filter(|&i| self.signed_volume(x, i) > 0.0)
            .count();
        if 2 * positive >= self.rotation.len() {
            1.0
        } else {
            -1.0
        }
    }

    /// Adds a one-sided restraint against inverted atoms to `grad` and returns its energy (aJ).
    ///
    /// Bond and ring-angle terms do not change when an atom is reflected through the plane of
    /// its three neighbours, so a cap that starts flat (as the ends of an elongated cage do in
    /// topological coordinates) can relax dimpled inwards, a false minimum. The signed volume
    /// V = (a - i)·((b - i) × (c - i)) of atom i with neighbours a, b, c in rotation order has
    /// the same sign at every atom of a convex cage; atoms with V of the other sign
    /// (`orientation` × V < 0) get E = k/2 V². Convex geometries feel nothing.
    pub fn add_inversion(&self, x: &[f64], grad: &mut [f64], orientation: f64) -> f64 {
        let mut energy = 0.0;
        for (i, &[a, b, c]) in self.rotation.iter().enumerate() {
            let v = orientation * self.signed_volume(x, i);
            if v >= 0.0 {
                continue;
            }
            let o = atom(x, i);
            let (u, w, z) = (sub(atom(x, a), o), sub(atom(x, b), o), sub(atom(x, c), o));
            // dE/dV_signed = k V orientation², with orientation² = 1.
            let scale = K_INVERSION * v * orientation;
            let (ga, gb, gc) = (cross(w, z), cross(z, u), cross(u, w));
            accumulate(grad, a, ga, scale);
            accumulate(grad, b, gb, scale);
            accumulate(grad, c, gc, scale);
            for g in [ga, gb, gc] {
                accumulate(grad, i, g, -scale);
            }
            energy += 0.5 * K_INVERSION * v * v;
        }
        energy
    }

    fn signed_volume(&self, x: &[f64], i: usize) -> f64 {
        let [a, b, c] = self.rotation[i];
        let o = atom(x, i);
        dot(
            sub(atom(x, a), o),
            cross(sub(atom(x, b), o), sub(atom(x, c), o)),
        )
    }

    /// Energy in aJ at `x` (3 coordinates per atom, Å); writes the gradient (aJ/Å) into `grad`.
    pub fn energy_gradient(&self, x: &[f64], grad: &mut [f64]) -> f64 {
        grad.iter_mut().for_each(|g| *g = 0.0);
        let stretch: f64 = self.stretches.iter().map(|s| s.add(x, grad)).sum();
        let bend: f64 = self.bends.iter().map(|b| b.add(x, grad)).sum();
        stretch + bend
    }

    /// The reference length of each bond, aligned with `cage.edges()`.
    pub fn reference_lengths(&self) -> Vec<f64> {
        self.stretches.iter().map(|s| s.r0).collect()
    }
}

fn stretches(cage: &Cage, pauling: &[f64]) -> Vec<Stretch> {
    let faces = cage.faces();
    cage.edges()
        .iter()
        .zip(cage.edge_faces())
        .zip(pauling)
        .map(|((&[a, b], &[f, g]), &p)| {
            let between_hexagons = faces[f as usize].len() >= 6 && faces[g as usize].len() >= 6;
            let k = if between_hexagons {
                K_STRETCH_HEXAGON
            } else {
                K_STRETCH_SMALL_RING
            };
            Stretch {
                a: a as usize,
                b: b as usize,
                k,
                r0: reference_length(p),
            }
        })
        .collect()
}

/// Every corner of every face is one ring angle; its reference is the interior angle of the
/// regular planar polygon (108° in a pentagon, 120° in a hexagon).
fn bends(cage: &Cage) -> Vec<Bend> {
    let mut out = Vec::with_capacity(3 * cage.atoms());
    for face in cage.faces() {
        let m = face.len();
        let theta0 = std::f64::consts::PI * (m as f64 - 2.0) / m as f64;
        let k = if m >= 6 {
            K_BEND_HEXAGON
        } else {
            K_BEND_SMALL_RING
        };
        for i in 0..m {
            out.push(Bend {
                a: face[(i + m - 1) % m] as usize,
                centre: face[i] as usize,
                b: face[(i + 1) % m] as usize,
                k,
                theta0,
            });
        }
    }
    out
}

fn atom(x: &[f64], i: usize) -> [f64; 3] {
    [x[3 * i], x[3 * i + 1], x[3 * i + 2]]
}

fn accumulate(grad: &mut [f64], i: usize, v: [f64; 3], scale: f64) {
    for (d, c) in v.iter().enumerate() {
        grad[3 * i + d] += scale * c;
    }
}

fn sub(a: [f64; 3], b: [f64; 3]) -> [f64; 3] {
    [a[0] - b[0], a[1] - b[1], a[2] - b[2]]
}

fn cross(a: [f64; 3], b: [f64; 3]) -> [f64; 3] {
    [
        a[1] * b[2] - a[2] * b[1],
        a[2] * b[0] - a[0] * b[2],
        a[0] * b[1] - a[1] * b[0],
    ]
}

fn dot(a: [f64; 3], b: [f64; 3]) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}

impl Stretch {
    fn add(&self, x: &[f64], grad: &mut [f64]) -> f64 {
        let d = sub(atom(x, self.a), atom(x, self.b));
        let r = dot(d, d).sqrt().max(1e-12);
        let delta = r - self.r0;
        let scale = self.k * delta / r;
        accumulate(grad, self.a, d, scale);
        accumulate(grad, self.b, d, -scale);
        0.5 * self.k * delta * delta
    }
}

impl Bend {
    /// Gradient of θ = acos(u·w / |u||w|) with u = a - centre, w = b - centre.
    fn add(&self, x: &[f64], grad: &mut [f64]) -> f64 {
        let c = atom(x, self.centre);
        let u = sub(atom(x, self.a), c);
        let w = sub(atom(x, self.b), c);
        let (lu, lw) = (dot(u, u).sqrt().max(1e-12), dot(w, w).sqrt().max(1e-12));
        let cos = (dot(u, w) / (lu * lw)).clamp(-1.0, 1.0);
        let theta = cos.acos();
        let sin = (1.0 - cos * cos).sqrt().max(1e-8);
        let delta = theta - self.theta0;
        // dE/dθ · dθ/dcos = k δ · (-1/sin θ)
        let de_dcos = -self.k * delta / sin;
        let ga = std::array::from_fn::<f64, 3, _>(|d| (w[d] / lw - cos * u[d] / lu) / lu);
        let gb = std::array::from_fn::<f64, 3, _>(|d| (u[d] / lu - cos * w[d] / lw) / lw);
        accumulate(grad, self.a, ga, de_dcos);
        accumulate(grad, self.b, gb, de_dcos);
        accumulate(grad, self.centre, ga, -de_dcos);
        accumulate(grad, self.centre, gb, -de_dcos);
        0.5 * self.k * delta * delta
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::score::bonds::pauling_bond_orders;
    use crate::spiral::Spiral;

    fn c60() -> Cage {
        // from memory: Fowler & Manolopoulos, An Atlas of Fullerenes (1995), C60-Ih spiral.
        Spiral::from_pentagon_indices(60, &[1, 7, 9, 11, 13, 15, 18, 20, 22, 24, 26, 32])
            .unwrap()
            .to_cage()
    }

    /// Topological start of C60 with atom 0 pushed through the plane of its neighbours.
    fn dimpled_c60() -> (ForceField, Vec<f64>, f64) {
        let cage = c60();
        let field = ForceField::new(&cage, &pauling_bond_orders(&cage));
        let start = crate::geometry::topological::coordinates(&cage).unwrap();
        let mut x: Vec<f64> = start.iter().flatten().copied().collect();
        let orientation = field.orientation(&x);
        let centre: [f64; 3] = std::array::from_fn(|d| {
            field.rotation[0].iter().map(|&j| x[3 * j + d]).sum::<f64>() / 3.0
        });
        for d in 0..3 {
            x[d] = centre[d] - 0.4 * (x[d] - centre[d]);
        }
        (field, x, orientation)
    }

    #[test]
    fn convex_start_feels_no_restraint_and_a_dimple_does() {
        let (field, x, orientation) = dimpled_c60();
        let mut grad = vec![0.0; x.len()];
        assert!(field.add_inversion(&x, &mut grad, orientation) > 0.0);
        let cage = c60();
        let start = crate::geometry::topological::coordinates(&cage).unwrap();
        let convex: Vec<f64> = start.iter().flatten().copied().collect();
        let mut grad = vec![0.0; convex.len()];
        assert_eq!(field.add_inversion(&convex, &mut grad, orientation), 0.0);
        assert!(grad.iter().all(|&g| g == 0.0));
    }

    #[test]
    fn restrained_gradient_matches_finite_differences() {
        let (field, x, orientation) = dimpled_c60();
        let total = |p: &[f64], g: &mut [f64]| {
            field.energy_gradient(p, g) + field.add_inversion(p, g, orientation)
        };
        let mut grad = vec![0.0; x.len()];
        total(&x, &mut grad);
        let mut scratch = vec![0.0; x.len()];
        let h = 1e-6;
        // The dimpled atom, a neighbour and a distant atom, every coordinate.
        let neighbour = field.rotation[0][0];
        for i in [
            0,
            1,
            2,
            3 * neighbour,
            3 * neighbour + 1,
            3 * neighbour + 2,
            90,
        ] {
            let (mut plus, mut minus) = (x.clone(), x.clone());
            plus[i] += h;
            minus[i] -= h;
            let numeric = (total(&plus, &mut scratch) - total(&minus, &mut scratch)) / (2.0 * h);
            assert!(
                (numeric - grad[i]).abs() < 1e-5 * (1.0 + numeric.abs()),
                "coordinate {i}: analytic {} numeric {numeric}",
                grad[i]
            );
        }
    }
}
