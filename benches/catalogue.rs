//! Catalogue benchmarks: bytes per C100 record on disk (real spirals and real scores) and
//! query scan speed in records per second. Run with `cargo bench -p cagerank-benches --bench catalogue`; figures
//! go to docs/performance.md.

use cagerank::cage::FaceSet;
use cagerank::catalogue::format::{DataFile, DataWriter};
use cagerank::catalogue::{self, Filter, PointGroup, Query, Record, RunInfo};
use cagerank::enumerate::{self, Spec};
use cagerank::score;
use criterion::{criterion_group, criterion_main, Criterion, Throughput};
use num_bigint::BigUint;
use std::path::{Path, PathBuf};
use std::time::Instant;

fn info(atoms: u32) -> RunInfo {
    RunInfo {
        face_set: FaceSet::Fullerene,
        atoms,
        ipr: false,
        unit_count: 1,
        unit_depth: 0,
        shard: None,
        made_by: catalogue::made_by(),
        all_starts: false,
        charge: 0,
    }
}

fn write(path: &Path, records: &[Record]) -> u64 {
    let mut w = DataWriter::create(path, &info(records[0].atoms)).expect("create");
    for r in records {
        w.push(r.clone()).expect("push");
    }
    w.end_unit(0, records.len() as u64);
    w.finish().expect("finish");
    std::fs::metadata(path).expect("meta").len()
}

/// The first `n` C100 isomers in spiral order, scored by the real scorer.
fn real_c100(n: usize) -> Vec<Record> {
    let spec = Spec::fullerene(100, false).expect("C100 exists");
    let mut out = Vec::new();
    for unit in enumerate::units(&spec) {
        for found in enumerate::run_unit(&spec, &unit) {
            let d = score::describe_spiral(&found.spiral, 0).expect("scores");
            out.push(Record::from_descriptors(&found.spiral, found.ipr, &d).expect("storable"));
            if out.len() == n {
                return out;
            }
        }
    }
    out
}

/// Synthetic records with random floats (worst case for compression), for scan speed.
fn synthetic(n: usize) -> Vec<Record> {
    let mut x = 0x2545_f491_4f6c_dd1du64;
    let mut next = move || {
        x ^= x << 13;
        x ^= x >> 7;
        x ^= x << 17;
        x
    };
    (0..n)
        .map(|i| {
            let mut faces: Vec<(u32, u8)> = (0..12)
                .map(|k| (1 + k * 4 + (next() % 4) as u32, 5))
                .collect();
            faces.dedup();
            let f = |v: u64| (v % 1_000_000) as f32 / 1_000_000.0;
            Record {
                atoms: 100,
                number: None,
                ipr_number: None,
                special_faces: faces,
                ipr: i % 600 == 0,
                pentagon_adjacencies: (next() % 12) as u32,
                pentagon_penalty_kj: 0.0,
                hexagon_neighbours: [0, 1, 4, 10, 15, 10, 0],
                hexagon_strain: f(next()),
                homo: f(next()),
                lumo: -f(next()),
                gap: f(next()),
                somo: None,
                shell: score::Shell::ProperlyClosed,
                pi_energy: 1.4 + f(next()) / 10.0,
                kekule: BigUint::from(next() % 100_000_000),
                automorphisms: 1 + (next() % 4) as u32,
                point_group: PointGroup::from_code((next() % 4) as u8).expect("code"),
                chiral: next() % 2 == 0,
                nmr: vec![(2, 50)],
            }
        })
        .collect()
}

fn temp(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("cagerank-bench-{name}-{}", std::process::id()));
    std::fs::create_dir_all(&d).expect("temp dir");
    d
}

fn storage(_c: &mut Criterion) {
    let n = 8192;
    let t = Instant::now();
    let records = real_c100(n);
    let scored = t.elapsed();
    let dir = temp("storage");
    let t = Instant::now();
    let bytes = write(&dir.join("fullerene-c100-all.cgr"), &records);
    let written = t.elapsed();
    eprintln!(
        "storage: {} real C100 records -> {bytes} bytes = {:.1} bytes/record; \
         writing took {:.1} ms vs {:.1} s enumerating+scoring ({:.3}%)",
        records.len(),
        bytes as f64 / records.len() as f64,
        written.as_secs_f64() * 1e3,
        scored.as_secs_f64(),
        100.0 * written.as_secs_f64() / scored.as_secs_f64()
    );
    let _ = std::fs::remove_dir_all(&dir);
}

fn scan(c: &mut Criterion) {
    let n = 1_000_000;
    let dir = temp("scan");
    let bytes = write(&dir.join("fullerene-c100-all.cgr"), &synthetic(n));
    eprintln!(
        "scan file: {n} synthetic records, {:.1} bytes/record",
        bytes as f64 / n as f64
    );
    let q = Query {
        atoms: 100,
        face_set: FaceSet::Fullerene,
        ipr: false,
        charge: 0,
        filter: Filter::default(),
        rank_by: Vec::new(),
        top: Some(10),
    };
    let mut g = c.benchmark_group("catalogue");
    g.sample_size(10);
    g.throughput(Throughput::Elements(n as u64));
    g.bench_function("query top 10 of 1e6", |b| {
        b.iter(|| catalogue::query(&dir, &q).expect("query"))
    });
    let by_kekule = Query {
        rank_by: cagerank::score::rank::parse_keys("-kekule,automorphisms").expect("keys"),
        ..q.clone()
    };
    g.bench_function("query top 10 by -kekule of 1e6", |b| {
        b.iter(|| catalogue::query(&dir, &by_kekule).expect("query"))
    });
    g.bench_function("decode all chunks of 1e6", |b| {
        b.iter(|| {
            let mut f = DataFile::open(&dir.join("fullerene-c100-all.cgr")).expect("open");
            (0..f.chunk_count())
                .map(|i| f.read_chunk(i).expect("chunk").len())
                .sum::<usize>()
        })
    });
    g.finish();
    for (name, query) in [("default keys", &q), ("-kekule", &by_kekule)] {
        let runs = 10;
        let (t, cpu) = (Instant::now(), thread_cpu_ns());
        for _ in 0..runs {
            catalogue::query(&dir, query).expect("query");
        }
        let cpu = (thread_cpu_ns() - cpu) as f64 / 1e9 / runs as f64;
        let wall = t.elapsed().as_secs_f64() / runs as f64;
        eprintln!(
            "query top 10 ({name}) of {n}: {:.1} ms wall, {:.1} ms CPU = {:.2} M records/s per core",
            wall * 1e3,
            cpu * 1e3,
            n as f64 / cpu / 1e6
        );
    }
    let _ = std::fs::remove_dir_all(&dir);
}

/// CPU time of this thread in ns (Linux), so that the per-core rate does not count time the
/// scheduler gave to other processes on a shared machine. The query is single-threaded.
fn thread_cpu_ns() -> u64 {
    std::fs::read_to_string("/proc/thread-self/schedstat")
        .ok()
        .and_then(|s| s.split_whitespace().next()?.parse().ok())
        .unwrap_or(0)
}

criterion_group!(benches, storage, scan);
criterion_main!(benches);
