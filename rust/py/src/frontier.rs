//! The state behind `toporank.Frontier`: the core's `Frontier` behind one lock.

use numpy::{IntoPyArray, PyArray1};
use pyo3::prelude::*;
use toporank_core::frontier::{Frontier, Misuse};
use toporank_core::schedule::Duration;
use toporank_core::{Csr, Key, KeyValues, Outcome, Tie};

use crate::common::{compute, cyclic, on_graph, read, read_optional, Index, OnGraph, Shared};
use crate::errors::input_error;
use crate::schedule::{read_durations, Durations};

fn ids(py: Python<'_>, values: &[usize]) -> Py<PyArray1<i64>> {
    let converted: Vec<i64> = values.iter().map(|&x| x as i64).collect();
    converted.into_pyarray(py).unbind()
}

/// A refused `finish`/`fail` batch: `task` (at `position` in the batch) is
/// in `state` (`"listed twice"` when the batch names it twice); nothing
/// changed.
#[pyclass(module = "toporank._core", frozen, get_all)]
pub(crate) struct Refused {
    action: &'static str,
    task: usize,
    position: usize,
    state: &'static str,
}

impl From<Misuse> for Refused {
    fn from(m: Misuse) -> Self {
        Refused {
            action: m.action.name(),
            task: m.task,
            position: m.position,
            state: m.state.name(),
        }
    }
}

/// The Rust state behind `toporank.Frontier` (integer ids only). Every
/// method takes the one lock; batch calls wait for it and run without the GIL.
#[pyclass(module = "toporank._core", frozen)]
pub(crate) struct FrontierCore {
    inner: Shared<Frontier>,
}

impl FrontierCore {
    fn batch<'py>(
        &self,
        py: Python<'py>,
        tasks: &Bound<'py, PyAny>,
        fail: bool,
    ) -> PyResult<Bound<'py, PyAny>> {
        let tasks = read::<i64>(tasks, "tasks", "int64")?;
        let tasks = tasks.values()?;
        if fail {
            match self.inner.detached(py, |f| f.fail(tasks))? {
                Ok(skipped) => Ok(ids(py, &skipped).into_bound(py).into_any()),
                Err(misuse) => Ok(Bound::new(py, Refused::from(misuse))?.into_any()),
            }
        } else {
            match self.inner.detached(py, |f| f.finish(tasks))? {
                Ok(released) => Ok(released.into_pyobject(py)?.into_any()),
                Err(misuse) => Ok(Bound::new(py, Refused::from(misuse))?.into_any()),
            }
        }
    }
}

struct Build<'a> {
    tie: Tie<'a>,
    durations: Option<&'a Durations<'a>>,
}

fn built<'py, I: Index>(
    py: Python<'py>,
    found: Result<Frontier, Outcome<I>>,
) -> PyResult<Bound<'py, PyAny>> {
    match found {
        Ok(frontier) => {
            Ok(Bound::new(py, FrontierCore { inner: Shared::new(frontier, "Frontier") })?
                .into_any())
        }
        Err(outcome) => cyclic(py, outcome),
    }
}

fn critical<'py, I: Index, P: Index, T: Duration>(
    py: Python<'py>,
    (indptr, indices): (&[P], &[I]),
    durations: &[T],
) -> PyResult<Bound<'py, PyAny>> {
    let found = compute(py, || Frontier::critical(&Csr::from_arrays(indptr, indices)?, durations))?;
    built(py, found)
}

impl<'py> OnGraph<'py> for Build<'_> {
    type Output = Bound<'py, PyAny>;
    fn run<I: Index, P: Index>(
        self,
        py: Python<'py>,
        indptr: &[P],
        indices: &[I],
    ) -> PyResult<Self::Output> {
        match self.durations {
            Some(Durations::Int(d)) => critical(py, (indptr, indices), d.values()?),
            Some(Durations::Float(d)) => critical(py, (indptr, indices), d.values()?),
            None => {
                let tie = self.tie;
                let found =
                    compute(py, || Frontier::new(&Csr::from_arrays(indptr, indices)?, &tie))?;
                built(py, found)
            }
        }
    }
}

#[pymethods]
impl FrontierCore {
    /// A `FrontierCore` for the CSR graph, or a `Cyclic`.
    ///
    /// `tie` is queue, stack, random (from `seed`), priority (by `rank`,
    /// smallest first, ties to the smaller id; by id without it) or
    /// critical (largest bottom level under `durations` first).
    #[staticmethod]
    #[pyo3(signature = (indptr, indices, tie, rank=None, seed=0, durations=None))]
    fn build<'py>(
        py: Python<'py>,
        indptr: &Bound<'py, PyAny>,
        indices: &Bound<'py, PyAny>,
        tie: &str,
        rank: Option<&Bound<'py, PyAny>>,
        seed: u64,
        durations: Option<&Bound<'py, PyAny>>,
    ) -> PyResult<Bound<'py, PyAny>> {
        let rank = read_optional::<u64>(rank, "rank", "uint64")?;
        let rank = rank.as_ref().map(|r| r.values()).transpose()?;
        let durations = durations.map(read_durations).transpose()?;
        let tie = match tie {
            "queue" => Tie::Queue,
            "stack" => Tie::Stack,
            "random" => Tie::Random { seed },
            "priority" => {
                Tie::Priority(Key { values: rank.map(KeyValues::U64), descending: false })
            }
            "critical" if durations.is_some() => Tie::Queue,
            other => return Err(input_error(format!("tie {other:?} is not a frontier policy"))),
        };
        on_graph(py, indptr, indices, Build { tie, durations: durations.as_ref() })
    }

    #[getter]
    fn n(&self, py: Python<'_>) -> PyResult<usize> {
        self.inner.locked(py, |f| Ok(f.n()))
    }

    #[getter]
    fn ready_count(&self, py: Python<'_>) -> PyResult<usize> {
        self.inner.locked(py, |f| Ok(f.ready_count()))
    }

    #[getter]
    fn running_count(&self, py: Python<'_>) -> PyResult<usize> {
        self.inner.locked(py, |f| Ok(f.running_count()))
    }

    #[getter]
    fn remaining(&self, py: Python<'_>) -> PyResult<usize> {
        self.inner.locked(py, |f| Ok(f.remaining()))
    }

    #[getter]
    fn is_done(&self, py: Python<'_>) -> PyResult<bool> {
        self.inner.locked(py, |f| Ok(f.is_done()))
    }

    /// The running tasks, ascending id (int64).
    fn running(&self, py: Python<'_>) -> PyResult<Py<PyArray1<i64>>> {
        let found = self.inner.locked(py, |f| Ok(f.running()))?;
        Ok(ids(py, &found))
    }

    /// Done, failed or skipped tasks (`which`), in the order they got there.
    fn settled(&self, py: Python<'_>, which: &str) -> PyResult<Py<PyArray1<i64>>> {
        let found = self.inner.locked(py, |f| {
            Ok(match which {
                "done" => f.done().to_vec(),
                "failed" => f.failed().to_vec(),
                _ => f.skipped().to_vec(),
            })
        })?;
        Ok(ids(py, &found))
    }

    /// Up to `k` ready tasks (all when None), now running (int64).
    #[pyo3(signature = (k=None))]
    fn take(&self, py: Python<'_>, k: Option<usize>) -> PyResult<Py<PyArray1<i64>>> {
        if k == Some(1) {
            let taken = self.inner.locked(py, |f| f.take(k))?;
            let one: Vec<i64> = taken.iter().map(|&x| x as i64).collect();
            return Ok(one.into_pyarray(py).unbind());
        }
        let taken = match k {
            Some(small) if small <= 64 => self.inner.locked(py, |f| f.take(k))?,
            _ => self.inner.detached(py, |f| f.take(k))?,
        };
        Ok(ids(py, &taken))
    }

    /// Finish one running task: None, or `Refused`.
    fn finish_one(&self, py: Python<'_>, task: i64) -> PyResult<Option<Refused>> {
        Ok(self.inner.locked(py, |f| f.finish(&[task]))?.err().map(Refused::from))
    }

    /// Finish running `tasks` (int64): the number of tasks released, or `Refused`.
    fn finish<'py>(
        &self,
        py: Python<'py>,
        tasks: &Bound<'py, PyAny>,
    ) -> PyResult<Bound<'py, PyAny>> {
        self.batch(py, tasks, false)
    }

    /// Fail running `tasks` (int64): the newly skipped tasks, or `Refused`.
    fn fail<'py>(&self, py: Python<'py>, tasks: &Bound<'py, PyAny>) -> PyResult<Bound<'py, PyAny>> {
        self.batch(py, tasks, true)
    }
}

pub(crate) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_class::<FrontierCore>()?;
    m.add_class::<Refused>()?;
    Ok(())
}
