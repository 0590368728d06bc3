//! Sweeps along a topological order: levels, heights, critical path, path counts.
//!
//! Each function returns a tuple whose first item is `None` on a DAG, or
//! `(order, blocked, cycle)` from Kahn's loop when the graph has a cycle, so
//! the Python layer raises `CyclicGraphError` with labels.

use numpy::{IntoPyArray, PyArray1, PyArrayMethods, PyReadonlyArray1};
use pyo3::exceptions::PyTypeError;
use pyo3::prelude::*;
use pyo3::types::PyTuple;
use toporank_core::levels as level_sweep;
use toporank_core::sweep::{Acyclic, Weights};
use toporank_core::{critical, paths, Csr, Idx, Outcome};

use crate::common::{compute, slice, to_pyerr};

fn cyclic_tuple<'py, I: Idx + numpy::Element>(
    py: Python<'py>,
    outcome: Outcome<I>,
) -> PyResult<Bound<'py, PyAny>> {
    Ok((
        outcome.order.into_pyarray(py),
        outcome.blocked.into_pyarray(py),
        outcome.cycle.into_pyarray(py),
    )
        .into_pyobject(py)?
        .into_any())
}

/// Split an [`Acyclic`] into `(None, value)` or `((order, blocked, cycle), None)`.
fn split<'py, T, I: Idx + numpy::Element>(
    py: Python<'py>,
    swept: Acyclic<T, I>,
) -> PyResult<(Bound<'py, PyAny>, Option<T>)> {
    match swept {
        Ok(value) => Ok((py.None().into_bound(py), Some(value))),
        Err(outcome) => Ok((cyclic_tuple(py, outcome)?, None)),
    }
}

fn offsets_array(offsets: &[usize]) -> Vec<i64> {
    offsets.iter().map(|&k| k as i64).collect()
}

/// `(cyclic, level, nodes, offsets)`: `nodes` sorted by `(level, id)` and the
/// level boundaries in it, both `None` unless `grouped`.
#[pyfunction]
#[pyo3(signature = (indptr, indices, threads=1, grouped=false))]
fn levels<'py>(
    py: Python<'py>,
    indptr: &Bound<'py, PyAny>,
    indices: &Bound<'py, PyAny>,
    threads: usize,
    grouped: bool,
) -> PyResult<Bound<'py, PyTuple>> {
    with_index_width!(indptr, indices, I => {
        let (indptr, indices) = (slice(&indptr, "indptr")?, slice(&indices, "indices")?);
        let swept = compute(py, || {
            let csr = Csr::<I>::new(indptr, indices)?;
            match level_sweep::level_order(&csr, threads)? {
                Ok(order) => {
                    let level = level_sweep::levels_from(&order, threads)?;
                    let nodes = match grouped {
                        true => Some(level_sweep::grouped(&level, &order.offsets)?),
                        false => None,
                    };
                    Ok(Ok((level, nodes, offsets_array(&order.offsets))))
                }
                Err(cyclic) => Ok(Err(cyclic)),
            }
        })?
        .map_err(|e| to_pyerr(py, e))?;
        let (cyclic, value) = split(py, swept)?;
        match value {
            None => (cyclic, py.None(), py.None(), py.None()).into_pyobject(py),
            Some((level, nodes, offsets)) => (
                cyclic,
                level.into_pyarray(py),
                nodes.map(|v| v.into_pyarray(py)),
                grouped.then(|| offsets.into_pyarray(py)),
            )
                .into_pyobject(py),
        }
    })
}

/// `(cyclic, height)`: the longest path in edges from each node to a sink.
#[pyfunction]
#[pyo3(signature = (indptr, indices, threads=1))]
fn heights<'py>(
    py: Python<'py>,
    indptr: &Bound<'py, PyAny>,
    indices: &Bound<'py, PyAny>,
    threads: usize,
) -> PyResult<Bound<'py, PyTuple>> {
    with_index_width!(indptr, indices, I => {
        let (indptr, indices) = (slice(&indptr, "indptr")?, slice(&indices, "indices")?);
        let swept = compute(py, || {
            let csr = Csr::<I>::new(indptr, indices)?;
            match level_sweep::level_order(&csr, threads)? {
                Ok(order) => level_sweep::heights(&csr, &order, threads).map(Ok),
                Err(cyclic) => Ok(Err(cyclic)),
            }
        })?
        .map_err(|e| to_pyerr(py, e))?;
        let (cyclic, value) = split(py, swept)?;
        (cyclic, value.map(|h| h.into_pyarray(py))).into_pyobject(py)
    })
}

fn read_weights<'py>(
    weights: Option<&Bound<'py, PyAny>>,
    name: &str,
) -> PyResult<Option<PyReadonlyArray1<'py, f64>>> {
    weights
        .map(|w| {
            w.cast::<PyArray1<f64>>()
                .map(|a| a.readonly())
                .map_err(|_| PyTypeError::new_err(format!("{name} must be a 1-D float64 array")))
        })
        .transpose()
}

fn as_weights<'a>(
    array: &'a Option<PyReadonlyArray1<'_, f64>>,
    name: &str,
    default: f64,
) -> PyResult<Weights<'a>> {
    Ok(match array {
        Some(a) => Weights::Each(slice(a, name)?),
        None => Weights::Constant(default),
    })
}

/// `(cyclic, length, path, earliest_start, latest_start)`. Missing node
/// weights are 0; missing edge weights are `default_edge_weight`.
#[pyfunction]
#[pyo3(signature = (indptr, indices, node_weight=None, edge_weight=None, default_edge_weight=1.0, threads=1))]
fn critical_path<'py>(
    py: Python<'py>,
    indptr: &Bound<'py, PyAny>,
    indices: &Bound<'py, PyAny>,
    node_weight: Option<&Bound<'py, PyAny>>,
    edge_weight: Option<&Bound<'py, PyAny>>,
    default_edge_weight: f64,
    threads: usize,
) -> PyResult<Bound<'py, PyTuple>> {
    let node_weight = read_weights(node_weight, "node_weight")?;
    let edge_weight = read_weights(edge_weight, "edge_weight")?;
    let node_weight = as_weights(&node_weight, "node_weight", 0.0)?;
    let edge_weight = as_weights(&edge_weight, "edge_weight", default_edge_weight)?;
    with_index_width!(indptr, indices, I => {
        let (indptr, indices) = (slice(&indptr, "indptr")?, slice(&indices, "indices")?);
        let swept = compute(py, || {
            let csr = Csr::<I>::new(indptr, indices)?;
            critical::critical_path(&csr, node_weight, edge_weight, threads)
        })?
        .map_err(|e| to_pyerr(py, e))?;
        let (cyclic, value) = split(py, swept)?;
        match value {
            None => (cyclic, py.None(), py.None(), py.None(), py.None()).into_pyobject(py),
            Some(s) => (
                cyclic,
                s.length,
                s.path.into_pyarray(py),
                s.earliest_start.into_pyarray(py),
                s.latest_start.into_pyarray(py),
            )
                .into_pyobject(py),
        }
    })
}

/// `(cyclic, from_sources, to_sinks, through_edge, total, exact, log)`;
/// `exact` is `(from, to, through, total)` in uint64 or `None` on overflow,
/// `log` the same in natural logs, only when the float total is infinite.
#[pyfunction]
#[pyo3(signature = (indptr, indices, threads=1))]
fn path_counts<'py>(
    py: Python<'py>,
    indptr: &Bound<'py, PyAny>,
    indices: &Bound<'py, PyAny>,
    threads: usize,
) -> PyResult<Bound<'py, PyTuple>> {
    with_index_width!(indptr, indices, I => {
        let (indptr, indices) = (slice(&indptr, "indptr")?, slice(&indices, "indices")?);
        let swept = compute(py, || {
            let csr = Csr::<I>::new(indptr, indices)?;
            paths::path_counts(&csr, threads)
        })?
        .map_err(|e| to_pyerr(py, e))?;
        let (cyclic, value) = split(py, swept)?;
        let Some(c) = value else {
            let none = py.None();
            return (cyclic, none.clone_ref(py), none.clone_ref(py), none.clone_ref(py), none.clone_ref(py), none.clone_ref(py), none).into_pyobject(py);
        };
        let exact = c.exact.map(|e| {
            (
                e.from_sources.into_pyarray(py),
                e.to_sinks.into_pyarray(py),
                e.through_edge.into_pyarray(py),
                e.total,
            )
        });
        let log = c.log.map(|l| {
            (
                l.from_sources.into_pyarray(py),
                l.to_sinks.into_pyarray(py),
                l.through_edge.into_pyarray(py),
                l.total,
            )
        });
        (
            cyclic,
            c.from_sources.into_pyarray(py),
            c.to_sinks.into_pyarray(py),
            c.through_edge.into_pyarray(py),
            c.total,
            exact,
            log,
        )
            .into_pyobject(py)
    })
}

pub(crate) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(levels, m)?)?;
    m.add_function(wrap_pyfunction!(heights, m)?)?;
    m.add_function(wrap_pyfunction!(critical_path, m)?)?;
    m.add_function(wrap_pyfunction!(path_counts, m)?)?;
    Ok(())
}
