//! Enumeration rate: all C60, all C80 and IPR C120 (issue targets in docs/performance.md).
//! Each run starts with an empty completion store, as a fresh `cagerank` process does.

use cagerank::enumerate::{count, forget_completions, Spec};
use criterion::{criterion_group, criterion_main, BatchSize, Criterion};

fn bench(c: &mut Criterion) {
    let mut g = c.benchmark_group("enumerate");
    g.sample_size(10);
    for (atoms, ipr, label) in [
        (60, false, "all C60"),
        (80, false, "all C80"),
        (120, true, "IPR C120"),
    ] {
        let spec = Spec::fullerene(atoms, ipr).expect("valid size");
        for threads in [1, 2] {
            g.bench_function(format!("{label}, {threads} thread(s)"), |b| {
                b.iter_batched(
                    forget_completions,
                    |()| count(&spec, threads).expect("threads start"),
                    BatchSize::PerIteration,
                )
            });
        }
    }
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
