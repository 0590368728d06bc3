//! Quality measures of a given order.

use numpy::{IntoPyArray, PyArray1, PyArrayMethods};
use pyo3::exceptions::PyTypeError;
use pyo3::prelude::*;
use toporank_core::metrics::{self, Agreement};
use toporank_core::Csr;

use crate::common::{compute, slice, to_pyerr};

fn agreement_tuple(a: Agreement) -> (u128, u128, u128) {
    (a.agree, a.disagree, a.tied)
}

/// Measures of `order` on the graph, with key agreement when `rank` is given.
///
/// Returns `None` for an order that is not topological (the caller asks
/// `verify_order` for the first violation, as that is rare), else `(ready_sizes, live_sizes, ready_peak,
/// ready_total, live_peak, live_total, span_total, span_max, agreement)`,
/// `agreement` being `None` or three `(agree, disagree, tied)` triples for
/// node pairs, consecutive steps and edges.
#[pyfunction]
#[pyo3(signature = (indptr, indices, order, rank=None))]
fn order_metrics<'py>(
    py: Python<'py>,
    indptr: &Bound<'py, PyAny>,
    indices: &Bound<'py, PyAny>,
    order: &Bound<'py, PyAny>,
    rank: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyAny>> {
    let order = order
        .cast::<PyArray1<i64>>()
        .map_err(|_| PyTypeError::new_err("order must be a 1-D int64 numpy array"))?
        .readonly();
    let order = slice(&order, "order")?;
    let rank = rank
        .map(|r| {
            r.cast::<PyArray1<i64>>()
                .map(|a| a.readonly())
                .map_err(|_| PyTypeError::new_err("rank must be a 1-D int64 numpy array"))
        })
        .transpose()?;
    let rank = rank.as_ref().map(|r| slice(r, "rank")).transpose()?;
    with_index_width!(indptr, indices, I => {
        let (indptr, indices) = (slice(&indptr, "indptr")?, slice(&indices, "indices")?);
        let found = compute(py, || {
            let g = Csr::<I>::new(indptr, indices)?;
            let measured = match metrics::order_metrics(&g, order)? {
                Ok(measured) => measured,
                Err(_) => return Ok(None),
            };
            let agreement = rank.map(|rank| metrics::key_agreement(&g, order, rank)).transpose()?;
            Ok(Some((measured, agreement)))
        })?
        .map_err(|e| to_pyerr(py, e))?;
        match found {
            None => Ok(py.None().into_bound(py)),
            Some((m, agreement)) => {
                let agreement = agreement.map(|a| {
                    (agreement_tuple(a.pairs), agreement_tuple(a.steps), agreement_tuple(a.edges))
                });
                let measures = (
                    m.ready_sizes.into_pyarray(py),
                    m.live_sizes.into_pyarray(py),
                    m.ready_peak,
                    m.ready_total,
                    m.live_peak,
                    m.live_total,
                    m.span_total,
                    m.span_max,
                    agreement,
                );
                Ok(measures.into_pyobject(py)?.into_any())
            }
        }
    })
}

pub(crate) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(order_metrics, m)?)?;
    Ok(())
}
