//! Face-pattern descriptors: pentagon adjacencies with their estimated energy penalty, and the
//! hexagon neighbour distribution with a strain measure from its spread.
//!
//! Both are read off the dual graph of a [`Cage`] in linear time. What they mean for stability,
//! and how they enter the screening order, is left to [`super::rank`] and `docs/ranking.md`.

use crate::cage::Cage;

/// Central value of the published pentagon adjacency penalty, in kJ/mol per adjacency.
///
/// Albertazzi, Domene, Fowler, Heine, Seifert, Van Alsenoy, Zerbetto, PCCP 1 (1999) 2913 found the
/// energy of the 40 C40 isomers rising by 80–100 kJ/mol per pentagon–pentagon edge across twelve
/// methods; 90 is the middle of that range. It is an estimate, not a computed energy.
pub const PENTAGON_PENALTY_KJ_PER_ADJACENCY: f64 = 90.0;

/// Face-pattern descriptors of one cage.
#[derive(Debug, Clone, PartialEq)]
pub struct FacePattern {
    /// Edges shared by two pentagons (N_p; 0 for an IPR cage).
    pub pentagon_adjacencies: u32,
    /// Estimated energy penalty, N_p times [`PENTAGON_PENALTY_KJ_PER_ADJACENCY`].
    pub pentagon_penalty_kj: f64,
    /// `hexagon_neighbours[k]` = number of hexagons with exactly k hexagonal neighbours.
    pub hexagon_neighbours: [u32; 7],
    /// Spread of the hexagon neighbour counts; see [`hexagon_strain`].
    pub hexagon_strain: f64,
}

/// Computes every face-pattern descriptor of `cage`.
pub fn face_pattern(cage: &Cage) -> FacePattern {
    let adjacencies = cage.pentagon_adjacencies() as u32;
    let distribution = hexagon_neighbours(cage);
    FacePattern {
        pentagon_adjacencies: adjacencies,
        pentagon_penalty_kj: pentagon_penalty_kj(adjacencies),
        hexagon_neighbours: distribution,
        hexagon_strain: hexagon_strain(&distribution),
    }
}

/// Estimated pentagon adjacency penalty in kJ/mol (an estimate from the published range).
pub fn pentagon_penalty_kj(adjacencies: u32) -> f64 {
    PENTAGON_PENALTY_KJ_PER_ADJACENCY * f64::from(adjacencies)
}

/// The hexagon neighbour distribution of Raghavachari (Chem. Phys. Lett. 190 (1992) 397): for each
/// hexagon, k = the number of hexagons sharing an edge with it; entry k counts such hexagons.
pub fn hexagon_neighbours(cage: &Cage) -> [u32; 7] {
    let is_hexagon = |f: u32| cage.faces()[f as usize].len() == 6;
    let mut counts = [0u32; 7];
    for (f, around) in cage.dual().iter().enumerate() {
        if is_hexagon(f as u32) {
            let k = around.iter().filter(|&&g| is_hexagon(g)).count();
            counts[k] += 1;
        }
    }
    counts
}

/// Strain measure from the hexagon neighbour distribution: the population standard deviation of k
/// over all hexagons, sigma = sqrt( sum_k h_k (k - kbar)^2 / H ), with H = sum_k h_k and
/// kbar = sum_k k h_k / H; 0 when there are no hexagons.
///
/// Raghavachari observed that the most stable IPR isomers have the most uniform distribution of
/// hexagon neighbours; sigma is zero for a perfectly uniform one. Among IPR isomers of one size
/// kbar is fixed (every pentagon edge meets a hexagon), so sigma orders them as sum k^2 h_k does.
pub fn hexagon_strain(distribution: &[u32; 7]) -> f64 {
    let hexagons: u32 = distribution.iter().sum();
    if hexagons == 0 {
        return 0.0;
    }
    let h = f64::from(hexagons);
    let weighted = |power: i32| -> f64 {
        distribution
            .iter()
            .enumerate()
            .map(|(k, &c)| f64::from(c) * (k as f64).powi(power))
            .sum::<f64>()
            / h
    };
    let mean = weighted(1);
    let mean_square = weighted(2);
    (mean_square - mean * mean).max(0.0).sqrt()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::spiral::Spiral;

    // from memory: C60-Ih spiral, Fowler & Manolopoulos, An Atlas of Fullerenes (1995)
    const C60_IH: [u64; 12] = [1, 7, 9, 11, 13, 15, 18, 20, 22, 24, 26, 32];

    #[test]
    fn dodecahedron_has_30_pentagon_adjacencies_and_no_hexagons() {
        // C20 is the regular dodecahedron: all 30 edges join two pentagons (Euler: e = 3n/2).
        let c = Spiral::from_sizes(vec![5; 12]).unwrap().to_cage();
        let p = face_pattern(&c);
        assert_eq!(p.pentagon_adjacencies, 30);
        assert_eq!(p.pentagon_penalty_kj, 30.0 * 90.0);
        assert_eq!(p.hexagon_neighbours, [0; 7]);
        assert_eq!(p.hexagon_strain, 0.0);
    }

    #[test]
    fn c60_every_hexagon_has_three_hexagon_neighbours() {
        // from memory: in the truncated icosahedron each hexagon alternates pentagon and
        // hexagon neighbours, so k = 3 for all 20 hexagons.
        let c = Spiral::from_pentagon_indices(60, &C60_IH)
            .unwrap()
            .to_cage();
        let p = face_pattern(&c);
        assert_eq!(p.pentagon_adjacencies, 0);
        assert_eq!(p.pentagon_penalty_kj, 0.0);
        assert_eq!(p.hexagon_neighbours, [0, 0, 0, 20, 0, 0, 0]);
        assert_eq!(p.hexagon_strain, 0.0);
    }

    #[test]
    fn strain_is_the_population_standard_deviation() {
        // Definition above: k values {2, 4} once each have mean 3 and standard deviation 1.
        let d = [0, 0, 1, 0, 1, 0, 0];
        assert!((hexagon_strain(&d) - 1.0).abs() < 1e-12);
        // k values {0, 0, 6}: mean 2, variance (4 + 4 + 16) / 3 = 8.
        let d = [2, 0, 0, 0, 0, 0, 1];
        assert!((hexagon_strain(&d) - 8f64.sqrt()).abs() < 1e-12);
    }
}
