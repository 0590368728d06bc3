//! Graphs with cycles: components, condensation, witnesses, cycle cuts.

use numpy::{IntoPyArray, PyArray1, PyArrayMethods};
use pyo3::exceptions::{PyTypeError, PyValueError};
use pyo3::prelude::*;
use pyo3::types::PyTuple;
use toporank_core::{condense, cut, scc, witness, Csr};

use crate::common::{compute, slice, to_pyerr};
use crate::order::{make_tie, read_key};

/// Strongly connected component of every node, numbered topologically.
///
/// Returns `(labels, count)`.
#[pyfunction]
fn strong_components<'py>(
    py: Python<'py>,
    indptr: &Bound<'py, PyAny>,
    indices: &Bound<'py, PyAny>,
) -> PyResult<Bound<'py, PyTuple>> {
    with_index_width!(indptr, indices, I => {
        let (indptr, indices) = (slice(&indptr, "indptr")?, slice(&indices, "indices")?);
        let found = compute(py, || Csr::<I>::new(indptr, indices).and_then(|g| scc::strong_components(&g)))?
            .map_err(|e| to_pyerr(py, e))?;
        (found.labels.into_pyarray(py), found.count).into_pyobject(py)
    })
}

/// Components and the condensation.
///
/// Returns `(labels, sizes, indptr, indices, weights)`; the last three are
/// the component graph as CSR with ascending targets per row.
#[pyfunction]
fn condensation<'py>(
    py: Python<'py>,
    indptr: &Bound<'py, PyAny>,
    indices: &Bound<'py, PyAny>,
) -> PyResult<Bound<'py, PyTuple>> {
    with_index_width!(indptr, indices, I => {
        let (indptr, indices) = (slice(&indptr, "indptr")?, slice(&indices, "indices")?);
        let built = compute(py, || {
            let g = Csr::<I>::new(indptr, indices)?;
            let components = scc::strong_components(&g)?;
            let condensed = scc::condensation(&g, &components)?;
            Ok((components.sizes(), components.labels, condensed))
        })?
        .map_err(|e| to_pyerr(py, e))?;
        let (sizes, labels, condensed) = built;
        (
            labels.into_pyarray(py),
            sizes.into_pyarray(py),
            condensed.indptr.into_pyarray(py),
            condensed.indices.into_pyarray(py),
            condensed.weights.into_pyarray(py),
        )
            .into_pyobject(py)
    })
}

/// Every node in an order despite cycles: `on_cycle = "condense"` keeps
/// each component contiguous, components in Kahn's order of the condensation
/// under `tie`; `"cut"` is Kahn's order under `tie` once the cycles are cut.
#[pyfunction]
#[pyo3(signature = (indptr, indices, on_cycle, tie, key=None, descending=false, seed=0))]
#[allow(clippy::too_many_arguments)]
fn order_despite_cycles<'py>(
    py: Python<'py>,
    indptr: &Bound<'py, PyAny>,
    indices: &Bound<'py, PyAny>,
    on_cycle: &str,
    tie: &str,
    key: Option<&Bound<'py, PyAny>>,
    descending: bool,
    seed: u64,
) -> PyResult<Bound<'py, PyAny>> {
    let key = read_key(key)?;
    let tie = make_tie(tie, &key, descending, seed)?;
    let condensed = match on_cycle {
        "condense" => true,
        "cut" => false,
        other => return Err(PyValueError::new_err(format!("unknown on_cycle {other:?}"))),
    };
    with_index_width!(indptr, indices, I => {
        let (indptr, indices) = (slice(&indptr, "indptr")?, slice(&indices, "indices")?);
        let order = compute(py, || {
            let g = Csr::<I>::new(indptr, indices)?;
            if condensed { condense::condensed_order(&g, &tie) } else { cut::cut_order(&g, &tie) }
        })?
        .map_err(|e| to_pyerr(py, e))?;
        Ok(order.into_pyarray(py).into_any())
    })
}

/// A shortest cycle through `through`, or through the smallest node on any
/// cycle when `through` is None; None when there is no such cycle.
#[pyfunction]
#[pyo3(signature = (indptr, indices, through=None))]
fn cycle_witness<'py>(
    py: Python<'py>,
    indptr: &Bound<'py, PyAny>,
    indices: &Bound<'py, PyAny>,
    through: Option<i64>,
) -> PyResult<Option<Bound<'py, PyAny>>> {
    with_index_width!(indptr, indices, I => {
        let (indptr, indices) = (slice(&indptr, "indptr")?, slice(&indices, "indices")?);
        let found = compute(py, || {
            let g = Csr::<I>::new(indptr, indices)?;
            match through {
                Some(v) => witness::shortest_cycle_through(&g, v as i128),
                None => witness::find_cycle(&g),
            }
        })?
        .map_err(|e| to_pyerr(py, e))?;
        Ok(found.map(|cycle| cycle.into_pyarray(py).into_any()))
    })
}

/// A minimal cycle cut: `(removed, order)` with `removed` the stored
/// positions of the cut edges (ascending, int64).
#[pyfunction]
fn cut_cycles<'py>(
    py: Python<'py>,
    indptr: &Bound<'py, PyAny>,
    indices: &Bound<'py, PyAny>,
) -> PyResult<Bound<'py, PyTuple>> {
    with_index_width!(indptr, indices, I => {
        let (indptr, indices) = (slice(&indptr, "indptr")?, slice(&indices, "indices")?);
        let found = compute(py, || Csr::<I>::new(indptr, indices).and_then(|g| cut::cut_cycles(&g)))?
            .map_err(|e| to_pyerr(py, e))?;
        let removed: Vec<i64> = found.removed.into_iter().map(|k| k as i64).collect();
        (removed.into_pyarray(py), found.order.into_pyarray(py)).into_pyobject(py)
    })
}

pub(crate) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(strong_components, m)?)?;
    m.add_function(wrap_pyfunction!(condensation, m)?)?;
    m.add_function(wrap_pyfunction!(order_despite_cycles, m)?)?;
    m.add_function(wrap_pyfunction!(cycle_witness, m)?)?;
    m.add_function(wrap_pyfunction!(cut_cycles, m)?)?;
    Ok(())
}
