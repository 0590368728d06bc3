//! Conversions shared by every binding: errors, the GIL-free section, slices.

use std::panic::{catch_unwind, AssertUnwindSafe};

use numpy::PyReadonlyArray1;
use pyo3::exceptions::{PyRuntimeError, PyValueError};
use pyo3::prelude::*;
use toporank_core::Error;

/// Turn a core error into the package's input error (a `ValueError`).
pub(crate) fn to_pyerr(py: Python<'_>, error: Error) -> PyErr {
    let message = error.to_string();
    match py.import("toporank._errors").and_then(|m| m.getattr("GraphInputError")) {
        Ok(class) => PyErr::from_value(match class.call1((message.clone(),)) {
            Ok(instance) => instance,
            Err(e) => return e,
        }),
        Err(_) => PyValueError::new_err(message),
    }
}

/// Run `work` without the GIL; a panic (a bug, never input) becomes a
/// `RuntimeError` instead of crossing into Python as `PanicException`.
pub(crate) fn compute<T: Send>(py: Python<'_>, work: impl FnOnce() -> T + Send) -> PyResult<T> {
    py.detach(|| catch_unwind(AssertUnwindSafe(work))).map_err(|payload| {
        let what = payload
            .downcast_ref::<&str>()
            .map(|s| s.to_string())
            .or_else(|| payload.downcast_ref::<String>().cloned())
            .unwrap_or_default();
        PyRuntimeError::new_err(format!("toporank internal error (please report): {what}"))
    })
}

pub(crate) fn slice<'a, T: numpy::Element>(
    array: &'a PyReadonlyArray1<'_, T>,
    name: &str,
) -> PyResult<&'a [T]> {
    array
        .as_slice()
        .map_err(|_| PyValueError::new_err(format!("{name} must be a contiguous 1-D array")))
}
