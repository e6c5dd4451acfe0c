//! The catalogue through the binary: rebuilding part of the shipped catalogue gives the same
//! bytes, and a run killed with SIGKILL at arbitrary moments resumes to the same bytes.

use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::Duration;

fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_cagerank"))
}

fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("cagerank-test-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    dir
}

fn shipped(file: &str) -> Vec<u8> {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("catalogues")
        .join(file);
    std::fs::read(&path).unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

/// Fails with the command's own output if it did not succeed.
fn assert_success(out: &std::process::Output) {
    assert!(
        out.status.success(),
        "{}{}",
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    );
}

fn enumerate_into(dir: &Path, size: &str, extra: &[&str]) -> std::process::Output {
    bin()
        .args(["enumerate", size, "--quiet", "--catalogue"])
        .arg(dir)
        .args(extra)
        .output()
        .expect("binary runs")
}

#[test]
fn rebuilding_part_of_the_shipped_catalogue_gives_identical_bytes() {
    let dir = scratch("rebuild");
    for (size, extra, file) in [
        ("40", &[][..], "fullerene-c40-all.cgr"),
        ("84", &["--ipr"][..], "fullerene-c84-ipr.cgr"),
    ] {
        let out = enumerate_into(&dir, size, extra);
        assert_success(&out);
        assert_eq!(
            std::fs::read(dir.join(file)).unwrap(),
            shipped(file),
            "{file}"
        );
    }
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn killed_runs_resume_to_the_same_bytes() {
    let dir = scratch("resume");
    // Kill the run at several moments (SIGKILL, no chance to clean up), then finish it. One
    // thread keeps the whole run near three seconds here, longer than the kills add up to.
    let mut interrupted = 0;
    for delay_ms in [150u64, 400, 700, 1000] {
        let mut child = bin()
            .args([
                "enumerate",
                "62",
                "--quiet",
                "--threads",
                "1",
                "--catalogue",
            ])
            .arg(&dir)
            .stdout(Stdio::null())
            .stderr(Stdio::null())
            .spawn()
            .expect("binary starts");
        std::thread::sleep(Duration::from_millis(delay_ms));
        if matches!(child.try_wait(), Ok(None)) {
            interrupted += 1;
        }
        let _ = child.kill();
        let _ = child.wait();
    }
    // A run that had already finished proves nothing about resuming.
    assert!(
        interrupted >= 2,
        "only {interrupted} of 4 runs were still going when killed"
    );
    let out = enumerate_into(&dir, "62", &[]);
    assert_success(&out);
    // The shipped catalogue was built by one uninterrupted run.
    let file = "fullerene-c62-all.cgr";
    assert_eq!(std::fs::read(dir.join(file)).unwrap(), shipped(file));
    let verify = bin().arg("verify").arg(&dir).output().unwrap();
    assert_success(&verify);
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn shards_merged_through_the_cli_equal_the_single_run() {
    let dir = scratch("shards");
    let mut parts = Vec::new();
    for k in 1..=3 {
        let part = dir.join(format!("part{k}"));
        let out = enumerate_into(&part, "44", &["--shard", &format!("{k}/3")]);
        assert_success(&out);
        parts.push(part);
    }
    let merged = dir.join("merged");
    let out = bin()
        .arg("merge")
        .args(&parts)
        .arg("--into")
        .arg(&merged)
        .output()
        .unwrap();
    assert_success(&out);
    let file = "fullerene-c44-all.cgr";
    assert_eq!(std::fs::read(merged.join(file)).unwrap(), shipped(file));
    // Two of three shards are refused.
    let out = bin()
        .arg("merge")
        .args(&parts[..2])
        .arg("--into")
        .arg(dir.join("incomplete"))
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn shipped_catalogue_answers_queries() {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("catalogues");
    let out = bin()
        .args([
            "query",
            "--atoms",
            "60",
            "--top",
            "1",
            "--format",
            "json",
            "--catalogue",
        ])
        .arg(&dir)
        .output()
        .unwrap();
    assert_success(&out);
    let text = String::from_utf8_lossy(&out.stdout);
    let first: serde_json::Value = serde_json::from_str(text.lines().next().unwrap()).unwrap();
    // The only C60 without adjacent pentagons, Ih (Atlas, from memory), ranks first.
    assert_eq!(first["number"], 1812);
    assert_eq!(first["point_group"], "Ih");
}
