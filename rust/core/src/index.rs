//! The integer widths a graph's index arrays may have.

/// An index type of a CSR graph: `i32`, `i64`, `u32` or `u64`.
///
/// Conversions are total: a negative value maps to a huge `usize`, so a
/// single `< n` comparison rejects both negative and too-large ids.
pub trait Idx:
    crate::alloc::ZeroBits + Copy + Send + Sync + Ord + Default + std::fmt::Debug + 'static
{
    /// The largest node count or edge count this width can address.
    const MAX_USIZE: usize;
    /// The value as an array position (negative values wrap to huge ones).
    fn to_usize(self) -> usize;
    /// The value as it should appear in an error message.
    fn to_i128(self) -> i128;
    /// Build from a position known to be at most `MAX_USIZE`.
    fn from_usize(value: usize) -> Self;
}

macro_rules! impl_idx {
    ($t:ty) => {
        impl Idx for $t {
            const MAX_USIZE: usize = if (<$t>::MAX as u128) < (usize::MAX as u128) {
                <$t>::MAX as usize
            } else {
                usize::MAX
            };
            #[inline(always)]
            fn to_usize(self) -> usize {
                self as usize
            }
            #[inline(always)]
            fn to_i128(self) -> i128 {
                self as i128
            }
            #[inline(always)]
            fn from_usize(value: usize) -> Self {
                value as $t
            }
        }
    };
}

impl_idx!(i32);
impl_idx!(i64);
impl_idx!(u32);
impl_idx!(u64);

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn negative_values_are_never_small_positions() {
        assert!((-1i32).to_usize() >= i32::MAX as usize);
        assert!((-1i64).to_usize() > i64::MAX as usize);
        assert_eq!((-7i64).to_i128(), -7);
        assert_eq!(<i32 as Idx>::MAX_USIZE, i32::MAX as usize);
        assert_eq!(<u64 as Idx>::MAX_USIZE, usize::MAX);
    }
}
