//! Cheap published stability descriptors for one cage, and the default screening rank.
//!
//! Every function here reads a [`Cage`](crate::cage::Cage) and never mutates it. Rankings built
//! from these descriptors are screening heuristics, not predictions of real-world stability.
//! Sources for each descriptor are cited in its own file.

use crate::cage::Cage;
use crate::cage::FaceSet;
use crate::spiral::{canonical_spiral, Canonical, Spiral};
use huckel::HuckelError;
use rayon::prelude::*;
use serde::{Deserialize, Serialize};
use std::fmt;
use symmetry::PointGroup;

/// Hückel shell type (Fowler & Manolopoulos, Atlas of Fullerenes 1995).
///
/// The derived order (properly closed first, open last) is the order the default ranking uses.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Shell {
    /// HOMO bonding (x > 0), LUMO antibonding or non-bonding (x <= 0).
    ProperlyClosed,
    /// HOMO and LUMO both bonding.
    PseudoClosed,
    /// HOMO and LUMO both non-bonding or antibonding.
    MetaClosed,
    /// Odd electron count with the single electron in a non-degenerate orbital (SOMO): a
    /// radical, e.g. La@C82 screened as C82^3-. Ranked after the closed shells and before a
    /// partly filled degenerate level, which is also expected to distort.
    OpenDoublet,
    /// HOMO and LUMO degenerate (or, for odd counts, SOMO degenerate with either): a partly
    /// filled level.
    Open,
}

impl Shell {
    pub fn name(self) -> &'static str {
        match self {
            Shell::ProperlyClosed => "properly-closed",
            Shell::PseudoClosed => "pseudo-closed",
            Shell::MetaClosed => "meta-closed",
            Shell::OpenDoublet => "open-doublet",
            Shell::Open => "open",
        }
    }
}

pub mod bonds;
pub mod boron_nitride;
pub mod faces;
pub mod huckel;
pub mod kekule;
pub mod nmr;
mod pfaffian;
pub mod rank;
pub mod symmetry;

/// Pentagon positions (1-based) for a fullerene spiral, the whole face-size sequence otherwise:
/// the form written in JSON under `spiral`. Within one size and face set, comparing these lists
/// lexicographically orders cages as their spirals do (an earlier pentagon means a smaller
/// sequence), i.e. by isomer number.
pub fn spiral_numbers(spiral: &Spiral) -> Vec<u32> {
    if spiral.face_set() == Some(FaceSet::Fullerene) {
        spiral.pentagon_indices()
    } else {
        spiral.sizes().iter().map(|&s| u32::from(s)).collect()
    }
}

/// Why descriptors could not be computed.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum ScoreError {
    /// The charge cannot be applied to this cage (see [`HuckelError`]).
    Charge(HuckelError),
    /// The automorphisms passed in belong to a cage with a different number of atoms.
    Mismatch { cage: usize, automorphisms: usize },
    /// The cage has no face spiral, so no canonical form or automorphisms were found.
    NoSpiral,
    /// The cage is beyond [`MAX_SCORED_ATOMS`].
    TooLarge { atoms: usize },
}

/// Largest cage that is scored. The Hückel spectrum is a dense n x n eigenproblem (time n^3,
/// memory 8n^2 bytes): C2000 took 31 s and 180 MB for `cagerank show C2000:1` on the 2-core
/// sandbox (2026-12-03, under load), so C3000 stays within a few minutes while C100000 would need
/// 80 GB. Larger cages can still be counted, wound and drawn.
pub const MAX_SCORED_ATOMS: usize = 3000;

impl fmt::Display for ScoreError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            ScoreError::Charge(e) => e.fmt(f),
            ScoreError::Mismatch {
                cage,
                automorphisms,
            } => write!(
                f,
                "the symmetry data is for a cage of {automorphisms} atoms, not {cage}; compute \
                 the canonical spiral of this cage first"
            ),
            ScoreError::NoSpiral => write!(
                f,
                "this cage has no face spiral, so its symmetry cannot be read; it cannot be scored"
            ),
            ScoreError::TooLarge { atoms } => write!(
                f,
                "C{atoms} is too large to score: its dense Hückel eigenproblem grows as n^3 in \
                 time and needs {:.1} GB (C2000 already takes about half a minute); cages up to \
                 C{MAX_SCORED_ATOMS} are scored: use --count-only, `cagerank spiral` or \
                 `cagerank draw` for larger ones",
                (*atoms as f64).powi(2) * 8e-9
            ),
        }
    }
}

impl std::error::Error for ScoreError {}

impl From<HuckelError> for ScoreError {
    fn from(e: HuckelError) -> ScoreError {
        ScoreError::Charge(e)
    }
}

/// The cheap scalar descriptors of one cage (the JSON-lines record of an enumeration).
///
/// Field names are the JSON keys. Energies of orbitals are in units of |beta|.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Descriptors {
    /// Edges shared by two pentagons.
    pub pentagon_adjacencies: u32,
    /// Estimated penalty, 90 kJ/mol per adjacency (an estimate: see [`faces`]).
    pub pentagon_penalty_kj: f64,
    /// Number of hexagons with k = 0..6 hexagonal neighbours.
    pub hexagon_neighbours: [u32; 7],
    /// Standard deviation of the hexagon neighbour counts.
    pub hexagon_strain: f64,
    /// Highest doubly occupied orbital.
    pub homo: f64,
    pub lumo: f64,
    /// HOMO - LUMO, or SOMO - LUMO for an odd electron count (the gap that ranks).
    pub gap: f64,
    /// Singly occupied orbital, for odd electron counts only (absent from JSON otherwise).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub somo: Option<f64>,
    pub shell: Shell,
    /// Pi energy per atom (beta part only).
    pub pi_energy: f64,
    /// Exact number of Kekulé structures, as a decimal string (it outgrows every integer type).
    pub kekule: String,
    /// Order of the automorphism group.
    pub automorphisms: u32,
    pub point_group: PointGroup,
    pub chiral: bool,
    /// 13C NMR pattern: [intensity (atoms per site), number of such lines], largest intensity
    /// first; printed as LINESxINTENSITY by [`nmr::format_pattern`].
    pub nmr: Vec<(u32, u32)>,
}

/// Computes every cheap descriptor of `cage` carrying `charge`, using the automorphisms found
/// with its canonical spiral (which must have been computed on this very cage).
///
/// Only eigenvalues are computed (no eigenvectors) and no per-edge arrays; the function reads
/// its inputs only, so it may run on many threads at once.
pub fn describe(
    cage: &Cage,
    canonical: &Canonical,
    charge: i32,
) -> Result<Descriptors, ScoreError> {
    check_inputs(cage, canonical, charge)?;
    describe_with(cage, canonical, charge, &huckel::eigenvalues(cage))
}

/// Winds `spiral`, finds its canonical form and symmetry, and describes it.
pub fn describe_spiral(spiral: &Spiral, charge: i32) -> Result<Descriptors, ScoreError> {
    let cage = spiral.to_cage();
    let canonical = canonical_spiral(&cage).ok_or(ScoreError::NoSpiral)?;
    describe(&cage, &canonical, charge)
}

/// [`describe_spiral`] for many spirals on the current rayon pool, results in input order.
pub fn describe_all(spirals: &[Spiral], charge: i32) -> Vec<Result<Descriptors, ScoreError>> {
    spirals
        .par_iter()
        .map(|s| describe_spiral(s, charge))
        .collect()
}

fn check_inputs(cage: &Cage, canonical: &Canonical, charge: i32) -> Result<(), ScoreError> {
    check_size(cage.atoms())?;
    huckel::occupation(cage.atoms(), charge)?;
    match canonical.automorphisms.first() {
        Some(a) if a.atoms.len() != cage.atoms() => Err(ScoreError::Mismatch {
            cage: cage.atoms(),
            automorphisms: a.atoms.len(),
        }),
        _ => Ok(()),
    }
}

/// Refuses cages beyond [`MAX_SCORED_ATOMS`] before any work is done.
pub fn check_size(atoms: usize) -> Result<(), ScoreError> {
    if atoms > MAX_SCORED_ATOMS {
        return Err(ScoreError::TooLarge { atoms });
    }
    Ok(())
}

fn describe_with(
    cage: &Cage,
    canonical: &Canonical,
    charge: i32,
    eigenvalues: &[f64],
) -> Result<Descriptors, ScoreError> {
    let hmo = huckel::summarize(eigenvalues, charge)?;
    let pattern = faces::face_pattern(cage);
    let sym = symmetry::symmetry(cage, &canonical.automorphisms);
    Ok(Descriptors {
        pentagon_adjacencies: pattern.pentagon_adjacencies,
        pentagon_penalty_kj: pattern.pentagon_penalty_kj,
        hexagon_neighbours: pattern.hexagon_neighbours,
        hexagon_strain: pattern.hexagon_strain,
        homo: hmo.homo,
        lumo: hmo.lumo,
        gap: hmo.gap,
        somo: hmo.somo,
        shell: hmo.shell,
        pi_energy: hmo.pi_energy,
        kekule: kekule::kekule_count(cage).to_string(),
        automorphisms: sym.order,
        point_group: sym.point_group,
        chiral: sym.chiral,
        nmr: sym.nmr,
    })
}

/// One isomer of an enumeration with its descriptors and rank (a JSON-lines record).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Scored {
    pub atoms: usize,
    /// Position in the complete list of its size, if known.
    pub number: Option<u64>,
    /// Position in the IPR list, if the cage is IPR and the number is known.
    pub ipr_number: Option<u64>,
    /// Pentagon positions (fullerenes) or face sizes (other cages), see [`spiral_numbers`].
    #[serde(rename = "spiral")]
    pub spiral_numbers: Vec<u32>,
    #[serde(flatten)]
    pub descriptors: Descriptors,
    /// 1 = best within the size under the chosen order; `None` until [`rank::rank`] runs.
    pub rank: Option<u64>,
}

impl Scored {
    pub fn new(
        spiral: &Spiral,
        number: Option<u64>,
        ipr_number: Option<u64>,
        descriptors: Descriptors,
    ) -> Scored {
        Scored {
            atoms: spiral.atoms(),
            number,
            ipr_number,
            spiral_numbers: spiral_numbers(spiral),
            descriptors,
            rank: None,
        }
    }
}

impl rank::Rankable for Scored {
    fn descriptors(&self) -> &Descriptors {
        &self.descriptors
    }

    fn spiral_numbers(&self) -> &[u32] {
        &self.spiral_numbers
    }

    fn set_rank(&mut self, rank: u64) {
        self.rank = Some(rank);
    }
}

/// Everything about one isomer, for `show --json`: the scalar descriptors plus the structure
/// (edges, faces), the spectrum and the per-edge and per-face arrays.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FullRecord {
    pub atoms: usize,
    pub number: Option<u64>,
    pub ipr_number: Option<u64>,
    /// Pentagon positions (fullerenes) or face sizes (other cages), see [`spiral_numbers`].
    pub spiral: Vec<u32>,
    #[serde(flatten)]
    pub descriptors: Descriptors,
    /// Bonds as 0-based atom pairs, sorted.
    pub edges: Vec<[u32; 2]>,
    /// Rings as atom cycles.
    pub faces: Vec<Vec<u32>>,
    /// Hückel eigenvalues, descending.
    pub eigenvalues: Vec<f64>,
    /// Pauling bond order of each edge (aligned with `edges`).
    pub pauling_bond_orders: Vec<f64>,
    /// Coulson pi bond order of each edge for the given charge (aligned with `edges`).
    pub coulson_bond_orders: Vec<f64>,
    /// Ring pi-electron content of each face (aligned with `faces`).
    pub ring_pi_content: Vec<f64>,
}

/// Computes the full record of the cage wound from the canonical spiral `spiral` (atoms are
/// numbered as that spiral winds them).
pub fn full_record(
    spiral: &Spiral,
    number: Option<u64>,
    ipr_number: Option<u64>,
    charge: i32,
) -> Result<FullRecord, ScoreError> {
    let cage = spiral.to_cage();
    let canonical = canonical_spiral(&cage).ok_or(ScoreError::NoSpiral)?;
    check_inputs(&cage, &canonical, charge)?;
    let eigenvalues = huckel::eigenvalues(&cage);
    let descriptors = describe_with(&cage, &canonical, charge, &eigenvalues)?;
    let pauling = bonds::pauling_bond_orders(&cage);
    let ring_pi_content = bonds::ring_pi_content(&cage, &pauling);
    Ok(FullRecord {
        atoms: cage.atoms(),
        number,
        ipr_number,
        spiral: spiral_numbers(spiral),
        descriptors,
        edges: cage.edges().to_vec(),
        faces: cage.faces().to_vec(),
        eigenvalues,
        coulson_bond_orders: bonds::coulson_bond_orders(&cage, charge)?,
        pauling_bond_orders: pauling,
        ring_pi_content,
    })
}
