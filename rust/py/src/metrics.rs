//! Quality measures of a given order.

use pyo3::prelude::*;
use toporank_core::metrics::{self, Agreement as CoreAgreement};
use toporank_core::Csr;

use crate::common::{array, compute, on_graph, read, read_optional, Index, OnGraph};

/// Pairs counted by agreement with a reference ranking.
#[pyclass(frozen, get_all, module = "toporank._core")]
struct Agreement {
    agree: u128,
    disagree: u128,
    tied: u128,
}

impl From<CoreAgreement> for Agreement {
    fn from(a: CoreAgreement) -> Self {
        Agreement { agree: a.agree, disagree: a.disagree, tied: a.tied }
    }
}

/// Measures of a topological order, with key agreements when a rank was given.
#[pyclass(frozen, get_all, module = "toporank._core")]
struct OrderMetrics {
    ready_sizes: Py<PyAny>,
    live_sizes: Py<PyAny>,
    ready_peak: usize,
    ready_total: u128,
    live_peak: usize,
    live_total: u128,
    span_total: u128,
    span_max: usize,
    /// Over all node pairs, consecutive steps and edges (with a rank only).
    pairs: Option<Py<Agreement>>,
    steps: Option<Py<Agreement>>,
    edges: Option<Py<Agreement>>,
}

struct MetricsOf<'a> {
    order: &'a [i64],
    rank: Option<&'a [i64]>,
}

impl<'py> OnGraph<'py> for MetricsOf<'_> {
    type Output = Option<OrderMetrics>;
    fn run<I: Index, P: Index>(
        self,
        py: Python<'py>,
        indptr: &[P],
        indices: &[I],
    ) -> PyResult<Self::Output> {
        let (order, rank) = (self.order, self.rank);
        let found = compute(py, || {
            let g = Csr::from_arrays(indptr, indices)?;
            let measured = match metrics::order_metrics(&g, order)? {
                Ok(measured) => measured,
                Err(_) => return Ok(None),
            };
            let agreement = rank.map(|rank| metrics::key_agreement(&g, order, rank)).transpose()?;
            Ok(Some((measured, agreement)))
        })?;
        let Some((m, agreement)) = found else {
            return Ok(None);
        };
        let agreement = |pick: fn(&metrics::KeyAgreement) -> CoreAgreement| {
            agreement.as_ref().map(|a| Py::new(py, Agreement::from(pick(a)))).transpose()
        };
        Ok(Some(OrderMetrics {
            ready_sizes: array(py, m.ready_sizes),
            live_sizes: array(py, m.live_sizes),
            ready_peak: m.ready_peak,
            ready_total: m.ready_total,
            live_peak: m.live_peak,
            live_total: m.live_total,
            span_total: m.span_total,
            span_max: m.span_max,
            pairs: agreement(|a| a.pairs)?,
            steps: agreement(|a| a.steps)?,
            edges: agreement(|a| a.edges)?,
        }))
    }
}

/// Measures of `order` on the graph (an `OrderMetrics`), with key agreement
/// when `rank` is given; `None` for an order that is not topological (the
/// caller asks `verify_order` for the first violation, as that is rare).
#[pyfunction]
#[pyo3(signature = (indptr, indices, order, rank=None))]
fn order_metrics<'py>(
    py: Python<'py>,
    indptr: &Bound<'py, PyAny>,
    indices: &Bound<'py, PyAny>,
    order: &Bound<'py, PyAny>,
    rank: Option<&Bound<'py, PyAny>>,
) -> PyResult<Option<OrderMetrics>> {
    let order = read::<i64>(order, "order", "int64")?;
    let rank = read_optional::<i64>(rank, "rank", "int64")?;
    let rank = rank.as_ref().map(|r| r.values()).transpose()?;
    on_graph(py, indptr, indices, MetricsOf { order: order.values()?, rank })
}

pub(crate) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_class::<Agreement>()?;
    m.add_class::<OrderMetrics>()?;
    m.add_function(wrap_pyfunction!(order_metrics, m)?)?;
    Ok(())
}
