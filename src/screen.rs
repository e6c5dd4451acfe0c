//! The two-stage screen: cheap graph descriptors pick candidates, a tight-binding relaxation
//! ranks them by energy.
//!
//! Graph descriptors alone put the experimentally isolated isomers of C78-C86 at ranks 3-6, so
//! they only choose what is worth relaxing. Stage 1 takes, from a catalogue, every isomer within
//! a margin of the fewest pentagon adjacencies (pentagon adjacency penalty rule: Albertazzi et
//! al., PCCP 1 (1999) 2913), ordered by the default screening order computed for the cage ion,
//! at most K of them. Stage 2 relaxes them in parallel with [`crate::energy`] and stores each
//! result in the catalogue's energy file as soon as it is done, so a killed screen redoes no
//! finished relaxation. Results are per (size, list, charge) and identical for any thread count.
//!
//! This module orchestrates; the model is `energy`, storage is `catalogue::energies`, printing
//! is the CLI's. Energies are 0 K electronic energies of a bare cage or cage ion: screening
//! values that need confirming with proper quantum chemistry.

use crate::cage::FaceSet;
use crate::catalogue::energies::{self, Energies, EnergyHeader, EnergyRecord, EnergyWriter};
use crate::catalogue::{self, CatalogueError, Filter, Query, Record};
use crate::energy::{self, EnergyError, Relaxed, Settings};
use crate::score::huckel::{self, HuckelError};
use crate::score::rank::{self, RankField, RankFields, RankKey};
use crate::score::Shell;
use rayon::prelude::*;
use std::cmp::Ordering;
use std::fmt;
use std::path::Path;
use std::sync::mpsc;

/// The energy model's name as stored in energy files.
pub const MODEL: &str =
    "orthogonal sp3 tight binding, Xu, Wang, Chan, Ho, J. Phys.: Condens. Matter 4 (1992) 6047";

/// Default stage-1 margin above the fewest pentagon adjacencies for neutral cages. One
/// adjacency costs 80-100 kJ/mol in quantum-chemical methods (Albertazzi et al. 1999), more than
/// the spread among the best isomers of a size, so one step beyond the minimum is enough.
pub const NEUTRAL_MARGIN: u32 = 1;

/// Default margin for cage ions. Endohedral cages often have fused pentagons the neutral cage
/// would avoid, because the metal atoms sit against them: the cage of Sc3N@C68 has three
/// adjacent pentagon pairs (Stevenson et al., Nature 408 (2000) 427), one more than the fewest
/// possible in C68; Sc2@C66 has two pairs of fused pentagons around each metal (Wang et al.,
/// Nature 408 (2000) 426, from memory). Three steps admit both with room to spare.
pub const ION_MARGIN: u32 = 3;

/// Default cap on stage-1 candidates.
pub const DEFAULT_CANDIDATES: usize = 100;

/// Which isomers stage 1 hands to the relaxation.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Candidates {
    /// Isomers with at most (fewest + margin) pentagon adjacencies, the best `max` of them by
    /// the screening order. `margin: None` takes the default for the charge.
    Margin { margin: Option<u32>, max: usize },
    /// Every isomer of the list.
    All,
}

/// What to screen.
#[derive(Debug, Clone, Copy)]
pub struct ScreenSpec {
    pub face_set: FaceSet,
    pub atoms: u32,
    pub ipr: bool,
    pub charge: i32,
    pub candidates: Candidates,
    pub settings: Settings,
}

impl ScreenSpec {
    /// The energy file's key for this screen.
    pub fn header(&self) -> EnergyHeader {
        EnergyHeader {
            face_set: self.face_set,
            atoms: self.atoms,
            ipr: self.ipr,
            charge: self.charge,
            model: MODEL.to_string(),
            max_force: self.settings.max_force,
            made_by: catalogue::made_by(),
        }
    }

    /// The margin in force: the given one, or the default for a neutral cage or a cage ion.
    pub fn margin(&self) -> Option<u32> {
        match self.candidates {
            Candidates::All => None,
            Candidates::Margin { margin, .. } => Some(margin.unwrap_or(if self.charge == 0 {
                NEUTRAL_MARGIN
            } else {
                ION_MARGIN
            })),
        }
    }
}

/// Why a screen cannot run; every message says what to do.
#[derive(Debug)]
pub enum ScreenError {
    Catalogue(CatalogueError),
    /// The charge leaves no valence electrons, or more than the cage can hold.
    Charge(String),
    /// An isomer's start geometry could not be built.
    Energy {
        number: u64,
        error: EnergyError,
    },
}

impl fmt::Display for ScreenError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            ScreenError::Catalogue(e) => e.fmt(f),
            ScreenError::Charge(m) => f.write_str(m),
            ScreenError::Energy { number, error } => write!(f, "isomer {number}: {error}"),
        }
    }
}

impl std::error::Error for ScreenError {}

impl From<CatalogueError> for ScreenError {
    fn from(e: CatalogueError) -> Self {
        ScreenError::Catalogue(e)
    }
}

/// A stage-1 candidate: the catalogue record with its Hückel values recomputed for the ion.
#[derive(Debug, Clone)]
pub struct Candidate {
    pub record: Record,
    /// Position in the screened list (IPR number for IPR lists).
    pub number: u64,
}

/// The catalogue fields the screening order reads, with the ion's Hückel shell and gap.
impl RankFields for Candidate {
    fn pentagon_adjacencies(&self) -> u32 {
        self.record.pentagon_adjacencies
    }
    fn shell(&self) -> Shell {
        self.record.shell
    }
    fn hexagon_strain(&self) -> f64 {
        f64::from(self.record.hexagon_strain)
    }
    fn gap(&self) -> f64 {
        f64::from(self.record.gap)
    }
    fn homo(&self) -> f64 {
        f64::from(self.record.homo)
    }
    fn lumo(&self) -> f64 {
        f64::from(self.record.lumo)
    }
    fn pi_energy(&self) -> f64 {
        f64::from(self.record.pi_energy)
    }
    fn automorphisms(&self) -> u32 {
        self.record.automorphisms
    }
    fn cmp_kekule(&self, other: &Self) -> Ordering {
        self.record.kekule.cmp(&other.record.kekule)
    }
    fn cmp_spiral(&self, other: &Self) -> Ordering {
        self.number.cmp(&other.number)
    }
}

/// Refuses a charge the tight-binding model cannot fill (4n - Q electrons in 4n orbitals).
pub fn check_charge(atoms: u32, charge: i32) -> Result<(), ScreenError> {
    energy::electron_count(atoms as usize, charge)
        .map(|_| ())
        .map_err(|e| ScreenError::Charge(e.to_string()))
}

/// Stage 1: the candidates, best first.
pub fn select(dir: &Path, spec: &ScreenSpec) -> Result<Vec<Candidate>, ScreenError> {
    check_charge(spec.atoms, spec.charge)?;
    let base = Query {
        atoms: spec.atoms,
        face_set: spec.face_set,
        ipr: spec.ipr,
        charge: catalogue_charge(dir, spec),
        filter: Filter::default(),
        rank_by: vec![RankKey {
            field: RankField::PentagonAdjacencies,
            descending: false,
        }],
        top: Some(1),
    };
    let fewest = catalogue::query(dir, &base)?
        .first()
        .map_or(0, |r| r.pentagon_adjacencies);
    let filter = Filter {
        max_pentagon_adjacencies: spec.margin().map(|m| fewest.saturating_add(m)),
        ..Filter::default()
    };
    let records = catalogue::query(
        dir,
        &Query {
            filter,
            top: None,
            ..base
        },
    )?;
    let mut candidates = records
        .into_iter()
        .map(|record| ion_candidate(record, spec))
        .collect::<Result<Vec<_>, _>>()?;
    let keys = rank::default_keys();
    candidates.sort_by(|a, b| rank::compare(a, b, &keys));
    if let Candidates::Margin { max, .. } = spec.candidates {
        candidates.truncate(max);
    }
    Ok(candidates)
}

/// Which catalogue file stage 1 reads: the neutral cage's when present (graph descriptors do
/// not depend on the charge, and the ion's Hückel values are recomputed), else the ion's own.
fn catalogue_charge(dir: &Path, spec: &ScreenSpec) -> i32 {
    let present = |charge| {
        [spec.ipr, false].iter().any(|&ipr| {
            dir.join(catalogue::data_file_name(
                spec.face_set,
                spec.atoms,
                ipr,
                charge,
            ))
            .is_file()
        })
    };
    if present(0) || !present(spec.charge) {
        0
    } else {
        spec.charge
    }
}

/// The record with shell and gap of the cage ion (the catalogue holds the neutral cage's).
fn ion_candidate(mut record: Record, spec: &ScreenSpec) -> Result<Candidate, ScreenError> {
    let number = if spec.ipr {
        record.ipr_number
    } else {
        record.number
    }
    .ok_or_else(|| CatalogueError::Missing {
        dir: Default::default(),
        what: "isomer numbers (a shard file?); merge the shards first".into(),
    })?;
    if spec.charge != 0 {
        let spiral = record.spiral().map_err(|e| {
            ScreenError::Catalogue(CatalogueError::BadRecord {
                unit: 0,
                detail: e.to_string(),
            })
        })?;
        let values = huckel::eigenvalues(&spiral.to_cage());
        let summary = huckel::summarize(&values, spec.charge)
            .map_err(|e: HuckelError| ScreenError::Charge(e.to_string()))?;
        record.homo = summary.homo as f32;
        record.lumo = summary.lumo as f32;
        record.gap = summary.gap as f32;
        record.somo = summary.somo.map(|x| x as f32);
        record.shell = summary.shell;
        record.pi_energy = summary.pi_energy as f32;
    }
    Ok(Candidate { record, number })
}

/// How far stage 2 got.
#[derive(Debug, Clone, PartialEq)]
pub struct Outcome {
    /// Every energy stored for this size, list and charge (earlier screens included).
    pub energies: Energies,
    /// Candidates relaxed by this run.
    pub relaxed: usize,
    /// Candidates already stored, not redone.
    pub reused: usize,
}

/// Stage 2: relaxes every candidate not yet stored, `threads` at a time (0: one per core; more
/// than the cores are capped, as in `enumerate`),
/// calling `progress(done, total)` after each. The caller holds the catalogue lock.
pub fn relax_candidates(
    dir: &Path,
    spec: &ScreenSpec,
    candidates: &[Candidate],
    threads: usize,
    progress: &(dyn Fn(usize, usize) + Sync),
) -> Result<Outcome, ScreenError> {
    let mut writer = EnergyWriter::open(dir, spec.header())?;
    let todo: Vec<&Candidate> = candidates
        .iter()
        .filter(|c| !writer.has(c.number))
        .collect();
    let reused = candidates.len() - todo.len();
    let total = todo.len();
    progress(0, total);
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(crate::enumerate::worker_threads(threads))
        .build()
        .map_err(|e| ScreenError::Charge(format!("cannot start worker threads: {e}")))?;
    let (send, receive) = mpsc::channel::<Result<EnergyRecord, ScreenError>>();
    let settings = spec.settings;
    let charge = spec.charge;
    let mut first_error = None;
    std::thread::scope(|scope| {
        scope.spawn(move || {
            pool.install(|| {
                todo.par_iter().for_each_with(send, |send, c| {
                    let _ = send.send(relax_one(c, charge, settings));
                })
            })
        });
        for (done, result) in receive.into_iter().enumerate() {
            match result.and_then(|r| writer.append(r).map_err(ScreenError::from)) {
                Ok(()) => progress(done + 1, total),
                Err(e) => {
                    first_error.get_or_insert(e);
                }
            }
        }
    });
    if let Some(e) = first_error {
        return Err(e);
    }
    Ok(Outcome {
        energies: writer.finish()?,
        relaxed: total,
        reused,
    })
}

fn relax_one(c: &Candidate, charge: i32, settings: Settings) -> Result<EnergyRecord, ScreenError> {
    let spiral = c.record.spiral().map_err(|e| {
        ScreenError::Catalogue(CatalogueError::BadRecord {
            unit: 0,
            detail: e.to_string(),
        })
    })?;
    let relaxed = energy::relax(&spiral.to_cage(), charge, settings).map_err(|error| {
        ScreenError::Energy {
            number: c.number,
            error,
        }
    })?;
    Ok(energy_record(c, &relaxed))
}

/// The catalogue's record of a relaxation.
pub fn energy_record(c: &Candidate, r: &Relaxed) -> EnergyRecord {
    EnergyRecord {
        number: c.number,
        complete_number: c.record.number,
        special_faces: c.record.special_faces.clone(),
        energy_ev: r.energy_ev,
        band_ev: r.band_ev,
        repulsive_ev: r.repulsive_ev,
        homo_ev: r.frontier.homo_ev,
        lumo_ev: r.frontier.lumo_ev,
        gap_ev: r.frontier.gap_ev,
        somo: r
            .frontier
            .somo
            .map(|s| [s.level_ev, s.gap_below_ev, s.gap_above_ev]),
        partly_filled: r.frontier.partly_filled,
        max_force: r.max_force,
        iterations: r.iterations as u32,
        converged: r.converged,
        graph_kept: r.graph_kept,
        perturbed: r.perturbed,
        coords: r.coords.clone(),
    }
}

/// One screened isomer joined with its catalogue record, ranked by relative energy.
#[derive(Debug, Clone)]
pub struct Ranked {
    pub record: Record,
    pub energy: EnergyRecord,
    /// kJ/mol above the lowest rankable isomer; `None` if this one is not rankable.
    pub relative_kj: Option<f64>,
    /// 1 = lowest energy; `None` for results that are flagged (rearranged or not converged).
    pub rank: Option<u64>,
}

/// Every stored energy of the screen's size, list and charge, ranked: rankable results by
/// relative energy (ties by number), then flagged ones by number.
pub fn ranked(dir: &Path, spec: &ScreenSpec) -> Result<Vec<Ranked>, ScreenError> {
    let Some(energies) = energies::read(dir, &spec.header())? else {
        return Ok(Vec::new());
    };
    let records = catalogue::query(
        dir,
        &Query {
            atoms: spec.atoms,
            face_set: spec.face_set,
            ipr: spec.ipr,
            charge: catalogue_charge(dir, spec),
            filter: Filter::default(),
            rank_by: vec![RankKey {
                field: RankField::Spiral,
                descending: false,
            }],
            top: None,
        },
    )?;
    let mut out = Vec::new();
    for e in &energies.records {
        let record = records
            .get((e.number as usize).wrapping_sub(1))
            .filter(|r| r.special_faces == e.special_faces)
            .cloned()
            .ok_or_else(|| {
                ScreenError::Catalogue(CatalogueError::RunMismatch {
                    path: dir.join(spec.header().file_name()),
                    detail: format!(
                        "energy of isomer {} does not match the catalogue's isomer {}; the catalogue was rebuilt: delete this energy file and screen again",
                        e.number, e.number
                    ),
                })
            })?;
        out.push(Ranked {
            record,
            energy: e.clone(),
            relative_kj: energies.relative_kj(e),
            rank: None,
        });
    }
    out.sort_by(|a, b| match (a.relative_kj, b.relative_kj) {
        (Some(x), Some(y)) => x.total_cmp(&y).then(a.energy.number.cmp(&b.energy.number)),
        (Some(_), None) => Ordering::Less,
        (None, Some(_)) => Ordering::Greater,
        (None, None) => a.energy.number.cmp(&b.energy.number),
    });
    for (i, r) in out.iter_mut().enumerate() {
        if r.relative_kj.is_some() {
            r.rank = Some(i as u64 + 1);
        }
    }
    Ok(out)
}
