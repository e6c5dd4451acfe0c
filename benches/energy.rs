//! Cost of the tight-binding energy model: one energy + forces evaluation of C60, C70 and
//! C84:23 at the committed geometries of tests/data/tb (the same ones `scripts/reference_tb.py
//! --time` measures with numpy), and a full relaxation of C84:23 from its force-field geometry.
//! Targets: C84 evaluation <= 15 ms and C84 relaxation <= 0.6 s on one core.
//! Run with `cargo bench --bench energy`.

use cagerank::energy::{self, Evaluator, Settings};
use cagerank::enumerate::{find_by_number, Spec};
use criterion::{criterion_group, criterion_main, Criterion};

fn committed(file: &str) -> Vec<f64> {
    let path = format!("{}/tests/data/tb/{file}", env!("CARGO_MANIFEST_DIR"));
    let text = std::fs::read_to_string(path).expect("committed geometry");
    cagerank::export::xyz::parse(&text)
        .expect("our own XYZ")
        .coords
        .iter()
        .flatten()
        .copied()
        .collect()
}

fn bench(c: &mut Criterion) {
    let mut group = c.benchmark_group("energy");
    for file in ["c60_start.xyz", "c70_start.xyz", "c84_23_start.xyz"] {
        let x = committed(file);
        let mut evaluator = Evaluator::new(x.len() / 3, 0).expect("neutral cage");
        let mut grad = vec![0.0; x.len()];
        group.bench_function(format!("energy+forces {file}"), |b| {
            b.iter(|| evaluator.energy_gradient(&x, &mut grad))
        });
        group.bench_function(format!("energy only {file}"), |b| {
            b.iter(|| evaluator.energy(&x))
        });
    }
    // IPR C84:23 (D2d), a major C84 isomer (from memory: Atlas of Fullerenes 1995).
    let c84 = find_by_number(&Spec::fullerene(84, true).expect("valid size"), 23)
        .expect("C84:23 exists")
        .spiral
        .to_cage();
    let start = cagerank::geometry::relax(&c84).expect("embeds").coords;
    group.sample_size(10);
    group.bench_function("relax C84:23 from the force-field geometry", |b| {
        b.iter(|| energy::relax_from(&c84, &start, 0, Settings::default()).expect("relaxes"))
    });
    group.bench_function("relax C84:23 including the force-field geometry", |b| {
        b.iter(|| energy::relax(&c84, 0, Settings::default()).expect("relaxes"))
    });
    group.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
