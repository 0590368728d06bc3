//! A FIFO Kahn's loop that visits every edge once, in topological order.
//!
//! The dynamic programmes along an order (levels, critical path, path
//! counts) all need the order and one look at each edge `u -> v` after `u`'s
//! value is final. Doing both in the same loop reads each CSR row once
//! instead of twice, which is most of the cost on graphs larger than cache.

use std::marker::PhantomData;

use rayon::prelude::*;

use crate::csr::Count;
use crate::kahn::{kahn, prefetch, run_queue, FifoHooks, Outcome, Tie, EDGES_AHEAD, ROW_AHEAD};
use crate::pool::pool;
use crate::{Csr, Error, Idx};

/// What a sweep yields: the value on a DAG, or what Kahn's loop found on a
/// graph with a cycle (blocked nodes and one cycle), so callers can report it.
pub type Acyclic<T, I> = Result<T, Outcome<I>>;

/// A topological order with the boundaries of its levels.
///
/// `order[offsets[k]..offsets[k + 1]]` are the nodes of level `k` (sources
/// are level 0; any other node is one more than its highest predecessor).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct LevelOrder<I> {
    pub order: Vec<I>,
    pub offsets: Vec<usize>,
}

/// FIFO Kahn's loop that builds one value per node (starting from `init`)
/// while visiting every stored edge once, in topological order.
///
/// When `u` is emitted (everything before it is final), `emit(u, &mut
/// value[u])` returns what `u` passes along; then `visit(&passed, u, edge,
/// &mut value[v])` runs for each stored edge `u -> v`, in row order.
///
/// The queue emits level by level: the level-`k + 1` nodes are exactly the
/// ones made ready while level `k` is emitted, so the FIFO order is sorted by
/// level and the boundaries come for free.
#[allow(clippy::type_complexity)]
pub fn fifo_sweep<I, T, C, E, V>(
    csr: &Csr<'_, I>,
    init: T,
    emit: E,
    visit: V,
) -> Result<Acyclic<(LevelOrder<I>, Vec<T>), I>, Error>
where
    I: Idx,
    T: Copy,
    E: FnMut(usize, &mut T) -> C,
    V: FnMut(&C, usize, usize, &mut T),
{
    if csr.m() <= u32::MAX as usize {
        sweep_with::<I, u32, T, C, E, V>(csr, init, emit, visit)
    } else {
        sweep_with::<I, u64, T, C, E, V>(csr, init, emit, visit)
    }
}

/// The per-node state of a sweep, fed by the FIFO loop's hooks.
struct Sweep<T, C, E, V> {
    values: Vec<T>,
    passed: Option<C>,
    offsets: Vec<usize>,
    level_end: usize,
    emit: E,
    visit: V,
}

impl<T, C, E, V> FifoHooks for Sweep<T, C, E, V>
where
    E: FnMut(usize, &mut T) -> C,
    V: FnMut(&C, usize, usize, &mut T),
{
    #[inline(always)]
    fn emit(&mut self, position: usize, u: usize, tail: usize) {
        // The first node of a level is reached when the queue has emitted
        // everything that was in it when the previous level began.
        if position == self.level_end {
            if position > 0 {
                self.offsets.push(position);
            }
            self.level_end = tail;
        }
        self.passed = Some((self.emit)(u, &mut self.values[u]));
    }

    #[inline(always)]
    fn edge(&mut self, u: usize, edge: usize, v: usize) {
        if let Some(passed) = &self.passed {
            (self.visit)(passed, u, edge, &mut self.values[v]);
        }
    }
}

#[allow(clippy::type_complexity)]
fn sweep_with<I, K, T, C, E, V>(
    csr: &Csr<'_, I>,
    init: T,
    emit: E,
    visit: V,
) -> Result<Acyclic<(LevelOrder<I>, Vec<T>), I>, Error>
where
    I: Idx,
    K: Count,
    T: Copy,
    E: FnMut(usize, &mut T) -> C,
    V: FnMut(&C, usize, usize, &mut T),
{
    let n = csr.n();
    let mut indegree: Vec<K> = csr.in_degree_counts()?;
    let mut order: Vec<I> = Vec::with_capacity(n);
    let mut sweep =
        Sweep { values: vec![init; n], passed: None, offsets: vec![0], level_end: 0, emit, visit };
    run_queue(csr, &mut indegree, &mut order, &mut sweep);
    if order.len() < n {
        // The cycle witness is worth a second pass only on this error path.
        return Ok(Err(kahn(csr, &Tie::Queue)?));
    }
    let Sweep { values, mut offsets, .. } = sweep;
    if n > 0 {
        offsets.push(n);
    }
    Ok(Ok((LevelOrder { order, offsets }, values)))
}

/// Frontiers smaller than this are cheaper to process on one thread than to
/// hand out; deep, narrow graphs would otherwise pay a pool round trip per level.
pub const SERIAL_FRONTIER: usize = 1024;

/// Call `settle(u)` once for every node, from the last level down, so that
/// each node's successors (all on higher levels) are settled before it.
///
/// With `threads > 1` the nodes of a level are shared among the workers, and
/// a level starts only when the one above is finished. A `settle` that
/// reads only the slots of `u`'s successors and writes only `u`'s own (its
/// node and the edges of its row) therefore never races, and gives the same
/// result as one thread, bit for bit; that is the contract under which it
/// may use [`Disjoint`].
pub fn settle_backward<I, F>(
    csr: &Csr<'_, I>,
    levels: &LevelOrder<I>,
    threads: usize,
    settle: F,
) -> Result<(), Error>
where
    I: Idx,
    F: Fn(usize) + Sync,
{
    if threads <= 1 {
        // The order is known in advance, so the rows `settle` will read are
        // fetched a few steps ahead, as in the FIFO loop.
        let (indptr, indices, order) = (csr.indptr(), csr.indices(), &levels.order);
        for k in (0..order.len()).rev() {
            if let Some(ahead) = k.checked_sub(ROW_AHEAD) {
                prefetch(indptr.as_ptr().wrapping_add(order[ahead].to_usize()));
            }
            if let Some(ahead) = k.checked_sub(EDGES_AHEAD) {
                let start = indptr[order[ahead].to_usize()].to_usize();
                prefetch(indices.as_ptr().wrapping_add(start));
            }
            settle(order[k].to_usize());
        }
        return Ok(());
    }
    pool(threads)?.install(|| {
        for group in levels.offsets.windows(2).rev() {
            let group = &levels.order[group[0]..group[1]];
            if group.len() < SERIAL_FRONTIER {
                settle_nodes(csr, group, &settle);
            } else {
                // Nodes of one level have no edges among them: any split works.
                group
                    .par_chunks(SERIAL_FRONTIER)
                    .for_each(|chunk| settle_nodes(csr, chunk, &settle));
            }
        }
    });
    Ok(())
}

/// `settle` each of `nodes` in turn, fetching rows a few nodes ahead.
fn settle_nodes<I: Idx, F: Fn(usize)>(csr: &Csr<'_, I>, nodes: &[I], settle: &F) {
    let (indptr, indices) = (csr.indptr(), csr.indices());
    for (k, u) in nodes.iter().enumerate() {
        if let Some(ahead) = nodes.get(k + ROW_AHEAD) {
            prefetch(indptr.as_ptr().wrapping_add(ahead.to_usize()));
        }
        if let Some(ahead) = nodes.get(k + EDGES_AHEAD) {
            prefetch(indices.as_ptr().wrapping_add(indptr[ahead.to_usize()].to_usize()));
        }
        settle(u.to_usize());
    }
}

/// A mutable slice that the workers of [`settle_backward`] write at
/// distinct positions concurrently.
///
/// Atomics would do the same job, but cannot be laid over a zeroed
/// allocation (which the system hands out lazily) nor handed back as plain
/// numbers without a copy; on per-edge arrays of tens of millions of entries
/// both costs show.
pub struct Disjoint<'a, T> {
    start: *mut T,
    len: usize,
    _borrow: PhantomData<&'a mut [T]>,
}

// SAFETY: the callers' contract (below) rules out two threads touching one
// position unsynchronised; sharing the pointer itself is harmless.
unsafe impl<T: Send> Sync for Disjoint<'_, T> {}

impl<'a, T: Copy> Disjoint<'a, T> {
    pub fn new(slice: &'a mut [T]) -> Self {
        Disjoint { start: slice.as_mut_ptr(), len: slice.len(), _borrow: PhantomData }
    }

    /// The value at `index`.
    ///
    /// # Safety
    /// No other thread may be writing `index` at the same time.
    #[inline(always)]
    pub unsafe fn get(&self, index: usize) -> T {
        assert!(index < self.len, "Disjoint index {index} out of {}", self.len);
        *self.start.add(index)
    }

    /// The positions `range`, to fill in.
    ///
    /// # Safety
    /// No other thread may touch `range` while the returned slice lives.
    #[inline(always)]
    #[allow(clippy::mut_from_ref)]
    pub unsafe fn range_mut(&self, range: std::ops::Range<usize>) -> &mut [T] {
        assert!(
            range.start <= range.end && range.end <= self.len,
            "Disjoint range {range:?} out of {}",
            self.len
        );
        std::slice::from_raw_parts_mut(self.start.add(range.start), range.len())
    }

    /// Write `value` at `index`.
    ///
    /// # Safety
    /// No other thread may be reading or writing `index` at the same time.
    #[inline(always)]
    pub unsafe fn set(&self, index: usize, value: T) {
        assert!(index < self.len, "Disjoint index {index} out of {}", self.len);
        *self.start.add(index) = value;
    }
}

/// Per-node or per-edge numbers: one value for all, or one each.
#[derive(Debug, Clone, Copy)]
pub enum Weights<'a> {
    Constant(f64),
    Each(&'a [f64]),
}

impl Weights<'_> {
    #[inline(always)]
    pub fn get(&self, position: usize) -> f64 {
        match self {
            Weights::Constant(w) => *w,
            Weights::Each(w) => w[position],
        }
    }

    /// Check the length and that every value is finite and non-negative.
    pub fn check(&self, what: &'static str, expected: usize) -> Result<(), Error> {
        let Weights::Each(values) = self else {
            return match self.get(0) {
                w if w.is_finite() && w >= 0.0 => Ok(()),
                w => Err(Error::BadWeight { what, position: 0, value: w.to_string() }),
            };
        };
        if values.len() != expected {
            return Err(Error::LengthMismatch { what, expected, got: values.len() });
        }
        match values.iter().position(|w| !(w.is_finite() && *w >= 0.0)) {
            Some(position) => {
                Err(Error::BadWeight { what, position, value: values[position].to_string() })
            }
            None => Ok(()),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::edges::edges_to_csr;

    #[test]
    fn levels_come_out_sorted_with_boundaries() {
        // 3 -> 0 -> 1 -> 2 and 3 -> 2: levels 3:0, 0:1, 1:2, 2:3; 4 isolated.
        let g = edges_to_csr(&[3i32, 0, 1, 3], &[0, 1, 2, 2], 5, false).unwrap();
        let csr = Csr::new(&g.indptr, &g.indices).unwrap();
        let mut seen = Vec::new();
        let (out, inbound) = fifo_sweep(
            &csr,
            0usize,
            |u, _| u,
            |&passed, u, e, count| {
                assert_eq!(passed, u);
                seen.push((u, e));
                *count += 1;
            },
        )
        .unwrap()
        .unwrap();
        assert_eq!(out.order, vec![3, 4, 0, 1, 2]);
        assert_eq!(out.offsets, vec![0, 2, 3, 4, 5]);
        assert_eq!(inbound, vec![1, 1, 2, 0, 0]);
        assert_eq!(seen.len(), 4);
        for (u, e) in seen {
            assert!(csr.row_range(u).contains(&e));
        }
    }

    #[test]
    fn cycles_are_reported_not_swept() {
        let csr = Csr::new(&[0i64, 1, 2, 2], &[1, 0]).unwrap();
        let out = fifo_sweep(&csr, (), |_, _| (), |_, _, _, _| {}).unwrap().unwrap_err();
        assert_eq!(out.cycle, vec![0, 1]);
        assert_eq!(out.order, vec![2]);
        let empty = Csr::<i32>::new(&[0], &[]).unwrap();
        let (out, _) = fifo_sweep(&empty, (), |_, _| (), |_, _, _, _| {}).unwrap().unwrap();
        assert!(out.order.is_empty() && out.offsets == vec![0]);
        let bad = Csr::new(&[0i32, 1], &[4]).unwrap();
        assert!(matches!(
            fifo_sweep(&bad, (), |_, _| (), |_, _, _, _| {}),
            Err(Error::IndexOutOfRange { value: 4, .. })
        ));
    }

    #[test]
    fn weights_are_checked() {
        let w = [1.0, -0.5];
        assert!(matches!(
            Weights::Each(&w).check("edge_weight", 2),
            Err(Error::BadWeight { position: 1, .. })
        ));
        assert!(matches!(
            Weights::Each(&w).check("edge_weight", 3),
            Err(Error::LengthMismatch { .. })
        ));
        let nan = [f64::NAN];
        assert!(Weights::Each(&nan).check("node_weight", 1).is_err());
        assert!(Weights::Constant(1.0).check("edge_weight", 0).is_ok());
    }
}
