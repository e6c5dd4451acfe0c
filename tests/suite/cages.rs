//! Cages beyond fullerenes (face sets 4-6, 4-5-6 and 5-6-7): the enumerator checked against
//! Euler's relations, brute-force graph checks, petgraph and an independent Python construction,
//! and the BN descriptors against nalgebra and the literature.

use cagerank::cage::{Cage, FaceSet};
use cagerank::derivative::Hetero;
use cagerank::enumerate::{self, Isomer, Options, Shard, Spec};
use cagerank::score::boron_nitride::{self, describe_bn};
use cagerank::score::symmetry::{symmetry, PointGroup};
use cagerank::spiral::canonical_spiral;
use petgraph::algo::{connected_components, is_isomorphic};
use petgraph::graph::UnGraph;

const BN: FaceSet = FaceSet::SquareHexagon;
const SPH: FaceSet = FaceSet::SquarePentagonHexagon;

fn listed(spec: &Spec, threads: usize, shard: Option<Shard>) -> Vec<Isomer> {
    let mut out = Vec::new();
    let opts = Options { threads, shard };
    enumerate::enumerate(spec, &opts, |_, _| {}, |i| out.push(i)).unwrap();
    out
}

fn cages(atoms: u64, set: FaceSet, isolated: bool) -> Vec<Isomer> {
    listed(&Spec::cages(atoms, set, isolated).unwrap(), 2, None)
}

fn count(atoms: u64, set: FaceSet, isolated: bool, all_starts: bool) -> u64 {
    let mut spec = Spec::cages(atoms, set, isolated).unwrap();
    spec.all_starts = all_starts;
    enumerate::count(&spec, 2).unwrap()
}

fn graph(cage: &Cage) -> UnGraph<(), ()> {
    UnGraph::from_edges(cage.edges().iter().map(|&[u, v]| (u, v)))
}

/// Brute force: the graph stays connected after removing any two atoms (the removed atoms stay
/// as isolated nodes, so a connected rest leaves exactly three components).
fn three_connected(cage: &Cage) -> bool {
    let n = cage.atoms() as u32;
    (0..n).all(|a| {
        (a + 1..n).all(|b| {
            let mut rest = UnGraph::<(), ()>::with_capacity(n as usize, cage.edges().len());
            for _ in 0..n {
                rest.add_node(());
            }
            for &[u, v] in cage.edges() {
                if ![u, v].contains(&a) && ![u, v].contains(&b) {
                    rest.add_edge(u.into(), v.into(), ());
                }
            }
            connected_components(&rest) == 3
        })
    })
}

#[test]
fn every_cage_obeys_eulers_relation_of_its_set_and_is_cubic_and_3_connected() {
    // Euler for cubic polyhedra (domain notes §9): sum (6 - size) = 12; {4,6}: six squares;
    // {4,5,6}: 2 f4 + f5 = 12; {5,6,7}: f5 - f7 = 12.
    let h2 = FaceSet::PentagonHexagonHeptagon { heptagons: 2 };
    for (set, sizes) in [(BN, 8..=30), (SPH, 8..=22), (h2, 20..=30)] {
        for n in sizes.step_by(2) {
            for iso in cages(n, set, false) {
                let cage = iso.spiral.to_cage();
                let c = cage.face_size_counts();
                assert!(cage.fits(set), "{set} C{n} {}", iso.spiral);
                let curvature: i64 = (3..=8).map(|s| (6 - s as i64) * c[s] as i64).sum();
                assert_eq!(curvature, 12);
                match set {
                    FaceSet::SquareHexagon => assert_eq!(c[4], 6),
                    FaceSet::SquarePentagonHexagon => assert_eq!(2 * c[4] + c[5], 12),
                    _ => {
                        assert_eq!(c[5] as i64 - c[7] as i64, 12);
                        assert!(c[7] <= 2);
                    }
                }
                for v in 0..cage.atoms() {
                    let r = cage.rotation()[v];
                    assert!(r[0] != r[1] && r[1] != r[2] && r[0] != r[2]);
                }
                assert_eq!(cage.edges().len(), 3 * cage.atoms() / 2);
                if n <= 24 {
                    assert!(three_connected(&cage), "{set} C{n} {}", iso.spiral);
                }
            }
        }
    }
}

#[test]
fn cube_and_hexagonal_prism_are_the_smallest_4_6_cages() {
    // Euler: a {4,6} cage has six squares; 8 atoms is the cube (six faces, all squares), 10
    // atoms would need 6 squares and one hexagon, which cannot close, 12 atoms is the
    // hexagonal prism.
    assert!(Spec::cages(6, BN, false).is_err());
    let cube = cages(8, BN, false);
    assert_eq!(cube.len(), 1);
    assert_eq!(cube[0].spiral.sizes(), &[4, 4, 4, 4, 4, 4]);
    let cage = cube[0].spiral.to_cage();
    let canon = canonical_spiral(&cage).unwrap();
    // The cube's rotation group has order 24, Oh order 48 (standard group theory).
    assert_eq!(
        symmetry(&cage, &canon.automorphisms).point_group,
        PointGroup::Oh
    );
    assert!(cages(10, BN, false).is_empty());
    let prism = cages(12, BN, false);
    assert_eq!(prism.len(), 1);
    let cage = prism[0].spiral.to_cage();
    assert_eq!(cage.face_size_counts()[6], 2);
    let canon = canonical_spiral(&cage).unwrap();
    assert_eq!(
        symmetry(&cage, &canon.automorphisms).point_group,
        PointGroup::Dh(6)
    );
}

#[test]
fn b12n12_is_the_smallest_isolated_square_cage_with_th_symmetry() {
    // Yan & Zhang, MATCH 57 (2007) 643: B12N12 (Th) is the smallest BN cage with isolated
    // squares.
    for n in (8..24).step_by(2) {
        assert!(cages(n, BN, true).is_empty(), "C{n}");
    }
    let found = cages(24, BN, true);
    assert_eq!(found.len(), 1);
    let cage = found[0].spiral.to_cage();
    assert!(cage.is_isolated(BN));
    let canon = canonical_spiral(&cage).unwrap();
    let bn = describe_bn(&cage, &canon).unwrap();
    assert_eq!(bn.point_group, PointGroup::Th);
    // The bare cage is the truncated octahedron, Oh (standard solid geometry).
    assert_eq!(bn.cage_point_group, PointGroup::Oh);
    assert_eq!(bn.square_adjacencies, 0);
    // Th acts transitively on the 12 B and on the 12 N atoms of B12N12 (all B equivalent:
    // one 11B line; Oku et al., Sci. Technol. Adv. Mater. 5 (2004) 635, from memory).
    assert_eq!(bn.boron_nmr, vec![(12, 1)]);
    assert_eq!(bn.nitrogen_nmr, vec![(12, 1)]);
    assert_eq!(bn.elements.iter().filter(|&&e| e == Hetero::B).count(), 12);
}

/// Counts of `scripts/cages_by_insertion.py` (cubic polyhedra built by edge insertion from the
/// tetrahedron, deduplicated by canonical codes; its committed output).
fn python_counts() -> Vec<(u64, Vec<u64>)> {
    let text = include_str!("../../scripts/cages_by_insertion.out");
    text.lines()
        .filter(|l| !l.starts_with('#') && !l.trim().is_empty())
        .map(|l| {
            let v: Vec<u64> = l.split_whitespace().map(|x| x.parse().unwrap()).collect();
            (v[0], v[2..].to_vec())
        })
        .collect()
}

#[test]
fn counts_agree_with_an_independent_construction_in_python() {
    // Columns of the script's output: 4-6, 4-6 isolated, 4-5-6, 4-5-6 isolated, 5-6-7 with at
    // most one heptagon, fullerene, IPR fullerene.
    let rows = python_counts();
    assert!(
        rows.iter().any(|(n, _)| *n == 20),
        "the output reaches 20 atoms"
    );
    let h1 = FaceSet::PentagonHexagonHeptagon { heptagons: 1 };
    for (n, c) in rows.into_iter().filter(|(n, _)| *n >= 8) {
        assert_eq!(count(n, BN, false, true), c[0], "4-6 C{n}");
        assert_eq!(count(n, BN, true, true), c[1], "4-6 isolated C{n}");
        assert_eq!(count(n, SPH, false, true), c[2], "4-5-6 C{n}");
        assert_eq!(count(n, SPH, true, true), c[3], "4-5-6 isolated C{n}");
        if n >= 20 {
            assert_eq!(count(n, h1, false, true), c[4], "5-6-7h1 C{n}");
        }
    }
}

#[test]
fn restricted_and_unrestricted_starts_agree_for_4_6_but_not_for_4_5_6() {
    // Completeness check (domain notes §9): starting spirals only on a square finds every 4-6
    // cage over this range, checked against starting on every face size.
    for n in (8..=60).step_by(2) {
        assert_eq!(
            count(n, BN, false, false),
            count(n, BN, false, true),
            "4-6 C{n}"
        );
    }
    // For 4-5-6 it does not: up to 18 atoms the two agree, and at 20 atoms the square-start
    // search finds 22 cages while every-start finds 23, the count of the independent Python
    // construction (scripts/cages_by_insertion.out). So runs start on every size by default.
    for n in (8..=18).step_by(2) {
        assert_eq!(
            count(n, SPH, false, false),
            count(n, SPH, false, true),
            "4-5-6 C{n}"
        );
    }
    assert_eq!(count(20, SPH, false, false), 22);
    assert_eq!(count(20, SPH, false, true), 23);
    assert!(Spec::cages(20, SPH, false).unwrap().all_starts);
}

#[test]
fn cages_are_pairwise_non_isomorphic_and_their_spirals_canonical() {
    // petgraph's isomorphism test, independent of spirals.
    for (set, n) in [(SPH, 18), (SPH, 20), (BN, 36)] {
        let list = cages(n, set, false);
        let graphs: Vec<_> = list.iter().map(|i| graph(&i.spiral.to_cage())).collect();
        for i in 0..graphs.len() {
            let canon = canonical_spiral(&list[i].spiral.to_cage()).unwrap();
            assert_eq!(canon.spiral, list[i].spiral);
            for j in 0..i {
                assert!(!is_isomorphic(&graphs[i], &graphs[j]), "{set} C{n} {i} {j}");
            }
        }
        // Spiral order is isomer-number order.
        assert!(list
            .windows(2)
            .all(|w| w[0].spiral.sizes() < w[1].spiral.sizes()));
        assert!(list
            .iter()
            .enumerate()
            .all(|(k, i)| i.number == Some(k as u64 + 1)));
    }
}

#[test]
fn no_heptagon_bound_zero_gives_the_fullerenes() {
    // OEIS A007894 via the fullerene search (itself checked against OEIS in tests/enumerate.rs):
    // 5-6-7 cages with no heptagon are exactly the fullerenes.
    let h0 = FaceSet::PentagonHexagonHeptagon { heptagons: 0 };
    for n in [20u64, 24, 26, 28, 30, 40] {
        let fullerenes = enumerate::count(&Spec::fullerene(n, false).unwrap(), 2).unwrap();
        assert_eq!(count(n, h0, false, true), fullerenes, "C{n}");
    }
}

#[test]
fn isolated_lists_are_the_complete_lists_filtered_by_the_rule() {
    for (set, n) in [(BN, 40), (SPH, 24)] {
        let all = cages(n, set, false);
        let iso = cages(n, set, true);
        let filtered: Vec<_> = all
            .iter()
            .filter(|i| i.spiral.to_cage().is_isolated(set))
            .map(|i| i.spiral.clone())
            .collect();
        assert_eq!(
            iso.iter().map(|i| i.spiral.clone()).collect::<Vec<_>>(),
            filtered
        );
        assert!(iso
            .iter()
            .enumerate()
            .all(|(k, i)| i.ipr_number == Some(k as u64 + 1)));
    }
}

#[test]
fn threads_and_shards_give_the_same_list() {
    let spec = Spec::cages(30, SPH, false).unwrap();
    let one = listed(&spec, 1, None);
    let two = listed(&spec, 2, None);
    assert_eq!(one, two);
    let mut merged: Vec<_> = (1..=3)
        .flat_map(|k| listed(&spec, 2, Some(Shard { index: k, count: 3 })))
        .map(|i| i.spiral)
        .collect();
    merged.sort();
    let whole: Vec<_> = one.into_iter().map(|i| i.spiral).collect();
    assert_eq!(merged, whole);
}

#[test]
fn heteroatom_huckel_levels_agree_with_nalgebra() {
    // Van-Catledge, J. Org. Chem. 45 (1980) 4801 (domain notes §8): h_B = -0.45, h_N = 0.51,
    // k_BN = 0.66; eigenvalues by nalgebra's symmetric eigensolver.
    for iso in cages(32, BN, false) {
        let cage = iso.spiral.to_cage();
        let canon = canonical_spiral(&cage).unwrap();
        let bn = describe_bn(&cage, &canon).unwrap();
        let n = cage.atoms();
        let mut m = nalgebra::DMatrix::<f64>::zeros(n, n);
        for (v, e) in bn.elements.iter().enumerate() {
            m[(v, v)] = if *e == Hetero::B { -0.45 } else { 0.51 };
        }
        for &[u, v] in cage.edges() {
            assert_ne!(
                bn.elements[u as usize], bn.elements[v as usize],
                "B and N alternate"
            );
            m[(u as usize, v as usize)] = 0.66;
            m[(v as usize, u as usize)] = 0.66;
        }
        let mut x: Vec<f64> = m.symmetric_eigen().eigenvalues.iter().copied().collect();
        x.sort_by(|a, b| b.total_cmp(a));
        assert!((bn.homo - x[n / 2 - 1]).abs() < 1e-9);
        assert!((bn.lumo - x[n / 2]).abs() < 1e-9);
        assert!((bn.gap - (x[n / 2 - 1] - x[n / 2])).abs() < 1e-9);
    }
}

#[test]
fn bn_default_order_puts_isolated_squares_first() {
    // Isolated-square rule (domain notes §9): the ranking's first key.
    let mut facts: Vec<_> = cages(48, BN, false)
        .iter()
        .map(|i| {
            let cage = i.spiral.to_cage();
            let canon = canonical_spiral(&cage).unwrap();
            let bn = describe_bn(&cage, &canon).unwrap();
            boron_nitride::rank_facts(&cage, BN, f64::NAN, Some(&bn))
        })
        .collect();
    facts.sort_by(|a, b| boron_nitride::default_order(BN, a, b));
    assert_eq!(facts[0].isolated_adjacencies, 0);
    assert!(facts
        .windows(2)
        .all(|w| w[0].isolated_adjacencies <= w[1].isolated_adjacencies));
}

#[test]
fn a_cage_with_odd_rings_is_no_bn_cage_and_bad_sizes_are_refused() {
    let c20 = cages(20, SPH, false).pop().unwrap().spiral.to_cage();
    assert!(boron_nitride::assignment(&c20).is_err());
    assert!(Spec::cages(9, BN, false).is_err());
    assert!(Spec::cages(18, FaceSet::PentagonHexagonHeptagon { heptagons: 1 }, false).is_err());
    assert!(FaceSet::parse("5-6-7", None).is_err());
    assert!(FaceSet::parse("4-6", Some(1)).is_err());
    assert_eq!(
        FaceSet::parse("5-6-7", Some(2)),
        Ok(FaceSet::PentagonHexagonHeptagon { heptagons: 2 })
    );
    assert_eq!(
        FaceSet::from_label("5-6-7h2").unwrap().to_string(),
        "5-6-7h2"
    );
}

#[test]
#[ignore = "about 1 min on 2 threads (2-core sandbox): square starts against every start, isolated 4-6 up to 120 atoms"]
fn square_starts_miss_isolated_4_6_cages_from_78_atoms_on() {
    // Completeness check (domain notes §9), extending the default test above (all 4-6 cages,
    // 8-60 atoms): a square-start search can only find fewer cages than the every-start one,
    // and the cages it misses are exactly those whose canonical spiral starts on a hexagon
    // (they have no closed spiral from a square). Measured: the two agree for isolated 4-6
    // up to 76 atoms; at 78 atoms square starts find 15 cages and every start 16.
    for n in (8..=120).step_by(2) {
        let restricted = count(n, BN, true, false);
        let every = cages(n, BN, true);
        let hexagon_first = every.iter().filter(|i| i.spiral.sizes()[0] == 6).count() as u64;
        assert_eq!(
            restricted + hexagon_first,
            every.len() as u64,
            "4-6 isolated C{n}"
        );
        if n <= 76 {
            assert_eq!(hexagon_first, 0, "4-6 isolated C{n}");
        }
    }
    assert!(cages(78, BN, true).iter().any(|i| i.spiral.sizes()[0] == 6));
}
