//! Main path analysis: the main path (or the union of several) under a
//! traversal weight or the caller's edge weights.

use pyo3::prelude::*;
use toporank_core::mainpath::{self, EdgeWeight, Method};
use toporank_core::Csr;

use crate::common::{array, compute, cyclic, on_graph, read_optional, Array, Index, OnGraph};
use crate::errors::input_error;
use crate::sweeps::count_kind;

/// A main path: stored edge indices (ascending), the path's nodes for a
/// single path, and the weight of each chosen edge.
#[pyclass(frozen, get_all, module = "toporank._core")]
struct MainPath {
    edges: Py<PyAny>,
    path: Option<Py<PyAny>>,
    edge_weight: Py<PyAny>,
    log_weights: bool,
}

struct MainPathOf<'a> {
    weight: Result<toporank_core::paths::Kind, Option<&'a Array<'a, f64>>>,
    method: Method,
    all_ties: bool,
    threads: usize,
}

impl<'py> OnGraph<'py> for MainPathOf<'_> {
    type Output = Bound<'py, PyAny>;
    fn run<I: Index, P: Index>(
        self,
        py: Python<'py>,
        indptr: &[P],
        indices: &[I],
    ) -> PyResult<Self::Output> {
        let weight = match self.weight {
            Ok(kind) => EdgeWeight::Count(kind),
            Err(Some(values)) => EdgeWeight::Each(values.values()?),
            Err(None) => return Err(input_error("no edge weights given".into())),
        };
        let (method, all_ties, threads) = (self.method, self.all_ties, self.threads);
        let found = compute(py, || {
            mainpath::main_path(
                &Csr::from_arrays(indptr, indices)?,
                weight,
                method,
                all_ties,
                threads,
            )
        })?;
        match found {
            Err(outcome) => cyclic(py, outcome),
            Ok(found) => {
                let edges: Vec<i64> = found.edges.iter().map(|&e| e as i64).collect();
                let path = found.path.map(|p| array(py, p.iter().map(|&u| u as i64).collect()));
                let result = MainPath {
                    edges: array(py, edges),
                    path,
                    edge_weight: array(py, found.edge_weight),
                    log_weights: found.log_weights,
                };
                Ok(Bound::new(py, result)?.into_any())
            }
        }
    }
}

/// The main path (a `MainPath`), or a `Cyclic`. `kind` names a traversal
/// weight unless `edge_weight` (float64 per stored edge) is given; `method`
/// is "global", "forward", "backward", "key-route" (local extension) or
/// "key-route-global".
#[pyfunction]
#[pyo3(signature = (
    indptr, indices, kind="spc", edge_weight=None, method="global", routes=1, all_ties=false,
    threads=1
))]
#[allow(clippy::too_many_arguments)]
fn main_path<'py>(
    py: Python<'py>,
    indptr: &Bound<'py, PyAny>,
    indices: &Bound<'py, PyAny>,
    kind: &str,
    edge_weight: Option<&Bound<'py, PyAny>>,
    method: &str,
    routes: usize,
    all_ties: bool,
    threads: usize,
) -> PyResult<Bound<'py, PyAny>> {
    let values = read_optional::<f64>(edge_weight, "edge_weight", "float64")?;
    let method = match method {
        "global" => Method::Global,
        "forward" => Method::Forward,
        "backward" => Method::Backward,
        "key-route" => Method::KeyRoute { routes, global: false },
        "key-route-global" => Method::KeyRoute { routes, global: true },
        other => return Err(input_error(format!("unknown main path method {other:?}"))),
    };
    let weight = match &values {
        Some(values) => Err(Some(values)),
        None => Ok(count_kind(kind)?),
    };
    on_graph(py, indptr, indices, MainPathOf { weight, method, all_ties, threads })
}

pub(crate) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_class::<MainPath>()?;
    m.add_function(wrap_pyfunction!(main_path, m)?)?;
    Ok(())
}
