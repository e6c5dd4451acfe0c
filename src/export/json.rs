//! JSON export: the isomer's descriptor record with the relaxed coordinates, the force-field
//! result and the screening caution, as one pretty-printed object per file.
//!
//! The record is `score::FullRecord`, exactly what `show --json` prints; this module only adds
//! the ID with its list and both numbers, charge, multiplicity, geometry block and caution to it.

use super::{Entry, CAUTION};
use serde_json::{json, Value};
use std::io::{self, Write};

/// The full record of one entry as a JSON value.
pub fn record(entry: &Entry) -> Value {
    if let Some(d) = &entry.derivative {
        return super::derivative::record(entry, d);
    }
    let g = &entry.geometry;
    let double_bonds: Vec<[u32; 2]> = entry
        .kekule
        .iter()
        .map(|e| entry.cage.edges()[e.index()])
        .collect();
    let mut value = serde_json::to_value(&entry.record).unwrap_or(Value::Null);
    let extra = json!({
        "id": entry.id.to_string(),
        "list": entry.id.list_tag(),
        "cage": super::cages::json(entry),
        "number": entry.numbers.number,
        "ipr_number": entry.numbers.ipr_number,
        "charge": entry.charge,
        "multiplicity": entry.multiplicity(),
        "geometry": {
            "units": "angstrom",
            "coordinates": g.coords,
            "kekule_double_bonds": double_bonds,
            "force_field": if entry.bn.is_some() {
                "harmonic bonds from Pauling bond orders + ring-angle bending (see geometry::forcefield); carbon force field, B-N bond lengths not fitted"
            } else {
                "harmonic bonds from Pauling bond orders + ring-angle bending (see geometry::forcefield)"
            },
            "energy_ev": g.energy_ev,
            "max_force_ev_per_angstrom": g.max_force_ev_per_angstrom,
            "iterations": g.iterations,
            "converged": g.converged,
        },
        "caution": CAUTION,
    });
    if let (Value::Object(map), Value::Object(more)) = (&mut value, extra) {
        map.extend(more);
    }
    value
}

/// Writes the record of `entry` as pretty JSON followed by a newline.
pub fn write(w: &mut impl Write, entry: &Entry) -> io::Result<()> {
    serde_json::to_writer_pretty(&mut *w, &record(entry)).map_err(io::Error::other)?;
    writeln!(w)
}
