//! Isomer lists and descriptors: counting and streaming the isomers of a size
//! ([`Enumeration`], off the GIL on a thread of its own), finding one by ID or spiral, and
//! scoring one or many. Wraps `cagerank::enumerate` and `cagerank::score`.

use crate::convert::{self, IsomerRecord};
use crate::interrupt::{self, Cancel};
use cagerank::cage::FaceSet;
use cagerank::enumerate::{self, Options, Spec};
use cagerank::id::{IsomerId, List};
use cagerank::score::{self, huckel, Descriptors};
use cagerank::spiral::{canonical_spiral, check_fullerene_atoms, Spiral};
use pyo3::prelude::*;
use pyo3::types::PyDict;
use std::ops::ControlFlow;
use std::sync::{mpsc, Mutex};

pub(crate) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(count, m)?)?;
    m.add_function(wrap_pyfunction!(check_charge, m)?)?;
    m.add_function(wrap_pyfunction!(check_size, m)?)?;
    m.add_function(wrap_pyfunction!(isomer_by_id, m)?)?;
    m.add_function(wrap_pyfunction!(from_spiral, m)?)?;
    m.add_function(wrap_pyfunction!(score_many, m)?)?;
    m.add_class::<Enumeration>()?;
    Ok(())
}

/// Most atoms of a cage of squares (or squares and pentagons) and hexagons searched here:
/// those lists grow fast and were checked on small sizes only.
const MAX_OTHER_ATOMS: u64 = 200;

/// The search for one size: the CLI's default (complete wherever face spirals reach), with
/// hexagon starts forced on by `all_starts`.
fn spec(atoms: u64, ipr: bool, faces: &str, all_starts: bool) -> PyResult<Spec> {
    let face_set = convert::face_set(faces)?;
    let mut spec = match face_set {
        FaceSet::Fullerene => Spec::fullerene(atoms, ipr).map_err(crate::error)?,
        other => {
            if ipr {
                return Err(crate::error(
                    "the isolated-pentagon rule applies to fullerenes only; drop ipr",
                ));
            }
            if atoms % 2 == 1 || !(8..=MAX_OTHER_ATOMS).contains(&atoms) {
                return Err(crate::error(format!(
                    "{atoms} atoms: {} cages are searched for even sizes from 8 to {MAX_OTHER_ATOMS}",
                    other.name()
                )));
            }
            Spec {
                atoms: atoms as u32,
                face_set: other,
                ipr: false,
                all_starts: true,
            }
        }
    };
    spec.all_starts |= all_starts;
    Ok(spec)
}

/// Number of isomers of one size; stops at the next window of units on Ctrl-C.
#[pyfunction]
#[pyo3(signature = (atoms, ipr=false, faces="fullerene", all_starts=false, threads=0))]
fn count(
    py: Python<'_>,
    atoms: u64,
    ipr: bool,
    faces: &str,
    all_starts: bool,
    threads: usize,
) -> PyResult<u64> {
    let spec = spec(atoms, ipr, faces, all_starts)?;
    let counted = interrupt::run(py, move |cancel| {
        let units = enumerate::units(&spec);
        let mut total = 0u64;
        enumerate::run_units_mapped(
            &spec,
            &units,
            threads,
            |_| (),
            |window| {
                total += window.iter().map(|(_, f)| f.len() as u64).sum::<u64>();
                if cancel.is_set() {
                    ControlFlow::Break(())
                } else {
                    ControlFlow::Continue(())
                }
            },
        )
        .map(|()| total)
    })?;
    counted.map_err(crate::error)
}

/// Checks that the size can be searched (the CLI's message otherwise).
#[pyfunction]
#[pyo3(signature = (atoms, ipr=false, faces="fullerene"))]
fn check_size(atoms: u64, ipr: bool, faces: &str) -> PyResult<()> {
    spec(atoms, ipr, faces, false).map(|_| ())
}

/// Checks that a cage of `atoms` can carry `charge` (the CLI's message otherwise).
#[pyfunction]
fn check_charge(atoms: usize, charge: i32) -> PyResult<()> {
    huckel::occupation(atoms, charge)
        .map(|_| ())
        .map_err(crate::error)
}

/// What the enumeration thread hands the iterator.
type Item = Result<IsomerRecord, String>;

/// How many isomers may wait for Python: enough to keep the search busy while Python handles
/// them, little enough to bound memory on sizes with millions of isomers.
const QUEUE: usize = 4096;

/// The isomers of one size in spiral (isomer-number) order, optionally scored, produced on a
/// thread of their own while Python iterates. Dropping the iterator stops the search.
#[pyclass(module = "cagerank._native")]
struct Enumeration {
    rx: Mutex<mpsc::Receiver<Item>>,
    cancel: Cancel,
}

#[pymethods]
impl Enumeration {
    #[new]
    #[pyo3(signature = (atoms, ipr=false, faces="fullerene", all_starts=false, threads=0, score=false, charge=0))]
    fn new(
        atoms: u64,
        ipr: bool,
        faces: &str,
        all_starts: bool,
        threads: usize,
        score: bool,
        charge: i32,
    ) -> PyResult<Enumeration> {
        let spec = spec(atoms, ipr, faces, all_starts)?;
        if score {
            check_charge(atoms as usize, charge)?;
        }
        let (tx, rx) = mpsc::sync_channel(QUEUE);
        let cancel = Cancel::default();
        let flag = cancel.clone();
        std::thread::Builder::new()
            .name("cagerank-enumerate".into())
            .spawn(move || produce(&spec, threads, score.then_some(charge), &tx, &flag))
            .map_err(|e| crate::error(format!("cannot start a worker thread: {e}")))?;
        Ok(Enumeration {
            rx: Mutex::new(rx),
            cancel,
        })
    }

    fn __iter__(slf: PyRef<'_, Self>) -> PyRef<'_, Self> {
        slf
    }

    fn __next__<'py>(&self, py: Python<'py>) -> PyResult<Option<Bound<'py, PyDict>>> {
        match interrupt::receive(py, &self.rx) {
            Ok(Some(Ok(record))) => Ok(Some(record.to_dict(py)?)),
            Ok(Some(Err(message))) => Err(crate::error(message)),
            Ok(None) => Ok(None),
            Err(e) => {
                self.cancel.set();
                Err(e)
            }
        }
    }

    /// Stops the search (also done when the iterator is dropped).
    fn close(&self) {
        self.cancel.set();
    }
}

impl Drop for Enumeration {
    fn drop(&mut self) {
        self.cancel.set();
    }
}

/// Runs the enumeration, sending each isomer (scored on the worker that found it when `charge`
/// is given) until the list ends, the receiver is gone or the run is cancelled.
fn produce(
    spec: &Spec,
    threads: usize,
    charge: Option<i32>,
    tx: &mpsc::SyncSender<Item>,
    cancel: &Cancel,
) {
    let opts = Options {
        threads,
        shard: None,
    };
    let map = |f: &enumerate::Found| charge.map(|q| score::describe_spiral(&f.spiral, q));
    let done = enumerate::enumerate_mapped(
        spec,
        &opts,
        |_, _| {},
        map,
        |iso, described| {
            if cancel.is_set() {
                return ControlFlow::Break(());
            }
            let item = match described.transpose() {
                Ok(descriptors) => {
                    let mut record = IsomerRecord::new(&iso.spiral, iso.automorphisms, iso.ipr);
                    record.number = iso.number;
                    record.ipr_number = iso.ipr_number;
                    record.descriptors = descriptors;
                    Ok(record)
                }
                Err(e) => Err(format!("scoring {}: {e}", iso.spiral)),
            };
            let failed = item.is_err();
            match tx.send(item) {
                Ok(()) if !failed => ControlFlow::Continue(()),
                _ => ControlFlow::Break(()),
            }
        },
    );
    if let Err(e) = done {
        let _ = tx.send(Err(e.to_string()));
    }
}

/// The isomer an ID names (`C84:IPR-23`; a bare `C84:23` is read in the IPR list when `ipr`),
/// found by running only the units up to it.
#[pyfunction]
#[pyo3(signature = (text, ipr=false))]
fn isomer_by_id<'py>(py: Python<'py>, text: &str, ipr: bool) -> PyResult<Bound<'py, PyDict>> {
    let id = IsomerId::parse(text, Some(List::from_ipr(ipr))).map_err(crate::error)?;
    let spec = Spec::fullerene(u64::from(id.atoms), id.list.is_ipr()).map_err(crate::error)?;
    let found = interrupt::run(py, move |_| enumerate::find_by_number(&spec, id.number))?;
    let iso = found.ok_or_else(|| {
        crate::error(format!(
            "C{} has no isomer {} in the {}; numbers start at 1",
            id.atoms,
            id.number,
            id.list.words()
        ))
    })?;
    let mut record = IsomerRecord::new(&iso.spiral, iso.automorphisms, iso.ipr);
    record.number = iso.number;
    record.ipr_number = iso.ipr_number;
    record.to_dict(py)
}

/// The isomer of a spiral as written in the literature (any start): its canonical spiral and
/// symmetry order; list numbers are not looked up.
#[pyfunction]
#[pyo3(signature = (atoms, spiral, faces="fullerene"))]
fn from_spiral<'py>(
    py: Python<'py>,
    atoms: u64,
    spiral: Vec<u32>,
    faces: &str,
) -> PyResult<Bound<'py, PyDict>> {
    let face_set = convert::face_set(faces)?;
    if face_set == FaceSet::Fullerene {
        check_fullerene_atoms(atoms).map_err(crate::error)?;
    }
    let spiral = convert::spiral(atoms, &spiral, face_set)?;
    let cage = spiral.to_cage();
    let canonical = canonical_spiral(&cage)
        .ok_or_else(|| crate::error("this cage has no face spiral, so it has no canonical form"))?;
    let record = IsomerRecord::new(
        &canonical.spiral,
        canonical.automorphisms.len() as u32,
        cage.is_ipr(),
    );
    record.to_dict(py)
}

/// Descriptors of many isomers (each given as atoms, spiral numbers, face set) on `threads`
/// workers, in input order; the first failure raises with the CLI's message.
#[pyfunction]
#[pyo3(signature = (isomers, charge=0, threads=0))]
fn score_many<'py>(
    py: Python<'py>,
    isomers: Vec<(u64, Vec<u32>, String)>,
    charge: i32,
    threads: usize,
) -> PyResult<Vec<Bound<'py, PyDict>>> {
    let spirals = isomers
        .iter()
        .map(|(atoms, numbers, faces)| {
            check_charge(*atoms as usize, charge)?;
            convert::spiral(*atoms, numbers, convert::face_set(faces)?)
        })
        .collect::<PyResult<Vec<Spiral>>>()?;
    let scored = interrupt::run(py, move |_| describe_on_pool(&spirals, charge, threads))?;
    let scored = scored.map_err(crate::error)?;
    scored.iter().map(|d| convert::descriptors(py, d)).collect()
}

fn describe_on_pool(
    spirals: &[Spiral],
    charge: i32,
    threads: usize,
) -> Result<Vec<Descriptors>, String> {
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()
        .map_err(|e| format!("cannot start worker threads: {e}"))?;
    pool.install(|| score::describe_all(spirals, charge))
        .into_iter()
        .zip(spirals)
        .map(|(d, s)| d.map_err(|e| format!("scoring {s}: {e}")))
        .collect()
}
