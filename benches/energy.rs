//! Cost of the tight-binding energy model, in CPU time of this process (so that other work on a
//! shared machine inflates it less than wall time, and so that it compares with the CPU time
//! `scripts/reference_tb.py --time` reports for numpy). Everything runs on one thread.
//!
//! - group `side-by-side`: one energy + forces evaluation, and a full relaxation to a largest
//!   per-atom force below 1e-3 eV/Å, of C60, C70 and C84:23 from the committed start geometries
//!   of tests/data/tb; `scripts/reference_tb.py --compare` runs this group and the same jobs
//!   in numpy/scipy in one run and prints the ratios. The iterations and evaluations of each
//!   relaxation are printed before it is timed.
//! - group `energy`: an energy-only evaluation of the same geometries, and C84:23 relaxed from
//!   the force-field geometry that it builds first.
//!
//! Targets: C84 evaluation <= 15 ms and C84 relaxation <= 0.6 s on one core.
//! Run with `cargo bench -p cagerank-benches --bench energy` (or `-- side-by-side` for the comparison alone).

use cagerank::cage::Cage;
use cagerank::energy::{self, Evaluator, Settings};
use cagerank::enumerate::{find_by_number, Spec};
use cagerank::spiral::Spiral;
use criterion::measurement::{Measurement, ValueFormatter};
use criterion::{criterion_group, criterion_main, Criterion, Throughput};
use std::time::Duration;

/// CPU time used by this process (wall time where the platform has no such clock here).
struct CpuTime;

#[cfg(target_os = "linux")]
fn cpu_clock() -> Duration {
    let mut t = libc::timespec {
        tv_sec: 0,
        tv_nsec: 0,
    };
    // SAFETY: `t` is a valid, writable timespec and the clock id is a constant Linux provides.
    let status = unsafe { libc::clock_gettime(libc::CLOCK_PROCESS_CPUTIME_ID, &mut t) };
    assert_eq!(status, 0, "the process CPU clock is readable");
    Duration::new(t.tv_sec as u64, t.tv_nsec as u32)
}

#[cfg(not(target_os = "linux"))]
fn cpu_clock() -> Duration {
    static START: std::sync::OnceLock<std::time::Instant> = std::sync::OnceLock::new();
    START.get_or_init(std::time::Instant::now).elapsed()
}

impl Measurement for CpuTime {
    type Intermediate = Duration;
    type Value = Duration;
    fn start(&self) -> Duration {
        cpu_clock()
    }
    fn end(&self, start: Duration) -> Duration {
        cpu_clock().saturating_sub(start)
    }
    fn add(&self, a: &Duration, b: &Duration) -> Duration {
        *a + *b
    }
    fn zero(&self) -> Duration {
        Duration::ZERO
    }
    fn to_f64(&self, value: &Duration) -> f64 {
        value.as_nanos() as f64
    }
    fn formatter(&self) -> &dyn ValueFormatter {
        &CpuFormatter
    }
}

/// Shows nanoseconds of CPU time in the unit that suits the typical value.
struct CpuFormatter;

impl ValueFormatter for CpuFormatter {
    fn scale_values(&self, typical: f64, values: &mut [f64]) -> &'static str {
        let (factor, unit) = if typical < 1e3 {
            (1.0, "ns cpu")
        } else if typical < 1e6 {
            (1e-3, "µs cpu")
        } else if typical < 1e9 {
            (1e-6, "ms cpu")
        } else {
            (1e-9, "s cpu")
        };
        values.iter_mut().for_each(|v| *v *= factor);
        unit
    }
    fn scale_throughputs(
        &self,
        _: f64,
        throughput: &Throughput,
        values: &mut [f64],
    ) -> &'static str {
        let per = match *throughput {
            Throughput::Bytes(n) | Throughput::BytesDecimal(n) | Throughput::Elements(n) => n,
        };
        values.iter_mut().for_each(|v| *v = per as f64 * 1e9 / *v);
        "per cpu second"
    }
    fn scale_for_machines(&self, _: &mut [f64]) -> &'static str {
        "ns cpu"
    }
}

fn committed(file: &str) -> Vec<[f64; 3]> {
    let path = format!("{}/tests/data/tb/{file}", env!("CARGO_MANIFEST_DIR"));
    let text = std::fs::read_to_string(path).expect("committed geometry");
    cagerank::export::xyz::parse(&text)
        .expect("our own XYZ")
        .coords
}

/// The cages of the committed geometries (spirals from memory: Fowler & Manolopoulos, An Atlas
/// of Fullerenes, 1995; C84:23 is the D2d isomer, a major one).
fn cages() -> Vec<(&'static str, Cage)> {
    let spiral = |atoms, pentagons: &[u64]| {
        Spiral::from_pentagon_indices(atoms, pentagons)
            .expect("the spiral winds")
            .to_cage()
    };
    let c84 = find_by_number(&Spec::fullerene(84, true).expect("valid size"), 23)
        .expect("C84:23 exists")
        .spiral
        .to_cage();
    vec![
        (
            "c60_start.xyz",
            spiral(60, &[1, 7, 9, 11, 13, 15, 18, 20, 22, 24, 26, 32]),
        ),
        (
            "c70_start.xyz",
            spiral(70, &[1, 7, 9, 11, 13, 15, 27, 29, 31, 33, 35, 37]),
        ),
        ("c84_23_start.xyz", c84),
    ]
}

fn side_by_side(c: &mut Criterion<CpuTime>) {
    let mut group = c.benchmark_group("side-by-side");
    for (file, cage) in cages() {
        let start = committed(file);
        let x: Vec<f64> = start.iter().flatten().copied().collect();
        let mut evaluator = Evaluator::new(cage.atoms(), 0).expect("neutral cage");
        let mut grad = vec![0.0; x.len()];
        group.sample_size(100);
        group.bench_function(format!("evaluation {file}"), |b| {
            b.iter(|| evaluator.energy_gradient(&x, &mut grad))
        });
        let relaxed = energy::relax_from(&cage, &start, 0, Settings::default()).expect("relaxes");
        println!(
            "relax {file}: {} iterations, {} evaluations, E = {:.6} eV, max force {:.1e} eV/Å",
            relaxed.iterations, relaxed.evaluations, relaxed.energy_ev, relaxed.max_force
        );
        group.sample_size(10);
        group.bench_function(format!("relaxation {file}"), |b| {
            b.iter(|| energy::relax_from(&cage, &start, 0, Settings::default()).expect("relaxes"))
        });
    }
    group.finish();
}

fn energy_only_and_force_field_start(c: &mut Criterion<CpuTime>) {
    let mut group = c.benchmark_group("energy");
    for (file, cage) in cages() {
        let x: Vec<f64> = committed(file).iter().flatten().copied().collect();
        let mut evaluator = Evaluator::new(cage.atoms(), 0).expect("neutral cage");
        group.bench_function(format!("energy only {file}"), |b| {
            b.iter(|| evaluator.energy(&x))
        });
    }
    let (_, c84) = cages().pop().expect("C84:23 is listed");
    group.sample_size(10);
    group.bench_function("relax C84:23 including the force-field geometry", |b| {
        b.iter(|| energy::relax(&c84, 0, Settings::default()).expect("relaxes"))
    });
    group.finish();
}

criterion_group! {
    name = benches;
    config = Criterion::default().with_measurement(CpuTime);
    targets = side_by_side, energy_only_and_force_field_start
}
criterion_main!(benches);
