//! What a cluster run's merge step refuses, through the binary as `merge.sbatch` runs it:
//! shards of different program versions or face sets exit with code 2 and one line naming a
//! file of the offending run. (Different charges and sizes: `catalogue_cli`; the library
//! checks behind them: `catalogue`.)

use cagerank::cage::FaceSet;
use cagerank::catalogue::{self, Deal, RunInfo, ShardId, Writer};
use std::path::{Path, PathBuf};
use std::process::Command;

const UNITS: u32 = 6;

fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("cagerank-merge-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    dir
}

/// Shard `k` of 2 of a C40 run with no isomers in any unit: the merge checks run settings,
/// not records, so empty units are enough.
fn shard(dir: &Path, k: u32, face_set: FaceSet, made_by: &str) {
    let info = RunInfo {
        face_set,
        atoms: 40,
        ipr: false,
        unit_count: UNITS,
        unit_depth: 3,
        shard: Some(ShardId {
            index: k,
            count: 2,
            deal: Deal::Scrambled,
        }),
        made_by: made_by.to_string(),
        all_starts: false,
        charge: 0,
    };
    let mut w = Writer::open(dir, info).expect("open writer");
    for u in w.pending_units() {
        w.commit_unit(u, &[]).expect("commit");
    }
    w.finish().expect("finish");
}

/// Runs `cagerank merge` on the directories; returns the exit code and standard error.
fn merge(dirs: &[&Path], into: &Path) -> (Option<i32>, String) {
    let out = Command::new(env!("CARGO_BIN_EXE_cagerank"))
        .arg("merge")
        .args(dirs)
        .arg("--into")
        .arg(into)
        .output()
        .expect("binary runs");
    (
        out.status.code(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

#[test]
fn matching_synthetic_shards_merge() {
    // The control for the refusals below: the same two shards from one version and face set
    // do merge, so a refusal there is about the difference alone.
    let base = scratch("control");
    let (a, b) = (base.join("a"), base.join("b"));
    shard(&a, 1, FaceSet::Fullerene, &catalogue::made_by());
    shard(&b, 2, FaceSet::Fullerene, &catalogue::made_by());
    let (code, err) = merge(&[&a, &b], &base.join("out"));
    assert_eq!(code, Some(0), "{err}");
    assert!(base.join("out/fullerene-c40-all.cgr").is_file());
    let _ = std::fs::remove_dir_all(&base);
}

#[test]
fn shards_of_another_version_are_refused_naming_the_file() {
    let base = scratch("version");
    let (a, b) = (base.join("a"), base.join("b"));
    shard(&a, 1, FaceSet::Fullerene, &catalogue::made_by());
    shard(&b, 2, FaceSet::Fullerene, "cagerank 0.0.1");
    let (code, err) = merge(&[&a, &b], &base.join("out"));
    assert_eq!(code, Some(2), "{err}");
    assert_eq!(err.trim().lines().count(), 1, "{err}");
    assert!(err.contains("cagerank 0.0.1"), "{err}");
    assert!(err.contains("fullerene-c40-all.cgr"), "{err}");
    assert!(
        !base.join("out").exists(),
        "a refused merge created its destination"
    );
    let _ = std::fs::remove_dir_all(&base);
}

#[test]
fn shards_of_another_face_set_are_refused_naming_the_file() {
    let base = scratch("faces");
    let (a, b) = (base.join("a"), base.join("b"));
    shard(&a, 1, FaceSet::Fullerene, &catalogue::made_by());
    shard(&b, 2, FaceSet::SquarePentagonHexagon, &catalogue::made_by());
    let (code, err) = merge(&[&a, &b], &base.join("out"));
    assert_eq!(code, Some(2), "{err}");
    assert_eq!(err.trim().lines().count(), 1, "{err}");
    // Each face set's run lacks a shard; the refusal names both files and the cause, and
    // creates nothing.
    assert!(
        err.contains("fullerene-c40-all.cgr") && err.contains("4-5-6-c40-all.cgr"),
        "{err}"
    );
    assert!(err.contains("different runs"), "{err}");
    assert!(
        !base.join("out").exists(),
        "a refused merge created its destination"
    );
    let _ = std::fs::remove_dir_all(&base);
}
