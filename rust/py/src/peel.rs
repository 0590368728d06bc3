//! One shard's step of the level-synchronous peel (`toporank.distributed`).

use numpy::{PyArray1, PyArrayMethods};
use pyo3::prelude::*;
use toporank_core::peel::{peel, Inbox, Shard};

use crate::common::{array, compute, has_dtype, read, Index};
use crate::errors::input_error;

/// One shard's step: how many nodes it peeled and its outbox (`slots`,
/// `counts`, `levels`, grouped by destination shard at `offsets`).
#[pyclass(module = "toporank._core", frozen)]
pub(crate) struct PeelStep {
    #[pyo3(get)]
    peeled: usize,
    #[pyo3(get)]
    slots: Py<PyAny>,
    #[pyo3(get)]
    counts: Py<PyAny>,
    #[pyo3(get)]
    levels: Py<PyAny>,
    #[pyo3(get)]
    offsets: Py<PyAny>,
}

/// Argument `name`, writeable in place, of dtype `I`.
fn writeable<'py, I: Index>(
    array: &Bound<'py, PyAny>,
    name: &'static str,
) -> PyResult<numpy::PyReadwriteArray1<'py, I>> {
    let array = array
        .cast::<PyArray1<I>>()
        .map_err(|_| input_error(format!("{name} must be a 1-D array of the dtype of indptr")))?;
    array.try_readwrite().map_err(|_| {
        input_error(format!("{name} must be a writeable array not shared with another"))
    })
}

#[allow(clippy::too_many_arguments)]
fn run<'py, I: Index>(
    py: Python<'py>,
    indptr: &Bound<'py, PyAny>,
    targets: &Bound<'py, PyAny>,
    slot_group: &Bound<'py, PyAny>,
    groups: usize,
    remaining: &Bound<'py, PyAny>,
    level: &Bound<'py, PyAny>,
    inbox: [&Bound<'py, PyAny>; 3],
    seed_zero: bool,
) -> PyResult<PeelStep> {
    const SAME: &str = "the dtype of indptr";
    let (indptr, targets) =
        (read::<I>(indptr, "indptr", SAME)?, read::<I>(targets, "targets", SAME)?);
    let slot_group = read::<I>(slot_group, "slot_group", SAME)?;
    let [nodes, counts, levels] = inbox;
    let nodes = read::<I>(nodes, "inbox_nodes", SAME)?;
    let counts = read::<I>(counts, "inbox_counts", SAME)?;
    let levels = read::<I>(levels, "inbox_levels", SAME)?;
    let (mut remaining, mut level) =
        (writeable::<I>(remaining, "remaining")?, writeable::<I>(level, "level")?);
    let shard = Shard {
        indptr: indptr.values()?,
        targets: targets.values()?,
        slot_group: slot_group.values()?,
        groups,
    };
    let inbox =
        Inbox { nodes: nodes.values()?, counts: counts.values()?, levels: levels.values()? };
    let not_contiguous = |name: &str| input_error(format!("{name} must be contiguous"));
    let remaining = remaining.as_slice_mut().map_err(|_| not_contiguous("remaining"))?;
    let level = level.as_slice_mut().map_err(|_| not_contiguous("level"))?;
    let out = compute(py, || peel(&shard, remaining, level, &inbox, seed_zero))?;
    let offsets: Vec<i64> = out.offsets.iter().map(|&k| k as i64).collect();
    Ok(PeelStep {
        peeled: out.peeled,
        slots: array(py, out.slots),
        counts: array(py, out.counts),
        levels: array(py, out.levels),
        offsets: array(py, offsets),
    })
}

/// One shard's step; updates `remaining` and `level` in place. Every array
/// has the dtype of `indptr` (int32 or int64) except `offsets` (int64).
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
) -> PyResult<PeelStep> {
    let inbox = [inbox_nodes, inbox_counts, inbox_levels];
    if has_dtype::<i64>(indptr) {
        run::<i64>(py, indptr, targets, slot_group, groups, remaining, level, inbox, seed_zero)
    } else if has_dtype::<i32>(indptr) {
        run::<i32>(py, indptr, targets, slot_group, groups, remaining, level, inbox, seed_zero)
    } else {
        Err(input_error("indptr must be a 1-D numpy array of int32 or int64".to_string()))
    }
}

pub(crate) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_class::<PeelStep>()?;
    m.add_function(wrap_pyfunction!(peel_shard, m)?)
}
