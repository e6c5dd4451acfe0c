//! The catalogue through the binary: rebuilding part of the shipped catalogue gives the same
//! bytes, and a run killed with SIGKILL at arbitrary moments resumes to the same bytes.

use cagerank::enumerate::{self, Spec};
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

/// Runs `size` in `n` shards through the CLI and merges them into `dir/merged`.
fn shard_and_merge(dir: &Path, size: &str, n: u32) -> (Vec<PathBuf>, std::process::Output) {
    let mut parts = Vec::new();
    for k in 1..=n {
        let part = dir.join(format!("part{k}"));
        let out = enumerate_into(&part, size, &["--shard", &format!("{k}/{n}")]);
        assert_success(&out);
        parts.push(part);
    }
    let out = bin()
        .arg("merge")
        .args(&parts)
        .arg("--into")
        .arg(dir.join("merged"))
        .output()
        .unwrap();
    (parts, out)
}

#[test]
fn shards_merged_through_the_cli_equal_the_single_run() {
    // The shipped files were written by one uninterrupted run each. Task counts: 3 and 7, which
    // divide neither C44's unit count nor each other, and more tasks than C28 has units (some
    // shards are then empty).
    let c28_units = enumerate::units(&Spec::fullerene(28, false).unwrap()).len() as u32;
    for (size, n) in [("44", 3), ("44", 7), ("28", c28_units + 2)] {
        let dir = scratch(&format!("shards-{size}-{n}"));
        let (parts, out) = shard_and_merge(&dir, size, n);
        assert_success(&out);
        let file = format!("fullerene-c{size}-all.cgr");
        assert_eq!(
            std::fs::read(dir.join("merged").join(&file)).unwrap(),
            shipped(&file),
            "{file} in {n} shards"
        );
        // A shard missing is refused on one line that names it.
        let out = bin()
            .arg("merge")
            .args(&parts[1..])
            .arg("--into")
            .arg(dir.join("incomplete"))
            .output()
            .unwrap();
        assert_eq!(out.status.code(), Some(2));
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(err.contains(&format!("missing shard(s) 1/{n}")), "{err}");
        assert_eq!(err.trim().lines().count(), 1, "{err}");
        let _ = std::fs::remove_dir_all(&dir);
    }
}

#[test]
fn shards_of_different_sizes_lists_or_charges_are_refused_by_name() {
    let dir = scratch("shards-mixed");
    let a = dir.join("a");
    let b = dir.join("b");
    assert_success(&enumerate_into(&a, "40", &["--shard", "1/2"]));
    // Another charge: its file name differs, so the merge names both files.
    assert_success(&enumerate_into(
        &b,
        "40",
        &["--shard", "2/2", "--charge", "-2"],
    ));
    let out = bin()
        .arg("merge")
        .args([&a, &b])
        .arg("--into")
        .arg(dir.join("out"))
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("different charges") && err.contains("a/"),
        "{err}"
    );
    assert_eq!(err.trim().lines().count(), 1, "{err}");
    // Shards of another size: the refusal names both files and says they are of different
    // runs, and nothing is created (issue 22: merges of different sizes refused naming them).
    let c = dir.join("c");
    assert_success(&enumerate_into(&c, "42", &["--shard", "2/2"]));
    let out = bin()
        .arg("merge")
        .args([&a, &c])
        .arg("--into")
        .arg(dir.join("out"))
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("different runs"), "{err}");
    assert!(
        err.contains("fullerene-c40-all.cgr") && err.contains("fullerene-c42-all.cgr"),
        "{err}"
    );
    assert_eq!(err.trim().lines().count(), 1, "{err}");
    assert!(
        !dir.join("out").exists(),
        "a refused merge created its destination"
    );
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

fn shipped_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("catalogues")
}

/// Runs the binary; (exit code, stdout, stderr).
fn run(args: &[&str], dir: Option<&Path>) -> (i32, String, String) {
    let mut cmd = bin();
    cmd.args(args);
    if let Some(d) = dir {
        cmd.arg("--catalogue").arg(d);
    }
    let out = cmd.output().expect("binary runs");
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// A one-line error with exit code 2 that contains every one of `needles`.
fn assert_usage_error(result: (i32, String, String), needles: &[&str]) {
    let (code, _, err) = result;
    assert_eq!(code, 2, "{err}");
    assert_eq!(err.trim_end().lines().count(), 1, "one line: {err}");
    for n in needles {
        assert!(err.contains(n), "'{n}' in: {err}");
    }
}

fn copy_shipped(into: &Path, files: &[&str]) {
    std::fs::create_dir_all(into).unwrap();
    for f in files {
        std::fs::copy(shipped_dir().join(f), into.join(f)).unwrap();
    }
}

#[test]
fn charged_runs_get_their_own_file_and_query_finds_them_by_charge() {
    let dir = scratch("charge");
    copy_shipped(&dir, &["fullerene-c80-ipr.cgr"]);
    let neutral = std::fs::read(dir.join("fullerene-c80-ipr.cgr")).unwrap();
    let d = dir.display().to_string();
    // Before the run: the message names the exact command that builds the charged list.
    assert_usage_error(
        run(
            &["query", "--atoms", "80", "--ipr", "--charge", "-6"],
            Some(&dir),
        ),
        &[&format!(
            "cagerank enumerate 80 --ipr --charge -6 --catalogue {d}"
        )],
    );
    let (code, out, err) = run(
        &["enumerate", "80", "--ipr", "--charge", "-6", "--quiet"],
        Some(&dir),
    );
    assert_eq!(code, 0, "{err}");
    assert!(out.contains("fullerene-c80-ipr-q-6.cgr"), "{out}");
    assert_eq!(
        std::fs::read(dir.join("fullerene-c80-ipr.cgr")).unwrap(),
        neutral
    );
    let (code, out, err) = run(
        &[
            "query", "--atoms", "80", "--ipr", "--charge", "-6", "--top", "1", "--format", "json",
        ],
        Some(&dir),
    );
    assert_eq!(code, 0, "{err}");
    let first: serde_json::Value = serde_json::from_str(out.lines().next().unwrap()).unwrap();
    // C80-Ih (IPR isomer 7) is the cage of Sc3N@C80, closed-shell as C80^6- (Stevenson et al.,
    // Nature 401 (1999) 55, from memory); it ranks first among the anions.
    assert_eq!(first["ipr_number"], 7);
    assert_eq!(first["point_group"], "Ih");
    assert_eq!(first["shell"], "properly-closed");
    // The neutral file still answers neutral queries, with its own ranking.
    let (code, out, _) = run(
        &[
            "query", "--atoms", "80", "--ipr", "--top", "1", "--format", "json",
        ],
        Some(&dir),
    );
    assert_eq!(code, 0);
    assert_ne!(out.lines().next().unwrap(), "");
    // stats shows the charge of each file.
    let (_, out, _) = run(&["stats", "--charge", "-6"], Some(&dir));
    assert!(out.contains("charge -6, 7 isomers"), "{out}");
    let (_, out, _) = run(&["stats"], Some(&dir));
    assert!(
        out.contains("charge 0, 7 isomers") && out.contains("also held: charge -6"),
        "{out}"
    );
    // verify checks the charged file too.
    let (code, out, _) = run(&["verify", &d], None);
    assert_eq!(code, 0, "{out}");
    assert!(out.contains("charge -6"), "{out}");
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn a_copied_data_file_is_refused_by_every_reader() {
    // cp fullerene-c42-all.cgr fullerene-c40-all.cgr; query --atoms 40 once listed 45 C42 cages.
    let dir = scratch("copied");
    copy_shipped(&dir, &["fullerene-c42-all.cgr"]);
    std::fs::copy(
        dir.join("fullerene-c42-all.cgr"),
        dir.join("fullerene-c40-all.cgr"),
    )
    .unwrap();
    assert_usage_error(
        run(&["query", "--atoms", "40"], Some(&dir)),
        &["fullerene-c40-all.cgr", "C42"],
    );
    assert_usage_error(run(&["stats"], Some(&dir)), &["fullerene-c40-all.cgr"]);
    let (code, out, err) = run(&["verify", &dir.display().to_string()], None);
    assert_eq!(code, 2, "{err}");
    assert!(
        out.contains("fullerene-c40-all.cgr: header holds C42"),
        "{out}"
    );
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn impossible_queries_and_bad_patterns_are_one_line_errors() {
    let dir = shipped_dir();
    // An odd size: no fullerene, and the suggestion is a size that has them.
    assert_usage_error(
        run(&["query", "--atoms", "85"], Some(&dir)),
        &["C85", "--atoms 84"],
    );
    for pattern in ["0x1", "abc", "3x10,2x", "x70", "1.5x70", "3x10"] {
        assert_usage_error(
            run(&["query", "--atoms", "70", "--nmr", pattern], Some(&dir)),
            &["13C NMR"],
        );
        assert_usage_error(
            run(
                &["query", "--atoms", "70", "--nmr-merged", pattern],
                Some(&dir),
            ),
            &["13C NMR"],
        );
    }
    let (_, _, err) = run(&["query", "--atoms", "70", "--nmr", "3x10"], Some(&dir));
    assert!(err.contains("30 atoms") && err.contains("70"), "{err}");
    // A missing directory gives the same exit code in every command.
    let nowhere = scratch("nowhere");
    let n = nowhere.display().to_string();
    for args in [
        vec!["query", "--atoms", "60", "--catalogue", &n],
        vec!["stats", "--catalogue", &n],
        vec!["verify", &n],
        vec!["merge", &n, "--into", "/tmp/cagerank-never-written"],
    ] {
        let (code, _, err) = run(&args, None);
        assert_eq!(code, 2, "{args:?}: {err}");
        assert_eq!(err.trim_end().lines().count(), 1, "{err}");
    }
}

#[test]
fn nmr_patterns_are_read_and_printed_as_lines_x_intensity() {
    let dir = shipped_dir();
    // C70-D5h: five lines 10:10:20:20:10 (Taylor et al., Chem. Commun. 1990, 1423, from
    // memory) = 3x10,2x20; it is the only IPR C70.
    let (code, out, err) = run(
        &[
            "query",
            "--atoms",
            "70",
            "--nmr",
            "3x10,2x20",
            "--format",
            "csv",
        ],
        Some(&dir),
    );
    assert_eq!(code, 0, "{err}");
    let rows: Vec<&str> = out.lines().collect();
    assert_eq!(rows.len(), 2, "{out}");
    assert!(
        rows[1].contains(",D5h,") && rows[1].contains("\"3x10,2x20\""),
        "{out}"
    );
    // Two of the three intensity-10 lines on one shift: 1x10,3x20 still finds it.
    let (_, out, _) = run(
        &[
            "query",
            "--atoms",
            "70",
            "--ipr",
            "--nmr-merged",
            "1x10,3x20",
            "--format",
            "csv",
        ],
        Some(&dir),
    );
    assert!(out.contains(",D5h,"), "{out}");
    // C76-D2: 19 lines of intensity 4 (Ettl et al., Nature 353 (1991) 149, from memory).
    let (_, out, _) = run(
        &[
            "query",
            "--atoms",
            "76",
            "--ipr",
            "--nmr-lines",
            "19",
            "--format",
            "csv",
        ],
        Some(&dir),
    );
    assert!(out.contains(",D2,") && out.contains(",19x4,"), "{out}");
    let (_, help, _) = run(&["query", "--help"], None);
    assert!(
        help.contains("LINESxINTENSITY") && help.contains("3x10,2x20"),
        "{help}"
    );
    assert!(!help.to_lowercase().contains("multiplicity"));
}

#[test]
fn stats_lists_sizes_in_numeric_order() {
    let (code, out, _) = run(&["stats"], Some(&shipped_dir()));
    assert_eq!(code, 0);
    let at = |label: &str| {
        out.find(label)
            .unwrap_or_else(|| panic!("{label} in stats"))
    };
    assert!(at("C20 (all") < at("C24 (all") && at("C70 (all") < at("C100 (IPR"));
    assert!(at("C98 (IPR") < at("C100 (IPR"));
}

#[test]
fn a_second_writer_is_told_who_holds_the_catalogue() {
    let dir = scratch("locked");
    let mut first = bin()
        .args([
            "enumerate",
            "64",
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
    // Wait until the first writer holds the lock and has written its details.
    let lock = dir.join("LOCK");
    for _ in 0..100 {
        if std::fs::read_to_string(&lock).is_ok_and(|t| t.contains("pid=")) {
            break;
        }
        std::thread::sleep(Duration::from_millis(20));
    }
    let (code, _, err) = run(&["enumerate", "64", "--quiet"], Some(&dir));
    let still_running = matches!(first.try_wait(), Ok(None));
    let _ = first.kill();
    let _ = first.wait();
    // All C64 on one thread takes several seconds, far longer than the second start.
    assert!(
        still_running,
        "the first writer finished before the second started"
    );
    assert_eq!(code, 1, "{err}");
    assert!(err.contains(&format!("process {}", first.id())), "{err}");
    // The killed writer's LOCK file does not block the next run.
    let (code, _, err) = run(&["enumerate", "24", "--quiet"], Some(&dir));
    assert_eq!(code, 0, "{err}");
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
#[cfg(target_os = "linux")]
fn a_catalogue_that_cannot_be_written_is_called_read_only() {
    // /proc/self refuses new files even to root (procfs); a directory without write permission
    // does so for other users.
    let (code, _, err) = run(
        &["enumerate", "20", "--quiet"],
        Some(Path::new("/proc/self")),
    );
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("read-only") && !err.contains("being written"),
        "{err}"
    );
    use std::os::unix::fs::PermissionsExt;
    let dir = scratch("readonly");
    std::fs::create_dir_all(&dir).unwrap();
    std::fs::set_permissions(&dir, std::fs::Permissions::from_mode(0o555)).unwrap();
    let root = std::fs::write(dir.join("probe"), b"").is_ok();
    if !root {
        assert_usage_error(
            run(&["enumerate", "20", "--quiet"], Some(&dir)),
            &["read-only"],
        );
    }
    std::fs::set_permissions(&dir, std::fs::Permissions::from_mode(0o755)).unwrap();
    let _ = std::fs::remove_dir_all(&dir);
}
