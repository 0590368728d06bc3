//! Kahn's algorithm with selectable tie-breaks.
//!
//! Semantics shared by every policy (the public contract):
//! * the nodes of in-degree 0 enter the ready set in ascending id;
//! * when a node is emitted, its successors are examined in stored row order
//!   and each enters the ready set when its remaining in-degree reaches 0;
//! * the policy decides only which ready node is emitted next: the oldest
//!   (queue), the newest (stack), the smallest key with ties to the smaller id
//!   (priority), or a uniformly random one from a seeded stream (random).
//!
//! When the ready set runs dry before every node is emitted, the graph has a
//! cycle: the outcome then lists the blocked nodes and one directed cycle
//! among them instead of failing, so callers choose what to do.

use crate::csr::Count;
use crate::heap::QuadHeap;
use crate::rng::SplitMix64;
use crate::{Csr, Error, Idx};

/// Per-node priority values, indexed by node id.
#[derive(Debug, Clone, Copy)]
pub enum KeyValues<'a> {
    I64(&'a [i64]),
    U64(&'a [u64]),
    F64(&'a [f64]),
}

impl KeyValues<'_> {
    pub(crate) fn len(&self) -> usize {
        match self {
            KeyValues::I64(v) => v.len(),
            KeyValues::U64(v) => v.len(),
            KeyValues::F64(v) => v.len(),
        }
    }

    /// The key mapped to a `u64` whose unsigned order is the key's order.
    #[inline(always)]
    pub(crate) fn rank(&self, node: usize) -> u64 {
        match self {
            KeyValues::I64(v) => (v[node] as u64) ^ (1 << 63),
            KeyValues::U64(v) => v[node],
            KeyValues::F64(v) => {
                // -0.0 and 0.0 compare equal, so they must share a rank.
                let x = if v[node] == 0.0 { 0.0 } else { v[node] };
                let bits = x.to_bits();
                if bits >> 63 == 1 {
                    !bits
                } else {
                    bits | (1 << 63)
                }
            }
        }
    }
}

/// The priority of the `Priority` policy.
#[derive(Debug, Clone, Copy, Default)]
pub struct Key<'a> {
    /// `None` means the node id itself (smallest id first).
    pub values: Option<KeyValues<'a>>,
    /// Emit the largest key first; ties still go to the smaller id.
    pub descending: bool,
}

/// Which ready node is emitted next.
#[derive(Debug, Clone, Copy)]
pub enum Tie<'a> {
    /// First in, first out.
    Queue,
    /// Last in, first out.
    Stack,
    /// Smallest key first, ties to the smaller node id.
    Priority(Key<'a>),
    /// Uniformly random among the ready nodes, from this seed.
    Random { seed: u64 },
}

/// What Kahn's loop produced.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Outcome<I> {
    /// The emitted nodes, in order (all `n` of them for a DAG).
    pub order: Vec<I>,
    /// Nodes never emitted because a cycle blocks them, ascending id.
    pub blocked: Vec<I>,
    /// One directed cycle among the blocked nodes: `cycle[k] -> cycle[k + 1]`
    /// and `cycle[last] -> cycle[0]` are edges; starts at its smallest id.
    pub cycle: Vec<I>,
}

impl<I> Outcome<I> {
    pub fn is_complete(&self) -> bool {
        self.blocked.is_empty()
    }
}

/// Run Kahn's algorithm on `csr` under `tie`.
pub fn kahn<I: Idx>(csr: &Csr<'_, I>, tie: &Tie<'_>) -> Result<Outcome<I>, Error> {
    kahn_shared(csr, tie, 1)
}

/// [`kahn`] with the in-degree pass shared among `threads` workers (the
/// loop itself is sequential by nature); the outcome is the same for every
/// thread count.
pub fn kahn_shared<I: Idx>(
    csr: &Csr<'_, I>,
    tie: &Tie<'_>,
    threads: usize,
) -> Result<Outcome<I>, Error> {
    let n = csr.n();
    if let Tie::Priority(Key { values: Some(values), .. }) = tie {
        check_key(values, n)?;
    }
    if csr.m() <= u32::MAX as usize {
        run_policy::<I, u32>(csr, tie, threads)
    } else {
        run_policy::<I, u64>(csr, tie, threads)
    }
}

/// Kahn's loop with remaining in-degrees kept in `C` (u32 whenever the edge
/// count allows: half the memory traffic of 64-bit counts on the hot path).
fn run_policy<I: Idx, C: Count>(
    csr: &Csr<'_, I>,
    tie: &Tie<'_>,
    threads: usize,
) -> Result<Outcome<I>, Error> {
    let n = csr.n();
    let mut indegree: Vec<C> = csr.in_degree_counts_shared(threads)?;
    let mut order: Vec<I> = Vec::with_capacity(n);
    match *tie {
        Tie::Queue => run_queue(csr, &mut indegree, &mut order, &mut ()),
        Tie::Stack => run(csr, &mut indegree, &mut order, &mut Vec::new()),
        Tie::Priority(Key { values: None, descending }) => {
            let mut heap = IdHeap { heap: QuadHeap::new(), flip: if descending { !0 } else { 0 } };
            run(csr, &mut indegree, &mut order, &mut heap)
        }
        Tie::Priority(Key { values: Some(values), descending }) => {
            if let Some(mut heap) = PackedKeyHeap::fitting(values, n, descending) {
                run(csr, &mut indegree, &mut order, &mut heap)
            } else {
                let flip = if descending { !0 } else { 0 };
                run(
                    csr,
                    &mut indegree,
                    &mut order,
                    &mut KeyHeap { heap: QuadHeap::new(), values, flip },
                )
            }
        }
        Tie::Random { seed } => {
            let mut ready = RandomPick { items: Vec::new(), rng: SplitMix64::new(seed) };
            run(csr, &mut indegree, &mut order, &mut ready)
        }
    }
    if order.len() == n {
        return Ok(Outcome { order, blocked: Vec::new(), cycle: Vec::new() });
    }
    let blocked: Vec<I> = (0..n).filter(|&v| !indegree[v].is_zero()).map(I::from_usize).collect();
    let cycle = cycle_among_blocked(csr, &indegree, blocked[0].to_usize());
    Ok(Outcome { order, blocked, cycle })
}

pub(crate) fn check_key(values: &KeyValues<'_>, n: usize) -> Result<(), Error> {
    if values.len() != n {
        return Err(Error::LengthMismatch { what: "key", expected: n, got: values.len() });
    }
    if let KeyValues::F64(v) = values {
        if let Some(node) = v.iter().position(|x| x.is_nan()) {
            return Err(Error::NanKey { node });
        }
    }
    Ok(())
}

/// The ready set of one policy.
trait Ready<I> {
    fn push(&mut self, node: I);
    fn pop(&mut self) -> Option<I>;
    /// The node most likely to be popped next, if cheap to tell.
    fn peek(&self) -> Option<I> {
        None
    }
}

impl<I: Copy> Ready<I> for Vec<I> {
    #[inline]
    fn push(&mut self, node: I) {
        Vec::push(self, node)
    }
    #[inline]
    fn pop(&mut self) -> Option<I> {
        Vec::pop(self)
    }
    #[inline]
    fn peek(&self) -> Option<I> {
        self.last().copied()
    }
}

/// Smallest (or, flipped, largest) id first: the id is its own key.
struct IdHeap {
    heap: QuadHeap<u64>,
    /// XOR mask: all ones reverses the order.
    flip: u64,
}

impl<I: Idx> Ready<I> for IdHeap {
    #[inline]
    fn push(&mut self, node: I) {
        self.heap.push(node.to_usize() as u64 ^ self.flip)
    }
    #[inline]
    fn pop(&mut self) -> Option<I> {
        self.heap.pop().map(|entry| I::from_usize((entry ^ self.flip) as usize))
    }
    #[inline]
    fn peek(&self) -> Option<I> {
        self.heap.peek().map(|entry| I::from_usize((entry ^ self.flip) as usize))
    }
}

/// Smallest key first, ties to the smaller id: entries pack the key's rank
/// above the id, so one integer comparison decides.
struct KeyHeap<'a> {
    heap: QuadHeap<u128>,
    values: KeyValues<'a>,
    /// XOR mask on the rank: all ones reverses the key order, not the id order.
    flip: u64,
}

impl<I: Idx> Ready<I> for KeyHeap<'_> {
    #[inline]
    fn push(&mut self, node: I) {
        let rank = self.values.rank(node.to_usize()) ^ self.flip;
        self.heap.push(((rank as u128) << 64) | node.to_usize() as u128)
    }
    #[inline]
    fn pop(&mut self) -> Option<I> {
        self.heap.pop().map(|entry| I::from_usize(entry as u64 as usize))
    }
    #[inline]
    fn peek(&self) -> Option<I> {
        self.heap.peek().map(|entry| I::from_usize(entry as u64 as usize))
    }
}

/// Integer-valued keys whose range fits beside the id in 64 bits (years,
/// counts, small scores: the common case) are packed as
/// `(key - min) << id_bits | id`: half the heap memory of [`KeyHeap`] and a
/// single 64-bit comparison.
struct PackedKeyHeap<'a> {
    heap: QuadHeap<u64>,
    values: KeyValues<'a>,
    /// The key that packs to 0: the minimum, or the maximum when descending.
    base: i128,
    descending: bool,
    id_bits: u32,
}

impl<'a> PackedKeyHeap<'a> {
    /// The packed layout for `values`, if every key is an integer (floats
    /// included, when integral) and the key range fits.
    fn fitting(values: KeyValues<'a>, n: usize, descending: bool) -> Option<Self> {
        let id_bits = usize::BITS - n.saturating_sub(1).leading_zeros();
        let (low, high) = match values {
            KeyValues::I64(v) => min_max(v.iter().map(|&k| k as i128))?,
            KeyValues::U64(v) => min_max(v.iter().map(|&k| k as i128))?,
            KeyValues::F64(v) => {
                let integral = v.iter().all(|k| k.fract() == 0.0 && k.abs() < 9.0e15);
                if !integral {
                    return None;
                }
                min_max(v.iter().map(|&k| k as i128))?
            }
        };
        let span = (high - low) as u128;
        if id_bits >= 64 || span >> (64 - id_bits) != 0 {
            return None;
        }
        let base = if descending { high } else { low };
        Some(PackedKeyHeap { heap: QuadHeap::new(), values, base, descending, id_bits })
    }

    #[inline(always)]
    fn key(&self, node: usize) -> i128 {
        match self.values {
            KeyValues::I64(v) => v[node] as i128,
            KeyValues::U64(v) => v[node] as i128,
            KeyValues::F64(v) => v[node] as i128,
        }
    }
}

fn min_max(mut keys: impl Iterator<Item = i128>) -> Option<(i128, i128)> {
    let first = keys.next()?;
    Some(keys.fold((first, first), |(low, high), k| (low.min(k), high.max(k))))
}

impl<I: Idx> Ready<I> for PackedKeyHeap<'_> {
    #[inline]
    fn push(&mut self, node: I) {
        let key = self.key(node.to_usize());
        let offset = if self.descending { self.base - key } else { key - self.base };
        self.heap.push(((offset as u64) << self.id_bits) | node.to_usize() as u64)
    }
    #[inline]
    fn pop(&mut self) -> Option<I> {
        let mask = (1u64 << self.id_bits) - 1;
        self.heap.pop().map(|entry| I::from_usize((entry & mask) as usize))
    }
    #[inline]
    fn peek(&self) -> Option<I> {
        let mask = (1u64 << self.id_bits) - 1;
        self.heap.peek().map(|entry| I::from_usize((entry & mask) as usize))
    }
}

struct RandomPick<I> {
    items: Vec<I>,
    rng: SplitMix64,
}

impl<I> Ready<I> for RandomPick<I> {
    #[inline]
    fn push(&mut self, node: I) {
        self.items.push(node)
    }
    #[inline]
    fn pop(&mut self) -> Option<I> {
        if self.items.is_empty() {
            return None;
        }
        let pick = self.rng.below(self.items.len() as u64) as usize;
        Some(self.items.swap_remove(pick))
    }
}

/// Kahn's loop for any ready-set policy.
fn run<I: Idx, C: Count, R: Ready<I>>(
    csr: &Csr<'_, I>,
    indegree: &mut [C],
    order: &mut Vec<I>,
    ready: &mut R,
) {
    for (v, d) in indegree.iter().enumerate() {
        if d.is_zero() {
            ready.push(I::from_usize(v));
        }
    }
    let (indptr, indices) = (csr.indptr(), csr.indices());
    while let Some(u) = ready.pop() {
        order.push(u);
        // The ready set cannot say far ahead what comes next, so hide what
        // latency it can: the likely next node's row is fetched while this
        // row is worked, and a node's row bounds as soon as it turns ready.
        if let Some(next) = ready.peek() {
            prefetch(indices.as_ptr().wrapping_add(indptr[next.to_usize()].to_usize()));
        }
        for &v in csr.row(u.to_usize()) {
            if indegree[v.to_usize()].decrement() {
                prefetch(indptr.as_ptr().wrapping_add(v.to_usize()));
                ready.push(v);
            }
        }
    }
}

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
    // SAFETY: prefetching is a hint; it never faults, whatever the address.
    unsafe {
        core::arch::x86_64::_mm_prefetch(pointer as *const i8, core::arch::x86_64::_MM_HINT_T0)
    };
    #[cfg(not(target_arch = "x86_64"))]
    let _ = pointer;
}

/// Hooks into the FIFO loop, for sweeps that compute per-node values along
/// the order; the unit type is plain Kahn's algorithm (the hooks compile away).
pub(crate) trait FifoHooks {
    /// Node `u` is emitted from queue `position`; `tail` is the queue length
    /// before its successors are examined.
    #[inline(always)]
    fn emit(&mut self, _position: usize, _u: usize, _tail: usize) {}
    /// Stored edge number `edge`, `u -> v`, is examined (in row order).
    #[inline(always)]
    fn edge(&mut self, _u: usize, _edge: usize, _v: usize) {}
}

impl FifoHooks for () {}

/// FIFO Kahn's loop: the output itself is the queue (emitted nodes are a
/// prefix of it, ready nodes the rest), so no second buffer is needed.
///
/// `indegree` must come from [`Csr::in_degree_counts`] on the same graph
/// (which checked every endpoint) and `order` must be empty with room for
/// `n` nodes.
pub(crate) fn run_queue<I: Idx, C: Count, H: FifoHooks>(
    csr: &Csr<'_, I>,
    indegree: &mut [C],
    order: &mut Vec<I>,
    hooks: &mut H,
) {
    let n = csr.n();
    let (indptr, indices) = (csr.indptr(), csr.indices());
    // `in_degree_counts` checked every endpoint and `Csr::new` checked that
    // indptr is monotone and ends at indices.len(), so every access below
    // is in bounds. Each node enters the queue exactly once (when its count
    // reaches zero, or at the start), so at most n slots are written.
    assert!(indegree.len() == n && order.is_empty() && order.capacity() >= n);
    let queue = order.as_mut_ptr();
    let mut tail = 0usize;
    for (v, d) in indegree.iter().enumerate() {
        if d.is_zero() {
            unsafe { queue.add(tail).write(I::from_usize(v)) };
            tail += 1;
        }
    }
    let mut head = 0usize;
    unsafe {
        while head < tail {
            if head + ROW_AHEAD < tail {
                let ahead = (*queue.add(head + ROW_AHEAD)).to_usize();
                prefetch(indptr.as_ptr().add(ahead));
            }
            if head + EDGES_AHEAD < tail {
                let ahead = (*queue.add(head + EDGES_AHEAD)).to_usize();
                let start = indptr.get_unchecked(ahead).to_usize();
                prefetch(indices.as_ptr().add(start));
            }
            let u = (*queue.add(head)).to_usize();
            hooks.emit(head, u, tail);
            head += 1;
            let start = indptr.get_unchecked(u).to_usize();
            let end = indptr.get_unchecked(u + 1).to_usize();
            for edge in start..end {
                let v = *indices.get_unchecked(edge);
                hooks.edge(u, edge, v.to_usize());
                if indegree.get_unchecked_mut(v.to_usize()).decrement() {
                    queue.add(tail).write(v);
                    tail += 1;
                }
            }
        }
        order.set_len(tail);
    }
}

/// One directed cycle through nodes whose remaining in-degree is positive.
///
/// Each such node still has an un-emitted (hence blocked) predecessor, so
/// following one recorded predecessor per node must revisit a node; the
/// revisited stretch, reversed, is a cycle.
fn cycle_among_blocked<I: Idx, C: Count>(
    csr: &Csr<'_, I>,
    remaining: &[C],
    start: usize,
) -> Vec<I> {
    let n = csr.n();
    let none = usize::MAX;
    let mut pred = vec![none; n];
    for u in 0..n {
        if remaining[u].is_zero() {
            continue;
        }
        for &v in csr.row(u) {
            let v = v.to_usize();
            if !remaining[v].is_zero() && pred[v] == none {
                pred[v] = u;
            }
        }
    }
    let mut seen = vec![false; n];
    let mut x = start;
    while !seen[x] {
        seen[x] = true;
        x = pred[x];
    }
    let mut cycle = vec![x];
    let mut y = pred[x];
    while y != x {
        cycle.push(y);
        y = pred[y];
    }
    cycle.reverse();
    let smallest = (0..cycle.len()).min_by_key(|&k| cycle[k]).unwrap_or(0);
    cycle.rotate_left(smallest);
    cycle.into_iter().map(I::from_usize).collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::edges::edges_to_csr;
    use crate::verify::verify;

    /// The documented semantics, written as plainly as possible: the ready
    /// set is a list; sources enter in ascending id; successors enter in row
    /// order; `pick` chooses the index of the next node to emit.
    fn reference(
        indptr: &[i64],
        indices: &[i64],
        pick: &mut dyn FnMut(&[i64]) -> usize,
        take: fn(&mut Vec<i64>, usize) -> i64,
    ) -> Vec<i64> {
        let n = indptr.len() - 1;
        let mut indegree = vec![0i64; n];
        for &v in indices {
            indegree[v as usize] += 1;
        }
        let mut ready: Vec<i64> = (0..n as i64).filter(|&v| indegree[v as usize] == 0).collect();
        let mut order = Vec::new();
        while !ready.is_empty() {
            let at = pick(&ready);
            let u = take(&mut ready, at);
            order.push(u);
            for &v in &indices[indptr[u as usize] as usize..indptr[u as usize + 1] as usize] {
                indegree[v as usize] -= 1;
                if indegree[v as usize] == 0 {
                    ready.push(v);
                }
            }
        }
        order
    }

    /// Random graphs, DAG or not, with duplicates and self-loops.
    fn random_graph(rng: &mut SplitMix64, acyclic: bool) -> (Vec<i64>, Vec<i64>) {
        let n = rng.below(12) as usize;
        let m = if n == 0 { 0 } else { rng.below(30) as usize };
        let perm: Vec<i64> = {
            let mut p: Vec<i64> = (0..n as i64).collect();
            for i in (1..n).rev() {
                p.swap(i, rng.below(i as u64 + 1) as usize);
            }
            p
        };
        let (mut src, mut dst) = (Vec::new(), Vec::new());
        for _ in 0..m {
            let a = rng.below(n as u64) as usize;
            let b = rng.below(n as u64) as usize;
            if acyclic {
                if a == b {
                    continue;
                }
                let (a, b) = (a.min(b), a.max(b));
                src.push(perm[a]);
                dst.push(perm[b]);
            } else {
                src.push(a as i64);
                dst.push(b as i64);
            }
        }
        let g = edges_to_csr(&src, &dst, n, false).unwrap();
        (g.indptr, g.indices)
    }

    fn key_order(indptr: &[i64], indices: &[i64], rank: &dyn Fn(i64) -> (f64, i64)) -> Vec<i64> {
        let pick = &mut |ready: &[i64]| {
            (0..ready.len())
                .min_by(|&a, &b| rank(ready[a]).partial_cmp(&rank(ready[b])).unwrap())
                .unwrap()
        };
        reference(indptr, indices, pick, Vec::remove)
    }

    #[test]
    fn every_policy_matches_the_reference_semantics() {
        let mut rng = SplitMix64::new(7);
        for round in 0..400 {
            let (indptr, indices) = random_graph(&mut rng, round % 2 == 0);
            let g = Csr::new(&indptr, &indices).unwrap();
            let n = g.n();
            // Half-integers take the general key heap; their doubles, the packed one.
            let key: Vec<f64> = (0..n).map(|_| rng.below(4) as f64 - 1.5).collect();
            let ikey: Vec<i64> = key.iter().map(|&k| (k * 2.0) as i64).collect();

            let queue = reference(&indptr, &indices, &mut |_| 0, Vec::remove);
            let stack = reference(&indptr, &indices, &mut |r| r.len() - 1, Vec::remove);
            let by_id = key_order(&indptr, &indices, &|v| (v as f64, v));
            let by_id_desc = key_order(&indptr, &indices, &|v| (-(v as f64), v));
            let by_key = key_order(&indptr, &indices, &|v| (key[v as usize], v));
            let by_key_desc = key_order(&indptr, &indices, &|v| (-key[v as usize], v));

            let run = |tie: Tie<'_>| kahn(&g, &tie).unwrap().order;
            assert_eq!(run(Tie::Queue), queue);
            assert_eq!(run(Tie::Stack), stack);
            // The 64-bit count path (used past 2^32 edges) behaves the same.
            assert_eq!(run_policy::<i64, u64>(&g, &Tie::Queue, 1).unwrap().order, queue);
            assert_eq!(run_policy::<i64, u64>(&g, &Tie::Stack, 1).unwrap().order, stack);
            assert_eq!(run(Tie::Priority(Key::default())), by_id);
            assert_eq!(run(Tie::Priority(Key { values: None, descending: true })), by_id_desc);
            let f = Key { values: Some(KeyValues::F64(&key)), descending: false };
            assert_eq!(run(Tie::Priority(f)), by_key);
            let f = Key { values: Some(KeyValues::F64(&key)), descending: true };
            assert_eq!(run(Tie::Priority(f)), by_key_desc);
            let i = Key { values: Some(KeyValues::I64(&ikey)), descending: false };
            assert_eq!(run(Tie::Priority(i)), by_key);
            let i = Key { values: Some(KeyValues::I64(&ikey)), descending: true };
            assert_eq!(run(Tie::Priority(i)), by_key_desc);
            let doubled: Vec<f64> = key.iter().map(|k| k * 2.0).collect();
            let f = Key { values: Some(KeyValues::F64(&doubled)), descending: true };
            assert_eq!(run(Tie::Priority(f)), by_key_desc);
            let wide: Vec<u64> = ikey.iter().map(|&k| (k + 3) as u64 * (1 << 50)).collect();
            let u = Key { values: Some(KeyValues::U64(&wide)), descending: false };
            assert_eq!(run(Tie::Priority(u)), by_key, "a range too wide to pack");

            // The documented draw: `below(len)` over the ready list, the
            // last entry moved into the taken one's place.
            let mut pick_rng = SplitMix64::new(99);
            let pick = &mut |r: &[i64]| pick_rng.below(r.len() as u64) as usize;
            let random = reference(&indptr, &indices, pick, Vec::swap_remove);
            assert_eq!(run(Tie::Random { seed: 99 }), random);
        }
    }

    #[test]
    fn outcomes_are_valid_orders_or_real_cycles() {
        let mut rng = SplitMix64::new(3);
        for round in 0..400 {
            let (indptr, indices) = random_graph(&mut rng, round % 3 == 0);
            let g = Csr::new(&indptr, &indices).unwrap();
            for tie in [Tie::Queue, Tie::Stack, Tie::Random { seed: round }] {
                let out = kahn(&g, &tie).unwrap();
                if out.is_complete() {
                    assert_eq!(verify(&g, &out.order).unwrap(), None);
                    assert!(out.cycle.is_empty());
                    continue;
                }
                assert_eq!(out.order.len() + out.blocked.len(), g.n());
                let k = out.cycle.len();
                assert!(k >= 1);
                for step in 0..k {
                    let (u, v) = (out.cycle[step], out.cycle[(step + 1) % k]);
                    assert!(g.row(u as usize).contains(&v), "{u}->{v} is not an edge");
                    assert!(out.blocked.binary_search(&u).is_ok());
                }
                let mut distinct = out.cycle.clone();
                distinct.sort();
                distinct.dedup();
                assert_eq!(distinct.len(), k, "a cycle visits each node once");
            }
        }
    }

    #[test]
    fn textbook_example_has_the_expected_orders() {
        // Source: Cormen, Leiserson, Rivest & Stein, Introduction to
        // Algorithms (3rd ed.), Figure 22.7, the dressing DAG (edges from
        // memory). Ids: 0 undershorts, 1 pants, 2 belt, 3 shirt, 4 tie,
        // 5 jacket, 6 socks, 7 shoes, 8 watch.
        let src = [0i64, 0, 1, 1, 2, 3, 3, 4, 6];
        let dst = [1i64, 7, 2, 7, 5, 2, 4, 5, 7];
        let g = edges_to_csr(&src, &dst, 9, false).unwrap();
        let csr = Csr::new(&g.indptr, &g.indices).unwrap();
        let smallest_first = kahn(&csr, &Tie::Priority(Key::default())).unwrap().order;
        assert_eq!(smallest_first, vec![0, 1, 3, 2, 4, 5, 6, 7, 8]);
        // Worked by hand from the documented semantics.
        let queue = kahn(&csr, &Tie::Queue).unwrap().order;
        assert_eq!(queue, vec![0, 3, 6, 8, 1, 4, 2, 7, 5]);
        // The order the book prints (socks, undershorts, pants, shoes, watch,
        // shirt, belt, tie, jacket) is accepted by the checker.
        assert_eq!(verify(&csr, &[6i64, 0, 1, 7, 8, 3, 2, 4, 5]).unwrap(), None);
    }

    #[test]
    fn self_loop_is_a_one_node_cycle() {
        let g = Csr::new(&[0i32, 1, 2], &[1, 1]).unwrap();
        let out = kahn(&g, &Tie::Queue).unwrap();
        assert_eq!(out.order, vec![0]);
        assert_eq!(out.blocked, vec![1]);
        assert_eq!(out.cycle, vec![1]);
    }

    #[test]
    fn bad_keys_are_errors() {
        let g = Csr::new(&[0i32, 0, 0], &[]).unwrap();
        let short = [1.0];
        let tie = Tie::Priority(Key { values: Some(KeyValues::F64(&short)), descending: false });
        assert!(matches!(kahn(&g, &tie), Err(Error::LengthMismatch { what: "key", .. })));
        let nan = [1.0, f64::NAN];
        let tie = Tie::Priority(Key { values: Some(KeyValues::F64(&nan)), descending: false });
        assert_eq!(kahn(&g, &tie).unwrap_err(), Error::NanKey { node: 1 });
    }

    #[test]
    fn packing_is_used_only_when_the_range_fits() {
        let years = [1999i64, 2024, 1950];
        assert!(PackedKeyHeap::fitting(KeyValues::I64(&years), 3, false).is_some());
        let extremes = [i64::MIN, i64::MAX];
        assert!(PackedKeyHeap::fitting(KeyValues::I64(&extremes), 2, false).is_none());
        let fractional = [0.5, 1.0];
        assert!(PackedKeyHeap::fitting(KeyValues::F64(&fractional), 2, false).is_none());
        let integral = [-3.0, 1e12, -0.0];
        assert!(PackedKeyHeap::fitting(KeyValues::F64(&integral), 3, true).is_some());
    }

    #[test]
    fn negative_zero_ties_with_zero_and_signs_order_correctly() {
        let key = [0.0, -0.0, -1.0, f64::INFINITY, f64::NEG_INFINITY, 2.5];
        let ranks: Vec<u64> = (0..6).map(|v| KeyValues::F64(&key).rank(v)).collect();
        assert_eq!(ranks[0], ranks[1]);
        assert!(
            ranks[4] < ranks[2]
                && ranks[2] < ranks[0]
                && ranks[0] < ranks[5]
                && ranks[5] < ranks[3]
        );
        let ikey = [i64::MIN, -1, 0, i64::MAX];
        let ranks: Vec<u64> = (0..4).map(|v| KeyValues::I64(&ikey).rank(v)).collect();
        assert!(ranks.windows(2).all(|w| w[0] < w[1]));
    }
}
