//! Levels (longest path from any source, in edges) and heights (longest
//! path to any sink), single-threaded or frontier-synchronous in parallel.
//!
//! The level of a source is 0, of any other node one more than the largest
//! level of its predecessors. Kahn's loop run one frontier at a time yields
//! exactly these levels: a node becomes ready while the last of its
//! predecessors is emitted, which happens in the frontier of its highest
//! predecessor. The parallel version processes each frontier with all
//! workers, counting in-degrees down atomically; the levels do not depend on
//! which worker reaches a node first, so every thread count gives the same
//! output.

use std::sync::atomic::{AtomicU32, Ordering::Relaxed};

use rayon::prelude::*;

use crate::kahn::{kahn, Tie};
use crate::pool::pool;
use crate::sweep::{fifo_sweep, settle_backward, Acyclic, LevelOrder, SERIAL_FRONTIER};
use crate::{Csr, Error, Idx};

/// The nodes grouped by level (inside a level in no particular order), on
/// `threads` workers (`<= 1` runs on the calling thread).
///
/// Counts are kept in 32-bit atomics, so graphs with more than `u32::MAX`
/// nodes or edges run single-threaded.
pub fn level_order<I: Idx>(
    csr: &Csr<'_, I>,
    threads: usize,
) -> Result<Acyclic<LevelOrder<I>, I>, Error> {
    let fits = csr.n() <= u32::MAX as usize && csr.m() <= u32::MAX as usize;
    if threads <= 1 || !fits {
        let swept = fifo_sweep(csr, (), |_, _| (), |_, _, _, _| {})?;
        return Ok(swept.map(|(levels, _)| levels));
    }
    pool(threads)?.install(|| parallel_level_order(csr))
}

fn parallel_level_order<I: Idx>(csr: &Csr<'_, I>) -> Result<Acyclic<LevelOrder<I>, I>, Error> {
    let n = csr.n();
    let indices = csr.indices();
    // position_first keeps the reported bad entry the same as the serial check's.
    if let Some(position) = indices.par_iter().position_first(|v| v.to_usize() >= n) {
        return Err(Error::IndexOutOfRange {
            what: "indices",
            position,
            value: indices[position].to_i128(),
            n,
        });
    }
    // Atomic counts, each edge read once. (Giving each worker its own block
    // of nodes and sorting edges into per-block buckets avoids the atomics
    // but measured about twice the work of the serial loop on citation-like
    // graphs; atomics cost about a quarter more.)
    let indegree: Vec<AtomicU32> = (0..n).into_par_iter().map(|_| AtomicU32::new(0)).collect();
    indices.par_chunks(1 << 14).for_each(|chunk| {
        for v in chunk {
            indegree[v.to_usize()].fetch_add(1, Relaxed);
        }
    });
    let mut order: Vec<I> = (0..n)
        .into_par_iter()
        .filter(|&v| indegree[v].load(Relaxed) == 0)
        .map(I::from_usize)
        .collect();
    let mut offsets = vec![0];
    let mut start = 0;
    let release = |u: &I| {
        let indegree = &indegree;
        csr.row(u.to_usize())
            .iter()
            .copied()
            .filter(move |v| indegree[v.to_usize()].fetch_sub(1, Relaxed) == 1)
    };
    while start < order.len() {
        if start > 0 {
            offsets.push(start);
        }
        let frontier = &order[start..];
        let next: Vec<I> = if frontier.len() < SERIAL_FRONTIER {
            frontier.iter().flat_map(release).collect()
        } else {
            frontier.par_iter().flat_map_iter(release).collect()
        };
        start = order.len();
        order.extend(next);
    }
    if order.len() < n {
        return Ok(Err(kahn(csr, &Tie::Queue)?));
    }
    if n > 0 {
        offsets.push(n);
    }
    Ok(Ok(LevelOrder { order, offsets }))
}

/// The level of every node, from a level order, on `threads` workers.
pub fn levels_from<I: Idx>(levels: &LevelOrder<I>, threads: usize) -> Vec<I> {
    let n = levels.order.len();
    if threads > 1 && n <= u32::MAX as usize {
        if let Ok(pool) = pool(threads) {
            // Relaxed stores compile to plain stores; each node is written once.
            let level: Vec<AtomicU32> = pool.install(|| {
                let level: Vec<AtomicU32> =
                    (0..n).into_par_iter().map(|_| AtomicU32::new(0)).collect();
                levels.offsets.par_windows(2).enumerate().for_each(|(k, group)| {
                    levels.order[group[0]..group[1]]
                        .par_iter()
                        .for_each(|v| level[v.to_usize()].store(k as u32, Relaxed));
                });
                level
            });
            return level.into_iter().map(|k| I::from_usize(k.into_inner() as usize)).collect();
        }
    }
    let mut level = vec![I::default(); n];
    for (k, group) in levels.offsets.windows(2).enumerate() {
        for v in &levels.order[group[0]..group[1]] {
            level[v.to_usize()] = I::from_usize(k);
        }
    }
    level
}

/// All nodes sorted by `(level, id)`, with `offsets` as in [`LevelOrder`].
pub fn grouped<I: Idx>(level: &[I], offsets: &[usize]) -> Vec<I> {
    let mut cursor = offsets.to_vec();
    let mut nodes = vec![I::default(); level.len()];
    for (v, k) in level.iter().enumerate() {
        let slot = &mut cursor[k.to_usize()];
        nodes[*slot] = I::from_usize(v);
        *slot += 1;
    }
    nodes
}

/// The longest path (in edges) from every node to any sink, given the
/// graph's level order (validated endpoints), on `threads` workers.
pub fn heights<I: Idx>(
    csr: &Csr<'_, I>,
    levels: &LevelOrder<I>,
    threads: usize,
) -> Result<Vec<I>, Error> {
    let n = csr.n();
    if threads <= 1 || n > u32::MAX as usize {
        let mut height = vec![0usize; n];
        for u in levels.order.iter().rev() {
            let u = u.to_usize();
            height[u] = csr.row(u).iter().map(|v| height[v.to_usize()] + 1).max().unwrap_or(0);
        }
        return Ok(height.into_iter().map(I::from_usize).collect());
    }
    let height: Vec<AtomicU32> = (0..n).map(|_| AtomicU32::new(0)).collect();
    settle_backward(csr, levels, threads, |u| {
        let h = csr.row(u).iter().map(|v| height[v.to_usize()].load(Relaxed) + 1).max();
        height[u].store(h.unwrap_or(0), Relaxed);
    })?;
    Ok(height.into_iter().map(|h| I::from_usize(h.into_inner() as usize)).collect())
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
                let level = levels_from(&lo, threads);
                assert_eq!(level, expected, "threads = {threads}");
                assert_eq!(heights(&csr, &lo, threads).unwrap(), reversed);
                let nodes = grouped(&level, &lo.offsets);
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
