//! A borrowed CSR graph and its validation.

use rayon::prelude::*;

use crate::interrupt::{Ticker, STRIDE};
use crate::{Error, Idx};

/// A directed graph in compressed sparse row form, borrowed from the caller.
///
/// Row `u` is `indices[indptr[u]..indptr[u + 1]]`: the successors of `u`, in
/// stored order (duplicates and self-loops allowed). Construction checks
/// `indptr` (O(V)); the endpoints in `indices` are checked by
/// [`Csr::in_degrees`] or [`Csr::check_indices`] (O(E)) before any algorithm
/// uses them as positions.
///
/// The two arrays have their own widths: `I` for the node ids in `indices`,
/// `P` (by default the same) for the edge positions in `indptr`, so int64
/// offsets with int32 ids are read as they are, without a copy. Node ids
/// that come back (orders, components) have width `I`: construction checks
/// that every node id fits it.
#[derive(Debug, Clone, Copy)]
pub struct Csr<'a, I: Idx, P: Idx = I> {
    indptr: &'a [P],
    indices: &'a [I],
}

impl<'a, I: Idx> Csr<'a, I> {
    /// Wrap `indptr`/`indices` of one width; see [`Csr::from_arrays`] for
    /// two widths (and the checks made).
    pub fn new(indptr: &'a [I], indices: &'a [I]) -> Result<Self, Error> {
        Csr::from_arrays(indptr, indices)
    }
}

impl<'a, I: Idx, P: Idx> Csr<'a, I, P> {
    /// Wrap `indptr`/`indices`, each of its own width, checking that
    /// `indptr` starts at 0, never decreases and ends at `indices.len()`, and
    /// that the largest node id, `n - 1`, fits the width of `indices`.
    pub fn from_arrays(indptr: &'a [P], indices: &'a [I]) -> Result<Self, Error> {
        let first = *indptr.first().ok_or(Error::EmptyIndptr)?;
        if first.to_i128() != 0 {
            return Err(Error::IndptrStart { value: first.to_i128() });
        }
        let mut ticker = Ticker::new();
        for (row, pair) in indptr.windows(2).enumerate() {
            ticker.tick()?;
            if pair[1] < pair[0] {
                return Err(Error::IndptrDecreasing {
                    row,
                    start: pair[0].to_i128(),
                    end: pair[1].to_i128(),
                });
            }
        }
        let last = indptr[indptr.len() - 1];
        if last.to_i128() != indices.len() as i128 {
            return Err(Error::IndptrEnd { value: last.to_i128(), len: indices.len() });
        }
        let n = indptr.len() - 1;
        if n > I::MAX_USIZE {
            return Err(Error::TooLarge { what: "node count", count: n, max: I::MAX_USIZE });
        }
        Ok(Csr { indptr, indices })
    }

    /// Wrap arrays without any check: the state a valid graph is in once
    /// the caller changed it mid-call (tests of that path only).
    #[cfg(test)]
    pub(crate) fn unchecked(indptr: &'a [P], indices: &'a [I]) -> Self {
        Csr { indptr, indices }
    }

    /// Number of nodes.
    #[inline]
    pub fn n(&self) -> usize {
        self.indptr.len() - 1
    }

    /// Number of stored edges.
    #[inline]
    pub fn m(&self) -> usize {
        self.indices.len()
    }

    #[inline]
    pub fn indptr(&self) -> &'a [P] {
        self.indptr
    }

    #[inline]
    pub fn indices(&self) -> &'a [I] {
        self.indices
    }

    /// The range of edge positions of row `u`.
    #[inline(always)]
    pub fn row_range(&self, u: usize) -> std::ops::Range<usize> {
        self.indptr[u].to_usize()..self.indptr[u + 1].to_usize()
    }

    /// The successors of `u`, in stored order.
    #[inline(always)]
    pub fn row(&self, u: usize) -> &'a [I] {
        &self.indices[self.row_range(u)]
    }

    /// The successors of `u`, or [`Error::InputChanged`] when `indptr` no
    /// longer describes a row inside `indices` (checked once by
    /// [`Csr::new`], it may still change under a caller that breaks the
    /// no-mutation contract): never an out-of-bounds read.
    #[inline(always)]
    pub fn checked_row(&self, u: usize) -> Result<&'a [I], Error> {
        let changed = || Error::InputChanged { what: "indptr" };
        let (Some(start), Some(end)) = (self.indptr.get(u), self.indptr.get(u + 1)) else {
            return Err(changed());
        };
        self.indices.get(start.to_usize()..end.to_usize()).ok_or_else(changed)
    }

    /// [`Csr::checked_row`] with the row's first edge position.
    #[inline(always)]
    pub fn checked_row_at(&self, u: usize) -> Result<(usize, &'a [I]), Error> {
        let changed = || Error::InputChanged { what: "indptr" };
        let Some(&[start, end]) = self.indptr.get(u..u.wrapping_add(2)) else {
            return Err(changed());
        };
        let start = start.to_usize();
        Ok((start, self.indices.get(start..end.to_usize()).ok_or_else(changed)?))
    }

    fn out_of_range(&self, position: usize) -> Error {
        Error::IndexOutOfRange {
            what: "indices",
            position,
            value: self.indices[position].to_i128(),
            n: self.n(),
        }
    }

    /// Check that every endpoint lies in `0..n`.
    pub fn check_indices(&self) -> Result<(), Error> {
        let n = self.n();
        match crate::interrupt::position(self.indices, |v| v.to_usize() >= n)? {
            Some(position) => Err(self.out_of_range(position)),
            None => Ok(()),
        }
    }

    /// In-degree of every node as a count of width `C`, counting duplicates
    /// and self-loops; checks every endpoint on the way. `C` must hold `m`.
    pub fn in_degree_counts<C: Count>(&self) -> Result<Vec<C>, Error> {
        if self.m() > C::MAX {
            return Err(Error::TooLarge { what: "edge count", count: self.m(), max: C::MAX });
        }
        let mut indegree: Vec<C> = crate::alloc::zeroed("in-degrees", self.n())?;
        self.count_into(&mut indegree, |slot| slot.increment())?;
        Ok(indegree)
    }

    /// `count(slot of v)` for every stored endpoint `v`, in stored order,
    /// ticking once per stretch of edges; an endpoint outside `counts` is
    /// [`Error::IndexOutOfRange`] at its position.
    fn count_into<T>(&self, counts: &mut [T], mut count: impl FnMut(&mut T)) -> Result<(), Error> {
        const PART: usize = STRIDE as usize;
        let mut ticker = Ticker::new();
        for (part, edges) in self.indices.chunks(PART).enumerate() {
            ticker.tick_by(edges.len())?;
            for (offset, v) in edges.iter().enumerate() {
                match counts.get_mut(v.to_usize()) {
                    Some(slot) => count(slot),
                    None => return Err(self.out_of_range(part * PART + offset)),
                }
            }
        }
        Ok(())
    }

    /// [`Csr::in_degree_counts`] shared among `threads` workers: each counts
    /// its share of the edges into its own array, then the arrays are added.
    /// Exact, so the result does not depend on the thread count; an
    /// out-of-range endpoint is reported at its smallest position, as the
    /// serial pass does. Costs `threads - 1` extra count arrays while it runs.
    /// The edges are handed out in rounds of a few million per worker, and
    /// the calling thread ticks between rounds (only it can see a Ctrl-C).
    pub fn in_degree_counts_shared<C: Count>(&self, threads: usize) -> Result<Vec<C>, Error> {
        // Below this many edges per worker the hand-off costs more than it saves.
        const SHARE: usize = 1 << 20;
        // Edges per worker per round: tens of milliseconds of counting.
        const ROUND_SHARE: usize = 1 << 22;
        let workers = threads.min(self.m() / SHARE).max(1);
        if workers == 1 {
            return self.in_degree_counts();
        }
        if self.m() > C::MAX {
            return Err(Error::TooLarge { what: "edge count", count: self.m(), max: C::MAX });
        }
        let n = self.n();
        let mut parts: Vec<Vec<C>> = Vec::with_capacity(workers);
        for _ in 0..workers {
            parts.push(crate::alloc::zeroed("in-degrees", n)?);
        }
        let pool = crate::pool::pool(workers)?;
        let round = workers * ROUND_SHARE;
        let mut ticker = Ticker::new();
        for (r, edges) in self.indices.chunks(round).enumerate() {
            ticker.tick_by(edges.len())?;
            let share = edges.len().div_ceil(workers);
            let first_bad = pool.install(|| {
                parts
                    .par_iter_mut()
                    .zip(edges.par_chunks(share))
                    .enumerate()
                    .filter_map(|(k, (counts, chunk))| {
                        for (offset, v) in chunk.iter().enumerate() {
                            match counts.get_mut(v.to_usize()) {
                                Some(slot) => slot.increment(),
                                None => return Some(r * round + k * share + offset),
                            }
                        }
                        None
                    })
                    .min()
            });
            if let Some(position) = first_bad {
                return Err(self.out_of_range(position));
            }
        }
        let mut total = parts.swap_remove(0);
        for part in &parts {
            for (chunk, add) in total.chunks_mut(STRIDE as usize).zip(part.chunks(STRIDE as usize))
            {
                ticker.tick_by(chunk.len())?;
                for (sum, add) in chunk.iter_mut().zip(add) {
                    sum.add(*add);
                }
            }
        }
        Ok(total)
    }

    /// In-degree of every node, counting duplicates and self-loops; checks
    /// every endpoint on the way. Counts have the width of `indptr`.
    pub fn in_degrees(&self) -> Result<Vec<P>, Error> {
        // Counts fit P: each is at most m, and m fits P because indptr holds it.
        let mut indegree: Vec<P> = crate::alloc::zeroed("in-degrees", self.n())?;
        self.count_into(&mut indegree, |slot| *slot = P::from_usize(slot.to_usize() + 1))?;
        Ok(indegree)
    }
}

/// An unsigned counter for remaining in-degrees (or any per-node count of
/// edges still to come): `u32` whenever the edge count allows, which halves
/// the memory traffic of 64-bit counts on the hot path.
pub trait Count: crate::alloc::ZeroBits + Copy + Send + Sync + 'static {
    const ZERO: Self;
    const MAX: usize;
    /// `value` must be at most `MAX`.
    fn from_usize(value: usize) -> Self;
    fn to_usize(self) -> usize;
    fn increment(&mut self);
    /// Add another count (sums stay below `MAX`: they count distinct edges).
    fn add(&mut self, other: Self);
    /// Subtract one; true when the count reaches zero.
    fn decrement(&mut self) -> bool;
    fn is_zero(self) -> bool;
}

macro_rules! impl_count {
    ($t:ty) => {
        impl Count for $t {
            const ZERO: Self = 0;
            const MAX: usize = <$t>::MAX as usize;
            #[inline(always)]
            fn from_usize(value: usize) -> Self {
                value as $t
            }
            #[inline(always)]
            fn to_usize(self) -> usize {
                self as usize
            }
            #[inline(always)]
            fn increment(&mut self) {
                *self += 1;
            }
            #[inline(always)]
            fn add(&mut self, other: Self) {
                *self += other;
            }
            #[inline(always)]
            fn decrement(&mut self) -> bool {
                // Wrapping: a count can pass zero only if the input changed
                // mid-call, and that must not panic (the caller detects it).
                *self = self.wrapping_sub(1);
                *self == 0
            }
            #[inline(always)]
            fn is_zero(self) -> bool {
                self == 0
            }
        }
    };
}

impl_count!(u32);
impl_count!(u64);

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rejects_bad_indptr() {
        let idx: [i32; 2] = [1, 0];
        assert_eq!(Csr::<i32>::new(&[], &idx).unwrap_err(), Error::EmptyIndptr);
        assert!(matches!(Csr::new(&[1, 2], &idx), Err(Error::IndptrStart { value: 1 })));
        assert!(matches!(Csr::new(&[0, 2, 1], &idx), Err(Error::IndptrDecreasing { row: 1, .. })));
        assert!(matches!(Csr::new(&[0, 1], &idx), Err(Error::IndptrEnd { value: 1, len: 2 })));
    }

    #[test]
    fn shared_counts_equal_serial_counts_and_report_the_first_bad_id() {
        let mut rng = crate::rng::SplitMix64::new(5);
        let n = 1000;
        let mut indices: Vec<i64> = (0..3 << 20).map(|_| rng.below(n) as i64).collect();
        let indptr = [0i64, 0, indices.len() as i64];
        let mut indptr = indptr.to_vec();
        indptr.splice(1..2, std::iter::repeat_n(0, n as usize - 1));
        let g = Csr::new(&indptr, &indices).unwrap();
        let serial: Vec<u32> = g.in_degree_counts().unwrap();
        for threads in [1, 2, 3] {
            assert_eq!(g.in_degree_counts_shared::<u32>(threads).unwrap(), serial);
        }
        let last = indices.len() - 1;
        indices[last] = -4;
        indices[2_500_000] = n as i64;
        let g = Csr::new(&indptr, &indices).unwrap();
        let e = g.in_degree_counts_shared::<u32>(3).unwrap_err();
        assert!(matches!(e, Error::IndexOutOfRange { position: 2_500_000, .. }), "{e:?}");
    }

    #[test]
    fn in_degrees_count_duplicates_and_reject_bad_ids() {
        let g = Csr::new(&[0i64, 3, 3], &[1, 1, 0]).unwrap();
        assert_eq!(g.in_degrees().unwrap(), vec![1, 2]);
        let bad = Csr::new(&[0i64, 2, 2], &[1, -1]).unwrap();
        assert!(matches!(
            bad.in_degrees(),
            Err(Error::IndexOutOfRange { position: 1, value: -1, .. })
        ));
        assert!(bad.check_indices().is_err());
        let bad = Csr::new(&[0i32, 1, 1], &[2]).unwrap();
        assert!(matches!(bad.check_indices(), Err(Error::IndexOutOfRange { value: 2, .. })));
    }

    #[test]
    fn mixed_widths_give_the_results_of_one_width() {
        use crate::ready::Tie;
        let mut rng = crate::rng::SplitMix64::new(17);
        for _ in 0..50 {
            let (indptr, indices) = crate::testing::random_dag(&mut rng, 60, 300);
            let wide = Csr::new(&indptr, &indices).unwrap();
            let narrow_ids: Vec<i32> = indices.iter().map(|&v| v as i32).collect();
            let unsigned_ids: Vec<u32> = indices.iter().map(|&v| v as u32).collect();
            let narrow_offsets: Vec<i32> = indptr.iter().map(|&v| v as i32).collect();
            let mixed = Csr::from_arrays(&indptr, &narrow_ids).unwrap();
            let unsigned = Csr::from_arrays(&indptr, &unsigned_ids).unwrap();
            let flipped = Csr::from_arrays(&narrow_offsets, &indices).unwrap();
            let expected = crate::kahn::kahn(&wide, &Tie::Queue).unwrap().order;
            let as_i64 =
                |order: Vec<_>| order.into_iter().map(|v: i32| v as i64).collect::<Vec<_>>();
            assert_eq!(as_i64(crate::kahn::kahn(&mixed, &Tie::Queue).unwrap().order), expected);
            let order = crate::kahn::kahn(&unsigned, &Tie::Queue).unwrap().order;
            assert_eq!(order.into_iter().map(|v| v as i64).collect::<Vec<_>>(), expected);
            assert_eq!(crate::kahn::kahn(&flipped, &Tie::Queue).unwrap().order, expected);
            let components = crate::scc::strong_components(&mixed).unwrap();
            let condensed = crate::scc::condensation(&mixed, &components).unwrap();
            let reference = crate::scc::strong_components(&wide).unwrap();
            let reference = crate::scc::condensation(&wide, &reference).unwrap();
            assert_eq!(condensed.indptr, reference.indptr);
            assert_eq!(condensed.weights, reference.weights);
            assert_eq!(mixed.in_degrees().unwrap(), wide.in_degrees().unwrap());
        }
    }
}
