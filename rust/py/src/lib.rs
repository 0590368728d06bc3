//! `toporank._core`: the thin binding layer over `toporank-core`.
//!
//! This layer only converts: numpy arrays in (read-only, without copying,
//! through [`common::read`]), the index width decided once
//! ([`common::on_graph`] calls the entry point's one generic function, an
//! [`common::OnGraph`] impl), the GIL released while the core computes
//! ([`common::compute`]), frozen result classes out, and core errors turned
//! into Python exceptions in one place ([`errors::CoreError`]). Arguments are
//! checked in Python beforehand (`toporank._validate`). One file per topic;
//! each has a `register` function called below.

use pyo3::prelude::*;

mod build;
mod common;
mod cycles;
mod dynamic;
mod errors;
mod frontier;
mod mainpath;
mod metrics;
mod order;
mod peel;
mod schedule;
mod sweeps;

#[pymodule]
fn _core(m: &Bound<'_, PyModule>) -> PyResult<()> {
    errors::register(m)?;
    common::register(m)?;
    order::register(m)?;
    metrics::register(m)?;
    schedule::register(m)?;
    sweeps::register(m)?;
    cycles::register(m)?;
    peel::register(m)?;
    dynamic::register(m)?;
    build::register(m)?;
    mainpath::register(m)?;
    frontier::register(m)?;
    Ok(())
}
