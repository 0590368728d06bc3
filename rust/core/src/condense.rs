//! An order of every node of any graph: Kahn's algorithm on the condensation.
//!
//! Each strongly connected component is emitted as one contiguous block;
//! the blocks follow Kahn's algorithm on the component graph under the same
//! tie-break policies and semantics as [`crate::kahn`], with a component
//! standing in for a node:
//! * members of a component are emitted in ascending id (for the priority
//!   policy: ascending key, ties to the smaller id), and the component is
//!   represented by its first member;
//! * components without incoming edges from other components enter the
//!   ready set in ascending representative id;
//! * when a component is emitted, the successors of its members are examined
//!   member by member in stored row order; a component becomes ready when
//!   its last incoming edge from another component has been examined;
//! * the priority policy compares representatives (key, then id).
//!
//! On a DAG every component is a single node, so the result equals
//! [`crate::kahn`]'s order for the same policy.

use crate::csr::Count;
use crate::interrupt::Ticker;
use crate::ready::{with_ready, ReadySet, WithReady};
use crate::scc::strong_components_with_entries;
use crate::{alloc, Csr, Error, Idx, Key, Tie};

/// Ready items are a component's representative node `r` tagged as `2 r + 1`
/// when the component has several members and `2 r` when it is that node
/// alone, so a lone node is emitted without looking anything up; the ready
/// set keys an item by its node `item >> 1`.
const TAG_SHIFT: u32 = 1;

/// Every node of `csr` in an order where each strongly connected component
/// is contiguous and the components follow Kahn's algorithm on the
/// condensation under `tie` (see the module documentation).
///
/// O(V + E), plus a log factor for the priority policy.
pub fn condensed_order<I: Idx, P: Idx>(
    csr: &Csr<'_, I, P>,
    tie: &Tie<'_>,
) -> Result<Vec<I>, Error> {
    let n = csr.n();
    if let Tie::Priority(Key { values: Some(values), .. }) = tie {
        values.check(n)?;
    }
    let (components, entered) = strong_components_with_entries(csr)?;
    if 2 * csr.m() < u32::MAX as usize {
        run_policy::<I, P, u32>(csr, tie, components.labels, components.count, entered)
    } else {
        run_policy::<I, P, u64>(csr, tie, components.labels, components.count, entered)
    }
}

fn run_policy<I: Idx, P: Idx, W: Count>(
    csr: &Csr<'_, I, P>,
    tie: &Tie<'_>,
    labels: Vec<I>,
    count: usize,
    entered: Vec<I>,
) -> Result<Vec<I>, Error> {
    let n = csr.n();
    let components = crate::scc::Components { labels, count };
    let (start, mut members) = components.members();
    let labels = components.labels;

    let rank = |node: usize| -> u64 {
        match tie {
            Tie::Priority(Key { values: Some(values), descending }) => {
                values.rank(node) ^ if *descending { !0 } else { 0 }
            }
            Tie::Priority(Key { values: None, descending: true }) => !(node as u64),
            _ => node as u64,
        }
    };
    // A per-node count of edges still to come, stored doubled with the low
    // bit marking members of multi-node components.
    let mut waiting: Vec<W> = alloc::with_capacity("condensed order", n)?;
    waiting.extend(entered.iter().map(|e| W::from_usize(2 * e.to_usize())));
    drop(entered);
    for c in 0..count {
        let block = &mut members[start[c]..start[c + 1]];
        if block.len() > 1 {
            if let Tie::Priority(_) = tie {
                crate::interrupt::sort_by_distinct_key(block, |v| (rank(v.to_usize()), *v))?;
            }
            for v in block.iter() {
                let slot = &mut waiting[v.to_usize()];
                *slot = W::from_usize(slot.to_usize() | 1);
            }
        }
    }

    let mut order = alloc::with_capacity("order", n)?;
    let emit = Emit { csr, labels: &labels, start: &start, members: &members };
    let work = Run { emit, waiting: &mut waiting, order: &mut order };
    with_ready(tie, n, 2 * n, TAG_SHIFT, work)??;
    if order.len() != n {
        return Err(Error::InputChanged { what: "indices" });
    }
    Ok(order)
}

struct Run<'a, 'g, I: Idx, P: Idx, W> {
    emit: Emit<'a, 'g, I, P>,
    waiting: &'a mut [W],
    order: &'a mut Vec<I>,
}

impl<I: Idx, P: Idx, W: Count> WithReady for Run<'_, '_, I, P, W> {
    type Output = Result<(), Error>;
    fn run<R: ReadySet>(self, mut ready: R) -> Result<(), Error> {
        self.emit.run(self.waiting, &mut ready, self.order)
    }
}

struct Emit<'a, 'g, I: Idx, P: Idx> {
    csr: &'a Csr<'g, I, P>,
    labels: &'a [I],
    start: &'a [usize],
    members: &'a [I],
}

impl<I: Idx, P: Idx> Emit<'_, '_, I, P> {
    /// Kahn's loop over components. `waiting[v] >> 1` counts the edges into
    /// node `v` from other components not yet examined, and a component is
    /// ready once all its members are at zero. An edge whose target is at
    /// zero already lies inside the component being emitted (its members
    /// were all at zero when it became ready), so edges need no label lookup.
    fn run<W: Count, R: ReadySet>(
        &self,
        waiting: &mut [W],
        ready: &mut R,
        order: &mut Vec<I>,
    ) -> Result<(), Error> {
        let count = self.start.len() - 1;
        // pending[c]: members of a multi-node component c still waiting.
        let mut pending = alloc::filled("condensed order", count, 0usize)?;
        for (v, w) in waiting.iter().enumerate() {
            if w.to_usize() > 1 && w.to_usize() & 1 == 1 {
                pending[self.labels[v].to_usize()] += 1;
            }
        }
        // Ascending representative id (the first member of a component).
        for (u, w) in waiting.iter().enumerate() {
            let w = w.to_usize();
            if w == 0 {
                ready.push(2 * u);
            } else if w == 1 {
                let c = self.labels[u].to_usize();
                if pending[c] == 0 && self.members[self.start[c]].to_usize() == u {
                    ready.push(2 * u + 1);
                }
            }
        }
        let mut ticker = Ticker::new();
        while let Some(item) = ready.pop() {
            if item & 1 == 0 {
                let u = item >> 1;
                order.push(I::from_usize(u));
                self.examine(u, waiting, &mut pending, ready, &mut ticker)?;
            } else {
                let c = self.labels[item >> 1].to_usize();
                let block = &self.members[self.start[c]..self.start[c + 1]];
                order.extend_from_slice(block);
                for &u in block {
                    self.examine(u.to_usize(), waiting, &mut pending, ready, &mut ticker)?;
                }
            }
            if order.len() > waiting.len() {
                return Err(Error::InputChanged { what: "indices" });
            }
        }
        Ok(())
    }

    /// Examine the successors of an emitted node in stored row order.
    #[inline(always)]
    fn examine<W: Count, R: ReadySet>(
        &self,
        u: usize,
        waiting: &mut [W],
        pending: &mut [usize],
        ready: &mut R,
        ticker: &mut Ticker,
    ) -> Result<(), Error> {
        let row = self.csr.checked_row(u)?;
        ticker.tick_by(row.len() + 1)?;
        for &v in row {
            let v = v.to_usize();
            let Some(slot) = waiting.get_mut(v) else {
                return Err(Error::InputChanged { what: "indices" });
            };
            let left = slot.to_usize();
            if left < 2 {
                continue;
            }
            let left = left - 2;
            *slot = W::from_usize(left);
            if left == 0 {
                ready.push(2 * v);
            } else if left == 1 {
                let d = self.labels[v].to_usize();
                pending[d] = pending[d].wrapping_sub(1);
                if pending[d] == 0 {
                    ready.push(2 * self.members[self.start[d]].to_usize() + 1);
                }
            }
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::edges::edges_to_csr;
    use crate::kahn::kahn;
    use crate::rng::SplitMix64;
    use crate::scc::strong_components;
    use crate::scc::tests::random_csr;
    use crate::testing::random_dag;
    use crate::KeyValues;

    #[test]
    fn on_a_dag_every_policy_equals_kahn() {
        let mut rng = SplitMix64::new(17);
        for round in 0..400 {
            let (indptr, indices) = random_dag(&mut rng, 13, 30);
            let g = Csr::new(&indptr, &indices).unwrap();
            let key: Vec<f64> = (0..g.n()).map(|_| rng.below(3) as f64).collect();
            let ties = [
                Tie::Queue,
                Tie::Stack,
                Tie::Random { seed: round },
                Tie::Priority(Key::default()),
                Tie::Priority(Key { values: None, descending: true }),
                Tie::Priority(Key { values: Some(KeyValues::F64(&key)), descending: false }),
                Tie::Priority(Key { values: Some(KeyValues::F64(&key)), descending: true }),
            ];
            for tie in ties {
                let expected = kahn(&g, &tie).unwrap().order;
                assert_eq!(condensed_order(&g, &tie).unwrap(), expected, "{tie:?}");
            }
        }
    }

    #[test]
    fn components_are_contiguous_and_in_topological_order() {
        let mut rng = SplitMix64::new(23);
        for round in 0..400 {
            let (indptr, indices) = random_csr(&mut rng, 12, 30);
            let g = Csr::new(&indptr, &indices).unwrap();
            let key: Vec<i64> = (0..g.n()).map(|_| rng.below(4) as i64).collect();
            let labels = strong_components(&g).unwrap().labels;
            for tie in [
                Tie::Queue,
                Tie::Stack,
                Tie::Random { seed: round },
                Tie::Priority(Key { values: Some(KeyValues::I64(&key)), descending: false }),
            ] {
                let order = condensed_order(&g, &tie).unwrap();
                let mut seen = order.clone();
                seen.sort();
                assert!(seen.iter().enumerate().all(|(k, &v)| v == k as i64));
                // Blocks: consecutive runs of one label; no label runs twice.
                let blocks: Vec<i64> =
                    order.iter().map(|&v| labels[v as usize]).fold(Vec::new(), |mut acc, l| {
                        if acc.last() != Some(&l) {
                            acc.push(l);
                        }
                        acc
                    });
                let mut distinct = blocks.clone();
                distinct.sort();
                distinct.dedup();
                assert_eq!(distinct.len(), blocks.len(), "a component is split");
                let mut position = vec![0usize; g.n()];
                for (p, &v) in order.iter().enumerate() {
                    position[v as usize] = p;
                }
                for u in 0..g.n() {
                    for &v in g.row(u) {
                        let v = v as usize;
                        if labels[u] != labels[v] {
                            assert!(position[u] < position[v]);
                        }
                    }
                }
                // Inside a block: ascending id, or ascending (key, id).
                for w in order.windows(2) {
                    let (a, b) = (w[0] as usize, w[1] as usize);
                    if labels[a] == labels[b] {
                        match tie {
                            Tie::Priority(_) => assert!((key[a], a) < (key[b], b)),
                            _ => assert!(a < b),
                        }
                    }
                }
            }
        }
    }

    #[test]
    fn two_cycles_in_a_row() {
        // {0, 2} -> {1, 3}, with 4 alone and a self-loop on 4.
        let src = [2i32, 0, 0, 1, 3, 4];
        let dst = [0i32, 2, 3, 3, 1, 4];
        let g = edges_to_csr(&src, &dst, 5, false).unwrap();
        let csr = Csr::new(&g.indptr, &g.indices).unwrap();
        assert_eq!(condensed_order(&csr, &Tie::Queue).unwrap(), vec![0, 2, 4, 1, 3]);
        assert_eq!(condensed_order(&csr, &Tie::Stack).unwrap(), vec![4, 0, 2, 1, 3]);
    }

    #[test]
    fn key_length_is_checked() {
        let csr = Csr::new(&[0i32, 0, 0], &[]).unwrap();
        let key = [1i64];
        let tie = Tie::Priority(Key { values: Some(KeyValues::I64(&key)), descending: false });
        assert!(matches!(
            condensed_order(&csr, &tie),
            Err(Error::LengthMismatch { what: "key", .. })
        ));
    }
}
