//! Descriptors of a {4,6} cage read as a boron-nitride cage (BN)_x, and the default ranking of
//! each face set.
//!
//! A cage with only squares and hexagons has only even rings, so its graph is bipartite and
//! boron and nitrogen can alternate (domain notes §9). A connected bipartite graph has exactly
//! two such colourings, one the other with B and N swapped; we use the one that puts **boron
//! on atom 0 of the cage wound from the canonical spiral** (the first atom of the first face),
//! and say whether the other is the same molecule ([`BnDescriptors::swap_equivalent`]: some
//! symmetry of the bare cage exchanges the two classes).
//!
//! The pi system is heteroatom Hückel with the Van-Catledge (J. Org. Chem. 45 (1980) 4801)
//! parameters of the domain notes §8, through [`crate::derivative::huckel`]: boron h = -0.45
//! with no pi electron, cage nitrogen h = 0.51 (pyridine-type, as the domain notes use for a
//! three-coordinate cage N) with two, B-N bonds k = 0.66; so the pi electrons equal the atoms
//! and half the orbitals are filled. Symmetry is that of the coloured cage: the automorphisms
//! of the bare cage that send boron to boron (B12N12 is Th, while its bare truncated octahedron
//! is Oh). The 11B and 15N NMR patterns are the orbits of the B and of the N atoms under it.
//! Carbon cages of every face set keep the descriptors of [`super::describe`] (13C pattern,
//! Kekulé count, Hückel of the all-carbon cage). This module reads cages and never mutates them.

use super::symmetry::{self, PointGroup};
use crate::cage::{Cage, FaceSet, MAX_FACE};
use crate::derivative::huckel as hetero_huckel;
use crate::derivative::Hetero;
use crate::spiral::{Automorphism, Canonical, Spiral};
use std::cmp::Ordering;

/// What a {4,6} cage is as a BN cage.
#[derive(Debug, Clone, PartialEq)]
pub struct BnDescriptors {
    /// Element of every atom, B or N (boron on atom 0, see the module notes).
    pub elements: Vec<Hetero>,
    /// Faces of each size, indexed by size (0..=8).
    pub face_counts: [u32; MAX_FACE + 1],
    /// Edges shared by two squares (0: the isolated-square rule holds).
    pub square_adjacencies: u32,
    /// Heteroatom Hückel frontier levels, in units of |beta| (larger is more bonding).
    pub homo: f64,
    pub lumo: f64,
    /// HOMO - LUMO.
    pub gap: f64,
    /// Pi energy 2 x (sum of filled x), in |beta|.
    pub pi_energy: f64,
    /// Order of the symmetry group of the coloured cage.
    pub automorphisms: u32,
    pub point_group: PointGroup,
    pub chiral: bool,
    /// Point group of the bare cage (the carbon cage of the same graph).
    pub cage_point_group: PointGroup,
    /// 11B NMR pattern: orbits of the B atoms as (intensity, lines), largest intensity first.
    pub boron_nmr: Vec<(u32, u32)>,
    /// 15N NMR pattern, likewise.
    pub nitrogen_nmr: Vec<(u32, u32)>,
    /// True if a symmetry of the bare cage swaps B and N, so that the other colouring is the
    /// same molecule; false if it is a different BN cage on the same graph.
    pub swap_equivalent: bool,
}

/// Why a cage cannot be read as a BN cage.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum BnError {
    /// The cage has an odd ring, so B and N cannot alternate.
    NotBipartite { ring: usize },
    /// The symmetry data belongs to a cage of another size.
    Mismatch { cage: usize, automorphisms: usize },
}

impl std::fmt::Display for BnError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            BnError::NotBipartite { ring } => write!(
                f,
                "the cage has a {ring}-membered ring, so boron and nitrogen cannot alternate; \
                 only 4-6 cages are BN cages"
            ),
            BnError::Mismatch {
                cage,
                automorphisms,
            } => write!(
                f,
                "the symmetry data is for {automorphisms} atoms, not {cage}; compute the \
                 canonical spiral of this cage first"
            ),
        }
    }
}

impl std::error::Error for BnError {}

/// The B/N colouring with boron on atom 0, by breadth-first search; an error names an odd ring.
pub fn assignment(cage: &Cage) -> Result<Vec<Hetero>, BnError> {
    if let Some(odd) = cage.faces().iter().find(|f| f.len() % 2 == 1) {
        return Err(BnError::NotBipartite { ring: odd.len() });
    }
    // Every ring even implies every cycle even on a sphere (the rings span the cycle space).
    let n = cage.atoms();
    let mut side: Vec<Option<bool>> = vec![None; n];
    side[0] = Some(true);
    let mut queue = std::collections::VecDeque::from([0u32]);
    while let Some(v) = queue.pop_front() {
        let here = side[v as usize].expect("queued atoms are coloured");
        for &w in &cage.rotation()[v as usize] {
            if side[w as usize].is_none() {
                side[w as usize] = Some(!here);
                queue.push_back(w);
            }
        }
    }
    Ok(side
        .into_iter()
        .map(|s| {
            if s == Some(true) {
                Hetero::B
            } else {
                Hetero::N
            }
        })
        .collect())
}

/// The BN descriptors of a {4,6} cage, with the automorphisms found with its canonical spiral.
pub fn describe_bn(cage: &Cage, canonical: &Canonical) -> Result<BnDescriptors, BnError> {
    if let Some(a) = canonical.automorphisms.first() {
        if a.atoms.len() != cage.atoms() {
            return Err(BnError::Mismatch {
                cage: cage.atoms(),
                automorphisms: a.atoms.len(),
            });
        }
    }
    let elements = assignment(cage)?;
    let n = cage.atoms();
    let hetero: Vec<Option<Hetero>> = elements.iter().map(|&e| Some(e)).collect();
    let values = hetero_huckel::spectrum(cage, &vec![false; n], &hetero);
    // B gives no pi electron and N two, so n electrons fill n/2 orbitals (n is even).
    let levels = hetero_huckel::levels(&values, n / 2);
    let is_boron = |v: u32| elements[v as usize] == Hetero::B;
    let (kept, swapping): (Vec<Automorphism>, Vec<Automorphism>) = canonical
        .automorphisms
        .iter()
        .cloned()
        .partition(|a| is_boron(a.atoms[0]));
    let coloured = symmetry::symmetry(cage, &kept);
    let bare = symmetry::symmetry(cage, &canonical.automorphisms);
    let counts = cage.face_size_counts();
    Ok(BnDescriptors {
        face_counts: counts.map(|c| c as u32),
        square_adjacencies: cage.adjacencies_of(4) as u32,
        homo: levels.homo,
        lumo: levels.lumo,
        gap: levels.gap,
        pi_energy: levels.pi_energy,
        automorphisms: coloured.order,
        point_group: coloured.point_group,
        chiral: coloured.chiral,
        cage_point_group: bare.point_group,
        boron_nmr: class_orbits(&elements, Hetero::B, &kept),
        nitrogen_nmr: class_orbits(&elements, Hetero::N, &kept),
        swap_equivalent: !swapping.is_empty(),
        elements,
    })
}

/// Orbits of the atoms of one element under `group`, as (orbit size, count), largest first.
fn class_orbits(elements: &[Hetero], element: Hetero, group: &[Automorphism]) -> Vec<(u32, u32)> {
    let mut orbit = vec![false; elements.len()];
    let mut sizes = std::collections::BTreeMap::<u32, u32>::new();
    for start in 0..elements.len() {
        if elements[start] != element || orbit[start] {
            continue;
        }
        let mut size = 0;
        for a in group {
            let image = a.atoms[start] as usize;
            if !orbit[image] {
                orbit[image] = true;
                size += 1;
            }
        }
        // The identity is in every group, so the start itself is counted.
        *sizes.entry(size.max(1)).or_insert(0) += 1;
    }
    sizes.into_iter().rev().collect()
}

/// What the default ranking of a face set compares, per cage.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RankFacts {
    /// Edges shared by two faces of the set's isolated size (squares for the sets with
    /// squares, pentagons otherwise).
    pub isolated_adjacencies: u32,
    /// Heptagons (only `5-6-7` has any).
    pub heptagons: u32,
    /// The Hückel gap that ranks: heteroatom (BN) for `4-6`, all-carbon otherwise.
    pub gap: f64,
}

/// The documented default order of a face set (best first; ties keep spiral order, which a
/// stable sort preserves). Fullerenes: fewest pentagon adjacencies (the isolated-pentagon rule),
/// then the largest gap. `4-6` (BN cages): fewest square adjacencies first (isolated squares;
/// domain notes §9), then the largest heteroatom gap. `4-5-6`: fewest square adjacencies, then
/// the largest gap (pentagon adjacencies are not ranked: no rule for them is established in
/// cages with squares). `5-6-7`: fewest heptagons, then fewest pentagon adjacencies, then the
/// largest gap (heptagons cost strain; cages with them are studied as intermediates).
pub fn default_order(set: FaceSet, a: &RankFacts, b: &RankFacts) -> Ordering {
    let heptagons = match set {
        FaceSet::PentagonHexagonHeptagon { .. } => a.heptagons.cmp(&b.heptagons),
        _ => Ordering::Equal,
    };
    heptagons
        .then(a.isolated_adjacencies.cmp(&b.isolated_adjacencies))
        .then(b.gap.total_cmp(&a.gap))
}

/// The ranking facts of a cage of `set`: the BN gap for `4-6`, `carbon_gap` otherwise.
pub fn rank_facts(
    cage: &Cage,
    set: FaceSet,
    carbon_gap: f64,
    bn: Option<&BnDescriptors>,
) -> RankFacts {
    RankFacts {
        isolated_adjacencies: cage.adjacencies_of(usize::from(set.isolated_size())) as u32,
        heptagons: cage.face_size_counts()[7] as u32,
        gap: bn.map_or(carbon_gap, |d| d.gap),
    }
}

/// The ranking facts of the cage wound from `spiral` in `set`, with `carbon_gap` the
/// all-carbon Hückel gap (a catalogue record's, or [`super::describe`]'s); a 4-6 cage gets its
/// BN gap computed here. `None` if a 4-6 spiral cannot be read as a BN cage.
pub fn facts_of_spiral(spiral: &Spiral, set: FaceSet, carbon_gap: f64) -> Option<RankFacts> {
    let cage = spiral.to_cage();
    let bn = if set == FaceSet::SquareHexagon {
        let canonical = crate::spiral::canonical_spiral(&cage)?;
        Some(describe_bn(&cage, &canonical).ok()?)
    } else {
        None
    };
    Some(rank_facts(&cage, set, carbon_gap, bn.as_ref()))
}

/// Indices of `facts` in the documented default order of `set` ([`default_order`]; ties keep
/// the input order, which callers give in spiral order).
pub fn ranked_order(set: FaceSet, facts: &[RankFacts]) -> Vec<usize> {
    let mut order: Vec<usize> = (0..facts.len()).collect();
    order.sort_by(|&a, &b| default_order(set, &facts[a], &facts[b]));
    order
}
