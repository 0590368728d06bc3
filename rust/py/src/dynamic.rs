//! A topological order maintained under edge insertions and deletions.

use numpy::{IntoPyArray, PyArray1};
use pyo3::prelude::*;
use toporank_core::dynamic::{BatchInsertion, DynamicOrder, Insertion};
use toporank_core::Csr;

use crate::common::{compute, on_graph, read, Index, OnGraph, Shared};
use crate::errors::to_py;
use crate::order::CsrArrays;

fn ids(py: Python<'_>, values: &[usize]) -> Py<PyArray1<i64>> {
    converted(values).into_pyarray(py).unbind()
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
/// Every method takes the one lock, so threads may share an instance;
/// batches wait for it and run without the GIL.
#[pyclass(module = "toporank._core", frozen)]
pub(crate) struct DynamicCore {
    inner: Shared<DynamicOrder>,
}

fn converted(values: &[usize]) -> Vec<i64> {
    values.iter().map(|&x| x as i64).collect()
}

#[pymethods]
impl DynamicCore {
    /// `n` nodes and no edges, ordered by id.
    #[new]
    fn new(n: usize) -> PyResult<Self> {
        let inner = DynamicOrder::new(n).map_err(to_py)?;
        Ok(DynamicCore { inner: Shared::new(inner, "DynamicOrder") })
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
    fn n(&self, py: Python<'_>) -> PyResult<usize> {
        self.inner.locked(py, |d| Ok(d.n()))
    }

    #[getter]
    fn m(&self, py: Python<'_>) -> PyResult<usize> {
        self.inner.locked(py, |d| Ok(d.m()))
    }

    /// Nodes repositioned by every insertion so far.
    #[getter]
    fn affected_total(&self, py: Python<'_>) -> PyResult<u64> {
        self.inner.locked(py, |d| Ok(d.affected_total()))
    }

    fn add_nodes(&self, py: Python<'_>, count: usize) -> PyResult<()> {
        self.inner.locked(py, |d| d.add_nodes(count))
    }

    /// None when `u -> v` went in, else the refusal.
    fn add_edge(&self, py: Python<'_>, u: i64, v: i64) -> PyResult<Option<Refusal>> {
        match self.inner.locked(py, |d| d.add_edge(u, v))? {
            Insertion::Added { .. } => Ok(None),
            Insertion::Refused { cycle } => Ok(Some(Refusal { index: 0, cycle: ids(py, &cycle) })),
        }
    }

    /// None when every edge went in, else the refusal (nothing changed).
    fn add_edges(
        &self,
        py: Python<'_>,
        src: &Bound<'_, PyAny>,
        dst: &Bound<'_, PyAny>,
    ) -> PyResult<Option<Refusal>> {
        let (src, dst) = (read::<i64>(src, "src", "int64")?, read::<i64>(dst, "dst", "int64")?);
        let (src, dst) = (src.values()?, dst.values()?);
        match self.inner.detached(py, |d| d.add_edges(src, dst))? {
            BatchInsertion::Added { .. } => Ok(None),
            BatchInsertion::Refused { index, cycle } => {
                Ok(Some(Refusal { index, cycle: ids(py, &cycle) }))
            }
        }
    }

    /// False when there is no edge `u -> v`.
    fn remove_edge(&self, py: Python<'_>, u: i64, v: i64) -> PyResult<bool> {
        self.inner.locked(py, |d| d.remove_edge(u, v))
    }

    /// None when every edge was removed, else the position of the first
    /// missing one (nothing changed).
    fn remove_edges(
        &self,
        py: Python<'_>,
        src: &Bound<'_, PyAny>,
        dst: &Bound<'_, PyAny>,
    ) -> PyResult<Option<usize>> {
        let (src, dst) = (read::<i64>(src, "src", "int64")?, read::<i64>(dst, "dst", "int64")?);
        let (src, dst) = (src.values()?, dst.values()?);
        self.inner.detached(py, |d| d.remove_edges(src, dst))
    }

    /// The current order (a copy, int64).
    fn order(&self, py: Python<'_>) -> PyResult<Py<PyArray1<i64>>> {
        let order = self.inner.locked(py, |d| Ok(converted(d.order())))?;
        Ok(order.into_pyarray(py).unbind())
    }

    /// The position of every node (a copy, int64).
    fn positions(&self, py: Python<'_>) -> PyResult<Py<PyArray1<i64>>> {
        let positions = self.inner.locked(py, |d| Ok(converted(d.positions())))?;
        Ok(positions.into_pyarray(py).unbind())
    }

    fn position(&self, py: Python<'_>, v: i64) -> PyResult<usize> {
        self.inner.locked(py, |d| d.position(v))
    }

    fn precedes(&self, py: Python<'_>, u: i64, v: i64) -> PyResult<bool> {
        self.inner.locked(py, |d| d.precedes(u, v))
    }

    /// The current edges as int64 CSR arrays.
    fn to_csr(&self, py: Python<'_>) -> PyResult<CsrArrays> {
        let (indptr, indices) = self.inner.locked(py, |d| d.to_csr())?;
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
            Ok(inner) => {
                let core = DynamicCore { inner: Shared::new(inner, "DynamicOrder") };
                Ok(Bound::new(py, core)?.into_any())
            }
            Err(cycle) => Ok(ids(py, &cycle).into_bound(py).into_any()),
        }
    }
}

pub(crate) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_class::<DynamicCore>()?;
    m.add_class::<Refusal>()?;
    Ok(())
}
