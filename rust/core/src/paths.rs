//! Path counts on a DAG: per node the paths from any source and to any sink,
//! per edge the source-to-sink paths through it (the search path count of
//! main path analysis).
//!
//! A source is a node without predecessors, a sink one without successors;
//! an isolated node is both and carries one (empty) path. Parallel edges are
//! distinct edges, so they multiply paths.
//!
//! Counts grow exponentially with depth, so three representations are kept:
//! float64 (always; may reach infinity past about 1.8e308), exact uint64
//! (only when every count fits; otherwise none at all, never wrapped
//! values), and natural logarithms (computed here only when float64
//! overflows; the caller takes logs of the floats otherwise).

use std::sync::atomic::{AtomicBool, Ordering::Relaxed};

use crate::interrupt::Ticker;
use crate::sweep::{fifo_sweep, forward, settle_backward, Acyclic, Disjoint, LevelOrder};
use crate::{alloc, Csr, Error, Idx};

/// Exact counts, present only when the total fits `u64`.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ExactCounts {
    pub from_sources: Vec<u64>,
    pub to_sinks: Vec<u64>,
    pub through_edge: Vec<u64>,
    pub total: u64,
}

/// Natural logarithms of the counts.
#[derive(Debug, Clone, PartialEq)]
pub struct LogCounts {
    pub from_sources: Vec<f64>,
    pub to_sinks: Vec<f64>,
    pub through_edge: Vec<f64>,
    pub total: f64,
}

/// All path counts of a DAG; per-edge values in stored edge order.
#[derive(Debug, Clone, PartialEq)]
pub struct Counts {
    pub from_sources: Vec<f64>,
    pub to_sinks: Vec<f64>,
    pub through_edge: Vec<f64>,
    /// Number of source-to-sink paths.
    pub total: f64,
    pub exact: Option<ExactCounts>,
    /// Filled only when `total` is infinite.
    pub log: Option<LogCounts>,
}

/// Every count is at most the total, and float64 sums of integers are exact
/// below 2^53, so under that bound the floats already are the exact counts.
const FLOAT_EXACT_BELOW: f64 = 9_007_199_254_740_992.0;
/// Above this the float total (relative error far below 1e-7) is certainly
/// beyond `u64::MAX`, so an exact pass would be wasted.
const SURELY_TOO_BIG: f64 = 18_446_744_073_709_551_616.0 * (1.0 + 1e-7);

/// The arithmetic a count is kept in; `None` from an operation means it
/// left the representable range (only exact integers ever do).
pub(crate) trait Arithmetic: Copy + PartialEq + Send + Sync + 'static {
    const ZERO: Self;
    const ONE: Self;
    fn add(self, other: Self) -> Option<Self>;
    fn mul(self, other: Self) -> Option<Self>;
}

impl Arithmetic for f64 {
    const ZERO: Self = 0.0;
    const ONE: Self = 1.0;
    #[inline(always)]
    fn add(self, other: Self) -> Option<Self> {
        Some(self + other)
    }
    #[inline(always)]
    fn mul(self, other: Self) -> Option<Self> {
        Some(self * other)
    }
}

impl Arithmetic for u64 {
    const ZERO: Self = 0;
    const ONE: Self = 1;
    #[inline(always)]
    fn add(self, other: Self) -> Option<Self> {
        self.checked_add(other)
    }
    #[inline(always)]
    fn mul(self, other: Self) -> Option<Self> {
        self.checked_mul(other)
    }
}

/// A count held as its natural logarithm: finite however deep the graph.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Log(f64);

impl Arithmetic for Log {
    const ZERO: Self = Log(f64::NEG_INFINITY);
    const ONE: Self = Log(0.0);
    /// `ln(e^a + e^b)` without leaving the log domain.
    #[inline(always)]
    fn add(self, other: Self) -> Option<Self> {
        let (high, low) = if self.0 >= other.0 { (self.0, other.0) } else { (other.0, self.0) };
        if low == f64::NEG_INFINITY {
            return Some(Log(high));
        }
        Some(Log(high + (low - high).exp().ln_1p()))
    }
    #[inline(always)]
    fn mul(self, other: Self) -> Option<Self> {
        Some(Log(self.0 + other.0))
    }
}

/// The per-node terms of a path count: what a node adds to the paths that
/// reach it (`start`) and to the paths that leave it (`end`). The search
/// path count starts paths at sources and ends them at sinks; other main
/// path weights (SPLC, SPNP) are other terms over the same programme.
pub(crate) trait Terms<A>: Sync {
    /// The count of paths into `u`, given the sum `inflow` over its
    /// predecessors (`ZERO` exactly when `u` has none); `None` when it
    /// leaves `A`'s range.
    fn start(&self, u: usize, inflow: A) -> Option<A>;
    /// The term of paths out of `u`, ending there when it `is_sink`.
    fn end(&self, u: usize, is_sink: bool) -> A;
}

/// Search path count: every path runs from a source to a sink.
pub(crate) struct SourcesToSinks;

impl<A: Arithmetic> Terms<A> for SourcesToSinks {
    #[inline(always)]
    fn start(&self, _u: usize, inflow: A) -> Option<A> {
        // Only a source reaches its turn without a path in.
        Some(if inflow == A::ZERO { A::ONE } else { inflow })
    }
    #[inline(always)]
    fn end(&self, _u: usize, is_sink: bool) -> A {
        if is_sink {
            A::ONE
        } else {
            A::ZERO
        }
    }
}

/// Search path link count (SPLC): every node starts a path (each ancestor of
/// an edge's tail, the tail included), every path ends at a sink.
pub(crate) struct FromEveryNode;

impl<A: Arithmetic> Terms<A> for FromEveryNode {
    #[inline(always)]
    fn start(&self, _u: usize, inflow: A) -> Option<A> {
        inflow.add(A::ONE)
    }
    #[inline(always)]
    fn end(&self, _u: usize, is_sink: bool) -> A {
        if is_sink {
            A::ONE
        } else {
            A::ZERO
        }
    }
}

/// Search path node pair (SPNP): every node starts a path and every node
/// ends one, so an edge counts the paths between all node pairs through it.
pub(crate) struct BetweenEveryPair;

impl<A: Arithmetic> Terms<A> for BetweenEveryPair {
    #[inline(always)]
    fn start(&self, _u: usize, inflow: A) -> Option<A> {
        inflow.add(A::ONE)
    }
    #[inline(always)]
    fn end(&self, _u: usize, _is_sink: bool) -> A {
        A::ONE
    }
}

/// The traversal weight a path count stands for (main path analysis).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Kind {
    /// Search path count: source-to-sink paths.
    Spc,
    /// Search path link count: paths from every node to the sinks.
    Splc,
    /// Search path node pair: paths between every pair of nodes.
    Spnp,
}

/// One path-count table in one arithmetic.
pub(crate) struct Table<A> {
    pub from: Vec<A>,
    pub to: Vec<A>,
    pub through: Vec<A>,
    pub total: A,
}

/// The one dynamic programme of path counts, in arithmetic `A` with
/// `terms`: `from[v] = start(v, sum of from[u] over edges u -> v)` forward,
/// `to[u] = end(u) + sum of to[v] over edges u -> v` backward, `through[e] =
/// from[u] * to[v]`, `total = sum of from[u] * end(u)` (in id order, so
/// every thread count sums alike).
///
/// With `known = None` the forward pass discovers the level order itself
/// (one read of each row for both) and returns it; otherwise it runs along
/// `known`. `Ok(Ok((_, None)))` when a value left `A`'s range.
#[allow(clippy::type_complexity)]
pub(crate) fn count_paths<I: Idx, P: Idx, A: Arithmetic, T: Terms<A>>(
    csr: &Csr<'_, I, P>,
    known: Option<&LevelOrder<I>>,
    threads: usize,
    terms: &T,
) -> Result<Acyclic<(Option<LevelOrder<I>>, Option<Table<A>>), I>, Error> {
    let n = csr.n();
    let overflow = AtomicBool::new(false);
    let checked = |value: Option<A>| {
        value.unwrap_or_else(|| {
            overflow.store(true, Relaxed);
            A::ZERO
        })
    };
    let (discovered, from) = match known {
        None => {
            let swept = fifo_sweep(
                csr,
                A::ZERO,
                |u, from| {
                    *from = checked(terms.start(u, *from));
                    *from
                },
                |&passed, _, _, from| *from = checked(from.add(passed)),
            )?;
            match swept {
                Ok((levels, from)) => (Some(levels), from),
                Err(cyclic) => return Ok(Err(cyclic)),
            }
        }
        Some(levels) => {
            let mut from = alloc::filled("paths from sources", n, A::ZERO)?;
            forward(csr, &levels.order, |u| {
                let count = checked(terms.start(u, from[u]));
                from[u] = count;
                for v in csr.checked_row(u)? {
                    let slot = from
                        .get_mut(v.to_usize())
                        .ok_or(Error::InputChanged { what: "indices" })?;
                    *slot = checked(slot.add(count));
                }
                Ok(())
            })?;
            (None, from)
        }
    };
    let Some(levels) = discovered.as_ref().or(known) else {
        return Err(Error::Internal { reason: "path counts without an order".into() });
    };
    let mut to = alloc::filled("paths to sinks", n, A::ZERO)?;
    let mut through = alloc::filled("paths through edges", csr.m(), A::ZERO)?;
    let (to_cells, through_cells) = (Disjoint::new(&mut to), Disjoint::new(&mut through));
    settle_backward(csr, levels, threads, |u| {
        let (start, row) = csr.checked_row_at(u)?;
        let count = from[u];
        let mut sum = terms.end(u, row.is_empty());
        // SAFETY: (settle_backward's contract) this call alone touches the
        // edges of row u; `range_mut` checks the range.
        let slots = unsafe { through_cells.range_mut(start..start + row.len()) }?;
        for (slot, v) in slots.iter_mut().zip(row) {
            // SAFETY: (settle_backward's contract) successors are settled and
            // no worker writes them now; `get` checks the index.
            let t = unsafe { to_cells.get(v.to_usize()) }?;
            sum = checked(sum.add(t));
            *slot = checked(count.mul(t));
        }
        // SAFETY: (settle_backward's contract) only this call writes u.
        unsafe { to_cells.set(u, sum) }
    })?;
    let mut total = A::ZERO;
    let mut ticker = Ticker::new();
    for (u, &count) in from.iter().enumerate() {
        ticker.tick()?;
        let end = terms.end(u, csr.checked_row(u)?.is_empty());
        if end != A::ZERO {
            total = checked(total.add(checked(count.mul(end))));
        }
    }
    let table = (!overflow.load(Relaxed)).then_some(Table { from, to, through, total });
    Ok(Ok((discovered, table)))
}

/// Count the paths of `csr`; the backward pass runs on `threads` workers
/// when it pays (same result for any count).
pub fn path_counts<I: Idx, P: Idx>(
    csr: &Csr<'_, I, P>,
    threads: usize,
) -> Result<Acyclic<Counts, I>, Error> {
    Ok(counts_with(csr, threads, &SourcesToSinks)?.map(|(counts, _)| counts))
}

/// The path counts of `kind` with the level order found on the way.
pub fn path_counts_of<I: Idx, P: Idx>(
    csr: &Csr<'_, I, P>,
    threads: usize,
    kind: Kind,
) -> Result<Acyclic<(Counts, LevelOrder<I>), I>, Error> {
    match kind {
        Kind::Spc => counts_with(csr, threads, &SourcesToSinks),
        Kind::Splc => counts_with(csr, threads, &FromEveryNode),
        Kind::Spnp => counts_with(csr, threads, &BetweenEveryPair),
    }
}

/// Float, exact and log counts with `terms` (every count of the three
/// kinds is at most the total, which the exactness bounds rely on).
fn counts_with<I: Idx, P: Idx, T: Terms<f64> + Terms<u64> + Terms<Log>>(
    csr: &Csr<'_, I, P>,
    threads: usize,
    terms: &T,
) -> Result<Acyclic<(Counts, LevelOrder<I>), I>, Error> {
    let (levels, floats) = match count_paths::<I, P, f64, _>(csr, None, threads, terms)? {
        Ok((Some(levels), Some(floats))) => (levels, floats),
        Ok(_) => return Err(Error::Internal { reason: "float path counts went missing".into() }),
        Err(cyclic) => return Ok(Err(cyclic)),
    };
    let Table { from, to, through, total } = floats;
    let exact = if total < FLOAT_EXACT_BELOW {
        let exact = |values: &[f64]| values.iter().map(|&x| x as u64).collect();
        Some(ExactCounts {
            from_sources: exact(&from),
            to_sinks: exact(&to),
            through_edge: exact(&through),
            total: total as u64,
        })
    } else if total < SURELY_TOO_BIG {
        match count_paths::<I, P, u64, _>(csr, Some(&levels), threads, terms)? {
            Ok((_, table)) => table.map(|t| ExactCounts {
                from_sources: t.from,
                to_sinks: t.to,
                through_edge: t.through,
                total: t.total,
            }),
            Err(cyclic) => return Ok(Err(cyclic)),
        }
    } else {
        None
    };
    let log = if total.is_infinite() {
        match count_paths::<I, P, Log, _>(csr, Some(&levels), threads, terms)? {
            Ok((_, table)) => table.map(|t| {
                let logs = |values: Vec<Log>| values.into_iter().map(|x| x.0).collect();
                LogCounts {
                    from_sources: logs(t.from),
                    to_sinks: logs(t.to),
                    through_edge: logs(t.through),
                    total: t.total.0,
                }
            }),
            Err(cyclic) => return Ok(Err(cyclic)),
        }
    } else {
        None
    };
    let counts =
        Counts { from_sources: from, to_sinks: to, through_edge: through, total, exact, log };
    Ok(Ok((counts, levels)))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::edges::edges_to_csr;
    use crate::rng::SplitMix64;

    /// Every path from `u` to a sink, walked one by one.
    fn walks_to_sinks(
        u: usize,
        src: &[i64],
        dst: &[i64],
        through: &mut [u64],
        trail: &mut Vec<usize>,
    ) -> u64 {
        let out: Vec<usize> = (0..src.len()).filter(|&e| src[e] as usize == u).collect();
        if out.is_empty() {
            for &e in trail.iter() {
                through[e] += 1;
            }
            return 1;
        }
        let mut count = 0;
        for e in out {
            trail.push(e);
            count += walks_to_sinks(dst[e] as usize, src, dst, through, trail);
            trail.pop();
        }
        count
    }

    #[test]
    fn counts_match_enumeration_of_every_path() {
        let mut rng = SplitMix64::new(17);
        for _ in 0..300 {
            let n = 1 + rng.below(8) as usize;
            let (mut src, mut dst) = (Vec::new(), Vec::new());
            for _ in 0..rng.below(14) {
                let a = rng.below(n as u64) as i64;
                let b = rng.below(n as u64) as i64;
                if a != b {
                    src.push(a.min(b));
                    dst.push(a.max(b));
                }
            }
            let g = edges_to_csr(&src, &dst, n, false).unwrap();
            let csr = Csr::new(&g.indptr, &g.indices).unwrap();
            // Enumerate on the stored edges so per-edge counts line up.
            let stored_src: Vec<i64> =
                (0..n).flat_map(|u| std::iter::repeat_n(u as i64, csr.row(u).len())).collect();
            let mut through = vec![0u64; src.len()];
            let mut total = 0;
            let mut to = Vec::new();
            for u in 0..n {
                let mut scratch = vec![0u64; src.len()];
                to.push(walks_to_sinks(u, &stored_src, &g.indices, &mut scratch, &mut Vec::new()));
                if !g.indices.contains(&(u as i64)) {
                    total +=
                        walks_to_sinks(u, &stored_src, &g.indices, &mut through, &mut Vec::new());
                }
            }
            let counts = path_counts(&csr, 1).unwrap().unwrap();
            assert_eq!(path_counts(&csr, 2).unwrap().unwrap(), counts);
            let exact = counts.exact.unwrap();
            assert_eq!(exact.total, total);
            assert_eq!(exact.to_sinks, to);
            assert_eq!(exact.through_edge, through);
            assert_eq!(counts.total, total as f64);
            assert!(counts.log.is_none());
        }
    }

    /// A chain of `k` diamonds: 2^k source-to-sink paths.
    fn diamonds(k: usize) -> (Vec<i64>, Vec<i64>, usize) {
        let (mut src, mut dst) = (Vec::new(), Vec::new());
        for d in 0..k as i64 {
            let (top, a, b, bottom) = (3 * d, 3 * d + 1, 3 * d + 2, 3 * d + 3);
            src.extend([top, top, a, b]);
            dst.extend([a, b, bottom, bottom]);
        }
        (src, dst, 3 * k + 1)
    }

    #[test]
    fn diamond_chains_are_exact_then_report_overflow_then_stay_finite_in_logs() {
        for (k, fits) in [(52, true), (60, true), (63, true), (64, false), (80, false)] {
            let (src, dst, n) = diamonds(k);
            let g = edges_to_csr(&src, &dst, n, false).unwrap();
            let csr = Csr::new(&g.indptr, &g.indices).unwrap();
            let counts = path_counts(&csr, 2).unwrap().unwrap();
            assert_eq!(counts.exact.is_some(), fits, "k = {k}");
            if let Some(exact) = counts.exact {
                assert_eq!(exact.total, 1u64 << k);
                assert_eq!(exact.to_sinks[0], 1u64 << k);
                assert_eq!(exact.from_sources[n - 1], 1u64 << k);
                // Every edge of a diamond carries half of all paths.
                assert!(exact.through_edge.iter().all(|&c| c == 1u64 << (k - 1)));
            }
            assert_eq!(counts.total, 2f64.powi(k as i32));
        }
        let (src, dst, n) = diamonds(1100);
        let g = edges_to_csr(&src, &dst, n, false).unwrap();
        let csr = Csr::new(&g.indptr, &g.indices).unwrap();
        let counts = path_counts(&csr, 1).unwrap().unwrap();
        assert!(counts.total.is_infinite() && counts.exact.is_none());
        let log = counts.log.unwrap();
        let expected = 1100.0 * 2f64.ln();
        assert!((log.total - expected).abs() < 1e-9 * expected);
        let half = expected - 2f64.ln();
        assert!(log.through_edge.iter().all(|&x| (x - half).abs() < 1e-9 * expected));
    }
}
