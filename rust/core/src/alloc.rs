//! Fallible allocation for every buffer whose size comes from the input.
//!
//! `vec![x; n]` aborts the process when `n` is absurd (say `n = 2**40` from a
//! caller); these helpers report [`Error::Allocation`] naming the size
//! instead, which the binding turns into `MemoryError`.

use crate::interrupt::{Ticker, STRIDE};
use crate::Error;

/// An empty vector with room for `count` items.
pub fn with_capacity<T>(what: &'static str, count: usize) -> Result<Vec<T>, Error> {
    let mut v = Vec::new();
    v.try_reserve_exact(count).map_err(|_| Error::Allocation {
        what,
        count,
        bytes_each: std::mem::size_of::<T>(),
    })?;
    advise_huge_pages(v.as_mut_ptr() as *mut u8, v.capacity() * std::mem::size_of::<T>());
    Ok(v)
}

/// Ask the kernel to back a large, not yet touched buffer with transparent
/// huge pages, where it does so only on request (`madvise` mode): per-node
/// arrays are read at random, and with 4 KiB pages nearly every such read
/// also misses the TLB. A hint only: a refusal changes nothing.
#[allow(unused_variables)]
fn advise_huge_pages(start: *mut u8, bytes: usize) {
    #[cfg(target_os = "linux")]
    {
        const WORTH: usize = 4 << 20;
        const PAGE: usize = 4096;
        if bytes < WORTH {
            return;
        }
        let first = (start as usize).next_multiple_of(PAGE);
        let end = (start as usize).saturating_add(bytes) / PAGE * PAGE;
        if end > first {
            // SAFETY: MADV_HUGEPAGE changes only how the kernel backs the
            // pages of this range, which lies inside an allocation owned by
            // the caller; contents and validity of the memory are unchanged,
            // and a failure (say an unaligned range) is simply ignored.
            unsafe { libc::madvise(first as *mut libc::c_void, end - first, libc::MADV_HUGEPAGE) };
        }
    }
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
    advise_huge_pages(pointer as *mut u8, layout.size());
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
///
/// Writing a large buffer for the first time is slow (the system supplies
/// and clears each page as it is touched: seconds for gigabytes on some
/// machines), so the fill ticks like any long loop and may end with
/// [`Error::Interrupted`].
pub fn filled<T: Clone>(what: &'static str, count: usize, value: T) -> Result<Vec<T>, Error> {
    let mut v = with_capacity(what, count)?;
    let mut ticker = Ticker::new();
    while v.len() < count {
        let part = (count - v.len()).min(STRIDE as usize);
        ticker.tick_by(part)?;
        v.resize(v.len() + part, value.clone());
    }
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

    #[test]
    fn large_buffers_advised_for_huge_pages_hold_what_they_should() {
        // Past the advice threshold: zeros stay zeros and every item is usable
        // (the advice is a hint; from memory of madvise(2): it never changes contents).
        let count = (16 << 20) / 4 + 3;
        let mut zeros = zeroed::<u32>("counts", count).unwrap();
        assert!(zeros.iter().all(|&c| c == 0));
        zeros[count - 1] = 9;
        assert_eq!(zeros.iter().map(|&c| c as u64).sum::<u64>(), 9);
        let mut spare = with_capacity::<u64>("order", count).unwrap();
        spare.extend((0..count as u64).rev());
        assert_eq!((spare[0], spare[count - 1]), (count as u64 - 1, 0));
    }
}
