//! List scheduling on identical workers, and the bottom levels behind its
//! critical-path priority.

use numpy::{Element, IntoPyArray, PyArray1, PyArrayMethods, PyReadonlyArray1};
use pyo3::exceptions::{PyTypeError, PyValueError};
use pyo3::prelude::*;
use pyo3::types::PyTuple;
use toporank_core::kahn::Outcome;
use toporank_core::schedule::{self, Duration, Policy, Scheduled};
use toporank_core::{Csr, Idx, Key, KeyValues, Tie};

use crate::common::{compute, slice, to_pyerr};

/// `(None, (order, blocked, cycle))`: the Kahn outcome naming a cycle.
fn cyclic<'py, I: Idx + Element>(
    py: Python<'py>,
    outcome: Outcome<I>,
) -> PyResult<Bound<'py, PyTuple>> {
    let found = (
        outcome.order.into_pyarray(py),
        outcome.blocked.into_pyarray(py),
        outcome.cycle.into_pyarray(py),
    );
    (py.None(), found).into_pyobject(py)
}

fn run<'py, I: Idx + Element, T: Duration + Element + IntoPyObject<'py>>(
    py: Python<'py>,
    indptr: &[I],
    indices: &[I],
    durations: &[T],
    workers: usize,
    policy: &Policy<'_>,
) -> PyResult<Bound<'py, PyTuple>> {
    let found = compute(py, || {
        let g = Csr::new(indptr, indices)?;
        schedule::list_schedule(&g, durations, workers, policy)
    })?
    .map_err(|e| to_pyerr(py, e))?;
    match found {
        Scheduled::Cyclic(outcome) => cyclic(py, outcome),
        Scheduled::Done(s) => {
            let done = (
                s.start.into_pyarray(py),
                s.worker.into_pyarray(py),
                s.order.into_pyarray(py),
                s.makespan,
                s.critical_path,
                s.total_work,
            );
            (done, py.None()).into_pyobject(py)
        }
    }
}

fn levels<'py, I: Idx + Element, T: Duration + Element>(
    py: Python<'py>,
    indptr: &[I],
    indices: &[I],
    durations: &[T],
) -> PyResult<Bound<'py, PyTuple>> {
    let found = compute(py, || {
        let g = Csr::new(indptr, indices)?;
        schedule::bottom_levels(&g, durations)
    })?
    .map_err(|e| to_pyerr(py, e))?;
    match found {
        Err(outcome) => cyclic(py, outcome),
        Ok(level) => (level.into_pyarray(py), py.None()).into_pyobject(py),
    }
}

enum Durations<'py> {
    Int(PyReadonlyArray1<'py, i64>),
    Float(PyReadonlyArray1<'py, f64>),
}

fn read_durations<'py>(durations: &Bound<'py, PyAny>) -> PyResult<Durations<'py>> {
    if let Ok(a) = durations.cast::<PyArray1<i64>>() {
        return Ok(Durations::Int(a.readonly()));
    }
    if let Ok(a) = durations.cast::<PyArray1<f64>>() {
        return Ok(Durations::Float(a.readonly()));
    }
    Err(PyTypeError::new_err("durations must be a 1-D numpy array of int64 or float64"))
}

/// Graham list schedule: `((start, worker, order, makespan, critical_path,
/// total_work), None)`, or `(None, (order, blocked, cycle))` for a cyclic graph.
///
/// `policy` is queue, stack, priority (by `rank`, ties to the smaller id; by
/// id without `rank`), random (from `seed`) or critical.
#[pyfunction]
#[pyo3(signature = (indptr, indices, durations, workers, policy, rank=None, seed=0))]
#[allow(clippy::too_many_arguments)]
fn list_schedule<'py>(
    py: Python<'py>,
    indptr: &Bound<'py, PyAny>,
    indices: &Bound<'py, PyAny>,
    durations: &Bound<'py, PyAny>,
    workers: usize,
    policy: &str,
    rank: Option<&Bound<'py, PyAny>>,
    seed: u64,
) -> PyResult<Bound<'py, PyTuple>> {
    let rank = rank
        .map(|r| {
            r.cast::<PyArray1<u64>>()
                .map(|a| a.readonly())
                .map_err(|_| PyTypeError::new_err("rank must be a 1-D uint64 numpy array"))
        })
        .transpose()?;
    let rank = rank.as_ref().map(|r| slice(r, "rank")).transpose()?;
    let policy = match policy {
        "queue" => Policy::Tie(Tie::Queue),
        "stack" => Policy::Tie(Tie::Stack),
        "priority" => {
            Policy::Tie(Tie::Priority(Key { values: rank.map(KeyValues::U64), descending: false }))
        }
        "random" => Policy::Tie(Tie::Random { seed }),
        "critical" => Policy::CriticalPath,
        other => return Err(PyValueError::new_err(format!("unknown policy {other:?}"))),
    };
    let durations = read_durations(durations)?;
    with_index_width!(indptr, indices, I => {
        let (indptr, indices) = (slice(&indptr, "indptr")?, slice(&indices, "indices")?);
        match &durations {
            Durations::Int(d) => run::<I, i64>(py, indptr, indices, slice(d, "durations")?, workers, &policy),
            Durations::Float(d) => run::<I, f64>(py, indptr, indices, slice(d, "durations")?, workers, &policy),
        }
    })
}

/// Bottom level of every task: `(levels, None)`, or `(None, (order, blocked,
/// cycle))` for a cyclic graph.
#[pyfunction]
fn bottom_levels<'py>(
    py: Python<'py>,
    indptr: &Bound<'py, PyAny>,
    indices: &Bound<'py, PyAny>,
    durations: &Bound<'py, PyAny>,
) -> PyResult<Bound<'py, PyTuple>> {
    let durations = read_durations(durations)?;
    with_index_width!(indptr, indices, I => {
        let (indptr, indices) = (slice(&indptr, "indptr")?, slice(&indices, "indices")?);
        match &durations {
            Durations::Int(d) => levels::<I, i64>(py, indptr, indices, slice(d, "durations")?),
            Durations::Float(d) => levels::<I, f64>(py, indptr, indices, slice(d, "durations")?),
        }
    })
}

pub(crate) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(list_schedule, m)?)?;
    m.add_function(wrap_pyfunction!(bottom_levels, m)?)?;
    Ok(())
}
