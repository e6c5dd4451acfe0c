//! The `enumerate` and `spiral` commands end to end: outputs and one-line errors.

use std::process::Command;

fn run(args: &[&str]) -> (i32, String, String) {
    let out = Command::new(env!("CARGO_BIN_EXE_cagerank"))
        .args(args)
        .output()
        .expect("binary runs");
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

#[test]
fn count_only_json_per_size() {
    // OEIS A007894: C20 1, C22 0, C24 1, C26 1, C28 2.
    let (code, out, _) = run(&["enumerate", "20..28", "--count-only", "--json", "--quiet"]);
    assert_eq!(code, 0);
    let lines: Vec<&str> = out.lines().collect();
    assert_eq!(lines[0], r#"{"atoms":20,"ipr":false,"isomers":1}"#);
    assert_eq!(lines[1], r#"{"atoms":22,"ipr":false,"isomers":0}"#);
    assert_eq!(lines[4], r#"{"atoms":28,"ipr":false,"isomers":2}"#);
}

#[test]
fn json_isomer_line_for_c60_ih() {
    let (code, out, _) = run(&["enumerate", "60", "--json", "--quiet", "--count-only"]);
    assert_eq!(code, 0);
    assert!(out.contains(r#""isomers":1812"#));
    let (_, out, _) = run(&["enumerate", "60", "--json", "--quiet"]);
    let last = out.lines().last().unwrap();
    let v: serde_json::Value = serde_json::from_str(last).unwrap();
    assert_eq!(v["number"], 1812);
    assert_eq!(v["ipr_number"], 1);
    assert_eq!(v["automorphisms"], 120);
    assert_eq!(
        v["spiral"],
        serde_json::json!([1, 7, 9, 11, 13, 15, 18, 20, 22, 24, 26, 32])
    );
}

#[test]
fn spiral_command_names_the_isomer() {
    let (code, out, _) = run(&["spiral", "1,7,9,11,13,15,18,20,22,24,26,32", "--json"]);
    assert_eq!(code, 0);
    let v: serde_json::Value = serde_json::from_str(out.trim()).unwrap();
    assert_eq!(v["number"], 1812);
}

#[test]
fn bad_input_gives_one_line_and_exit_2() {
    for args in [
        vec!["enumerate", "22"],
        vec!["enumerate", "61"],
        vec!["enumerate", "18"],
        vec!["enumerate", "sixty"],
        vec!["enumerate", "60", "--shard", "0/3"],
        vec!["enumerate", "60", "--all-starts", "--pentagon-starts"],
        vec!["spiral", "1,2,3"],
        vec!["spiral", "1,2,3,4,5,6,7,8,9,10,11,12", "--atoms", "60"],
        vec!["spiral", "1,7,x"],
        // Charges that leave no electron pair or no empty orbital.
        vec!["enumerate", "20", "--charge", "19"],
        vec!["enumerate", "20", "--charge", "-19"],
    ] {
        let (code, out, err) = run(&args);
        assert_eq!(code, 2, "{args:?}: {err}");
        assert!(out.is_empty(), "{args:?}");
        assert!(!err.contains("panicked"), "{args:?}: {err}");
        assert!(!err.trim().is_empty());
    }
}

#[test]
fn beyond_the_checked_sizes_hexagon_starts_are_searched_and_skipping_them_warns() {
    // One shard of thousands keeps this quick; the notes are printed before the search.
    let c100 = ["enumerate", "100", "--count-only", "--shard", "3000/3000"];
    let (code, _, err) = run(&c100);
    assert_eq!(code, 0, "{err}");
    assert!(
        err.contains("note: C100 is searched from hexagon starts too"),
        "{err}"
    );
    let (code, _, err) = run(&[&c100[..], &["--pentagon-starts"]].concat());
    assert_eq!(code, 0, "{err}");
    assert!(
        err.contains("warning: spirals starting on a pentagon"),
        "{err}"
    );
    assert!(!err.contains("note:"), "{err}");
    let (_, _, err) = run(&[&c100[..], &["--quiet"]].concat());
    assert!(!err.contains("note:"), "{err}");
    // Within the checked range nothing is said (pentagon starts find every cage).
    let (_, _, err) = run(&["enumerate", "98", "--count-only", "--shard", "3000/3000"]);
    assert!(err.trim().is_empty(), "{err}");
}

#[test]
fn counts_say_1_isomer_not_1_isomers() {
    // OEIS A007894: one C20 (the dodecahedron), two C28.
    let (code, out, _) = run(&["enumerate", "20", "28", "--count-only", "--quiet"]);
    assert_eq!(code, 0);
    assert_eq!(out, "C20: 1 isomer\nC28: 2 isomers\n");
    // A shard's count says it is a part: the shards of C60 add up to 1812 (OEIS A007894).
    let mut total = 0;
    for k in 1..=3 {
        let shard = format!("{k}/3");
        let (code, out, _) = run(&["enumerate", "60", "--count-only", "--shard", &shard]);
        assert_eq!(code, 0);
        let (label, n) = out.trim().split_once(": ").unwrap();
        assert_eq!(label, format!("C60 (shard {k}/3)"));
        total += n.trim_end_matches(" isomers").parse::<u64>().unwrap();
    }
    assert_eq!(total, 1812);
}

#[test]
fn an_odd_electron_count_is_scored_as_a_doublet() {
    // C82^3- (La@C82's cage, 85 pi electrons): every IPR isomer has a SOMO; the C2v cage,
    // whose levels are all non-degenerate (C2v has only one-dimensional irreducible
    // representations), is an open-shell doublet.
    let (code, out, err) = run(&[
        "enumerate",
        "82",
        "--ipr",
        "--charge",
        "-3",
        "--json",
        "--quiet",
    ]);
    assert_eq!(code, 0, "{err}");
    let rows: Vec<serde_json::Value> = out
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect();
    // OEIS A046880: 9 IPR isomers of C82.
    assert_eq!(rows.len(), 9);
    for r in &rows {
        let (homo, somo, lumo) = (
            r["homo"].as_f64().unwrap(),
            r["somo"].as_f64().expect("odd count has a SOMO"),
            r["lumo"].as_f64().unwrap(),
        );
        assert!(homo >= somo && somo >= lumo, "{r}");
        assert!((r["gap"].as_f64().unwrap() - (somo - lumo)).abs() < 1e-12);
    }
    let c2v = rows
        .iter()
        .find(|r| r["point_group"] == "C2v")
        .expect("a C2v cage");
    assert_eq!(c2v["shell"], "open-doublet");
    // Neutral output keeps its keys: no SOMO.
    let (_, out, _) = run(&["enumerate", "82", "--ipr", "--json", "--quiet"]);
    assert!(!out.contains("somo"));
}

/// Runs the binary, killing it and failing the test if it has not finished within `seconds`
/// (the requests below once never finished).
fn run_within(args: &[&str], seconds: u64) -> (i32, String, String) {
    use std::io::Read;
    use std::process::Stdio;
    use std::time::{Duration, Instant};
    let mut child = Command::new(env!("CARGO_BIN_EXE_cagerank"))
        .args(args)
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("binary runs");
    let (mut out, mut err) = (child.stdout.take().unwrap(), child.stderr.take().unwrap());
    let reader = std::thread::spawn(move || {
        let mut text = String::new();
        out.read_to_string(&mut text).unwrap();
        text
    });
    let err_reader = std::thread::spawn(move || {
        let mut text = String::new();
        err.read_to_string(&mut text).unwrap();
        text
    });
    let deadline = Instant::now() + Duration::from_secs(seconds);
    let status = loop {
        if let Some(status) = child.try_wait().unwrap() {
            break status;
        }
        if Instant::now() > deadline {
            child.kill().unwrap();
            child.wait().unwrap();
            panic!("{args:?} did not finish within {seconds} s");
        }
        std::thread::sleep(Duration::from_millis(50));
    };
    (
        status.code().unwrap_or(-1),
        reader.join().unwrap(),
        err_reader.join().unwrap(),
    )
}

/// The first line of stderr that contains `needle`, read while the command runs; the command
/// is killed then (or after `seconds`), so a run of years is tested by its first lines.
fn first_stderr_line(args: &[&str], needle: &str, seconds: u64) -> Option<String> {
    use std::io::{BufRead, BufReader};
    use std::process::Stdio;
    use std::sync::mpsc;
    use std::time::Duration;
    let mut child = Command::new(env!("CARGO_BIN_EXE_cagerank"))
        .args(args)
        .stdout(Stdio::null())
        .stderr(Stdio::piped())
        .spawn()
        .expect("binary runs");
    let err = child.stderr.take().unwrap();
    let (tx, rx) = mpsc::channel();
    let needle = needle.to_string();
    std::thread::spawn(move || {
        for line in BufReader::new(err).lines() {
            let Ok(line) = line else { break };
            if line.contains(&needle) {
                let _ = tx.send(line);
                return;
            }
        }
    });
    let found = rx.recv_timeout(Duration::from_secs(seconds)).ok();
    // The run may have ended by itself (e.g. crashed); killing a finished child is harmless.
    let _ = child.kill();
    child.wait().unwrap();
    found
}

#[test]
fn thread_counts_beyond_the_machine_are_capped_with_a_note() {
    // `--threads 100000` never finished: it spent its time starting threads. Capped, it
    // counts C60 as usual: 1812 isomers (OEIS A007894).
    let (code, out, err) = run_within(
        &["enumerate", "60", "--count-only", "--threads", "100000"],
        60,
    );
    assert_eq!(code, 0, "{err}");
    assert_eq!(out, "C60: 1812 isomers\n");
    assert_eq!(err.lines().count(), 1, "{err}");
    assert!(err.contains("note: --threads 100000 capped to"), "{err}");
    // Output does not depend on the thread count, capped or not.
    let (_, listed, _) = run_within(&["enumerate", "40", "--threads", "100000", "--quiet"], 60);
    let (_, one, _) = run(&["enumerate", "40", "--threads", "1", "--quiet"]);
    assert_eq!(listed, one);
    // --quiet hides the note.
    let (_, _, err) = run_within(&["enumerate", "20", "--threads", "100000", "--quiet"], 60);
    assert!(err.is_empty(), "{err}");
}

#[test]
fn absurd_requests_say_how_long_and_how_much_memory_before_starting() {
    // All C100000 would take far longer than anyone waits (isomer counts grow as n^9,
    // Thurston 1998, from memory); it once overflowed the stack and aborted after 4.7 GB.
    // Now the note comes first and the count runs on in bounded memory.
    let line = first_stderr_line(
        &["enumerate", "100000", "--count-only"],
        "note: C100000",
        30,
    )
    .expect("an estimate is printed before the run");
    assert!(line.contains("isomers (modelled count)"), "{line}");
    assert!(line.contains("years"), "{line}");
    assert!(line.contains("GB of memory"), "{line}");
    // IPR C200: 15,655,672 isomers (OEIS A046880, from memory): days, with hexagon starts.
    let line = first_stderr_line(&["enumerate", "200", "--ipr"], "note: C200:", 30)
        .expect("an estimate is printed before the run");
    assert!(
        line.contains("IPR isomers") && line.contains("days"),
        "{line}"
    );
    // Published counts are named as such: all C100 has 285,914 isomers (OEIS A007894).
    let line = first_stderr_line(&["enumerate", "100", "--count-only"], "note: C100:", 30)
        .expect("an estimate is printed before the run");
    assert!(line.contains("285,914 isomers (published count)"), "{line}");
    // --quiet hides it; a short run has none.
    assert!(
        first_stderr_line(&["enumerate", "150", "--count-only", "--quiet"], "note", 3).is_none()
    );
    let (code, _, err) = run(&["enumerate", "60", "--count-only"]);
    assert_eq!(code, 0);
    assert!(err.is_empty(), "{err}");
}

#[test]
fn the_first_isomer_of_c1000_is_found_in_seconds() {
    // C1000:all-1 lies in a unit whose whole list would never finish; the lookup stops at the
    // isomer it needs. For sizes divisible by 10 the first isomer is the (5,0) tube capped by
    // two half dodecahedra, pentagons 1-6 and the last six faces, as the complete lists of
    // C30-C70 show (their counts match OEIS A007894, tests/enumerate.rs); C1000 has
    // 1000/2 + 2 = 502 faces (Euler's formula).
    let (code, out, err) = run_within(&["show", "C1000:1", "--json"], 120);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(out.trim()).unwrap();
    assert_eq!(
        v["spiral"],
        serde_json::json!([1, 2, 3, 4, 5, 6, 497, 498, 499, 500, 501, 502])
    );
}

#[test]
fn text_listing_is_a_table_under_show_headings_with_units() {
    let (code, out, err) = run(&["enumerate", "28", "--quiet"]);
    assert_eq!(code, 0, "{err}");
    let lines: Vec<&str> = out.lines().collect();
    // Title, group headings, column labels, then one row per isomer: 2 for C28 (OEIS A007894).
    assert_eq!(lines.len(), 3 + 2, "{out}");
    assert!(lines[0].starts_with("C28 complete list"), "{out}");
    for heading in [
        "identity",
        "topology",
        "electronic structure (Hückel)",
        "symmetry",
    ] {
        assert!(lines[1].contains(heading), "{heading}: {out}");
    }
    for label in [
        "ID",
        "pentagon adj.",
        "gap (|beta|)",
        "shell",
        "point group",
    ] {
        assert!(lines[2].contains(label), "{label}: {out}");
    }
    // No IPR cage has 28 atoms (OEIS A046880), so there is no IPR-ID column.
    assert!(!lines[2].contains("IPR ID"), "{out}");
    // Columns line up: every row's spiral starts where its label does.
    let at = lines[2].find("canonical spiral").unwrap();
    for row in &lines[3..] {
        let (before, spiral) = row.split_at(at);
        assert!(
            before.ends_with("  ") && spiral.starts_with("1 2 3 "),
            "{out}"
        );
    }
    // Hückel's C28 (Td) has an open shell (a partly filled t2 level; Fowler & Manolopoulos,
    // An Atlas of Fullerenes, from memory).
    let td = lines[3..]
        .iter()
        .find(|r| r.contains(" Td "))
        .expect("a Td row");
    assert!(td.contains(" open "), "{td}");
    // A size with IPR cages gets both IDs, and --json keeps its keys (tests above).
    let (_, out, _) = run(&["enumerate", "70", "--ipr", "--quiet"]);
    assert!(
        out.lines().nth(3).unwrap().starts_with("C70:IPR-1 "),
        "{out}"
    );
}

#[test]
fn cages_too_large_to_score_are_refused_before_any_work() {
    // A dense Hückel spectrum of C100000 needs 8 * 1e10 bytes = 80 GB (n^2 doubles; common
    // practice, no source); show used to search for the isomer and then abort on allocation.
    for args in [
        vec!["show", "C100000:1"],
        vec!["enumerate", "5000", "--quiet"],
    ] {
        let (code, out, err) = run(&args);
        assert_eq!(code, 2, "{args:?}: {err}");
        assert!(out.is_empty(), "{args:?}");
        assert_eq!(err.trim().lines().count(), 1, "{args:?}: {err}");
        assert!(err.contains("too large to score"), "{args:?}: {err}");
    }
    // Counting needs no spectrum, so it is not refused (the run is cut short by its shard).
    let (code, _, err) = run(&[
        "enumerate",
        "5000",
        "--count-only",
        "--quiet",
        "--shard",
        "1/100000",
    ]);
    assert_eq!(code, 0, "{err}");
}

#[test]
fn other_commands_cap_threads_and_count_in_the_singular() {
    // One addend on C60: all 60 atoms are equivalent under Ih, so exactly one pattern (a single
    // orbit; Burnside's lemma).
    let (code, out, err) = run(&["derive", "C60:IPR-1", "--add", "1", "--count-only"]);
    assert_eq!(code, 0, "{err}");
    assert!(out.contains(": 1 pattern "), "{out}");
    // A query for an odd size suggests a size that has fullerenes (none has 22 atoms: Grünbaum
    // & Motzkin 1963), not the size below.
    let (code, _, err) = run(&["query", "--atoms", "23"]);
    assert_eq!(code, 2);
    assert!(
        err.contains("--atoms 24") && !err.contains("--atoms 22"),
        "{err}"
    );
    // screen --threads 100000 spent its time starting threads; capped, C20 takes well under a
    // second (common practice, no source: the limit only catches a hang).
    let dir = std::env::temp_dir().join(format!("cagerank-screen-cap-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let shipped = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/catalogues/fullerene-c20-all.cgr"
    );
    std::fs::copy(shipped, dir.join("fullerene-c20-all.cgr")).unwrap();
    let catalogue = dir.to_str().unwrap();
    let (code, out, err) = run_within(
        &[
            "screen",
            "--atoms",
            "20",
            "--catalogue",
            catalogue,
            "--threads",
            "100000",
        ],
        60,
    );
    assert_eq!(code, 0, "{err}");
    assert!(err.contains("note: --threads 100000 capped to"), "{err}");
    assert!(out.contains("C20:all-1"), "{out}");
    let _ = std::fs::remove_dir_all(&dir);
}
