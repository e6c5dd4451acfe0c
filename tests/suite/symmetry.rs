//! Point groups, NMR patterns and descriptor records checked against published isomer data,
//! over whole enumerations where that is cheap.

use crate::common::random_perm;
use cagerank::automorphism;
use cagerank::enumerate::{self, Options, Spec};
use cagerank::score::symmetry::{symmetry, PointGroup, Symmetry};
use cagerank::score::{describe, Descriptors};
use cagerank::spiral::{canonical_spiral, Spiral};
use proptest::prelude::*;

fn symmetry_of(spiral: &Spiral) -> Symmetry {
    let cage = spiral.to_cage();
    let canon = canonical_spiral(&cage).expect("enumerated cages have spirals");
    symmetry(&cage, &canon.automorphisms)
}

/// Point groups of the IPR isomers of `atoms` in IPR-list (spiral) order.
fn ipr_groups(atoms: u64) -> Vec<PointGroup> {
    let spec = Spec::fullerene(atoms, true).unwrap();
    let mut groups = Vec::new();
    enumerate::enumerate(
        &spec,
        &Options::default(),
        |_, _| {},
        |iso| groups.push(symmetry_of(&iso.spiral).point_group),
    )
    .unwrap();
    groups
}

// Two independent routes to the automorphism group, on every isomer C20-C50: the spiral starts
// that reproduce the canonical spiral, and Weinberg's dart extension (IEEE Trans. Circuit Theory
// 13 (1966) 142) in `automorphism`, which needs no spiral.
#[test]
fn dart_extension_and_spiral_starts_give_the_same_group() {
    let key = |a: &cagerank::spiral::Automorphism| (a.atoms.clone(), a.faces.clone(), a.proper);
    for atoms in (20..=50).step_by(2).filter(|&n| n != 22) {
        let spec = Spec::fullerene(atoms, false).unwrap();
        enumerate::enumerate(
            &spec,
            &Options::default(),
            |_, _| {},
            |iso| {
                let cage = iso.spiral.to_cage();
                let mut direct: Vec<_> =
                    automorphism::automorphisms(&cage).iter().map(key).collect();
                let canon = canonical_spiral(&cage).expect("enumerated cages have spirals");
                let mut via_spiral: Vec<_> = canon.automorphisms.iter().map(key).collect();
                direct.sort();
                via_spiral.sort();
                assert_eq!(
                    direct,
                    via_spiral,
                    "C{atoms} {:?}",
                    iso.spiral.pentagon_indices()
                );
            },
        )
        .unwrap();
    }
}

#[test]
fn c76_ipr_isomers_are_d2_then_td() {
    // from memory: Fowler & Manolopoulos, An Atlas of Fullerenes (1995), IPR C76 in spiral order
    assert_eq!(ipr_groups(76), vec![PointGroup::D(2), PointGroup::Td]);
}

#[test]
fn c78_ipr_isomers_in_atlas_order() {
    // from memory: Atlas of Fullerenes (1995), IPR C78 1-5 are D3, C2v, C2v, D3h, D3h
    use PointGroup::*;
    assert_eq!(ipr_groups(78), vec![D(3), Cv(2), Cv(2), Dh(3), Dh(3)]);
}

#[test]
fn c80_ipr_isomers_in_atlas_order() {
    // from memory: Atlas of Fullerenes (1995), IPR C80 1-7 are D5d, D2, C2v, D3, C2v, D5h, Ih
    // (Ih-C80 is the cage of Sc3N@C80, written C80:7 in the literature)
    use PointGroup::*;
    assert_eq!(
        ipr_groups(80),
        vec![Dd(5), D(2), Cv(2), D(3), Cv(2), Dh(5), Ih]
    );
}

#[test]
fn c84_ipr_22_and_23_are_d2_and_d2d() {
    // from memory: the two main C84 isomers are C84:22 (D2) and C84:23 (D2d) in the IPR list
    let spec = Spec::fullerene(84, true).unwrap();
    let group = |n| symmetry_of(&enumerate::find_by_number(&spec, n).unwrap().spiral).point_group;
    assert_eq!(group(22), PointGroup::D(2));
    assert_eq!(group(23), PointGroup::Dd(2));
}

#[test]
fn c76_d2_has_19_nmr_lines_of_4() {
    // from memory: Ettl, Chao, Diederich, Whetten, Nature 353 (1991) 149: 19 lines of equal
    // intensity for D2-C76
    let spec = Spec::fullerene(76, true).unwrap();
    let iso = enumerate::find_by_number(&spec, 1).unwrap();
    let s = symmetry_of(&iso.spiral);
    assert_eq!(s.point_group, PointGroup::D(2));
    assert!(s.chiral, "D2 has no improper elements");
    assert_eq!(s.nmr, vec![(4, 19)]);
    // Written as the literature does, lines x intensity.
    assert_eq!(cagerank::score::nmr::format_pattern(&s.nmr), "19x4");
}

#[test]
fn every_c60_isomer_has_a_consistent_fullerene_group() {
    // Atlas of Fullerenes (1995): a fullerene has one of 28 point groups, all of orders dividing
    // 120. Orbits partition the 60 atoms and each orbit size divides |G| (orbit-stabiliser
    // theorem); the named group's order must equal the number of automorphisms.
    let spec = Spec::fullerene(60, false).unwrap();
    let mut seen = 0;
    enumerate::enumerate(
        &spec,
        &Options::default(),
        |_, _| {},
        |iso| {
            let s = symmetry_of(&iso.spiral);
            assert_eq!(s.order, iso.automorphisms, "C60:{:?}", iso.number);
            assert_eq!(120 % s.order, 0, "C60:{:?}", iso.number);
            assert_eq!(s.nmr.iter().map(|&(m, k)| m * k).sum::<u32>(), 60);
            assert!(
                s.nmr.iter().all(|&(m, _)| s.order % m == 0),
                "orbit sizes divide |G|"
            );
            assert_eq!(s.point_group.order(), Some(s.order), "C60:{:?}", iso.number);
            assert!(s.point_group.is_fullerene_group(), "{}", s.point_group);
            assert_eq!(s.chiral, s.point_group.is_chiral());
            seen += 1;
        },
    )
    .unwrap();
    // OEIS A007894: 1812 isomers of C60
    assert_eq!(seen, 1812);
}

#[test]
fn c70_descriptor_record_has_the_issue_keys() {
    // from memory: C70-D5h spiral (Atlas); Kekulé count 52168 (domain notes, brute force)
    let spiral =
        Spiral::from_pentagon_indices(70, &[1, 7, 9, 11, 13, 15, 27, 29, 31, 33, 35, 37]).unwrap();
    let cage = spiral.to_cage();
    let d = describe(&cage, &canonical_spiral(&cage).unwrap(), 0).unwrap();
    let json = serde_json::to_value(&d).unwrap();
    let keys: Vec<&str> = json
        .as_object()
        .unwrap()
        .keys()
        .map(String::as_str)
        .collect();
    let mut expected = vec![
        "pentagon_adjacencies",
        "pentagon_penalty_kj",
        "hexagon_neighbours",
        "hexagon_strain",
        "homo",
        "lumo",
        "gap",
        "shell",
        "pi_energy",
        "kekule",
        "automorphisms",
        "point_group",
        "chiral",
        "nmr",
    ];
    expected.sort_unstable();
    let mut got = keys.clone();
    got.sort_unstable();
    assert_eq!(got, expected);
    assert_eq!(json["point_group"], "D5h");
    assert_eq!(json["kekule"], "52168");
    assert_eq!(json["nmr"], serde_json::json!([[20, 2], [10, 3]]));
    assert!(json["shell"].as_str().unwrap().ends_with("closed"));
    let back: Descriptors = serde_json::from_value(json).unwrap();
    assert_eq!(back, d);
}

/// Spirals of a few C60 isomers of different groups, plus C70.
fn sample_spirals() -> Vec<Spiral> {
    let spec = Spec::fullerene(40, false).unwrap();
    let mut out = Vec::new();
    enumerate::enumerate(
        &spec,
        &Options::default(),
        |_, _| {},
        |iso| out.push(iso.spiral),
    )
    .unwrap();
    out.push(
        Spiral::from_pentagon_indices(70, &[1, 7, 9, 11, 13, 15, 27, 29, 31, 33, 35, 37]).unwrap(),
    );
    out
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(48))]

    // Renaming the atoms of a cage does not change its symmetry: group order, point group,
    // chirality and NMR pattern are graph invariants.
    #[test]
    fn relabelling_keeps_the_point_group(choice in 0usize..41, seed in any::<u64>()) {
        let spirals = sample_spirals();
        let spiral = &spirals[choice % spirals.len()];
        let cage = spiral.to_cage();
        let moved = cage.relabelled(&random_perm(cage.atoms(), seed));
        let before = symmetry(&cage, &canonical_spiral(&cage).unwrap().automorphisms);
        let after = symmetry(&moved, &canonical_spiral(&moved).unwrap().automorphisms);
        prop_assert_eq!(before, after);
    }
}
