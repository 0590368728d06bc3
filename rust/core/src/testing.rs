//! Random graphs shared by the unit tests of every module.

use crate::edges::edges_to_csr;
use crate::rng::SplitMix64;

/// Edges of a random DAG on `n` nodes: `m` draws, each kept only when its
/// ends differ and then pointed forward in a hidden random permutation, so
/// id order is not a topological order. Duplicates occur.
pub(crate) fn random_dag_edges(rng: &mut SplitMix64, n: usize, m: usize) -> (Vec<i64>, Vec<i64>) {
    let mut perm: Vec<i64> = (0..n as i64).collect();
    for i in (1..n).rev() {
        perm.swap(i, rng.below(i as u64 + 1) as usize);
    }
    let (mut src, mut dst) = (Vec::new(), Vec::new());
    for _ in 0..m {
        let a = rng.below(n as u64) as usize;
        let b = rng.below(n as u64) as usize;
        if a != b {
            src.push(perm[a.min(b)]);
            dst.push(perm[a.max(b)]);
        }
    }
    (src, dst)
}

/// `(indptr, indices)` of a random DAG with fewer than `max_n` nodes and
/// fewer than `max_m` edge draws (see [`random_dag_edges`]).
pub(crate) fn random_dag(rng: &mut SplitMix64, max_n: u64, max_m: u64) -> (Vec<i64>, Vec<i64>) {
    let n = rng.below(max_n) as usize;
    let m = if n < 2 { 0 } else { rng.below(max_m) as usize };
    let (src, dst) = random_dag_edges(rng, n, m);
    let g = edges_to_csr(&src, &dst, n, false).expect("ids are in range");
    (g.indptr, g.indices)
}
