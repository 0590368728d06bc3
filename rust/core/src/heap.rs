//! A 4-ary min-heap of plain integers, for the priority policy's ready set.
//!
//! Entries are packed so one integer comparison orders them by key first
//! and node id second. Four children per node halve the depth of a binary
//! heap, and the four children of a node share a cache line or two, which
//! matters once the ready set outgrows the caches.

/// A min-heap with four children per node.
#[derive(Debug, Clone, Default)]
pub struct QuadHeap<T> {
    items: Vec<T>,
}

impl<T: Copy + Ord> QuadHeap<T> {
    pub fn new() -> Self {
        QuadHeap { items: Vec::new() }
    }

    pub fn len(&self) -> usize {
        self.items.len()
    }

    pub fn is_empty(&self) -> bool {
        self.items.is_empty()
    }

    /// The smallest item, without removing it.
    #[inline]
    pub fn peek(&self) -> Option<T> {
        self.items.first().copied()
    }

    /// Add `item`, moving larger parents down until its place is found.
    #[inline]
    pub fn push(&mut self, item: T) {
        let mut hole = self.items.len();
        self.items.push(item);
        while hole > 0 {
            let parent = (hole - 1) / 4;
            let above = self.items[parent];
            if above <= item {
                break;
            }
            self.items[hole] = above;
            hole = parent;
        }
        self.items[hole] = item;
    }

    /// Remove and return the smallest item.
    #[inline]
    pub fn pop(&mut self) -> Option<T> {
        let last = self.items.pop()?;
        let len = self.items.len();
        if len == 0 {
            return Some(last);
        }
        let top = self.items[0];
        // Sift the former last item down from the root.
        let mut hole = 0;
        loop {
            let first = 4 * hole + 1;
            if first >= len {
                break;
            }
            let end = (first + 4).min(len);
            let mut best = first;
            for child in first + 1..end {
                if self.items[child] < self.items[best] {
                    best = child;
                }
            }
            if self.items[best] >= last {
                break;
            }
            self.items[hole] = self.items[best];
            hole = best;
        }
        self.items[hole] = last;
        Some(top)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rng::SplitMix64;

    #[test]
    fn pops_in_sorted_order_like_a_sort() {
        let mut rng = SplitMix64::new(11);
        for round in 0..200 {
            let mut heap = QuadHeap::new();
            let mut plain = Vec::new();
            for _ in 0..round {
                // Interleave pushes and pops as Kahn's loop does.
                let value = rng.below(50);
                heap.push(value);
                plain.push(value);
                if rng.below(3) == 0 {
                    plain.sort_unstable_by(|a, b| b.cmp(a));
                    assert_eq!(heap.pop(), plain.pop());
                }
            }
            plain.sort_unstable_by(|a, b| b.cmp(a));
            while let Some(expected) = plain.pop() {
                assert_eq!(heap.pop(), Some(expected));
            }
            assert!(heap.is_empty() && heap.pop().is_none());
        }
    }
}
