//! Bond perception from interatomic distances.
//!
//! Two carbons are bonded when their distance is below the sum of their covalent radii plus a
//! tolerance. The radius is that of sp2 carbon, 0.73 Å (Cordero, Gómez, Platero-Prats, Revés,
//! Echeverría, Cremades, Barragán, Alvarez, Dalton Trans. 2008, 2832). The tolerance of 0.40 Å
//! is common practice, no source: it accepts stretched cage bonds (C–C in fullerenes is about
//! 1.36–1.48 Å) and rejects the shortest non-bonded contacts (about 2.3 Å across a pentagon).
//! Atoms closer than 0.5 Å are reported as duplicates (common practice, no source).
//!
//! A uniform grid of cells one cutoff wide keeps the search near-linear. This module only finds
//! bonds; whether they form a cage is decided by [`super::embed`] and [`crate::cage`].

use std::collections::HashMap;

/// Covalent radius of sp2 carbon in Å (Cordero et al., Dalton Trans. 2008, 2832).
pub const CARBON_SP2_RADIUS: f64 = 0.73;

/// Added to the sum of radii, in Å (common practice, no source).
pub const DEFAULT_TOLERANCE: f64 = 0.40;

/// Two atoms closer than this (Å) are taken to be the same atom written twice.
pub const DUPLICATE_DISTANCE: f64 = 0.5;

/// Two atoms that are too close to be distinct (0-based indices).
#[derive(Debug, Clone, PartialEq)]
pub struct TooClose {
    pub a: usize,
    pub b: usize,
    pub distance: f64,
}

/// The C–C bonding cutoff for a tolerance.
pub fn carbon_cutoff(tolerance: f64) -> f64 {
    2.0 * CARBON_SP2_RADIUS + tolerance
}

/// Neighbour lists (ascending) of every atom, bonding pairs closer than `cutoff`.
///
/// Coordinates must be finite and of moderate size (the parsers guarantee both).
pub fn bonds(positions: &[[f64; 3]], cutoff: f64) -> Result<Vec<Vec<u32>>, TooClose> {
    let cell = cutoff.max(DUPLICATE_DISTANCE);
    let grid = build_grid(positions, cell);
    let mut neighbours = vec![Vec::new(); positions.len()];
    for (i, p) in positions.iter().enumerate() {
        for j in nearby(&grid, cell_of(p, cell)) {
            let j = j as usize;
            if j <= i {
                continue;
            }
            let d = distance(p, &positions[j]);
            if d < DUPLICATE_DISTANCE {
                return Err(TooClose {
                    a: i,
                    b: j,
                    distance: d,
                });
            }
            if d < cutoff {
                neighbours[i].push(j as u32);
                neighbours[j].push(i as u32);
            }
        }
    }
    for list in &mut neighbours {
        list.sort_unstable();
    }
    Ok(neighbours)
}

type Cell = [i64; 3];

fn cell_of(p: &[f64; 3], cell: f64) -> Cell {
    // `as` saturates, so even absurd coordinates give a valid (if crowded) cell.
    p.map(|x| (x / cell).floor() as i64)
}

fn build_grid(positions: &[[f64; 3]], cell: f64) -> HashMap<Cell, Vec<u32>> {
    let mut grid: HashMap<Cell, Vec<u32>> = HashMap::new();
    for (i, p) in positions.iter().enumerate() {
        grid.entry(cell_of(p, cell)).or_default().push(i as u32);
    }
    grid
}

fn nearby(grid: &HashMap<Cell, Vec<u32>>, c: Cell) -> impl Iterator<Item = u32> + '_ {
    let offsets = (-1i64..=1)
        .flat_map(|x| (-1i64..=1).flat_map(move |y| (-1i64..=1).map(move |z| [x, y, z])));
    offsets
        .map(move |o| [0, 1, 2].map(|k| c[k].saturating_add(o[k])))
        .collect::<std::collections::BTreeSet<Cell>>()
        .into_iter()
        .filter_map(|cell| grid.get(&cell))
        .flatten()
        .copied()
}

pub(crate) fn distance(a: &[f64; 3], b: &[f64; 3]) -> f64 {
    let d = [a[0] - b[0], a[1] - b[1], a[2] - b[2]];
    (d[0] * d[0] + d[1] * d[1] + d[2] * d[2]).sqrt()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn chain_of_three_has_two_bonds() {
        let p = [[0.0, 0.0, 0.0], [1.42, 0.0, 0.0], [2.84, 0.0, 0.0]];
        let nb = bonds(&p, carbon_cutoff(DEFAULT_TOLERANCE)).unwrap();
        assert_eq!(nb, vec![vec![1], vec![0, 2], vec![1]]);
    }

    #[test]
    fn duplicate_atoms_are_reported() {
        let p = [[0.0, 0.0, 0.0], [5.0, 0.0, 0.0], [5.1, 0.0, 0.0]];
        let err = bonds(&p, carbon_cutoff(DEFAULT_TOLERANCE)).unwrap_err();
        assert_eq!((err.a, err.b), (1, 2));
    }

    #[test]
    fn bonds_across_cell_boundaries_are_found() {
        // Two atoms either side of a cell wall, and the pair straddling a negative coordinate.
        let p = [
            [1.85, 0.0, 0.0],
            [1.87, 1.4, 0.0],
            [-0.1, -5.0, -0.1],
            [0.5, -5.0, 0.5],
        ];
        let nb = bonds(&p, 1.86).unwrap();
        assert_eq!(nb[0], vec![1]);
        assert_eq!(nb[2], vec![3]);
    }
}
