//! List scheduling on identical workers, and the bottom levels behind its
//! critical-path priority.

use numpy::Element;
use pyo3::prelude::*;
use pyo3::IntoPyObjectExt;
use toporank_core::schedule::{self, Duration, Policy, Scheduled};
use toporank_core::Csr;
use toporank_core::{Key, KeyValues, Tie};

use crate::common::{
    array, compute, cyclic, has_dtype, on_graph, read, read_optional, Array, Index, OnGraph,
};
use crate::errors::input_error;

/// Durations as the core takes them: whole numbers or floats.
pub(crate) enum Durations<'py> {
    Int(Array<'py, i64>),
    Float(Array<'py, f64>),
}

pub(crate) fn read_durations<'py>(durations: &Bound<'py, PyAny>) -> PyResult<Durations<'py>> {
    const DTYPES: &str = "int64 or float64";
    if has_dtype::<f64>(durations) {
        return Ok(Durations::Float(read(durations, "durations", DTYPES)?));
    }
    Ok(Durations::Int(read(durations, "durations", DTYPES)?))
}

/// A Graham list schedule; times in the durations' type (int or float).
#[pyclass(frozen, get_all, module = "toporank._core")]
struct Schedule {
    start: Py<PyAny>,
    worker: Py<PyAny>,
    /// The tasks in the order they started.
    order: Py<PyAny>,
    makespan: Py<PyAny>,
    critical_path: Py<PyAny>,
    total_work: Py<PyAny>,
}

fn scalar<'py, T: IntoPyObject<'py>>(py: Python<'py>, value: T) -> PyResult<Py<PyAny>> {
    value.into_py_any(py)
}

struct ListSchedule<'a> {
    durations: &'a Durations<'a>,
    workers: usize,
    policy: Policy<'a>,
}

impl ListSchedule<'_> {
    fn with<'py, I: Index, P: Index, T>(
        &self,
        py: Python<'py>,
        g: (&[P], &[I]),
        d: &[T],
    ) -> PyResult<Bound<'py, PyAny>>
    where
        T: Duration + Element + IntoPyObject<'py>,
    {
        let (workers, policy) = (self.workers, &self.policy);
        let found = compute(py, || {
            schedule::list_schedule(&Csr::from_arrays(g.0, g.1)?, d, workers, policy)
        })?;
        match found {
            Scheduled::Cyclic(outcome) => cyclic(py, outcome),
            Scheduled::Done(s) => {
                let done = Schedule {
                    start: array(py, s.start),
                    worker: array(py, s.worker),
                    order: array(py, s.order),
                    makespan: scalar(py, s.makespan)?,
                    critical_path: scalar(py, s.critical_path)?,
                    total_work: scalar(py, s.total_work)?,
                };
                Ok(Bound::new(py, done)?.into_any())
            }
        }
    }
}

impl<'py> OnGraph<'py> for ListSchedule<'_> {
    type Output = Bound<'py, PyAny>;
    fn run<I: Index, P: Index>(
        self,
        py: Python<'py>,
        indptr: &[P],
        indices: &[I],
    ) -> PyResult<Self::Output> {
        match self.durations {
            Durations::Int(d) => self.with(py, (indptr, indices), d.values()?),
            Durations::Float(d) => self.with(py, (indptr, indices), d.values()?),
        }
    }
}

/// Graham list schedule (a `Schedule`), or a `Cyclic`.
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
) -> PyResult<Bound<'py, PyAny>> {
    let rank = read_optional::<u64>(rank, "rank", "uint64")?;
    let rank = rank.as_ref().map(|r| r.values()).transpose()?;
    let policy = match policy {
        "queue" => Policy::Tie(Tie::Queue),
        "stack" => Policy::Tie(Tie::Stack),
        "priority" => {
            Policy::Tie(Tie::Priority(Key { values: rank.map(KeyValues::U64), descending: false }))
        }
        "random" => Policy::Tie(Tie::Random { seed }),
        "critical" => Policy::CriticalPath,
        other => {
            let choices = "('queue', 'stack', 'priority', 'random', 'critical')";
            return Err(input_error(format!("tie must be one of {choices}, got '{other}'")));
        }
    };
    let durations = read_durations(durations)?;
    on_graph(py, indptr, indices, ListSchedule { durations: &durations, workers, policy })
}

struct BottomLevels<'a> {
    durations: &'a Durations<'a>,
}

fn bottom<'py, I: Index, P: Index, T: Duration + Element>(
    py: Python<'py>,
    (indptr, indices): (&[P], &[I]),
    durations: &[T],
) -> PyResult<Bound<'py, PyAny>> {
    let found =
        compute(py, || schedule::bottom_levels(&Csr::from_arrays(indptr, indices)?, durations))?;
    match found {
        Ok(level) => Ok(array(py, level).into_bound(py)),
        Err(outcome) => cyclic(py, outcome),
    }
}

impl<'py> OnGraph<'py> for BottomLevels<'_> {
    type Output = Bound<'py, PyAny>;
    fn run<I: Index, P: Index>(
        self,
        py: Python<'py>,
        indptr: &[P],
        indices: &[I],
    ) -> PyResult<Self::Output> {
        match self.durations {
            Durations::Int(d) => bottom(py, (indptr, indices), d.values()?),
            Durations::Float(d) => bottom(py, (indptr, indices), d.values()?),
        }
    }
}

/// Bottom level of every task (an array), or a `Cyclic`.
#[pyfunction]
fn bottom_levels<'py>(
    py: Python<'py>,
    indptr: &Bound<'py, PyAny>,
    indices: &Bound<'py, PyAny>,
    durations: &Bound<'py, PyAny>,
) -> PyResult<Bound<'py, PyAny>> {
    let durations = read_durations(durations)?;
    on_graph(py, indptr, indices, BottomLevels { durations: &durations })
}

pub(crate) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_class::<Schedule>()?;
    m.add_function(wrap_pyfunction!(list_schedule, m)?)?;
    m.add_function(wrap_pyfunction!(bottom_levels, m)?)?;
    Ok(())
}
