//! Automorphisms of a cage found directly from its rotation system, without a face spiral.
//!
//! The spiral search ([`crate::spiral::canonical_spiral`]) yields the automorphisms of every cage
//! it can read, but a fullerene need not have a face spiral (Manolopoulos & Fowler, Chem. Phys.
//! Lett. 204 (1993) 1). For those cages this module uses Weinberg's observation (IEEE Trans.
//! Circuit Theory 13 (1966) 142): in a 3-connected plane graph an automorphism is fixed by the
//! image of one dart and whether it keeps or reverses the rotation, so trying the 2 x 3n
//! candidate images of one dart and extending each by breadth-first search finds the whole
//! group in O(n^2). This module does no I/O and leaves the classification of the group to
//! [`crate::score::symmetry`].

use crate::cage::Cage;
use crate::spiral::Automorphism;
use std::collections::{HashMap, VecDeque};

/// All automorphisms of `cage` in order of the image of the dart from atom 0 to its first
/// neighbour (proper before improper for the same image); that order puts the identity first,
/// since the first candidate image is the dart itself.
pub fn automorphisms(cage: &Cage) -> Vec<Automorphism> {
    let rotation = cage.rotation();
    let dart_face = dart_faces(cage);
    let (v0, u0) = (0u32, rotation[0][0]);
    let mut found = Vec::new();
    for v in 0..rotation.len() as u32 {
        for &u in &rotation[v as usize] {
            for proper in [true, false] {
                if let Some(atoms) = extend(rotation, (v0, u0), (v, u), proper) {
                    let faces = face_images(cage, &dart_face, &atoms, proper);
                    found.push(Automorphism {
                        faces,
                        atoms,
                        proper,
                    });
                }
            }
        }
    }
    found
}

/// The atom map sending dart `from` to dart `to`, keeping (`proper`) or reversing the rotation;
/// `None` if that map is not an automorphism.
fn extend(
    rotation: &[[u32; 3]],
    from: (u32, u32),
    to: (u32, u32),
    proper: bool,
) -> Option<Vec<u32>> {
    let n = rotation.len();
    let mut image = vec![u32::MAX; n];
    let mut preimage = vec![u32::MAX; n];
    // Each queued entry is a mapped dart (v -> u) whose rotation at v has not been expanded.
    let mut queue = VecDeque::from([(from, to), ((from.1, from.0), (to.1, to.0))]);
    assign(&mut image, &mut preimage, from.0, to.0)?;
    assign(&mut image, &mut preimage, from.1, to.1)?;
    while let Some(((v, u), (v2, u2))) = queue.pop_front() {
        let i = position(&rotation[v as usize], u)?;
        let j = position(&rotation[v2 as usize], u2)?;
        for step in 1..3 {
            let a = rotation[v as usize][(i + step) % 3];
            let k = if proper { j + step } else { j + 3 - step };
            let b = rotation[v2 as usize][k % 3];
            if image[a as usize] == u32::MAX {
                assign(&mut image, &mut preimage, a, b)?;
                queue.push_back(((a, v), (b, v2)));
            } else if image[a as usize] != b {
                return None;
            }
        }
    }
    image.iter().all(|&x| x != u32::MAX).then_some(image)
}

/// Records a ↦ b; `None` if b already has another preimage (the map would not be injective).
fn assign(image: &mut [u32], preimage: &mut [u32], a: u32, b: u32) -> Option<()> {
    match preimage[b as usize] {
        x if x == u32::MAX => {
            preimage[b as usize] = a;
            image[a as usize] = b;
            Some(())
        }
        x if x == a => Some(()),
        _ => None,
    }
}

fn position(neighbours: &[u32; 3], x: u32) -> Option<usize> {
    neighbours.iter().position(|&y| y == x)
}

/// The face to the left of each dart (u, v), as traced by [`Cage::from_rotation`].
fn dart_faces(cage: &Cage) -> HashMap<(u32, u32), u32> {
    let mut map = HashMap::with_capacity(3 * cage.atoms());
    for (f, cycle) in cage.faces().iter().enumerate() {
        for (i, &a) in cycle.iter().enumerate() {
            map.insert((a, cycle[(i + 1) % cycle.len()]), f as u32);
        }
    }
    map
}

/// Face images under an atom map: a proper map keeps the side of every dart, an improper one
/// swaps it.
fn face_images(
    cage: &Cage,
    dart_face: &HashMap<(u32, u32), u32>,
    atoms: &[u32],
    proper: bool,
) -> Vec<u32> {
    cage.faces()
        .iter()
        .map(|cycle| {
            let (a, b) = (atoms[cycle[0] as usize], atoms[cycle[1] as usize]);
            let dart = if proper { (a, b) } else { (b, a) };
            *dart_face
                .get(&dart)
                .expect("invariant: an automorphism maps bonds to bonds")
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::spiral::{canonical_spiral, Spiral};

    fn sorted(mut list: Vec<Automorphism>) -> Vec<(Vec<u32>, Vec<u32>, bool)> {
        let mut out: Vec<_> = list
            .drain(..)
            .map(|a| (a.atoms, a.faces, a.proper))
            .collect();
        out.sort();
        out
    }

    fn cage_of(atoms: u64, pentagons: &[u64]) -> Cage {
        Spiral::from_pentagon_indices(atoms, pentagons)
            .expect("a valid spiral")
            .to_cage()
    }

    // Two independent routes to the same group: Weinberg's dart extension here, the spiral
    // starts that reproduce the canonical spiral in `spiral`.
    #[test]
    fn dart_extension_finds_the_spiral_automorphisms() {
        let cages = [
            cage_of(20, &[1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12]),
            cage_of(60, &[1, 7, 9, 11, 13, 15, 18, 20, 22, 24, 26, 32]),
            cage_of(70, &[1, 7, 9, 11, 13, 15, 27, 29, 31, 33, 35, 37]),
        ];
        for cage in &cages {
            let direct = automorphisms(cage);
            assert!(direct[0].proper);
            assert!(direct[0]
                .atoms
                .iter()
                .enumerate()
                .all(|(k, &x)| x == k as u32));
            let via_spiral = canonical_spiral(cage).expect("these cages have spirals");
            assert_eq!(sorted(direct), sorted(via_spiral.automorphisms));
        }
    }

    // Ih has order 120 with 60 rotations (C60-Ih: Fowler & Manolopoulos, An Atlas of Fullerenes).
    #[test]
    fn c60_ih_has_120_automorphisms_60_proper() {
        let cage = cage_of(60, &[1, 7, 9, 11, 13, 15, 18, 20, 22, 24, 26, 32]);
        let all = automorphisms(&cage);
        assert_eq!(all.len(), 120);
        assert_eq!(all.iter().filter(|a| a.proper).count(), 60);
    }
}
