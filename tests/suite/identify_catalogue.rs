//! Isomer numbers for identified cages read from the shipped catalogue instead of enumerating.

use cagerank::enumerate::{find_by_number, Spec};
use cagerank::identify::numbers::{from_catalogue, Number};
use cagerank::spiral::Spiral;
use std::path::PathBuf;

fn shipped() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("catalogues")
}

#[test]
fn c70_d5h_numbers_come_from_the_catalogue() {
    // Atlas (from memory): C70-D5h is C70:8149 and the only IPR C70.
    let s =
        Spiral::from_pentagon_indices(70, &[1, 7, 9, 11, 13, 15, 27, 29, 31, 33, 35, 37]).unwrap();
    let (complete, ipr) = from_catalogue(&shipped(), &s, true).unwrap();
    assert_eq!(complete, Some(Number::Listed(8149)));
    assert_eq!(ipr, Some(Number::Listed(1)));
}

#[test]
fn catalogue_numbers_agree_with_enumeration() {
    for n in [1u64, 17, 271] {
        let iso = find_by_number(&Spec::fullerene(50, false).unwrap(), n).unwrap();
        let (complete, ipr) = from_catalogue(&shipped(), &iso.spiral, false).unwrap();
        assert_eq!(complete, Some(Number::Listed(n)));
        assert_eq!(ipr, Some(Number::NotListed));
    }
}

#[test]
fn ipr_only_sizes_give_the_ipr_number_and_leave_the_complete_one_open() {
    // The shipped catalogue holds the IPR list of C100 but not its complete list.
    let iso = find_by_number(&Spec::fullerene(100, true).unwrap(), 450).unwrap();
    let (complete, ipr) = from_catalogue(&shipped(), &iso.spiral, true).unwrap();
    assert_eq!(complete, None);
    assert_eq!(ipr, Some(Number::Listed(450)));
}

// ---- Binary search and direct index: numbering without enumerating ----

use cagerank::enumerate::{enumerate, Options};
use cagerank::id::{IsomerId, List};
use cagerank::identify::numbers::{locate, numbers_with_progress, Numbers};

fn complete_list(atoms: u64) -> Vec<cagerank::enumerate::Isomer> {
    let mut out = Vec::new();
    let spec = Spec::fullerene(atoms, false).unwrap();
    enumerate(&spec, &Options::default(), |_, _| {}, |i| out.push(i)).unwrap();
    out
}

fn no_search(_: usize, _: usize) {
    panic!("a catalogue lookup must not search the list");
}

#[test]
fn catalogue_lookups_both_ways_agree_with_enumeration_and_never_search() {
    let dir = shipped();
    for iso in complete_list(60).iter().step_by(13) {
        let n = iso.number.unwrap();
        let numbers =
            numbers_with_progress(&iso.spiral, iso.ipr, Some(&dir), &mut no_search).unwrap();
        assert_eq!(numbers.complete, Number::Listed(n));
        let id = IsomerId::new(60, List::All, n);
        let found = locate(id, Some(&dir), &mut no_search).unwrap().unwrap();
        assert_eq!(found.spiral, iso.spiral, "{id}");
        assert_eq!(found.numbers.complete, Number::Listed(n));
    }
    // OEIS A046880: 450 IPR isomers of C100, held in the shipped IPR catalogue; its complete
    // list is not shipped and C100 is beyond the search limit, so that number is not computed.
    let last = locate(
        IsomerId::new(100, List::Ipr, 450),
        Some(&dir),
        &mut no_search,
    )
    .unwrap()
    .unwrap();
    assert_eq!(
        last.spiral,
        find_by_number(&Spec::fullerene(100, true).unwrap(), 450)
            .unwrap()
            .spiral
    );
    assert_eq!(last.numbers.ipr, Number::Listed(450));
    assert!(matches!(last.numbers.complete, Number::NotComputed { .. }));
    assert_eq!(
        locate(
            IsomerId::new(100, List::Ipr, 451),
            Some(&dir),
            &mut no_search
        )
        .unwrap(),
        None
    );
    // C70-D5h by its IPR number, read from the complete-list file (Atlas, from memory: C70:8149).
    let d5h = locate(IsomerId::new(70, List::Ipr, 1), Some(&dir), &mut no_search)
        .unwrap()
        .unwrap();
    assert_eq!(
        d5h.numbers,
        Numbers {
            complete: Number::Listed(8149),
            ipr: Number::Listed(1)
        }
    );
}

use crate::common::cagerank;

#[test]
fn identify_prints_both_ids_from_the_default_catalogue() {
    use cagerank::export::{self, xyz};
    let s =
        Spiral::from_pentagon_indices(70, &[1, 7, 9, 11, 13, 15, 27, 29, 31, 33, 35, 37]).unwrap();
    let entry = export::prepare(
        IsomerId::new(70, List::Ipr, 1),
        &s,
        export::Numbers::default(),
        0,
    )
    .unwrap();
    let path = std::env::temp_dir().join(format!("cagerank-c70-{}.xyz", std::process::id()));
    let mut text = Vec::new();
    xyz::write(&mut text, "C70", &entry.geometry.coords).unwrap();
    std::fs::write(&path, text).unwrap();
    let (code, out, err) = cagerank(&["identify", path.to_str().unwrap()]);
    assert_eq!(code, 0, "{err}");
    // Atlas (from memory): C70-D5h is C70:8149 in the complete list and the only IPR C70.
    assert!(out.contains("C70:all-8149 = C70:IPR-1  D5h"), "{out}");
    let (_, out, _) = cagerank(&["identify", path.to_str().unwrap(), "--json"]);
    let v: serde_json::Value = serde_json::from_str(out.trim()).unwrap();
    assert_eq!(v["ids"], serde_json::json!(["C70:all-8149", "C70:IPR-1"]));
    std::fs::remove_file(&path).unwrap();
}

#[test]
fn spiral_infers_the_size_of_a_spiral_the_tool_printed() {
    // The canonical spirals printed for C60-Ih and C70-D5h (Atlas, from memory), and for IPR
    // C84:23 (D2d) as `show`/`identify` print it; before, the last failed for want of --atoms.
    let (code, out, err) = cagerank(&["spiral", "1,7,9,11,13,15,18,20,22,24,26,32", "--json"]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(out.trim()).unwrap();
    assert_eq!(
        (v["atoms"].clone(), v["ids"].clone()),
        (
            serde_json::json!(60),
            serde_json::json!(["C60:all-1812", "C60:IPR-1"])
        )
    );
    let (code, out, err) = cagerank(&["spiral", "1 7 9 11 13 15 27 29 31 33 35 37"]);
    assert_eq!(code, 0, "{err}");
    assert!(out.starts_with("C70:all-8149 = C70:IPR-1\n"), "{out}");
    let c84 = find_by_number(&Spec::fullerene(84, true).unwrap(), 23).unwrap();
    let printed: Vec<String> = c84
        .spiral
        .pentagon_indices()
        .iter()
        .map(u32::to_string)
        .collect();
    let (code, out, err) = cagerank(&["spiral", &printed.join(","), "--json", "--no-numbers"]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(out.trim()).unwrap();
    assert_eq!(v["atoms"], 84);
    // Twelve positions that close at no size: told to check them or give --atoms, exit 2.
    let (code, _, err) = cagerank(&["spiral", "1,2,3,4,5,6,7,8,9,10,11,40"]);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("--atoms") && err.trim().lines().count() == 1,
        "{err}"
    );
}
