//! The critical path method on a DAG: longest path, earliest and latest
//! start of every node, and one longest path.
//!
//! Node `u` is an activity of duration `d[u]`; edge `u -> v` says `v` may
//! start `w[e]` after `u` finishes (a lag). With every weight non-negative:
//! * earliest start `ES[v] = max(ES[u] + d[u] + w[e])` over edges into `v`,
//!   0 for a node without predecessors; earliest finish `EF = ES + d`;
//! * the length `L = max EF`;
//! * latest finish `LF[u] = min(LS[v] - w[e])` over edges out of `u`, `L`
//!   for a node without successors; latest start `LS = LF - d`;
//! * slack (total float) `LS - ES`, zero exactly on the longest paths.

use crate::interrupt::Ticker;
use crate::sweep::{fifo_sweep, settle_backward, Acyclic, Disjoint, Weights};
use crate::{alloc, Csr, Error, Idx};

/// The critical-path quantities of a DAG.
#[derive(Debug, Clone, PartialEq)]
pub struct Schedule<I> {
    pub length: f64,
    /// One longest path, first node first.
    pub path: Vec<I>,
    pub earliest_start: Vec<f64>,
    pub latest_start: Vec<f64>,
}

const NONE: usize = usize::MAX;

/// Run the critical path method. `node_weight` holds durations (one per
/// node), `edge_weight` lags in stored edge order; both non-negative.
///
/// The returned path ends at the smallest-id node whose earliest finish is
/// the length, and steps back each time to the smallest-id predecessor that
/// fixes the current node's earliest start. The backward pass (latest
/// starts) runs on `threads` workers, with the same result for any count.
pub fn critical_path<I: Idx, P: Idx>(
    csr: &Csr<'_, I, P>,
    node_weight: Weights<'_>,
    edge_weight: Weights<'_>,
    threads: usize,
) -> Result<Acyclic<Schedule<I>, I>, Error> {
    let n = csr.n();
    node_weight.check("node_weight", n)?;
    edge_weight.check("edge_weight", csr.m())?;
    // A node's value starts below any candidate; the one still there when
    // it is emitted has no predecessor and starts at 0.
    let swept = fifo_sweep(
        csr,
        f64::NEG_INFINITY,
        |u, start| {
            if *start == f64::NEG_INFINITY {
                *start = 0.0;
            }
            *start + node_weight.get(u)
        },
        |&finish, _, e, start| *start = start.max(finish + edge_weight.get(e)),
    )?;
    let (levels, earliest_start) = match swept {
        Ok(swept) => swept,
        Err(cyclic) => return Ok(Err(cyclic)),
    };
    let earliest_finish = |u: usize| earliest_start[u] + node_weight.get(u);
    // Finite weights can still add up past the largest float; a length of
    // infinity would give a truncated path and NaN slack, so name the first
    // node (in order) whose earliest finish overflows instead.
    let mut ticker = Ticker::new();
    for u in &levels.order {
        ticker.tick()?;
        if !earliest_finish(u.to_usize()).is_finite() {
            return Err(Error::Overflow { what: "critical path length", node: u.to_usize() });
        }
    }
    let mut length = 0.0f64;
    let mut end = NONE;
    for u in 0..n {
        ticker.tick()?;
        // Strictly greater keeps the smallest id among equal finishes.
        if end == NONE || earliest_finish(u) > length {
            length = earliest_finish(u);
            end = u;
        }
    }
    // The predecessor fixing each earliest start, found afterwards in one
    // pass in id order (so the first found is the smallest id) rather than
    // tracked during the sweep, where ties made it cost more than this pass.
    // The sums repeat the sweep's exactly, so equality is exact.
    let mut pred = alloc::filled("critical path", n, NONE)?;
    for u in 0..n {
        let finish = earliest_finish(u);
        let (start, row) = csr.checked_row_at(u)?;
        ticker.tick_by(row.len() + 1)?;
        for (offset, v) in row.iter().enumerate() {
            let v = v.to_usize();
            let Some(&earliest) = earliest_start.get(v) else {
                return Err(Error::InputChanged { what: "indices" });
            };
            if finish + edge_weight.get(start + offset) == earliest && pred[v] == NONE {
                pred[v] = u;
            }
        }
    }
    let mut path = Vec::new();
    let mut at = end;
    while at != NONE {
        ticker.tick()?;
        if path.len() == n {
            return Err(Error::InputChanged { what: "indices" });
        }
        path.push(I::from_usize(at));
        at = pred[at];
    }
    path.reverse();

    let mut latest_start = alloc::filled("latest starts", n, 0.0f64)?;
    let cells = Disjoint::new(&mut latest_start);
    settle_backward(csr, &levels, threads, |u| {
        let (start, row) = csr.checked_row_at(u)?;
        let mut latest_finish = length;
        for (offset, v) in row.iter().enumerate() {
            // SAFETY: (settle_backward's contract) successors are settled and
            // no worker writes them now; `get` checks the index.
            let next = unsafe { cells.get(v.to_usize()) }?;
            latest_finish = latest_finish.min(next - edge_weight.get(start + offset));
        }
        // Mathematically LS >= ES; the max only absorbs rounding of
        // non-integer weights so slack is never a tiny negative number.
        let latest = (latest_finish - node_weight.get(u)).max(earliest_start[u]);
        // SAFETY: (settle_backward's contract) only this call writes u.
        unsafe { cells.set(u, latest) }
    })?;
    Ok(Ok(Schedule { length, path, earliest_start, latest_start }))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::edges::edges_to_csr;
    use crate::rng::SplitMix64;

    fn schedule(n: usize, src: &[i64], dst: &[i64], d: Weights<'_>, w: &[f64]) -> Schedule<i64> {
        let g = edges_to_csr(src, dst, n, true).unwrap();
        let ids = g.edge_ids.unwrap();
        let stored: Vec<f64> = ids.iter().map(|&k| w[k as usize]).collect();
        let csr = Csr::new(&g.indptr, &g.indices).unwrap();
        let one = critical_path(&csr, d, Weights::Each(&stored), 1).unwrap().unwrap();
        let two = critical_path(&csr, d, Weights::Each(&stored), 2).unwrap().unwrap();
        assert_eq!(one, two);
        one
    }

    #[test]
    fn textbook_project_network() {
        // Source: Hillier & Lieberman, Introduction to Operations Research,
        // the Reliable Construction Co. project network (chapter on PERT/CPM);
        // activities, durations (weeks) and the table below from memory.
        // Project length 44 weeks, critical path A B C E F J L N.
        let names = "ABCDEFGHIJKLMN";
        let duration = [2.0, 4.0, 10.0, 6.0, 4.0, 5.0, 7.0, 9.0, 7.0, 8.0, 4.0, 5.0, 2.0, 6.0];
        let precedences = [
            ("A", "B"),
            ("B", "C"),
            ("C", "D"),
            ("C", "E"),
            ("C", "I"),
            ("D", "G"),
            ("E", "F"),
            ("E", "H"),
            ("G", "H"),
            ("F", "J"),
            ("I", "J"),
            ("J", "K"),
            ("J", "L"),
            ("H", "M"),
            ("K", "N"),
            ("L", "N"),
        ];
        let id = |s: &str| names.find(s).unwrap() as i64;
        let src: Vec<i64> = precedences.iter().map(|p| id(p.0)).collect();
        let dst: Vec<i64> = precedences.iter().map(|p| id(p.1)).collect();
        let zero = vec![0.0; src.len()];
        let s = schedule(14, &src, &dst, Weights::Each(&duration), &zero);
        assert_eq!(s.length, 44.0);
        let path: String = s.path.iter().map(|&v| names.as_bytes()[v as usize] as char).collect();
        assert_eq!(path, "ABCEFJLN");
        // Earliest starts as tabulated in that example.
        let es = [0.0, 2.0, 6.0, 16.0, 16.0, 20.0, 22.0, 29.0, 16.0, 25.0, 33.0, 33.0, 38.0, 38.0];
        assert_eq!(s.earliest_start, es);
        let ls = [0.0, 2.0, 6.0, 20.0, 16.0, 20.0, 26.0, 33.0, 18.0, 25.0, 34.0, 33.0, 42.0, 38.0];
        assert_eq!(s.latest_start, ls);
    }

    /// Longest path by brute force over all paths (small graphs only).
    fn brute_longest(n: usize, src: &[i64], dst: &[i64], d: &[f64], w: &[f64]) -> f64 {
        fn walk(u: usize, src: &[i64], dst: &[i64], d: &[f64], w: &[f64]) -> f64 {
            let mut best = d[u];
            for e in 0..src.len() {
                if src[e] as usize == u {
                    best = best.max(d[u] + w[e] + walk(dst[e] as usize, src, dst, d, w));
                }
            }
            best
        }
        (0..n).map(|u| walk(u, src, dst, d, w)).fold(0.0, f64::max)
    }

    #[test]
    fn random_dags_match_brute_force_and_paths_are_real() {
        let mut rng = SplitMix64::new(5);
        for _ in 0..300 {
            let n = 1 + rng.below(9) as usize;
            let (mut src, mut dst) = (Vec::new(), Vec::new());
            for _ in 0..rng.below(16) {
                let a = rng.below(n as u64) as i64;
                let b = rng.below(n as u64) as i64;
                if a != b {
                    src.push(a.min(b));
                    dst.push(a.max(b));
                }
            }
            let d: Vec<f64> = (0..n).map(|_| rng.below(4) as f64).collect();
            let w: Vec<f64> = (0..src.len()).map(|_| rng.below(3) as f64).collect();
            let s = schedule(n, &src, &dst, Weights::Each(&d), &w);
            assert_eq!(s.length, brute_longest(n, &src, &dst, &d, &w));
            let mut total = d[s.path[0] as usize];
            for pair in s.path.windows(2) {
                let best_edge = (0..src.len())
                    .filter(|&e| src[e] == pair[0] && dst[e] == pair[1])
                    .map(|e| w[e])
                    .fold(f64::NEG_INFINITY, f64::max);
                assert!(best_edge.is_finite(), "{pair:?} is not an edge");
                total += best_edge + d[pair[1] as usize];
            }
            assert_eq!(total, s.length);
            for u in 0..n {
                assert!(s.latest_start[u] >= s.earliest_start[u]);
            }
            for &v in &s.path {
                assert_eq!(s.latest_start[v as usize], s.earliest_start[v as usize]);
            }
        }
    }

    #[test]
    fn ties_go_to_smaller_ids_and_bad_weights_are_named() {
        // Two equal routes 0 -> 2 -> 3 and 0 -> 1 -> 3: the path takes 1.
        let s = schedule(4, &[0, 0, 2, 1], &[2, 1, 3, 3], Weights::Constant(0.0), &[1.0; 4]);
        assert_eq!(s.path, vec![0, 1, 3]);
        let csr = Csr::new(&[0i32, 1, 1], &[1]).unwrap();
        let bad = [-1.0];
        let e = critical_path(&csr, Weights::Constant(0.0), Weights::Each(&bad), 1).unwrap_err();
        assert_eq!(e.to_string(), "edge_weight[0] = -1; weights must be finite and non-negative");
    }

    #[test]
    fn finite_weights_whose_sum_overflows_are_an_error() {
        // 3 * 1e308 exceeds the largest float64, about 1.797e308 (IEEE 754).
        let chain = Csr::new(&[0i32, 1, 2, 2], &[1, 2]).unwrap();
        let huge = [1e308; 3];
        let e = critical_path(&chain, Weights::Each(&huge), Weights::Constant(0.0), 2).unwrap_err();
        assert_eq!(e, Error::Overflow { what: "critical path length", node: 1 });
        assert!(e.to_string().contains("node 1"), "{e}");
        let lag = [f64::MAX];
        let pair = Csr::new(&[0i32, 1, 1], &[1]).unwrap();
        let e = critical_path(&pair, Weights::Constant(f64::MAX), Weights::Each(&lag), 1);
        assert_eq!(e.unwrap_err(), Error::Overflow { what: "critical path length", node: 1 });
        let ok = critical_path(&chain, Weights::Each(&[5e307; 3]), Weights::Constant(0.0), 1);
        assert_eq!(ok.unwrap().unwrap().length, 1.5e308);
    }
}
