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
use crate::interrupt::Ticker;
use crate::ready::{with_ready, ReadySet, WithReady};
pub use crate::ready::{Key, KeyValues, Tie};
use crate::sweep::{prefetch, run_queue};
use crate::{alloc, Csr, Error, Idx};

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
pub fn kahn<I: Idx, P: Idx>(csr: &Csr<'_, I, P>, tie: &Tie<'_>) -> Result<Outcome<I>, Error> {
    kahn_shared(csr, tie, 1)
}

/// [`kahn`] with the in-degree pass shared among `threads` workers (the
/// loop itself is sequential by nature); the outcome is the same for every
/// thread count.
pub fn kahn_shared<I: Idx, P: Idx>(
    csr: &Csr<'_, I, P>,
    tie: &Tie<'_>,
    threads: usize,
) -> Result<Outcome<I>, Error> {
    if csr.m() <= u32::MAX as usize {
        run_policy::<I, P, u32>(csr, tie, threads)
    } else {
        run_policy::<I, P, u64>(csr, tie, threads)
    }
}

/// Kahn's loop with remaining in-degrees kept in `C` (u32 whenever the edge
/// count allows: half the memory traffic of 64-bit counts on the hot path).
fn run_policy<I: Idx, P: Idx, C: Count>(
    csr: &Csr<'_, I, P>,
    tie: &Tie<'_>,
    threads: usize,
) -> Result<Outcome<I>, Error> {
    let n = csr.n();
    if let Tie::Priority(Key { values: Some(values), .. }) = tie {
        values.check(n)?;
    }
    let mut indegree: Vec<C> = csr.in_degree_counts_shared(threads)?;
    let mut order: Vec<I> = Vec::new();
    if let Tie::Queue = tie {
        run_queue(csr, &mut indegree, &mut order, &mut ())?;
    } else {
        order = alloc::with_capacity("order", n)?;
        let work = Loop { csr, indegree: &mut indegree, order: &mut order };
        with_ready(tie, n, n, 0, work)??;
    }
    finish(csr, order, &indegree)
}

/// The outcome once the loop stopped: complete, or the blocked nodes and a
/// cycle among them.
pub(crate) fn finish<I: Idx, P: Idx, C: Count>(
    csr: &Csr<'_, I, P>,
    order: Vec<I>,
    indegree: &[C],
) -> Result<Outcome<I>, Error> {
    let n = csr.n();
    if order.len() == n {
        return Ok(Outcome { order, blocked: Vec::new(), cycle: Vec::new() });
    }
    let mut ticker = Ticker::new();
    let mut blocked: Vec<I> = Vec::new();
    for (v, left) in indegree.iter().enumerate() {
        ticker.tick()?;
        if !left.is_zero() {
            blocked.push(I::from_usize(v));
        }
    }
    let Some(first) = blocked.first() else {
        return Err(Error::InputChanged { what: "indices" });
    };
    let cycle = cycle_among_blocked(csr, indegree, first.to_usize())?;
    Ok(Outcome { order, blocked, cycle })
}

/// Kahn's loop for any ready-set policy.
struct Loop<'a, 'g, I: Idx, P: Idx, C> {
    csr: &'a Csr<'g, I, P>,
    indegree: &'a mut [C],
    order: &'a mut Vec<I>,
}

impl<I: Idx, P: Idx, C: Count> WithReady for Loop<'_, '_, I, P, C> {
    type Output = Result<(), Error>;

    fn run<R: ReadySet>(self, mut ready: R) -> Result<(), Error> {
        let Loop { csr, indegree, order } = self;
        let n = csr.n();
        let mut ticker = Ticker::new();
        for (v, d) in indegree.iter().enumerate() {
            ticker.tick()?;
            if d.is_zero() {
                ready.push(v);
            }
        }
        let (indptr, indices) = (csr.indptr(), csr.indices());
        while let Some(u) = ready.pop() {
            // Pushed items are node ids (< n), and each is pushed once while
            // the input holds still; a changed input must not overrun `order`.
            if order.len() == n {
                return Err(Error::InputChanged { what: "indices" });
            }
            order.push(I::from_usize(u));
            // The ready set cannot say far ahead what comes next, so hide what
            // latency it can: the likely next node's row is fetched while this
            // row is worked, and a node's row bounds as soon as it turns ready.
            if let Some(next) = ready.peek().and_then(|next| indptr.get(next)) {
                prefetch(indices.as_ptr().wrapping_add(next.to_usize()));
            }
            let row = csr.checked_row(u)?;
            ticker.tick_by(row.len() + 1)?;
            for &v in row {
                let v = v.to_usize();
                let Some(count) = indegree.get_mut(v) else {
                    return Err(Error::InputChanged { what: "indices" });
                };
                if count.decrement() {
                    prefetch(indptr.as_ptr().wrapping_add(v));
                    ready.push(v);
                }
            }
        }
        Ok(())
    }
}

/// One directed cycle through nodes whose remaining in-degree is positive.
///
/// Each such node still has an un-emitted (hence blocked) predecessor, so
/// following one recorded predecessor per node must revisit a node; the
/// revisited stretch, reversed, is a cycle.
fn cycle_among_blocked<I: Idx, P: Idx, C: Count>(
    csr: &Csr<'_, I, P>,
    remaining: &[C],
    start: usize,
) -> Result<Vec<I>, Error> {
    let n = csr.n();
    let none = usize::MAX;
    let changed = Error::InputChanged { what: "indices" };
    let mut pred = alloc::filled("cycle search", n, none)?;
    let mut ticker = Ticker::new();
    for u in 0..n {
        ticker.tick()?;
        if remaining[u].is_zero() {
            continue;
        }
        let row = csr.checked_row(u)?;
        ticker.tick_by(row.len())?;
        for &v in row {
            let v = v.to_usize();
            if v >= n {
                return Err(changed);
            }
            if !remaining[v].is_zero() && pred[v] == none {
                pred[v] = u;
            }
        }
    }
    let mut seen = alloc::filled("cycle search", n, false)?;
    let mut x = start;
    while !seen[x] {
        seen[x] = true;
        x = *pred.get(x).filter(|&&p| p != none).ok_or(changed.clone())?;
    }
    let mut cycle = vec![x];
    let mut y = pred[x];
    while y != x {
        cycle.push(y);
        y = *pred.get(y).filter(|&&p| p != none).ok_or(changed.clone())?;
    }
    cycle.reverse();
    let smallest = (0..cycle.len()).min_by_key(|&k| cycle[k]).unwrap_or(0);
    cycle.rotate_left(smallest);
    Ok(cycle.into_iter().map(I::from_usize).collect())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::edges::edges_to_csr;
    use crate::rng::SplitMix64;
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
            assert_eq!(run_policy::<i64, i64, u64>(&g, &Tie::Queue, 1).unwrap().order, queue);
            assert_eq!(run_policy::<i64, i64, u64>(&g, &Tie::Stack, 1).unwrap().order, stack);
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
}
