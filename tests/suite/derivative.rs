//! Checks of derivative patterns (listing, counting, symmetry, Kekulé counts, Hückel levels and
//! built molecules) against published counts, independent brute force and nalgebra.

use cagerank::derivative::orbits::Search;
use cagerank::derivative::score::{default_order, PatternScore, Scorer};
use cagerank::derivative::structure::{self, Molecule};
use cagerank::derivative::{
    burnside, find_pattern, huckel, kekule, Addend, BondFilter, DeriveError, Hetero, Kind, Parent,
    PatternId, Problem,
};
use cagerank::enumerate::{find_by_number, Spec};
use cagerank::spiral::Spiral;
use num_bigint::BigUint;
use std::ops::ControlFlow;

/// The molecule's V2000 block as the export's SDF writer renders it, without the closing `$$$$`.
fn molblock(m: &Molecule, name: &str) -> String {
    let mut out = Vec::new();
    cagerank::export::sdf::write_molecule(
        &mut out,
        &cagerank::export::sdf::MoleculeRecord {
            name,
            comment: "",
            atoms: &m.atoms,
            bonds: &m.bonds,
            fields: &[],
        },
    )
    .expect("writes to memory");
    let text = String::from_utf8(out).expect("SDF text is UTF-8");
    text.strip_suffix("$$$$\n")
        .expect("a record ends with $$$$")
        .to_string()
}

const H: Kind = Kind::Addend(Addend::H);

fn c60() -> Parent {
    // Atlas spiral of C60-Ih (memory, Fowler & Manolopoulos 1995; domain notes section 2).
    let s = Spiral::from_pentagon_indices(60, &[1, 7, 9, 11, 13, 15, 18, 20, 22, 24, 26, 32])
        .expect("C60-Ih spiral winds");
    Parent::new("C60:IPR-1", &s).expect("C60 has a spiral")
}

fn parent(atoms: u64, ipr: bool, number: u64) -> Parent {
    let spec = Spec::fullerene(atoms, ipr).expect("valid size");
    let iso = find_by_number(&spec, number).expect("isomer exists");
    Parent::new(format!("C{atoms}:{number}"), &iso.spiral).expect("has a spiral")
}

fn c20() -> Parent {
    parent(20, false, 1)
}

/// C28-Td: of the two C28 isomers the one with 24 automorphisms.
fn c28_td() -> Parent {
    (1..=2)
        .map(|n| parent(28, false, n))
        .find(|p| p.automorphisms.len() == 24)
        .expect("C28 has a Td isomer")
}

/// C76-D2, the first isomer of the IPR list (chiral parent).
fn c76_d2() -> Parent {
    parent(76, true, 1)
}

fn search(p: &Parent, kind: Kind, k: usize) -> Search {
    Search::new(p, &Problem::new(kind, k)).expect("valid problem")
}

fn burnside_count(p: &Parent, kind: Kind, k: usize) -> u64 {
    u64::try_from(&burnside::count(&search(p, kind, k))).expect("fits")
}

fn listed(s: &Search) -> Vec<(Vec<u32>, Vec<usize>)> {
    let mut out = Vec::new();
    s.stream(
        |f| (f.sites.clone(), f.stabiliser.clone()),
        |_, x| {
            out.push(x);
            ControlFlow::Continue(())
        },
    );
    out
}

fn scores(p: &Parent, s: &Search, charge: i32) -> Vec<PatternScore> {
    let scorer = Scorer::new(p, s, charge).expect("closed shell");
    let mut out = Vec::new();
    s.stream(
        |f| f.clone(),
        |n, f| {
            out.push(scorer.score(&f, n, format!("#{n}")));
            ControlFlow::Continue(())
        },
    );
    out
}

fn binomial(n: u64, k: u64) -> u64 {
    (0..k).fold(1, |acc, i| acc * (n - i) / (i + 1))
}

/// Perfect matchings of the cage without `removed`, by plain recursion (independent of the
/// Pfaffian code): match the lowest free atom with each free neighbour in turn.
fn brute_matchings(p: &Parent, removed: &[bool]) -> u64 {
    fn go(p: &Parent, used: &mut [bool]) -> u64 {
        let Some(v) = used.iter().position(|&u| !u) else {
            return 1;
        };
        used[v] = true;
        let mut total = 0;
        for u in p.cage.rotation()[v] {
            if !used[u as usize] {
                used[u as usize] = true;
                total += go(p, used);
                used[u as usize] = false;
            }
        }
        used[v] = false;
        total
    }
    go(p, &mut removed.to_vec())
}

fn removed_atoms(p: &Parent, atoms: &[u32]) -> Vec<bool> {
    let mut r = vec![false; p.cage.atoms()];
    for &a in atoms {
        r[a as usize] = true;
    }
    r
}

#[test]
fn c60h2_has_23_isomers() {
    // Clare & Kepert, J. Mol. Struct. THEOCHEM 303 (1994) 1.
    let p = c60();
    assert_eq!(burnside_count(&p, H, 2), 23);
    assert_eq!(search(&p, H, 2).count_by_listing(), 23);
}

#[test]
fn c60_66_bis_adducts_are_8_regioisomers() {
    // Common practice, no source: cis-1..3, e, trans-1..4.
    let p = c60();
    let kind = Kind::Bridge(BondFilter::HexHex);
    assert_eq!(burnside_count(&p, kind, 2), 8);
    assert_eq!(search(&p, kind, 2).count_by_listing(), 8);
}

#[test]
fn c60x2_with_mirror_images_apart_is_37() {
    // Domain notes section 10: C60X2 counted with mirror images apart gives 37.
    let mut p = c60();
    p.automorphisms.retain(|a| a.proper);
    assert_eq!(p.automorphisms.len(), 60);
    assert_eq!(burnside_count(&p, H, 2), 37);
    assert_eq!(search(&p, H, 2).count_by_listing(), 37);
}

#[test]
fn c60h2_chirality_flags_agree_with_37() {
    // 23 isomers under Ih and 37 under I (domain notes section 10): each chiral isomer splits
    // into two enantiomers, so 37 - 23 = 14 of the 23 must be chiral.
    let p = c60();
    let all = scores(&p, &search(&p, H, 2), 0);
    assert_eq!(all.iter().filter(|s| s.chiral).count(), 14);
}

#[test]
fn listing_matches_burnside_on_many_cages_including_chiral_parents() {
    // Burnside's lemma (Balasubramanian, J. Phys. Chem. 97 (1993) 6990) against orderly listing.
    let cases: Vec<(Parent, Vec<(Kind, usize)>)> = vec![
        (
            c20(),
            (1..=6)
                .map(|k| (H, k))
                .chain((1..=4).map(|k| (Kind::Bridge(BondFilter::Any), k)))
                .collect(),
        ),
        (
            c28_td(),
            (1..=5)
                .map(|k| (H, k))
                .chain((1..=3).map(|k| (Kind::Bridge(BondFilter::Any), k)))
                .collect(),
        ),
        (
            parent(24, false, 1),
            (1..=5).map(|k| (Kind::Substitute(Hetero::N), k)).collect(),
        ),
        (
            c76_d2(),
            (1..=3)
                .map(|k| (H, k))
                .chain([(Kind::Bridge(BondFilter::HexHex), 2)])
                .collect(),
        ),
        (
            c60(),
            vec![
                (H, 3),
                (Kind::Bridge(BondFilter::Any), 2),
                (Kind::Bridge(BondFilter::PentHex), 2),
                (Kind::Bridge(BondFilter::HexHex), 3),
            ],
        ),
    ];
    for (p, runs) in &cases {
        for &(kind, k) in runs {
            let s = search(p, kind, k);
            assert_eq!(
                BigUint::from(s.count_by_listing()),
                burnside::count(&s),
                "{} {} k={k}",
                p.label,
                kind.token()
            );
        }
    }
}

#[test]
fn orbit_sizes_add_up_to_all_labelled_placements() {
    // Every labelled k-set lies in exactly one orbit: the orbit sizes sum to C(n, k) for atoms,
    // and to the number of k-matchings (counted by brute force here) for bridges.
    for p in [c20(), c28_td(), c76_d2()] {
        let n = p.cage.atoms() as u64;
        for k in 1..=3 {
            let s = search(&p, H, k);
            let order = s.group.order();
            let total: u64 = listed(&s)
                .iter()
                .map(|(_, stab)| {
                    // stabiliser order x orbit size = group order
                    assert_eq!(order % stab.len(), 0);
                    (order / stab.len()) as u64
                })
                .sum();
            assert_eq!(total, binomial(n, k as u64), "{} k={k}", p.label);
        }
    }
    let p = c20();
    let edges = p.cage.edges().to_vec();
    let disjoint_pairs = (0..edges.len())
        .flat_map(|a| (a + 1..edges.len()).map(move |b| (a, b)))
        .filter(|&(a, b)| edges[a].iter().all(|x| !edges[b].contains(x)))
        .count() as u64;
    let s = search(&p, Kind::Bridge(BondFilter::Any), 2);
    let total: u64 = listed(&s)
        .iter()
        .map(|(_, stab)| (s.group.order() / stab.len()) as u64)
        .sum();
    assert_eq!(total, disjoint_pairs);
}

#[test]
fn stabiliser_order_times_orbit_is_group_order_and_stabiliser_fixes_the_pattern() {
    let p = c60();
    for (kind, k) in [(H, 3), (Kind::Bridge(BondFilter::HexHex), 2)] {
        let s = search(&p, kind, k);
        for (sites, stab) in listed(&s) {
            let mut seen = std::collections::BTreeSet::new();
            for perm in &s.group.perms {
                let mut image: Vec<u32> = sites.iter().map(|&x| perm[x as usize]).collect();
                image.sort_unstable();
                seen.insert(image);
            }
            assert_eq!(seen.len() * stab.len(), s.group.order());
            assert_eq!(
                seen.iter().next(),
                Some(&sites),
                "listed form is the smallest image"
            );
        }
    }
}

#[test]
fn kekule_counts_of_remaining_graphs_match_brute_force() {
    // Independent recursion over matchings on C20, C24, C28-Td (all patterns up to k = 4) and
    // every C60 bis-adduct on atoms.
    let mut cases = vec![(c60(), 2)];
    for p in [c20(), parent(24, false, 1), c28_td()] {
        cases.push((p, 4));
    }
    for (p, kmax) in cases {
        for k in 1..=kmax {
            let s = search(&p, H, k);
            for (sites, _) in listed(&s) {
                let removed = removed_atoms(&p, &sites);
                let expected = brute_matchings(&p, &removed);
                assert_eq!(
                    kekule::count(&p.cage, &removed),
                    BigUint::from(expected),
                    "{} {sites:?}",
                    p.label
                );
                assert_eq!(kekule::structure(&p.cage, &removed).is_some(), expected > 0);
            }
        }
    }
}

#[test]
fn kekule_count_of_bridged_c60_matches_brute_force() {
    let p = c60();
    let s = search(&p, Kind::Bridge(BondFilter::Any), 2);
    for (sites, _) in listed(&s) {
        let atoms: Vec<u32> = sites
            .iter()
            .flat_map(|&e| p.cage.edges()[e as usize])
            .collect();
        let removed = removed_atoms(&p, &atoms);
        assert_eq!(
            kekule::count(&p.cage, &removed),
            BigUint::from(brute_matchings(&p, &removed))
        );
    }
}

#[test]
fn isolated_atom_makes_a_radical() {
    // C20 with the three neighbours of atom 0 and one far atom taken: atom 0 is left alone, so
    // the remaining 16 atoms have no perfect matching.
    let p = c20();
    let mut taken: Vec<u32> = p.cage.rotation()[0].to_vec();
    let far = (1..20u32)
        .find(|v| {
            !taken.contains(v)
                && !p.cage.rotation()[*v as usize]
                    .iter()
                    .any(|u| taken.contains(u) || *u == 0)
        })
        .expect("a far atom");
    taken.push(far);
    taken.sort_unstable();
    let removed = removed_atoms(&p, &taken);
    assert_eq!(kekule::count(&p.cage, &removed), BigUint::from(0u32));
    let s = search(&p, H, 4);
    let form = s.canonical_form(&taken);
    let all = scores(&p, &s, 0);
    let hit = all
        .iter()
        .find(|x| x.sites == form.iter().map(|v| v + 1).collect::<Vec<_>>())
        .expect("pattern listed");
    assert!(!hit.kekule_structure);
    assert!(
        hit.radical,
        "a neutral addition pattern without a Kekulé structure is a radical"
    );
    assert_eq!(hit.kekule, "0");
    assert!(all.iter().all(|x| x.radical != x.kekule_structure));
    let mut ranked = all.clone();
    ranked.sort_by(default_order);
    let first_radical = ranked
        .iter()
        .position(|x| !x.kekule_structure)
        .expect("a radical");
    assert!(
        ranked[first_radical..].iter().all(|x| !x.kekule_structure),
        "radicals rank last"
    );
}

#[test]
fn isolating_an_atom_of_c60_leaves_no_kekule_structure() {
    // A C60 pattern whose remaining graph is checked against brute force for a radical case:
    // the three neighbours of atom 0 plus a far atom.
    let p = c60();
    let mut taken: Vec<u32> = p.cage.rotation()[0].to_vec();
    taken.push(59);
    let removed = removed_atoms(&p, &taken);
    assert_eq!(brute_matchings(&p, &removed), 0);
    assert_eq!(kekule::count(&p.cage, &removed), BigUint::from(0u32));
}

#[test]
fn c60h2_ranked_first_is_the_1_2_adduct_on_a_66_bond() {
    // 1,2-C60H2 (addition across a 6:6 bond) is the isomer made (Henderson & Cahill, Science
    // 259 (1993) 1885, from memory) and computed lowest (Matsuzawa, Dixon & Fukunaga, J. Phys.
    // Chem. 96 (1992) 7594, from memory).
    let p = c60();
    let mut all = scores(&p, &search(&p, H, 2), 0);
    all.sort_by(default_order);
    let best = &all[0];
    let [a, b] = [best.sites[0] - 1, best.sites[1] - 1];
    let e = p
        .cage
        .edge_index(cagerank::cage::VertexId(a), cagerank::cage::VertexId(b))
        .expect("the two H sit on a bond");
    let faces = p.cage.edge_faces()[e.index()];
    assert!(faces.iter().all(|&f| p.cage.faces()[f as usize].len() == 6));
    assert_eq!(best.point_group.to_string(), "C2v");
    assert_eq!(best.orbit, 30, "one per 6:6 bond");
}

#[test]
fn weighted_huckel_matches_nalgebra() {
    // Independent eigensolver on the same Van-Catledge matrix (C58N2 and C58B2 patterns).
    let p = c60();
    for h in [Hetero::N, Hetero::B] {
        let s = search(&p, Kind::Substitute(h), 2);
        for (sites, _) in listed(&s).into_iter().take(5) {
            let removed = vec![false; 60];
            let mut hetero = vec![None; 60];
            for &x in &sites {
                hetero[x as usize] = Some(h);
            }
            let ours = huckel::spectrum(&p.cage, &removed, &hetero);
            let mut m = nalgebra::DMatrix::<f64>::zeros(60, 60);
            for v in 0..60 {
                m[(v, v)] = huckel::coulomb(hetero[v]);
            }
            for &[u, v] in p.cage.edges() {
                let k = huckel::resonance(hetero[u as usize], hetero[v as usize]);
                m[(u as usize, v as usize)] = k;
                m[(v as usize, u as usize)] = k;
            }
            let mut theirs: Vec<f64> = m.symmetric_eigenvalues().iter().copied().collect();
            theirs.sort_by(|a, b| b.total_cmp(a));
            for (a, b) in ours.iter().zip(&theirs) {
                assert!((a - b).abs() < 1e-9);
            }
        }
    }
}

#[test]
fn huckel_of_remaining_graphs_matches_nalgebra() {
    // Addends take atoms out: the spectrum is that of the induced subgraph (C60H4 patterns).
    let p = c60();
    let s = search(&p, H, 4);
    for (sites, _) in listed(&s).into_iter().step_by(97) {
        let removed = removed_atoms(&p, &sites);
        let ours = huckel::spectrum(&p.cage, &removed, &[None; 60]);
        let kept: Vec<usize> = (0..60).filter(|&v| !removed[v]).collect();
        let m = nalgebra::DMatrix::<f64>::from_fn(kept.len(), kept.len(), |i, j| {
            let (u, v) = (kept[i] as u32, kept[j] as u32);
            f64::from(u8::from(p.cage.rotation()[u as usize].contains(&v)))
        });
        let mut theirs: Vec<f64> = m.symmetric_eigenvalues().iter().copied().collect();
        theirs.sort_by(|a, b| b.total_cmp(a));
        assert_eq!(ours.len(), 56);
        for (a, b) in ours.iter().zip(&theirs) {
            assert!((a - b).abs() < 1e-9, "{sites:?}: {a} vs {b}");
        }
    }
}

#[test]
fn plain_carbon_levels_reduce_to_the_parent_spectrum() {
    // No addend, no heteroatom: the weighted matrix is the adjacency matrix, whose C60 HOMO
    // and LUMO are 0.6180 and -0.1386 (domain notes section 3).
    let p = c60();
    let values = huckel::spectrum(&p.cage, &[false; 60], &[None; 60]);
    let l = huckel::levels(&values, 30);
    assert!((l.homo - 0.618_034).abs() < 1e-5);
    assert!((l.lumo + 0.138_564).abs() < 1e-5);
}

#[test]
fn substitution_counts_and_electron_checks() {
    let p = c60();
    // C58N2 patterns are C60X2 patterns: 23 (Clare & Kepert 1994).
    let s = search(&p, Kind::Substitute(Hetero::N), 2);
    assert_eq!(burnside::count(&s), BigUint::from(23u32));
    // C59N is a radical (odd pi count, domain notes section 10): refused for a closed shell.
    let one = search(&p, Kind::Substitute(Hetero::N), 1);
    assert!(matches!(
        Scorer::new(&p, &one, 0),
        Err(DeriveError::OddElectrons { electrons: 61 })
    ));
    // The azafullerenium cation C59N+ is closed-shell.
    assert!(Scorer::new(&p, &one, 1).is_ok());
    // C60H1 too.
    let h1 = search(&p, H, 1);
    assert!(matches!(
        Scorer::new(&p, &h1, 0),
        Err(DeriveError::OddElectrons { .. })
    ));
}

#[test]
fn k_too_large_is_refused() {
    let p = c20();
    assert!(matches!(
        Search::new(&p, &Problem::new(H, 21)),
        Err(DeriveError::TooMany { available: 20, .. })
    ));
    assert!(Search::new(&p, &Problem::new(H, 0)).is_err());
    assert!(matches!(
        Search::new(&p, &Problem::new(Kind::Bridge(BondFilter::Any), 11)),
        Err(DeriveError::TooMany { available: 10, .. })
    ));
    let mut outside = Problem::new(H, 1);
    outside.allowed = Some(vec![3, 20]);
    assert!(matches!(
        Search::new(&p, &outside),
        Err(DeriveError::BadSite { .. })
    ));
}

#[test]
fn c60x10_count_is_exact_and_quick() {
    // Burnside's lemma by hand for Ih on C60 (120 elements): only the identity, the 15 C2
    // (30 two-cycles), the 15 mirrors (4 fixed atoms + 28 two-cycles), the 20 C3 and 20 S6
    // (20 three-cycles of atoms), the 24 C5 and 24 S10 (12 five-cycles / 6 ten-cycles) and the
    // inversion (30 two-cycles) fix 10-sets; the closed form below sums them.
    let p = c60();
    let start = std::time::Instant::now();
    let count = burnside::count(&search(&p, H, 10));
    assert!(start.elapsed().as_secs_f64() < 1.0);
    let c = |n: u64, k: u64| BigUint::from(binomial(n, k));
    let two_cycles = c(30, 5); // C2 and inversion: choose 5 of 30 pairs
    let mirror: BigUint = (0..=2u64)
        .map(|j| c(4, 2 * j) * c(28, 5 - j))
        .fold(BigUint::from(0u32), |a, b| a + b); // 2j fixed atoms and 5 - j pairs
    let c5 = c(12, 2); // two five-cycles
    let s10 = c(6, 1); // one ten-cycle
    let total = c(60, 10)
        + two_cycles.clone() * 15u32
        + two_cycles
        + mirror * 15u32
        + c5 * 24u32
        + s10 * 24u32;
    // C3 and S6: 20 three-cycles / six-cycles cannot make 10 atoms (10 is not a multiple of 3).
    assert_eq!(count, total / 120u32);
}

#[test]
fn pattern_ids_find_the_listed_pattern() {
    let p = c60();
    let s = search(&p, H, 2);
    let all = listed(&s);
    let id = PatternId::parse("C60:IPR-1+2H:7").expect("parses");
    let (_, found) = find_pattern(&p, &id).expect("exists");
    assert_eq!(found.sites, all[6].0);
    let forms: Vec<Vec<u32>> = all.iter().map(|x| x.0.clone()).rev().collect();
    let numbers = s.numbers_of(&forms);
    assert_eq!(numbers, (1..=23).rev().map(Some).collect::<Vec<_>>());
    let past = PatternId::parse("C60:IPR-1+2H:24").expect("parses");
    assert!(matches!(
        find_pattern(&p, &past),
        Err(DeriveError::NoSuchPattern { count: 23, .. })
    ));
}

#[test]
fn listing_is_the_same_on_one_and_two_threads() {
    let p = c60();
    let s = search(&p, H, 3);
    let run = |threads| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .expect("pool")
            .install(|| listed(&s))
    };
    assert_eq!(run(1), run(2));
}

#[test]
fn sequential_addition_counts_orbits_of_the_stabiliser() {
    // Adding one more H to 1,2-C60H2 (C2v, order 4): the 58 free atoms fall into orbits of the
    // C2v stabiliser; Burnside and listing agree, and orbit sizes add up to 58.
    let p = c60();
    let all = scores(&p, &search(&p, H, 2), 0);
    let mut ranked = all.clone();
    ranked.sort_by(default_order);
    let base: Vec<u32> = ranked[0].sites.iter().map(|x| x - 1).collect();
    let problem = Problem {
        kind: H,
        k: 1,
        allowed: None,
        base,
    };
    let s = Search::new(&p, &problem).expect("valid");
    assert_eq!(s.group.order(), 4);
    let listed = listed(&s);
    assert_eq!(BigUint::from(listed.len()), burnside::count(&s));
    let total: usize = listed.iter().map(|(_, st)| 4 / st.len()).sum();
    assert_eq!(total, 58);
}

#[test]
fn restricted_sites_use_the_setwise_stabiliser() {
    // Only the five atoms of one pentagon: the pentagon's stabiliser (C5v, order 10) acts, and
    // two of five cyclic positions fall into 2 classes (adjacent, not adjacent).
    let p = c60();
    let pentagon: Vec<u32> = p
        .cage
        .faces()
        .iter()
        .find(|f| f.len() == 5)
        .expect("a pentagon")
        .clone();
    let problem = Problem {
        kind: H,
        k: 2,
        allowed: Some(pentagon),
        base: Vec::new(),
    };
    let s = Search::new(&p, &problem).expect("valid");
    assert_eq!(s.group.order(), 10);
    assert_eq!(s.count_by_listing(), 2);
    assert_eq!(burnside::count(&s), BigUint::from(2u32));
}

fn check_molecule(m: &Molecule, cage_atoms: usize) {
    let bonded = |a: usize, b: usize| {
        m.bonds
            .iter()
            .any(|(x, _)| *x == [a.min(b) as u32, a.max(b) as u32])
    };
    for (i, a) in m.atoms.iter().enumerate() {
        // Valence: bond orders plus |charge| and radical electrons make 4 for C, 1 for H, F, Cl,
        // 3 for N and B (neutral, three-coordinate).
        let order: i32 = m
            .bonds
            .iter()
            .filter(|(b, _)| b.contains(&(i as u32)))
            .map(|(_, o)| i32::from(*o))
            .sum();
        let expected = match a.element {
            "C" => 4,
            "N" | "B" => 3,
            _ => 1,
        };
        let extra = i32::from(a.charge.unsigned_abs()) + i32::from(a.radical);
        assert_eq!(order + extra, expected, "atom {i} {}", a.element);
        // Addend atoms: bond length to their carbon as set, and no clash with other atoms.
        if i >= cage_atoms {
            for (j, b) in m.atoms.iter().enumerate() {
                let d = dist(a.position, b.position);
                if j != i && !bonded(i, j) {
                    assert!(d > 0.9, "atoms {i} and {j} are {d:.2} Å apart");
                }
            }
        }
    }
    for ([a, b], _) in &m.bonds {
        let d = dist(m.atoms[*a as usize].position, m.atoms[*b as usize].position);
        assert!((0.95..1.9).contains(&d), "bond {a}-{b} is {d:.3} Å");
    }
}

fn dist(a: [f64; 3], b: [f64; 3]) -> f64 {
    ((a[0] - b[0]).powi(2) + (a[1] - b[1]).powi(2) + (a[2] - b[2]).powi(2)).sqrt()
}

#[test]
fn built_molecules_have_sane_bonds_and_valences() {
    let p = c60();
    let coords = cagerank::geometry::relax(&p.cage).expect("relaxes").coords;
    for (kind, k, charge) in [
        (Kind::Addend(Addend::H), 2, 0),
        (Kind::Addend(Addend::F), 4, 0),
        (Kind::Addend(Addend::Cl), 2, 0),
        (Kind::Bridge(BondFilter::HexHex), 2, 0),
        (Kind::Substitute(Hetero::N), 2, 0),
        (Kind::Substitute(Hetero::B), 2, 0),
        (Kind::Substitute(Hetero::N), 1, 1),
    ] {
        let s = search(&p, kind, k);
        for (sites, _) in listed(&s).into_iter().take(4) {
            let m = structure::build(&p, &s, &sites, &coords, charge);
            check_molecule(&m, 60);
            assert_eq!(m.charge(), charge);
            let text = molblock(&m, "test");
            assert!(text.ends_with("M  END\n"));
        }
    }
    // Addend bond lengths are the ones asked for.
    let s = search(&p, Kind::Addend(Addend::F), 1);
    let m = structure::build(&p, &s, &[0], &coords, 0);
    let f = m
        .atoms
        .iter()
        .position(|a| a.element == "F")
        .expect("F placed");
    assert!((dist(m.atoms[f].position, m.atoms[0].position) - structure::C_F).abs() < 1e-9);
    assert!(
        m.atoms[1..60].iter().any(|a| a.radical),
        "C60F is a radical"
    );
}

#[test]
fn c60_66_bis_adduct_point_groups() {
    // The eight 6:6 bis-adducts: cis-1, cis-2, e and trans-4 are Cs; cis-3, trans-2 and trans-3
    // are C2; trans-1 is D2h (Hirsch, Lamparth & Karfunkel, Angew. Chem. Int. Ed. 33 (1994)
    // 437, from memory).
    let p = c60();
    let s = search(&p, Kind::Bridge(BondFilter::HexHex), 2);
    let mut groups: Vec<String> = scores(&p, &s, 0)
        .iter()
        .map(|x| x.point_group.to_string())
        .collect();
    groups.sort();
    assert_eq!(groups, ["C2", "C2", "C2", "Cs", "Cs", "Cs", "Cs", "D2h"]);
}

fn cagerank(args: &[&str], threads: &str) -> std::process::Output {
    std::process::Command::new(env!("CARGO_BIN_EXE_cagerank"))
        .args(args)
        .env("RAYON_NUM_THREADS", threads)
        .output()
        .expect("binary runs")
}

#[test]
fn cli_lists_c60h2_as_csv_identically_on_one_and_two_threads() {
    let args = ["derive", "C60:IPR-1", "--add", "2", "--format", "csv"];
    let one = cagerank(&args, "1");
    let two = cagerank(&args, "2");
    assert!(one.status.success());
    assert_eq!(one.stdout, two.stdout);
    let text = String::from_utf8(one.stdout).expect("utf-8");
    let lines: Vec<&str> = text.lines().collect();
    // Clare & Kepert (1994): 23 isomers, one row each after the header.
    assert_eq!(lines.len(), 24);
    assert!(lines[1].starts_with("1,C60:IPR-1+2H:"));
    // --top keeps only the best rows while listing; they must be the head of the full ranking.
    let top = cagerank(
        &[
            "derive",
            "C60:IPR-1",
            "--add",
            "2",
            "--format",
            "csv",
            "--top",
            "4",
        ],
        "2",
    );
    let top = String::from_utf8(top.stdout).expect("utf-8");
    assert_eq!(top.lines().collect::<Vec<_>>(), lines[..5]);
    let by_id = cagerank(
        &[
            "derive", "C60:1", "--ipr", "--add", "2", "--sort", "id", "--format", "json",
        ],
        "2",
    );
    let ids: Vec<String> = String::from_utf8(by_id.stdout)
        .expect("utf-8")
        .lines()
        .map(|l| {
            let v: serde_json::Value = serde_json::from_str(l).expect("JSON line");
            v["id"].as_str().expect("id").to_string()
        })
        .collect();
    assert_eq!(
        ids,
        (1..=23)
            .map(|n| format!("C60:IPR-1+2H:{n}"))
            .collect::<Vec<_>>()
    );
}

#[test]
fn cli_counts_and_sequential_ids() {
    let out = cagerank(
        &[
            "derive",
            "C60:IPR-1",
            "--add",
            "10",
            "--count-only",
            "--format",
            "json",
        ],
        "2",
    );
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).expect("JSON");
    let count: u64 = v["patterns"]
        .as_str()
        .expect("string")
        .parse()
        .expect("number");
    let p = c60();
    assert_eq!(BigUint::from(count), burnside::count(&search(&p, H, 10)));
    // Two more H on the best C60H2: every result is named in the parent's C60H4 list.
    let seq = cagerank(
        &[
            "derive",
            "C60:IPR-1",
            "--add",
            "2",
            "--onto",
            "C60:IPR-1+2H:5",
            "--format",
            "csv",
        ],
        "2",
    );
    assert!(
        seq.status.success(),
        "{}",
        String::from_utf8_lossy(&seq.stderr)
    );
    let text = String::from_utf8(seq.stdout).expect("utf-8");
    assert!(text.lines().skip(1).all(|l| l
        .split(',')
        .nth(1)
        .is_some_and(|id| id.starts_with("C60:IPR-1+4H:"))));
    // Spiral input names the parent by its list number.
    let sp = cagerank(
        &[
            "derive",
            "C60",
            "--spiral",
            "1,7,9,11,13,15,18,20,22,24,26,32",
            "--add",
            "2",
            "--on",
            "66",
            "--count-only",
        ],
        "2",
    );
    assert_eq!(
        String::from_utf8_lossy(&sp.stdout).trim(),
        "C60:IPR-1+2CH2@66: 8 patterns (symmetry group of order 120)"
    );
}

#[test]
fn cli_bad_input_gets_one_line_and_exit_2() {
    for args in [
        vec!["derive", "C60:IPR-1", "--add", "61"],
        vec!["derive", "C60:IPR-1", "--add", "1"],
        vec!["derive", "C60:IPR-1", "--add", "1", "--substitute", "n"],
        vec!["derive", "C60:IPR-2", "--add", "2"],
        vec![
            "derive",
            "C60:IPR-1",
            "--add",
            "2",
            "--onto",
            "C60:IPR-1+2H:99",
        ],
        vec![
            "derive",
            "C60:IPR-1",
            "--add",
            "2",
            "--onto",
            "C60:IPR-1+2Q:1",
        ],
        vec![
            "derive",
            "C60:IPR-1",
            "--add",
            "2",
            "--onto",
            "C70:IPR-1+2H:1",
        ],
        vec!["derive", "C60:IPR-1", "--add", "2", "--sites", "1,1,5"],
        vec!["derive", "C60:IPR-1", "--add", "2", "--sites", "0,61"],
        vec![
            "derive",
            "C60:IPR-1",
            "--add",
            "2",
            "--substitute",
            "b",
            "--on",
            "bonds",
        ],
        vec!["derive", "C60:IPR-1", "--add", "31", "--on", "bonds"],
        vec!["derive", "C60:IPR-1", "--add", "12"],
        vec!["derive", "C60:IPR-1", "--add", "2", "--charge", "-60"],
    ] {
        let out = cagerank(&args, "2");
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{args:?}: {err}");
        assert_eq!(err.trim().lines().count(), 1, "{args:?}: {err}");
    }
}

/// The molecules of `tests/data/derivatives.sdf`, which `scripts/check_derivatives.py` feeds to
/// RDKit (its verdict is committed as `scripts/check_derivatives.out`): name, kind, k, pattern
/// number in canonical order, charge.
const SDF_CASES: [(&str, Kind, usize, u64, i32); 9] = [
    ("C60H2 1,2 (6:6)", Kind::Addend(Addend::H), 2, 5, 0),
    ("C60F4", Kind::Addend(Addend::F), 4, 217, 0),
    ("C60Cl2", Kind::Addend(Addend::Cl), 2, 3, 0),
    (
        "C60(CH2)2 trans-1",
        Kind::Bridge(BondFilter::HexHex),
        2,
        8,
        0,
    ),
    ("C58N2", Kind::Substitute(Hetero::N), 2, 5, 0),
    ("C58B2", Kind::Substitute(Hetero::B), 2, 7, 0),
    ("C59N+", Kind::Substitute(Hetero::N), 1, 1, 1),
    ("C60H radical", Kind::Addend(Addend::H), 1, 1, 0),
    ("C60H2 dianion", Kind::Addend(Addend::H), 2, 5, -2),
];

fn reference_molecules() -> Vec<(String, Molecule)> {
    let p = c60();
    let coords = cagerank::geometry::relax(&p.cage).expect("relaxes").coords;
    SDF_CASES
        .iter()
        .map(|&(name, kind, k, number, charge)| {
            let s = search(&p, kind, k);
            let found = s.nth(number).expect("pattern exists");
            let id = format!("C60:IPR-1+{k}{}:{number}", kind.token());
            let m = structure::build(&p, &s, &found.sites, &coords, charge);
            (format!("{id} {name}"), m)
        })
        .collect()
}

fn sdf_path() -> std::path::PathBuf {
    std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/derivatives.sdf")
}

/// Connection table of a molfile: element symbols, bond lines and property lines (coordinates
/// left out, as they may differ in the last digit between machines).
fn connection_table(molfile: &str) -> Vec<String> {
    let lines: Vec<&str> = molfile.lines().collect();
    let atoms: usize = lines[3][..3].trim().parse().expect("counts line");
    lines[3..]
        .iter()
        .enumerate()
        .map(|(i, l)| {
            if (1..=atoms).contains(&i) {
                l[31..].to_string()
            } else {
                l.to_string()
            }
        })
        .collect()
}

#[test]
#[ignore = "writes tests/data/derivatives.sdf for scripts/check_derivatives.py; run by hand"]
fn write_reference_sdf() {
    let mut text = String::new();
    for (name, m) in reference_molecules() {
        text.push_str(&molblock(&m, &name));
        text.push_str("$$$$\n");
    }
    std::fs::write(sdf_path(), text).expect("fixture written");
}

#[test]
fn reference_sdf_matches_what_the_library_builds() {
    // The committed SDF is what RDKit sanitised (scripts/check_derivatives.out); its
    // connection tables must still be what the library builds.
    let committed = std::fs::read_to_string(sdf_path()).expect("fixture present");
    let records: Vec<&str> = committed
        .split("$$$$\n")
        .filter(|r| !r.is_empty())
        .collect();
    let built = reference_molecules();
    assert_eq!(records.len(), built.len());
    for (record, (name, m)) in records.iter().zip(&built) {
        let now = molblock(m, name);
        assert_eq!(connection_table(record), connection_table(&now), "{name}");
    }
}

#[test]
fn identify_recovers_the_parent_when_addends_are_ignored() {
    // The molfile of a built derivative, read back by `identify` with the addend element
    // ignored, is C60-Ih again: the same canonical spiral as the parent.
    use cagerank::identify::{self, parse::Format};
    let p = c60();
    let coords = cagerank::geometry::relax(&p.cage).expect("relaxes").coords;
    for (kind, k, element) in [
        (Kind::Addend(Addend::H), 2, "H"),
        (Kind::Addend(Addend::F), 4, "F"),
        (Kind::Addend(Addend::Cl), 2, "Cl"),
    ] {
        let s = search(&p, kind, k);
        for (sites, _) in listed(&s).into_iter().take(3) {
            let m = structure::build(&p, &s, &sites, &coords, 0);
            let text = molblock(&m, "check") + "$$$$\n";
            let read = identify::read(text.as_bytes(), Some(Format::Sdf)).expect("parses");
            let options = identify::Options {
                ignore: identify::parse_element_list(element).expect("element"),
                ..identify::Options::default()
            };
            let id = identify::identify(&read[0], &options).expect("a cage");
            assert_eq!(id.ignored, k);
            let canonical = id.canonical.expect("spiral").spiral;
            assert_eq!(canonical, p.spiral, "{element} {sites:?}");
        }
    }
}

#[test]
fn c60h2_on_a_bond_keeps_the_kekule_structures_with_that_bond_double() {
    // Removing both atoms of a bond leaves exactly the Kekulé structures in which the bond is
    // double: 12500 x 11/25 = 5500 for a 6:6 bond and 12500 x 7/25 = 3500 for a 6:5 bond
    // (Pauling bond orders of C60, domain notes section 3; 12500 from Klein et al., JACS 108
    // (1986) 1301).
    let p = c60();
    for (e, &[u, v]) in p.cage.edges().iter().enumerate() {
        let hexagons = p.cage.edge_faces()[e]
            .iter()
            .filter(|&&f| p.cage.faces()[f as usize].len() == 6)
            .count();
        let expected = if hexagons == 2 { 5500u32 } else { 3500 };
        let removed = removed_atoms(&p, &[u, v]);
        assert_eq!(kekule::count(&p.cage, &removed), BigUint::from(expected));
    }
}

// ---- show, export and draw of pattern IDs (the command line end to end) ----

fn temp_dir(name: &str) -> std::path::PathBuf {
    let dir = std::env::temp_dir().join(format!("cagerank-derivint-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("temp dir");
    dir
}

/// Runs the binary with the repository's catalogues (so parents are found by index) and two
/// threads; returns exit code, stdout, stderr.
fn run(args: &[&str]) -> (i32, String, String) {
    let catalogue = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("catalogues");
    let out = std::process::Command::new(env!("CARGO_BIN_EXE_cagerank"))
        .args(args)
        .env("CAGERANK_CATALOGUE", catalogue)
        .env("RAYON_NUM_THREADS", "2")
        .output()
        .expect("binary runs");
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// Atomic numbers of the elements a derivative holds (periodic table).
fn atomic_number(element: &str) -> i64 {
    match element {
        "H" => 1,
        "B" => 5,
        "C" => 6,
        "N" => 7,
        "F" => 9,
        "Cl" => 17,
        other => panic!("unexpected element {other}"),
    }
}

/// Standard valences of neutral atoms (common practice, no source): C 4, N 3, B 3, H F Cl 1.
fn valence(element: &str) -> i32 {
    match element {
        "C" => 4,
        "N" | "B" => 3,
        _ => 1,
    }
}

#[test]
fn show_of_a_pattern_gives_sites_symmetry_pi_system_and_rank() {
    // 1,2-C60H2 across a 6:6 bond: the isomer formed in practice (Henderson & Cahill, Science
    // 259 (1993) 1885, from memory), point group C2v (from memory, same paper), 58 pi centres,
    // Kekulé count 12500 x 11/25 = 5500 (Klein et al., JACS 108 (1986) 1301; 6:6 Pauling bond
    // order 11/25, domain notes section 3), first of the 23 C60H2 isomers (Clare & Kepert 1994)
    // in the default order.
    let (code, out, err) = run(&["show", "C60:IPR-1+2H:5", "--json"]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(out.trim()).expect("one JSON object");
    assert_eq!(v["id"], "C60:IPR-1+2H:5");
    assert_eq!(v["formula"], "C60H2");
    assert_eq!(v["point_group"], "C2v");
    assert_eq!(v["kekule"], "5500");
    assert_eq!(v["radical"], false);
    assert_eq!(v["pi_centres"], 58);
    assert_eq!(v["pi_electrons"], 58);
    assert_eq!(
        (v["rank"].as_u64(), v["rank_of"].as_u64()),
        (Some(1), Some(23))
    );
    assert_eq!(v["parent_number"], 1812);
    assert_eq!(
        v["stabiliser"].as_u64().unwrap() * v["orbit"].as_u64().unwrap(),
        120
    );
    let sites: Vec<u32> = v["sites"]
        .as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_u64().unwrap() as u32 - 1)
        .collect();
    let p = c60();
    let e = p
        .cage
        .edges()
        .iter()
        .position(|&[a, b]| [a, b] == [sites[0], sites[1]])
        .expect("the two H sit on one bond");
    assert!(p.cage.edge_faces()[e]
        .iter()
        .all(|&f| p.cage.faces()[f as usize].len() == 6));
    // The same scores as `derive` prints for that ID.
    let (_, listing, _) = run(&[
        "derive",
        "C60:IPR-1",
        "--add",
        "2",
        "--sort",
        "id",
        "--format",
        "json",
    ]);
    let row: serde_json::Value = listing
        .lines()
        .map(|l| serde_json::from_str::<serde_json::Value>(l).unwrap())
        .find(|r| r["id"] == "C60:IPR-1+2H:5")
        .expect("derive lists it");
    for key in [
        "homo",
        "lumo",
        "gap",
        "pi_energy",
        "kekule",
        "sites",
        "orbit",
    ] {
        assert_eq!(v[key], row[key], "{key}");
    }
    // The text block: the headings and labelled rows, the caution after.
    let (code, text, err) = run(&["show", "C60:1+2H:5", "--ipr"]);
    assert_eq!(code, 0, "{err}");
    for heading in [
        "identity",
        "symmetry",
        "pi system (remaining graph)",
        "electronic structure (Hückel, charge +0)",
        "ranking (default screening order, docs/derivatives.md)",
    ] {
        assert!(text.lines().any(|l| l == heading), "{heading}: {text}");
    }
    assert!(
        text.starts_with("C60:IPR-1+2H:5  C60H2  C2v  charge +0"),
        "{text}"
    );
    assert!(text.contains("  parent                         C60:IPR-1 = C60:all-1812"));
    assert!(text.contains("  HOMO, LUMO, gap (|beta|)"));
    assert!(
        text.contains("  rank in its list               1 of 23"),
        "{text}"
    );
    assert!(text.trim_end().ends_with("quantum chemistry."));
}

#[test]
fn show_of_substitution_and_bridges_names_parameters_and_bonds() {
    // C58N2: Van-Catledge (1980) pyridine-type parameters h_N 0.51, k_CN 1.02, k_NN 1.09
    // (domain notes section 8); HOMO and LUMO against nalgebra on the same weighted matrix.
    let (code, out, err) = run(&["show", "C60:IPR-1+2N:5", "--json"]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(out.trim()).expect("JSON");
    assert_eq!(v["formula"], "C58N2");
    assert_eq!(
        v["heteroatom_parameters"],
        "h_N 0.51, k_CN 1.02, k_NN 1.09 (Van-Catledge 1980)"
    );
    assert_eq!(v["pi_electrons"], 62);
    let p = c60();
    let n: Vec<usize> = v["atoms"]
        .as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_u64().unwrap() as usize - 1)
        .collect();
    let h = |x: usize| if n.contains(&x) { 0.51 } else { 0.0 };
    let mut m = nalgebra::DMatrix::<f64>::zeros(60, 60);
    for x in 0..60 {
        m[(x, x)] = h(x);
    }
    for &[a, b] in p.cage.edges() {
        let (a, b) = (a as usize, b as usize);
        let k = match (n.contains(&a), n.contains(&b)) {
            (false, false) => 1.0,
            (true, true) => 1.09,
            _ => 1.02,
        };
        m[(a, b)] = k;
        m[(b, a)] = k;
    }
    let mut x: Vec<f64> = m.symmetric_eigenvalues().iter().copied().collect();
    x.sort_by(|a, b| b.total_cmp(a));
    assert!((v["homo"].as_f64().unwrap() - x[30]).abs() < 1e-9);
    assert!((v["lumo"].as_f64().unwrap() - x[31]).abs() < 1e-9);
    // trans-1 bis-methano C60 across 6:6 bonds: D2h (Hirsch, Lamparth & Karfunkel 1994, from
    // memory), sites are bonds printed with their atoms.
    let (code, text, err) = run(&["show", "C60:IPR-1+2CH2@66:8"]);
    assert_eq!(code, 0, "{err}");
    assert!(
        text.starts_with("C60:IPR-1+2CH2@66:8  C62H4  D2h"),
        "{text}"
    );
    assert!(text.contains("  sites (bonds: atoms)"), "{text}");
    assert!(text.contains("2 6:6, 0 6:5, 0 5:5 bonds"), "{text}");
    // Every kind shows: formula counted by hand (C60 plus K addends, C60 plus K CH2 with 2K H,
    // 60 - K carbons and K heteroatoms) and the sites the pattern's list gives.
    for (id, _, formula) in EXPORTS {
        let (code, out, err) = run(&["show", id, "--json"]);
        assert_eq!(code, 0, "{id}: {err}");
        let v: serde_json::Value = serde_json::from_str(out.trim()).expect("JSON");
        assert_eq!(v["id"], id);
        assert_eq!(v["formula"], formula, "{id}");
        let (_, found) = find_pattern(&p, &PatternId::parse(id).unwrap()).unwrap();
        let sites: Vec<u64> = found.sites.iter().map(|&s| u64::from(s) + 1).collect();
        assert_eq!(v["sites"], serde_json::json!(sites), "{id}");
    }
    // C60H6 has 418470 patterns (Burnside, checked against listing above): too many to rank
    // for one `show`, which says so instead of scoring them all.
    let (code, text, err) = run(&["show", "C60:IPR-1+6H:1"]);
    assert_eq!(code, 0, "{err}");
    assert!(
        text.contains("  rank in its list               not computed: the list has more than 5000"),
        "{text}"
    );
}

/// One exported derivative to check: pattern ID, file stem, formula, atom addend to ignore
/// when identifying (None: drop the atoms after the cage, or read heteroatoms as carbon).
const EXPORTS: [(&str, &str, &str); 6] = [
    ("C60:IPR-1+2H:5", "C60_IPR-1+2H-5", "C60H2"),
    ("C60:IPR-1+4F:217", "C60_IPR-1+4F-217", "C60F4"),
    ("C60:IPR-1+2Cl:3", "C60_IPR-1+2Cl-3", "C60Cl2"),
    ("C60:IPR-1+2CH2@66:8", "C60_IPR-1+2CH2_66-8", "C62H4"),
    ("C60:IPR-1+2N:5", "C60_IPR-1+2N-5", "C58N2"),
    ("C60:IPR-1+2B:7", "C60_IPR-1+2B-7", "C58B2"),
];

/// Typical bond lengths, Å (Allen et al., J. Chem. Soc. Perkin Trans. 2 (1987) S1, from
/// memory): the addend bonds are placed at these; cage bonds come from the force field and
/// must lie near C60's 1.39 and 1.45 Å (Hedberg et al., Science 254 (1991) 410).
fn bond_length_ok(a: &str, b: &str, d: f64) -> bool {
    let mut pair = [a, b];
    pair.sort_unstable();
    match pair {
        ["C", "H"] => (d - 1.09).abs() < 0.01,
        ["C", "F"] => (d - 1.38).abs() < 0.01,
        ["C", "Cl"] => (d - 1.79).abs() < 0.01,
        ["C", "C"] | ["B", "C"] | ["C", "N"] | ["N", "N"] | ["B", "B"] => (1.35..1.52).contains(&d),
        _ => false,
    }
}

#[test]
fn export_of_patterns_writes_valid_molecules_that_identify_as_the_parent() {
    use cagerank::export::{sdf, xyz};
    use cagerank::identify::{self, parse::Format};
    let dir = temp_dir("export");
    let ids: Vec<&str> = EXPORTS.iter().map(|e| e.0).collect();
    let ids = ids.join(",") + ",C60:IPR-1";
    let out_dir = dir.to_str().unwrap();
    let (code, stdout, err) = run(&[
        "export",
        "--ids",
        &ids,
        "--format",
        "xyz,sdf,json,orca,cp2k",
        "--out",
        out_dir,
    ]);
    assert_eq!(code, 0, "{err}");
    assert!(stdout.contains("C60_IPR-1+2CH2_66-8.sdf"), "{stdout}");
    let manifest = std::fs::read_to_string(dir.join("manifest.csv")).unwrap();
    let rows: Vec<&str> = manifest.lines().collect();
    assert_eq!(rows.len(), 1 + EXPORTS.len() + 1, "{manifest}");
    let c60_spiral = c60().spiral;
    for (id, stem, formula) in EXPORTS {
        // The manifest row is named by the pattern ID and lists the files.
        let row = rows
            .iter()
            .find(|r| r.starts_with(&format!("{id},IPR,1812,1,")))
            .unwrap_or_else(|| panic!("row for {id}: {manifest}"));
        assert!(
            row.ends_with(&format!(
                "{stem}.xyz {stem}.sdf {stem}.json {stem}.orca.inp {stem}.cp2k.inp"
            )),
            "{row}"
        );
        // SDF: our reader gets elements, bonds and charges back; valences are satisfied and
        // bond lengths sane.
        let text = std::fs::read_to_string(dir.join(format!("{stem}.sdf"))).unwrap();
        let records = sdf::parse(&text).expect("our SDF reader reads it");
        let r = &records[0];
        assert_eq!(r.name, id);
        let mut orders = vec![0i32; r.elements.len()];
        for &(a, b, o) in &r.bonds {
            orders[a as usize] += i32::from(o);
            orders[b as usize] += i32::from(o);
            let d = dist(r.coords[a as usize], r.coords[b as usize]);
            let (ea, eb) = (&r.elements[a as usize], &r.elements[b as usize]);
            assert!(bond_length_ok(ea, eb, d), "{id}: {ea}-{eb} {d:.3} Å");
        }
        for (i, e) in r.elements.iter().enumerate() {
            let charge = r
                .charges
                .iter()
                .find(|c| c.0 == i as u32)
                .map_or(0, |c| c.1);
            assert_eq!(orders[i] + charge.abs(), valence(e), "{id}: atom {i} {e}");
        }
        let field = |name: &str| r.fields.iter().find(|f| f.0 == name).map(|f| f.1.clone());
        assert_eq!(field("formula").as_deref(), Some(formula));
        assert_eq!(field("parent").as_deref(), Some("C60:IPR-1"));
        // XYZ: the same atoms in the same order.
        let x = xyz::parse(&std::fs::read_to_string(dir.join(format!("{stem}.xyz"))).unwrap())
            .expect("our XYZ reader reads it");
        assert_eq!(x.elements, r.elements);
        for (a, b) in x.coords.iter().zip(&r.coords) {
            assert!(dist(*a, *b) < 1e-3);
        }
        assert!(
            x.comment
                .starts_with(&format!("id={id} formula={formula} parent=C60:IPR-1")),
            "{}",
            x.comment
        );
        // Decks: charge 0 and the multiplicity of the electron count (sum of atomic numbers).
        let electrons: i64 = r.elements.iter().map(|e| atomic_number(e)).sum();
        let multiplicity = if electrons % 2 == 0 { 1 } else { 2 };
        let orca = std::fs::read_to_string(dir.join(format!("{stem}.orca.inp"))).unwrap();
        assert!(
            orca.contains(&format!("* xyz 0 {multiplicity}\n")),
            "{orca}"
        );
        let atom_lines = orca
            .lines()
            .filter(|l| l.starts_with("  ") && l.split_whitespace().count() == 4)
            .count();
        assert_eq!(atom_lines, r.elements.len());
        let json: serde_json::Value = serde_json::from_str(
            &std::fs::read_to_string(dir.join(format!("{stem}.json"))).unwrap(),
        )
        .unwrap();
        assert_eq!(json["electrons"].as_i64(), Some(electrons));
        assert_eq!(json["multiplicity"].as_u64(), Some(multiplicity));
        // identify recovers C60-Ih: atom addends ignored by element, bridge atoms (written after
        // the cage) dropped, heteroatoms read as the carbons they replace.
        let mut structure =
            identify::read(text.as_bytes(), Some(Format::Sdf)).expect("reads")[0].clone();
        let mut options = identify::Options::default();
        match formula {
            "C62H4" => structure.atoms.truncate(60),
            "C58N2" | "C58B2" => structure
                .atoms
                .iter_mut()
                .for_each(|a| a.element = "C".into()),
            _ => options.ignore = vec![structure.atoms[60].element.clone()],
        }
        let found = identify::identify(&structure, &options).expect("a cage");
        assert_eq!(found.canonical.expect("spiral").spiral, c60_spiral, "{id}");
    }
    // CP2K: each element its own kind, the pseudopotential's valence matching the element.
    let cp2k = std::fs::read_to_string(dir.join("C60_IPR-1+2Cl-3.cp2k.inp")).unwrap();
    assert!(
        cp2k.contains("&KIND Cl\n      BASIS_SET ${BASIS}\n      POTENTIAL GTH-PBE-q7\n"),
        "{cp2k}"
    );
    let cp2k = std::fs::read_to_string(dir.join("C60_IPR-1+2H-5.cp2k.inp")).unwrap();
    assert!(cp2k.contains("POTENTIAL GTH-PBE-q1"), "{cp2k}");
    // The identify command itself, with --ignore-elements H on the exported file.
    let sdf_path = dir.join("C60_IPR-1+2H-5.sdf");
    let (code, out, err) = run(&[
        "identify",
        sdf_path.to_str().unwrap(),
        "--ignore-elements",
        "H",
        "--json",
    ]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(out.lines().next().unwrap()).unwrap();
    assert_eq!(v["ignored_atoms"], 2);
    assert!(
        v["ids"]
            .as_array()
            .unwrap()
            .iter()
            .any(|i| i == "C60:IPR-1"),
        "{out}"
    );
    std::fs::remove_dir_all(&dir).unwrap();
}

/// The fields of one CSV line (RFC 4180 quoting: the spiral column holds commas).
fn csv_fields(line: &str) -> Vec<String> {
    let mut fields = vec![String::new()];
    let mut quoted = false;
    let mut chars = line.chars().peekable();
    while let Some(c) = chars.next() {
        match c {
            '"' if quoted && chars.peek() == Some(&'"') => {
                chars.next();
                fields.last_mut().unwrap().push('"');
            }
            '"' => quoted = !quoted,
            ',' if !quoted => fields.push(String::new()),
            _ => fields.last_mut().unwrap().push(c),
        }
    }
    fields
}

#[test]
fn export_of_a_charged_pattern_and_the_same_bytes_on_one_and_two_threads() {
    // C59N+ (azafullerenium): closed shell, 59 x 6 + 7 - 1 = 360 electrons, a singlet; the
    // positive charge sits on a carbon (Hummelen et al., Science 269 (1995) 1554, from memory,
    // for C59N+ as a closed-shell cation).
    let one = temp_dir("charged-1");
    let two = temp_dir("charged-2");
    for (dir, threads) in [(&one, "1"), (&two, "2")] {
        let out = std::process::Command::new(env!("CARGO_BIN_EXE_cagerank"))
            .args([
                "export",
                "--ids",
                "C60:IPR-1+1N:1",
                "--charge",
                "1",
                "--format",
                "sdf,gaussian",
                "--out",
                dir.to_str().unwrap(),
            ])
            .env("RAYON_NUM_THREADS", threads)
            .output()
            .unwrap();
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
    }
    for name in ["C60_IPR-1+1N-1.sdf", "C60_IPR-1+1N-1.gjf", "manifest.csv"] {
        assert_eq!(
            std::fs::read(one.join(name)).unwrap(),
            std::fs::read(two.join(name)).unwrap(),
            "{name}"
        );
    }
    let text = std::fs::read_to_string(one.join("C60_IPR-1+1N-1.sdf")).unwrap();
    let r = &cagerank::export::sdf::parse(&text).unwrap()[0];
    assert_eq!(r.charges.len(), 1);
    assert_eq!(r.charges[0].1, 1);
    assert_eq!(r.elements[r.charges[0].0 as usize], "C");
    let gjf = std::fs::read_to_string(one.join("C60_IPR-1+1N-1.gjf")).unwrap();
    assert!(gjf.lines().any(|l| l == "1 1"), "{gjf}");
    // The manifest calls it closed-shell although its 59 carbons have no Kekulé structure.
    let manifest = std::fs::read_to_string(one.join("manifest.csv")).unwrap();
    let header = csv_fields(manifest.lines().next().unwrap());
    let row = csv_fields(manifest.lines().nth(1).unwrap());
    let column = |name: &str| row[header.iter().position(|h| h == name).unwrap()].clone();
    assert_eq!(column("id"), "C60:IPR-1+1N:1");
    assert_eq!(column("shell"), "closed", "{manifest}");
    std::fs::remove_dir_all(&one).unwrap();
    std::fs::remove_dir_all(&two).unwrap();
}

#[test]
fn draw_of_patterns_marks_their_sites_with_a_legend() {
    let dir = temp_dir("draw");
    for (id, legend, bonds) in [
        ("C60:IPR-1+2H:5", "2 H addends", false),
        ("C60:IPR-1+4F:217", "4 F addends", false),
        ("C60:IPR-1+2Cl:3", "2 Cl addends", false),
        ("C60:IPR-1+2CH2@66:8", "2 CH2 bridges", true),
        ("C60:IPR-1+2N:5", "2 N in place of C", false),
        ("C60:IPR-1+2B:7", "2 B in place of C", false),
        ("C60:IPR-1+1H:1", "1 H addend", false),
    ] {
        let path = dir.join("x.svg");
        let (code, _, err) = run(&["draw", id, "-o", path.to_str().unwrap()]);
        assert_eq!(code, 0, "{id}: {err}");
        let svg = std::fs::read_to_string(&path).unwrap();
        assert!(svg.contains(&format!("<title>{id}  ")), "{id}");
        assert!(svg.contains(&format!(">{legend}</text>")), "{id}: legend");
        // The marks are the pattern's own sites, as derive lists them (1-based atoms, 0-based
        // bond indices in the SVG's data-edge like the bond lines).
        let p = c60();
        let pattern = PatternId::parse(id).unwrap();
        let (_, found) = find_pattern(&p, &pattern).unwrap();
        let attrs = |class: &str, key: &str| -> Vec<u32> {
            svg.lines()
                .filter(|l| l.contains(&format!("class=\"{class}\"")))
                .map(|l| {
                    let start = l.find(&format!("{key}=\"")).unwrap() + key.len() + 2;
                    l[start..start + l[start..].find('"').unwrap()]
                        .parse()
                        .unwrap()
                })
                .collect()
        };
        if bonds {
            assert_eq!(attrs("site-bond", "data-edge"), found.sites);
            let ends: Vec<u32> = found
                .sites
                .iter()
                .flat_map(|&e| p.cage.edges()[e as usize])
                .map(|a| a + 1)
                .collect();
            let mut marked = attrs("site", "data-atom");
            marked.sort_unstable();
            let mut ends = ends;
            ends.sort_unstable();
            assert_eq!(marked, ends);
        } else {
            let want: Vec<u32> = found.sites.iter().map(|s| s + 1).collect();
            assert_eq!(attrs("site", "data-atom"), want, "{id}");
        }
    }
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn pattern_ids_that_cannot_be_shown_exported_or_drawn_get_one_line_and_exit_2() {
    let dir = temp_dir("bad");
    let out = dir.join("x.svg");
    let out = out.to_str().unwrap();
    let d = dir.to_str().unwrap();
    for args in [
        vec!["show", "C60:IPR-1+2H:99"],
        vec!["show", "C60:IPR-1+2Q:1"],
        vec!["show", "C60:IPR-1+1H:1"],
        vec![
            "show",
            "C60:IPR-1+2H:5",
            "--spiral",
            "1,7,9,11,13,15,18,20,22,24,26,32",
        ],
        vec!["show", "C60:IPR-9+2H:1"],
        vec!["export", "--ids", "C60:IPR-1+1N:1", "--out", d],
        vec![
            "export",
            "--ids",
            "C60:IPR-1+2H:5",
            "--atoms",
            "70",
            "--out",
            d,
        ],
        vec!["draw", "C60:IPR-1+2H:24", "-o", out],
        vec!["draw", "C60:IPR-1+0H:1", "-o", out],
    ] {
        let (code, stdout, err) = run(&args);
        assert_eq!(code, 2, "{args:?}: {err}");
        assert!(stdout.is_empty(), "{args:?}: {stdout}");
        assert_eq!(err.trim().lines().count(), 1, "{args:?}: {err}");
    }
    assert!(!dir.join("x.svg").exists());
    assert!(!dir.join("manifest.csv").exists());
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn show_and_export_of_radical_patterns_flag_them_and_rank_them_last() {
    // C20H4: 58 patterns, 5 of them without a Kekulé structure (scripts/check_derivatives.out,
    // existence checked there with networkx's maximum matching). Those are radicals; the default
    // order puts them after the 53 others.
    let (code, listing, err) = run(&[
        "derive",
        "C20:all-1",
        "--add",
        "4",
        "--sort",
        "id",
        "--format",
        "json",
    ]);
    assert_eq!(code, 0, "{err}");
    let rows: Vec<serde_json::Value> = listing
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect();
    assert_eq!(rows.len(), 58);
    let radicals: Vec<String> = rows
        .iter()
        .filter(|r| r["radical"] == true)
        .map(|r| r["id"].as_str().unwrap().to_string())
        .collect();
    assert_eq!(radicals.len(), 5);
    for id in &radicals {
        let (code, out, err) = run(&["show", id, "--json"]);
        assert_eq!(code, 0, "{id}: {err}");
        let v: serde_json::Value = serde_json::from_str(out.trim()).unwrap();
        assert_eq!(v["radical"], true, "{id}");
        assert_eq!(v["kekule"], "0", "{id}");
        assert_eq!(v["rank_of"], 58);
        assert!(v["rank"].as_u64().unwrap() > 53, "{id}: {v}");
    }
    let (code, text, err) = run(&["show", &radicals[0]]);
    assert_eq!(code, 0, "{err}");
    assert!(
        text.contains("  radical                        yes: no Kekulé structure"),
        "{text}"
    );
    // Exported, its unpaired centres are `M  RAD` doublets (value 2) on carbons, and every
    // carbon's bond orders plus its unpaired electron make four.
    let dir = temp_dir("radical");
    let (code, _, err) = run(&[
        "export",
        "--ids",
        &radicals[0],
        "--format",
        "sdf",
        "--out",
        dir.to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{err}");
    let stem = PatternId::parse(&radicals[0]).unwrap().file_stem();
    let text = std::fs::read_to_string(dir.join(format!("{stem}.sdf"))).unwrap();
    let r = &cagerank::export::sdf::parse(&text).unwrap()[0];
    let mut unpaired = vec![0i32; r.elements.len()];
    for line in text.lines().filter(|l| l.starts_with("M  RAD")) {
        let numbers: Vec<usize> = line[6..]
            .split_whitespace()
            .map(|t| t.parse().unwrap())
            .collect();
        for pair in numbers[1..].chunks(2) {
            assert_eq!(pair[1], 2, "doublet: {line}");
            unpaired[pair[0] - 1] = 1;
        }
    }
    assert!(unpaired.iter().sum::<i32>() >= 2, "{text}");
    let mut orders = vec![0i32; r.elements.len()];
    for &(a, b, o) in &r.bonds {
        orders[a as usize] += i32::from(o);
        orders[b as usize] += i32::from(o);
    }
    for (i, e) in r.elements.iter().enumerate() {
        assert_eq!(orders[i] + unpaired[i], valence(e), "atom {i} {e}");
    }
    let manifest = std::fs::read_to_string(dir.join("manifest.csv")).unwrap();
    let header = csv_fields(manifest.lines().next().unwrap());
    let row = csv_fields(manifest.lines().nth(1).unwrap());
    let shell = header.iter().position(|h| h == "shell").unwrap();
    assert_eq!(row[shell], "radical");
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn nth_pattern_walks_alone_to_the_same_pattern_as_the_parallel_listing() {
    // `find_pattern` looks a pattern up by a sequential walk that stops at it; the listing runs
    // in parallel windows. Both must number the patterns the same way, with the same stabiliser.
    let p = c60();
    for (kind, k) in [
        (Kind::Addend(Addend::H), 3),
        (Kind::Bridge(BondFilter::Any), 2),
        (Kind::Bridge(BondFilter::HexHex), 3),
    ] {
        let s = search(&p, kind, k);
        let all = listed(&s);
        for (i, (sites, stabiliser)) in all.iter().enumerate() {
            let f = s.nth(i as u64 + 1).expect("within the list");
            assert_eq!(
                (&f.sites, &f.stabiliser),
                (sites, stabiliser),
                "{kind:?} {i}"
            );
        }
        assert_eq!(s.nth(all.len() as u64 + 1), Err(all.len() as u64));
    }
}

#[test]
fn first_pattern_of_a_long_list_is_shown_without_listing_it() {
    // The first pattern of K addends is atoms 1..K: the smallest K-set of all is its own
    // smallest image, so it is canonical and comes first (docs/derivatives.md, canonical form).
    // C60H8 has 21330558 patterns (`derive --count-only`); showing number 1 must not list them
    // (it took minutes when the lookup went through the parallel listing).
    let (code, out, err) = run(&["show", "C60:IPR-1+8H:1", "--json"]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(out.trim()).unwrap();
    assert_eq!(v["sites"], serde_json::json!([1, 2, 3, 4, 5, 6, 7, 8]));
    assert_eq!(v["rank"], serde_json::Value::Null);
}
