//! Cost of derivative runs on C60-Ih: listing and scoring all 23 C60H2 patterns and all 4190
//! C60H4 patterns (on the current rayon pool; set RAYON_NUM_THREADS=2 for the 2-thread figure),
//! listing C60H4 without scoring, one pattern's score (Kekulé count + Hückel levels), and the
//! exact Burnside counts of C60X10 on atoms and on bonds.
//!
//! Run with `cargo bench -p cagerank-benches --bench derivative`.

use cagerank::derivative::orbits::Search;
use cagerank::derivative::score::Scorer;
use cagerank::derivative::{burnside, huckel, kekule, Addend, BondFilter, Kind, Parent, Problem};
use cagerank::spiral::Spiral;
use criterion::{black_box, criterion_group, criterion_main, Criterion};
use std::ops::ControlFlow;

fn c60() -> Parent {
    // Atlas spiral of C60-Ih (memory, Fowler & Manolopoulos 1995).
    let s = Spiral::from_pentagon_indices(60, &[1, 7, 9, 11, 13, 15, 18, 20, 22, 24, 26, 32])
        .expect("C60-Ih spiral winds");
    Parent::new("C60:IPR-1", &s).expect("C60 has a spiral")
}

const H: Kind = Kind::Addend(Addend::H);

fn score_all(parent: &Parent, k: usize) -> usize {
    let search = Search::new(parent, &Problem::new(H, k)).expect("valid");
    let scorer = Scorer::new(parent, &search, 0).expect("closed shell");
    let mut n = 0;
    search.stream(
        |f| scorer.score(f, 0, String::new()),
        |_, s| {
            n += s.sites.len();
            ControlFlow::Continue(())
        },
    );
    n
}

fn benches(c: &mut Criterion) {
    let parent = c60();
    let mut g = c.benchmark_group("derivative");
    g.sample_size(10);
    g.bench_function("score all C60H2 (23)", |b| b.iter(|| score_all(&parent, 2)));
    g.bench_function("score all C60H4 (4190)", |b| {
        b.iter(|| score_all(&parent, 4))
    });
    let four = Search::new(&parent, &Problem::new(H, 4)).expect("valid");
    g.bench_function("list C60H4 without scores", |b| {
        b.iter(|| black_box(four.count_by_listing()))
    });
    let mut removed = vec![false; 60];
    removed[0] = true;
    removed[8] = true;
    g.bench_function("Kekulé count of C60 minus 2 atoms", |b| {
        b.iter(|| kekule::count(&parent.cage, black_box(&removed)))
    });
    let hetero = vec![None; 60];
    g.bench_function("Hückel spectrum of C60 minus 2 atoms", |b| {
        b.iter(|| huckel::spectrum(&parent.cage, black_box(&removed), &hetero))
    });
    let scorer = Scorer::new(&parent, &four, 0).expect("closed shell");
    let found = four.nth(5).expect("exists");
    g.bench_function("score one C60H4 pattern", |b| {
        b.iter(|| scorer.score(black_box(&found), 5, String::new()))
    });
    let ten = Search::new(&parent, &Problem::new(H, 10)).expect("valid");
    g.bench_function("Burnside count C60X10 on atoms", |b| {
        b.iter(|| burnside::count(black_box(&ten)))
    });
    let bridges =
        Search::new(&parent, &Problem::new(Kind::Bridge(BondFilter::Any), 10)).expect("valid");
    g.bench_function("Burnside count C60 10 bridges", |b| {
        b.iter(|| burnside::count(black_box(&bridges)))
    });
    g.finish();
}

criterion_group!(derivative, benches);
criterion_main!(derivative);
