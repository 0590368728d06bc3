//! Kahn's algorithm, edge lists to CSR, order checks.

use numpy::{IntoPyArray, PyArray1, PyArrayMethods, PyReadonlyArray1};
use pyo3::exceptions::{PyTypeError, PyValueError};
use pyo3::prelude::*;
use pyo3::types::PyTuple;
use toporank_core::verify::Violation;
use toporank_core::{edges, kahn_shared, verify, Csr, Key, KeyValues, Tie};

use crate::common::{compute, slice, to_pyerr};

pub(crate) enum OwnedKey<'py> {
    None,
    I64(PyReadonlyArray1<'py, i64>),
    U64(PyReadonlyArray1<'py, u64>),
    F64(PyReadonlyArray1<'py, f64>),
}

pub(crate) fn read_key<'py>(key: Option<&Bound<'py, PyAny>>) -> PyResult<OwnedKey<'py>> {
    let Some(key) = key else {
        return Ok(OwnedKey::None);
    };
    if let Ok(a) = key.cast::<PyArray1<i64>>() {
        return Ok(OwnedKey::I64(a.readonly()));
    }
    if let Ok(a) = key.cast::<PyArray1<u64>>() {
        return Ok(OwnedKey::U64(a.readonly()));
    }
    if let Ok(a) = key.cast::<PyArray1<f64>>() {
        return Ok(OwnedKey::F64(a.readonly()));
    }
    Err(PyTypeError::new_err("key must be a 1-D numpy array of int64, uint64 or float64"))
}

/// The tie-break policy named `tie`, borrowing its key from `key`.
pub(crate) fn make_tie<'a>(
    tie: &str,
    key: &'a OwnedKey<'_>,
    descending: bool,
    seed: u64,
) -> PyResult<Tie<'a>> {
    let values = match key {
        OwnedKey::None => None,
        OwnedKey::I64(a) => Some(KeyValues::I64(slice(a, "key")?)),
        OwnedKey::U64(a) => Some(KeyValues::U64(slice(a, "key")?)),
        OwnedKey::F64(a) => Some(KeyValues::F64(slice(a, "key")?)),
    };
    Ok(match tie {
        "queue" => Tie::Queue,
        "stack" => Tie::Stack,
        "priority" => Tie::Priority(Key { values, descending }),
        "random" => Tie::Random { seed },
        other => return Err(PyValueError::new_err(format!("unknown tie {other:?}"))),
    })
}

/// Kahn's algorithm on a CSR graph.
///
/// Returns `(order, blocked, cycle)`; `blocked` and `cycle` are empty for a DAG.
#[pyfunction]
#[pyo3(signature = (indptr, indices, tie, key=None, descending=false, seed=0, threads=1))]
#[allow(clippy::too_many_arguments)]
fn kahn_order<'py>(
    py: Python<'py>,
    indptr: &Bound<'py, PyAny>,
    indices: &Bound<'py, PyAny>,
    tie: &str,
    key: Option<&Bound<'py, PyAny>>,
    descending: bool,
    seed: u64,
    threads: usize,
) -> PyResult<Bound<'py, PyTuple>> {
    let key = read_key(key)?;
    let tie = make_tie(tie, &key, descending, seed)?;
    with_index_width!(indptr, indices, I => {
        let (indptr, indices) = (slice(&indptr, "indptr")?, slice(&indices, "indices")?);
        let outcome = compute(py, || {
            Csr::<I>::new(indptr, indices).and_then(|g| kahn_shared(&g, &tie, threads))
        })?
            .map_err(|e| to_pyerr(py, e))?;
        (
            outcome.order.into_pyarray(py),
            outcome.blocked.into_pyarray(py),
            outcome.cycle.into_pyarray(py),
        )
            .into_pyobject(py)
    })
}

/// Group an edge list by source (stable), returning `(indptr, indices, edge_ids)`.
#[pyfunction]
#[pyo3(signature = (src, dst, n, with_edge_ids=false))]
fn edges_to_csr<'py>(
    py: Python<'py>,
    src: &Bound<'py, PyAny>,
    dst: &Bound<'py, PyAny>,
    n: usize,
    with_edge_ids: bool,
) -> PyResult<Bound<'py, PyTuple>> {
    with_index_width!(src, dst, I => {
        let (src, dst) = (slice(&src, "src")?, slice(&dst, "dst")?);
        let built = compute(py, || edges::edges_to_csr::<I>(src, dst, n, with_edge_ids))?
            .map_err(|e| to_pyerr(py, e))?;
        let edge_ids = built.edge_ids.map(|ids| ids.into_pyarray(py));
        (built.indptr.into_pyarray(py), built.indices.into_pyarray(py), edge_ids).into_pyobject(py)
    })
}

/// A violation as a plain tuple; the Python layer words the message.
fn violation_tuple<'py>(py: Python<'py>, violation: Violation) -> PyResult<Bound<'py, PyTuple>> {
    match violation {
        Violation::OutOfRange { position, value } => {
            ("out_of_range", position, value as i64).into_pyobject(py)
        }
        Violation::Duplicate { node, first, second } => {
            ("duplicate", node, first, second).into_pyobject(py)
        }
        Violation::Missing { node } => ("missing", node).into_pyobject(py),
        Violation::Edge { edge, u, v, pos_u, pos_v } => {
            ("edge", edge, u, v, pos_u, pos_v).into_pyobject(py)
        }
    }
}

fn read_order<'py>(order: &Bound<'py, PyAny>) -> PyResult<PyReadonlyArray1<'py, i64>> {
    order
        .cast::<PyArray1<i64>>()
        .map(|a| a.readonly())
        .map_err(|_| PyTypeError::new_err("order must be a 1-D int64 numpy array"))
}

/// `None` if `order` is a topological order of the graph, else a violation tuple.
#[pyfunction]
fn verify_order<'py>(
    py: Python<'py>,
    indptr: &Bound<'py, PyAny>,
    indices: &Bound<'py, PyAny>,
    order: &Bound<'py, PyAny>,
) -> PyResult<Option<Bound<'py, PyTuple>>> {
    let order = read_order(order)?;
    let order = slice(&order, "order")?;
    with_index_width!(indptr, indices, I => {
        let (indptr, indices) = (slice(&indptr, "indptr")?, slice(&indices, "indices")?);
        let found = compute(py, || Csr::<I>::new(indptr, indices).and_then(|g| verify::verify(&g, order)))?
            .map_err(|e| to_pyerr(py, e))?;
        found.map(|v| violation_tuple(py, v)).transpose()
    })
}

/// Position of each node in `order` (a permutation of `0..n`), or a violation tuple.
#[pyfunction]
fn positions<'py>(
    py: Python<'py>,
    order: &Bound<'py, PyAny>,
    n: usize,
) -> PyResult<Bound<'py, PyAny>> {
    let order = read_order(order)?;
    let order = slice(&order, "order")?;
    match compute(py, || verify::positions(order, n))? {
        Ok(position) => Ok(position.into_pyarray(py).into_any()),
        Err(violation) => Ok(violation_tuple(py, violation)?.into_any()),
    }
}

pub(crate) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(kahn_order, m)?)?;
    m.add_function(wrap_pyfunction!(edges_to_csr, m)?)?;
    m.add_function(wrap_pyfunction!(verify_order, m)?)?;
    m.add_function(wrap_pyfunction!(positions, m)?)?;
    Ok(())
}
