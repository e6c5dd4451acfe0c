//! Round trips of the export formats: our own XYZ and SDF read back, Kekulé bond orders forming
//! a perfect matching, finite coordinates, the JSON record and manifest, file names that say
//! their list, no silent overwrites, the XYZ comment as key=value pairs, numeric CSV columns,
//! and the quantum-chemistry input decks read back by their published layouts.

use cagerank::enumerate::{find_by_number, Spec};
use cagerank::export::deck::{self, Code};
use cagerank::export::{
    self, sdf, xyz, Entry, ExportError, Format, Numbers, WriteOptions, CAUTION,
};
use cagerank::id::IsomerId;
use cagerank::spiral::Spiral;
use std::collections::{BTreeMap, BTreeSet};
use std::path::PathBuf;

// from memory: Fowler & Manolopoulos, An Atlas of Fullerenes (1995): C60-Ih and C70-D5h spirals,
// C60:1812 and C70:8149 in the complete lists, each the first (only) IPR isomer of its size.
const C60: [u64; 12] = [1, 7, 9, 11, 13, 15, 18, 20, 22, 24, 26, 32];
const C70: [u64; 12] = [1, 7, 9, 11, 13, 15, 27, 29, 31, 33, 35, 37];

fn entry(id: &str, atoms: u64, pentagons: &[u64], numbers: Numbers) -> Entry {
    let spiral = Spiral::from_pentagon_indices(atoms, pentagons).unwrap();
    let id = IsomerId::parse(id, None).unwrap();
    export::prepare(id, &spiral, numbers, 0).unwrap()
}

fn numbers(number: u64, ipr_number: Option<u64>) -> Numbers {
    Numbers {
        number: Some(number),
        ipr_number,
    }
}

fn c60() -> Entry {
    entry("C60:all-1812", 60, &C60, numbers(1812, Some(1)))
}

fn c70() -> Entry {
    entry("C70:IPR-1", 70, &C70, numbers(8149, Some(1)))
}

/// C60:all-1, the first C60 in spiral order: not IPR, so it has no IPR number.
fn c60_first() -> Entry {
    let iso = find_by_number(&Spec::fullerene(60, false).unwrap(), 1).unwrap();
    let id = IsomerId::parse("C60:all-1", None).unwrap();
    export::prepare(id, &iso.spiral, numbers(1, None), 0).unwrap()
}

fn temp_dir(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("cagerank-export-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

/// Splits an extended-XYZ comment into key=value pairs the way the format describes them
/// (from memory: ASE's extxyz reader, ase.io.extxyz.key_val_str_to_dict: pairs separated by
/// spaces, values with spaces in double quotes; a bare word would be a boolean flag, which we
/// never write). `None` if a token is not a pair.
fn key_values(line: &str) -> Option<BTreeMap<String, String>> {
    let mut out = BTreeMap::new();
    let mut rest = line.trim();
    while !rest.is_empty() {
        let eq = rest.find('=')?;
        let key = &rest[..eq];
        if key.is_empty() || key.contains([' ', '"']) {
            return None;
        }
        let after = &rest[eq + 1..];
        let (value, tail) = if let Some(quoted) = after.strip_prefix('"') {
            let end = quoted.find('"')?;
            (&quoted[..end], &quoted[end + 1..])
        } else {
            let end = after.find(' ').unwrap_or(after.len());
            (&after[..end], &after[end..])
        };
        if out.insert(key.to_string(), value.to_string()).is_some() {
            return None;
        }
        rest = tail.trim_start();
    }
    Some(out)
}

#[test]
fn xyz_round_trip_keeps_coordinates_and_a_key_value_comment() {
    let e = c60();
    let mut out = Vec::new();
    xyz::write(&mut out, &export::comment_line(&e), &e.geometry.coords).unwrap();
    let text = String::from_utf8(out).unwrap();
    assert!(text.starts_with("60\n"));
    let back = xyz::parse(&text).unwrap();
    let pairs = key_values(&back.comment).expect("every token is key=value");
    let get = |k: &str| pairs.get(k).map(String::as_str);
    assert_eq!(get("id"), Some("C60:all-1812"));
    assert_eq!(get("list"), Some("all"));
    assert_eq!(get("number"), Some("1812"));
    assert_eq!(get("ipr_number"), Some("1"));
    assert_eq!(get("point_group"), Some("Ih"));
    assert_eq!(get("charge"), Some("0"));
    // 360 electrons: a closed-shell singlet.
    assert_eq!(get("multiplicity"), Some("1"));
    assert_eq!(get("spiral"), Some("1 7 9 11 13 15 18 20 22 24 26 32"));
    let known: BTreeSet<&str> = [
        "id",
        "list",
        "number",
        "ipr_number",
        "point_group",
        "charge",
        "multiplicity",
        "spiral",
        "geometry",
    ]
    .into();
    assert!(
        pairs.keys().all(|k| known.contains(k.as_str())),
        "{pairs:?}"
    );
    assert!(back.comment.len() < 200, "the comment stays short");
    assert_eq!(back.coords.len(), 60);
    for (a, b) in back.coords.iter().zip(&e.geometry.coords) {
        for k in 0..3 {
            assert!(a[k].is_finite() && (a[k] - b[k]).abs() < 1e-7);
        }
    }
    // A cage without an IPR number leaves the key out rather than writing a placeholder.
    let first = key_values(&export::comment_line(&c60_first())).unwrap();
    assert!(!first.contains_key("ipr_number"));
    assert_eq!(first.get("number").map(String::as_str), Some("1"));
}

#[test]
fn sdf_round_trip_has_kekule_bonds_and_valence_four() {
    let entries = [c60(), c70()];
    let mut out = Vec::new();
    for e in &entries {
        export::write_sdf(&mut out, e).unwrap();
    }
    let text = String::from_utf8(out).unwrap();
    // CTfile formats (MDL): one `$$$$` line closes each record of a multi-structure file.
    assert_eq!(text.lines().filter(|l| *l == "$$$$").count(), 2);
    let records = sdf::parse(&text).expect("our own SDF parses");
    assert_eq!(records.len(), 2);
    for (r, e) in records.iter().zip(&entries) {
        assert_eq!(r.name, e.id.to_string());
        assert_eq!(r.coords.len(), e.cage.atoms());
        for (a, b) in r.coords.iter().zip(&e.geometry.coords) {
            assert!((0..3).all(|k| a[k].is_finite() && (a[k] - b[k]).abs() < 1e-4));
        }
        let bonds: BTreeSet<[u32; 2]> = r
            .bonds
            .iter()
            .map(|&(a, b, _)| [a.min(b), a.max(b)])
            .collect();
        assert_eq!(bonds, e.cage.edges().iter().copied().collect());
        // A Kekulé structure is a perfect matching: every atom has exactly one double bond, so
        // its valence is 1 + 1 + 2 = 4 (domain notes, section 3).
        let mut valence = vec![0u32; r.coords.len()];
        let mut doubles = vec![0u32; r.coords.len()];
        for &(a, b, order) in &r.bonds {
            assert!(order == 1 || order == 2);
            for v in [a, b] {
                valence[v as usize] += u32::from(order);
                doubles[v as usize] += u32::from(order == 2);
            }
        }
        assert!(valence.iter().all(|&v| v == 4) && doubles.iter().all(|&d| d == 1));
        let field = |name: &str| {
            r.fields
                .iter()
                .find(|(k, _)| k == name)
                .map(|(_, v)| v.clone())
        };
        assert_eq!(
            field("point_group").as_deref(),
            Some(e.record.descriptors.point_group.name().as_str())
        );
        assert_eq!(field("caution").as_deref(), Some(CAUTION));
        assert_eq!(field("kekule"), Some(e.record.descriptors.kekule.clone()));
        assert_eq!(field("list").as_deref(), Some(e.id.list.tag()));
    }
    assert_eq!(records[1].name, "C70:IPR-1");
}

#[test]
fn json_record_carries_the_id_both_numbers_and_finite_coordinates() {
    let e = c60();
    let mut out = Vec::new();
    export::json::write(&mut out, &e).unwrap();
    let v: serde_json::Value = serde_json::from_slice(&out).unwrap();
    let coords = v["geometry"]["coordinates"].as_array().unwrap();
    assert_eq!(coords.len(), 60);
    assert!(coords
        .iter()
        .flat_map(|c| c.as_array().unwrap())
        .all(|x| x.as_f64().is_some_and(f64::is_finite)));
    assert_eq!(v["id"], "C60:all-1812");
    assert_eq!(v["list"], "all");
    assert_eq!(v["number"], 1812);
    assert_eq!(v["ipr_number"], 1);
    assert_eq!(v["multiplicity"], 1);
    assert_eq!(v["edges"].as_array().unwrap().len(), 90);
    // Klein, Schmalz, Hite & Seitz, JACS 108 (1986) 1301: C60 has 12500 Kekulé structures.
    assert_eq!(v["kekule"], "12500");
    assert_eq!(
        v["geometry"]["kekule_double_bonds"]
            .as_array()
            .unwrap()
            .len(),
        30
    );
    assert_eq!(v["caution"], CAUTION);
}

/// Splits one CSV line (RFC 4180: fields in double quotes may hold commas; `""` is a quote).
fn csv_fields(line: &str) -> Vec<String> {
    let (mut out, mut field, mut quoted) = (Vec::new(), String::new(), false);
    let mut chars = line.chars().peekable();
    while let Some(c) = chars.next() {
        match (c, quoted) {
            ('"', true) if chars.peek() == Some(&'"') => {
                field.push('"');
                chars.next();
            }
            ('"', _) => quoted = !quoted,
            (',', false) => out.push(std::mem::take(&mut field)),
            _ => field.push(c),
        }
    }
    out.push(field);
    out
}

#[test]
fn write_all_names_files_by_list_and_the_manifest_reads_as_numbers() {
    let dir = temp_dir("all");
    let entries = [c60(), c70(), c60_first()];
    let written = export::write_all(
        &entries,
        &[Format::Xyz, Format::Sdf, Format::Json],
        &dir,
        &WriteOptions::default(),
    )
    .unwrap();
    let names: BTreeSet<String> = std::fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().into_string().unwrap())
        .collect();
    let mut expected: BTreeSet<String> = ["shortlist.sdf", "manifest.csv"]
        .iter()
        .map(|s| s.to_string())
        .collect();
    for stem in ["C60_all-1812", "C70_IPR-1", "C60_all-1"] {
        for ext in ["xyz", "sdf", "json"] {
            expected.insert(format!("{stem}.{ext}"));
        }
    }
    assert_eq!(names, expected, "no temp files may be left behind");
    assert_eq!(written.len(), expected.len());
    let manifest = std::fs::read_to_string(dir.join("manifest.csv")).unwrap();
    let rows: Vec<Vec<String>> = manifest.lines().map(csv_fields).collect();
    assert_eq!(rows.len(), 4);
    let header = &rows[0];
    assert_eq!(
        header[..6],
        [
            "id",
            "list",
            "number",
            "ipr_number",
            "spiral",
            "point_group"
        ]
    );
    assert_eq!(
        rows[1][..6],
        [
            "C60:all-1812",
            "all",
            "1812",
            "1",
            "1 7 9 11 13 15 18 20 22 24 26 32",
            "Ih"
        ]
    );
    assert_eq!(rows[2][..4], ["C70:IPR-1", "IPR", "8149", "1"]);
    assert_eq!(rows[3][3], "", "a missing number is an empty cell");
    // Every column that is not text must read as a number (or be empty): what pandas needs to
    // give it a numeric dtype. Text columns are the ones holding words or lists.
    let text: BTreeSet<&str> = [
        "id",
        "list",
        "spiral",
        "point_group",
        "hexagon_neighbours",
        "shell",
        "chiral",
        "nmr",
        "geometry",
        "files",
    ]
    .into();
    for (c, name) in header.iter().enumerate() {
        if text.contains(name.as_str()) {
            continue;
        }
        for row in &rows[1..] {
            let cell = &row[c];
            assert!(
                cell.is_empty() || cell.parse::<f64>().is_ok(),
                "column {name}: '{cell}' is not a number"
            );
        }
    }
    let shortlist = std::fs::read_to_string(dir.join("shortlist.sdf")).unwrap();
    assert_eq!(sdf::parse(&shortlist).unwrap().len(), 3);
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn existing_files_are_never_replaced_without_overwrite() {
    let dir = temp_dir("overwrite");
    let entries = [c60()];
    let formats = [Format::Xyz];
    export::write_all(&entries, &formats, &dir, &WriteOptions::default()).unwrap();
    let path = dir.join("C60_all-1812.xyz");
    std::fs::write(&path, "mine").unwrap();
    let err = export::write_all(&entries, &formats, &dir, &WriteOptions::default()).unwrap_err();
    assert!(matches!(err, ExportError::Exists { .. }), "{err}");
    let message = err.to_string();
    assert!(message.contains("C60_all-1812.xyz") && message.contains("--overwrite"));
    assert!(!message.contains('\n'));
    assert_eq!(std::fs::read_to_string(&path).unwrap(), "mine");
    let replace = WriteOptions {
        overwrite: true,
        method: None,
    };
    export::write_all(&entries, &formats, &dir, &replace).unwrap();
    assert!(std::fs::read_to_string(&path).unwrap().starts_with("60\n"));
    // A manifest of another layout (an older version's) is not mixed with ours: refused before
    // any file is written.
    let other = temp_dir("foreign");
    std::fs::write(other.join("manifest.csv"), "id,spiral,point_group,files\n").unwrap();
    let err = export::write_all(&entries, &formats, &other, &WriteOptions::default()).unwrap_err();
    assert!(matches!(err, ExportError::ForeignManifest { .. }), "{err}");
    assert!(!other.join("C60_all-1812.xyz").exists());
    std::fs::remove_dir_all(&other).unwrap();
    // Two entries with one ID would share every file.
    let err = export::write_all(&[c60(), c60()], &formats, &dir, &replace).unwrap_err();
    assert!(matches!(err, ExportError::SameFile { .. }), "{err}");
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn format_lists_parse_and_reject_unknown_names() {
    assert_eq!(
        Format::parse_list("xyz, SDF,json,orca,Gaussian,xtb,cp2k").unwrap(),
        vec![
            Format::Xyz,
            Format::Sdf,
            Format::Json,
            Format::Deck(Code::Orca),
            Format::Deck(Code::Gaussian),
            Format::Deck(Code::Xtb),
            Format::Deck(Code::Cp2k),
        ]
    );
    assert!(Format::parse_list("pdb").is_err());
    assert!(Format::parse_list("").is_err());
}

#[test]
fn multiplicity_follows_the_electron_count() {
    // 6 electrons per carbon; an even count gives a singlet, an odd one a doublet (2S + 1 with
    // S = 1/2 for one unpaired electron: textbook spin multiplicity).
    assert_eq!(deck::multiplicity(60, 0), 1);
    assert_eq!(deck::multiplicity(60, -1), 2);
    assert_eq!(deck::multiplicity(60, 1), 2);
    assert_eq!(deck::multiplicity(80, -6), 1);
    assert_eq!(deck::multiplicity(70, -3), 2);
}

fn job<'a>(coords: &'a [[f64; 3]], charge: i32, method: &'a str) -> deck::Job<'a> {
    deck::Job {
        stem: "C60_all-1812",
        title: "C60:all-1812 Ih",
        coords,
        elements: &[],
        charge,
        multiplicity: deck::multiplicity(60, charge),
        method,
    }
}

fn atom_line(line: &str) -> Option<[f64; 3]> {
    let mut parts = line.split_whitespace();
    if parts.next()? != "C" {
        return None;
    }
    let mut xyz = [0.0; 3];
    for v in &mut xyz {
        *v = parts.next()?.parse().ok()?;
    }
    parts.next().is_none().then_some(xyz)
}

fn same_coords(read: &[[f64; 3]], written: &[[f64; 3]]) {
    assert_eq!(read.len(), written.len());
    for (a, b) in read.iter().zip(written) {
        assert!((0..3).all(|k| (a[k] - b[k]).abs() < 1e-7));
    }
}

#[test]
fn orca_deck_has_the_keyword_line_and_the_xyz_block() {
    let e = c60();
    let coords = &e.geometry.coords;
    // from memory, ORCA manual ("Input of coordinates"): `! keywords`, then `* xyz charge mult`,
    // one `Element x y z` line per atom, closed by a line with `*`.
    for (charge, mult) in [(0, "1"), (-1, "2")] {
        let text = deck::orca(&job(coords, charge, "B3LYP D3BJ def2-SVP Opt"));
        let lines: Vec<&str> = text.lines().collect();
        assert!(lines.contains(&"! B3LYP D3BJ def2-SVP Opt"));
        let start = lines
            .iter()
            .position(|l| l.starts_with("* xyz"))
            .expect("coordinate block");
        let head: Vec<&str> = lines[start].split_whitespace().collect();
        assert_eq!(head, ["*", "xyz", &charge.to_string(), mult]);
        let end = start
            + 1
            + lines[start + 1..]
                .iter()
                .position(|l| l.trim() == "*")
                .unwrap();
        let atoms: Vec<[f64; 3]> = lines[start + 1..end]
            .iter()
            .map(|l| atom_line(l).unwrap())
            .collect();
        same_coords(&atoms, coords);
    }
}

#[test]
fn gaussian_deck_has_route_title_charge_and_closing_blank_line() {
    let e = c60();
    let coords = &e.geometry.coords;
    // from memory, Gaussian manual ("Input summary"): route (`#` line), blank, title, blank,
    // `charge multiplicity`, atoms, and a blank line ending the molecule specification.
    let text = deck::gaussian(&job(coords, 0, deck::Code::Gaussian.default_method()));
    let lines: Vec<&str> = text.split('\n').collect();
    assert!(lines[0].starts_with("# ") && lines[0].contains("Opt"));
    assert_eq!(lines[1], "");
    assert!(!lines[2].trim().is_empty());
    assert_eq!(lines[3], "");
    assert_eq!(lines[4], "0 1");
    let atoms: Vec<[f64; 3]> = lines[5..65].iter().map(|l| atom_line(l).unwrap()).collect();
    same_coords(&atoms, coords);
    assert_eq!(lines[65], "", "blank line after the atoms");
}

#[test]
fn xtb_deck_sets_charge_and_unpaired_electrons_and_runs_the_xyz() {
    let e = c60();
    // from memory, xtb documentation ("Detailed input"): `$chrg` is the molecular charge,
    // `$spin` the number of unpaired electrons (multiplicity - 1), `$end` closes the input.
    let files = deck::deck(Code::Xtb, &job(&e.geometry.coords, -1, "--gfn 2 --opt"));
    let names: Vec<&str> = files.iter().map(|f| f.name.as_str()).collect();
    assert_eq!(names, ["C60_all-1812.xcontrol", "C60_all-1812.xtb.sh"]);
    assert_eq!(files[0].text, "$chrg -1\n$spin 1\n$end\n");
    let run = files[1].text.lines().last().unwrap();
    assert_eq!(
        run,
        "exec xtb C60_all-1812.xyz --input C60_all-1812.xcontrol --gfn 2 --opt"
    );
    assert!(deck::check_method(Code::Xtb, "--gfn 2; rm -rf x").is_err());
}

#[test]
fn cp2k_deck_is_balanced_and_carries_charge_multiplicity_and_coordinates() {
    let e = c60();
    let coords = &e.geometry.coords;
    // from memory, CP2K input reference: sections open with `&NAME` and close with `&END NAME`;
    // CHARGE and MULTIPLICITY sit in FORCE_EVAL/DFT, UKS is needed for open shells, and
    // `@SET VAR value` defines ${VAR} for the rest of the file.
    let text = deck::cp2k(&job(coords, -1, "PBE DZVP-MOLOPT-SR-GTH GTH-PBE-q4"));
    let mut stack: Vec<String> = Vec::new();
    let mut in_coord = false;
    let mut atoms = Vec::new();
    for line in text.lines().map(str::trim) {
        if let Some(name) = line.strip_prefix("&END") {
            let open = stack.pop().expect("an &END closes an open section");
            let name = name.trim();
            assert!(name.is_empty() || name == open, "&END {name} closes {open}");
            in_coord = false;
        } else if let Some(name) = line.strip_prefix('&') {
            let name = name.split_whitespace().next().unwrap().to_string();
            in_coord = name == "COORD";
            stack.push(name);
        } else if in_coord {
            atoms.push(atom_line(line).unwrap());
        }
    }
    assert!(stack.is_empty(), "unclosed sections: {stack:?}");
    same_coords(&atoms, coords);
    assert!(text.contains("    CHARGE -1\n    MULTIPLICITY 2\n    UKS .TRUE.\n"));
    assert!(text.contains("@SET FUNCTIONAL PBE\n"));
    let neutral = deck::cp2k(&job(coords, 0, "PBE DZVP-MOLOPT-SR-GTH GTH-PBE-q4"));
    assert!(neutral.contains("MULTIPLICITY 1") && !neutral.contains("UKS"));
    assert!(deck::check_method(Code::Cp2k, "PBE only").is_err());
}

use crate::common::cagerank;

#[test]
fn command_line_keeps_the_two_lists_apart_and_refuses_to_overwrite() {
    let dir = temp_dir("cli");
    let out = dir.to_str().unwrap();
    // C70:1 is a C2v cage in the complete list but C70-D5h in the IPR list (the only IPR C70).
    let (code, _, err) = cagerank(&[
        "export", "--ipr", "--ids", "C70:1", "--format", "xyz", "--out", out,
    ]);
    assert_eq!(code, 0, "{err}");
    let (code, _, err) = cagerank(&["export", "--ids", "C70:1", "--format", "xyz", "--out", out]);
    assert_eq!(code, 0, "{err}");
    let ipr = std::fs::read_to_string(dir.join("C70_IPR-1.xyz")).unwrap();
    let all = std::fs::read_to_string(dir.join("C70_all-1.xyz")).unwrap();
    assert!(ipr.contains("id=C70:IPR-1 list=IPR number=8149 ipr_number=1 point_group=D5h"));
    assert!(all.contains("id=C70:all-1 list=all number=1 point_group="));
    // The shared manifest keeps the first export's row and adds the second's.
    let manifest = std::fs::read_to_string(dir.join("manifest.csv")).unwrap();
    let ids: Vec<&str> = manifest
        .lines()
        .skip(1)
        .map(|l| l.split(',').next().unwrap())
        .collect();
    assert_eq!(ids, ["C70:IPR-1", "C70:all-1"]);
    // The same again: refused, one line naming the file and the flag; nothing changed.
    let (code, stdout, err) =
        cagerank(&["export", "--ids", "C70:1", "--format", "xyz", "--out", out]);
    assert_eq!(code, 2, "{err}");
    assert!(stdout.is_empty());
    assert!(
        err.contains("C70_all-1.xyz") && err.contains("--overwrite"),
        "{err}"
    );
    assert_eq!(err.trim().lines().count(), 1, "{err}");
    let (code, _, err) = cagerank(&[
        "export",
        "--ids",
        "C70:1",
        "--format",
        "xyz",
        "--out",
        out,
        "--overwrite",
    ]);
    assert_eq!(code, 0, "{err}");
    // An explicit list is honoured without --ipr; a repeated or equivalent ID is written once.
    let (code, stdout, err) = cagerank(&[
        "export",
        "--ids",
        "C70:IPR-1,C70:ipr-1,C70:all-8149",
        "--format",
        "json",
        "--out",
        out,
    ]);
    assert_eq!(code, 0, "{err}");
    assert_eq!(
        stdout.lines().filter(|l| l.ends_with(".json")).count(),
        1,
        "{stdout}"
    );
    assert!(
        err.contains("more than once") && err.contains("same isomer"),
        "{err}"
    );
    // A list named in the ID that contradicts --ipr is refused.
    let (code, _, err) = cagerank(&["export", "--ipr", "--ids", "C70:all-1", "--out", out]);
    assert_eq!(code, 2, "{err}");
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn command_line_refuses_top_zero_and_a_method_without_one_deck() {
    let dir = temp_dir("refuse");
    let out = dir.to_str().unwrap();
    for args in [
        vec!["export", "--atoms", "60", "--top", "0", "--out", out],
        vec![
            "export", "--ids", "C60:1812", "--method", "HF", "--out", out,
        ],
        vec![
            "export",
            "--ids",
            "C60:1812",
            "--format",
            "orca,gaussian",
            "--method",
            "HF",
            "--out",
            out,
        ],
        vec![
            "export", "--ids", "C60:1812", "--format", "pdb", "--out", out,
        ],
    ] {
        let (code, stdout, err) = cagerank(&args);
        assert_eq!(code, 2, "{args:?}: {err}");
        assert!(stdout.is_empty(), "{args:?}");
        assert_eq!(err.trim().lines().count(), 1, "{args:?}: {err}");
    }
    assert_eq!(
        std::fs::read_dir(&dir).unwrap().count(),
        0,
        "nothing written"
    );
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn command_line_writes_decks_with_the_users_method() {
    let dir = temp_dir("decks");
    let out = dir.to_str().unwrap();
    let (code, stdout, err) = cagerank(&[
        "export",
        "--ids",
        "C60:1812",
        "--format",
        "orca",
        "--method",
        "B3LYP D3BJ def2-SVP Opt",
        "--out",
        out,
    ]);
    assert_eq!(code, 0, "{err}");
    assert!(stdout.contains("C60_all-1812.orca.inp"));
    let orca = std::fs::read_to_string(dir.join("C60_all-1812.orca.inp")).unwrap();
    assert!(orca.contains("\n! B3LYP D3BJ def2-SVP Opt\n") && orca.contains("* xyz 0 1\n"));
    let (code, stdout, err) = cagerank(&[
        "export", "--ids", "C60:1812", "--format", "xtb", "--out", out,
    ]);
    assert_eq!(code, 0, "{err}");
    for name in [
        "C60_all-1812.xyz",
        "C60_all-1812.xcontrol",
        "C60_all-1812.xtb.sh",
    ] {
        assert!(stdout.contains(name), "{stdout}");
    }
    std::fs::remove_dir_all(&dir).unwrap();
}

/// 1,2-C60H2 (pattern 5 of C60:IPR-1+2H, across a 6:6 bond) ready to export.
fn c60h2() -> Entry {
    use cagerank::derivative::{named::Named, Parent, PatternId};
    let spiral = Spiral::from_pentagon_indices(60, &C60).unwrap();
    let parent = Parent::new("C60:IPR-1", &spiral).unwrap();
    let named = Named::new(parent, &PatternId::parse("C60:IPR-1+2H:5").unwrap(), 0).unwrap();
    let id = IsomerId::parse("C60:IPR-1", None).unwrap();
    export::derivative::prepare(id, numbers(1812, Some(1)), &named).unwrap()
}

#[test]
fn derivatives_share_the_manifest_and_shortlist_with_cages() {
    // One directory, one manifest header: the derivative's row sits under the same columns as
    // the cages' (so the file stays one table for pandas), named by its pattern ID, and a later
    // export of the cage alone keeps the derivative's row and record.
    let dir = temp_dir("derivative");
    let formats = [Format::Xyz, Format::Sdf];
    let h2 = c60h2();
    assert_eq!(h2.stem(), "C60_IPR-1+2H-5");
    assert_eq!(h2.atom_count(), 62);
    export::write_all(&[h2, c70()], &formats, &dir, &WriteOptions::default()).unwrap();
    let options = WriteOptions {
        overwrite: true,
        method: None,
    };
    export::write_all(&[c70()], &formats, &dir, &options).unwrap();
    let manifest = std::fs::read_to_string(dir.join("manifest.csv")).unwrap();
    let rows: Vec<Vec<String>> = manifest.lines().map(csv_fields).collect();
    assert_eq!(rows.len(), 3, "{manifest}");
    assert!(rows.iter().all(|r| r.len() == rows[0].len()));
    let h2_row = rows
        .iter()
        .find(|r| r[0] == "C60:IPR-1+2H:5")
        .expect("derivative row kept");
    let column = |name: &str| rows[0].iter().position(|h| h == name).unwrap();
    assert_eq!(h2_row[column("atoms")], "62");
    // C2v: from memory, Henderson & Cahill, Science 259 (1993) 1885.
    assert_eq!(h2_row[column("point_group")], "C2v");
    assert_eq!(h2_row[column("kekule")], "5500");
    assert_eq!(
        h2_row[column("files")],
        "C60_IPR-1+2H-5.xyz C60_IPR-1+2H-5.sdf"
    );
    let shortlist = std::fs::read_to_string(dir.join("shortlist.sdf")).unwrap();
    let records = sdf::parse(&shortlist).unwrap();
    let names: Vec<&str> = records.iter().map(|r| r.name.as_str()).collect();
    assert_eq!(names, ["C60:IPR-1+2H:5", "C70:IPR-1"]);
    assert_eq!(records[0].elements.iter().filter(|e| *e == "H").count(), 2);
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn sdf_charges_and_radicals_round_trip_eight_to_a_line() {
    // CTfile formats: `M  CHG` and `M  RAD` lines hold at most eight (atom, value) pairs; more
    // take further lines. Ten charged atoms and one radical read back as written.
    use cagerank::derivative::structure::Atom;
    let atoms: Vec<Atom> = (0..12)
        .map(|i| Atom {
            element: if i == 11 { "N" } else { "C" },
            position: [i as f64, 0.0, 0.0],
            charge: if i < 10 {
                if i % 2 == 0 {
                    1
                } else {
                    -1
                }
            } else {
                0
            },
            radical: i == 10,
        })
        .collect();
    let mut out = Vec::new();
    sdf::write_molecule(
        &mut out,
        &sdf::MoleculeRecord {
            name: "test",
            comment: "",
            atoms: &atoms,
            bonds: &[([0, 1], 2)],
            fields: &[("kind".to_string(), "N".to_string())],
        },
    )
    .unwrap();
    let text = String::from_utf8(out).unwrap();
    assert_eq!(text.lines().filter(|l| l.starts_with("M  CHG")).count(), 2);
    assert!(text.contains("M  CHG  8   1   1   2  -1"), "{text}");
    assert!(text.contains("M  RAD  1  11   2"), "{text}");
    let r = &sdf::parse(&text).unwrap()[0];
    let charges: Vec<(u32, i32)> = (0..10)
        .map(|i| (i, if i % 2 == 0 { 1 } else { -1 }))
        .collect();
    assert_eq!(r.charges, charges);
    assert_eq!(r.elements[11], "N");
    assert_eq!(r.bonds, [(0, 1, 2)]);
    assert_eq!(r.fields, [("kind".to_string(), "N".to_string())]);
}
