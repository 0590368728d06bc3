//! The sweep engine: every pass along a topological order runs here.
//!
//! * [`run_queue`]: the FIFO Kahn's loop with hooks ([`FifoHooks`]); plain
//!   Kahn's order is the loop with no hooks, a sweep adds per-node work;
//! * [`fifo_sweep`]: the forward pass fused with the order's discovery, so
//!   each CSR row is read once (levels, earliest starts, paths from sources);
//! * [`forward`]: a forward pass along a known order (path counts in other
//!   arithmetic);
//! * [`settle_backward`]: the backward pass, serial or shared among threads
//!   level by level (heights, latest starts, paths to sinks, bottom levels).
//!
//! Soundness does not rest on the input holding still: the caller's arrays
//! are shared with Python, whose other threads run while the GIL is released.
//! Every value read from `indptr`/`indices` is checked before it is used as a
//! position (the FIFO loop reads without a check only where its own
//! invariants decide, see [`run_queue`]), and a value that changed mid-call
//! ends the call with [`Error::InputChanged`] instead.

use std::marker::PhantomData;

use rayon::prelude::*;

use crate::csr::Count;
use crate::interrupt::Ticker;
use crate::kahn::{kahn, Outcome, Tie};
use crate::pool::pool;
use crate::{alloc, Csr, Error, Idx};

/// How many queue slots ahead each stage of the FIFO loop prefetches: the
/// row bounds of the node `ROW_AHEAD` slots ahead and the row itself
/// `EDGES_AHEAD` ahead. Each emitted node otherwise costs a chain of
/// dependent cache misses (queue slot, row bounds, row). Prefetching the
/// successors' counts too was measured slower: the out-of-order core already
/// overlaps those independent misses within a row.
pub(crate) const ROW_AHEAD: usize = 32;
pub(crate) const EDGES_AHEAD: usize = 16;

/// Ask for the cache line holding `pointer`; a hint that never faults.
#[inline(always)]
pub(crate) fn prefetch<T>(pointer: *const T) {
    #[cfg(target_arch = "x86_64")]
    // SAFETY: prefetching is a hint; it never faults and reads nothing the
    // program sees, whatever the address (even one past any allocation).
    unsafe {
        core::arch::x86_64::_mm_prefetch(pointer as *const i8, core::arch::x86_64::_MM_HINT_T0)
    };
    #[cfg(not(target_arch = "x86_64"))]
    let _ = pointer;
}

/// Hooks into the FIFO loop, for sweeps that compute per-node values along
/// the order; the unit type is plain Kahn's algorithm (the hooks compile away).
pub(crate) trait FifoHooks {
    /// Node `u` (`< n`) is emitted from queue `position`; `tail` is the
    /// queue length before its successors are examined.
    #[inline(always)]
    fn emit(&mut self, _position: usize, _u: usize, _tail: usize) {}
    /// Stored edge number `edge`, `u -> v` (`v < n`), is examined (in row order).
    #[inline(always)]
    fn edge(&mut self, _u: usize, _edge: usize, _v: usize) {}
}

impl FifoHooks for () {}

/// FIFO Kahn's loop: the output itself is the queue (emitted nodes are a
/// prefix of it, ready nodes the rest), so no second buffer is needed.
///
/// `indegree` holds the in-degree of each of the `n` nodes (from
/// [`Csr::in_degree_counts`]); `order` is replaced. Stops early, with
/// [`Error::InputChanged`], if the arrays change under it, and with
/// [`Error::Interrupted`] on a stop request.
///
/// What is checked where: every value read from `indices` is compared with
/// `n` before it is used as a position, every row's bounds read from
/// `indptr` are checked against `indices` once per node, and every queue
/// write is checked against `n` (a node queued twice, which only a changed
/// input can cause). The loop's own invariants, not the input, then
/// guarantee the rest: every queued id is below `n` (it passed the first
/// check, or is a source enumerated below `n`), so the row bounds of a queued
/// id are read from `indptr` (of length `n + 1`) without a check; and
/// `tail <= n`, so queue reads below `tail` need none either. The loop alone,
/// on the 1M-node, 10M-edge citation graph (int64 or int32 ids), measured
/// 5-13% slower than a loop with no checks at all, against 8-27% for a
/// bounds check on every read; the per-edge compare is most of what is left.
/// A power-of-two masked index in its place was no faster (one instruction
/// either way), nor was an unconditional queue write (slower).
///
/// Kept out of line (one call per run), so the hot loop's code does not
/// depend on the caller it would otherwise be inlined into: inlined into
/// Kahn's entry point, the whole FIFO call from Python measured about 15%
/// slower on the same graph.
#[inline(never)]
pub(crate) fn run_queue<I: Idx, P: Idx, C: Count, H: FifoHooks>(
    csr: &Csr<'_, I, P>,
    indegree: &mut [C],
    order: &mut Vec<I>,
    hooks: &mut H,
) -> Result<(), Error> {
    let n = csr.n();
    let (indptr, indices) = (csr.indptr(), csr.indices());
    if indegree.len() != n || indptr.len() != n + 1 {
        return Err(Error::Internal { reason: "run_queue: bad buffers".into() });
    }
    // The queue is the spare capacity of `order`: slots `..tail` are
    // written, the rest untouched (no up-front fill: on repeated calls the
    // allocator hands back dirty memory that zeroing would have to clear).
    *order = alloc::with_capacity("order", n)?;
    let Some(queue) = order.spare_capacity_mut().get_mut(..n) else {
        return Err(Error::Internal { reason: "run_queue: short buffer".into() });
    };
    let changed = |what| Err(Error::InputChanged { what });
    let mut ticker = Ticker::new();
    let mut tail = 0usize;
    for (v, d) in indegree.iter().enumerate() {
        ticker.tick()?;
        if d.is_zero() {
            if let Some(slot) = queue.get_mut(tail) {
                slot.write(I::from_usize(v));
                tail += 1;
            }
        }
    }
    // Invariants: `queue[..tail]` is initialised (`tail` grows only right
    // after a write), `tail <= n == queue.len()`, and every id written is
    // below `n` (sources are enumerated below `n`; a successor is written
    // only after `indegree.get_mut` accepted it, and `indegree.len() == n`).
    let written = |queue: &[std::mem::MaybeUninit<I>], at: usize, tail: usize| {
        // SAFETY: `at < tail <= queue.len()`, and every slot below `tail`
        // was written (the invariants above).
        (at < tail).then(|| unsafe { queue.get_unchecked(at).assume_init_read() }.to_usize())
    };
    // The start of row `u` for a queued id `u`, or the end of row `u - 1`.
    let bound = |u: usize| {
        // SAFETY: callers pass a queued id `u` (below `n`, the invariants
        // above) or such an id plus one, so `u <= n < indptr.len()`.
        unsafe { indptr.get_unchecked(u) }.to_usize()
    };
    // The ticker is asked about every `STRIDE` nodes plus edges (a hub's
    // row counts for its length), the countdown kept in a local the compiler
    // holds in a register.
    const STRIDE: usize = 1 << 14;
    let mut countdown = STRIDE;
    let mut head = 0usize;
    while let Some(u) = written(queue, head, tail) {
        if let Some(ahead) = written(queue, head + ROW_AHEAD, tail) {
            prefetch(indptr.as_ptr().wrapping_add(ahead));
        }
        if let Some(ahead) = written(queue, head + EDGES_AHEAD, tail) {
            prefetch(indices.as_ptr().wrapping_add(bound(ahead)));
        }
        hooks.emit(head, u, tail);
        head += 1;
        let start = bound(u);
        let Some(row) = indices.get(start..bound(u + 1)) else {
            return changed("indptr");
        };
        // A hub's row (a million edges takes milliseconds) is not split:
        // splitting long rows measured 5-15% slower on this loop.
        countdown = countdown.saturating_sub(row.len() + 1);
        if countdown == 0 {
            countdown = STRIDE;
            ticker.tick_by(STRIDE)?;
        }
        for (offset, &v) in row.iter().enumerate() {
            let Some(count) = indegree.get_mut(v.to_usize()) else {
                return changed("indices");
            };
            hooks.edge(u, start + offset, v.to_usize());
            if count.decrement() {
                let Some(slot) = queue.get_mut(tail) else {
                    return changed("indices");
                };
                slot.write(v);
                tail += 1;
            }
        }
    }
    // SAFETY: the first `tail` slots are initialised (the invariant above)
    // and `tail <= n <= capacity`.
    unsafe { order.set_len(tail) };
    Ok(())
}

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
pub fn fifo_sweep<I, P: Idx, T, C, E, V>(
    csr: &Csr<'_, I, P>,
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
        sweep_with::<I, P, u32, T, C, E, V>(csr, init, emit, visit)
    } else {
        sweep_with::<I, P, u64, T, C, E, V>(csr, init, emit, visit)
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
fn sweep_with<I, P: Idx, K, T, C, E, V>(
    csr: &Csr<'_, I, P>,
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
    let mut order: Vec<I> = Vec::new();
    let values = alloc::filled("sweep values", n, init)?;
    let mut sweep = Sweep { values, passed: None, offsets: vec![0], level_end: 0, emit, visit };
    run_queue(csr, &mut indegree, &mut order, &mut sweep)?;
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

/// Call `step(u)` for every node of `order` (a topological order), first to
/// last, fetching the rows `step` will read a few nodes ahead: a forward
/// pass when the order is already known.
pub fn forward<I, P: Idx, F>(csr: &Csr<'_, I, P>, order: &[I], mut step: F) -> Result<(), Error>
where
    I: Idx,
    F: FnMut(usize) -> Result<(), Error>,
{
    let mut ticker = Ticker::new();
    walk(csr, order.iter(), |u| {
        ticker.tick()?;
        step(u)
    })
}

/// [`forward`] from the last node of `order` to the first: a backward pass
/// on one thread when the order is already known.
pub fn backward<I, P, F>(csr: &Csr<'_, I, P>, order: &[I], mut step: F) -> Result<(), Error>
where
    I: Idx,
    P: Idx,
    F: FnMut(usize) -> Result<(), Error>,
{
    let mut ticker = Ticker::new();
    walk(csr, order.iter().rev(), |u| {
        ticker.tick()?;
        step(u)
    })
}

/// `step` each node `nodes` yields, fetching the rows a
/// few nodes ahead (the order is known in advance, as in the FIFO loop).
#[inline(always)]
fn walk<'o, I, P: Idx, F>(
    csr: &Csr<'_, I, P>,
    nodes: impl Iterator<Item = &'o I> + Clone,
    mut step: F,
) -> Result<(), Error>
where
    I: Idx,
    F: FnMut(usize) -> Result<(), Error>,
{
    let (indptr, indices) = (csr.indptr(), csr.indices());
    let mut rows_ahead = nodes.clone().skip(ROW_AHEAD);
    let mut edges_ahead = nodes.clone().skip(EDGES_AHEAD);
    for u in nodes {
        if let Some(ahead) = rows_ahead.next() {
            prefetch(indptr.as_ptr().wrapping_add(ahead.to_usize()));
        }
        if let Some(start) = edges_ahead.next().and_then(|a| indptr.get(a.to_usize())) {
            prefetch(indices.as_ptr().wrapping_add(start.to_usize()));
        }
        step(u.to_usize())?;
    }
    Ok(())
}

/// Whether a backward pass over `levels` is worth sharing among threads:
/// only when the levels are wide enough that every hand-off moves many
/// nodes. Measured on the 1M-node, 10M-edge citation benchmark graph (2
/// cores): sharing its wide levels saved about a third of the pass; deep,
/// narrow graphs pay a pool round trip per level and lose.
pub fn worth_sharing<I>(levels: &LevelOrder<I>, threads: usize) -> bool {
    let n = levels.order.len();
    let depth = levels.offsets.len().saturating_sub(1).max(1);
    threads > 1 && n >= SHARE_MIN_NODES && n / depth >= SHARE_MIN_WIDTH
}

/// Nodes of one wide level handed to the pool at once: small enough that
/// the calling thread ticks every few tens of milliseconds, large enough
/// that the hand-off costs nothing measurable.
const SHARED_BLOCK: usize = 1 << 18;

/// A graph this small is done before a pool would have handed out its work.
const SHARE_MIN_NODES: usize = 1 << 16;
/// Below this average level width the per-level hand-off outweighs the work.
const SHARE_MIN_WIDTH: usize = 4 * SERIAL_FRONTIER;

/// Call `settle(u)` once for every node, from the last level down, so that
/// each node's successors (all on higher levels) are settled before it.
///
/// With `threads > 1` (and levels wide enough to pay, see
/// [`worth_sharing`]) the nodes of a level are shared among the workers, and
/// a level starts only when the one above is finished. A `settle` that
/// reads only the slots of `u`'s successors and writes only `u`'s own (its
/// node and the edges of its row) therefore never races, and gives the same
/// result as one thread, bit for bit; that is the contract under which it
/// may use [`Disjoint`]. The first error any `settle` returns ends the pass.
pub fn settle_backward<I, P: Idx, F>(
    csr: &Csr<'_, I, P>,
    levels: &LevelOrder<I>,
    threads: usize,
    settle: F,
) -> Result<(), Error>
where
    I: Idx,
    F: Fn(usize) -> Result<(), Error> + Sync,
{
    if !worth_sharing(levels, threads) {
        let mut ticker = Ticker::new();
        return walk(csr, levels.order.iter().rev(), |u| {
            ticker.tick()?;
            settle(u)
        });
    }
    let mut ticker = Ticker::new();
    let pool = pool(threads)?;
    for group in levels.offsets.windows(2).rev() {
        let group = levels
            .order
            .get(group[0]..group[1])
            .ok_or(Error::Internal { reason: "level offsets out of order".into() })?;
        if group.len() < SERIAL_FRONTIER {
            ticker.tick_by(group.len())?;
            walk(csr, group.iter(), &settle)?;
            continue;
        }
        // Nodes of one level have no edges among them: any split works.
        // Interrupt checks stay on the calling thread (the only one that
        // sees a Ctrl-C), between hand-offs of at most `SHARED_BLOCK` nodes.
        for block in group.chunks(SHARED_BLOCK) {
            ticker.tick_by(block.len())?;
            pool.install(|| {
                block
                    .par_chunks(SERIAL_FRONTIER)
                    .try_for_each(|chunk| walk(csr, chunk.iter(), &settle))
            })?;
        }
    }
    Ok(())
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

    /// The value at `index`; [`Error::InputChanged`] when `index` is out
    /// of bounds (it came from input that changed).
    ///
    /// # Safety
    /// No other thread may be writing `index` at the same time.
    #[inline(always)]
    pub unsafe fn get(&self, index: usize) -> Result<T, Error> {
        if index >= self.len {
            return Err(Error::InputChanged { what: "indices" });
        }
        // SAFETY: in bounds (checked above); no concurrent writer (caller).
        Ok(unsafe { *self.start.add(index) })
    }

    /// The positions `range`, to fill in.
    ///
    /// # Safety
    /// No other thread may touch `range` while the returned slice lives.
    #[inline(always)]
    #[allow(clippy::mut_from_ref)]
    pub unsafe fn range_mut(&self, range: std::ops::Range<usize>) -> Result<&mut [T], Error> {
        if range.start > range.end || range.end > self.len {
            return Err(Error::InputChanged { what: "indptr" });
        }
        // SAFETY: in bounds (checked above); exclusive for its lifetime (caller).
        Ok(unsafe { std::slice::from_raw_parts_mut(self.start.add(range.start), range.len()) })
    }

    /// Write `value` at `index`.
    ///
    /// # Safety
    /// No other thread may be reading or writing `index` at the same time.
    #[inline(always)]
    pub unsafe fn set(&self, index: usize, value: T) -> Result<(), Error> {
        if index >= self.len {
            return Err(Error::InputChanged { what: "indices" });
        }
        // SAFETY: in bounds (checked above); no concurrent access (caller).
        unsafe { *self.start.add(index) = value };
        Ok(())
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
        match crate::interrupt::position(values, |w| !(w.is_finite() && *w >= 0.0))? {
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
    fn wide_levels_are_shared_and_give_the_serial_result() {
        // Three layers of 30 000 nodes, each node with two edges into the
        // next layer: wide enough that the backward pass goes to the pool.
        let width = 30_000i64;
        let (mut src, mut dst) = (Vec::new(), Vec::new());
        for layer in 0..2 {
            for k in 0..width {
                let u = layer * width + k;
                src.extend([u, u]);
                dst.extend([(layer + 1) * width + k, (layer + 1) * width + (k * 7 + 1) % width]);
            }
        }
        let n = 3 * width as usize;
        let g = edges_to_csr(&src, &dst, n, false).unwrap();
        let csr = Csr::new(&g.indptr, &g.indices).unwrap();
        let levels = crate::levels::level_order(&csr, 1).unwrap().unwrap();
        assert!(worth_sharing(&levels, 2) && !worth_sharing(&levels, 1));
        let one = crate::levels::heights(&csr, &levels, 1).unwrap();
        assert_eq!(crate::levels::heights(&csr, &levels, 2).unwrap(), one);
        // By construction: layer 0 has height 2, layer 1 height 1, layer 2 sinks.
        let layer = |v: usize| v / width as usize;
        assert!(one.iter().enumerate().all(|(v, &h)| h as usize == 2 - layer(v)));
        let counts = crate::paths::path_counts(&csr, 1).unwrap().unwrap();
        assert_eq!(crate::paths::path_counts(&csr, 2).unwrap().unwrap(), counts);
        // Every source starts 2 * 2 paths (two choices per step).
        assert_eq!(counts.total, 4.0 * width as f64);
    }

    #[test]
    fn ids_that_stopped_being_nodes_end_the_loop_with_input_changed() {
        // What the loop sees when `indices` changed after the in-degrees
        // were counted: an id beyond n or a negative one in a row it reads.
        // Neither may be used as a position, nor panic.
        for bad in [2i64, 7, -1, i64::MIN] {
            let indices = [1, bad];
            let csr = Csr::new(&[0i64, 2, 2], &indices).unwrap();
            let mut counts = vec![0u32, 1];
            let mut order = Vec::new();
            let out = run_queue(&csr, &mut counts, &mut order, &mut ());
            assert_eq!(out, Err(Error::InputChanged { what: "indices" }), "{bad}");
        }
        // The same arrays with the counts they describe give the order.
        let csr = Csr::new(&[0i64, 2, 2], &[1, 1]).unwrap();
        let mut counts = vec![0u32, 2];
        let mut order = Vec::new();
        run_queue(&csr, &mut counts, &mut order, &mut ()).unwrap();
        assert_eq!(order, vec![0, 1]);
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
