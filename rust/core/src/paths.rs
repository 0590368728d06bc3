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

use crate::sweep::{fifo_sweep, settle_backward, Acyclic, Disjoint, LevelOrder};
use crate::{Csr, Error, Idx};

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

/// Count the paths of `csr`; the backward pass runs on `threads` workers
/// (same result for any count).
pub fn path_counts<I: Idx>(csr: &Csr<'_, I>, threads: usize) -> Result<Acyclic<Counts, I>, Error> {
    let n = csr.n();
    let swept = fifo_sweep(
        csr,
        0.0f64,
        |_, from| {
            // Only a source reaches its turn without a path in.
            if *from == 0.0 {
                *from = 1.0;
            }
            *from
        },
        |&passed, _, _, from| *from += passed,
    )?;
    let (levels, from) = match swept {
        Ok(swept) => swept,
        Err(cyclic) => return Ok(Err(cyclic)),
    };
    let mut to = vec![0.0f64; n];
    let mut through = vec![0.0f64; csr.m()];
    let (to_cells, through_cells) = (Disjoint::new(&mut to), Disjoint::new(&mut through));
    settle_backward(csr, &levels, threads, |u| {
        // SAFETY (settle_backward's contract): this writes only `to[u]` and
        // the edges of row u, and reads only successors' `to`.
        unsafe {
            let range = csr.row_range(u);
            if range.is_empty() {
                to_cells.set(u, 1.0);
                return;
            }
            let mut sum = 0.0;
            let count = from[u];
            let row = &csr.indices()[range.clone()];
            for (slot, v) in through_cells.range_mut(range).iter_mut().zip(row) {
                let t = to_cells.get(v.to_usize());
                sum += t;
                *slot = count * t;
            }
            to_cells.set(u, sum);
        }
    })?;
    // Summed in id order so the total does not depend on the thread count.
    let total: f64 = (0..n).filter(|&u| csr.row_range(u).is_empty()).map(|u| from[u]).sum();
    let exact = if total < FLOAT_EXACT_BELOW {
        let exact = |values: &[f64]| values.iter().map(|&x| x as u64).collect();
        Some(ExactCounts {
            from_sources: exact(&from),
            to_sinks: exact(&to),
            through_edge: exact(&through),
            total: total as u64,
        })
    } else if total < SURELY_TOO_BIG {
        exact_counts(csr, &levels)
    } else {
        None
    };
    let log = total.is_infinite().then(|| log_counts(csr, &levels));
    Ok(Ok(Counts { from_sources: from, to_sinks: to, through_edge: through, total, exact, log }))
}

/// The counts in checked `u64` arithmetic; `None` as soon as one overflows.
fn exact_counts<I: Idx>(csr: &Csr<'_, I>, levels: &LevelOrder<I>) -> Option<ExactCounts> {
    let n = csr.n();
    let mut from = vec![0u64; n];
    for u in &levels.order {
        let u = u.to_usize();
        if from[u] == 0 {
            from[u] = 1;
        }
        let count = from[u];
        for v in csr.row(u) {
            let slot = &mut from[v.to_usize()];
            *slot = slot.checked_add(count)?;
        }
    }
    let mut to = vec![0u64; n];
    let mut through = vec![0u64; csr.m()];
    let mut total = 0u64;
    for u in levels.order.iter().rev() {
        let u = u.to_usize();
        let range = csr.row_range(u);
        if range.is_empty() {
            to[u] = 1;
            total = total.checked_add(from[u])?;
            continue;
        }
        let mut sum = 0u64;
        for (slot, v) in through[range.clone()].iter_mut().zip(&csr.indices()[range]) {
            let t = to[v.to_usize()];
            sum = sum.checked_add(t)?;
            *slot = from[u].checked_mul(t)?;
        }
        to[u] = sum;
    }
    Some(ExactCounts { from_sources: from, to_sinks: to, through_edge: through, total })
}

/// `ln(e^a + e^b)` without leaving the log domain.
#[inline]
fn log_add(a: f64, b: f64) -> f64 {
    let (high, low) = if a >= b { (a, b) } else { (b, a) };
    if low == f64::NEG_INFINITY {
        return high;
    }
    high + (low - high).exp().ln_1p()
}

/// The counts as natural logarithms, finite however deep the graph.
fn log_counts<I: Idx>(csr: &Csr<'_, I>, levels: &LevelOrder<I>) -> LogCounts {
    let n = csr.n();
    let mut from = vec![f64::NEG_INFINITY; n];
    for u in &levels.order {
        let u = u.to_usize();
        if from[u] == f64::NEG_INFINITY {
            from[u] = 0.0;
        }
        let count = from[u];
        for v in csr.row(u) {
            let slot = &mut from[v.to_usize()];
            *slot = log_add(*slot, count);
        }
    }
    let mut to = vec![0.0; n];
    let mut through = vec![0.0; csr.m()];
    let mut total = f64::NEG_INFINITY;
    for u in levels.order.iter().rev() {
        let u = u.to_usize();
        let range = csr.row_range(u);
        if range.is_empty() {
            to[u] = 0.0;
            total = log_add(total, from[u]);
            continue;
        }
        let mut sum = f64::NEG_INFINITY;
        for (slot, v) in through[range.clone()].iter_mut().zip(&csr.indices()[range]) {
            let t = to[v.to_usize()];
            sum = log_add(sum, t);
            *slot = from[u] + t;
        }
        to[u] = sum;
    }
    LogCounts { from_sources: from, to_sinks: to, through_edge: through, total }
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
