//! Exporting a derivative (a pattern ID such as `C60:IPR-1+2H:5`): the parent cage relaxed by
//! `geometry::relax`, the addends placed and bond orders, charges and radical centres assigned
//! by `derivative::structure::build`, and what the export's files and manifest row say about
//! it.
//!
//! A derivative travels through [`super::write_all`] as an ordinary [`Entry`] whose
//! `derivative` part is set: the entry keeps the parent's ID, numbers, spiral, cage and
//! force-field geometry, and this part adds the pattern ID, the file stem
//! ([`crate::derivative::PatternId::file_stem`]), the molecule and the pattern's scores. The
//! manifest's descriptor columns then hold the derivative's values (see [`scalar_fields`]).
//! Choosing the pattern is the caller's business.

use super::{Entry, ExportError, Numbers, CAUTION};
use crate::derivative::named::Named;
use crate::derivative::score::PatternScore;
use crate::derivative::structure::Molecule;
use crate::geometry;
use crate::id::IsomerId;
use crate::score;
use serde_json::{json, Value};

/// What an [`Entry`] carries when it is a derivative.
#[derive(Debug, Clone)]
pub struct DerivativePart {
    /// The pattern ID, e.g. `C60:IPR-1+2H:5`.
    pub id: String,
    /// Its file stem, e.g. `C60_IPR-1+2H-5`.
    pub stem: String,
    /// The kind token (`H`, `CH2@66`, `N`, ...).
    pub kind: String,
    /// The sites as text (atoms, or bonds with their atoms), 1-based.
    pub sites: String,
    pub score: PatternScore,
    /// Atoms left in the pi system and their electrons.
    pub pi_centres: usize,
    pub pi_electrons: i64,
    /// The whole molecule: cage atoms in the parent's numbering, then the addend atoms.
    pub molecule: Molecule,
}

/// Relaxes the parent cage of `named` and builds the derivative on it. `parent_id` and
/// `numbers` name the parent (as the export's manifest rows do for cages).
pub fn prepare(parent_id: IsomerId, numbers: Numbers, named: &Named) -> Result<Entry, ExportError> {
    let spiral = named.parent.spiral.clone();
    let cage = named.parent.cage.clone();
    let record = score::full_record(&spiral, numbers.number, numbers.ipr_number, 0)
        .map_err(ExportError::Score)?;
    let geometry = geometry::relax(&cage).map_err(ExportError::Geometry)?;
    let molecule = named.molecule(&geometry.coords);
    let (pi_centres, pi_electrons) = named.pi_system();
    let kekule = score::kekule::kekule_structure(&cage).unwrap_or_default();
    Ok(Entry {
        id: parent_id,
        numbers,
        spiral,
        cage,
        charge: named.charge,
        record,
        geometry,
        tight_binding: None,
        kekule,
        bn: None,
        derivative: Some(DerivativePart {
            id: named.id.to_string(),
            stem: named.file_stem(),
            kind: named.id.kind.token(),
            sites: named.sites_text(),
            score: named.score.clone(),
            pi_centres,
            pi_electrons,
            molecule,
        }),
    })
}

/// Manifest and SDF values of a derivative under the cage export's column names, so one
/// manifest holds cages and derivatives: `atoms` counts every atom of the molecule;
/// `pentagon_adjacencies`, `hexagon_*` and `ff_*` describe the parent cage (the addends do not
/// change its rings; its force-field geometry is the one written); `homo`, `lumo`, `gap`,
/// `kekule`, `chiral` are the derivative's (remaining pi system, heteroatom parameters);
/// `pi_energy` is the total pi energy per remaining pi centre (the cage value is per atom, all
/// atoms being pi centres there); `shell` is `closed`, or `radical` when the built molecule
/// has unpaired centres;
/// `automorphisms` is the order of the pattern's stabiliser; `nmr` is left empty (not computed
/// for derivatives); the tight-binding columns are empty.
pub fn scalar_fields(entry: &Entry, d: &DerivativePart) -> Vec<(String, String)> {
    let parent = &entry.record.descriptors;
    let s = &d.score;
    let g = &entry.geometry;
    let hexagons: Vec<String> = parent
        .hexagon_neighbours
        .iter()
        .map(u32::to_string)
        .collect();
    // From the built molecule, not the Kekulé flag: C59N+ has no Kekulé structure of its
    // carbons, yet its charge sits on a carbon and no electron is left unpaired.
    let shell = if d.molecule.radical_centres() == 0 {
        "closed"
    } else {
        "radical"
    };
    vec![
        ("atoms".into(), d.molecule.atoms.len().to_string()),
        ("charge".into(), entry.charge.to_string()),
        (
            "pentagon_adjacencies".into(),
            parent.pentagon_adjacencies.to_string(),
        ),
        (
            "pentagon_penalty_kj".into(),
            format!("{:.1}", parent.pentagon_penalty_kj),
        ),
        ("hexagon_neighbours".into(), hexagons.join(" ")),
        (
            "hexagon_strain".into(),
            format!("{:.6}", parent.hexagon_strain),
        ),
        ("homo".into(), format!("{:.6}", s.homo)),
        ("lumo".into(), format!("{:.6}", s.lumo)),
        ("gap".into(), format!("{:.6}", s.gap)),
        ("shell".into(), shell.to_string()),
        (
            "pi_energy".into(),
            format!("{:.6}", s.pi_energy / d.pi_centres.max(1) as f64),
        ),
        ("kekule".into(), s.kekule.clone()),
        ("automorphisms".into(), s.stabiliser.to_string()),
        ("chiral".into(), s.chiral.to_string()),
        ("nmr".into(), String::new()),
        ("ff_energy_ev".into(), format!("{:.6}", g.energy_ev)),
        (
            "ff_max_force_ev_per_angstrom".into(),
            format!("{:.2e}", g.max_force_ev_per_angstrom),
        ),
        ("geometry".into(), entry.geometry_source().to_string()),
        ("tb_energy_ev".into(), String::new()),
        ("relative_energy_kj".into(), String::new()),
        ("tb_gap_ev".into(), String::new()),
        ("tb_max_force_ev_per_angstrom".into(), String::new()),
    ]
}

/// SDF data fields that only a derivative has, written after the common ones.
pub fn extra_fields(d: &DerivativePart) -> Vec<(String, String)> {
    vec![
        ("formula".into(), d.molecule.formula()),
        ("kind".into(), d.kind.clone()),
        ("sites".into(), d.sites.clone()),
        ("orbit".into(), d.score.orbit.to_string()),
        ("radical".into(), d.score.radical.to_string()),
        (
            "radical_centres".into(),
            d.molecule.radical_centres().to_string(),
        ),
        (
            "pi_energy_total".into(),
            format!("{:.6}", d.score.pi_energy),
        ),
    ]
}

/// The JSON record of a derivative: the pattern's scores, the molecule (elements, Å
/// coordinates, bonds with orders, charges, radical centres), the parent's IDs and descriptor
/// record, and the caution.
pub fn record(entry: &Entry, d: &DerivativePart) -> Value {
    let m = &d.molecule;
    let g = &entry.geometry;
    let parent = serde_json::to_value(&entry.record).unwrap_or(Value::Null);
    let elements: Vec<&str> = m.atoms.iter().map(|a| a.element).collect();
    let coordinates: Vec<[f64; 3]> = m.atoms.iter().map(|a| a.position).collect();
    // Bonds as [atom, atom, order] and charges as [atom, charge], 0-based atoms.
    let bonds: Vec<Value> = m
        .bonds
        .iter()
        .map(|(pair, order)| json!([pair[0], pair[1], order]))
        .collect();
    let charges: Vec<Value> = m
        .atoms
        .iter()
        .enumerate()
        .filter(|(_, a)| a.charge != 0)
        .map(|(i, a)| json!([i, a.charge]))
        .collect();
    let radicals: Vec<usize> = m
        .atoms
        .iter()
        .enumerate()
        .filter(|(_, a)| a.radical)
        .map(|(i, _)| i)
        .collect();
    json!({
        "id": d.id,
        "formula": m.formula(),
        "parent": entry.id.to_string(),
        "list": entry.id.list.tag(),
        "number": entry.numbers.number,
        "ipr_number": entry.numbers.ipr_number,
        "kind": d.kind,
        "sites_text": d.sites,
        "pattern": d.score,
        "pi_centres": d.pi_centres,
        "pi_electrons": d.pi_electrons,
        "charge": entry.charge,
        "electrons": m.electrons(),
        "multiplicity": m.multiplicity(),
        "molecule": {
            "units": "angstrom",
            "elements": elements,
            "coordinates": coordinates,
            "bonds": bonds,
            "charges": charges,
            "radical_centres": radicals,
        },
        "geometry": {
            "source": "parent cage relaxed by the force field (geometry::relax), addends placed on local normals, not relaxed",
            "energy_ev": g.energy_ev,
            "max_force_ev_per_angstrom": g.max_force_ev_per_angstrom,
            "converged": g.converged,
        },
        "parent_record": parent,
        "caution": CAUTION,
    })
}
