//! Structures: force-field and tight-binding geometries as numpy arrays, Kekulé bond orders,
//! and identification of a cage from coordinates (a file, or arrays and element symbols).
//! Wraps `cagerank::geometry`, `cagerank::energy`, `cagerank::score::kekule` and
//! `cagerank::identify`; atoms are numbered as the isomer's spiral winds them.

use crate::convert::{self, IsomerRecord};
use crate::interrupt;
use cagerank::cage::Cage;
use cagerank::catalogue;
use cagerank::energy::{self, Relaxed, Settings};
use cagerank::geometry;
use cagerank::identify::numbers::{self, Number};
use cagerank::identify::{self, Atom, Format, Identity, Options, Structure};
use cagerank::score::{self, kekule};
use numpy::{PyArray1, PyArrayMethods};
use pyo3::prelude::*;
use pyo3::types::{PyDict, PyList};
use rayon::prelude::*;
use std::path::PathBuf;

pub(crate) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(structure, m)?)?;
    m.add_function(wrap_pyfunction!(tight_binding_many, m)?)?;
    m.add_function(wrap_pyfunction!(identify_file, m)?)?;
    m.add_function(wrap_pyfunction!(identify_atoms, m)?)?;
    Ok(())
}

/// An `n × 3` float array.
fn coords_array<'py>(py: Python<'py>, coords: &[[f64; 3]]) -> PyResult<Bound<'py, PyAny>> {
    let flat: Vec<f64> = coords.iter().flatten().copied().collect();
    Ok(PyArray1::from_vec(py, flat)
        .reshape([coords.len(), 3])?
        .into_any())
}

/// The bonds as an `m × 2` array of 0-based atom indices.
fn edges_array<'py>(py: Python<'py>, cage: &Cage) -> PyResult<Bound<'py, PyAny>> {
    let flat: Vec<u32> = cage.edges().iter().flatten().copied().collect();
    Ok(PyArray1::from_vec(py, flat)
        .reshape([cage.edges().len(), 2])?
        .into_any())
}

/// Bonds, one Kekulé structure's bond orders (1 or 2, aligned with the bonds; `None` when the
/// cage has none) and the force-field geometry with its convergence data.
#[pyfunction]
#[pyo3(signature = (atoms, spiral, faces="fullerene"))]
fn structure<'py>(
    py: Python<'py>,
    atoms: u64,
    spiral: Vec<u32>,
    faces: &str,
) -> PyResult<Bound<'py, PyDict>> {
    let spiral = convert::spiral(atoms, &spiral, convert::face_set(faces)?)?;
    let cage = spiral.to_cage();
    let work = cage.clone();
    let (geometry, kekule) = interrupt::run(py, move |_| {
        (geometry::relax(&work), kekule::kekule_structure(&work))
    })?;
    let geometry = geometry.map_err(crate::error)?;
    let d = PyDict::new(py);
    d.set_item("edges", edges_array(py, &cage)?)?;
    let orders = kekule.map(|double| {
        let mut order = vec![1u8; cage.edges().len()];
        for e in double {
            order[e.index()] = 2;
        }
        PyArray1::from_vec(py, order)
    });
    d.set_item("bond_orders", orders)?;
    d.set_item("coords", coords_array(py, &geometry.coords)?)?;
    d.set_item("energy_ev", geometry.energy_ev)?;
    d.set_item("max_force", geometry.max_force_ev_per_angstrom)?;
    d.set_item("iterations", geometry.iterations)?;
    d.set_item("converged", geometry.converged)?;
    Ok(d)
}

/// The CLI's check of `--max-force`.
fn check_max_force(f: f64) -> PyResult<()> {
    if f.is_finite() && f > 0.0 {
        Ok(())
    } else {
        Err(crate::error(format!(
            "--max-force {f} is not a positive number; use e.g. 1e-3 (eV/Å)"
        )))
    }
}

/// Tight-binding relaxations (Xu et al. 1992) of many isomers on `threads` workers, in input
/// order. Each relaxation is sequential, so results do not depend on `threads`; on Ctrl-C no
/// further relaxation starts.
#[pyfunction]
#[pyo3(signature = (isomers, charge=0, max_force=1e-3, threads=0))]
fn tight_binding_many<'py>(
    py: Python<'py>,
    isomers: Vec<(u64, Vec<u32>, String)>,
    charge: i32,
    max_force: f64,
    threads: usize,
) -> PyResult<Vec<Bound<'py, PyDict>>> {
    check_max_force(max_force)?;
    let cages = isomers
        .iter()
        .map(|(atoms, numbers, faces)| {
            energy::electron_count(*atoms as usize, charge).map_err(crate::error)?;
            Ok(convert::spiral(*atoms, numbers, convert::face_set(faces)?)?.to_cage())
        })
        .collect::<PyResult<Vec<Cage>>>()?;
    let settings = Settings {
        max_force,
        ..Settings::default()
    };
    let relaxed = interrupt::run(py, move |cancel| {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .map_err(|e| format!("cannot start worker threads: {e}"))?;
        let results: Vec<Option<Result<Relaxed, String>>> = pool.install(|| {
            cages
                .par_iter()
                .map(|cage| {
                    (!cancel.is_set())
                        .then(|| energy::relax(cage, charge, settings).map_err(|e| e.to_string()))
                })
                .collect()
        });
        Ok::<_, String>(results)
    })?;
    let relaxed = relaxed.map_err(crate::error)?;
    relaxed
        .into_iter()
        .map(|r| match r {
            Some(Ok(r)) => relaxed_dict(py, &r),
            Some(Err(e)) => Err(crate::error(e)),
            None => Err(pyo3::exceptions::PyKeyboardInterrupt::new_err("")),
        })
        .collect()
}

fn relaxed_dict<'py>(py: Python<'py>, r: &Relaxed) -> PyResult<Bound<'py, PyDict>> {
    let d = PyDict::new(py);
    d.set_item("coords", coords_array(py, &r.coords)?)?;
    d.set_item("energy_ev", r.energy_ev)?;
    d.set_item("band_ev", r.band_ev)?;
    d.set_item("repulsive_ev", r.repulsive_ev)?;
    d.set_item("homo_ev", r.frontier.homo_ev)?;
    d.set_item("lumo_ev", r.frontier.lumo_ev)?;
    d.set_item("gap_ev", r.frontier.gap_ev)?;
    d.set_item("somo_ev", r.frontier.somo.map(|s| s.level_ev))?;
    d.set_item("partly_filled", r.frontier.partly_filled)?;
    d.set_item("max_force", r.max_force)?;
    d.set_item("iterations", r.iterations)?;
    d.set_item("converged", r.converged)?;
    d.set_item("graph_kept", r.graph_kept)?;
    d.set_item("perturbed", r.perturbed)?;
    Ok(d)
}

/// Files larger than this are refused rather than read into memory (as by the CLI).
const MAX_FILE_BYTES: u64 = 1 << 30;

/// How to identify: the CLI's `identify` options.
fn options(ignore: Option<&str>, tolerance: f64) -> PyResult<Options> {
    if !(0.0..=1.5).contains(&tolerance) {
        return Err(crate::error(
            "--tolerance must be between 0 and 1.5 Å (default 0.40)",
        ));
    }
    let ignore = match ignore {
        Some(list) => identify::parse_element_list(list).map_err(crate::error)?,
        None => Vec::new(),
    };
    Ok(Options { ignore, tolerance })
}

/// Where isomer numbers are read: the given catalogue, else the default one when present.
fn catalogue_dir(catalogue: Option<PathBuf>) -> Option<PathBuf> {
    catalogue.or_else(|| Some(catalogue::default_dir()).filter(|d| d.is_dir()))
}

/// Identifies every structure of an XYZ or SDF file: a list with, per structure, the
/// identification or the one-line reason it failed (a file of one structure raises instead).
#[pyfunction]
#[pyo3(signature = (path, ignore_elements=None, tolerance=identify::perceive::DEFAULT_TOLERANCE, format=None, catalogue=None, numbers=true, charge=0))]
#[allow(clippy::too_many_arguments)]
fn identify_file<'py>(
    py: Python<'py>,
    path: PathBuf,
    ignore_elements: Option<&str>,
    tolerance: f64,
    format: Option<&str>,
    catalogue: Option<PathBuf>,
    numbers: bool,
    charge: i32,
) -> PyResult<Bound<'py, PyList>> {
    let options = options(ignore_elements, tolerance)?;
    let format = match format.map(str::to_ascii_lowercase).as_deref() {
        None => Format::from_path(&path),
        Some("xyz") => Some(Format::Xyz),
        Some("sdf" | "sd" | "mol") => Some(Format::Sdf),
        Some(other) => {
            return Err(crate::error(format!(
                "'{other}' is not a format; use xyz or sdf"
            )))
        }
    };
    let shown = path.display().to_string();
    let meta =
        std::fs::metadata(&path).map_err(|e| crate::error(format!("cannot read {shown}: {e}")))?;
    if meta.len() > MAX_FILE_BYTES {
        return Err(crate::error(format!(
            "{shown} is larger than 1 GiB; split it into smaller files"
        )));
    }
    let bytes =
        std::fs::read(&path).map_err(|e| crate::error(format!("cannot read {shown}: {e}")))?;
    let structures =
        identify::read(&bytes, format).map_err(|e| crate::error(format!("{shown}: {e}")))?;
    let dir = numbers.then(|| catalogue_dir(catalogue)).flatten();
    let single = structures.len() == 1;
    let out = PyList::empty(py);
    for s in structures {
        match identified(py, s, &options, numbers, dir.clone(), charge) {
            Ok(d) => out.append(d)?,
            Err(e) if single => return Err(e),
            Err(e) if e.is_instance_of::<crate::CagerankError>(py) => {
                out.append(e.value(py).str()?)?
            }
            Err(e) => return Err(e),
        }
    }
    Ok(out)
}

/// Identifies the cage given by coordinates (Å, `n × 3`) and element symbols.
#[pyfunction]
#[pyo3(signature = (coords, symbols, ignore_elements=None, tolerance=identify::perceive::DEFAULT_TOLERANCE, catalogue=None, numbers=true, charge=0))]
#[allow(clippy::too_many_arguments)]
fn identify_atoms<'py>(
    py: Python<'py>,
    coords: Vec<[f64; 3]>,
    symbols: Vec<String>,
    ignore_elements: Option<&str>,
    tolerance: f64,
    catalogue: Option<PathBuf>,
    numbers: bool,
    charge: i32,
) -> PyResult<Bound<'py, PyDict>> {
    let options = options(ignore_elements, tolerance)?;
    if coords.len() != symbols.len() {
        return Err(crate::error(format!(
            "{} positions but {} element symbols: give one symbol per atom",
            coords.len(),
            symbols.len()
        )));
    }
    if coords.iter().flatten().any(|x| !x.is_finite()) {
        return Err(crate::error("a coordinate is not a finite number"));
    }
    let atoms = symbols
        .iter()
        .zip(coords)
        .map(|(symbol, position)| {
            let element = identify::element_symbol(symbol).ok_or_else(|| {
                crate::error(format!(
                    "'{}' is not an element symbol",
                    cagerank::id::printable(symbol)
                ))
            })?;
            Ok(Atom { element, position })
        })
        .collect::<PyResult<Vec<Atom>>>()?;
    let structure = Structure {
        title: String::new(),
        atoms,
        line: 1,
    };
    let dir = numbers.then(|| catalogue_dir(catalogue)).flatten();
    identified(py, structure, &options, numbers, dir, charge)
}

/// Identity, numbers and descriptors of one structure; the search for numbers (which may
/// enumerate a list) runs off the GIL and stops on Ctrl-C.
fn identified<'py>(
    py: Python<'py>,
    structure: Structure,
    options: &Options,
    with_numbers: bool,
    dir: Option<PathBuf>,
    charge: i32,
) -> PyResult<Bound<'py, PyDict>> {
    let options = options.clone();
    let found = interrupt::run(py, move |_| -> Result<_, String> {
        let id: Identity = identify::identify(&structure, &options).map_err(|e| e.to_string())?;
        let Some(canonical) = &id.canonical else {
            return Ok((id, None, None));
        };
        let described = score::describe(&id.cage, canonical, charge).map_err(|e| e.to_string())?;
        let numbered = if with_numbers {
            Some(
                numbers::numbers(&canonical.spiral, id.cage.is_ipr(), dir.as_deref())
                    .map_err(|e| e.to_string())?,
            )
        } else {
            None
        };
        Ok((id, Some(described), numbered))
    })?;
    let (id, described, numbered) = found.map_err(crate::error)?;
    let d = PyDict::new(py);
    d.set_item("ignored", id.ignored)?;
    d.set_item("coords_atoms", id.cage.atoms())?;
    let record = id.canonical.as_ref().map(|c| {
        let mut r = IsomerRecord::new(&c.spiral, c.automorphisms.len() as u32, id.cage.is_ipr());
        r.number = numbered.and_then(|n| n.complete.listed());
        r.ipr_number = numbered.and_then(|n| n.ipr.listed());
        r.descriptors = described;
        r
    });
    match record {
        Some(r) => d.set_item("isomer", r.to_dict(py)?)?,
        None => d.set_item("isomer", py.None())?,
    }
    let not_computed = |n: Number| matches!(n, Number::NotComputed { .. });
    d.set_item(
        "numbers_not_computed",
        numbered.is_some_and(|n| not_computed(n.complete) || not_computed(n.ipr)),
    )?;
    Ok(d)
}
