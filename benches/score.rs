//! Per-descriptor cost of the Hückel, Kekulé and Pauling descriptors on C60-Ih and a C100 cage,
//! and the cost per isomer on the first 1,000 C100 isomers in spiral order: the scalar
//! descriptor set, and the Hückel gap + Kekulé count that `scripts/peer-compare.sh` times in
//! numpy/networkx on the same isomers.
//!
//! Run with `cargo bench -p cagerank-benches --bench score`; figures go to docs/performance.md.

use cagerank::cage::Cage;
use cagerank::enumerate::{self, Spec};
use cagerank::score::{self, bonds, huckel, kekule};
use cagerank::spiral::{canonical_spiral, Spiral};
use criterion::{black_box, criterion_group, criterion_main, Criterion, Throughput};

/// Size of the peer set (the side-by-side comparison).
const PEER_SET: usize = 1000;

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

/// The first `n` C100 isomers in spiral order (what `cagerank enumerate 100 --json | head -n
/// 1000` prints), as cages.
fn first_c100(n: usize) -> Vec<Cage> {
    let spec = Spec::fullerene(100, false).expect("C100 exists");
    let mut out = Vec::new();
    for unit in enumerate::units(&spec) {
        for found in enumerate::run_unit(&spec, &unit) {
            out.push(found.spiral.to_cage());
            if out.len() == n {
                return out;
            }
        }
    }
    out
}

fn bench_peer_set(c: &mut Criterion) {
    let cages = first_c100(PEER_SET);
    let canonical: Vec<_> = cages
        .iter()
        .map(|c| canonical_spiral(c).expect("enumerated cages have spirals"))
        .collect();
    let mut g = c.benchmark_group("first 1000 C100 isomers");
    g.sample_size(10);
    g.throughput(Throughput::Elements(cages.len() as u64));
    g.bench_function("Hückel gap + Kekulé count", |b| {
        b.iter(|| {
            for cage in &cages {
                let values = huckel::eigenvalues(cage);
                black_box(huckel::summarize(&values, 0).expect("neutral cage"));
                black_box(kekule::kekule_count(cage));
            }
        })
    });
    g.bench_function("scalar descriptor set (describe)", |b| {
        b.iter(|| {
            for (cage, canon) in cages.iter().zip(&canonical) {
                black_box(score::describe(cage, canon, 0).expect("scores"));
            }
        })
    });
    g.bench_function("canonical spiral and automorphisms", |b| {
        b.iter(|| {
            for cage in &cages {
                black_box(canonical_spiral(cage));
            }
        })
    });
    g.finish();
}

/// The exact Kekulé count on a large cage: C540 = leapfrog of leapfrog of C60-Ih (the cage of
/// the large-count test in tests/suite/huckel_kekule.rs), whose count has 124 bits.
fn bench_large(c: &mut Criterion) {
    let (_, c60) = cages().swap_remove(0);
    let c540 = c60.leapfrog().leapfrog();
    let mut g = c.benchmark_group("large cage");
    g.sample_size(10);
    g.bench_function("C540 kekule_count", |b| {
        b.iter(|| kekule::kekule_count(black_box(&c540)))
    });
    g.finish();
}

fn bench(c: &mut Criterion) {
    for (name, cage) in cages() {
        let values = huckel::eigenvalues(&cage);
        let pauling = bonds::pauling_bond_orders(&cage);
        c.bench_function(&format!("{name} eigenvalues"), |b| {
            b.iter(|| huckel::eigenvalues(black_box(&cage)))
        });
        c.bench_function(&format!("{name} summarize"), |b| {
            b.iter(|| huckel::summarize(black_box(&values), 0))
        });
        c.bench_function(&format!("{name} kekule_count"), |b| {
            b.iter(|| kekule::kekule_count(black_box(&cage)))
        });
        c.bench_function(&format!("{name} kekule_structure"), |b| {
            b.iter(|| kekule::kekule_structure(black_box(&cage)))
        });
        c.bench_function(&format!("{name} pauling_bond_orders"), |b| {
            b.iter(|| bonds::pauling_bond_orders(black_box(&cage)))
        });
        c.bench_function(&format!("{name} ring_pi_content"), |b| {
            b.iter(|| bonds::ring_pi_content(black_box(&cage), black_box(&pauling)))
        });
        c.bench_function(&format!("{name} coulson_bond_orders"), |b| {
            b.iter(|| bonds::coulson_bond_orders(black_box(&cage), 0))
        });
    }
}

criterion_group! {
    name = benches;
    config = Criterion::default().sample_size(30);
    targets = bench, bench_peer_set, bench_large
}
criterion_main!(benches);
