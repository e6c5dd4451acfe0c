//! Cost of building a relaxed geometry (topological coordinates + force-field L-BFGS) for C60,
//! a C100 and two C500s, one elongated and one near-spherical. Targets from issue 5:
//! C100 <= 50 ms, C500 <= 2 s.
//! Run with `cargo bench -p cagerank-benches --bench geometry`.

use cagerank::enumerate::{find_by_number, Spec};
use cagerank::geometry;
use cagerank::spiral::Spiral;
use criterion::{criterion_group, criterion_main, Criterion};

fn first_isomer(atoms: u64, ipr: bool) -> Spiral {
    find_by_number(&Spec::fullerene(atoms, ipr).expect("valid size"), 1)
        .expect("the size has isomers")
        .spiral
}

fn bench(c: &mut Criterion) {
    // from memory: Atlas of Fullerenes (1995), C60-Ih spiral.
    let c60 = Spiral::from_pentagon_indices(60, &[1, 7, 9, 11, 13, 15, 18, 20, 22, 24, 26, 32])
        .expect("C60 spiral winds")
        .to_cage();
    let c100 = first_isomer(100, true).to_cage();
    // Not IPR C500:1 from the enumerator: finding it takes minutes. The two C500s of
    // tests/suite/geometry.rs instead: a (5,5) tube capped by C60 halves (D5d) and the Ih Goldberg
    // cage (5,0).
    let tube =
        Spiral::from_pentagon_indices(500, &[1, 7, 9, 11, 13, 15, 238, 240, 242, 244, 246, 252])
            .expect("tube spiral winds")
            .to_cage();
    let icosahedral =
        Spiral::from_pentagon_indices(500, &[1, 56, 61, 66, 71, 76, 181, 186, 191, 196, 201, 252])
            .expect("Ih spiral winds")
            .to_cage();
    let mut group = c.benchmark_group("geometry");
    group.sample_size(10);
    group.bench_function("C60-Ih", |b| {
        b.iter(|| geometry::relax(&c60).expect("relaxes"))
    });
    group.bench_function("C100 IPR:1", |b| {
        b.iter(|| geometry::relax(&c100).expect("relaxes"))
    });
    group.bench_function("C500 (5,5) tube D5d", |b| {
        b.iter(|| geometry::relax(&tube).expect("relaxes"))
    });
    group.bench_function("C500 Ih", |b| {
        b.iter(|| geometry::relax(&icosahedral).expect("relaxes"))
    });
    group.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
