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
    }
}
