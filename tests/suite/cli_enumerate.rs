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
