//! Checks of the Hückel, Kekulé and bond-order descriptors against published values, an
//! independent brute-force matching counter and an independent eigensolver (nalgebra).

use cagerank::cage::{Cage, EdgeId, VertexId};
use cagerank::enumerate::{self, Options, Spec};
use cagerank::score::bonds::{coulson_bond_orders, pauling_bond_orders, ring_pi_content};
use cagerank::score::huckel::{
    eigen_decomposition, eigenvalues, filled_orbitals, occupation, summarize, HuckelError,
    Occupation,
};
use cagerank::score::kekule::{
    kekule_count, kekule_count_containing, kekule_count_with_primes, kekule_structure,
    matching_bound, primes_for,
};
use cagerank::score::Shell;
use cagerank::spiral::Spiral;
use num_bigint::BigUint;
use proptest::prelude::*;

fn c60() -> Cage {
    // Atlas spiral of C60-Ih (memory, Fowler & Manolopoulos 1995; domain notes section 2).
    Spiral::from_pentagon_indices(60, &[1, 7, 9, 11, 13, 15, 18, 20, 22, 24, 26, 32])
        .expect("C60-Ih spiral winds")
        .to_cage()
}

fn c70() -> Cage {
    // Atlas spiral of C70-D5h (memory, Fowler & Manolopoulos 1995; domain notes section 2).
    Spiral::from_pentagon_indices(70, &[1, 7, 9, 11, 13, 15, 27, 29, 31, 33, 35, 37])
        .expect("C70-D5h spiral winds")
        .to_cage()
}

fn c20() -> Cage {
    Spiral::from_sizes(vec![5; 12])
        .expect("dodecahedron winds")
        .to_cage()
}

/// Every fullerene isomer with `atoms` carbons, from the enumerator.
fn isomers(atoms: u64) -> Vec<Cage> {
    let spec = Spec::fullerene(atoms, false).expect("valid size");
    let opts = Options {
        threads: 1,
        shard: None,
    };
    let mut out = Vec::new();
    enumerate::enumerate(
        &spec,
        &opts,
        |_, _| {},
        |iso| out.push(iso.spiral.to_cage()),
    )
    .expect("enumeration runs");
    out
}

fn isomers_up_to(max: u64) -> Vec<Cage> {
    // No fullerene has 22 atoms (domain notes section 1).
    (20..=max)
        .step_by(2)
        .filter(|&n| n != 22)
        .flat_map(isomers)
        .collect()
}

/// Independent perfect-matching counter: match the lowest free atom with each free neighbour.
fn brute_count(cage: &Cage) -> u64 {
    brute_count_from(cage, &mut vec![false; cage.atoms()])
}

/// Perfect matchings of the atoms not yet marked `used`.
fn brute_count_from(cage: &Cage, used: &mut [bool]) -> u64 {
    fn go(cage: &Cage, used: &mut [bool]) -> u64 {
        let Some(v) = used.iter().position(|&u| !u) else {
            return 1;
        };
        used[v] = true;
        let mut total = 0;
        for u in cage.neighbours(VertexId(v as u32)) {
            if !used[u.index()] {
                used[u.index()] = true;
                total += go(cage, used);
                used[u.index()] = false;
            }
        }
        used[v] = false;
        total
    }
    go(cage, used)
}

fn is_hexagon_edge(cage: &Cage, e: usize) -> bool {
    let [f, g] = cage.edge_faces()[e];
    cage.faces()[f as usize].len() == 6 && cage.faces()[g as usize].len() == 6
}

// ---------------------------------------------------------------- Kekulé counts

#[test]
fn kekule_count_of_c60_is_12500() {
    // Klein, Schmalz, Hite, Seitz, JACS 108 (1986) 1301.
    assert_eq!(kekule_count(&c60()), BigUint::from(12500u32));
}

#[test]
fn kekule_count_of_dodecahedron_is_36() {
    // domain notes section 3 (recomputed by brute force), and the brute-force counter here.
    assert_eq!(kekule_count(&c20()), BigUint::from(36u32));
    assert_eq!(brute_count(&c20()), 36);
}

#[test]
fn kekule_count_of_c70_is_52168() {
    // domain notes section 3 (recomputed independently by brute force).
    assert_eq!(kekule_count(&c70()), BigUint::from(52168u32));
}

#[test]
fn kekule_count_matches_brute_force_for_every_isomer_up_to_c40() {
    // Independent check: backtracking counter written above (no Pfaffian).
    let cages = isomers_up_to(40);
    // OEIS A007894: 1+0+1+1+2+3+6+6+15+17+40 = 92 isomers for n = 20..40.
    assert_eq!(cages.len(), 92);
    for cage in &cages {
        assert_eq!(kekule_count(cage), BigUint::from(brute_count(cage)));
    }
}

#[test]
fn kekule_count_does_not_depend_on_atom_labels() {
    // A count of matchings is a graph invariant (definition); a reversed labelling moves the
    // Kasteleyn orientation's spanning tree and the elimination pivots.
    let cage = c70();
    let n = cage.atoms() as u32;
    let perm: Vec<u32> = (0..n).map(|v| (v * 29 + 3) % n).collect();
    assert_eq!(
        kekule_count(&cage.relabelled(&perm)),
        BigUint::from(52168u32)
    );
}

#[test]
fn matchings_through_each_c60_bond_give_pauling_numerators() {
    // 12500 x 11/25 = 5500 and 12500 x 7/25 = 3500 (domain notes section 3, brute force).
    let cage = c60();
    for e in 0..cage.edges().len() {
        let want = if is_hexagon_edge(&cage, e) {
            5500u32
        } else {
            3500
        };
        assert_eq!(
            kekule_count_containing(&cage, EdgeId(e as u32)),
            BigUint::from(want)
        );
    }
}

#[test]
fn large_leapfrog_count_is_stable_across_prime_sets_and_sums_over_a_vertex() {
    // C540 = leapfrog of leapfrog of C60: 540 atoms, a count of about 1.3 x 10^37 (124 bits),
    // far beyond u64.
    let cage = c60().leapfrog().leapfrog();
    assert_eq!(cage.atoms(), 540);
    let count = kekule_count(&cage);
    assert!(count.bits() > 64, "the bigint path is exercised");
    // The value the previous implementation (dense elimination modulo 31-bit primes, commit
    // 6ef47e5, no code shared with the sparse one) gives.
    let dense: BigUint = "13166974581235534638114625028096000000"
        .parse()
        .expect("decimal");
    assert_eq!(count, dense);
    // Property: a second, disjoint prime set with the bound doubled gives the same integer.
    let default = primes_for(cage.atoms());
    let more = primes_for(2 * cage.atoms());
    let disjoint: Vec<u64> = more
        .iter()
        .copied()
        .filter(|p| !default.contains(p))
        .collect();
    let product: BigUint = disjoint.iter().map(|&p| BigUint::from(p)).product();
    assert!(product > matching_bound(cage.atoms()) * 2u32);
    assert_eq!(kekule_count_with_primes(&cage, &disjoint), count);
    // Property (definition of a perfect matching): atom 0 is matched along exactly one of its
    // three bonds, so the counts of matchings through those bonds sum to the total.
    let through: BigUint = cage
        .neighbours(VertexId(0))
        .iter()
        .map(|&u| {
            let e = cage.edge_index(VertexId(0), u).expect("bond");
            kekule_count_containing(&cage, e)
        })
        .sum();
    assert_eq!(through, count);
}

#[test]
fn leapfrog_of_dodecahedron_is_c60() {
    // Leapfrog of C20 is C60-Ih (Fowler & Austin, J. Chem. Inf. Comput. Sci. 34 (1994) 264);
    // its count is Klein et al.'s 12500 (JACS 108 (1986) 1301).
    let cage = c20().leapfrog();
    assert_eq!(kekule_count(&cage), BigUint::from(12500u32));
    let (a, b) = (eigenvalues(&cage), eigenvalues(&c60()));
    assert!(a.iter().zip(&b).all(|(x, y)| (x - y).abs() < 1e-9));
}

#[test]
fn too_few_primes_are_caught_by_a_different_answer() {
    // Guards the bound's role: one prime (product ~2^62) cannot hold C540's 124-bit count.
    let cage = c60().leapfrog().leapfrog();
    let one = kekule_count_with_primes(&cage, &primes_for(cage.atoms())[..1]);
    assert_ne!(one, kekule_count(&cage));
}

/// The odd primes from 3 up, as many as make the product exceed 2 * matching_bound + 1 (so the
/// counts are still determined), for a cage with `atoms` atoms.
fn small_primes_for(atoms: usize) -> Vec<u64> {
    let need = matching_bound(atoms) * 2u32 + 1u32;
    let mut product = BigUint::from(1u32);
    let mut primes = Vec::new();
    for p in (3u64..)
        .step_by(2)
        .filter(|&p| (3..p).step_by(2).all(|d| p % d != 0))
    {
        if product > need {
            break;
        }
        product *= p;
        primes.push(p);
    }
    primes
}

#[test]
fn kekule_counts_from_tiny_primes_match_brute_force_up_to_c40_and_the_c60_c70_values() {
    // Independent: the backtracking counter above, and Klein et al. (C60) / the domain notes
    // (C70). Modulo 3, 5, 7, ... pivots vanish and the sparse elimination takes a different
    // pivot order for each prime; the Chinese remainder step only recovers the count if every
    // residue carries the same (exactly tracked) sign.
    for cage in isomers_up_to(40) {
        let primes = small_primes_for(cage.atoms());
        assert!(primes.len() >= 5 && primes[0] == 3);
        assert_eq!(
            kekule_count_with_primes(&cage, &primes),
            BigUint::from(brute_count(&cage))
        );
    }
    for (cage, count) in [(c60(), 12500u32), (c70(), 52168)] {
        let primes = small_primes_for(cage.atoms());
        assert_eq!(
            kekule_count_with_primes(&cage, &primes),
            BigUint::from(count)
        );
    }
}

#[test]
fn kekule_counts_do_not_depend_on_thread_count() {
    // Determinism: each thread keeps its own elimination buffers; results must not depend on
    // which thread computed what, or on what a buffer held before.
    use rayon::prelude::*;
    let mut cages = isomers_up_to(44);
    cages.push(c60().leapfrog().leapfrog());
    let serial: Vec<BigUint> = cages.iter().map(kekule_count).collect();
    let parallel: Vec<BigUint> = cages.par_iter().map(kekule_count).collect();
    assert_eq!(serial, parallel);
    let again: Vec<BigUint> = cages.iter().rev().map(kekule_count).collect();
    assert!(again.iter().rev().eq(serial.iter()));
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(64))]
    #[test]
    fn c60_counts_survive_any_relabelling(
        perm in Just((0..60u32).collect::<Vec<u32>>()).prop_shuffle(),
        edge in 0usize..90,
    ) {
        // Klein et al., JACS 108 (1986) 1301: 12500, and 5500 / 3500 through 6:6 / 5:6 bonds
        // (domain notes section 3); matchings are a graph invariant, while the labelling moves
        // the Kasteleyn orientation and every pivot choice of the sparse elimination.
        let cage = c60().relabelled(&perm);
        prop_assert_eq!(kekule_count(&cage), BigUint::from(12500u32));
        let want = if is_hexagon_edge(&cage, edge) { 5500u32 } else { 3500 };
        prop_assert_eq!(
            kekule_count_containing(&cage, EdgeId(edge as u32)),
            BigUint::from(want)
        );
    }
}

#[test]
fn kekule_structure_is_a_perfect_matching_for_every_isomer_up_to_c50() {
    // Definition of a Kekulé structure; Petersen's theorem guarantees one exists.
    for cage in isomers_up_to(50) {
        let edges = kekule_structure(&cage).expect("fullerenes have a Kekulé structure");
        assert_eq!(edges.len(), cage.atoms() / 2);
        let mut covered = vec![0; cage.atoms()];
        for e in &edges {
            for v in cage.edges()[e.index()] {
                covered[v as usize] += 1;
            }
        }
        assert!(covered.iter().all(|&c| c == 1));
        assert_eq!(kekule_structure(&cage), Some(edges), "deterministic");
    }
}

// ---------------------------------------------------------------- Pauling orders, ring content

#[test]
fn pauling_orders_of_c60() {
    // 6:6 bonds 11/25 = 0.44, 5:6 bonds 7/25 = 0.28 (domain notes section 3, brute force).
    let cage = c60();
    for (e, &p) in pauling_bond_orders(&cage).iter().enumerate() {
        let want = if is_hexagon_edge(&cage, e) {
            0.44
        } else {
            0.28
        };
        assert!((p - want).abs() < 1e-12, "edge {e}: {p}");
    }
}

#[test]
fn pauling_orders_match_brute_force_up_to_c36() {
    // Independent: count matchings through each bond by backtracking on the cage without u, v.
    for cage in isomers_up_to(36) {
        let total = brute_count(&cage) as f64;
        let orders = pauling_bond_orders(&cage);
        for (e, &p) in orders.iter().enumerate() {
            let [u, v] = cage.edges()[e];
            let mut used = vec![false; cage.atoms()];
            used[u as usize] = true;
            used[v as usize] = true;
            let through = brute_count_from(&cage, &mut used);
            assert!((p - through as f64 / total).abs() < 1e-12);
            assert_eq!(
                kekule_count_containing(&cage, EdgeId(e as u32)),
                BigUint::from(through)
            );
        }
    }
}

#[test]
fn pauling_orders_at_every_atom_sum_to_one_up_to_c50() {
    // Every atom carries exactly one double bond in each Kekulé structure (definition).
    for cage in isomers_up_to(50) {
        let orders = pauling_bond_orders(&cage);
        let mut sum = vec![0.0; cage.atoms()];
        for (&[u, v], &p) in cage.edges().iter().zip(&orders) {
            sum[u as usize] += p;
            sum[v as usize] += p;
        }
        assert!(sum.iter().all(|s| (s - 1.0).abs() < 1e-9));
    }
}

#[test]
fn ring_contents_of_c60() {
    // Randić & Balaban, J. Chem. Inf. Comput. Sci. 44 (2004) 50: hexagon 2.16, pentagon 1.40.
    let cage = c60();
    let content = ring_pi_content(&cage, &pauling_bond_orders(&cage));
    for (f, &c) in content.iter().enumerate() {
        let want = if cage.faces()[f].len() == 6 {
            2.16
        } else {
            1.40
        };
        assert!((c - want).abs() < 1e-9);
    }
}

#[test]
fn ring_contents_sum_to_atom_count_up_to_c50() {
    // Randić & Balaban 2004: every pi electron is shared out among the rings, so sum = n.
    for cage in isomers_up_to(50) {
        let total: f64 = ring_pi_content(&cage, &pauling_bond_orders(&cage))
            .iter()
            .sum();
        assert!((total - cage.atoms() as f64).abs() < 1e-9);
    }
}

// ---------------------------------------------------------------- Hückel spectrum

#[test]
fn c60_frontier_orbitals() {
    // domain notes section 3 (numpy check on the truncated icosahedron): HOMO (sqrt5-1)/2,
    // LUMO -0.1386, gap 0.7566, properly closed.
    let s = summarize(&eigenvalues(&c60()), 0).expect("neutral C60");
    assert!((s.homo - (5f64.sqrt() - 1.0) / 2.0).abs() < 1e-9);
    assert!((s.lumo - -0.1386).abs() < 5e-5);
    assert!((s.gap - 0.7566).abs() < 5e-5);
    assert_eq!(s.shell, Shell::ProperlyClosed);
}

#[test]
fn eigenvalues_agree_with_nalgebra_for_every_isomer_up_to_c50() {
    // nalgebra's SymmetricEigen: an independent general-purpose eigensolver.
    for cage in isomers_up_to(50) {
        let n = cage.atoms();
        let mut a = nalgebra::DMatrix::<f64>::zeros(n, n);
        for &[u, v] in cage.edges() {
            a[(u as usize, v as usize)] = 1.0;
            a[(v as usize, u as usize)] = 1.0;
        }
        let mut reference: Vec<f64> = a.symmetric_eigen().eigenvalues.iter().copied().collect();
        reference.sort_by(|x, y| y.total_cmp(x));
        let ours = eigenvalues(&cage);
        assert_eq!(ours.len(), n);
        assert!(ours.windows(2).all(|w| w[0] >= w[1]), "descending");
        for (x, y) in ours.iter().zip(&reference) {
            assert!((x - y).abs() < 1e-9);
        }
    }
}

#[test]
fn eigen_decomposition_satisfies_a_c_equals_x_c() {
    // Definition of an eigenpair, with unit vectors; values equal the fast path's.
    let cage = c70();
    let (values, vectors) = eigen_decomposition(&cage);
    let fast = eigenvalues(&cage);
    for (k, c) in vectors.iter().enumerate() {
        assert!((values[k] - fast[k]).abs() < 1e-9);
        assert!((c.iter().map(|x| x * x).sum::<f64>() - 1.0).abs() < 1e-9);
        for v in 0..cage.atoms() {
            let ac: f64 = cage
                .neighbours(VertexId(v as u32))
                .iter()
                .map(|u| c[u.index()])
                .sum();
            assert!((ac - values[k] * c[v]).abs() < 1e-9);
        }
    }
}

#[test]
fn sum_of_squared_eigenvalues_is_twice_the_bond_count() {
    // trace(A^2) = sum x^2 = 2E (each bond counted from both ends), property for many cages.
    for cage in isomers_up_to(44) {
        let sq: f64 = eigenvalues(&cage).iter().map(|x| x * x).sum();
        assert!((sq - 2.0 * cage.edges().len() as f64).abs() < 1e-8);
    }
}

#[test]
fn leapfrog_cages_are_properly_closed() {
    // Fowler & Austin, J. Chem. Inf. Comput. Sci. 34 (1994) 264: leapfrogs are properly closed.
    for base in [c70(), c20().leapfrog(), c60()] {
        let big = base.leapfrog();
        let s = summarize(&eigenvalues(&big), 0).expect("neutral");
        assert_eq!(s.shell, Shell::ProperlyClosed, "C{}", big.atoms());
    }
}

#[test]
fn charge_changes_the_filling() {
    // C60^6- fills 33 orbitals: the three-fold t1u LUMO becomes full, so the anion's HOMO is the
    // neutral LUMO (domain notes section 3: n/2 + q/2 orbitals for charge -q).
    let x = eigenvalues(&c60());
    assert_eq!(filled_orbitals(60, -6), Ok(33));
    let neutral = summarize(&x, 0).expect("neutral");
    let hexa = summarize(&x, -6).expect("hexa-anion");
    assert!((hexa.homo - neutral.lumo).abs() < 1e-9);
    // C60^2- puts 2 electrons into the 3-fold t1u level: HOMO and LUMO degenerate, open shell.
    assert_eq!(summarize(&x, -2).expect("dianion").shell, Shell::Open);
    // Impossible fillings are errors, not panics.
    assert!(matches!(
        summarize(&x, -60),
        Err(HuckelError::TooManyElectrons { .. })
    ));
    assert!(matches!(
        summarize(&x, 60),
        Err(HuckelError::TooFewElectrons { .. })
    ));
    // 119 electrons would fill every orbital but one, leaving no LUMO above the SOMO; one
    // electron leaves no doubly filled orbital.
    assert!(matches!(
        summarize(&x, -59),
        Err(HuckelError::TooManyElectrons { electrons: 119, .. })
    ));
    assert!(matches!(
        summarize(&x, 59),
        Err(HuckelError::TooFewElectrons { electrons: 1 })
    ));
    assert!(summarize(&x, -57).is_ok() && summarize(&x, 57).is_ok());
}

/// The descending spectrum from nalgebra's SymmetricEigen, an eigensolver independent of ours.
fn nalgebra_spectrum(cage: &Cage) -> Vec<f64> {
    let n = cage.atoms();
    let mut a = nalgebra::DMatrix::<f64>::zeros(n, n);
    for &[u, v] in cage.edges() {
        a[(u as usize, v as usize)] = 1.0;
        a[(v as usize, u as usize)] = 1.0;
    }
    let mut x: Vec<f64> = a.symmetric_eigen().eigenvalues.iter().copied().collect();
    x.sort_by(|p, q| q.total_cmp(p));
    x
}

#[test]
fn odd_electron_counts_fill_a_singly_occupied_orbital() {
    assert_eq!(
        occupation(82, -3),
        Ok(Occupation {
            electrons: 85,
            doubly: 42,
            single: true
        })
    );
    // C60^-: the extra electron enters the three-fold t1u LUMO of neutral C60 (x = -0.1386;
    // domain notes section 3, numpy check). A partly filled degenerate level is an open shell,
    // not a doublet with a level of its own.
    let x = eigenvalues(&c60());
    let neutral = summarize(&x, 0).expect("neutral");
    let anion = summarize(&x, -1).expect("C60^-");
    let somo = anion.somo.expect("odd count has a SOMO");
    assert!((somo - -0.1386).abs() < 5e-5);
    assert!((somo - neutral.lumo).abs() < 1e-9);
    assert!((anion.homo - neutral.homo).abs() < 1e-9);
    assert_eq!(anion.shell, Shell::Open);
    assert!(anion.gap.abs() < 1e-9, "SOMO-LUMO gap inside the t1u level");
    // C60^+: a hole in the five-fold h_u HOMO (x = (sqrt5-1)/2): open, HOMO-SOMO gap 0.
    let cation = summarize(&x, 1).expect("C60^+");
    assert_eq!(cation.shell, Shell::Open);
    assert!(cation.homo_somo_gap().expect("odd").abs() < 1e-9);
    assert!((cation.somo.expect("odd") - (5f64.sqrt() - 1.0) / 2.0).abs() < 1e-9);
    // Even counts have no SOMO.
    assert_eq!(neutral.somo, None);
    assert_eq!(neutral.homo_somo_gap(), None);
}

/// The IPR isomers of C82 with their point groups, from the enumerator and scorer.
fn c82_ipr() -> Vec<(Cage, String)> {
    let spec = Spec::fullerene(82, true).expect("valid size");
    let opts = Options {
        threads: 1,
        shard: None,
    };
    let mut out = Vec::new();
    enumerate::enumerate(
        &spec,
        &opts,
        |_, _| {},
        |iso| {
            let d = cagerank::score::describe_spiral(&iso.spiral, 0).expect("scores");
            out.push((iso.spiral.to_cage(), d.point_group.name().to_string()));
        },
    )
    .expect("enumeration runs");
    out
}

#[test]
fn c82_trianions_are_doublets_with_somo_from_an_independent_eigensolver() {
    // La@C82 is paramagnetic with one unpaired electron on the cage, La3+ inside a C82^3- cage
    // (ESR: Johnson, de Vries, Salem, Bethune, Yannoni, Nature 355 (1992) 239, from memory).
    // 85 pi electrons: 42 doubly filled orbitals, the SOMO is the 43rd, the LUMO the 44th.
    let isomers = c82_ipr();
    // OEIS A046880: 9 IPR isomers of C82.
    assert_eq!(isomers.len(), 9);
    for (cage, group) in &isomers {
        let reference = nalgebra_spectrum(cage);
        let s = summarize(&eigenvalues(cage), -3).expect("C82^3-");
        let somo = s.somo.expect("odd count");
        assert!((s.homo - reference[41]).abs() < 1e-9, "{group}");
        assert!((somo - reference[42]).abs() < 1e-9, "{group}");
        assert!((s.lumo - reference[43]).abs() < 1e-9, "{group}");
        assert!((s.gap - (reference[42] - reference[43])).abs() < 1e-9);
        assert!((s.homo_somo_gap().expect("odd") - (reference[41] - reference[42])).abs() < 1e-9);
        let pi = (2.0 * reference[..42].iter().sum::<f64>() + reference[42]) / 82.0;
        assert!((s.pi_energy - pi).abs() < 1e-9);
        // Groups with only one-dimensional irreducible representations (character tables of
        // C1, Cs, C2, C2v) have no symmetry-degenerate levels, so the single electron sits in
        // a level of its own: an open-shell doublet.
        if ["C1", "Cs", "C2", "C2v"].contains(&group.as_str()) {
            assert_eq!(s.shell, Shell::OpenDoublet, "{group}");
        }
        let expected = if (reference[41] - reference[42]).abs() < 1e-6
            || (reference[42] - reference[43]).abs() < 1e-6
        {
            Shell::Open
        } else {
            Shell::OpenDoublet
        };
        assert_eq!(s.shell, expected, "{group}");
    }
    // The cage of La@C82 is C2v (Atlas isomer 9 of the IPR list, from memory).
    assert!(isomers.iter().any(|(_, g)| g == "C2v"));
}

#[test]
fn coulson_orders_count_the_single_electron_once() {
    // E_pi = sum_k occ_k x_k = 2 sum over bonds of p_uv also with one orbital singly occupied.
    for (cage, group) in c82_ipr().iter().take(3) {
        let s = summarize(&eigenvalues(cage), -3).expect("C82^3-");
        let p = coulson_bond_orders(cage, -3).expect("odd charge is valid");
        let total: f64 = 2.0 * p.iter().sum::<f64>();
        assert!((total - s.pi_energy * 82.0).abs() < 1e-9, "{group}");
    }
}

#[test]
fn pi_energy_is_twice_the_sum_of_coulson_orders() {
    // E_pi = sum_k occ_k x_k = sum_uv A_uv P_uv = 2 sum over bonds of p_uv (Coulson's identity).
    for cage in [c60(), c70(), c20()] {
        let s = summarize(&eigenvalues(&cage), 0).expect("neutral");
        let p = coulson_bond_orders(&cage, 0).expect("neutral");
        let total: f64 = 2.0 * p.iter().sum::<f64>();
        assert!((total - s.pi_energy * cage.atoms() as f64).abs() < 1e-9);
    }
}

#[test]
fn coulson_orders_keep_c60_symmetry_even_for_a_partly_filled_level() {
    // Ih symmetry makes all 6:6 bonds equal and all 5:6 bonds equal; for C60^2- this holds only
    // if the two extra electrons are spread evenly over the 3-fold t1u level.
    let cage = c60();
    for charge in [0, -2] {
        let p = coulson_bond_orders(&cage, charge).expect("valid charge");
        let (mut hex, mut pent) = (Vec::new(), Vec::new());
        for (e, &x) in p.iter().enumerate() {
            if is_hexagon_edge(&cage, e) {
                hex.push(x)
            } else {
                pent.push(x)
            }
        }
        let spread = |v: &[f64]| {
            v.iter().cloned().fold(f64::MIN, f64::max) - v.iter().cloned().fold(f64::MAX, f64::min)
        };
        assert!(
            spread(&hex) < 1e-9 && spread(&pent) < 1e-9,
            "charge {charge}"
        );
        assert!(
            hex[0] > pent[0],
            "6:6 bonds are the shorter, more double ones"
        );
    }
}

#[test]
fn c70_lumo_is_non_bonding_and_the_shell_properly_closed() {
    // numpy.linalg.eigvalsh via scripts/reference_huckel_kekule.py: C70-D5h HOMO 0.529317,
    // LUMO 2.9e-15 (x = 0 up to rounding); x within DEGENERACY_TOL of 0 counts as non-bonding,
    // so the shell is properly closed (Fowler & Manolopoulos: LUMO x <= 0).
    let s = summarize(&eigenvalues(&c70()), 0).expect("neutral C70");
    assert!((s.homo - 0.529317).abs() < 1e-6);
    assert!(s.lumo.abs() < 1e-9);
    assert_eq!(s.shell, Shell::ProperlyClosed);
}
