//! Integration tests of the on-disk catalogue: round trip, corruption detection, resume after
//! interruption, shard merging and queries against a brute-force filter and sort.

use cagerank::cage::FaceSet;
use cagerank::catalogue::format::{DataFile, DataWriter};
use cagerank::catalogue::record::{POINT_GROUPS, SHELLS};
use cagerank::catalogue::{
    self, query, CatalogueError, Deal, Filter, PointGroup, Query, Record, RunInfo, ShardId, Writer,
};
use cagerank::score::rank::{RankField, RankKey};
use num_bigint::BigUint;
use proptest::prelude::*;
use rand::rngs::StdRng;
use rand::{Rng, SeedableRng};
use std::cmp::Ordering;
use std::fs;
use std::path::{Path, PathBuf};

fn temp_dir(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("cagerank-cat-{name}-{}", std::process::id()));
    let _ = fs::remove_dir_all(&d);
    fs::create_dir_all(&d).expect("temp dir");
    d
}

fn run_info(atoms: u32, ipr: bool, units: u32, shard: Option<ShardId>) -> RunInfo {
    RunInfo {
        face_set: FaceSet::Fullerene,
        atoms,
        ipr,
        unit_count: units,
        unit_depth: 3,
        shard,
        made_by: catalogue::made_by(),
        all_starts: false,
        charge: 0,
    }
}

/// A random C100-like record (test data, not chemistry): 12 pentagon positions among 52 faces.
fn random_record(rng: &mut StdRng) -> Record {
    let mut positions: Vec<u32> = Vec::new();
    while positions.len() < 12 {
        let p = rng.gen_range(1..=52);
        if !positions.contains(&p) {
            positions.push(p);
        }
    }
    positions.sort();
    let pa = rng.gen_range(0..6u32);
    let homo: f32 = rng.gen_range(0.0..0.7);
    let lumo: f32 = rng.gen_range(-0.3..0.1);
    Record {
        atoms: 100,
        number: None,
        ipr_number: None,
        special_faces: positions.into_iter().map(|p| (p, 5)).collect(),
        ipr: pa == 0,
        pentagon_adjacencies: pa,
        pentagon_penalty_kj: 90.0 * pa as f32,
        hexagon_neighbours: std::array::from_fn(|_| rng.gen_range(0..12)),
        hexagon_strain: rng.gen_range(0.0..2.0),
        homo,
        lumo,
        gap: homo - lumo,
        somo: None,
        shell: SHELLS[rng.gen_range(0..SHELLS.len())],
        pi_energy: rng.gen_range(1.4..1.6),
        kekule: BigUint::from(rng.gen_range(1_000_000u64..50_000_000)),
        automorphisms: [1, 2, 2, 4, 6][rng.gen_range(0..5)],
        point_group: PointGroup::from_code(rng.gen_range(0..6)).expect("code in range"),
        chiral: rng.gen_bool(0.4),
        nmr: vec![(2, rng.gen_range(40..50)), (1, rng.gen_range(0..10))],
    }
}

fn random_records(seed: u64, n: usize) -> Vec<Record> {
    let mut rng = StdRng::seed_from_u64(seed);
    (0..n).map(|_| random_record(&mut rng)).collect()
}

fn write_file(path: &Path, info: &RunInfo, records: &[Record]) {
    let mut w = DataWriter::create(path, info).expect("create");
    for r in records {
        w.push(r.clone()).expect("push");
    }
    w.end_unit(0, records.len() as u64);
    w.finish().expect("finish");
}

fn without_numbers(mut records: Vec<Record>) -> Vec<Record> {
    for r in &mut records {
        r.number = None;
        r.ipr_number = None;
    }
    records
}

fn record_strategy() -> impl Strategy<Value = Record> {
    let faces = proptest::collection::btree_set(1u32..=52, 0..14);
    let sizes = proptest::collection::vec(prop_oneof![Just(4u8), Just(5u8), Just(7u8)], 14);
    let floats = (
        proptest::array::uniform6(-1.0e6f32..1.0e6),
        proptest::option::of(-3.0f32..3.0),
    );
    let ints = (
        any::<u32>(),
        proptest::array::uniform7(any::<u32>()),
        any::<u32>(),
    );
    let codes = (
        0..SHELLS.len(),
        0..POINT_GROUPS.len(),
        any::<bool>(),
        any::<bool>(),
    );
    let kekule = proptest::collection::vec(any::<u8>(), 0..20);
    let nmr = proptest::collection::vec((any::<u32>(), any::<u32>()), 0..6);
    (faces, sizes, floats, ints, codes, kekule, nmr).prop_map(
        |(faces, sizes, (f, somo), (pa, hex, aut), (shell, group, chiral, ipr), kekule, nmr)| {
            Record {
                atoms: 100,
                number: None,
                ipr_number: None,
                special_faces: faces.into_iter().zip(sizes).collect(),
                ipr,
                pentagon_adjacencies: pa,
                pentagon_penalty_kj: f[0],
                hexagon_neighbours: hex,
                hexagon_strain: f[1],
                homo: f[2],
                lumo: f[3],
                gap: f[4],
                somo,
                shell: SHELLS[shell],
                pi_energy: f[5],
                kekule: BigUint::from_bytes_le(&kekule),
                automorphisms: aut,
                point_group: PointGroup::from_code(group as u8).expect("in range"),
                chiral,
                nmr,
            }
        },
    )
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(48))]

    // Every record read back equals what was written (the catalogue's round-trip contract).
    #[test]
    fn random_records_round_trip(records in proptest::collection::vec(record_strategy(), 0..200)) {
        let dir = temp_dir("proptest");
        let path = dir.join("fullerene-c100-all.cgr");
        write_file(&path, &run_info(100, false, 1, None), &records);
        let back = DataFile::open(&path).expect("open").all_records().expect("read");
        prop_assert_eq!(without_numbers(back), records);
        let _ = fs::remove_dir_all(&dir);
    }
}

#[test]
fn many_chunks_round_trip_with_list_numbers() {
    let dir = temp_dir("chunks");
    let path = dir.join("fullerene-c100-all.cgr");
    let records = random_records(1, 10_000);
    write_file(&path, &run_info(100, false, 1, None), &records);
    let mut file = DataFile::open(&path).expect("open");
    assert_eq!(file.chunk_count(), 3, "10000 records at 4096 per chunk");
    let back = file.all_records().expect("read");
    // Complete-list numbers are positions; IPR numbers count IPR cages in spiral order
    // (the Atlas of Fullerenes numbering convention).
    let mut ipr_seen = 0;
    for (i, r) in back.iter().enumerate() {
        assert_eq!(r.number, Some(i as u64 + 1));
        ipr_seen += r.ipr as u64;
        assert_eq!(r.ipr_number, r.ipr.then_some(ipr_seen));
    }
    assert_eq!(without_numbers(back), records);
    let _ = fs::remove_dir_all(&dir);
}

/// Opens the file and reads every chunk; the first error, if any.
fn read_everything(path: &Path) -> Result<u64, CatalogueError> {
    let mut f = DataFile::open(path)?;
    Ok(f.all_records()?.len() as u64)
}

fn flipped(path: &Path, at: u64, to: &Path) {
    let mut bytes = fs::read(path).expect("read");
    bytes[at as usize] ^= 0x5A;
    fs::write(to, bytes).expect("write");
}

#[test]
fn byte_flips_in_header_index_trailer_and_chunks_are_detected_and_located() {
    let dir = temp_dir("flips");
    let path = dir.join("fullerene-c100-all.cgr");
    write_file(
        &path,
        &run_info(100, false, 1, None),
        &random_records(2, 9000),
    );
    let file = DataFile::open(&path).expect("open");
    let chunks = file.index.chunks.clone();
    drop(file);
    let len = fs::metadata(&path).expect("meta").len();
    let header_end = chunks[0].offset;
    let index_start = chunks.last().map(|c| c.offset + c.len).expect("chunks");
    // Under its own name (in another directory): a copy under another name is refused as such.
    fs::create_dir_all(dir.join("damaged")).expect("dir");
    let bad = dir.join("damaged").join("fullerene-c100-all.cgr");
    let mut rng = StdRng::seed_from_u64(3);
    let check = |at: u64, place: &str| {
        flipped(&path, at, &bad);
        let err = read_everything(&bad).expect_err("a flipped byte must be detected");
        let msg = err.to_string();
        assert!(
            msg.contains(&bad.display().to_string()),
            "names the file: {msg}"
        );
        assert!(
            msg.contains(place),
            "byte {at}: expected '{place}' in: {msg}"
        );
    };
    for at in 16..header_end {
        check(at, "header");
    }
    for (i, c) in chunks.iter().enumerate() {
        for _ in 0..40 {
            check(
                rng.gen_range(c.offset..c.offset + c.len),
                &format!("chunk {i}"),
            );
        }
    }
    for at in index_start..len - 24 {
        check(at, "index");
    }
    for at in len - 24..len {
        check(at, "");
    }
    let _ = fs::remove_dir_all(&dir);
}

#[test]
fn truncated_files_are_errors_never_partial_answers() {
    let dir = temp_dir("trunc");
    let path = dir.join("fullerene-c100-all.cgr");
    write_file(
        &path,
        &run_info(100, false, 1, None),
        &random_records(4, 5000),
    );
    let bytes = fs::read(&path).expect("read");
    fs::create_dir_all(dir.join("short")).expect("dir");
    let bad = dir.join("short").join("fullerene-c100-all.cgr");
    let mut cuts: Vec<usize> = (0..bytes.len()).step_by(997).collect();
    cuts.extend([bytes.len() - 1, bytes.len() - 24, 9, 16]);
    for cut in cuts {
        fs::write(&bad, &bytes[..cut]).expect("write");
        let err = read_everything(&bad).expect_err("truncation must be detected");
        assert!(err.to_string().contains("short/fullerene"), "{err}");
        assert!(err.is_data_error(), "{err}");
    }
    let _ = fs::remove_dir_all(&dir);
}

#[test]
fn a_run_with_hexagon_starts_does_not_mix_with_one_without() {
    // The unit lists differ, so resuming one with the other's settings would mix units.
    let dir = temp_dir("starts");
    let info = run_info(100, false, 4, None);
    full_run(&dir, info.clone());
    let other = RunInfo {
        all_starts: true,
        ..info
    };
    let msg = match Writer::open(&dir, other.clone()) {
        Ok(_) => panic!("a run with other settings was accepted"),
        Err(e) => e.to_string(),
    };
    assert!(msg.contains("already holds a different run"), "{msg}");
    // The existing C100 run started only on pentagons, which may miss a cage there.
    assert!(
        msg.contains("pentagon starts only: may miss cages"),
        "{msg}"
    );
    assert!(msg.contains("run again with --pentagon-starts"), "{msg}");
    assert!(other.label().contains("all starts"));
    // Where pentagon starts are checked to find every cage, the label adds nothing.
    assert_eq!(run_info(98, false, 4, None).label(), "C98 (all, fullerene)");
    let _ = fs::remove_dir_all(&dir);
}

#[test]
fn unknown_versions_and_foreign_files_are_refused_by_name() {
    let dir = temp_dir("foreign");
    let path = dir.join("fullerene-c60-all.cgr");
    write_file(
        &path,
        &run_info(100, false, 1, None),
        &random_records(5, 10),
    );
    let mut bytes = fs::read(&path).expect("read");
    bytes[8] = 99;
    fs::write(&path, &bytes).expect("write");
    let msg = read_everything(&path).expect_err("version").to_string();
    assert!(
        msg.contains("format 99") && msg.contains("fullerene-c60-all.cgr"),
        "{msg}"
    );
    fs::write(&path, b"C60 1812 isomers, some notes\n").expect("write");
    let msg = read_everything(&path).expect_err("foreign").to_string();
    assert!(msg.contains("not a cagerank catalogue file"), "{msg}");
    let report = catalogue::verify(&dir).expect("verify runs");
    assert!(!report.is_ok());
    let _ = fs::remove_dir_all(&dir);
}

/// Deterministic fake results of unit `u` (some units are empty, as real ones can be).
fn unit_records(u: u32) -> Vec<Record> {
    let n = if u % 4 == 3 {
        0
    } else {
        (u as usize * 37) % 900 + 1
    };
    let mut records = random_records(1000 + u as u64, n);
    for r in &mut records {
        r.special_faces[0].0 = 1;
        // An even electron count (the runs below are C100 with even charges): no doublets,
        // which `verify` would flag.
        if r.shell == cagerank::score::Shell::OpenDoublet {
            r.shell = cagerank::score::Shell::Open;
        }
    }
    records
}

/// Runs (part of) a run to completion, committing units one by one, and returns the file bytes.
fn full_run(dir: &Path, info: RunInfo) -> Vec<u8> {
    let mut w = Writer::open(dir, info).expect("open writer");
    for u in w.pending_units() {
        w.commit_unit(u, &unit_records(u)).expect("commit");
    }
    let done = w.finish().expect("finish");
    fs::read(done.path).expect("read")
}

const UNITS: u32 = 11;

#[test]
fn resume_after_interruption_gives_identical_bytes() {
    let reference = full_run(&temp_dir("resume-ref"), run_info(100, false, UNITS, None));
    for k in [0, 1, 5, 10, UNITS] {
        let dir = temp_dir(&format!("resume-{k}"));
        let info = run_info(100, false, UNITS, None);
        let mut w = Writer::open(&dir, info.clone()).expect("open");
        let batch: Vec<(u32, Vec<Record>)> = (0..k).map(|u| (u, unit_records(u))).collect();
        let refs: Vec<(u32, &[Record])> = batch.iter().map(|(u, r)| (*u, r.as_slice())).collect();
        w.commit_units(&refs).expect("commit batch");
        drop(w);
        // What kill -9 leaves behind: a LOCK file nobody holds (empty if the kill came
        // between creating and writing it, else naming the dead process; pid 4194305 exceeds
        // Linux's pid_max, 2^22), and a half-written temp file.
        let host = fs::read_to_string("/proc/sys/kernel/hostname").unwrap_or_default();
        let lock = if k % 2 == 0 {
            String::new()
        } else {
            format!("pid=4194305 host={} started=0\n", host.trim())
        };
        fs::write(dir.join("LOCK"), lock).expect("stale lock");
        let work = dir.join("fullerene-c100-all.cgr.work");
        fs::write(work.join("part-00000099.part.tmp"), b"half").expect("stray temp");
        let w = Writer::open(&dir, info.clone()).expect("reopen after kill");
        assert_eq!(w.pending_units(), (k..UNITS).collect::<Vec<_>>());
        drop(w);
        assert_eq!(
            full_run(&dir, info.clone()),
            reference,
            "interrupted after {k} units"
        );
        assert!(!work.exists(), "work directory removed after finish");
        let again = Writer::open(&dir, info).expect("open finished run");
        assert!(again.pending_units().is_empty());
        assert!(again.finish().expect("finish is idempotent").was_complete);
        let _ = fs::remove_dir_all(&dir);
    }
}

#[test]
fn writer_refuses_unfinished_finish_other_runs_and_second_writers() {
    let dir = temp_dir("refuse");
    let info = run_info(100, false, UNITS, None);
    let mut w = Writer::open(&dir, info.clone()).expect("open");
    let msg = Writer::open(&dir, info.clone())
        .expect_err("second writer")
        .to_string();
    assert!(
        msg.contains(&format!("process {}", std::process::id())),
        "{msg}"
    );
    w.commit_unit(0, &unit_records(0)).expect("commit");
    assert!(
        w.commit_unit(0, &unit_records(0)).is_err(),
        "double commit refused"
    );
    assert!(w.commit_unit(UNITS, &[]).is_err(), "unknown unit refused");
    let mut wrong = unit_records(1);
    wrong[0].atoms = 60;
    assert!(
        w.commit_unit(1, &wrong).is_err(),
        "wrong atom count refused"
    );
    let msg = w.finish().expect_err("incomplete").to_string();
    assert!(msg.contains("10 unit(s) not yet committed"), "{msg}");
    let other = run_info(100, false, UNITS + 1, None);
    let msg = Writer::open(&dir, other)
        .expect_err("other settings")
        .to_string();
    assert!(msg.contains("unfinished run with other settings"), "{msg}");
    let _ = fs::remove_dir_all(&dir);
}

#[test]
fn three_shards_merge_into_the_single_run_bytes_and_two_are_refused() {
    let reference = full_run(&temp_dir("shard-ref"), run_info(100, false, UNITS, None));
    let shard_dirs: Vec<PathBuf> = (1..=3)
        .map(|k| {
            let d = temp_dir(&format!("shard-{k}"));
            let shard = Some(ShardId {
                index: k,
                count: 3,
                deal: Deal::RoundRobin,
            });
            full_run(&d, run_info(100, false, UNITS, shard));
            d
        })
        .collect();
    let into = temp_dir("shard-merged");
    let report = catalogue::merge(&shard_dirs, &into).expect("merge");
    assert_eq!(report.written.len(), 1);
    let merged = fs::read(into.join("fullerene-c100-all.cgr")).expect("merged file");
    assert_eq!(merged, reference, "merge of 3 shards equals the single run");

    let two = temp_dir("shard-two");
    let msg = catalogue::merge(&shard_dirs[..2], &two)
        .expect_err("2 of 3")
        .to_string();
    assert!(msg.contains("missing shard(s) 3/3"), "{msg}");
    let dup = vec![
        shard_dirs[0].clone(),
        shard_dirs[0].clone(),
        shard_dirs[1].clone(),
    ];
    let msg = catalogue::merge(&dup, &two)
        .expect_err("overlap")
        .to_string();
    assert!(
        msg.contains("overlap") && msg.contains("shard 1/3"),
        "{msg}"
    );

    let odd = temp_dir("shard-odd");
    let mut info = run_info(
        100,
        false,
        UNITS,
        Some(ShardId {
            index: 3,
            count: 3,
            deal: Deal::RoundRobin,
        }),
    );
    info.made_by = "cagerank 0.0.1".into();
    full_run(&odd, info);
    let mixed = vec![shard_dirs[0].clone(), shard_dirs[1].clone(), odd.clone()];
    let msg = catalogue::merge(&mixed, &two)
        .expect_err("mixed versions")
        .to_string();
    assert!(msg.contains("cagerank 0.0.1"), "{msg}");
    for d in shard_dirs.iter().chain([&into, &two, &odd]) {
        let _ = fs::remove_dir_all(d);
    }
}

/// Independent reference: the documented meaning of each rank field, ascending.
fn field_order(a: &Record, b: &Record, field: RankField) -> Ordering {
    match field {
        RankField::PentagonAdjacencies => a.pentagon_adjacencies.cmp(&b.pentagon_adjacencies),
        RankField::Shell => a.shell.cmp(&b.shell),
        RankField::HexagonStrain => a.hexagon_strain.total_cmp(&b.hexagon_strain),
        RankField::Gap => a.gap.total_cmp(&b.gap),
        RankField::Homo => a.homo.total_cmp(&b.homo),
        RankField::Lumo => a.lumo.total_cmp(&b.lumo),
        RankField::PiEnergy => a.pi_energy.total_cmp(&b.pi_energy),
        RankField::Kekule => a.kekule.cmp(&b.kekule),
        RankField::Automorphisms => a.automorphisms.cmp(&b.automorphisms),
        RankField::Spiral => a.number.cmp(&b.number),
    }
}

fn brute_force(all: &[Record], f: &Filter, keys: &[RankKey], top: Option<usize>) -> Vec<Record> {
    let mut hits: Vec<Record> = all
        .iter()
        .filter(|r| {
            f.max_pentagon_adjacencies
                .is_none_or(|m| r.pentagon_adjacencies <= m)
        })
        .filter(|r| f.min_gap.is_none_or(|g| r.gap >= g))
        .filter(|r| f.shell.is_none_or(|s| r.shell == s))
        .filter(|r| f.point_group.is_none_or(|g| r.point_group == g))
        .filter(|r| f.chiral.is_none_or(|c| r.chiral == c))
        .filter(|r| f.nmr.as_ref().is_none_or(|p| &r.nmr == p))
        .filter(|r| {
            f.nmr_lines
                .is_none_or(|n| r.nmr.iter().map(|&(_, k)| u64::from(k)).sum::<u64>() == n)
        })
        // The grouping itself is checked against a brute force in score::nmr; here only that
        // the filter reaches every record.
        .filter(|r| {
            f.nmr_merged
                .as_ref()
                .is_none_or(|m| cagerank::score::nmr::merges_into(&r.nmr, m))
        })
        .filter(|r| !f.ipr_only || r.ipr)
        .cloned()
        .collect();
    hits.sort_by(|a, b| {
        keys.iter()
            .map(|k| {
                let o = field_order(a, b, k.field);
                if k.descending {
                    o.reverse()
                } else {
                    o
                }
            })
            .find(|o| o.is_ne())
            .unwrap_or_else(|| a.number.cmp(&b.number))
    });
    hits.truncate(top.unwrap_or(usize::MAX));
    hits
}

#[test]
fn queries_equal_brute_force_filter_and_sort() {
    let dir = temp_dir("query");
    let mut records = random_records(7, 12_000);
    // Sort a stretch by pentagon adjacencies so that chunk skipping really happens.
    records[..8192].sort_by_key(|r| r.pentagon_adjacencies);
    for r in &mut records {
        r.nmr = cagerank::score::nmr::normalise(&r.nmr);
    }
    write_file(
        &dir.join("fullerene-c100-all.cgr"),
        &run_info(100, false, 1, None),
        &records,
    );
    let all = DataFile::open(&dir.join("fullerene-c100-all.cgr"))
        .expect("open")
        .all_records()
        .expect("read");
    let key = |s: &str| s.parse::<RankKey>().expect("rank key");
    let key_sets: Vec<Vec<RankKey>> = vec![
        cagerank::score::rank::default_keys(),
        vec![key("-gap")],
        vec![key("kekule"), key("-automorphisms")],
        vec![key("-spiral")],
        vec![key("shell"), key("-pi_energy"), key("homo"), key("-lumo")],
    ];
    let mut rng = StdRng::seed_from_u64(8);
    for round in 0..40 {
        let filter = Filter {
            max_pentagon_adjacencies: rng.gen_bool(0.5).then(|| rng.gen_range(0..4)),
            min_gap: rng.gen_bool(0.4).then(|| rng.gen_range(0.0..0.9)),
            shell: rng
                .gen_bool(0.3)
                .then(|| SHELLS[rng.gen_range(0..SHELLS.len())]),
            point_group: rng
                .gen_bool(0.3)
                .then(|| PointGroup::from_code(rng.gen_range(0..6)).expect("code")),
            nmr: rng
                .gen_bool(0.2)
                .then(|| all[rng.gen_range(0..all.len())].nmr.clone()),
            nmr_lines: rng.gen_bool(0.2).then(|| rng.gen_range(40..60)),
            nmr_merged: rng.gen_bool(0.15).then(|| {
                // A record's pattern with two of its intensity-2 lines merged into one of 4.
                let mut p = all[rng.gen_range(0..all.len())].nmr.clone();
                p[0].1 -= 2;
                p.push((4, 1));
                cagerank::score::nmr::normalise(&p)
            }),
            chiral: rng.gen_bool(0.3).then(|| rng.gen_bool(0.5)),
            ipr_only: false,
        };
        let keys = key_sets[round % key_sets.len()].clone();
        let top = rng.gen_bool(0.7).then(|| rng.gen_range(0..30));
        let ipr = round % 5 == 4;
        let q = Query {
            atoms: 100,
            face_set: FaceSet::Fullerene,
            ipr,
            charge: 0,
            filter: filter.clone(),
            rank_by: keys.clone(),
            top,
        };
        let got = query(&dir, &q).expect("query");
        let want = brute_force(
            &all,
            &Filter {
                ipr_only: ipr,
                ..filter
            },
            &keys,
            top,
        );
        assert_eq!(got, want, "round {round}");
    }
    let missing = Query {
        atoms: 102,
        face_set: FaceSet::Fullerene,
        ipr: false,
        charge: 0,
        filter: Filter::default(),
        rank_by: vec![],
        top: None,
    };
    let msg = query(&dir, &missing).expect_err("no such size").to_string();
    assert!(
        msg.contains("C102") && msg.contains("cagerank enumerate 102"),
        "{msg}"
    );
    let _ = fs::remove_dir_all(&dir);
}

/// Figures for docs/performance.md (not a pass/fail check): run with
/// `cargo test --release --test suite -- --ignored catalogue::measure --nocapture`.
#[test]
#[ignore]
fn measure_storage_and_scan_speed() {
    use cagerank::enumerate::{self, Spec};
    let spec = Spec::fullerene(100, false).expect("C100");
    let mut real = Vec::new();
    'outer: for unit in enumerate::units(&spec) {
        for found in enumerate::run_unit(&spec, &unit) {
            let d = cagerank::score::describe_spiral(&found.spiral, 0).expect("scores");
            real.push(Record::from_descriptors(&found.spiral, found.ipr, &d).expect("storable"));
            if real.len() == 4096 {
                break 'outer;
            }
        }
    }
    let dir = temp_dir("measure");
    let path = dir.join("fullerene-c100-all.cgr");
    write_file(&path, &run_info(100, false, 1, None), &real);
    let bytes = fs::metadata(&path).expect("meta").len();
    println!(
        "real C100: {} records, {:.1} bytes/record",
        real.len(),
        bytes as f64 / real.len() as f64
    );
    let synthetic = random_records(9, 300_000);
    write_file(&path, &run_info(100, false, 1, None), &synthetic);
    let bytes = fs::metadata(&path).expect("meta").len();
    let q = Query {
        atoms: 100,
        face_set: FaceSet::Fullerene,
        ipr: false,
        charge: 0,
        filter: Filter::default(),
        rank_by: vec![],
        top: Some(10),
    };
    let t = std::time::Instant::now();
    let top = query(&dir, &q).expect("query");
    let s = t.elapsed().as_secs_f64();
    println!(
        "synthetic: {:.1} bytes/record; query --top 10 over {} records: {:.3} s = {:.2} M records/s",
        bytes as f64 / synthetic.len() as f64,
        synthetic.len(),
        s,
        synthetic.len() as f64 / s / 1e6
    );
    assert_eq!(top.len(), 10);
    let _ = fs::remove_dir_all(&dir);
}

fn charged(info: RunInfo, charge: i32) -> RunInfo {
    RunInfo { charge, ..info }
}

fn small_query(atoms: u32, charge: i32) -> Query {
    Query {
        atoms,
        face_set: FaceSet::Fullerene,
        ipr: false,
        charge,
        filter: Filter::default(),
        rank_by: vec![],
        top: None,
    }
}

#[test]
fn runs_of_several_charges_of_one_size_sit_side_by_side() {
    let dir = temp_dir("charges");
    let neutral = run_info(100, false, UNITS, None);
    full_run(&dir, neutral.clone());
    full_run(&dir, charged(neutral.clone(), -6));
    full_run(&dir, charged(neutral.clone(), 2));
    for name in [
        "fullerene-c100-all.cgr",
        "fullerene-c100-all-q-6.cgr",
        "fullerene-c100-all-q+2.cgr",
    ] {
        assert!(dir.join(name).is_file(), "{name}");
    }
    assert_eq!(
        DataFile::open(&dir.join("fullerene-c100-all-q-6.cgr"))
            .expect("open")
            .info
            .charge,
        -6
    );
    let records: usize = (0..UNITS).map(|u| unit_records(u).len()).sum();
    assert_eq!(
        query(&dir, &small_query(100, -6)).expect("q").len(),
        records
    );
    let msg = query(&dir, &small_query(100, -4))
        .expect_err("no charge -4 run")
        .to_string();
    assert!(
        msg.contains("charge -4") && msg.contains("cagerank enumerate 100 --charge -4 --catalogue"),
        "{msg}"
    );
    assert!(!msg.contains('\n'));
    // Resuming the charged run in the neutral run's work directory is refused.
    let mut w = Writer::open(&dir, charged(run_info(98, false, UNITS, None), -6)).expect("open");
    w.commit_unit(0, &[]).expect("commit");
    drop(w);
    fs::rename(
        dir.join("fullerene-c98-all-q-6.cgr.work"),
        dir.join("fullerene-c98-all.cgr.work"),
    )
    .expect("rename");
    let err = Writer::open(&dir, run_info(98, false, UNITS, None)).expect_err("other charge");
    assert!(err.is_user_error(), "{err}");
    assert!(err.to_string().contains("charge -6"), "{err}");
    let _ = fs::remove_dir_all(&dir);
}

#[test]
fn a_data_file_under_another_name_is_refused_everywhere() {
    // `cp fullerene-c42-all.cgr fullerene-c40-all.cgr` must not answer for C40.
    let dir = temp_dir("misnamed");
    full_run(&dir, run_info(100, false, UNITS, None));
    fs::copy(
        dir.join("fullerene-c100-all.cgr"),
        dir.join("fullerene-c102-all.cgr"),
    )
    .expect("copy");
    let err = query(&dir, &small_query(102, 0)).expect_err("misnamed");
    let msg = err.to_string();
    assert!(err.is_user_error(), "{msg}");
    assert!(
        msg.contains("fullerene-c102-all.cgr") && msg.contains("C100") && !msg.contains('\n'),
        "{msg}"
    );
    // The same under a charged name.
    fs::rename(
        dir.join("fullerene-c102-all.cgr"),
        dir.join("fullerene-c100-all-q-6.cgr"),
    )
    .expect("rename");
    assert!(query(&dir, &small_query(100, -6)).is_err());
    let report = catalogue::verify(&dir).expect("verify runs");
    assert!(!report.is_ok());
    // (The random test records do not wind into cages, so only the name is checked here.)
    let bad: Vec<String> = report
        .files
        .iter()
        .filter(|f| matches!(f.problem, Some(CatalogueError::RunMismatch { .. })))
        .map(|f| f.path.display().to_string())
        .collect();
    assert_eq!(bad.len(), 1, "{bad:?}");
    assert!(bad[0].ends_with("fullerene-c100-all-q-6.cgr"));
    assert!(catalogue::stats::catalogue_stats(&dir).is_err());
    let _ = fs::remove_dir_all(&dir);
}

#[test]
fn a_committed_units_file_of_another_run_is_refused_on_resume() {
    // Two unfinished runs, C100 and C98; a C98 part copied into the C100 work directory.
    let dir = temp_dir("foreign-part");
    for atoms in [100, 98] {
        let mut w = Writer::open(&dir, run_info(atoms, false, UNITS, None)).expect("open");
        // Unit 3 is empty (see `unit_records`), so it fits either size.
        w.commit_unit(3, &unit_records(3)).expect("commit");
    }
    let part = "part-00000003.part";
    let work = dir.join("fullerene-c100-all.cgr.work");
    fs::copy(
        dir.join("fullerene-c98-all.cgr.work").join(part),
        work.join("part-00000006.part"),
    )
    .expect("copy");
    let err = Writer::open(&dir, run_info(100, false, UNITS, None)).expect_err("foreign part");
    assert!(err.is_user_error(), "{err}");
    let msg = err.to_string();
    assert!(
        msg.contains("part-00000006.part") && msg.contains("C98"),
        "{msg}"
    );
    assert!(
        work.join("part-00000006.part").exists(),
        "refused, not deleted"
    );
    let report = catalogue::verify(&dir).expect("verify runs");
    assert_eq!(report.work_problems.len(), 1, "{:?}", report.work_problems);
    assert!(!report.is_ok());
    // A copy of the run's own part under another name holds its unit twice.
    fs::remove_file(work.join("part-00000006.part")).expect("remove");
    fs::copy(work.join(part), work.join("part-00000007.part")).expect("copy");
    let err = Writer::open(&dir, run_info(100, false, UNITS, None)).expect_err("duplicate");
    assert!(err.to_string().contains("unit 3"), "{err}");
    let _ = fs::remove_dir_all(&dir);
}

#[test]
fn shards_dealt_round_robin_by_older_versions_do_not_mix_with_new_ones() {
    // Format 3 and earlier dealt unit i to shard (i mod N) + 1; such shards still merge among
    // themselves (the tests above), but not with shards dealt by the current rule.
    let base = temp_dir("merge-deals");
    let a = base.join("a");
    let b = base.join("b");
    let shard = |k, deal| {
        Some(ShardId {
            index: k,
            count: 2,
            deal,
        })
    };
    full_run(&a, run_info(100, false, UNITS, shard(1, Deal::RoundRobin)));
    full_run(&b, run_info(100, false, UNITS, shard(2, Deal::Scrambled)));
    let err = catalogue::merge(&[a, b], &base.join("out")).expect_err("mixed dealings");
    assert!(err.is_user_error());
    let msg = err.to_string();
    assert!(
        msg.contains("round-robin") && msg.contains("a/") && msg.contains("b/"),
        "{msg}"
    );
    let _ = fs::remove_dir_all(&base);
}

#[test]
fn scrambled_shards_merge_into_the_single_run_bytes() {
    let reference = full_run(
        &temp_dir("scrambled-ref"),
        run_info(100, false, UNITS, None),
    );
    let dirs: Vec<PathBuf> = (1..=4)
        .map(|k| {
            let d = temp_dir(&format!("scrambled-{k}"));
            let shard = Some(ShardId {
                index: k,
                count: 4,
                deal: Deal::Scrambled,
            });
            full_run(&d, run_info(100, false, UNITS, shard));
            d
        })
        .collect();
    let into = temp_dir("scrambled-merged");
    catalogue::merge(&dirs, &into).expect("merge");
    let merged = fs::read(into.join("fullerene-c100-all.cgr")).expect("merged file");
    assert_eq!(merged, reference);
    for d in dirs.iter().chain([&into]) {
        let _ = fs::remove_dir_all(d);
    }
}

#[test]
fn shards_of_different_charges_do_not_merge() {
    let base = temp_dir("merge-charges");
    let a = base.join("a");
    let b = base.join("b");
    let shard = |k| {
        Some(ShardId {
            index: k,
            count: 2,
            deal: Deal::RoundRobin,
        })
    };
    full_run(&a, charged(run_info(100, false, UNITS, shard(1)), -6));
    full_run(&b, run_info(100, false, UNITS, shard(2)));
    let err = catalogue::merge(&[a, b], &base.join("out")).expect_err("mixed charges");
    assert!(err.is_user_error());
    assert!(err.to_string().contains("different charges"), "{err}");
    let _ = fs::remove_dir_all(&base);
}

#[test]
fn files_written_by_format_2_still_read_as_neutral_runs() {
    // Copies of the shipped catalogue as format 2 / schema 1 wrote it (before charges and the
    // SOMO column).
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/format2");
    let mut f = DataFile::open(&dir.join("fullerene-c20-all.cgr")).expect("format 2 opens");
    assert_eq!(f.info.charge, 0);
    let all = f.all_records().expect("schema 1 chunks decode");
    assert_eq!(all.len(), 1);
    assert_eq!(all[0].somo, None);
    // The dodecahedron: Ih (Atlas, from memory).
    assert_eq!(all[0].point_group.name(), "Ih");
    let mut q = small_query(60, 0);
    q.ipr = true;
    let top = query(&dir, &q).expect("query on format 2");
    assert_eq!(top.len(), 1);
    assert_eq!(top[0].nmr, vec![(60, 1)]);
    assert!(catalogue::verify(&dir).expect("verify").is_ok());
}
