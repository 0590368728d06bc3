//! Edge batches to CSR in two passes, for edge lists too large to hold whole.
//!
//! A reader hands the edges over in batches, twice: first to a
//! [`DegreeCount`] (out-degrees, the largest id, whether the input is
//! already grouped by source), then, after [`DegreeCount::into_indptr`], to
//! [`place`], which writes each edge into its row. Rows keep the input order
//! of their edges (a stable counting sort, batch by batch). Memory is the CSR
//! itself plus one batch: the caller keeps the batches elsewhere (a spill
//! file) between the passes.

use crate::interrupt::Ticker;
use crate::{alloc, Error, Idx};

/// The first pass: out-degree of every source seen so far.
#[derive(Debug, Default)]
pub struct DegreeCount {
    counts: Vec<u64>,
    edges: usize,
    nodes: usize,
    grouped: bool,
    last_source: usize,
}

impl DegreeCount {
    pub fn new() -> Self {
        DegreeCount { grouped: true, ..Default::default() }
    }

    /// Count the edges `src[k] -> dst[k]`; `first` is the input position of
    /// `src[0]` (for messages).
    pub fn add<S: Idx>(&mut self, src: &[S], dst: &[S], first: usize) -> Result<(), Error> {
        if dst.len() != src.len() {
            return Err(Error::LengthMismatch { what: "dst", expected: src.len(), got: dst.len() });
        }
        let mut ticker = Ticker::new();
        let mut largest = self.nodes;
        for (k, (&u, &v)) in src.iter().zip(dst).enumerate() {
            for (what, id) in [("src", u), ("dst", v)] {
                if id.to_i128() < 0 {
                    return Err(Error::IndexOutOfRange {
                        what,
                        position: first + k,
                        value: id.to_i128(),
                        n: S::MAX_USIZE,
                    });
                }
            }
            let (u, v) = (u.to_usize(), v.to_usize());
            if u >= self.counts.len() {
                self.grow(u)?;
            }
            if let Some(count) = self.counts.get_mut(u) {
                *count += 1;
            }
            largest = largest.max(u.max(v).saturating_add(1));
            self.grouped &= u >= self.last_source;
            self.last_source = u;
            ticker.tick()?;
        }
        self.nodes = largest;
        self.edges += src.len();
        Ok(())
    }

    /// Room for a count at `u`, doubling so that growth costs O(n) in all.
    #[cold]
    fn grow(&mut self, u: usize) -> Result<(), Error> {
        let wanted = (u + 1).max(self.counts.len().saturating_mul(2)).max(1024);
        let more = wanted - self.counts.len();
        if self.counts.try_reserve_exact(more).is_err() {
            // the doubling may be what does not fit; try the exact size
            let exact = u + 1 - self.counts.len();
            self.counts.try_reserve_exact(exact).map_err(|_| Error::Allocation {
                what: "out-degrees",
                count: u + 1,
                bytes_each: 8,
            })?;
            self.counts.resize(u + 1, 0);
        } else {
            self.counts.resize(wanted, 0);
        }
        Ok(())
    }

    /// Edges counted so far.
    pub fn edges(&self) -> usize {
        self.edges
    }

    /// The largest id seen plus one (0 before any edge).
    pub fn nodes(&self) -> usize {
        self.nodes
    }

    /// Whether every source so far is >= the one before it (input order is CSR order).
    pub fn grouped(&self) -> bool {
        self.grouped
    }

    /// `indptr` for `n` nodes at width `P` (`n` at least [`Self::nodes`]).
    pub fn into_indptr<P: Idx>(self, n: usize) -> Result<Vec<P>, Error> {
        if n < self.nodes {
            return Err(Error::NoSuchNode { what: "largest id", value: self.nodes as i128 - 1, n });
        }
        if self.edges > P::MAX_USIZE {
            return Err(Error::TooLarge {
                what: "edge count",
                count: self.edges,
                max: P::MAX_USIZE,
            });
        }
        let mut indptr: Vec<P> = alloc::with_capacity("indptr", n + 1)?;
        let mut total = 0usize;
        indptr.push(P::from_usize(0));
        for u in 0..n {
            total += self.counts.get(u).copied().unwrap_or(0) as usize;
            indptr.push(P::from_usize(total));
        }
        Ok(indptr)
    }
}

/// A finished CSR and, when asked for, the input position of each stored edge.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Built<P, I> {
    pub indptr: Vec<P>,
    pub indices: Vec<I>,
    pub positions: Option<Vec<P>>,
}

/// The second pass: a CSR being filled batch by batch.
#[derive(Debug)]
pub struct Placement<P, I> {
    /// `cursor[u]` is the next free slot of row `u`; `cursor[n]` is `m`.
    cursor: Vec<P>,
    indices: Vec<I>,
    positions: Option<Vec<P>>,
    placed: usize,
}

impl<P: Idx, I: Idx> Placement<P, I> {
    /// An empty CSR over `indptr` (from [`DegreeCount::into_indptr`]); with
    /// `positions`, the input position of every stored edge is kept too.
    pub fn new(indptr: Vec<P>, positions: bool) -> Result<Self, Error> {
        let m = indptr.last().map_or(0, |e| e.to_usize());
        let indices = alloc::filled("indices", m, I::default())?;
        let positions =
            if positions { Some(alloc::filled("edge positions", m, P::default())?) } else { None };
        Ok(Placement { cursor: indptr, indices, positions, placed: 0 })
    }

    /// Write the edges `src[k] -> dst[k]` (the next batch, in input order) into their rows.
    pub fn place<S: Idx>(&mut self, src: &[S], dst: &[S]) -> Result<(), Error> {
        let changed = Error::InputChanged { what: "edge batches" };
        if dst.len() != src.len() {
            return Err(changed);
        }
        let n = self.cursor.len().saturating_sub(1);
        let m = self.indices.len();
        let mut ticker = Ticker::new();
        for (k, (&u, &v)) in src.iter().zip(dst).enumerate() {
            let (u, v) = (u.to_usize(), v.to_usize());
            if u >= n || v >= n {
                return Err(changed);
            }
            let slot = match self.cursor.get_mut(u) {
                Some(slot) => slot,
                None => return Err(changed),
            };
            let at = slot.to_usize();
            match self.indices.get_mut(at) {
                Some(entry) => *entry = I::from_usize(v),
                None => return Err(changed),
            }
            if let Some(positions) = self.positions.as_mut() {
                if let Some(entry) = positions.get_mut(at) {
                    *entry = P::from_usize(self.placed + k);
                }
            }
            *slot = P::from_usize(at + 1);
            ticker.tick()?;
        }
        self.placed += src.len();
        if self.placed > m {
            return Err(changed);
        }
        Ok(())
    }

    /// The finished CSR: `indptr`, `indices` and the input positions when asked for.
    pub fn finish(self) -> Result<Built<P, I>, Error> {
        let Placement { mut cursor, indices, positions, placed } = self;
        let n = cursor.len().saturating_sub(1);
        if placed != indices.len() {
            return Err(Error::InputChanged { what: "edge batches" });
        }
        // each cursor now sits at the start of the next row: shift them back
        for u in (1..n).rev() {
            cursor[u] = cursor[u - 1];
        }
        if let Some(start) = cursor.first_mut() {
            *start = P::from_usize(0);
        }
        if cursor.windows(2).any(|w| w[0] > w[1]) {
            return Err(Error::InputChanged { what: "edge batches" });
        }
        Ok(Built { indptr: cursor, indices, positions })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::edges::edges_to_csr;
    use crate::rng::SplitMix64;
    use crate::testing::random_dag_edges;

    fn build(batches: &[(Vec<i64>, Vec<i64>)], n: Option<usize>) -> (Vec<i64>, Vec<i32>, Vec<i64>) {
        let mut count = DegreeCount::new();
        let mut first = 0;
        for (src, dst) in batches {
            count.add(src, dst, first).unwrap();
            first += src.len();
        }
        let n = n.unwrap_or(count.nodes());
        let mut placement =
            Placement::<i64, i32>::new(count.into_indptr(n).unwrap(), true).unwrap();
        for (src, dst) in batches {
            placement.place(src, dst).unwrap();
        }
        let built = placement.finish().unwrap();
        (built.indptr, built.indices, built.positions.unwrap())
    }

    #[test]
    fn batches_give_the_one_shot_counting_sort() {
        // reference: edges_to_csr over the whole list at once
        let (src, dst) = random_dag_edges(&mut SplitMix64::new(7), 300, 2000);
        let whole = edges_to_csr(&src, &dst, 300, true).unwrap();
        let batches: Vec<(Vec<i64>, Vec<i64>)> =
            src.chunks(137).zip(dst.chunks(137)).map(|(s, d)| (s.to_vec(), d.to_vec())).collect();
        let (indptr, indices, positions) = build(&batches, Some(300));
        assert_eq!(indptr, whole.indptr);
        assert_eq!(indices.iter().map(|&v| v as i64).collect::<Vec<_>>(), whole.indices);
        assert_eq!(Some(positions), whole.edge_ids);
    }

    #[test]
    fn grouping_nodes_and_errors() {
        let mut count = DegreeCount::new();
        count.add(&[0i32, 0, 3], &[1, 7, 2], 0).unwrap();
        assert!(count.grouped());
        assert_eq!((count.nodes(), count.edges()), (8, 3));
        count.add(&[1i32], &[0], 3).unwrap();
        assert!(!count.grouped());
        let e = count.add(&[1i32, -4], &[0, 0], 4).unwrap_err();
        assert!(matches!(e, Error::IndexOutOfRange { what: "src", position: 5, value: -4, .. }));
        assert!(DegreeCount::new().into_indptr::<i32>(0).unwrap() == vec![0]);
        let (indptr, indices, _) = build(&[], Some(2));
        assert_eq!((indptr, indices), (vec![0, 0, 0], vec![]));
    }

    #[test]
    fn changed_batches_are_errors_not_panics() {
        let mut count = DegreeCount::new();
        count.add(&[0i64, 1], &[1, 0], 0).unwrap();
        let indptr = count.into_indptr::<i32>(2).unwrap();
        let mut placement = Placement::<i32, i32>::new(indptr.clone(), false).unwrap();
        assert!(placement.place(&[0i64, 5], &[1, 0]).is_err());
        let mut placement = Placement::<i32, i32>::new(indptr.clone(), false).unwrap();
        placement.place(&[0i64, 0, 0], &[1, 0, 1]).unwrap_err();
        let mut placement = Placement::<i32, i32>::new(indptr, false).unwrap();
        placement.place(&[0i64], &[1]).unwrap();
        assert!(placement.finish().is_err());
        let mut count = DegreeCount::new();
        count.add(&[0i64], &[9], 0).unwrap();
        assert!(count.into_indptr::<i32>(4).is_err());
    }
}
