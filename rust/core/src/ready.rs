//! The ready set: every policy that decides which ready node comes next.
//!
//! Kahn's order ([`crate::kahn`]), the condensed order ([`crate::condense`])
//! and list scheduling ([`crate::schedule`]) all keep a set of items whose
//! predecessors are done and take one out at a time; they differ only in
//! which one. This module owns that choice, once:
//!
//! * queue: the oldest item (first in, first out);
//! * stack: the newest item (last in, first out);
//! * priority: the smallest key, ties to the smaller item, on the packed
//!   4-ary heap of [`crate::heap`] (the id as its own key, a key packed
//!   beside the id in 64 bits when the key range allows, else a 128-bit
//!   (key rank, id) entry);
//! * random: a uniform pick from a seeded SplitMix64 stream: draw
//!   `below(len)` over the items in insertion order, take that item and move
//!   the last item into its place (the draw behind every `seed` promise);
//! * critical (schedules): the largest precomputed longest-remaining-path
//!   value first, ties to the smaller id: a priority with complemented keys.
//!
//! An item is a `usize` that names a node as `item >> shift` (the condensed
//! order tags its items with one low bit, so it uses `shift = 1`); keys are
//! looked up by that node, and equal keys are broken by the whole item,
//! which orders like the node.
//!
//! The set is an engine part, not an executor: anything that needs "take
//! up to k ready, report them finished or failed" (a later `Frontier`)
//! holds a [`ReadySet`] and feeds it the successors it releases.

use crate::heap::QuadHeap;
use crate::rng::SplitMix64;
use crate::Error;

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

    /// Check the length (`n`) and that no float key is NaN.
    pub(crate) fn check(&self, n: usize) -> Result<(), Error> {
        if self.len() != n {
            return Err(Error::LengthMismatch { what: "key", expected: n, got: self.len() });
        }
        if let KeyValues::F64(v) = self {
            if let Some(node) = crate::interrupt::position(v, |x| x.is_nan())? {
                return Err(Error::NanKey { node });
            }
        }
        Ok(())
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

/// Which ready item is taken next.
#[derive(Debug, Clone, Copy)]
pub enum Tie<'a> {
    /// First in, first out.
    Queue,
    /// Last in, first out.
    Stack,
    /// Smallest key first, ties to the smaller node id.
    Priority(Key<'a>),
    /// Uniformly random among the ready items, from this seed.
    Random { seed: u64 },
}

/// A set of ready items under one policy.
pub trait ReadySet {
    fn push(&mut self, item: usize);
    fn pop(&mut self) -> Option<usize>;
    /// The item most likely to be popped next, if cheap to tell (used only
    /// to prefetch; never changes the result).
    #[inline(always)]
    fn peek(&self) -> Option<usize> {
        None
    }
}

/// First in, first out over a growing buffer (items are never re-queued, so
/// the buffer holds at most as many items as ever become ready).
#[derive(Debug, Default)]
pub struct Queue {
    items: Vec<usize>,
    head: usize,
}

impl ReadySet for Queue {
    #[inline]
    fn push(&mut self, item: usize) {
        self.items.push(item)
    }
    #[inline]
    fn pop(&mut self) -> Option<usize> {
        let item = self.items.get(self.head).copied();
        self.head += item.is_some() as usize;
        item
    }
    #[inline]
    fn peek(&self) -> Option<usize> {
        self.items.get(self.head).copied()
    }
}

/// Last in, first out.
#[derive(Debug, Default)]
pub struct Stack {
    items: Vec<usize>,
}

impl ReadySet for Stack {
    #[inline]
    fn push(&mut self, item: usize) {
        self.items.push(item)
    }
    #[inline]
    fn pop(&mut self) -> Option<usize> {
        self.items.pop()
    }
    #[inline]
    fn peek(&self) -> Option<usize> {
        self.items.last().copied()
    }
}

/// Smallest (or, flipped, largest) item first: the id is its own key.
#[derive(Debug)]
pub struct IdHeap {
    heap: QuadHeap<u64>,
    /// XOR mask: all ones reverses the order.
    flip: u64,
}

impl IdHeap {
    /// An empty heap: smallest item first, or largest when `descending`.
    pub fn new(descending: bool) -> Self {
        IdHeap { heap: QuadHeap::new(), flip: if descending { !0 } else { 0 } }
    }
}

impl ReadySet for IdHeap {
    #[inline]
    fn push(&mut self, item: usize) {
        self.heap.push(item as u64 ^ self.flip)
    }
    #[inline]
    fn pop(&mut self) -> Option<usize> {
        self.heap.pop().map(|entry| (entry ^ self.flip) as usize)
    }
    #[inline]
    fn peek(&self) -> Option<usize> {
        self.heap.peek().map(|entry| (entry ^ self.flip) as usize)
    }
}

/// Smallest key first, ties to the smaller item: entries pack the key's rank
/// above the item, so one integer comparison decides.
#[derive(Debug)]
pub struct KeyHeap<'a> {
    heap: QuadHeap<u128>,
    values: KeyValues<'a>,
    /// XOR mask on the rank: all ones reverses the key order, not the id order.
    flip: u64,
    shift: u32,
}

impl ReadySet for KeyHeap<'_> {
    #[inline]
    fn push(&mut self, item: usize) {
        let rank = self.values.rank(item >> self.shift) ^ self.flip;
        self.heap.push(((rank as u128) << 64) | item as u128)
    }
    #[inline]
    fn pop(&mut self) -> Option<usize> {
        self.heap.pop().map(|entry| entry as u64 as usize)
    }
    #[inline]
    fn peek(&self) -> Option<usize> {
        self.heap.peek().map(|entry| entry as u64 as usize)
    }
}

/// Integer-valued keys whose range fits beside the item in 64 bits (years,
/// counts, small scores: the common case) are packed as
/// `(key - min) << item_bits | item`: half the heap memory of [`KeyHeap`]
/// and a single 64-bit comparison.
#[derive(Debug)]
pub struct PackedKeyHeap<'a> {
    heap: QuadHeap<u64>,
    values: KeyValues<'a>,
    /// The key that packs to 0: the minimum, or the maximum when descending.
    base: i128,
    descending: bool,
    item_bits: u32,
    shift: u32,
}

impl<'a> PackedKeyHeap<'a> {
    /// The packed layout for `values` and items below `items`, if every key
    /// is an integer (floats included, when integral) and the range fits.
    pub(crate) fn fitting(
        values: KeyValues<'a>,
        items: usize,
        shift: u32,
        descending: bool,
    ) -> Option<Self> {
        let item_bits = usize::BITS - items.saturating_sub(1).leading_zeros();
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
        if item_bits >= 64 || span >> (64 - item_bits) != 0 {
            return None;
        }
        let base = if descending { high } else { low };
        Some(PackedKeyHeap { heap: QuadHeap::new(), values, base, descending, item_bits, shift })
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

impl ReadySet for PackedKeyHeap<'_> {
    #[inline]
    fn push(&mut self, item: usize) {
        let key = self.key(item >> self.shift);
        let offset = if self.descending { self.base - key } else { key - self.base };
        self.heap.push(((offset as u64) << self.item_bits) | item as u64)
    }
    #[inline]
    fn pop(&mut self) -> Option<usize> {
        let mask = (1u64 << self.item_bits) - 1;
        self.heap.pop().map(|entry| (entry & mask) as usize)
    }
    #[inline]
    fn peek(&self) -> Option<usize> {
        let mask = (1u64 << self.item_bits) - 1;
        self.heap.peek().map(|entry| (entry & mask) as usize)
    }
}

/// A uniform pick from a seeded stream (see the module documentation for
/// the exact draw, which the seed promise depends on).
#[derive(Debug)]
pub struct RandomPick {
    items: Vec<usize>,
    rng: SplitMix64,
}

impl RandomPick {
    pub fn new(seed: u64) -> Self {
        RandomPick { items: Vec::new(), rng: SplitMix64::new(seed) }
    }
}

impl ReadySet for RandomPick {
    #[inline]
    fn push(&mut self, item: usize) {
        self.items.push(item)
    }
    #[inline]
    fn pop(&mut self) -> Option<usize> {
        if self.items.is_empty() {
            return None;
        }
        let pick = self.rng.below(self.items.len() as u64) as usize;
        Some(self.items.swap_remove(pick))
    }
}

/// Work that runs with whichever ready set a policy selects; the loop is
/// compiled once per set, so the choice costs nothing per item.
pub trait WithReady {
    type Output;
    fn run<R: ReadySet>(self, ready: R) -> Self::Output;
}

/// Run `work` with the ready set of `tie` for items below `items` naming
/// nodes `item >> shift` (keys, if any, are checked against `n` nodes).
pub fn with_ready<W: WithReady>(
    tie: &Tie<'_>,
    n: usize,
    items: usize,
    shift: u32,
    work: W,
) -> Result<W::Output, Error> {
    Ok(match *tie {
        Tie::Queue => work.run(Queue::default()),
        Tie::Stack => work.run(Stack::default()),
        Tie::Random { seed } => work.run(RandomPick::new(seed)),
        Tie::Priority(Key { values: None, descending }) => {
            work.run(IdHeap { heap: QuadHeap::new(), flip: if descending { !0 } else { 0 } })
        }
        Tie::Priority(Key { values: Some(values), descending }) => {
            values.check(n)?;
            match PackedKeyHeap::fitting(values, items, shift, descending) {
                Some(packed) => work.run(packed),
                None => work.run(KeyHeap {
                    heap: QuadHeap::new(),
                    values,
                    flip: if descending { !0 } else { 0 },
                    shift,
                }),
            }
        }
    })
}

/// The critical (longest remaining path first) ready set of list
/// scheduling: `sort_keys[v]` orders like `v`'s remaining path, largest
/// first, ties to the smaller id.
pub fn critical<'a>(complemented: &'a [u64]) -> impl ReadySet + 'a {
    let values = KeyValues::U64(complemented);
    match PackedKeyHeap::fitting(values, complemented.len(), 0, false) {
        Some(packed) => Either::Packed(packed),
        None => Either::Wide(KeyHeap { heap: QuadHeap::new(), values, flip: 0, shift: 0 }),
    }
}

enum Either<'a> {
    Packed(PackedKeyHeap<'a>),
    Wide(KeyHeap<'a>),
}

impl ReadySet for Either<'_> {
    #[inline]
    fn push(&mut self, item: usize) {
        match self {
            Either::Packed(h) => h.push(item),
            Either::Wide(h) => h.push(item),
        }
    }
    #[inline]
    fn pop(&mut self) -> Option<usize> {
        match self {
            Either::Packed(h) => h.pop(),
            Either::Wide(h) => h.pop(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Pops everything after pushing `items` in order.
    fn drain<R: ReadySet>(mut ready: R, items: &[usize]) -> Vec<usize> {
        for &item in items {
            ready.push(item);
        }
        std::iter::from_fn(|| ready.pop()).collect()
    }

    struct Drain<'a>(&'a [usize]);
    impl WithReady for Drain<'_> {
        type Output = Vec<usize>;
        fn run<R: ReadySet>(self, ready: R) -> Vec<usize> {
            drain(ready, self.0)
        }
    }

    #[test]
    fn each_policy_pops_as_documented() {
        let items = [3usize, 0, 4, 1, 2];
        let run = |tie: Tie<'_>| with_ready(&tie, 5, 5, 0, Drain(&items)).unwrap();
        // Common practice: FIFO keeps insertion order, LIFO reverses it.
        assert_eq!(run(Tie::Queue), items);
        assert_eq!(run(Tie::Stack), vec![2, 1, 4, 0, 3]);
        assert_eq!(run(Tie::Priority(Key::default())), vec![0, 1, 2, 3, 4]);
        let desc = Key { values: None, descending: true };
        assert_eq!(run(Tie::Priority(desc)), vec![4, 3, 2, 1, 0]);
        let key = [2.5, 1.0, 2.5, -1.0, 0.0];
        let by_key = Key { values: Some(KeyValues::F64(&key)), descending: false };
        assert_eq!(run(Tie::Priority(by_key)), vec![3, 4, 1, 0, 2]);
        let by_key = Key { values: Some(KeyValues::F64(&key)), descending: true };
        assert_eq!(run(Tie::Priority(by_key)), vec![0, 2, 1, 4, 3]);
        // Random: the documented draw, replayed by hand.
        let mut rng = SplitMix64::new(5);
        let mut plain = items.to_vec();
        let mut expected = Vec::new();
        while !plain.is_empty() {
            let pick = rng.below(plain.len() as u64) as usize;
            expected.push(plain.swap_remove(pick));
        }
        assert_eq!(run(Tie::Random { seed: 5 }), expected);
        // Critical: largest value first, ties to the smaller id.
        let values = [3u64, 9, 3, 0, 9];
        let complemented: Vec<u64> = values.iter().map(|v| !v).collect();
        assert_eq!(drain(critical(&complemented), &items), vec![1, 4, 0, 2, 3]);
    }

    #[test]
    fn tagged_items_are_keyed_by_their_node() {
        // Items 2 v + tag name node v (shift 1), as the condensed order uses.
        let key = [7i64, -2, 7];
        let tie = Tie::Priority(Key { values: Some(KeyValues::I64(&key)), descending: false });
        let items = [5usize, 0, 2];
        assert_eq!(with_ready(&tie, 3, 6, 1, Drain(&items)).unwrap(), vec![2, 0, 5]);
    }

    #[test]
    fn packing_is_used_only_when_the_range_fits() {
        let years = [1999i64, 2024, 1950];
        assert!(PackedKeyHeap::fitting(KeyValues::I64(&years), 3, 0, false).is_some());
        let extremes = [i64::MIN, i64::MAX];
        assert!(PackedKeyHeap::fitting(KeyValues::I64(&extremes), 2, 0, false).is_none());
        let fractional = [0.5, 1.0];
        assert!(PackedKeyHeap::fitting(KeyValues::F64(&fractional), 2, 0, false).is_none());
        let integral = [-3.0, 1e12, -0.0];
        assert!(PackedKeyHeap::fitting(KeyValues::F64(&integral), 3, 0, true).is_some());
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
