//! Kahn's algorithm, edge lists to CSR, order checks.

use pyo3::prelude::*;
use toporank_core::verify::{self, Violation as CoreViolation};
use toporank_core::{edges, kahn_shared, Csr, Key, KeyValues, Tie};

use crate::common::{
    array, compute, cyclic, has_dtype, on_graph, on_ids, on_pair, optional_array, read, Array,
    Index, OnGraph, OnIds,
};
use crate::errors::input_error;

/// A per-node key of one of the dtypes the core compares.
pub(crate) enum KeyArray<'py> {
    None,
    I64(Array<'py, i64>),
    U64(Array<'py, u64>),
    F64(Array<'py, f64>),
}

const KEY_DTYPES: &str = "int64, uint64 or float64";

pub(crate) fn read_key<'py>(key: Option<&Bound<'py, PyAny>>) -> PyResult<KeyArray<'py>> {
    Ok(match key {
        None => KeyArray::None,
        Some(k) if has_dtype::<u64>(k) => KeyArray::U64(read(k, "key", KEY_DTYPES)?),
        Some(k) if has_dtype::<f64>(k) => KeyArray::F64(read(k, "key", KEY_DTYPES)?),
        Some(k) => KeyArray::I64(read(k, "key", KEY_DTYPES)?),
    })
}

/// The tie-break policy named `tie` (checked by `toporank._validate`),
/// borrowing its key from `key`.
pub(crate) fn make_tie<'a>(
    tie: &str,
    key: &'a KeyArray<'_>,
    descending: bool,
    seed: u64,
) -> PyResult<Tie<'a>> {
    let values = match key {
        KeyArray::None => None,
        KeyArray::I64(a) => Some(KeyValues::I64(a.values()?)),
        KeyArray::U64(a) => Some(KeyValues::U64(a.values()?)),
        KeyArray::F64(a) => Some(KeyValues::F64(a.values()?)),
    };
    Ok(match tie {
        "queue" => Tie::Queue,
        "stack" => Tie::Stack,
        "priority" => Tie::Priority(Key { values, descending }),
        "random" => Tie::Random { seed },
        other => {
            let choices = "('queue', 'stack', 'priority', 'random')";
            return Err(input_error(format!("tie must be one of {choices}, got '{other}'")));
        }
    })
}

struct KahnOrder<'a> {
    tie: Tie<'a>,
    threads: usize,
}

impl<'py> OnGraph<'py> for KahnOrder<'_> {
    type Output = Bound<'py, PyAny>;
    fn run<I: Index, P: Index>(
        self,
        py: Python<'py>,
        indptr: &[P],
        indices: &[I],
    ) -> PyResult<Self::Output> {
        let outcome = compute(py, || {
            kahn_shared(&Csr::from_arrays(indptr, indices)?, &self.tie, self.threads)
        })?;
        if outcome.is_complete() {
            Ok(array(py, outcome.order).into_bound(py))
        } else {
            cyclic(py, outcome)
        }
    }
}

/// Kahn's algorithm on a CSR graph: the order, or a `Cyclic`.
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
) -> PyResult<Bound<'py, PyAny>> {
    let key = read_key(key)?;
    let tie = make_tie(tie, &key, descending, seed)?;
    on_graph(py, indptr, indices, KahnOrder { tie, threads })
}

/// A CSR graph built from an edge list.
#[pyclass(frozen, module = "toporank._core")]
pub(crate) struct CsrArrays {
    #[pyo3(get)]
    pub(crate) indptr: Py<PyAny>,
    #[pyo3(get)]
    pub(crate) indices: Py<PyAny>,
    /// Input position of each stored edge, when asked for.
    #[pyo3(get)]
    pub(crate) edge_ids: Option<Py<PyAny>>,
}

struct EdgesToCsr {
    n: usize,
    with_edge_ids: bool,
}

impl<'py> OnIds<'py> for EdgesToCsr {
    type Output = CsrArrays;
    fn run<I: Index>(self, py: Python<'py>, src: &[I], dst: &[I]) -> PyResult<CsrArrays> {
        let built = compute(py, || edges::edges_to_csr(src, dst, self.n, self.with_edge_ids))?;
        Ok(CsrArrays {
            indptr: array(py, built.indptr),
            indices: array(py, built.indices),
            edge_ids: optional_array(py, built.edge_ids),
        })
    }
}

/// Group an edge list by source (stable).
#[pyfunction]
#[pyo3(signature = (src, dst, n, with_edge_ids=false))]
fn edges_to_csr<'py>(
    py: Python<'py>,
    src: &Bound<'py, PyAny>,
    dst: &Bound<'py, PyAny>,
    n: usize,
    with_edge_ids: bool,
) -> PyResult<CsrArrays> {
    on_ids(py, ("src", src), ("dst", dst), EdgesToCsr { n, with_edge_ids })
}

struct InputPositionsOf<'a> {
    stored: &'a [i64],
}

impl<'py> OnGraph<'py> for InputPositionsOf<'_> {
    type Output = Py<PyAny>;
    fn run<I: Index, P: Index>(
        self,
        py: Python<'py>,
        indptr: &[P],
        src: &[I],
    ) -> PyResult<Py<PyAny>> {
        let found = compute(py, || edges::input_positions_of(src, indptr, self.stored))?;
        Ok(array(py, found))
    }
}

/// The input positions, ascending, of the stored edges `stored` (int64) of
/// the graph `edges_to_csr(src, ...)` built with offsets `indptr`.
#[pyfunction]
fn input_positions_of<'py>(
    py: Python<'py>,
    src: &Bound<'py, PyAny>,
    indptr: &Bound<'py, PyAny>,
    stored: &Bound<'py, PyAny>,
) -> PyResult<Py<PyAny>> {
    let stored = read::<i64>(stored, "stored", "int64")?;
    on_pair(py, ("indptr", indptr), ("src", src), InputPositionsOf { stored: stored.values()? })
}

/// Why a sequence is not a topological order; the Python layer words it.
///
/// `kind` is `"out_of_range"` (`position`, `value`), `"duplicate"` (`node`,
/// `first`, `second`), `"missing"` (`node`) or `"edge"` (stored edge
/// `edge`, `source -> target`, at positions `first` and `second`).
#[pyclass(frozen, get_all, module = "toporank._core")]
struct Violation {
    kind: &'static str,
    node: Option<usize>,
    edge: Option<usize>,
    source: Option<usize>,
    target: Option<usize>,
    first: Option<usize>,
    second: Option<usize>,
    position: Option<usize>,
    value: Option<i128>,
}

impl From<CoreViolation> for Violation {
    fn from(found: CoreViolation) -> Self {
        let none = Violation {
            kind: "",
            node: None,
            edge: None,
            source: None,
            target: None,
            first: None,
            second: None,
            position: None,
            value: None,
        };
        match found {
            CoreViolation::OutOfRange { position, value } => Violation {
                kind: "out_of_range",
                position: Some(position),
                value: Some(value),
                ..none
            },
            CoreViolation::Duplicate { node, first, second } => Violation {
                kind: "duplicate",
                node: Some(node),
                first: Some(first),
                second: Some(second),
                ..none
            },
            CoreViolation::Missing { node } => {
                Violation { kind: "missing", node: Some(node), ..none }
            }
            CoreViolation::Edge { edge, u, v, pos_u, pos_v } => Violation {
                kind: "edge",
                edge: Some(edge),
                source: Some(u),
                target: Some(v),
                first: Some(pos_u),
                second: Some(pos_v),
                ..none
            },
        }
    }
}

const ORDER_DTYPE: &str = "int64";

struct VerifyOrder<'a> {
    order: &'a [i64],
}

impl<'py> OnGraph<'py> for VerifyOrder<'_> {
    type Output = Option<Violation>;
    fn run<I: Index, P: Index>(
        self,
        py: Python<'py>,
        indptr: &[P],
        indices: &[I],
    ) -> PyResult<Self::Output> {
        let found =
            compute(py, || verify::verify(&Csr::from_arrays(indptr, indices)?, self.order))?;
        Ok(found.map(Violation::from))
    }
}

/// `None` if `order` is a topological order of the graph, else a `Violation`.
#[pyfunction]
fn verify_order<'py>(
    py: Python<'py>,
    indptr: &Bound<'py, PyAny>,
    indices: &Bound<'py, PyAny>,
    order: &Bound<'py, PyAny>,
) -> PyResult<Option<Violation>> {
    let order = read::<i64>(order, "order", ORDER_DTYPE)?;
    on_graph(py, indptr, indices, VerifyOrder { order: order.values()? })
}

/// Position of each node in `order` (a permutation of `0..n`), or a `Violation`.
#[pyfunction]
fn positions<'py>(
    py: Python<'py>,
    order: &Bound<'py, PyAny>,
    n: usize,
) -> PyResult<Bound<'py, PyAny>> {
    let order = read::<i64>(order, "order", ORDER_DTYPE)?;
    let order = order.values()?;
    match compute(py, || verify::positions(order, n))? {
        Ok(position) => Ok(array(py, position).into_bound(py)),
        Err(found) => Ok(Bound::new(py, Violation::from(found))?.into_any()),
    }
}

pub(crate) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_class::<CsrArrays>()?;
    m.add_class::<Violation>()?;
    m.add_function(wrap_pyfunction!(kahn_order, m)?)?;
    m.add_function(wrap_pyfunction!(edges_to_csr, m)?)?;
    m.add_function(wrap_pyfunction!(input_positions_of, m)?)?;
    m.add_function(wrap_pyfunction!(verify_order, m)?)?;
    m.add_function(wrap_pyfunction!(positions, m)?)?;
    Ok(())
}
