//! Catalogue queries: the same request, checks, order and energy join as `cagerank query`
//! (`cagerank::catalogue::query::answer`), returned as columns named like its CSV header
//! with typed values (numbers as numbers, missing values as `None`).

use crate::convert;
use crate::interrupt;
use cagerank::catalogue::query::{self, Request, StoredEnergies};
use cagerank::catalogue::{self, Record};
use cagerank::score::nmr::format_pattern;
use pyo3::prelude::*;
use pyo3::types::PyList;
use std::path::PathBuf;

pub(crate) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(default_catalogue, m)?)?;
    m.add_function(wrap_pyfunction!(query_catalogue, m)?)?;
    Ok(())
}

/// `$CAGERANK_CATALOGUE`, else `./catalogues`.
#[pyfunction]
fn default_catalogue() -> PathBuf {
    catalogue::default_dir()
}

/// Answers a query: `(column names, rows)`, columns as in `cagerank query --format csv`.
#[pyfunction]
#[pyo3(signature = (dir, atoms, ipr=false, faces="fullerene".to_string(), charge=0, top=None, rank_by=None, max_pentagon_adjacencies=None, min_gap=None, shell=None, point_group=None, nmr=None, nmr_lines=None, nmr_merged=None, chiral=None))]
#[allow(clippy::too_many_arguments)]
fn query_catalogue<'py>(
    py: Python<'py>,
    dir: PathBuf,
    atoms: u32,
    ipr: bool,
    faces: String,
    charge: i32,
    top: Option<usize>,
    rank_by: Option<String>,
    max_pentagon_adjacencies: Option<u32>,
    min_gap: Option<f32>,
    shell: Option<String>,
    point_group: Option<String>,
    nmr: Option<String>,
    nmr_lines: Option<u64>,
    nmr_merged: Option<String>,
    chiral: Option<bool>,
) -> PyResult<(Vec<&'static str>, Bound<'py, PyList>)> {
    let request = Request {
        atoms,
        ipr,
        faces,
        charge,
        top,
        rank_by,
        max_pentagon_adjacencies,
        min_gap,
        shell,
        point_group,
        nmr,
        nmr_lines,
        nmr_merged,
        chiral,
    };
    let answer = interrupt::run(py, move |_| query::answer(&dir, &request))?;
    let answer = answer.map_err(crate::error)?;
    let somo = answer.records.iter().any(|r| r.somo.is_some());
    let energies = (!answer.energies.is_empty()).then_some(&answer.energies);
    let rows = PyList::empty(py);
    for (i, r) in answer.records.iter().enumerate() {
        rows.append(row(py, i + 1, r, somo, energies)?)?;
    }
    Ok((
        cagerank::catalogue::query::columns(somo, energies.is_some()),
        rows,
    ))
}

fn row<'py>(
    py: Python<'py>,
    rank: usize,
    r: &Record,
    somo: bool,
    energies: Option<&StoredEnergies>,
) -> PyResult<Bound<'py, PyList>> {
    let out = PyList::empty(py);
    out.append(rank)?;
    out.append(r.number)?;
    out.append(r.ipr_number)?;
    out.append(r.point_group.name())?;
    out.append(r.pentagon_adjacencies)?;
    if let Some(e) = energies {
        let stored = e.get(r);
        out.append(stored.and_then(|(_, rel)| rel))?;
        out.append(stored.map(|(s, _)| s.gap_ev))?;
    }
    out.append(r.shell.name())?;
    out.append(f64::from(r.hexagon_strain))?;
    out.append(f64::from(r.gap))?;
    if somo {
        out.append(r.somo.map(f64::from))?;
    }
    out.append(f64::from(r.pi_energy))?;
    out.append(convert::big_int(py, &r.kekule.to_string())?)?;
    out.append(r.chiral)?;
    out.append(format_pattern(&r.nmr))?;
    out.append(r.spiral_text())?;
    Ok(out)
}
