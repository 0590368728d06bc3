//! The one conversion of core errors into Python exceptions.
//!
//! [`CoreError`] wraps [`toporank_core::Error`] (the orphan rule forbids
//! `From<Error> for PyErr` here) and maps each error kind to its class:
//! input errors to `toporank.GraphInputError`, allocation failures to
//! `MemoryError`, interruptions to `KeyboardInterrupt`, thread-pool and
//! internal failures to `RuntimeError`. The package's exception class is
//! imported once and cached.

use pyo3::exceptions::{PyKeyboardInterrupt, PyMemoryError, PyRuntimeError, PyValueError};
use pyo3::prelude::*;
use pyo3::sync::PyOnceLock;
use pyo3::types::PyType;
use toporank_core::Error;

/// A core error on its way to Python.
#[derive(Debug)]
pub(crate) struct CoreError(pub(crate) Error);

impl From<Error> for CoreError {
    fn from(error: Error) -> Self {
        CoreError(error)
    }
}

/// A core error as its Python exception (for `map_err` outside [`compute`](crate::common::compute)).
pub(crate) fn to_py(error: Error) -> PyErr {
    CoreError(error).into()
}

static GRAPH_INPUT_ERROR: PyOnceLock<Py<PyType>> = PyOnceLock::new();

/// `toporank.GraphInputError` carrying `message` (a `ValueError` when the
/// package cannot be imported, as during a bare import of `_core`).
pub(crate) fn input_error(message: String) -> PyErr {
    Python::attach(|py| match GRAPH_INPUT_ERROR.import(py, "toporank._errors", "GraphInputError") {
        Ok(class) => PyErr::from_type(class.clone(), message),
        Err(_) => PyValueError::new_err(message),
    })
}

impl From<CoreError> for PyErr {
    fn from(CoreError(error): CoreError) -> PyErr {
        let message = error.to_string();
        match error {
            Error::Allocation { .. } => PyMemoryError::new_err(message),
            Error::Interrupted => PyKeyboardInterrupt::new_err(message),
            Error::ThreadPool { .. } | Error::Internal { .. } => PyRuntimeError::new_err(message),
            Error::EmptyIndptr
            | Error::IndptrStart { .. }
            | Error::IndptrDecreasing { .. }
            | Error::IndptrEnd { .. }
            | Error::IndexOutOfRange { .. }
            | Error::LengthMismatch { .. }
            | Error::TooLarge { .. }
            | Error::NanKey { .. }
            | Error::InvalidDuration { .. }
            | Error::DurationOverflow { .. }
            | Error::NoWorkers
            | Error::BadWeight { .. }
            | Error::NoSuchNode { .. }
            | Error::Overflow { .. }
            | Error::InputChanged { .. } => input_error(message),
        }
    }
}

/// One example of each error kind, by name (for the conversion's test).
fn example(kind: &str) -> Option<Error> {
    Some(match kind {
        "input" => Error::IndexOutOfRange { what: "indices", position: 3, value: -2, n: 5 },
        "input_changed" => Error::InputChanged { what: "indices" },
        "allocation" => Error::Allocation { what: "levels", count: 1 << 40, bytes_each: 8 },
        "interrupted" => Error::Interrupted,
        "thread_pool" => Error::ThreadPool { threads: 4, reason: "no threads left".into() },
        "internal" => Error::Internal { reason: "a broken invariant".into() },
        _ => return None,
    })
}

/// Raise the Python exception of core error kind `kind` (tests only).
#[pyfunction]
fn _raise_error_kind(kind: &str) -> PyResult<()> {
    match example(kind) {
        Some(error) => Err(CoreError(error).into()),
        None => Err(input_error(format!("unknown error kind {kind:?}"))),
    }
}

/// The interrupt hook of the core: true (stop) when Ctrl-C is pending.
fn stop_requested() -> bool {
    Python::attach(|py| py.check_signals().is_err())
}

pub(crate) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    toporank_core::interrupt::set_hook(stop_requested);
    m.add_function(wrap_pyfunction!(_raise_error_kind, m)?)?;
    Ok(())
}
