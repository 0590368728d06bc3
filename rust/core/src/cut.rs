//! Cutting cycles: a minimal set of edges whose removal leaves a DAG.
//!
//! 1. Strongly connected components; edges between components never lie on
//!    a cycle and are kept. Every self-loop is cut.
//! 2. Inside the components of two or more nodes, the greedy heuristic of
//!    Eades, Lin & Smyth ("A fast and effective heuristic for the feedback
//!    arc set problem", Information Processing Letters 47(6), 1993) in its
//!    linear-time bin formulation: repeatedly take sinks (to the back of the
//!    sequence), sources (to the front), otherwise a node maximising
//!    out-degree minus in-degree (to the front). Edges pointing backwards in
//!    the sequence are cut.
//! 3. Put-back pass: each cut edge, in stored order, is reinserted when that
//!    keeps the graph acyclic, keeping a topological order up to date with
//!    the Pearce–Kelly insertion algorithm (D. J. Pearce & P. H. J. Kelly, "A
//!    dynamic topological sort algorithm for directed acyclic graphs", ACM
//!    JEA 11, 2006). Reinsertion only adds paths, so an edge refused once is
//!    refused forever: afterwards no cut edge can be put back (the cut is
//!    minimal), and the cut edges are exactly the edges that go backwards
//!    in the final order.
//!
//! Steps 1–2 are O(V + E). Each put-back search is bounded by the positions
//! between the edge's endpoints; the worst case is O(cut × (V + E)).

use crate::kahn::{kahn, Tie};
use crate::scc::strong_components;
use crate::{Csr, Error, Idx};

/// The outcome of [`cut_cycles`].
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Cut<I> {
    /// Stored (CSR) positions of the cut edges, ascending.
    pub removed: Vec<usize>,
    /// A topological order of the graph without the cut edges: components
    /// in label order (see [`strong_components`]), members in the order the
    /// cut was built from. Exactly the cut edges go backwards in it.
    pub order: Vec<I>,
}

/// The edges inside the non-trivial components, renumbered locally, with
/// forward and reverse adjacency.
struct Inner {
    /// Local node -> global node id.
    global: Vec<usize>,
    fwd_start: Vec<usize>,
    fwd_target: Vec<usize>,
    /// Stored position of each local edge in the input CSR.
    fwd_position: Vec<usize>,
    rev_start: Vec<usize>,
    rev_source: Vec<usize>,
    /// Reverse entry -> local edge number.
    rev_edge: Vec<usize>,
}

impl Inner {
    fn nodes(&self) -> usize {
        self.global.len()
    }

    fn out_edges(&self, u: usize) -> std::ops::Range<usize> {
        self.fwd_start[u]..self.fwd_start[u + 1]
    }

    fn in_entries(&self, u: usize) -> std::ops::Range<usize> {
        self.rev_start[u]..self.rev_start[u + 1]
    }
}

/// A minimal set of edges of `csr` whose removal leaves a DAG, and a
/// topological order of what remains (see the module documentation).
pub fn cut_cycles<I: Idx>(csr: &Csr<'_, I>) -> Result<Cut<I>, Error> {
    let components = strong_components(csr)?;
    let labels = &components.labels;
    let sizes = components.sizes();
    let n = csr.n();
    let indices = csr.indices();

    let none = usize::MAX;
    let mut local = vec![none; n];
    let mut global = Vec::new();
    for v in 0..n {
        if sizes[labels[v].to_usize()].to_usize() > 1 {
            local[v] = global.len();
            global.push(v);
        }
    }
    let mut removed = Vec::new();
    let mut fwd_start = Vec::with_capacity(global.len() + 1);
    let mut fwd_target = Vec::new();
    let mut fwd_position = Vec::new();
    fwd_start.push(0);
    for u in 0..n {
        let inside = local[u] != none;
        for k in csr.row_range(u) {
            let v = indices[k].to_usize();
            if v == u {
                removed.push(k);
            } else if inside && labels[v] == labels[u] {
                fwd_target.push(local[v]);
                fwd_position.push(k);
            }
        }
        if inside {
            fwd_start.push(fwd_target.len());
        }
    }
    let h = global.len();
    let mut rev_start = vec![0usize; h + 1];
    for &v in &fwd_target {
        rev_start[v + 1] += 1;
    }
    for v in 0..h {
        rev_start[v + 1] += rev_start[v];
    }
    let mut cursor = rev_start.clone();
    let mut rev_source = vec![0usize; fwd_target.len()];
    let mut rev_edge = vec![0usize; fwd_target.len()];
    for u in 0..h {
        for e in fwd_start[u]..fwd_start[u + 1] {
            let slot = &mut cursor[fwd_target[e]];
            rev_source[*slot] = u;
            rev_edge[*slot] = e;
            *slot += 1;
        }
    }
    let inner =
        Inner { global, fwd_start, fwd_target, fwd_position, rev_start, rev_source, rev_edge };

    let sequence = greedy_sequence(&inner);
    let mut rank = vec![0usize; h];
    for (p, &u) in sequence.iter().enumerate() {
        rank[u] = p;
    }
    let mut is_cut = vec![false; inner.fwd_target.len()];
    let mut candidates = Vec::new();
    for u in 0..h {
        for e in inner.out_edges(u) {
            if rank[u] > rank[inner.fwd_target[e]] {
                is_cut[e] = true;
                candidates.push((u, e));
            }
        }
    }
    put_back(&inner, &mut rank, &mut is_cut, &candidates);
    removed.extend(
        candidates.iter().filter(|&&(_, e)| is_cut[e]).map(|&(_, e)| inner.fwd_position[e]),
    );
    removed.sort_unstable();

    // Members of each component in label order; the non-trivial ones are
    // then rewritten in their final rank order.
    let (start, mut members) = components.members();
    let mut at_rank = vec![0usize; h];
    for u in 0..h {
        at_rank[rank[u]] = u;
    }
    let mut cursor = start;
    for &u in &at_rank {
        let v = inner.global[u];
        let slot = &mut cursor[labels[v].to_usize()];
        members[*slot] = I::from_usize(v);
        *slot += 1;
    }
    Ok(Cut { removed, order: members })
}

/// Eades–Lin–Smyth greedy sequence of the local graph (bin formulation).
fn greedy_sequence(g: &Inner) -> Vec<usize> {
    let h = g.nodes();
    let mut out_degree: Vec<usize> = (0..h).map(|u| g.out_edges(u).len()).collect();
    let mut in_degree: Vec<usize> = (0..h).map(|u| g.in_entries(u).len()).collect();
    let max_in = in_degree.iter().copied().max().unwrap_or(0);
    let max_out = out_degree.iter().copied().max().unwrap_or(0);
    let mut lists = Lists::new(h, 2 + max_in + max_out + 1);
    let list_for = |out: usize, inn: usize| -> usize {
        if out == 0 {
            SINKS
        } else if inn == 0 {
            SOURCES
        } else {
            2 + out + max_in - inn
        }
    };
    // Pushing at the front in descending id leaves the smallest id first.
    for u in (0..h).rev() {
        lists.push(list_for(out_degree[u], in_degree[u]), u);
    }
    let mut top = lists.count() - 1;
    let mut front = Vec::with_capacity(h);
    let mut back = Vec::new();
    loop {
        let u = if let Some(u) = lists.first(SINKS) {
            back.push(u);
            u
        } else if let Some(u) = lists.first(SOURCES) {
            front.push(u);
            u
        } else {
            while top > SOURCES && lists.is_empty(top) {
                top -= 1;
            }
            match lists.first(top) {
                Some(u) if top > SOURCES => {
                    front.push(u);
                    u
                }
                _ => break,
            }
        };
        lists.remove(u);
        for e in g.out_edges(u) {
            let w = g.fwd_target[e];
            if !lists.is_removed(w) {
                in_degree[w] -= 1;
                let to = list_for(out_degree[w], in_degree[w]);
                lists.relist(w, to);
                top = top.max(to);
            }
        }
        for r in g.in_entries(u) {
            let w = g.rev_source[r];
            if !lists.is_removed(w) {
                out_degree[w] -= 1;
                lists.relist(w, list_for(out_degree[w], in_degree[w]));
            }
        }
    }
    front.extend(back.iter().rev());
    front
}

const SINKS: usize = 0;
const SOURCES: usize = 1;

/// Doubly linked lists of nodes, each node in at most one list.
struct Lists {
    head: Vec<usize>,
    next: Vec<usize>,
    prev: Vec<usize>,
    /// The list holding a node; `REMOVED` once taken out for good.
    list: Vec<usize>,
}

const NIL: usize = usize::MAX;
const REMOVED: usize = usize::MAX;

impl Lists {
    fn new(nodes: usize, lists: usize) -> Self {
        Lists {
            head: vec![NIL; lists],
            next: vec![NIL; nodes],
            prev: vec![NIL; nodes],
            list: vec![REMOVED; nodes],
        }
    }

    fn count(&self) -> usize {
        self.head.len()
    }

    fn is_empty(&self, list: usize) -> bool {
        self.head[list] == NIL
    }

    fn is_removed(&self, u: usize) -> bool {
        self.list[u] == REMOVED
    }

    fn push(&mut self, list: usize, u: usize) {
        let old = self.head[list];
        self.next[u] = old;
        self.prev[u] = NIL;
        if old != NIL {
            self.prev[old] = u;
        }
        self.head[list] = u;
        self.list[u] = list;
    }

    fn unlink(&mut self, u: usize) {
        let (p, q) = (self.prev[u], self.next[u]);
        if p == NIL {
            self.head[self.list[u]] = q;
        } else {
            self.next[p] = q;
        }
        if q != NIL {
            self.prev[q] = p;
        }
    }

    fn first(&self, list: usize) -> Option<usize> {
        let u = self.head[list];
        (u != NIL).then_some(u)
    }

    /// Take `u` out of every list for good.
    fn remove(&mut self, u: usize) {
        self.unlink(u);
        self.list[u] = REMOVED;
    }

    fn relist(&mut self, u: usize, to: usize) {
        if self.list[u] != to {
            self.unlink(u);
            self.push(to, u);
        }
    }
}

/// Pearce–Kelly put-back of the candidate edges `(source, edge)`, in order.
fn put_back(g: &Inner, rank: &mut [usize], is_cut: &mut [bool], candidates: &[(usize, usize)]) {
    let h = g.nodes();
    let mut visited = vec![false; h];
    let mut stack = Vec::new();
    let mut forward = Vec::new();
    let mut backward = Vec::new();
    let mut pool = Vec::new();
    for &(x, e) in candidates {
        let y = g.fwd_target[e];
        let (lower, upper) = (rank[y], rank[x]);
        if lower > upper {
            // Earlier reorderings already put x before y.
            is_cut[e] = false;
            continue;
        }
        // Forward from y through ranks below x's: reaching x closes a cycle.
        forward.clear();
        stack.clear();
        stack.push(y);
        visited[y] = true;
        let mut closes = false;
        'search: while let Some(a) = stack.pop() {
            forward.push(a);
            for f in g.out_edges(a) {
                if is_cut[f] {
                    continue;
                }
                let w = g.fwd_target[f];
                if w == x {
                    closes = true;
                    break 'search;
                }
                if !visited[w] && rank[w] < upper {
                    visited[w] = true;
                    stack.push(w);
                }
            }
        }
        if closes {
            for &a in forward.iter().chain(stack.iter()) {
                visited[a] = false;
            }
            continue;
        }
        // Backward from x through ranks above y's.
        backward.clear();
        stack.push(x);
        visited[x] = true;
        while let Some(a) = stack.pop() {
            backward.push(a);
            for r in g.in_entries(a) {
                if is_cut[g.rev_edge[r]] {
                    continue;
                }
                let w = g.rev_source[r];
                if !visited[w] && rank[w] > lower {
                    visited[w] = true;
                    stack.push(w);
                }
            }
        }
        // The affected nodes keep their set of ranks; x's ancestors take the
        // smallest ones, y's descendants the rest, each group in its old order.
        backward.sort_unstable_by_key(|&a| rank[a]);
        forward.sort_unstable_by_key(|&a| rank[a]);
        pool.clear();
        pool.extend(backward.iter().chain(forward.iter()).map(|&a| rank[a]));
        pool.sort_unstable();
        for (&a, &r) in backward.iter().chain(forward.iter()).zip(&pool) {
            rank[a] = r;
            visited[a] = false;
        }
        is_cut[e] = false;
    }
}

/// A copy of `csr` without the edges at the given stored positions (ascending).
pub fn without_edges<I: Idx>(csr: &Csr<'_, I>, removed: &[usize]) -> (Vec<I>, Vec<I>) {
    let mut indptr = Vec::with_capacity(csr.n() + 1);
    let mut indices = Vec::with_capacity(csr.m() - removed.len().min(csr.m()));
    let mut skip = removed.iter().peekable();
    indptr.push(I::default());
    for u in 0..csr.n() {
        for k in csr.row_range(u) {
            if skip.peek() == Some(&&k) {
                skip.next();
            } else {
                indices.push(csr.indices()[k]);
            }
        }
        indptr.push(I::from_usize(indices.len()));
    }
    (indptr, indices)
}

/// Kahn's order under `tie` of the graph left by [`cut_cycles`].
pub fn cut_order<I: Idx>(csr: &Csr<'_, I>, tie: &Tie<'_>) -> Result<Vec<I>, Error> {
    let cut = cut_cycles(csr)?;
    let (indptr, indices) = without_edges(csr, &cut.removed);
    let rest = Csr::new(&indptr, &indices)?;
    let outcome = kahn(&rest, tie)?;
    debug_assert!(outcome.is_complete(), "the cut leaves a DAG");
    Ok(outcome.order)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::edges::edges_to_csr;
    use crate::rng::SplitMix64;
    use crate::scc::tests::{random_csr, reach};
    use crate::verify::verify;

    fn rest_of(indptr: &[i64], indices: &[i64], removed: &[usize]) -> (Vec<i64>, Vec<i64>) {
        without_edges(&Csr::new(indptr, indices).unwrap(), removed)
    }

    #[test]
    fn cut_leaves_a_dag_is_minimal_and_matches_the_order() {
        let mut rng = SplitMix64::new(41);
        for _ in 0..500 {
            let (indptr, indices) = random_csr(&mut rng, 10, 30);
            let g = Csr::new(&indptr, &indices).unwrap();
            let cut = cut_cycles(&g).unwrap();
            assert!(cut.removed.windows(2).all(|w| w[0] < w[1]));
            let (rp, ri) = rest_of(&indptr, &indices, &cut.removed);
            let rest = Csr::new(&rp, &ri).unwrap();
            assert_eq!(verify(&rest, &cut.order).unwrap(), None, "order of the rest");
            // Exactly the cut edges go backwards (or loop) in the order.
            let mut position = vec![0usize; g.n()];
            for (p, &v) in cut.order.iter().enumerate() {
                position[v as usize] = p;
            }
            let mut backwards = Vec::new();
            for u in 0..g.n() {
                for k in g.row_range(u) {
                    if position[indices[k] as usize] <= position[u] {
                        backwards.push(k);
                    }
                }
            }
            assert_eq!(backwards, cut.removed);
            // Minimal: each cut edge u -> v closes a cycle in the rest.
            let r = reach(&rp, &ri);
            for &k in &cut.removed {
                let u = (0..g.n()).find(|&u| g.row_range(u).contains(&k)).unwrap();
                let v = indices[k] as usize;
                assert!(u == v || r[v][u], "edge {u} -> {v} could be put back");
            }
        }
    }

    #[test]
    fn greedy_bound_on_graphs_without_two_cycles() {
        // Eades, Lin & Smyth (IPL 47(6), 1993): for a connected graph without
        // 2-cycles the greedy sequence has at most m/2 - n/6 backward edges.
        let mut rng = SplitMix64::new(43);
        for _ in 0..300 {
            let n = 2 + rng.below(12) as usize;
            let mut pairs = std::collections::BTreeSet::new();
            for v in 1..n {
                pairs.insert((rng.below(v as u64) as usize, v));
            }
            for _ in 0..rng.below(3 * n as u64) {
                let (a, b) = (rng.below(n as u64) as usize, rng.below(n as u64) as usize);
                if a != b {
                    pairs.insert((a.min(b), a.max(b)));
                }
            }
            let (mut src, mut dst) = (Vec::new(), Vec::new());
            for (a, b) in pairs {
                let (u, v) = if rng.below(2) == 0 { (a, b) } else { (b, a) };
                src.push(u as i64);
                dst.push(v as i64);
            }
            let m = src.len();
            let built = edges_to_csr(&src, &dst, n, false).unwrap();
            let g = Csr::new(&built.indptr, &built.indices).unwrap();
            let cut = cut_cycles(&g).unwrap();
            assert!(6 * cut.removed.len() <= 3 * m - n, "{} > {m}/2 - {n}/6", cut.removed.len());
        }
    }

    #[test]
    fn small_cases() {
        // A self-loop alone is cut; a 2-cycle loses one edge.
        let g = Csr::new(&[0i32, 1, 2], &[0, 0]).unwrap();
        let cut = cut_cycles(&g).unwrap();
        assert_eq!(cut.removed, vec![0]);
        assert_eq!(cut.order, vec![1, 0]);
        let g = Csr::new(&[0i32, 1, 2], &[1, 0]).unwrap();
        let cut = cut_cycles(&g).unwrap();
        assert_eq!(cut.removed.len(), 1);
        // A DAG loses nothing.
        let g = Csr::new(&[0i32, 2, 3, 3], &[1, 2, 2]).unwrap();
        assert!(cut_cycles(&g).unwrap().removed.is_empty());
        // Parallel edges closing a cycle go together.
        let g = Csr::new(&[0i64, 1, 3], &[1, 0, 0]).unwrap();
        let cut = cut_cycles(&g).unwrap();
        assert!(cut.removed == vec![0] || cut.removed == vec![1, 2]);
        assert_eq!(cut_order(&g, &Tie::Queue).unwrap().len(), 2);
    }
}
