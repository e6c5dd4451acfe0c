use cagerank::enumerate::{find_by_number, Spec};
use cagerank::geometry::{self, bond_lengths, diameter};
use cagerank::spiral::Spiral;
use std::time::Instant;
#[test]
fn probe() {
    let c60 = Spiral::from_pentagon_indices(60, &[1, 7, 9, 11, 13, 15, 18, 20, 22, 24, 26, 32])
        .unwrap()
        .to_cage();
    let t = Instant::now();
    let g = geometry::relax(&c60).unwrap();
    let l = bond_lengths(&c60, &g.coords);
    let mut u: Vec<f64> = l.clone();
    u.sort_by(f64::total_cmp);
    println!(
        "C60 {:?} ms; bonds {:.5} {:.5} {:.5} {:.5} diam {:.5} E {:.3e} eV F {:.2e} it {}",
        t.elapsed().as_secs_f64() * 1e3,
        u[0],
        u[29],
        u[30],
        u[89],
        diameter(&g.coords),
        g.energy_ev,
        g.max_force_ev_per_angstrom,
        g.iterations
    );
    for (n, ipr) in [(70u64, false), (100, true), (200, true), (500, true)] {
        let t = Instant::now();
        let s = find_by_number(&Spec::fullerene(n, ipr).unwrap(), 1)
            .unwrap()
            .spiral;
        let tf = t.elapsed().as_secs_f64();
        let c = s.to_cage();
        let t = Instant::now();
        let g = geometry::relax(&c).unwrap();
        let dt = t.elapsed().as_secs_f64() * 1e3;
        let l = bond_lengths(&c, &g.coords);
        let lo = l.iter().copied().fold(9.0, f64::min);
        let hi = l.iter().copied().fold(0.0, f64::max);
        println!("C{n} (find {tf:.2}s) {s}: {dt:.1} ms, it {}, conv {}, bonds {lo:.3}..{hi:.3}, nonbonded {:.3}, E {:.3} eV F {:.1e}", g.iterations, g.converged, geometry::min_nonbonded(&c, &g.coords), g.energy_ev, g.max_force_ev_per_angstrom);
    }
}
