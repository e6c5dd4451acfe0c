//! The rotation system of a cage read off its 3D coordinates.
//!
//! At every atom the three neighbours are put in anticlockwise order seen from outside the
//! cage. "Outside" is the normal of the plane through the three neighbours; its sign is fixed at
//! the atom farthest from the centroid (pointing away from the centroid) and then carried from
//! atom to bonded atom so that neighbouring normals agree, which also works for cages that are
//! not star-shaped about their centroid. Tracing faces and checking Euler's formula are left to
//! [`Cage::from_rotation`](crate::cage::Cage::from_rotation): a bad embedding shows up there.

use std::collections::VecDeque;

type Vec3 = [f64; 3];

/// Neighbours of every atom in a consistent cyclic order, from coordinates and a cubic
/// neighbour table (each atom with exactly three neighbours, indices in range).
pub fn rotation_system(positions: &[Vec3], neighbours: &[[u32; 3]]) -> Vec<[u32; 3]> {
    let centroid = centroid(positions);
    let mut normals: Vec<Vec3> = (0..positions.len())
        .map(|v| local_normal(positions, neighbours, v, centroid))
        .collect();
    orient(&mut normals, positions, neighbours, centroid);
    (0..positions.len())
        .map(|v| anticlockwise(positions, neighbours[v], v, normals[v]))
        .collect()
}

fn centroid(positions: &[Vec3]) -> Vec3 {
    let n = positions.len().max(1) as f64;
    let sum = positions.iter().fold([0.0; 3], |s, p| add(s, *p));
    scale(sum, 1.0 / n)
}

/// Normal of the plane through the three neighbours; the radial direction if they are
/// collinear (which only a badly distorted structure has).
fn local_normal(positions: &[Vec3], neighbours: &[[u32; 3]], v: usize, centroid: Vec3) -> Vec3 {
    let [a, b, c] = neighbours[v].map(|u| positions[u as usize]);
    let n = cross(sub(b, a), sub(c, a));
    if norm(n) > 1e-9 {
        n
    } else {
        sub(positions[v], centroid)
    }
}

/// Flips normals so that bonded atoms agree, starting outward at the outermost atom of each
/// connected piece.
fn orient(normals: &mut [Vec3], positions: &[Vec3], neighbours: &[[u32; 3]], centroid: Vec3) {
    let mut seen = vec![false; positions.len()];
    let mut by_distance: Vec<usize> = (0..positions.len()).collect();
    by_distance.sort_by(|&a, &b| {
        let da = norm(sub(positions[a], centroid));
        let db = norm(sub(positions[b], centroid));
        db.total_cmp(&da)
    });
    for seed in by_distance {
        if seen[seed] {
            continue;
        }
        if dot(normals[seed], sub(positions[seed], centroid)) < 0.0 {
            normals[seed] = scale(normals[seed], -1.0);
        }
        seen[seed] = true;
        let mut queue = VecDeque::from([seed]);
        while let Some(v) = queue.pop_front() {
            for &u in &neighbours[v] {
                let u = u as usize;
                if !seen[u] {
                    seen[u] = true;
                    if dot(normals[u], normals[v]) < 0.0 {
                        normals[u] = scale(normals[u], -1.0);
                    }
                    queue.push_back(u);
                }
            }
        }
    }
}

/// The three neighbours sorted by angle around `normal`.
fn anticlockwise(positions: &[Vec3], nb: [u32; 3], v: usize, normal: Vec3) -> [u32; 3] {
    let unit_n = scale(normal, 1.0 / norm(normal).max(f64::MIN_POSITIVE));
    let project = |u: u32| {
        let d = sub(positions[u as usize], positions[v]);
        sub(d, scale(unit_n, dot(d, unit_n)))
    };
    let e1 = project(nb[0]);
    let e2 = cross(unit_n, e1);
    let angle = |u: u32| {
        let p = project(u);
        dot(p, e2)
            .atan2(dot(p, e1))
            .rem_euclid(std::f64::consts::TAU)
    };
    if angle(nb[1]) <= angle(nb[2]) {
        nb
    } else {
        [nb[0], nb[2], nb[1]]
    }
}

fn add(a: Vec3, b: Vec3) -> Vec3 {
    [a[0] + b[0], a[1] + b[1], a[2] + b[2]]
}

fn sub(a: Vec3, b: Vec3) -> Vec3 {
    [a[0] - b[0], a[1] - b[1], a[2] - b[2]]
}

fn scale(a: Vec3, s: f64) -> Vec3 {
    [a[0] * s, a[1] * s, a[2] * s]
}

fn dot(a: Vec3, b: Vec3) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}

fn cross(a: Vec3, b: Vec3) -> Vec3 {
    [
        a[1] * b[2] - a[2] * b[1],
        a[2] * b[0] - a[0] * b[2],
        a[0] * b[1] - a[1] * b[0],
    ]
}

fn norm(a: Vec3) -> f64 {
    dot(a, a).sqrt()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::cage::Cage;

    /// A unit cube with its corners numbered by the bits (x, y, z).
    fn cube() -> (Vec<Vec3>, Vec<[u32; 3]>) {
        let positions = (0..8u32)
            .map(|i| [(i & 1) as f64, ((i >> 1) & 1) as f64, ((i >> 2) & 1) as f64])
            .collect();
        let neighbours = (0..8u32).map(|i| [i ^ 1, i ^ 2, i ^ 4]).collect();
        (positions, neighbours)
    }

    #[test]
    fn cube_coordinates_give_six_squares() {
        let (p, nb) = cube();
        let cage = Cage::from_rotation(rotation_system(&p, &nb)).unwrap();
        assert_eq!(cage.face_count(), 6);
        assert!(cage.faces().iter().all(|f| f.len() == 4));
    }

    #[test]
    fn sorted_by_angle_is_anticlockwise() {
        // Neighbours at 0, 240 and 120 degrees around +z: anticlockwise order is 1, 3, 2.
        let p = [
            [0.0, 0.0, 0.0],
            [1.0, 0.0, -0.2],
            [-0.5, 0.866, -0.2],
            [-0.5, -0.866, -0.2],
        ];
        assert_eq!(anticlockwise(&p, [1, 3, 2], 0, [0.0, 0.0, 1.0]), [1, 2, 3]);
        assert_eq!(anticlockwise(&p, [1, 3, 2], 0, [0.0, 0.0, -1.0]), [1, 3, 2]);
    }
}
