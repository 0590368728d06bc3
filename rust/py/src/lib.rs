//! `toporank._core`: the thin binding layer over `toporank-core`.
//!
//! This layer only converts: numpy arrays in (read-only, without copying),
//! the GIL released while the core computes, vectors handed back to numpy
//! without copying, and core errors turned into Python exceptions in one
//! place ([`common::to_pyerr`]). Input normalisation happens in Python
//! beforehand (`toporank._graph`). One file per topic; each has a
//! `register` function called below.

use pyo3::prelude::*;

/// Dispatch `$body` once over the index width of `$indptr`/`$indices`
/// (int32 or int64, both the same), binding typed read-only arrays.
macro_rules! with_index_width {
    ($indptr:ident, $indices:ident, $ty:ident => $body:block) => {{
        if let (Ok($indptr), Ok($indices)) =
            ($indptr.cast::<PyArray1<i64>>(), $indices.cast::<PyArray1<i64>>())
        {
            type $ty = i64;
            let $indptr = $indptr.readonly();
            let $indices = $indices.readonly();
            $body
        } else if let (Ok($indptr), Ok($indices)) =
            ($indptr.cast::<PyArray1<i32>>(), $indices.cast::<PyArray1<i32>>())
        {
            type $ty = i32;
            let $indptr = $indptr.readonly();
            let $indices = $indices.readonly();
            $body
        } else {
            Err(PyTypeError::new_err(
                "indptr and indices must be 1-D numpy arrays of one dtype, int32 or int64",
            ))
        }
    }};
}

mod common;
mod cycles;
mod dynamic;
mod metrics;
mod order;
mod schedule;
mod sweeps;

#[pymodule]
fn _core(m: &Bound<'_, PyModule>) -> PyResult<()> {
    order::register(m)?;
    metrics::register(m)?;
    schedule::register(m)?;
    sweeps::register(m)?;
    cycles::register(m)?;
    dynamic::register(m)?;
    Ok(())
}
