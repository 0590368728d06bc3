//! Quality measures of a given topological order.
//!
//! Every valid order is correct, but orders differ in how much work is
//! available at once, how much must be kept in memory and how far edges
//! reach. Given a graph and an order, [`order_metrics`] measures, in O(V + E):
//!
//! * the ready set when the order is replayed by Kahn's loop: before step `t`
//!   it holds the nodes of remaining in-degree 0 not yet emitted, i.e. the
//!   nodes `v` with `ready_at(v) <= t <= pos(v)`, where `ready_at(v)` is one
//!   past the position of `v`'s last predecessor (0 for a source);
//! * the live set after step `t`: emitted nodes that still have a successor
//!   not yet emitted, i.e. the `u` with `pos(u) <= t < last(u)`, where
//!   `last(u)` is the position of `u`'s last successor;
//! * edge spans `pos(v) - pos(u)` over the stored edges (duplicates count).
//!
//! [`key_agreement`] compares an order with a reference ranking of the
//! nodes: over all node pairs (Kendall-style, by merge-sort inversion count,
//! O(V log V)), over consecutive steps, and over the edges.

use crate::interrupt::{Ticker, STRIDE};
use crate::verify::{positions, Violation};
use crate::{alloc, Csr, Error, Idx};

/// What [`order_metrics`] measures.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct OrderMetrics<I> {
    /// `ready_sizes[t]`: ready-set size just before step `t` emits `order[t]`.
    pub ready_sizes: Vec<I>,
    /// `live_sizes[t]`: live-set size just after step `t`.
    pub live_sizes: Vec<I>,
    pub ready_peak: usize,
    /// Sum of `ready_sizes`.
    pub ready_total: u128,
    pub live_peak: usize,
    /// Sum of `live_sizes`.
    pub live_total: u128,
    /// Sum of `pos(v) - pos(u)` over the stored edges.
    pub span_total: u128,
    /// Largest edge span (0 without edges).
    pub span_max: usize,
}

/// Measure `order` on `csr`.
///
/// `Ok(Err(violation))` when `order` is not a topological order (a bad
/// entry, or the first backward edge in stored order, as
/// [`crate::verify::verify`] reports it); `Err` when the graph is malformed.
pub fn order_metrics<I: Idx, W: Idx, J: Idx>(
    csr: &Csr<'_, I, W>,
    order: &[J],
) -> Result<Result<OrderMetrics<I>, Violation>, Error> {
    let n = csr.n();
    let position = match positions(order, n)? {
        Ok(position) => position,
        Err(violation) => {
            csr.check_indices()?;
            return Ok(Err(violation));
        }
    };
    // A malformed graph outranks a bad order, so check it before measuring.
    csr.check_indices()?;
    if n <= u32::MAX as usize {
        measure::<I, W, J, u32>(csr, &position)
    } else {
        measure::<I, W, J, u64>(csr, &position)
    }
}

/// The measures of a valid permutation `position`, with per-node slots in
/// width `P`: each node's position and ready step sit side by side, so the
/// per-edge work costs one random memory access instead of two.
fn measure<I: Idx, W: Idx, J: Idx, P: Idx>(
    csr: &Csr<'_, I, W>,
    position: &[J],
) -> Result<Result<OrderMetrics<I>, Violation>, Error> {
    let n = csr.n();
    // slot[v] = (pos(v), ready_at(v)).
    let mut ticker = Ticker::new();
    let mut slot: Vec<(P, P)> = alloc::with_capacity("order metrics", n)?;
    for part in position.chunks(STRIDE as usize) {
        ticker.tick_by(part.len())?;
        slot.extend(part.iter().map(|p| (P::from_usize(p.to_usize()), P::default())));
    }
    // live_change[t]: nodes becoming live at step t minus nodes ceasing to be.
    let mut live_change = alloc::filled("order metrics", n + 1, 0i64)?;
    let mut span_total: u128 = 0;
    let mut span_max = 0usize;
    let mut live_total: u128 = 0;
    for u in 0..n {
        let pos_u = slot[u].0.to_usize();
        let mut last = pos_u;
        let (start, row) = csr.checked_row_at(u)?;
        ticker.tick_by(row.len() + 1)?;
        for (offset, v) in row.iter().enumerate() {
            let edge = start + offset;
            // Endpoints were checked by the caller (`check_indices`), but
            // may have changed since.
            let v = v.to_usize();
            let Some((pos_v, ready_v)) = slot.get_mut(v) else {
                return Err(Error::InputChanged { what: "indices" });
            };
            let pos_v = pos_v.to_usize();
            if pos_v <= pos_u {
                return Ok(Err(Violation::Edge { edge, u, v, pos_u, pos_v }));
            }
            let span = pos_v - pos_u;
            span_total += span as u128;
            span_max = span_max.max(span);
            last = last.max(pos_v);
            if ready_v.to_usize() < pos_u + 1 {
                *ready_v = P::from_usize(pos_u + 1);
            }
        }
        if last > pos_u {
            live_change[pos_u] += 1;
            live_change[last] -= 1;
            live_total += (last - pos_u) as u128;
        }
    }

    // Before step t the ready set is {v : ready_at(v) <= t} minus the t
    // nodes already emitted (each emitted node was ready before its step).
    let mut became_ready = alloc::filled("order metrics", n + 1, 0usize)?;
    let mut ready_total: u128 = 0;
    for &(pos_v, ready_v) in &slot {
        ticker.tick()?;
        became_ready[ready_v.to_usize()] += 1;
        ready_total += (pos_v.to_usize() + 1 - ready_v.to_usize()) as u128;
    }
    let mut ready_sizes = alloc::with_capacity("ready sizes", n)?;
    let mut live_sizes = alloc::with_capacity("live sizes", n)?;
    let (mut ready_so_far, mut live) = (0usize, 0i64);
    let (mut ready_peak, mut live_peak) = (0usize, 0usize);
    for t in 0..n {
        ticker.tick()?;
        ready_so_far += became_ready[t];
        let ready = ready_so_far - t;
        ready_peak = ready_peak.max(ready);
        ready_sizes.push(I::from_usize(ready));
        live += live_change[t];
        let live = live as usize;
        live_peak = live_peak.max(live);
        live_sizes.push(I::from_usize(live));
    }
    Ok(Ok(OrderMetrics {
        ready_sizes,
        live_sizes,
        ready_peak,
        ready_total,
        live_peak,
        live_total,
        span_total,
        span_max,
    }))
}

/// Pairs counted by agreement with a reference ranking.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct Agreement {
    /// The earlier node has the smaller rank.
    pub agree: u128,
    /// The earlier node has the larger rank.
    pub disagree: u128,
    /// Both ranks are equal.
    pub tied: u128,
}

/// Agreement of an order with a ranking, three ways.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct KeyAgreement {
    /// Over all `n (n - 1) / 2` node pairs.
    pub pairs: Agreement,
    /// Over the `n - 1` consecutive pairs `(order[t], order[t + 1])`.
    pub steps: Agreement,
    /// Over the stored edges `u -> v` (`u` comes first in any valid order,
    /// so this does not depend on the order, only on graph and ranking).
    pub edges: Agreement,
}

/// Compare `order` (a permutation of `0..n`, already checked by the caller
/// with [`order_metrics`]) with `rank`, one value in `0..n` per node.
pub fn key_agreement<I: Idx, W: Idx, J: Idx>(
    csr: &Csr<'_, I, W>,
    order: &[J],
    rank: &[i64],
) -> Result<KeyAgreement, Error> {
    let n = csr.n();
    for (what, len) in [("order", order.len()), ("key rank", rank.len())] {
        if len != n {
            return Err(Error::LengthMismatch { what, expected: n, got: len });
        }
    }
    let out_of_range =
        |what, position: usize, value: i128| Error::IndexOutOfRange { what, position, value, n };
    if let Some(node) = crate::interrupt::position(rank, |&r| r < 0 || r as usize >= n.max(1))? {
        return Err(out_of_range("key rank", node, rank[node] as i128));
    }
    let mut ticker = Ticker::new();
    let mut sequence = alloc::with_capacity("key agreement", n)?;
    for (position, v) in order.iter().enumerate() {
        ticker.tick()?;
        match rank.get(v.to_usize()) {
            Some(&r) => sequence.push(r as usize),
            None => return Err(out_of_range("order", position, v.to_i128())),
        }
    }

    let mut steps = Agreement::default();
    for pair in sequence.windows(2) {
        ticker.tick()?;
        tally(&mut steps, pair[0], pair[1]);
    }
    let mut edges = Agreement::default();
    for u in 0..n {
        let (start, row) = csr.checked_row_at(u)?;
        ticker.tick_by(row.len() + 1)?;
        for (offset, v) in row.iter().enumerate() {
            let Some(&rank_v) = rank.get(v.to_usize()) else {
                return Err(out_of_range("indices", start + offset, v.to_i128()));
            };
            tally(&mut edges, rank[u] as usize, rank_v as usize);
        }
    }

    let mut group = alloc::filled("key agreement", n, 0usize)?;
    for &r in &sequence {
        ticker.tick()?;
        group[r] += 1;
    }
    let tied: u128 = group.iter().map(|&c| (c as u128) * (c as u128).saturating_sub(1) / 2).sum();
    let all = (n as u128) * (n as u128).saturating_sub(1) / 2;
    let disagree = count_inversions(&mut sequence, &mut ticker)?;
    let pairs = Agreement { agree: all - disagree - tied, disagree, tied };
    Ok(KeyAgreement { pairs, steps, edges })
}

#[inline]
fn tally(into: &mut Agreement, first: usize, second: usize) {
    match first.cmp(&second) {
        std::cmp::Ordering::Less => into.agree += 1,
        std::cmp::Ordering::Greater => into.disagree += 1,
        std::cmp::Ordering::Equal => into.tied += 1,
    }
}

/// Number of pairs `i < j` with `values[i] > values[j]` (equal values are
/// not inversions), by bottom-up merge sort; sorts `values`.
fn count_inversions(values: &mut Vec<usize>, ticker: &mut Ticker) -> Result<u128, Error> {
    let n = values.len();
    let mut buffer = alloc::filled("key agreement", n, 0usize)?;
    let mut inversions: u128 = 0;
    let mut width = 1;
    while width < n {
        for left in (0..n).step_by(2 * width) {
            let middle = (left + width).min(n);
            let right = (left + 2 * width).min(n);
            let (mut i, mut j, mut k) = (left, middle, left);
            while i < middle && j < right {
                ticker.tick()?;
                if values[i] <= values[j] {
                    buffer[k] = values[i];
                    i += 1;
                } else {
                    buffer[k] = values[j];
                    j += 1;
                    inversions += (middle - i) as u128;
                }
                k += 1;
            }
            buffer[k..k + middle - i].copy_from_slice(&values[i..middle]);
            k += middle - i;
            buffer[k..k + right - j].copy_from_slice(&values[j..right]);
        }
        std::mem::swap(values, &mut buffer);
        width *= 2;
    }
    Ok(inversions)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::kahn::{kahn, Tie};
    use crate::rng::SplitMix64;
    use crate::testing::random_dag;

    /// Each measure straight from its definition, step by step (O(n^2)).
    fn reference(indptr: &[i64], indices: &[i64], order: &[i64]) -> OrderMetrics<i64> {
        let n = order.len();
        let edges: Vec<(usize, usize)> = (0..n)
            .flat_map(|u| {
                indices[indptr[u] as usize..indptr[u + 1] as usize]
                    .iter()
                    .map(move |&v| (u, v as usize))
            })
            .collect();
        let mut emitted = vec![false; n];
        let (mut ready_sizes, mut live_sizes) = (Vec::new(), Vec::new());
        for &x in order {
            let ready = (0..n)
                .filter(|&v| !emitted[v] && edges.iter().all(|&(a, b)| b != v || emitted[a]))
                .count();
            ready_sizes.push(ready as i64);
            emitted[x as usize] = true;
            let live = (0..n)
                .filter(|&u| emitted[u] && edges.iter().any(|&(a, b)| a == u && !emitted[b]))
                .count();
            live_sizes.push(live as i64);
        }
        let mut pos = vec![0usize; n];
        for (p, &v) in order.iter().enumerate() {
            pos[v as usize] = p;
        }
        let spans: Vec<usize> = edges.iter().map(|&(a, b)| pos[b] - pos[a]).collect();
        OrderMetrics {
            ready_peak: ready_sizes.iter().copied().max().unwrap_or(0) as usize,
            ready_total: ready_sizes.iter().sum::<i64>() as u128,
            live_peak: live_sizes.iter().copied().max().unwrap_or(0) as usize,
            live_total: live_sizes.iter().sum::<i64>() as u128,
            span_total: spans.iter().sum::<usize>() as u128,
            span_max: spans.iter().copied().max().unwrap_or(0),
            ready_sizes,
            live_sizes,
        }
    }

    #[test]
    fn measures_match_their_definitions() {
        let mut rng = SplitMix64::new(11);
        for round in 0..300 {
            let (indptr, indices) = random_dag(&mut rng, 14, 40);
            let g = Csr::new(&indptr, &indices).unwrap();
            for tie in [Tie::Queue, Tie::Stack, Tie::Random { seed: round }] {
                let order = kahn(&g, &tie).unwrap().order;
                let ours = order_metrics(&g, &order).unwrap().unwrap();
                assert_eq!(ours, reference(&indptr, &indices, &order));
            }
        }
    }

    #[test]
    fn chain_and_isolated_nodes() {
        // Common practice: a chain has one ready node at a time and one live
        // node between steps; n isolated nodes are all ready at the start.
        let chain = Csr::new(&[0i32, 1, 2, 3, 3], &[1, 2, 3]).unwrap();
        let m = order_metrics(&chain, &[0i32, 1, 2, 3]).unwrap().unwrap();
        assert_eq!(m.ready_sizes, vec![1, 1, 1, 1]);
        assert_eq!(m.live_sizes, vec![1, 1, 1, 0]);
        assert_eq!((m.span_total, m.span_max), (3, 1));
        let isolated = Csr::new(&[0i64; 6], &[]).unwrap();
        let m = order_metrics(&isolated, &[4i64, 3, 2, 1, 0]).unwrap().unwrap();
        assert_eq!(m.ready_sizes, vec![5, 4, 3, 2, 1]);
        assert_eq!(m.live_peak, 0);
    }

    #[test]
    fn bad_orders_are_violations_and_bad_graphs_errors() {
        let g = Csr::new(&[0i64, 1, 1], &[1]).unwrap();
        assert!(matches!(
            order_metrics(&g, &[1i64, 0]).unwrap(),
            Err(Violation::Edge { u: 0, v: 1, .. })
        ));
        assert!(matches!(
            order_metrics(&g, &[0i64, 0]).unwrap(),
            Err(Violation::Duplicate { node: 0, .. })
        ));
        let bad = Csr::new(&[0i64, 1, 1], &[5]).unwrap();
        assert!(matches!(
            order_metrics(&bad, &[0i64, 1]),
            Err(Error::IndexOutOfRange { value: 5, .. })
        ));
        assert!(matches!(
            order_metrics(&bad, &[1i64, 0]),
            Err(Error::IndexOutOfRange { value: 5, .. })
        ));
    }

    #[test]
    fn agreement_counts_match_all_pairs() {
        let mut rng = SplitMix64::new(5);
        for _ in 0..300 {
            let (indptr, indices) = random_dag(&mut rng, 14, 40);
            let g = Csr::new(&indptr, &indices).unwrap();
            let n = g.n();
            let rank: Vec<i64> =
                (0..n).map(|_| rng.below(n.max(1) as u64 / 2 + 1) as i64).collect();
            let order = kahn(&g, &Tie::Random { seed: 3 }).unwrap().order;
            let ours = key_agreement(&g, &order, &rank).unwrap();
            let mut pairs = Agreement::default();
            for i in 0..n {
                for j in i + 1..n {
                    tally(
                        &mut pairs,
                        rank[order[i] as usize] as usize,
                        rank[order[j] as usize] as usize,
                    );
                }
            }
            assert_eq!(ours.pairs, pairs);
            let total = ours.steps.agree + ours.steps.disagree + ours.steps.tied;
            assert_eq!(total as usize, n.saturating_sub(1));
            let total = ours.edges.agree + ours.edges.disagree + ours.edges.tied;
            assert_eq!(total as usize, g.m());
        }
    }

    #[test]
    fn agreement_rejects_bad_ranks() {
        let g = Csr::new(&[0i64, 0, 0], &[]).unwrap();
        assert!(matches!(
            key_agreement(&g, &[0i64, 1], &[0, 2]),
            Err(Error::IndexOutOfRange { what: "key rank", position: 1, .. })
        ));
        assert!(matches!(
            key_agreement(&g, &[0i64, 1], &[0]),
            Err(Error::LengthMismatch { what: "key rank", .. })
        ));
    }
}
