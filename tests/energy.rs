//! Checks of the tight-binding energy model (src/energy): see each test for its source.

use cagerank::cage::Cage;
use cagerank::energy::{self, Evaluator, Settings};
use cagerank::spiral::Spiral;

fn c60() -> Cage {
    // from memory: Fowler & Manolopoulos, An Atlas of Fullerenes (1995), C60-Ih spiral.
    Spiral::from_pentagon_indices(60, &[1, 7, 9, 11, 13, 15, 18, 20, 22, 24, 26, 32])
        .expect("C60 spiral winds")
        .to_cage()
}

#[test]
fn smoke() {
    let cage = c60();
    let t = std::time::Instant::now();
    let r = energy::relax(&cage, 0, Settings::default()).unwrap();
    eprintln!(
        "{:?} {:?}",
        t.elapsed(),
        (
            r.energy_ev / 60.0,
            r.band_ev,
            r.repulsive_ev,
            r.frontier,
            r.iterations,
            r.converged,
            r.graph_kept
        )
    );
    let mut ev = Evaluator::new(60, 0).unwrap();
    let x: Vec<f64> = r.coords.iter().flatten().copied().collect();
    let mut g = vec![0.0; 180];
    let t = std::time::Instant::now();
    for _ in 0..10 {
        ev.energy_gradient(&x, &mut g);
    }
    eprintln!("eval {:?}", t.elapsed() / 10);
}
