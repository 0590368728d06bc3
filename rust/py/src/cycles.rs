//! Graphs with cycles: components, condensation, witnesses, cycle cuts.

use pyo3::prelude::*;
use toporank_core::{condense, cut, scc, witness, Csr, Tie};

use crate::common::{array, compute, on_graph, optional_array, Index, OnGraph};
use crate::errors::input_error;
use crate::order::{make_tie, read_key};

/// Strongly connected components, numbered topologically.
#[pyclass(frozen, get_all, module = "toporank._core")]
struct Components {
    /// Component of every node.
    labels: Py<PyAny>,
    count: usize,
}

struct ComponentsOf;

impl<'py> OnGraph<'py> for ComponentsOf {
    type Output = Components;
    fn run<I: Index, P: Index>(
        self,
        py: Python<'py>,
        indptr: &[P],
        indices: &[I],
    ) -> PyResult<Components> {
        let found = compute(py, || scc::strong_components(&Csr::from_arrays(indptr, indices)?))?;
        Ok(Components { count: found.count, labels: array(py, found.labels) })
    }
}

/// Strongly connected component of every node (a `Components`).
#[pyfunction]
fn strong_components<'py>(
    py: Python<'py>,
    indptr: &Bound<'py, PyAny>,
    indices: &Bound<'py, PyAny>,
) -> PyResult<Components> {
    on_graph(py, indptr, indices, ComponentsOf)
}

/// Components and the component graph as CSR (ascending targets per row).
#[pyclass(frozen, get_all, module = "toporank._core")]
struct Condensation {
    labels: Py<PyAny>,
    sizes: Py<PyAny>,
    indptr: Py<PyAny>,
    indices: Py<PyAny>,
    /// How many edges of the graph each component edge stands for.
    weights: Py<PyAny>,
}

struct CondensationOf;

impl<'py> OnGraph<'py> for CondensationOf {
    type Output = Condensation;
    fn run<I: Index, P: Index>(
        self,
        py: Python<'py>,
        indptr: &[P],
        indices: &[I],
    ) -> PyResult<Condensation> {
        let (components, condensed) = compute(py, || {
            let g = Csr::from_arrays(indptr, indices)?;
            let components = scc::strong_components(&g)?;
            let condensed = scc::condensation(&g, &components)?;
            Ok((components, condensed))
        })?;
        Ok(Condensation {
            sizes: array(py, components.sizes()),
            labels: array(py, components.labels),
            indptr: array(py, condensed.indptr),
            indices: array(py, condensed.indices),
            weights: array(py, condensed.weights),
        })
    }
}

/// Components and the condensation (a `Condensation`).
#[pyfunction]
fn condensation<'py>(
    py: Python<'py>,
    indptr: &Bound<'py, PyAny>,
    indices: &Bound<'py, PyAny>,
) -> PyResult<Condensation> {
    on_graph(py, indptr, indices, CondensationOf)
}

struct OrderDespiteCycles<'a> {
    condensed: bool,
    tie: Tie<'a>,
}

impl<'py> OnGraph<'py> for OrderDespiteCycles<'_> {
    type Output = Bound<'py, PyAny>;
    fn run<I: Index, P: Index>(
        self,
        py: Python<'py>,
        indptr: &[P],
        indices: &[I],
    ) -> PyResult<Self::Output> {
        let order = compute(py, || {
            let g = Csr::from_arrays(indptr, indices)?;
            if self.condensed {
                condense::condensed_order(&g, &self.tie)
            } else {
                cut::cut_order(&g, &self.tie)
            }
        })?;
        Ok(array(py, order).into_bound(py))
    }
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
        other => {
            let choices = "('condense', 'cut')";
            return Err(input_error(format!("on_cycle must be one of {choices}, got '{other}'")));
        }
    };
    on_graph(py, indptr, indices, OrderDespiteCycles { condensed, tie })
}

struct CycleWitness {
    through: Option<i64>,
}

impl<'py> OnGraph<'py> for CycleWitness {
    type Output = Option<Py<PyAny>>;
    fn run<I: Index, P: Index>(
        self,
        py: Python<'py>,
        indptr: &[P],
        indices: &[I],
    ) -> PyResult<Self::Output> {
        let found = compute(py, || {
            let g = Csr::from_arrays(indptr, indices)?;
            match self.through {
                Some(v) => witness::shortest_cycle_through(&g, v as i128),
                None => witness::find_cycle(&g),
            }
        })?;
        Ok(optional_array(py, found))
    }
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
) -> PyResult<Option<Py<PyAny>>> {
    on_graph(py, indptr, indices, CycleWitness { through })
}

/// Components and one shortest cycle in each component holding a cycle.
#[pyclass(frozen, get_all, module = "toporank._core")]
struct Witnesses {
    /// Component of every node.
    labels: Py<PyAny>,
    count: usize,
    /// The components holding a cycle, ascending.
    components: Py<PyAny>,
    /// The witness of `components[k]` is `nodes[offsets[k]:offsets[k + 1]]` (int64).
    offsets: Py<PyAny>,
    nodes: Py<PyAny>,
}

struct WitnessesOf;

impl<'py> OnGraph<'py> for WitnessesOf {
    type Output = Witnesses;
    fn run<I: Index, P: Index>(
        self,
        py: Python<'py>,
        indptr: &[P],
        indices: &[I],
    ) -> PyResult<Witnesses> {
        let found =
            compute(py, || witness::component_witnesses(&Csr::from_arrays(indptr, indices)?))?;
        let offsets: Vec<i64> = found.offsets.into_iter().map(|k| k as i64).collect();
        Ok(Witnesses {
            labels: array(py, found.labels),
            count: found.count,
            components: array(py, found.components),
            offsets: array(py, offsets),
            nodes: array(py, found.nodes),
        })
    }
}

/// A shortest cycle through the smallest node of every strongly connected
/// component holding a cycle, in one pass (a `Witnesses`).
#[pyfunction]
fn cycle_witnesses<'py>(
    py: Python<'py>,
    indptr: &Bound<'py, PyAny>,
    indices: &Bound<'py, PyAny>,
) -> PyResult<Witnesses> {
    on_graph(py, indptr, indices, WitnessesOf)
}

/// A minimal cycle cut.
#[pyclass(frozen, get_all, module = "toporank._core")]
struct Cut {
    /// Stored positions of the cut edges, ascending, int64.
    removed: Py<PyAny>,
    /// The source of each cut edge.
    sources: Py<PyAny>,
    /// A topological order of the graph without them.
    order: Py<PyAny>,
    /// Cut edges whose put-back test ran out of search budget; the cut is
    /// minimal when this is 0.
    untested: usize,
}

struct CutOf;

impl<'py> OnGraph<'py> for CutOf {
    type Output = Cut;
    fn run<I: Index, P: Index>(
        self,
        py: Python<'py>,
        indptr: &[P],
        indices: &[I],
    ) -> PyResult<Cut> {
        let found = compute(py, || cut::cut_cycles(&Csr::from_arrays(indptr, indices)?))?;
        let removed: Vec<i64> = found.removed.into_iter().map(|k| k as i64).collect();
        Ok(Cut {
            removed: array(py, removed),
            sources: array(py, found.sources),
            order: array(py, found.order),
            untested: found.untested,
        })
    }
}

/// A minimal cycle cut (a `Cut`).
#[pyfunction]
fn cut_cycles<'py>(
    py: Python<'py>,
    indptr: &Bound<'py, PyAny>,
    indices: &Bound<'py, PyAny>,
) -> PyResult<Cut> {
    on_graph(py, indptr, indices, CutOf)
}

pub(crate) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_class::<Components>()?;
    m.add_class::<Condensation>()?;
    m.add_class::<Cut>()?;
    m.add_class::<Witnesses>()?;
    m.add_function(wrap_pyfunction!(strong_components, m)?)?;
    m.add_function(wrap_pyfunction!(condensation, m)?)?;
    m.add_function(wrap_pyfunction!(order_despite_cycles, m)?)?;
    m.add_function(wrap_pyfunction!(cycle_witness, m)?)?;
    m.add_function(wrap_pyfunction!(cycle_witnesses, m)?)?;
    m.add_function(wrap_pyfunction!(cut_cycles, m)?)?;
    Ok(())
}
