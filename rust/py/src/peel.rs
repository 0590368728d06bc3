//! One shard's step of the level-synchronous peel (`toporank.distributed`).

use numpy::{IntoPyArray, PyArray1, PyArrayMethods};
use pyo3::exceptions::{PyTypeError, PyValueError};
use pyo3::prelude::*;
use pyo3::types::PyTuple;
use toporank_core::peel::{peel, Inbox, Shard};
use toporank_core::Idx;

use crate::common::{compute, slice, to_pyerr};

fn typed<'py, I: numpy::Element>(
    array: &Bound<'py, PyAny>,
    name: &str,
) -> PyResult<Bound<'py, PyArray1<I>>> {
    array.cast::<PyArray1<I>>().cloned().map_err(|_| {
        PyTypeError::new_err(format!("{name} must be a 1-D array of the dtype of indptr"))
    })
}

#[allow(clippy::too_many_arguments)]
fn run<'py, I: Idx + numpy::Element>(
    py: Python<'py>,
    indptr: &Bound<'py, PyAny>,
    targets: &Bound<'py, PyAny>,
    slot_group: &Bound<'py, PyAny>,
    groups: usize,
    remaining: &Bound<'py, PyAny>,
    level: &Bound<'py, PyAny>,
    inbox: [&Bound<'py, PyAny>; 3],
    seed_zero: bool,
) -> PyResult<Bound<'py, PyTuple>> {
    let read = |a: &Bound<'py, PyAny>, name: &str| typed::<I>(a, name).map(|a| a.readonly());
    let (indptr, targets) = (read(indptr, "indptr")?, read(targets, "targets")?);
    let slot_group = read(slot_group, "slot_group")?;
    let [nodes, counts, levels] = inbox;
    let (nodes, counts) = (read(nodes, "inbox_nodes")?, read(counts, "inbox_counts")?);
    let levels = read(levels, "inbox_levels")?;
    let write = |a: &Bound<'py, PyAny>, name: &str| {
        typed::<I>(a, name)?.try_readwrite().map_err(|_| {
            PyValueError::new_err(format!(
                "{name} must be a writeable array not shared with another"
            ))
        })
    };
    let (mut remaining, mut level) = (write(remaining, "remaining")?, write(level, "level")?);
    let shard = Shard {
        indptr: slice(&indptr, "indptr")?,
        targets: slice(&targets, "targets")?,
        slot_group: slice(&slot_group, "slot_group")?,
        groups,
    };
    let inbox = Inbox {
        nodes: slice(&nodes, "inbox_nodes")?,
        counts: slice(&counts, "inbox_counts")?,
        levels: slice(&levels, "inbox_levels")?,
    };
    let not_contiguous = |name: &str| PyValueError::new_err(format!("{name} must be contiguous"));
    let remaining = remaining.as_slice_mut().map_err(|_| not_contiguous("remaining"))?;
    let level = level.as_slice_mut().map_err(|_| not_contiguous("level"))?;
    let out = compute(py, || peel(&shard, remaining, level, &inbox, seed_zero))?
        .map_err(|e| to_pyerr(py, e))?;
    let offsets: Vec<i64> = out.offsets.iter().map(|&k| k as i64).collect();
    (
        out.peeled,
        out.slots.into_pyarray(py),
        out.counts.into_pyarray(py),
        out.levels.into_pyarray(py),
        offsets.into_pyarray(py),
    )
        .into_pyobject(py)
}

/// `(peeled, slots, counts, levels, offsets)`; updates `remaining` and
/// `level` in place. Every array has the dtype of `indptr` (int32 or int64)
/// except `offsets` (int64).
#[pyfunction]
#[pyo3(signature = (
    indptr, targets, slot_group, groups, remaining, level,
    inbox_nodes, inbox_counts, inbox_levels, seed_zero
))]
#[allow(clippy::too_many_arguments)]
fn peel_shard<'py>(
    py: Python<'py>,
    indptr: &Bound<'py, PyAny>,
    targets: &Bound<'py, PyAny>,
    slot_group: &Bound<'py, PyAny>,
    groups: usize,
    remaining: &Bound<'py, PyAny>,
    level: &Bound<'py, PyAny>,
    inbox_nodes: &Bound<'py, PyAny>,
    inbox_counts: &Bound<'py, PyAny>,
    inbox_levels: &Bound<'py, PyAny>,
    seed_zero: bool,
) -> PyResult<Bound<'py, PyTuple>> {
    let inbox = [inbox_nodes, inbox_counts, inbox_levels];
    if indptr.cast::<PyArray1<i64>>().is_ok() {
        run::<i64>(py, indptr, targets, slot_group, groups, remaining, level, inbox, seed_zero)
    } else if indptr.cast::<PyArray1<i32>>().is_ok() {
        run::<i32>(py, indptr, targets, slot_group, groups, remaining, level, inbox, seed_zero)
    } else {
        Err(PyTypeError::new_err("indptr must be a 1-D numpy array of int32 or int64"))
    }
}

pub(crate) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(peel_shard, m)?)
}
