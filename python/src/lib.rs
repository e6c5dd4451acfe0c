//! `cagerank._native`: the Python extension module over the cagerank library.
//!
//! It converts between Python values and the library's types and runs the library's long
//! calls with the GIL released and Ctrl-C honoured ([`interrupt`]); the science (enumeration,
//! scoring, catalogue queries, geometry, tight binding, identification) stays in the library.
//! The typed, documented API is the pure-Python package `cagerank` around this module; pandas,
//! ASE and RDKit are its business, not this crate's.

mod catalogue;
mod convert;
mod interrupt;
mod isomers;
mod structure;

use pyo3::prelude::*;

pyo3::create_exception!(
    cagerank,
    CagerankError,
    pyo3::exceptions::PyValueError,
    "A request cagerank cannot carry out; the message is the CLI's one-line error."
);

/// The error a library failure becomes: the same one line the CLI prints.
pub(crate) fn error(message: impl std::fmt::Display) -> PyErr {
    CagerankError::new_err(message.to_string())
}

#[pymodule]
fn _native(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add("CagerankError", m.py().get_type::<CagerankError>())?;
    isomers::register(m)?;
    structure::register(m)?;
    catalogue::register(m)?;
    Ok(())
}
