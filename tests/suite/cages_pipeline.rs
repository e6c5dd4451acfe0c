//! Cages of other face sets through show, export, draw, identify and query: checked against
//! Euler's relation, published point groups, RDKit (committed script output), a brute-force
//! sort and export-then-identify round trips.

use cagerank::cage::FaceSet;
use cagerank::catalogue::query::{query, Filter, Query};
use cagerank::enumerate::{self, Options, Spec};
use cagerank::export::{self, Numbers};
use cagerank::id::IsomerId;
use cagerank::identify::{self, numbers, parse::Format};
use cagerank::score;
use std::path::PathBuf;
use std::process::Command;

fn bin() -> Command {
    let mut c = Command::new(env!("CARGO_BIN_EXE_cagerank"));
    // No catalogue: numbers come from the face-set search.
    c.env("CAGERANK_CATALOGUE", scratch("no-catalogue"));
    c
}

fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("cagerank-cages-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    dir
}

fn run(args: &[&str]) -> String {
    let out = bin().args(args).output().expect("binary runs");
    assert!(
        out.status.success(),
        "{args:?}: {}{}",
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8_lossy(&out.stdout).into_owned()
}

/// The cages the pipeline tests use: a BN cage, a 4-5-6 cage and a 5-6-7 cage with one
/// heptagon (`C32:5-6-7h1-all-5` has f5 13, f7 1 as `enumerate 32 --faces 5-6-7 --heptagons 1`
/// lists it).
const IDS: [&str; 3] = ["B12N12:4-6-iso-1", "C24:4-5-6-all-7", "C32:5-6-7h1-all-5"];

#[test]
fn show_prints_b12n12_as_the_th_bn_cage_with_six_squares() {
    let text = run(&["show", "B12N12:4-6-iso-1"]);
    // B12N12 is Th (Yan & Zhang, MATCH 57 (2007) 643); Euler for a {4,6} cage: six squares,
    // and n/2 + 2 = 14 faces, so eight hexagons.
    assert!(text.lines().next().unwrap().contains("  Th  "), "{text}");
    assert!(text.contains("6 squares, 8 hexagons"), "{text}");
    assert!(text.contains("square adjacencies             0"), "{text}");
    // The 11B pattern covers the twelve borons of B12N12: lines x intensity add up to 12.
    let line = text.lines().find(|l| l.contains("11B NMR")).unwrap();
    let pattern = line.rsplit(": ").next().unwrap();
    let borons: u32 = pattern
        .split(',')
        .map(|t| {
            let (lines, each) = t.split_once('x').unwrap();
            lines.parse::<u32>().unwrap() * each.parse::<u32>().unwrap()
        })
        .sum();
    assert_eq!(borons, 12, "{line}");
}

#[test]
fn show_of_other_sets_obeys_their_euler_relation() {
    for id in ["C24:4-5-6-all-7", "C32:5-6-7h1-all-5"] {
        let v: serde_json::Value = serde_json::from_str(&run(&["show", id, "--json"])).unwrap();
        let c = |s: &str| v["face_counts"][s].as_i64().unwrap();
        // Euler for cubic polyhedra: sum over faces of (6 - size) = 12 (domain notes §9).
        assert_eq!(2 * c("4") + c("5") - c("7"), 12, "{id}");
        assert_eq!(v["id"], *id);
        assert_eq!(
            v["atoms"].as_u64().unwrap() as usize,
            v["edges"].as_array().unwrap().len() * 2 / 3
        );
    }
}

#[test]
fn exported_b12n12_alternates_b_and_n_and_rdkit_sanitised_the_exports() {
    // scripts/check_cage_exports.py exported these IDs and RDKit sanitised every SDF; its
    // committed output must say so for each, with Euler's sum and the formula field agreeing.
    let committed = include_str!("../../scripts/check_cage_exports.out");
    for id in IDS {
        let line = committed
            .lines()
            .find(|l| l.starts_with(&format!("export {id}:")))
            .unwrap_or_else(|| panic!("{id} missing from check_cage_exports.out"));
        for part in [
            "sanitised",
            "same",
            "cubic",
            "sum(6 - size) 12",
            "xyz elements same",
        ] {
            assert!(line.contains(part), "{line}");
        }
        assert!(
            !line.contains("DIFFERENT") && !line.contains("NOT"),
            "{line}"
        );
    }
    // What the library writes now is still what RDKit read: every B12N12 bond joins B to N,
    // all single (the script saw bonds {'B-N': 36}).
    let id = IsomerId::parse("B12N12:4-6-iso-1", None).unwrap();
    let (spiral, numbers) = locate(id);
    let entry = export::prepare(id, &spiral, numbers, 0).unwrap();
    let atoms = entry.atoms();
    let bonds = export::bond_orders(&entry);
    assert_eq!(bonds.len(), 36);
    for ([a, b], order) in bonds {
        assert_eq!(order, 1);
        assert_ne!(atoms[a as usize].0, atoms[b as usize].0);
    }
    assert_eq!(atoms.iter().filter(|a| a.0 == "B").count(), 12);
}

fn locate(id: IsomerId) -> (cagerank::spiral::Spiral, Numbers) {
    let found = numbers::locate(id, None, &mut |_, _| {}).unwrap().unwrap();
    let n = Numbers {
        number: found.numbers.complete.listed(),
        ipr_number: found.numbers.ipr.listed(),
    };
    (found.spiral, n)
}

#[test]
fn export_then_identify_gives_the_same_id() {
    // Round trip through files: the ID a cage is exported under is the ID identify reads back,
    // from the XYZ and from the SDF, for one cage of each non-fullerene set.
    let dir = scratch("round-trip");
    run(&[
        "export",
        "--ids",
        &IDS.join(","),
        "--format",
        "xyz,sdf",
        "--out",
        dir.to_str().unwrap(),
    ]);
    for id in IDS {
        let stem = id.replacen(':', "_", 1);
        for ext in ["xyz", "sdf"] {
            let path = dir.join(format!("{stem}.{ext}"));
            let text = run(&["identify", path.to_str().unwrap(), "--json"]);
            let v: serde_json::Value = serde_json::from_str(text.lines().next().unwrap()).unwrap();
            let ids: Vec<&str> = v["ids"]
                .as_array()
                .unwrap()
                .iter()
                .map(|i| i.as_str().unwrap())
                .collect();
            assert!(ids.contains(&id), "{id} from {ext}: {ids:?}");
        }
    }
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn identify_reads_the_bn_cage_library_side() {
    let id = IsomerId::parse("B12N12:4-6-iso-1", None).unwrap();
    let (spiral, numbers) = locate(id);
    let entry = export::prepare(id, &spiral, numbers, 0).unwrap();
    let mut xyz = Vec::new();
    export::xyz::write_atoms(&mut xyz, "B12N12", entry.atoms().into_iter()).unwrap();
    let structures = identify::read(&xyz, Some(Format::Xyz)).unwrap();
    let found = identify::identify(&structures[0], &identify::Options::default()).unwrap();
    assert_eq!(found.face_set, FaceSet::SquareHexagon);
    assert!(found.is_boron_nitride());
    assert_eq!(found.formula(), "B12N12");
}

#[test]
fn draw_colours_every_ring_size_and_lists_it_in_the_legend() {
    let dir = scratch("draw");
    std::fs::create_dir_all(&dir).unwrap();
    for (id, sizes) in [
        ("C24:4-5-6-all-7", &["square", "pentagon", "hexagon"][..]),
        (
            "C32:5-6-7h1-all-5",
            &["pentagon", "hexagon", "heptagon"][..],
        ),
    ] {
        let path = dir.join("d.svg");
        run(&["draw", id, "-o", path.to_str().unwrap()]);
        let svg = std::fs::read_to_string(&path).unwrap();
        for name in sizes {
            assert!(
                svg.contains(&format!(">{name}</text>")),
                "{id}: no {name} in legend"
            );
        }
        // One fill per ring size: faces of a size share a colour, sizes do not.
        let mut fill_of = std::collections::BTreeMap::new();
        for part in svg.split("<path class=\"face\"").skip(1) {
            let size = part
                .split("data-size=\"")
                .nth(1)
                .unwrap()
                .split('"')
                .next()
                .unwrap();
            let fill = part
                .split("fill=\"")
                .nth(1)
                .unwrap()
                .split('"')
                .next()
                .unwrap();
            let prev = fill_of.insert(size.to_string(), fill.to_string());
            assert!(
                prev.is_none_or(|p| p == fill),
                "{id}: size {size} in two colours"
            );
        }
        let fills: std::collections::BTreeSet<_> = fill_of.values().collect();
        assert_eq!(fills.len(), fill_of.len(), "{id}: two sizes share a colour");
        assert_eq!(fill_of.len(), sizes.len());
    }
    let _ = std::fs::remove_dir_all(&dir);
}

/// Ranking facts computed here independently of `score::boron_nitride`: contacts counted over
/// edges from the faces, heptagons counted, gap from `score::describe_spiral`.
fn brute_facts(spiral: &cagerank::spiral::Spiral, set: FaceSet) -> (u32, u32, f64) {
    let cage = spiral.to_cage();
    let size = if matches!(set, FaceSet::PentagonHexagonHeptagon { .. }) {
        5
    } else {
        4
    };
    let faces = cage.faces();
    let contacts = cage
        .edge_faces()
        .iter()
        .filter(|[a, b]| faces[*a as usize].len() == size && faces[*b as usize].len() == size)
        .count() as u32;
    let heptagons = faces.iter().filter(|f| f.len() == 7).count() as u32;
    let gap = score::describe_spiral(spiral, 0).unwrap().gap;
    (heptagons, contacts, gap)
}

#[test]
fn query_ranks_a_face_set_catalogue_by_its_default_order() {
    for (set, atoms, flag) in [
        (
            FaceSet::SquarePentagonHexagon,
            24u64,
            vec!["--faces", "4-5-6"],
        ),
        (
            FaceSet::PentagonHexagonHeptagon { heptagons: 1 },
            32,
            vec!["--faces", "5-6-7", "--heptagons", "1"],
        ),
    ] {
        let dir = scratch(&format!("query-{}", set.name()));
        let size = atoms.to_string();
        let mut args = vec![
            "enumerate",
            &size,
            "--quiet",
            "--catalogue",
            dir.to_str().unwrap(),
        ];
        args.extend(flag.iter().copied());
        run(&args);
        let q = Query {
            atoms: atoms as u32,
            face_set: set,
            ipr: false,
            charge: 0,
            filter: Filter::default(),
            rank_by: Vec::new(),
            top: None,
        };
        let got: Vec<u64> = query(&dir, &q)
            .unwrap()
            .iter()
            .map(|r| r.number.unwrap())
            .collect();
        // Brute force: every isomer, sorted by the documented keys (README "Other face sets":
        // 4-5-6 fewest square adjacencies then the largest gap; 5-6-7 fewest heptagons, fewest
        // pentagon adjacencies, largest gap), ties in number order.
        let spec = Spec::cages(atoms, set, false).unwrap();
        let mut all = Vec::new();
        enumerate::enumerate(&spec, &Options::default(), |_, _| {}, |iso| all.push(iso)).unwrap();
        let mut keyed: Vec<((u32, u32, f64), u64)> = all
            .iter()
            .map(|iso| (brute_facts(&iso.spiral, set), iso.number.unwrap()))
            .collect();
        keyed.sort_by(|(a, na), (b, nb)| {
            a.0.cmp(&b.0)
                .then(a.1.cmp(&b.1))
                .then(b.2.total_cmp(&a.2))
                .then(na.cmp(nb))
        });
        let want: Vec<u64> = keyed.iter().map(|k| k.1).collect();
        assert_eq!(got, want, "{set}");
        assert!(got.len() > 5, "{set}: too few cages to test an order");
        let _ = std::fs::remove_dir_all(&dir);
    }
}

#[test]
fn export_top_k_of_a_face_set_is_the_head_of_the_query_order() {
    // Without a catalogue `export --top` enumerates and ranks here; it must pick the same
    // cages as the catalogue query (two independent paths to one order).
    let dir = scratch("top");
    let cat = dir.join("cat");
    run(&[
        "enumerate",
        "24",
        "--quiet",
        "--faces",
        "4-6",
        "--catalogue",
        cat.to_str().unwrap(),
    ]);
    let q = Query {
        atoms: 24,
        face_set: FaceSet::SquareHexagon,
        ipr: false,
        charge: 0,
        filter: Filter::default(),
        rank_by: Vec::new(),
        top: Some(2),
    };
    let want: Vec<String> = query(&cat, &q)
        .unwrap()
        .iter()
        .map(|r| {
            IsomerId::of(
                FaceSet::SquareHexagon,
                24,
                cagerank::id::List::All,
                r.number.unwrap(),
            )
            .file_stem()
        })
        .collect();
    let out = dir.join("out");
    run(&[
        "export",
        "--atoms",
        "24",
        "--faces",
        "4-6",
        "--top",
        "2",
        "--format",
        "xyz",
        "--out",
        out.to_str().unwrap(),
    ]);
    for stem in &want {
        assert!(
            out.join(format!("{stem}.xyz")).is_file(),
            "{stem} not exported"
        );
    }
    let _ = std::fs::remove_dir_all(&dir);
}
