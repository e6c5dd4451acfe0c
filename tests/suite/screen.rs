//! The two-stage screen through the library and the binary: candidates, stored energies that
//! survive kills and reruns, charges kept apart, bytes independent of the thread count.

use cagerank::cage::FaceSet;
use cagerank::energy::Settings;
use cagerank::screen::{self, Candidates, ScreenSpec};
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_cagerank"))
}

fn shipped() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("catalogues")
}

/// A scratch catalogue holding copies of some shipped data files.
fn scratch(name: &str, files: &[&str]) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("cagerank-screen-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    for f in files {
        std::fs::copy(shipped().join(f), dir.join(f)).unwrap();
    }
    dir
}

fn screen(dir: &Path, args: &[&str]) -> Output {
    bin()
        .args(["screen", "--quiet", "--catalogue"])
        .arg(dir)
        .args(args)
        .output()
        .expect("binary runs")
}

fn text(out: &Output) -> String {
    format!(
        "{}{}",
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    )
}

fn spec(atoms: u32, ipr: bool, charge: i32) -> ScreenSpec {
    ScreenSpec {
        face_set: FaceSet::Fullerene,
        atoms,
        ipr,
        charge,
        candidates: Candidates::Margin {
            margin: None,
            max: screen::DEFAULT_CANDIDATES,
        },
        settings: Settings::default(),
    }
}

// Stevenson et al., Nature 408 (2000) 427: the cage of Sc3N@C68 is a D3 C68 with three pairs of
// adjacent pentagons; from memory: its complete-list number is 6140 (Atlas numbering). The
// catalogue's own descriptors confirm D3 and three adjacencies below, so the number is checked
// against two facts from the paper, not only memory.
#[test]
fn the_default_ion_margin_admits_the_cage_of_sc3n_c68() {
    let dir = shipped();
    let candidates = screen::select(&dir, &spec(68, false, -6)).unwrap();
    let cage = candidates
        .iter()
        .find(|c| c.number == 6140)
        .expect("C68:6140 is a candidate for C68^6-");
    assert_eq!(cage.record.point_group.name(), "D3");
    assert_eq!(cage.record.pentagon_adjacencies, 3);
    // The neutral margin, one above the fewest (two), would still admit three, but a neutral
    // screen orders by the neutral cage's Hückel values; the ion's must differ from them.
    assert!(candidates.len() <= screen::DEFAULT_CANDIDATES);
}

#[test]
fn reruns_redo_nothing_and_bytes_do_not_depend_on_threads() {
    let file = "fullerene-c76-ipr.cgr";
    let (one, two) = (scratch("threads1", &[file]), scratch("threads2", &[file]));
    let a = screen(&one, &["--atoms", "76", "--ipr", "--threads", "1"]);
    let b = screen(&two, &["--atoms", "76", "--ipr", "--threads", "2"]);
    assert!(
        a.status.success() && b.status.success(),
        "{}{}",
        text(&a),
        text(&b)
    );
    let energies = "fullerene-c76-ipr.energies";
    assert_eq!(
        std::fs::read(one.join(energies)).unwrap(),
        std::fs::read(two.join(energies)).unwrap()
    );
    assert_eq!(a.stdout, b.stdout);
    let again = bin()
        .args(["screen", "--atoms", "76", "--ipr", "--catalogue"])
        .arg(&one)
        .output()
        .unwrap();
    assert!(
        text(&again).contains("0 relaxed now, 2 already stored"),
        "{}",
        text(&again)
    );
    assert_eq!(again.stdout, a.stdout);
}

#[test]
fn json_lines_carry_the_documented_keys_and_charges_coexist() {
    let dir = scratch("charges", &["fullerene-c76-ipr.cgr"]);
    let neutral = screen(&dir, &["--atoms", "76", "--ipr", "--format", "json"]);
    let anion = screen(
        &dir,
        &[
            "--atoms", "76", "--ipr", "--charge", "-6", "--format", "json",
        ],
    );
    assert!(neutral.status.success() && anion.status.success());
    for (out, charge) in [(&neutral, 0), (&anion, -6)] {
        let lines: Vec<serde_json::Value> = String::from_utf8_lossy(&out.stdout)
            .lines()
            .map(|l| serde_json::from_str(l).unwrap())
            .collect();
        assert_eq!(lines.len(), 2);
        for key in [
            "atoms",
            "ipr",
            "number",
            "ipr_number",
            "charge",
            "point_group",
            "energy_ev",
            "relative_energy_kj",
            "tb_gap_ev",
            "max_force",
            "rank",
        ] {
            assert!(lines[0].get(key).is_some(), "{key} missing: {}", lines[0]);
        }
        assert_eq!(lines[0]["charge"], charge);
        assert_eq!(lines[0]["rank"], 1);
        assert_eq!(lines[0]["relative_energy_kj"], 0.0);
    }
    assert!(dir.join("fullerene-c76-ipr.energies").exists());
    assert!(dir.join("fullerene-c76-ipr-q-6.energies").exists());
    let e0: serde_json::Value = serde_json::from_str(
        String::from_utf8_lossy(&neutral.stdout)
            .lines()
            .next()
            .unwrap(),
    )
    .unwrap();
    let e6: serde_json::Value = serde_json::from_str(
        String::from_utf8_lossy(&anion.stdout)
            .lines()
            .next()
            .unwrap(),
    )
    .unwrap();
    assert_ne!(e0["energy_ev"], e6["energy_ev"]);
}

#[test]
fn bad_requests_get_one_line_and_exit_code_2() {
    let dir = scratch("bad", &["fullerene-c76-ipr.cgr"]);
    for args in [
        // 4n - Q valence electrons: 304 - 400 < 0.
        &["--atoms", "76", "--ipr", "--charge", "400"][..],
        &["--atoms", "78", "--ipr"][..],
        &["--atoms", "76", "--ipr", "--top", "0"][..],
        &["--atoms", "76", "--ipr", "--max-force", "NaN"][..],
        &["--atoms", "76", "--ipr", "--candidates", "0"][..],
    ] {
        let out = screen(&dir, args);
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{args:?}: {err}");
        assert_eq!(err.trim_end().lines().count(), 1, "{args:?}: {err}");
    }
    assert!(!dir.join("fullerene-c76-ipr.energies").exists());
}

/// Screens an IPR list of the shipped catalogue (copied) and returns (ID, point group) by rank.
fn ranking(atoms: u32, charge: i32) -> Vec<(String, String)> {
    let file = format!("fullerene-c{atoms}-ipr.cgr");
    let dir = scratch(&format!("rank{atoms}q{charge}"), &[&file]);
    let out = screen(
        &dir,
        &[
            "--atoms",
            &atoms.to_string(),
            "--ipr",
            "--charge",
            &charge.to_string(),
            "--format",
            "json",
        ],
    );
    assert!(out.status.success(), "{}", text(&out));
    let _ = std::fs::remove_dir_all(&dir);
    String::from_utf8_lossy(&out.stdout)
        .lines()
        .map(|l| {
            let v: serde_json::Value = serde_json::from_str(l).unwrap();
            (
                v["id"].as_str().unwrap().to_string(),
                v["point_group"].as_str().unwrap().to_string(),
            )
        })
        .collect()
}

fn pair(id: &str, group: &str) -> (String, String) {
    (id.to_string(), group.to_string())
}

// The two major isomers of C84 isolated in experiment are D2 (IPR 22) and D2d (IPR 23), about
// 2:1 (from memory: Kikuchi et al., Nature 357 (1992) 142; Manolopoulos et al., J. Chem. Soc.
// Faraday Trans. 88 (1992) 3117). Graph descriptors put them 4th and 5th; the energy must not.
#[test]
fn energies_put_the_two_isolated_c84_isomers_first() {
    let ranked = ranking(84, 0);
    assert_eq!(ranked.len(), 24);
    assert_eq!(
        ranked[..2],
        [pair("C84:IPR-22", "D2"), pair("C84:IPR-23", "D2d")]
    );
}

// Trimetallic nitride cages M3N@C80 are made as the Ih isomer (IPR 7, major) and the D5h
// isomer (IPR 6, minor), modelled as C80^6- (from memory: Stevenson et al., Nature 401 (1999)
// 55 for Ih Sc3N@C80; Cai et al., J. Am. Chem. Soc. 126 (2004) 11858 for D5h).
#[test]
fn the_c80_hexaanion_ranks_ih_then_d5h_as_trimetallic_nitrides_are_made() {
    let ranked = ranking(80, -6);
    assert_eq!(
        ranked[..2],
        [pair("C80:IPR-7", "Ih"), pair("C80:IPR-6", "D5h")]
    );
}

// Isomers isolated as empty cages: C76 D2 (Ettl, Chao, Diederich, Whetten, Nature 353 (1991)
// 149), C82 C2 (IPR 3; from memory: Kikuchi et al., Nature 357 (1992) 142), C86 C2 (IPR 17;
// from memory: Miyake et al., J. Phys. Chem. A 104 (2000) 3680); Sc3N@C78 has the D3h (IPR 5)
// cage (from memory: Olmstead et al., Angew. Chem. Int. Ed. 40 (2001) 1223). About a minute.
#[test]
#[ignore = "relaxes 35 cages, about 40 s on 2 cores"]
fn energies_put_other_isolated_isomers_first() {
    assert_eq!(ranking(76, 0)[0], pair("C76:IPR-1", "D2"));
    assert_eq!(ranking(82, 0)[0], pair("C82:IPR-3", "C2"));
    assert_eq!(ranking(86, 0)[0], pair("C86:IPR-17", "C2"));
    assert_eq!(ranking(78, -6)[0], pair("C78:IPR-5", "D3h"));
}

// What a screen stores is read back everywhere: `query --rank-by relative_energy_kj` orders by
// it, `show` prints it, and `export` writes the tight-binding geometry and says so, for the
// charge asked and not for another.
#[test]
fn stored_energies_reach_query_show_and_export() {
    let dir = scratch("readers", &["fullerene-c76-ipr.cgr"]);
    let screened = screen(
        &dir,
        &[
            "--atoms", "76", "--ipr", "--charge", "-2", "--format", "json",
        ],
    );
    assert!(screened.status.success(), "{}", text(&screened));
    let screen_ids: Vec<String> = String::from_utf8_lossy(&screened.stdout)
        .lines()
        .map(|l| serde_json::from_str::<serde_json::Value>(l).unwrap()["id"].to_string())
        .collect();
    let run = |args: &[&str]| {
        bin()
            .args(args)
            .arg("--catalogue")
            .arg(&dir)
            .output()
            .expect("binary runs")
    };
    // Descriptors of the ion come from its own catalogue file, refused until it is built.
    let refused = run(&["query", "--atoms", "76", "--ipr", "--charge", "-2"]);
    assert_eq!(refused.status.code(), Some(2), "{}", text(&refused));
    let built = run(&["enumerate", "76", "--ipr", "--charge", "-2", "--quiet"]);
    assert!(built.status.success(), "{}", text(&built));
    let query = run(&[
        "query",
        "--atoms",
        "76",
        "--ipr",
        "--charge",
        "-2",
        "--rank-by",
        "relative_energy_kj",
        "--format",
        "json",
    ]);
    assert!(query.status.success(), "{}", text(&query));
    let query_ids: Vec<String> = String::from_utf8_lossy(&query.stdout)
        .lines()
        .map(|l| {
            let v: serde_json::Value = serde_json::from_str(l).unwrap();
            assert!(v["relative_energy_kj"].is_number(), "{v}");
            format!("\"C76:IPR-{}\"", v["ipr_number"])
        })
        .collect();
    assert_eq!(query_ids, screen_ids);
    // The neutral cage has no stored energies: ranking by them is refused, not faked.
    let neutral = run(&[
        "query",
        "--atoms",
        "76",
        "--ipr",
        "--rank-by",
        "relative_energy_kj",
    ]);
    assert_eq!(neutral.status.code(), Some(2), "{}", text(&neutral));

    let show = run(&["show", "C76:IPR-1", "--charge", "-2"]);
    let shown = String::from_utf8_lossy(&show.stdout);
    assert!(show.status.success(), "{}", text(&show));
    assert!(shown.contains("energies (tight binding"), "{shown}");
    assert!(shown.contains("relative (kJ/mol)"), "{shown}");
    let show_neutral = run(&["show", "C76:IPR-1"]);
    assert!(String::from_utf8_lossy(&show_neutral.stdout).contains("not computed"));

    let out = dir.join("export");
    let export = run(&[
        "export",
        "--atoms",
        "76",
        "--ipr",
        "--top",
        "1",
        "--charge",
        "-2",
        "--format",
        "xyz",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(export.status.success(), "{}", text(&export));
    let first = screen_ids[0].trim_matches('"').replace(':', "_");
    let xyz = std::fs::read_to_string(out.join(format!("{first}.xyz"))).unwrap();
    let comment = xyz.lines().nth(1).unwrap();
    assert!(comment.contains("geometry=tight_binding"), "{comment}");
    assert!(comment.contains("charge=-2"), "{comment}");
    assert!(comment.contains("relative_energy_kj=0.000"), "{comment}");
    let manifest = std::fs::read_to_string(out.join("manifest.csv")).unwrap();
    assert!(manifest.contains("tight_binding"), "{manifest}");
}
