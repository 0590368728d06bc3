//! Edge batches to CSR in bounded memory (`toporank.io.build`), and the
//! check of a saved graph's arrays.
//!
//! `CsrBuilder` holds the core's two passes between calls: `count` every
//! batch, `start`, `place` every batch again in the same order, `finish`.
//! Each call reads its arrays without a copy and works without the GIL.

use pyo3::prelude::*;
use toporank_core::build::{DegreeCount, Placement};
use toporank_core::intern::{Interner, Labels};
use toporank_core::{Csr, Error};

use crate::common::{array, compute, has_dtype, on_graph, read, Array, Index, OnGraph};
use crate::errors::input_error;

/// The second pass at one pair of widths (`P` for offsets, `I` for ids).
trait Filling: Send + Sync {
    fn place_narrow(&mut self, src: &[i32], dst: &[i32]) -> Result<(), Error>;
    fn place_wide(&mut self, src: &[i64], dst: &[i64]) -> Result<(), Error>;
    fn finish(self: Box<Self>, py: Python<'_>) -> PyResult<BuiltCsr>;
}

impl<P: Index, I: Index> Filling for Placement<P, I> {
    fn place_narrow(&mut self, src: &[i32], dst: &[i32]) -> Result<(), Error> {
        self.place(src, dst)
    }
    fn place_wide(&mut self, src: &[i64], dst: &[i64]) -> Result<(), Error> {
        self.place(src, dst)
    }
    fn finish(self: Box<Self>, py: Python<'_>) -> PyResult<BuiltCsr> {
        let built = compute(py, || (*self).finish())?;
        let (indptr, indices, positions) = (built.indptr, built.indices, built.positions);
        // The core reads every supported width pair, so each array keeps
        // the narrowest width that holds its values.
        let (indptr, indices) = (array(py, indptr), array(py, indices));
        Ok(BuiltCsr { indptr, indices, positions: positions.map(|p| array(py, p)) })
    }
}

/// A CSR graph built by [`CsrBuilder`].
#[pyclass(frozen, module = "toporank._core")]
pub(crate) struct BuiltCsr {
    #[pyo3(get)]
    indptr: Py<PyAny>,
    #[pyo3(get)]
    indices: Py<PyAny>,
    /// Input position of every stored edge, or None when not asked for.
    #[pyo3(get)]
    positions: Option<Py<PyAny>>,
}

/// Edge batches to CSR in two passes: `count` each batch, `start`, `place`
/// the same batches in the same order, `finish`.
#[pyclass(module = "toporank._core")]
pub(crate) struct CsrBuilder {
    count: Option<DegreeCount>,
    filling: Option<Box<dyn Filling>>,
}

/// One batch of edge arrays, borrowed without a copy, at the width numpy holds them.
enum Batch<'py> {
    Narrow(Array<'py, i32>, Array<'py, i32>),
    Wide(Array<'py, i64>, Array<'py, i64>),
}

fn read_batch<'py>(src: &Bound<'py, PyAny>, dst: &Bound<'py, PyAny>) -> PyResult<Batch<'py>> {
    const WIDTHS: &str = "int32 or int64";
    if has_dtype::<i32>(src) && has_dtype::<i32>(dst) {
        Ok(Batch::Narrow(read(src, "src", WIDTHS)?, read(dst, "dst", WIDTHS)?))
    } else if has_dtype::<i64>(src) && has_dtype::<i64>(dst) {
        Ok(Batch::Wide(read(src, "src", WIDTHS)?, read(dst, "dst", WIDTHS)?))
    } else {
        Err(input_error(format!("src and dst must be 1-D numpy arrays of one dtype, {WIDTHS}")))
    }
}

fn state_error(message: &str) -> PyErr {
    pyo3::exceptions::PyRuntimeError::new_err(format!("CsrBuilder: {message}"))
}

#[pymethods]
impl CsrBuilder {
    #[new]
    fn new() -> Self {
        CsrBuilder { count: Some(DegreeCount::new()), filling: None }
    }

    /// First pass: count one batch (`src`, `dst`: 1-D int32 or int64 arrays of one dtype).
    fn count<'py>(
        &mut self,
        py: Python<'py>,
        src: &Bound<'py, PyAny>,
        dst: &Bound<'py, PyAny>,
    ) -> PyResult<()> {
        let count = self.count.as_mut().ok_or_else(|| state_error("count after start"))?;
        let first = count.edges();
        match read_batch(src, dst)? {
            Batch::Narrow(s, d) => {
                let (s, d) = (s.values()?, d.values()?);
                compute(py, || count.add(s, d, first))
            }
            Batch::Wide(s, d) => {
                let (s, d) = (s.values()?, d.values()?);
                compute(py, || count.add(s, d, first))
            }
        }
    }

    /// Edges counted.
    #[getter]
    fn edges(&self) -> usize {
        self.count.as_ref().map_or(0, |c| c.edges())
    }

    /// The largest id counted plus one.
    #[getter]
    fn nodes(&self) -> usize {
        self.count.as_ref().map_or(0, |c| c.nodes())
    }

    /// Whether the edges counted come grouped by source (input order is CSR order).
    #[getter]
    fn grouped(&self) -> bool {
        self.count.as_ref().is_some_and(|c| c.grouped())
    }

    /// End the first pass: room for `n` nodes (at least `nodes`), indices
    /// as int32 when ids fit, offsets as int32 when the edge count fits.
    #[pyo3(signature = (n, positions=false))]
    fn start(&mut self, py: Python<'_>, n: usize, positions: bool) -> PyResult<()> {
        let count = self.count.take().ok_or_else(|| state_error("start called twice"))?;
        let narrow_rows = count.edges() < i32::MAX as usize;
        let narrow_ids = n < i32::MAX as usize;
        let filling: Box<dyn Filling> = compute(py, || -> Result<Box<dyn Filling>, Error> {
            Ok(match (narrow_rows, narrow_ids) {
                (true, true) => {
                    Box::new(Placement::<i32, i32>::new(count.into_indptr(n)?, positions)?)
                }
                (false, true) => {
                    Box::new(Placement::<i64, i32>::new(count.into_indptr(n)?, positions)?)
                }
                (true, false) => {
                    Box::new(Placement::<i32, i64>::new(count.into_indptr(n)?, positions)?)
                }
                (false, false) => {
                    Box::new(Placement::<i64, i64>::new(count.into_indptr(n)?, positions)?)
                }
            })
        })?;
        self.filling = Some(filling);
        Ok(())
    }

    /// Second pass: place one batch (the batches of `count`, in the same order).
    fn place<'py>(
        &mut self,
        py: Python<'py>,
        src: &Bound<'py, PyAny>,
        dst: &Bound<'py, PyAny>,
    ) -> PyResult<()> {
        let filling = self.filling.as_mut().ok_or_else(|| state_error("place before start"))?;
        let filling = filling.as_mut();
        match read_batch(src, dst)? {
            Batch::Narrow(s, d) => {
                let (s, d) = (s.values()?, d.values()?);
                compute(py, || filling.place_narrow(s, d))
            }
            Batch::Wide(s, d) => {
                let (s, d) = (s.values()?, d.values()?);
                compute(py, || filling.place_wide(s, d))
            }
        }
    }

    /// The CSR built; the builder is spent.
    fn finish(&mut self, py: Python<'_>) -> PyResult<BuiltCsr> {
        let filling = self.filling.take().ok_or_else(|| state_error("finish before start"))?;
        filling.finish(py)
    }
}

struct Check;

impl<'py> OnGraph<'py> for Check {
    type Output = ();
    fn run<I: Index, P: Index>(self, py: Python<'py>, indptr: &[P], indices: &[I]) -> PyResult<()> {
        compute(py, || Csr::from_arrays(indptr, indices)?.check_indices())
    }
}

/// Check a CSR pair: `indptr` starts at 0, never decreases, ends at the
/// number of indices, and every index lies in `0..n`.
#[pyfunction]
fn check_csr<'py>(
    py: Python<'py>,
    indptr: &Bound<'py, PyAny>,
    indices: &Bound<'py, PyAny>,
) -> PyResult<()> {
    on_graph(py, indptr, indices, Check)
}

/// Ids of one batch of labelled edges.
#[pyclass(frozen, module = "toporank._core")]
pub(crate) struct EdgeIds {
    #[pyo3(get)]
    src: Py<PyAny>,
    #[pyo3(get)]
    dst: Py<PyAny>,
}

/// Every interned label in id order, as Arrow large-string buffers.
#[pyclass(frozen, module = "toporank._core")]
pub(crate) struct LabelBytes {
    /// `data[offsets[i]:offsets[i + 1]]` is label `i` (int64).
    #[pyo3(get)]
    offsets: Py<PyAny>,
    /// UTF-8 bytes of all labels (uint8).
    #[pyo3(get)]
    data: Py<PyAny>,
}

/// Node labels numbered in first-seen order (row by row, source before
/// target), batch after batch; one entry per distinct label.
#[pyclass(module = "toporank._core")]
pub(crate) struct LabelInterner(Interner);

#[pymethods]
impl LabelInterner {
    #[new]
    fn new() -> Self {
        LabelInterner(Interner::new())
    }

    fn __len__(&self) -> usize {
        self.0.len()
    }

    /// Ids of one batch: each column as Arrow string buffers, `offsets`
    /// (int32 or int64, one more than the labels) into `data` (uint8).
    fn intern<'py>(
        &mut self,
        py: Python<'py>,
        src_offsets: &Bound<'py, PyAny>,
        src_data: &Bound<'py, PyAny>,
        dst_offsets: &Bound<'py, PyAny>,
        dst_data: &Bound<'py, PyAny>,
    ) -> PyResult<EdgeIds> {
        const BYTES: &str = "uint8";
        let src_data = read::<u8>(src_data, "src_data", BYTES)?;
        let dst_data = read::<u8>(dst_data, "dst_data", BYTES)?;
        let (sd, dd) = (src_data.values()?, dst_data.values()?);
        let interner = &mut self.0;
        let (src, dst) = match read_batch(src_offsets, dst_offsets)? {
            Batch::Narrow(so, to) => {
                let (so, to) = (so.values()?, to.values()?);
                compute(py, || {
                    interner
                        .intern(Labels { offsets: so, data: sd }, Labels { offsets: to, data: dd })
                })?
            }
            Batch::Wide(so, to) => {
                let (so, to) = (so.values()?, to.values()?);
                compute(py, || {
                    interner
                        .intern(Labels { offsets: so, data: sd }, Labels { offsets: to, data: dd })
                })?
            }
        };
        Ok(EdgeIds { src: array(py, src), dst: array(py, dst) })
    }

    /// Every label so far, in id order.
    fn labels(&self, py: Python<'_>) -> PyResult<LabelBytes> {
        let interner = &self.0;
        let (offsets, data) = compute(py, || interner.labels())?;
        Ok(LabelBytes { offsets: array(py, offsets), data: array(py, data) })
    }
}

pub(crate) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_class::<LabelInterner>()?;
    m.add_class::<EdgeIds>()?;
    m.add_class::<LabelBytes>()?;
    m.add_class::<CsrBuilder>()?;
    m.add_class::<BuiltCsr>()?;
    m.add_function(wrap_pyfunction!(check_csr, m)?)?;
    Ok(())
}
