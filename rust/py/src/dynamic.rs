//! A topological order maintained under edge insertions and deletions.

use numpy::{IntoPyArray, PyArray1};
use pyo3::prelude::*;
use toporank_core::dynamic::{BatchInsertion, DynamicOrder, Insertion};
use toporank_core::Csr;

use crate::common::{compute, on_graph, read, Index, OnGraph};
use crate::errors::to_py;
use crate::order::CsrArrays;

fn ids(py: Python<'_>, values: &[usize]) -> Py<PyArray1<i64>> {
    let converted: Vec<i64> = values.iter().map(|&x| x as i64).collect();
    converted.into_pyarray(py).unbind()
}

/// A refused insertion: edge `index` of the batch (0 for a single edge)
/// closes `cycle`, the path from its target back to its source.
#[pyclass(module = "toporank._core", frozen)]
pub(crate) struct Refusal {
    #[pyo3(get)]
    index: usize,
    #[pyo3(get)]
    cycle: Py<PyArray1<i64>>,
}

/// The Rust structure behind `toporank.DynamicOrder` (integer ids only).
#[pyclass(module = "toporank._core")]
pub(crate) struct DynamicCore {
    inner: DynamicOrder,
}

#[pymethods]
impl DynamicCore {
    /// `n` nodes and no edges, ordered by id.
    #[new]
    fn new(n: usize) -> PyResult<Self> {
        let inner = DynamicOrder::new(n).map_err(to_py)?;
        Ok(DynamicCore { inner })
    }

    /// A `DynamicCore` holding the CSR graph in Kahn's FIFO order, or (for
    /// a graph with a cycle) one cycle as an int64 array.
    #[staticmethod]
    fn from_csr<'py>(
        py: Python<'py>,
        indptr: &Bound<'py, PyAny>,
        indices: &Bound<'py, PyAny>,
    ) -> PyResult<Bound<'py, PyAny>> {
        on_graph(py, indptr, indices, FromCsr)
    }

    #[getter]
    fn n(&self) -> usize {
        self.inner.n()
    }

    #[getter]
    fn m(&self) -> usize {
        self.inner.m()
    }

    /// Nodes repositioned by every insertion so far.
    #[getter]
    fn affected_total(&self) -> u64 {
        self.inner.affected_total()
    }

    fn add_nodes(&mut self, count: usize) -> PyResult<()> {
        self.inner.add_nodes(count).map_err(to_py)
    }

    /// None when `u -> v` went in, else the refusal.
    fn add_edge(&mut self, py: Python<'_>, u: i64, v: i64) -> PyResult<Option<Refusal>> {
        match self.inner.add_edge(u, v).map_err(to_py)? {
            Insertion::Added { .. } => Ok(None),
            Insertion::Refused { cycle } => Ok(Some(Refusal { index: 0, cycle: ids(py, &cycle) })),
        }
    }

    /// None when every edge went in, else the refusal (nothing changed).
    fn add_edges(
        &mut self,
        py: Python<'_>,
        src: &Bound<'_, PyAny>,
        dst: &Bound<'_, PyAny>,
    ) -> PyResult<Option<Refusal>> {
        let (src, dst) = (read::<i64>(src, "src", "int64")?, read::<i64>(dst, "dst", "int64")?);
        let (src, dst) = (src.values()?, dst.values()?);
        let inner = &mut self.inner;
        let outcome = compute(py, || inner.add_edges(src, dst))?;
        match outcome {
            BatchInsertion::Added { .. } => Ok(None),
            BatchInsertion::Refused { index, cycle } => {
                Ok(Some(Refusal { index, cycle: ids(py, &cycle) }))
            }
        }
    }

    /// False when there is no edge `u -> v`.
    fn remove_edge(&mut self, u: i64, v: i64) -> PyResult<bool> {
        self.inner.remove_edge(u, v).map_err(to_py)
    }

    /// None when every edge was removed, else the position of the first
    /// missing one (nothing changed).
    fn remove_edges(
        &mut self,
        py: Python<'_>,
        src: &Bound<'_, PyAny>,
        dst: &Bound<'_, PyAny>,
    ) -> PyResult<Option<usize>> {
        let (src, dst) = (read::<i64>(src, "src", "int64")?, read::<i64>(dst, "dst", "int64")?);
        let (src, dst) = (src.values()?, dst.values()?);
        let inner = &mut self.inner;
        compute(py, || inner.remove_edges(src, dst))
    }

    /// The current order (a copy, int64).
    fn order(&self, py: Python<'_>) -> Py<PyArray1<i64>> {
        ids(py, self.inner.order())
    }

    /// The position of every node (a copy, int64).
    fn positions(&self, py: Python<'_>) -> Py<PyArray1<i64>> {
        ids(py, self.inner.positions())
    }

    fn position(&self, v: i64) -> PyResult<usize> {
        self.inner.position(v).map_err(to_py)
    }

    fn precedes(&self, u: i64, v: i64) -> PyResult<bool> {
        self.inner.precedes(u, v).map_err(to_py)
    }

    /// The current edges as int64 CSR arrays.
    fn to_csr(&self, py: Python<'_>) -> PyResult<CsrArrays> {
        let (indptr, indices) = self.inner.to_csr().map_err(to_py)?;
        Ok(CsrArrays {
            indptr: indptr.into_pyarray(py).into_any().unbind(),
            indices: indices.into_pyarray(py).into_any().unbind(),
            edge_ids: None,
        })
    }
}

/// [`DynamicCore::from_csr`] at one index width.
struct FromCsr;

impl<'py> OnGraph<'py> for FromCsr {
    type Output = Bound<'py, PyAny>;

    fn run<I: Index, P: Index>(
        self,
        py: Python<'py>,
        indptr: &[P],
        indices: &[I],
    ) -> PyResult<Self::Output> {
        let built = compute(py, || DynamicOrder::from_csr(&Csr::from_arrays(indptr, indices)?))?;
        match built {
            Ok(inner) => Ok(Bound::new(py, DynamicCore { inner })?.into_any()),
            Err(cycle) => Ok(ids(py, &cycle).into_bound(py).into_any()),
        }
    }
}

pub(crate) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_class::<DynamicCore>()?;
    m.add_class::<Refusal>()?;
    Ok(())
}
