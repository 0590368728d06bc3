//! Fallible allocation for every buffer whose size comes from the input.
//!
//! `vec![x; n]` aborts the process when `n` is absurd (say `n = 2**40` from a
//! caller); these helpers report [`Error::Allocation`] naming the size
//! instead, which the binding turns into `MemoryError`.

use crate::Error;

/// An empty vector with room for `count` items.
pub fn with_capacity<T>(what: &'static str, count: usize) -> Result<Vec<T>, Error> {
    let mut v = Vec::new();
    v.try_reserve_exact(count).map_err(|_| Error::Allocation {
        what,
        count,
        bytes_each: std::mem::size_of::<T>(),
    })?;
    Ok(v)
}

/// Types for which all-zero bytes are a valid value (zero).
///
/// # Safety
/// Implement only for types whose all-zero bit pattern is a valid value.
pub unsafe trait ZeroBits: Copy {}

// SAFETY: all-zero bytes are the integer 0 / the float +0.0.
unsafe impl ZeroBits for u32 {}
// SAFETY: as above.
unsafe impl ZeroBits for u64 {}
// SAFETY: as above.
unsafe impl ZeroBits for i32 {}
// SAFETY: as above.
unsafe impl ZeroBits for i64 {}
// SAFETY: as above.
unsafe impl ZeroBits for usize {}
// SAFETY: as above.
unsafe impl ZeroBits for f64 {}

/// A vector of `count` zeros, from zeroed memory: the system hands such
/// pages out lazily, so unlike [`filled`] nothing is written up front (what
/// `vec![0; n]` does, without its abort on failure).
pub fn zeroed<T: ZeroBits>(what: &'static str, count: usize) -> Result<Vec<T>, Error> {
    let failed = || Error::Allocation { what, count, bytes_each: std::mem::size_of::<T>() };
    let layout = std::alloc::Layout::array::<T>(count).map_err(|_| failed())?;
    if layout.size() == 0 {
        return filled(what, count, zero_value());
    }
    // SAFETY: the layout has a non-zero size (checked above).
    let pointer = unsafe { std::alloc::alloc_zeroed(layout) } as *mut T;
    if pointer.is_null() {
        return Err(failed());
    }
    // SAFETY: `pointer` comes from the global allocator with the layout of
    // `count` items of `T` (so capacity `count`), and every item is
    // initialised: all-zero bytes are a valid `T` (the `ZeroBits` contract).
    Ok(unsafe { Vec::from_raw_parts(pointer, count, count) })
}

fn zero_value<T: ZeroBits>() -> T {
    // SAFETY: all-zero bytes are a valid `T` (the `ZeroBits` contract).
    unsafe { std::mem::zeroed() }
}

/// A vector of `count` copies of `value`.
pub fn filled<T: Clone>(what: &'static str, count: usize, value: T) -> Result<Vec<T>, Error> {
    let mut v = with_capacity(what, count)?;
    v.resize(count, value);
    Ok(v)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn absurd_sizes_are_errors_not_aborts() {
        let e = filled::<u64>("levels", usize::MAX / 4, 0).unwrap_err();
        assert!(matches!(e, Error::Allocation { what: "levels", .. }), "{e:?}");
        assert!(e.to_string().contains("levels"), "{e}");
        assert_eq!(filled("x", 3, 7u8).unwrap(), vec![7, 7, 7]);
        assert!(with_capacity::<u32>("y", 10).unwrap().capacity() >= 10);
        assert_eq!(zeroed::<i64>("z", 3).unwrap(), vec![0, 0, 0]);
        assert_eq!(zeroed::<f64>("z", 0).unwrap(), Vec::<f64>::new());
        let e = zeroed::<u64>("huge", usize::MAX / 4).unwrap_err();
        assert!(matches!(e, Error::Allocation { what: "huge", .. }), "{e:?}");
    }
}
