//! Conversions between Python values and the library's types: face sets by name, spirals from
//! the numbers an isomer record carries, and isomers and descriptors as plain dicts (the
//! `enumerate --json` keys), which the Python package wraps in its own classes.

use cagerank::cage::FaceSet;
use cagerank::catalogue::query::parse_faces;
use cagerank::score::nmr::format_pattern;
use cagerank::score::{spiral_numbers, Descriptors};
use cagerank::spiral::Spiral;
use pyo3::prelude::*;
use pyo3::types::PyDict;

/// A face set by its name (`fullerene`, `4-6`, `4-5-6`), with the CLI's message.
pub(crate) fn face_set(name: &str) -> PyResult<FaceSet> {
    parse_faces(name).map_err(crate::error)
}

/// The spiral an isomer record names: pentagon positions for fullerenes, the whole face-size
/// sequence for other face sets (see [`spiral_numbers`]).
pub(crate) fn spiral(atoms: u64, numbers: &[u32], faces: FaceSet) -> PyResult<Spiral> {
    match faces {
        FaceSet::Fullerene => {
            let indices: Vec<u64> = numbers.iter().map(|&i| u64::from(i)).collect();
            Spiral::from_pentagon_indices(atoms, &indices).map_err(crate::error)
        }
        other => {
            let sizes = numbers
                .iter()
                .map(|&s| u8::try_from(s).ok().filter(|&s| other.allows(s)))
                .collect::<Option<Vec<u8>>>()
                .ok_or_else(|| {
                    crate::error(format!(
                        "a {} spiral lists face sizes {:?} only",
                        other.name(),
                        other.sizes()
                    ))
                })?;
            if sizes.len() as u64 != atoms / 2 + 2 {
                return Err(crate::error(format!(
                    "a cage of {atoms} atoms has {} faces, but the spiral lists {}",
                    atoms / 2 + 2,
                    sizes.len()
                )));
            }
            Spiral::from_sizes(sizes).map_err(crate::error)
        }
    }
}

/// An isomer of a list as the Python side sees it.
#[derive(Debug, Clone)]
pub(crate) struct IsomerRecord {
    pub atoms: usize,
    pub face_set: FaceSet,
    pub spiral: Vec<u32>,
    pub number: Option<u64>,
    pub ipr_number: Option<u64>,
    pub ipr: bool,
    pub automorphisms: u32,
    pub descriptors: Option<Descriptors>,
}

impl IsomerRecord {
    pub(crate) fn new(spiral: &Spiral, automorphisms: u32, ipr: bool) -> IsomerRecord {
        IsomerRecord {
            atoms: spiral.atoms(),
            face_set: spiral.face_set().unwrap_or(FaceSet::Fullerene),
            spiral: spiral_numbers(spiral),
            number: None,
            ipr_number: None,
            ipr,
            automorphisms,
            descriptors: None,
        }
    }

    pub(crate) fn to_dict<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyDict>> {
        let d = PyDict::new(py);
        d.set_item("atoms", self.atoms)?;
        d.set_item("face_set", self.face_set.name())?;
        d.set_item("spiral", &self.spiral)?;
        d.set_item("number", self.number)?;
        d.set_item("ipr_number", self.ipr_number)?;
        d.set_item("ipr", self.ipr)?;
        d.set_item("automorphisms", self.automorphisms)?;
        match &self.descriptors {
            Some(x) => d.set_item("descriptors", descriptors(py, x)?)?,
            None => d.set_item("descriptors", py.None())?,
        }
        Ok(d)
    }
}

/// Descriptors under their JSON keys; the Kekulé count as a Python int (it outgrows 64 bits),
/// the 13C NMR pattern as the literature writes it (`3x10,2x20`).
pub(crate) fn descriptors<'py>(py: Python<'py>, x: &Descriptors) -> PyResult<Bound<'py, PyDict>> {
    let d = PyDict::new(py);
    d.set_item("pentagon_adjacencies", x.pentagon_adjacencies)?;
    d.set_item("pentagon_penalty_kj", x.pentagon_penalty_kj)?;
    d.set_item("hexagon_neighbours", x.hexagon_neighbours.to_vec())?;
    d.set_item("hexagon_strain", x.hexagon_strain)?;
    d.set_item("homo", x.homo)?;
    d.set_item("lumo", x.lumo)?;
    d.set_item("gap", x.gap)?;
    d.set_item("somo", x.somo)?;
    d.set_item("shell", x.shell.name())?;
    d.set_item("pi_energy", x.pi_energy)?;
    d.set_item("kekule", big_int(py, &x.kekule)?)?;
    d.set_item("automorphisms", x.automorphisms)?;
    d.set_item("point_group", x.point_group.name())?;
    d.set_item("chiral", x.chiral)?;
    d.set_item("nmr", format_pattern(&x.nmr))?;
    Ok(d)
}

/// A decimal string as a Python int of any size.
pub(crate) fn big_int<'py>(py: Python<'py>, decimal: &str) -> PyResult<Bound<'py, PyAny>> {
    py.get_type::<pyo3::types::PyInt>().call1((decimal,))
}
