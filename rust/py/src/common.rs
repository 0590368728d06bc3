//! What every entry point shares: reading arrays, the dispatch on index
//! width, the GIL-free section, and the result shape of a cyclic graph.

use std::panic::{catch_unwind, AssertUnwindSafe};
use std::sync::{Mutex, TryLockError};

use numpy::{
    Element, IntoPyArray, PyArray1, PyArrayMethods, PyReadonlyArray1, PyUntypedArrayMethods,
};
use pyo3::exceptions::PyRuntimeError;
use pyo3::prelude::*;
use toporank_core::{Error, Idx, Outcome};

use crate::errors::{input_error, CoreError};

/// An index width the binding reads: `Idx` for the core, `Element` for numpy.
pub(crate) trait Index: Idx + Element {}
impl<T: Idx + Element> Index for T {}

/// Run `work` without the GIL. A core error becomes its Python exception
/// (see [`CoreError`]); a panic (a bug, never input) becomes `RuntimeError`
/// instead of crossing into Python as `PanicException`.
pub(crate) fn compute<T: Send>(
    py: Python<'_>,
    work: impl FnOnce() -> Result<T, Error> + Send,
) -> PyResult<T> {
    match py.detach(|| catch_unwind(AssertUnwindSafe(work))) {
        Ok(Ok(value)) => Ok(value),
        Ok(Err(error)) => Err(CoreError(error).into()),
        Err(payload) => {
            let what = payload
                .downcast_ref::<&str>()
                .map(|s| s.to_string())
                .or_else(|| payload.downcast_ref::<String>().cloned())
                .unwrap_or_default();
            Err(PyRuntimeError::new_err(format!("toporank internal error (please report): {what}")))
        }
    }
}

/// The state of a Python object that several threads may call at once
/// (`Frontier`, `DynamicOrder`), behind one lock.
pub(crate) struct Shared<T> {
    state: Mutex<T>,
    name: &'static str,
}

impl<T: Send> Shared<T> {
    /// `state`, shared; `name` is the Python class, for the message after a panic.
    pub(crate) fn new(state: T, name: &'static str) -> Self {
        Shared { state: Mutex::new(state), name }
    }

    fn poisoned(&self) -> Error {
        Error::Internal {
            reason: format!("a {} call panicked earlier; the state is lost", self.name),
        }
    }

    /// Run `work` on the locked state: at once when the lock is free (the
    /// GIL kept, as a short call is cheaper than releasing it), else waiting
    /// for the lock without the GIL.
    pub(crate) fn locked<R: Send>(
        &self,
        py: Python<'_>,
        work: impl FnOnce(&mut T) -> Result<R, Error> + Send,
    ) -> PyResult<R> {
        match self.state.try_lock() {
            Ok(mut state) => match catch_unwind(AssertUnwindSafe(|| work(&mut state))) {
                Ok(result) => result.map_err(|error| CoreError(error).into()),
                Err(_) => Err(PyRuntimeError::new_err("toporank internal error (please report)")),
            },
            Err(TryLockError::Poisoned(_)) => Err(CoreError(self.poisoned()).into()),
            Err(TryLockError::WouldBlock) => self.detached(py, work),
        }
    }

    /// Run `work` on the locked state without the GIL, lock wait included
    /// (long calls: batches).
    pub(crate) fn detached<R: Send>(
        &self,
        py: Python<'_>,
        work: impl FnOnce(&mut T) -> Result<R, Error> + Send,
    ) -> PyResult<R> {
        compute(py, || work(&mut *self.state.lock().map_err(|_| self.poisoned())?))
    }
}

/// A read-only, contiguous 1-D numpy array argument, borrowed without a copy.
pub(crate) struct Array<'py, T: Element> {
    array: PyReadonlyArray1<'py, T>,
    name: &'static str,
}

impl<T: Element> Array<'_, T> {
    /// The values as a slice.
    pub(crate) fn values(&self) -> PyResult<&[T]> {
        self.array.as_slice().map_err(|_| not_contiguous(self.name))
    }
}

fn not_contiguous(name: &str) -> PyErr {
    input_error(format!("{name} must be a contiguous 1-D array"))
}

/// Whether `object` is a 1-D numpy array of dtype `T`.
pub(crate) fn has_dtype<T: Element>(object: &Bound<'_, PyAny>) -> bool {
    object.cast::<PyArray1<T>>().is_ok()
}

/// Argument `name` as a read-only contiguous 1-D array of dtype `T`.
pub(crate) fn read<'py, T: Element>(
    object: &Bound<'py, PyAny>,
    name: &'static str,
    expected: &str,
) -> PyResult<Array<'py, T>> {
    let array = object.cast::<PyArray1<T>>().map_err(|_| {
        let found = match (object.getattr("dtype"), object.getattr("shape")) {
            (Ok(dtype), Ok(shape)) => format!("dtype {dtype} and shape {shape}"),
            _ => object.get_type().to_string(),
        };
        input_error(format!("{name} must be a 1-D numpy array of {expected}, got {found}"))
    })?;
    let array = array.readonly();
    if !array.is_contiguous() {
        return Err(not_contiguous(name));
    }
    Ok(Array { array, name })
}

/// [`read`] for an optional argument.
pub(crate) fn read_optional<'py, T: Element>(
    object: Option<&Bound<'py, PyAny>>,
    name: &'static str,
    expected: &str,
) -> PyResult<Option<Array<'py, T>>> {
    object.map(|o| read(o, name, expected)).transpose()
}

/// The work of one entry point at one pair of index widths: the one generic
/// function of that entry point. [`on_graph`] picks the widths.
pub(crate) trait OnGraph<'py> {
    type Output;
    /// `indptr` holds edge positions of width `P`, `indices` node ids of width `I`.
    fn run<I: Index, P: Index>(
        self,
        py: Python<'py>,
        indptr: &[P],
        indices: &[I],
    ) -> PyResult<Self::Output>;
}

/// The dtypes `indptr` may have.
const OFFSET_WIDTHS: &str = "int32 or int64";
/// The dtypes `indices` (and edge endpoints) may have.
const ID_WIDTHS: &str = "int32, int64 or uint32";

/// The index widths of a graph's arrays, decided once here, each array read
/// as it is (no copy): `indptr` int32 or int64, `indices` int32, int64 or
/// uint32, in any combination.
pub(crate) fn on_graph<'py, K: OnGraph<'py>>(
    py: Python<'py>,
    indptr: &Bound<'py, PyAny>,
    indices: &Bound<'py, PyAny>,
    kernel: K,
) -> PyResult<K::Output> {
    on_pair(py, ("indptr", indptr), ("indices", indices), kernel)
}

/// [`on_graph`] for any pair of offsets and ids: every supported width pair
/// is one arm.
pub(crate) fn on_pair<'py, K: OnGraph<'py>>(
    py: Python<'py>,
    (offsets_name, offsets): (&'static str, &Bound<'py, PyAny>),
    ids: (&'static str, &Bound<'py, PyAny>),
    kernel: K,
) -> PyResult<K::Output> {
    if has_dtype::<i64>(offsets) {
        with_ids(py, read::<i64>(offsets, offsets_name, OFFSET_WIDTHS)?.values()?, ids, kernel)
    } else if has_dtype::<i32>(offsets) {
        with_ids(py, read::<i32>(offsets, offsets_name, OFFSET_WIDTHS)?.values()?, ids, kernel)
    } else {
        Err(read::<i64>(offsets, offsets_name, OFFSET_WIDTHS).err().unwrap_or_else(|| {
            input_error(format!("{offsets_name} must be a 1-D numpy array of {OFFSET_WIDTHS}"))
        }))
    }
}

/// The second half of [`on_pair`]: the width of the ids.
fn with_ids<'py, P: Index, K: OnGraph<'py>>(
    py: Python<'py>,
    offsets: &[P],
    (name, ids): (&'static str, &Bound<'py, PyAny>),
    kernel: K,
) -> PyResult<K::Output> {
    if has_dtype::<i64>(ids) {
        kernel.run(py, offsets, read::<i64>(ids, name, ID_WIDTHS)?.values()?)
    } else if has_dtype::<i32>(ids) {
        kernel.run(py, offsets, read::<i32>(ids, name, ID_WIDTHS)?.values()?)
    } else if has_dtype::<u32>(ids) {
        kernel.run(py, offsets, read::<u32>(ids, name, ID_WIDTHS)?.values()?)
    } else {
        Err(read::<i64>(ids, name, ID_WIDTHS).err().unwrap_or_else(|| {
            input_error(format!("{name} must be a 1-D numpy array of {ID_WIDTHS}"))
        }))
    }
}

/// The work of one entry point on two id arrays of one width (edge sources
/// and targets): [`on_ids`] picks the width.
pub(crate) trait OnIds<'py> {
    type Output;
    fn run<I: Index>(self, py: Python<'py>, first: &[I], second: &[I]) -> PyResult<Self::Output>;
}

/// The width of a pair of same-width id arrays (`src`/`dst`).
pub(crate) fn on_ids<'py, K: OnIds<'py>>(
    py: Python<'py>,
    (first_name, first): (&'static str, &Bound<'py, PyAny>),
    (second_name, second): (&'static str, &Bound<'py, PyAny>),
    kernel: K,
) -> PyResult<K::Output> {
    const WIDTHS: &str = "int32 or int64";
    if has_dtype::<i64>(first) && has_dtype::<i64>(second) {
        let a = read::<i64>(first, first_name, WIDTHS)?;
        let b = read::<i64>(second, second_name, WIDTHS)?;
        kernel.run(py, a.values()?, b.values()?)
    } else if has_dtype::<i32>(first) && has_dtype::<i32>(second) {
        let a = read::<i32>(first, first_name, WIDTHS)?;
        let b = read::<i32>(second, second_name, WIDTHS)?;
        kernel.run(py, a.values()?, b.values()?)
    } else {
        Err(input_error(format!(
            "{first_name} and {second_name} must be 1-D numpy arrays of one dtype, {WIDTHS}"
        )))
    }
}

/// Why a graph has no topological order: what Kahn's loop emitted before the
/// ready set ran dry, the nodes it never reached and one cycle among them.
/// Every entry point that meets a cycle returns this instead of its result.
#[pyclass(frozen, module = "toporank._core")]
pub(crate) struct Cyclic {
    /// The nodes emitted, in order.
    #[pyo3(get)]
    order: Py<PyAny>,
    /// The nodes never emitted, ascending id.
    #[pyo3(get)]
    blocked: Py<PyAny>,
    /// One directed cycle among the blocked nodes.
    #[pyo3(get)]
    cycle: Py<PyAny>,
}

/// A core Kahn outcome as a [`Cyclic`].
pub(crate) fn cyclic<'py, I: Index>(
    py: Python<'py>,
    outcome: Outcome<I>,
) -> PyResult<Bound<'py, PyAny>> {
    let found = Cyclic {
        order: array(py, outcome.order),
        blocked: array(py, outcome.blocked),
        cycle: array(py, outcome.cycle),
    };
    Ok(Bound::new(py, found)?.into_any())
}

/// A vector handed to numpy without a copy.
pub(crate) fn array<T: Element>(py: Python<'_>, values: Vec<T>) -> Py<PyAny> {
    values.into_pyarray(py).into_any().unbind()
}

/// An optional vector handed to numpy, `None` staying `None`.
pub(crate) fn optional_array<T: Element>(
    py: Python<'_>,
    values: Option<Vec<T>>,
) -> Option<Py<PyAny>> {
    values.map(|v| array(py, v))
}

pub(crate) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_class::<Cyclic>()?;
    Ok(())
}
