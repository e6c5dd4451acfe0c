//! Round trips of the export formats: our own XYZ and SDF read back, Kekulé bond orders forming
//! a perfect matching, finite coordinates, the JSON record and manifest, safe file names.

use cagerank::export::{self, sdf, xyz, Entry, Format, Numbers, CAUTION};
use cagerank::spiral::Spiral;
use std::collections::BTreeSet;

// from memory: Fowler & Manolopoulos, An Atlas of Fullerenes (1995): C60-Ih and C70-D5h spirals.
const C60: [u64; 12] = [1, 7, 9, 11, 13, 15, 18, 20, 22, 24, 26, 32];
const C70: [u64; 12] = [1, 7, 9, 11, 13, 15, 27, 29, 31, 33, 35, 37];

fn entry(id: &str, atoms: u64, pentagons: &[u64]) -> Entry {
    let spiral = Spiral::from_pentagon_indices(atoms, pentagons).unwrap();
    export::prepare(id, &spiral, Numbers::default(), 0).unwrap()
}

#[test]
fn xyz_round_trip_keeps_coordinates_and_comment() {
    let e = entry("C60:1812", 60, &C60);
    let mut out = Vec::new();
    xyz::write(&mut out, &export::comment_line(&e), &e.geometry.coords).unwrap();
    let text = String::from_utf8(out).unwrap();
    assert!(text.starts_with("60\n"));
    let back = xyz::parse(&text).unwrap();
    assert!(back.comment.starts_with("C60:1812 Ih"));
    assert!(back.comment.contains(CAUTION));
    assert_eq!(back.coords.len(), 60);
    for (a, b) in back.coords.iter().zip(&e.geometry.coords) {
        for k in 0..3 {
            assert!(a[k].is_finite() && (a[k] - b[k]).abs() < 1e-7);
        }
    }
}

#[test]
fn sdf_round_trip_has_kekule_bonds_and_valence_four() {
    let entries = [entry("C60:1812", 60, &C60), entry("C70:8149", 70, &C70)];
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
        assert_eq!(r.name, e.id);
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
    }
}

#[test]
fn json_record_carries_finite_coordinates_and_descriptors() {
    let e = entry("C60:1812", 60, &C60);
    let mut out = Vec::new();
    export::json::write(&mut out, &e).unwrap();
    let v: serde_json::Value = serde_json::from_slice(&out).unwrap();
    let coords = v["geometry"]["coordinates"].as_array().unwrap();
    assert_eq!(coords.len(), 60);
    assert!(coords
        .iter()
        .flat_map(|c| c.as_array().unwrap())
        .all(|x| x.as_f64().is_some_and(f64::is_finite)));
    assert_eq!(v["id"], "C60:1812");
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

#[test]
fn write_all_puts_every_file_in_place_atomically() {
    let dir = std::env::temp_dir().join(format!("cagerank-export-test-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let entries = [entry("C60:1812", 60, &C60), entry("C70:8149", 70, &C70)];
    let written =
        export::write_all(&entries, &[Format::Xyz, Format::Sdf, Format::Json], &dir).unwrap();
    let names: BTreeSet<String> = std::fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().into_string().unwrap())
        .collect();
    let expected: BTreeSet<String> = [
        "C60-1812.xyz",
        "C60-1812.sdf",
        "C60-1812.json",
        "C70-8149.xyz",
        "C70-8149.sdf",
        "C70-8149.json",
        "shortlist.sdf",
        "manifest.csv",
    ]
    .iter()
    .map(|s| s.to_string())
    .collect();
    assert_eq!(names, expected, "no temp files may be left behind");
    assert_eq!(written.len(), expected.len());
    let manifest = std::fs::read_to_string(dir.join("manifest.csv")).unwrap();
    let lines: Vec<&str> = manifest.lines().collect();
    assert_eq!(lines.len(), 3);
    assert!(lines[0].starts_with("id,spiral,point_group,"));
    assert!(lines[1].starts_with("C60:1812,1 7 9 11 13 15 18 20 22 24 26 32,Ih,"));
    assert!(lines[2].starts_with("C70:8149,1 7 9 11 13 15 27 29 31 33 35 37,D5h,"));
    let shortlist = std::fs::read_to_string(dir.join("shortlist.sdf")).unwrap();
    assert_eq!(sdf::parse(&shortlist).unwrap().len(), 2);
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn file_names_are_safe() {
    assert_eq!(export::safe_file_stem("C84:23"), "C84-23");
    for hostile in ["../../etc/passwd", ".hidden", "", "a/b\\c", "C60 :1\n"] {
        let stem = export::safe_file_stem(hostile);
        assert!(!stem.is_empty() && !stem.starts_with('.'), "{stem:?}");
        assert!(
            stem.chars()
                .all(|c| c.is_ascii_alphanumeric() || "._-".contains(c)),
            "{stem:?}"
        );
    }
}

#[test]
fn format_lists_parse_and_reject_unknown_names() {
    assert_eq!(
        Format::parse_list("xyz, SDF,json").unwrap(),
        vec![Format::Xyz, Format::Sdf, Format::Json]
    );
    assert!(Format::parse_list("pdb").is_err());
    assert!(Format::parse_list("").is_err());
}
