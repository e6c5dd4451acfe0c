//! What an export says about a cage of a face set other than the fullerenes' (4-6, 4-5-6,
//! 5-6-7): its face counts and isolation contacts in every file, and for a 4-6 cage the boron
//! and nitrogen atoms it is written with.
//!
//! A 4-6 cage is exported as the boron-nitride cage it models, with the colouring of
//! [`crate::score::boron_nitride`] (boron on atom 0 of the canonical-spiral winding) and every
//! B-N bond single: boron keeps valence 3 and nitrogen valence 3 with no formal charges, the
//! usual connection table for borazine-like rings, which cheminformatics toolkits sanitise. The
//! geometry is the carbon force field's ([`crate::geometry`]): no B-N force field is fitted, so
//! every BN file says so ([`BN_GEOMETRY_NOTE`]). Cages of the other sets are written as carbon.
//! Writing the files is left to the parent module; this module only supplies the values.

use super::Entry;
use crate::cage::FaceSet;
use crate::score::boron_nitride::BnDescriptors;
use crate::score::nmr::format_pattern;
use serde_json::{json, Value};

/// Said in the XYZ comment, the SDF header, the JSON record and every deck title of a BN cage.
pub const BN_GEOMETRY_NOTE: &str = "carbon force field, B-N bond lengths not fitted";

/// Element symbol of every atom: B and N for a 4-6 cage, else carbon.
pub fn elements(entry: &Entry) -> Vec<&'static str> {
    match &entry.bn {
        Some(bn) => bn.elements.iter().map(|e| e.symbol()).collect(),
        None => vec!["C"; entry.cage.atoms()],
    }
}

/// `key=value` pairs for the XYZ comment and SDF data fields: face set, formula, face counts,
/// contacts, and the BN values of a 4-6 cage. Empty for fullerenes, whose files keep their
/// layout.
pub fn pairs(entry: &Entry) -> Vec<(String, String)> {
    let set = entry.id.face_set;
    if set == FaceSet::Fullerene {
        return Vec::new();
    }
    let counts = entry.cage.face_size_counts();
    let faces: Vec<String> = (4..counts.len())
        .filter(|&s| counts[s] > 0)
        .map(|s| format!("{s}:{}", counts[s]))
        .collect();
    let mut out = vec![
        ("face_set".to_string(), set.to_string()),
        ("formula".to_string(), entry.id.formula()),
        ("faces".to_string(), faces.join(",")),
        (
            "square_adjacencies".to_string(),
            entry.cage.adjacencies_of(4).to_string(),
        ),
    ];
    if let Some(bn) = &entry.bn {
        out.extend(bn_pairs(bn));
    }
    out
}

fn bn_pairs(bn: &BnDescriptors) -> Vec<(String, String)> {
    vec![
        (
            "boron_on".to_string(),
            "atom 0 of the canonical-spiral winding".to_string(),
        ),
        ("bn_point_group".to_string(), bn.point_group.name()),
        ("bn_gap".to_string(), format!("{:.6}", bn.gap)),
        ("nmr_11b".to_string(), format_pattern(&bn.boron_nmr)),
        ("nmr_15n".to_string(), format_pattern(&bn.nitrogen_nmr)),
        ("geometry_note".to_string(), BN_GEOMETRY_NOTE.to_string()),
    ]
}

/// A BN cage's descriptors as the JSON object that `enumerate --json`, `show --json` and the
/// export's JSON records carry under "bn".
pub fn bn_json(bn: &BnDescriptors) -> Value {
    json!({
        "boron_on": "atom 0 of the canonical-spiral winding",
        "homo": bn.homo, "lumo": bn.lumo, "gap": bn.gap, "pi_energy": bn.pi_energy,
        "point_group": bn.point_group.name(), "chiral": bn.chiral,
        "automorphisms": bn.automorphisms,
        "cage_point_group": bn.cage_point_group.name(),
        "nmr_11b": format_pattern(&bn.boron_nmr),
        "nmr_15n": format_pattern(&bn.nitrogen_nmr),
        "swap_equivalent": bn.swap_equivalent,
    })
}

/// The face-set block of the JSON record (`null` for fullerenes).
pub fn json(entry: &Entry) -> Value {
    if entry.id.face_set == FaceSet::Fullerene {
        return Value::Null;
    }
    let counts = entry.cage.face_size_counts();
    let mut value = json!({
        "face_set": entry.id.face_set.to_string(),
        "formula": entry.id.formula(),
        "elements": elements(entry),
        "face_counts": {"4": counts[4], "5": counts[5], "6": counts[6], "7": counts[7]},
        "square_adjacencies": entry.cage.adjacencies_of(4),
    });
    if let (Some(bn), Some(map)) = (&entry.bn, value.as_object_mut()) {
        let mut bn = bn_json(bn);
        if let Some(b) = bn.as_object_mut() {
            b.insert("geometry_note".into(), json!(BN_GEOMETRY_NOTE));
        }
        map.insert("bn".into(), bn);
    }
    value
}
