//! Levels (longest path from any source, in edges) and heights (longest
//! path to any sink), both on the sweep engine.
//!
//! The level of a source is 0, of any other node one more than the largest
//! level of its predecessors. The FIFO Kahn's loop emits exactly these
//! levels one after another (see [`crate::sweep::fifo_sweep`]), so the level
//! order is a by-product of the order itself. A frontier-parallel version
//! (atomic in-degree counts, one frontier per round) used to run for
//! `threads > 1`; it measured 5.7x slower than this serial loop on the
//! 10M-edge benchmark graph (the atomics and per-frontier hand-offs cost far
//! more than the loop), so every thread count now runs the serial loop and
//! gives the same result by construction.

use crate::interrupt::Ticker;
use crate::sweep::{fifo_sweep, settle_backward, Acyclic, Disjoint, LevelOrder};
use crate::{alloc, Csr, Error, Idx};

/// The nodes grouped by level (inside a level in FIFO order).
///
/// `threads` is accepted for every sweep's sake but not used: the serial
/// loop is the fastest measured choice (see the module documentation).
pub fn level_order<I: Idx, P: Idx>(
    csr: &Csr<'_, I, P>,
    threads: usize,
) -> Result<Acyclic<LevelOrder<I>, I>, Error> {
    let _ = threads;
    let swept = fifo_sweep(csr, (), |_, _| (), |_, _, _, _| {})?;
    Ok(swept.map(|(levels, _)| levels))
}

/// The level of every node, from a level order (a plain O(n) scatter, which
/// threads do not speed up).
pub fn levels_from<I: Idx>(levels: &LevelOrder<I>, threads: usize) -> Result<Vec<I>, Error> {
    let _ = threads;
    let n = levels.order.len();
    let mut level = alloc::filled("levels", n, I::default())?;
    let mut ticker = Ticker::new();
    for (k, group) in levels.offsets.windows(2).enumerate() {
        let group = levels.order.get(group[0]..group[1]).unwrap_or_default();
        ticker.tick_by(group.len() + 1)?;
        for v in group {
            if let Some(slot) = level.get_mut(v.to_usize()) {
                *slot = I::from_usize(k);
            }
        }
    }
    Ok(level)
}

/// All nodes sorted by `(level, id)`, with `offsets` as in [`LevelOrder`].
pub fn grouped<I: Idx>(level: &[I], offsets: &[usize]) -> Result<Vec<I>, Error> {
    let mut cursor = offsets.to_vec();
    let mut nodes = alloc::filled("grouped levels", level.len(), I::default())?;
    let mut ticker = Ticker::new();
    for (v, k) in level.iter().enumerate() {
        ticker.tick()?;
        let slot = &mut cursor[k.to_usize()];
        nodes[*slot] = I::from_usize(v);
        *slot += 1;
    }
    Ok(nodes)
}

/// The longest path (in edges) from every node to any sink, given the
/// graph's level order, on `threads` workers when the levels are wide
/// enough to pay ([`crate::sweep::worth_sharing`]); the same result for
/// every thread count.
pub fn heights<I: Idx, P: Idx>(
    csr: &Csr<'_, I, P>,
    levels: &LevelOrder<I>,
    threads: usize,
) -> Result<Vec<I>, Error> {
    let n = csr.n();
    let mut height = alloc::filled("heights", n, I::default())?;
    let cells = Disjoint::new(&mut height);
    settle_backward(csr, levels, threads, |u| {
        let mut best = None;
        for v in csr.checked_row(u)? {
            // SAFETY: (settle_backward's contract) successors are settled and
            // no worker writes them now; `get` checks the index.
            let h = unsafe { cells.get(v.to_usize()) }?.to_usize() + 1;
            best = Some(best.map_or(h, |b: usize| b.max(h)));
        }
        // SAFETY: (settle_backward's contract) only this call writes u.
        unsafe { cells.set(u, I::from_usize(best.unwrap_or(0))) }
    })?;
    Ok(height)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::edges::edges_to_csr;
    use crate::rng::SplitMix64;
    use crate::testing::random_dag_edges;

    /// Levels by the definition, relaxing every edge until nothing changes
    /// (Bellman-Ford style, quadratic but obviously right on a DAG).
    fn reference_levels(n: usize, src: &[i64], dst: &[i64]) -> Vec<i64> {
        let mut level = vec![0i64; n];
        loop {
            let mut changed = false;
            for (&u, &v) in src.iter().zip(dst) {
                if level[v as usize] < level[u as usize] + 1 {
                    level[v as usize] = level[u as usize] + 1;
                    changed = true;
                }
            }
            if !changed {
                return level;
            }
        }
    }

    #[test]
    fn serial_and_parallel_levels_match_the_definition() {
        let mut rng = SplitMix64::new(11);
        for round in 0..60 {
            // Some graphs wide enough that frontiers go to the pool.
            let n = if round % 4 == 0 { 5000 } else { 1 + rng.below(40) as usize };
            let m = rng.below(4 * n as u64) as usize;
            let (src, dst) = random_dag_edges(&mut rng, n, m);
            let g = edges_to_csr(&src, &dst, n, false).unwrap();
            let csr = Csr::new(&g.indptr, &g.indices).unwrap();
            let expected = reference_levels(n, &src, &dst);
            let reversed = reference_levels(n, &dst, &src);
            for threads in [1, 2, 3] {
                let lo = level_order(&csr, threads).unwrap().unwrap();
                let level = levels_from(&lo, threads).unwrap();
                assert_eq!(level, expected, "threads = {threads}");
                assert_eq!(heights(&csr, &lo, threads).unwrap(), reversed);
                let nodes = grouped(&level, &lo.offsets).unwrap();
                for w in lo.offsets.windows(2) {
                    let group = &nodes[w[0]..w[1]];
                    assert!(group.windows(2).all(|p| p[0] < p[1]));
                    assert!(group.iter().all(|&v| level[v as usize] == level[group[0] as usize]));
                }
            }
        }
    }

    #[test]
    fn cycles_and_bad_ids_are_reported_by_both_paths() {
        for threads in [1, 2] {
            let csr = Csr::new(&[0i32, 1, 2, 3], &[1, 2, 1]).unwrap();
            let out = level_order(&csr, threads).unwrap().unwrap_err();
            assert_eq!(out.cycle, vec![1, 2]);
            let bad = Csr::new(&[0i32, 2, 2], &[1, 7]).unwrap();
            assert!(matches!(
                level_order(&bad, threads),
                Err(Error::IndexOutOfRange { position: 1, value: 7, .. })
            ));
        }
    }
}
