//! A topological order maintained under edge insertions and deletions.

use numpy::{IntoPyArray, PyArray1, PyArrayMethods, PyReadonlyArray1};
use pyo3::exceptions::PyTypeError;
use pyo3::prelude::*;
use pyo3::types::PyTuple;
use toporank_core::dynamic::{BatchInsertion, DynamicOrder, Insertion};
use toporank_core::Csr;

use crate::common::{compute, slice, to_pyerr};

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
    fn new(py: Python<'_>, n: usize) -> PyResult<Self> {
        let inner = DynamicOrder::new(n).map_err(|e| to_pyerr(py, e))?;
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
        with_index_width!(indptr, indices, I => {
            let (indptr, indices) = (slice(&indptr, "indptr")?, slice(&indices, "indices")?);
            let built = compute(py, || {
                Csr::<I>::new(indptr, indices).and_then(|g| DynamicOrder::from_csr(&g))
            })?
            .map_err(|e| to_pyerr(py, e))?;
            match built {
                Ok(inner) => Ok(Bound::new(py, DynamicCore { inner })?.into_any()),
                Err(cycle) => Ok(ids(py, &cycle).into_bound(py).into_any()),
            }
        })
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

    fn add_nodes(&mut self, py: Python<'_>, count: usize) -> PyResult<()> {
        self.inner.add_nodes(count).map_err(|e| to_pyerr(py, e))
    }

    /// None when `u -> v` went in, else the refusal.
    fn add_edge(&mut self, py: Python<'_>, u: i64, v: i64) -> PyResult<Option<Refusal>> {
        match self.inner.add_edge(u, v).map_err(|e| to_pyerr(py, e))? {
            Insertion::Added { .. } => Ok(None),
            Insertion::Refused { cycle } => Ok(Some(Refusal { index: 0, cycle: ids(py, &cycle) })),
        }
    }

    /// None when every edge went in, else the refusal (nothing changed).
    fn add_edges(
        &mut self,
        py: Python<'_>,
        src: PyReadonlyArray1<'_, i64>,
        dst: PyReadonlyArray1<'_, i64>,
    ) -> PyResult<Option<Refusal>> {
        let (src, dst) = (slice(&src, "src")?, slice(&dst, "dst")?);
        let inner = &mut self.inner;
        let outcome = compute(py, || inner.add_edges(src, dst))?.map_err(|e| to_pyerr(py, e))?;
        match outcome {
            BatchInsertion::Added { .. } => Ok(None),
            BatchInsertion::Refused { index, cycle } => {
                Ok(Some(Refusal { index, cycle: ids(py, &cycle) }))
            }
        }
    }

    /// False when there is no edge `u -> v`.
    fn remove_edge(&mut self, py: Python<'_>, u: i64, v: i64) -> PyResult<bool> {
        self.inner.remove_edge(u, v).map_err(|e| to_pyerr(py, e))
    }

    /// None when every edge was removed, else the position of the first
    /// missing one (nothing changed).
    fn remove_edges(
        &mut self,
        py: Python<'_>,
        src: PyReadonlyArray1<'_, i64>,
        dst: PyReadonlyArray1<'_, i64>,
    ) -> PyResult<Option<usize>> {
        let (src, dst) = (slice(&src, "src")?, slice(&dst, "dst")?);
        let inner = &mut self.inner;
        compute(py, || inner.remove_edges(src, dst))?.map_err(|e| to_pyerr(py, e))
    }

    /// The current order (a copy, int64).
    fn order(&self, py: Python<'_>) -> Py<PyArray1<i64>> {
        ids(py, self.inner.order())
    }

    /// The position of every node (a copy, int64).
    fn positions(&self, py: Python<'_>) -> Py<PyArray1<i64>> {
        ids(py, self.inner.positions())
    }

    fn position(&self, py: Python<'_>, v: i64) -> PyResult<usize> {
        self.inner.position(v).map_err(|e| to_pyerr(py, e))
    }

    fn precedes(&self, py: Python<'_>, u: i64, v: i64) -> PyResult<bool> {
        self.inner.precedes(u, v).map_err(|e| to_pyerr(py, e))
    }

    /// The current edges as int64 CSR `(indptr, indices)`.
    fn to_csr<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyTuple>> {
        let (indptr, indices) = self.inner.to_csr().map_err(|e| to_pyerr(py, e))?;
        (indptr.into_pyarray(py), indices.into_pyarray(py)).into_pyobject(py)
    }
}

pub(crate) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_class::<DynamicCore>()?;
    m.add_class::<Refusal>()?;
    Ok(())
}
