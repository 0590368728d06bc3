//! Sweeps along a topological order: levels, heights, critical path, path counts.
//!
//! Each returns its result object, or a `Cyclic` when the graph has a cycle,
//! so the Python layer raises `CyclicGraphError` with labels.

use pyo3::prelude::*;
use toporank_core::levels as level_sweep;
use toporank_core::sweep::{Acyclic, Weights};
use toporank_core::{critical, paths, Csr};

use crate::common::{
    array, compute, cyclic, on_graph, optional_array, read_optional, Array, Index, OnGraph,
};

/// The result object of a sweep, or a `Cyclic`.
fn either<'py, T, I: Index, R: pyo3::PyClass + Into<PyClassInitializer<R>>>(
    py: Python<'py>,
    swept: Acyclic<T, I>,
    done: impl FnOnce(T) -> R,
) -> PyResult<Bound<'py, PyAny>> {
    match swept {
        Ok(value) => Ok(Bound::new(py, done(value))?.into_any()),
        Err(outcome) => cyclic(py, outcome),
    }
}

/// Levels of a DAG.
#[pyclass(frozen, get_all, module = "toporank._core")]
struct Levels {
    /// Per node id, its level.
    level: Py<PyAny>,
    /// With `grouped`: the nodes sorted by `(level, id)`.
    nodes: Option<Py<PyAny>>,
    /// With `grouped`: where each level starts in `nodes` (and the end), int64.
    offsets: Option<Py<PyAny>>,
}

struct LevelsOf {
    threads: usize,
    grouped: bool,
}

impl<'py> OnGraph<'py> for LevelsOf {
    type Output = Bound<'py, PyAny>;
    fn run<I: Index, P: Index>(
        self,
        py: Python<'py>,
        indptr: &[P],
        indices: &[I],
    ) -> PyResult<Self::Output> {
        let (threads, grouped) = (self.threads, self.grouped);
        let swept = compute(py, || {
            let csr = Csr::from_arrays(indptr, indices)?;
            match level_sweep::level_order(&csr, threads)? {
                Err(cyclic) => Ok(Err(cyclic)),
                Ok(order) => {
                    let level = level_sweep::levels_from(&order, threads)?;
                    let nodes = match grouped {
                        true => Some(level_sweep::grouped(&level, &order.offsets)?),
                        false => None,
                    };
                    let offsets: Vec<i64> = order.offsets.iter().map(|&k| k as i64).collect();
                    Ok(Ok((level, nodes, grouped.then_some(offsets))))
                }
            }
        })?;
        either(py, swept, |(level, nodes, offsets)| Levels {
            level: array(py, level),
            nodes: optional_array(py, nodes),
            offsets: optional_array(py, offsets),
        })
    }
}

/// Levels of a DAG (a `Levels`), or a `Cyclic`.
#[pyfunction]
#[pyo3(signature = (indptr, indices, threads=1, grouped=false))]
fn levels<'py>(
    py: Python<'py>,
    indptr: &Bound<'py, PyAny>,
    indices: &Bound<'py, PyAny>,
    threads: usize,
    grouped: bool,
) -> PyResult<Bound<'py, PyAny>> {
    on_graph(py, indptr, indices, LevelsOf { threads, grouped })
}

struct HeightsOf {
    threads: usize,
}

impl<'py> OnGraph<'py> for HeightsOf {
    type Output = Bound<'py, PyAny>;
    fn run<I: Index, P: Index>(
        self,
        py: Python<'py>,
        indptr: &[P],
        indices: &[I],
    ) -> PyResult<Self::Output> {
        let threads = self.threads;
        let swept = compute(py, || {
            let csr = Csr::from_arrays(indptr, indices)?;
            match level_sweep::level_order(&csr, threads)? {
                Ok(order) => level_sweep::heights(&csr, &order, threads).map(Ok),
                Err(outcome) => Ok(Err(outcome)),
            }
        })?;
        match swept {
            Ok(height) => Ok(array(py, height).into_bound(py)),
            Err(outcome) => cyclic(py, outcome),
        }
    }
}

/// The longest path in edges from each node to a sink (an array), or a `Cyclic`.
#[pyfunction]
#[pyo3(signature = (indptr, indices, threads=1))]
fn heights<'py>(
    py: Python<'py>,
    indptr: &Bound<'py, PyAny>,
    indices: &Bound<'py, PyAny>,
    threads: usize,
) -> PyResult<Bound<'py, PyAny>> {
    on_graph(py, indptr, indices, HeightsOf { threads })
}

/// The critical-path-method quantities of a DAG.
#[pyclass(frozen, get_all, module = "toporank._core")]
struct CriticalPath {
    length: f64,
    /// One longest path, first node first.
    path: Py<PyAny>,
    earliest_start: Py<PyAny>,
    latest_start: Py<PyAny>,
}

struct CriticalPathOf<'a> {
    node_weight: Weights<'a>,
    edge_weight: Weights<'a>,
    threads: usize,
}

impl<'py> OnGraph<'py> for CriticalPathOf<'_> {
    type Output = Bound<'py, PyAny>;
    fn run<I: Index, P: Index>(
        self,
        py: Python<'py>,
        indptr: &[P],
        indices: &[I],
    ) -> PyResult<Self::Output> {
        let swept = compute(py, || {
            let csr = Csr::from_arrays(indptr, indices)?;
            critical::critical_path(&csr, self.node_weight, self.edge_weight, self.threads)
        })?;
        either(py, swept, |s| CriticalPath {
            length: s.length,
            path: array(py, s.path),
            earliest_start: array(py, s.earliest_start),
            latest_start: array(py, s.latest_start),
        })
    }
}

const WEIGHT_DTYPE: &str = "float64";

fn weights<'a>(array: &'a Option<Array<'_, f64>>, default: f64) -> PyResult<Weights<'a>> {
    Ok(match array {
        Some(a) => Weights::Each(a.values()?),
        None => Weights::Constant(default),
    })
}

/// Critical path (a `CriticalPath`), or a `Cyclic`. Missing node weights
/// are 0; missing edge weights are `default_edge_weight`.
#[pyfunction]
#[pyo3(signature = (
    indptr, indices, node_weight=None, edge_weight=None, default_edge_weight=1.0, threads=1
))]
fn critical_path<'py>(
    py: Python<'py>,
    indptr: &Bound<'py, PyAny>,
    indices: &Bound<'py, PyAny>,
    node_weight: Option<&Bound<'py, PyAny>>,
    edge_weight: Option<&Bound<'py, PyAny>>,
    default_edge_weight: f64,
    threads: usize,
) -> PyResult<Bound<'py, PyAny>> {
    let node_weight = read_optional::<f64>(node_weight, "node_weight", WEIGHT_DTYPE)?;
    let edge_weight = read_optional::<f64>(edge_weight, "edge_weight", WEIGHT_DTYPE)?;
    let kernel = CriticalPathOf {
        node_weight: weights(&node_weight, 0.0)?,
        edge_weight: weights(&edge_weight, default_edge_weight)?,
        threads,
    };
    on_graph(py, indptr, indices, kernel)
}

/// Exact path counts (uint64), present when the total fits.
#[pyclass(frozen, get_all, module = "toporank._core")]
struct ExactCounts {
    from_sources: Py<PyAny>,
    to_sinks: Py<PyAny>,
    through_edge: Py<PyAny>,
    total: u64,
}

/// Natural logarithms of the path counts, present when the float total overflows.
#[pyclass(frozen, get_all, module = "toporank._core")]
struct LogCounts {
    from_sources: Py<PyAny>,
    to_sinks: Py<PyAny>,
    through_edge: Py<PyAny>,
    total: f64,
}

/// Path counts of a DAG (float64), per-edge values in stored edge order.
#[pyclass(frozen, get_all, module = "toporank._core")]
struct PathCounts {
    from_sources: Py<PyAny>,
    to_sinks: Py<PyAny>,
    through_edge: Py<PyAny>,
    total: f64,
    exact: Option<Py<ExactCounts>>,
    log: Option<Py<LogCounts>>,
}

struct PathCountsOf {
    threads: usize,
    kind: paths::Kind,
}

impl<'py> OnGraph<'py> for PathCountsOf {
    type Output = Bound<'py, PyAny>;
    fn run<I: Index, P: Index>(
        self,
        py: Python<'py>,
        indptr: &[P],
        indices: &[I],
    ) -> PyResult<Self::Output> {
        let (threads, kind) = (self.threads, self.kind);
        let swept = compute(py, || {
            paths::path_counts_of(&Csr::from_arrays(indptr, indices)?, threads, kind)
        })?;
        let counts = match swept {
            Ok((counts, _)) => counts,
            Err(outcome) => return cyclic(py, outcome),
        };
        let exact = counts
            .exact
            .map(|e| {
                let exact = ExactCounts {
                    from_sources: array(py, e.from_sources),
                    to_sinks: array(py, e.to_sinks),
                    through_edge: array(py, e.through_edge),
                    total: e.total,
                };
                Py::new(py, exact)
            })
            .transpose()?;
        let log = counts
            .log
            .map(|l| {
                let log = LogCounts {
                    from_sources: array(py, l.from_sources),
                    to_sinks: array(py, l.to_sinks),
                    through_edge: array(py, l.through_edge),
                    total: l.total,
                };
                Py::new(py, log)
            })
            .transpose()?;
        let found = PathCounts {
            from_sources: array(py, counts.from_sources),
            to_sinks: array(py, counts.to_sinks),
            through_edge: array(py, counts.through_edge),
            total: counts.total,
            exact,
            log,
        };
        Ok(Bound::new(py, found)?.into_any())
    }
}

/// The traversal weight named by `kind` ("spc", "splc" or "spnp").
pub(crate) fn count_kind(kind: &str) -> PyResult<paths::Kind> {
    match kind {
        "spc" => Ok(paths::Kind::Spc),
        "splc" => Ok(paths::Kind::Splc),
        "spnp" => Ok(paths::Kind::Spnp),
        other => Err(crate::errors::input_error(format!(
            "kind must be 'spc', 'splc' or 'spnp', got {other:?}"
        ))),
    }
}

/// Path counts of `kind` (a `PathCounts`), or a `Cyclic`.
#[pyfunction]
#[pyo3(signature = (indptr, indices, threads=1, kind="spc"))]
fn path_counts<'py>(
    py: Python<'py>,
    indptr: &Bound<'py, PyAny>,
    indices: &Bound<'py, PyAny>,
    threads: usize,
    kind: &str,
) -> PyResult<Bound<'py, PyAny>> {
    on_graph(py, indptr, indices, PathCountsOf { threads, kind: count_kind(kind)? })
}

pub(crate) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_class::<Levels>()?;
    m.add_class::<CriticalPath>()?;
    m.add_class::<PathCounts>()?;
    m.add_class::<ExactCounts>()?;
    m.add_class::<LogCounts>()?;
    m.add_function(wrap_pyfunction!(levels, m)?)?;
    m.add_function(wrap_pyfunction!(heights, m)?)?;
    m.add_function(wrap_pyfunction!(critical_path, m)?)?;
    m.add_function(wrap_pyfunction!(path_counts, m)?)?;
    Ok(())
}
