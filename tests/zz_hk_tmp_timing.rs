use cagerank::cage::Cage;
use cagerank::score::{bonds, huckel, kekule};
use cagerank::spiral::Spiral;
use std::hint::black_box;
use std::time::Instant;
fn cage(atoms: u64, pentagons: &[u64]) -> Cage {
    Spiral::from_pentagon_indices(atoms, pentagons)
        .expect("benchmark spiral winds")
        .to_cage()
}

fn cages() -> Vec<(&'static str, Cage)> {
    vec![
        // C60-Ih, Atlas spiral (memory, Fowler & Manolopoulos 1995).
        (
            "C60",
            cage(60, &[1, 7, 9, 11, 13, 15, 18, 20, 22, 24, 26, 32]),
        ),
        // A C100 isomer: the first 11 pentagons of C60's spiral and the last face a pentagon.
        ("C100", c100()),
    ]
}

/// The first C100 spiral in a fixed family that winds (deterministic; any C100 will do for cost).
fn c100() -> Cage {
    let faces = 52u64;
    for last_gap in 1..faces {
        for a in 2..faces {
            let mut p = vec![1, a, a + 2, a + 4, a + 6, a + 8];
            let b = faces - last_gap;
            p.extend([b - 10, b - 8, b - 6, b - 4, b - 2, faces]);
            p.sort_unstable();
            p.dedup();
            if p.len() == 12 {
                if let Ok(s) = Spiral::from_pentagon_indices(100, &p) {
                    return s.to_cage();
                }
            }
        }
    }
    panic!("no C100 spiral in the benchmark family winds");
}

fn time<T>(name: &str, reps: u32, mut f: impl FnMut() -> T) {
    for _ in 0..reps / 10 + 1 { black_box(f()); }
    let t = Instant::now();
    for _ in 0..reps { black_box(f()); }
    println!("{name}: {:.1} us", t.elapsed().as_secs_f64() * 1e6 / reps as f64);
}
#[test]
fn timing() {
    for (name, cage) in cages() {
        let values = huckel::eigenvalues(&cage);
        let pauling = bonds::pauling_bond_orders(&cage);
        println!("{name} kekule {}", kekule::kekule_count(&cage));
        time(&format!("{name} eigenvalues"), 300, || huckel::eigenvalues(&cage));
        time(&format!("{name} eigen_decomposition"), 100, || huckel::eigen_decomposition(&cage));
        time(&format!("{name} summarize"), 10000, || huckel::summarize(&values, 0));
        time(&format!("{name} kekule_count"), 300, || kekule::kekule_count(&cage));
        time(&format!("{name} kekule_structure"), 300, || kekule::kekule_structure(&cage));
        time(&format!("{name} pauling"), 300, || bonds::pauling_bond_orders(&cage));
        time(&format!("{name} ring_pi_content"), 10000, || bonds::ring_pi_content(&cage, &pauling));
        time(&format!("{name} coulson"), 100, || bonds::coulson_bond_orders(&cage, 0));
    }
}
