//! Main path analysis on a DAG: the global, local (forward, backward) and
//! key-route main paths over per-edge traversal weights.
//!
//! Every method is a few linear passes along one topological order: the
//! heaviest path to a sink (`best_to`, backward), from a source
//! (`best_from`, forward), the heaviest edge into each node, and a walk or a
//! spread along the chosen edges. Ties go to the lowest stored edge index
//! (the lowest node id among tied starting sources); with `all_ties` every
//! tied edge is followed and the union is returned.

use crate::interrupt::Ticker;
use crate::paths::{path_counts_of, Kind};
use crate::sweep::{backward, forward, Acyclic, LevelOrder};
use crate::{alloc, levels, Csr, Error, Idx};

/// How the main path is chosen.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Method {
    /// The source-to-sink path of largest total weight.
    Global,
    /// From the heaviest edge out of a source, the heaviest edge at each step.
    Forward,
    /// From the heaviest edge into a sink, the heaviest edge in at each step.
    Backward,
    /// The `routes` heaviest edges, each extended both ways, locally or
    /// globally (the heaviest path to a sink and from a source).
    KeyRoute { routes: usize, global: bool },
}

/// Where the per-edge weights come from.
#[derive(Debug, Clone, Copy)]
pub enum EdgeWeight<'a> {
    /// A traversal weight computed here (the float counts; their natural
    /// logarithms when the float total overflows).
    Count(Kind),
    /// The caller's weights, per stored edge (finite, checked here).
    Each(&'a [f64]),
}

/// A main path, or the union of several.
#[derive(Debug, Clone, PartialEq)]
pub struct MainPath {
    /// Stored edge indices of the main path (union), ascending.
    pub edges: Vec<usize>,
    /// For a single path: its nodes, source first; `None` for a union.
    pub path: Option<Vec<usize>>,
    /// The weight of each edge of `edges`.
    pub edge_weight: Vec<f64>,
    /// The weights were logarithms of counts (float counts overflowed).
    pub log_weights: bool,
}

/// The per-edge tools every method shares.
struct Graph<'c, 'a, I: Idx, P: Idx> {
    csr: &'c Csr<'a, I, P>,
    order: &'c [I],
    w: &'c [f64],
}

impl<I: Idx, P: Idx> Graph<'_, '_, I, P> {
    fn head(&self, e: usize) -> Result<usize, Error> {
        let v = self.csr.indices().get(e).ok_or(Error::InputChanged { what: "indices" })?;
        let v = v.to_usize();
        if v >= self.csr.n() {
            return Err(Error::InputChanged { what: "indices" });
        }
        Ok(v)
    }

    fn weight(&self, e: usize) -> Result<f64, Error> {
        self.w.get(e).copied().ok_or(Error::InputChanged { what: "indices" })
    }

    /// The row of `u` as a stored edge range.
    fn edges(&self, u: usize) -> Result<std::ops::Range<usize>, Error> {
        let (start, row) = self.csr.checked_row_at(u)?;
        Ok(start..start + row.len())
    }

    /// Per node: the heaviest weight of a path to a sink and its first edge
    /// (`usize::MAX` at sinks).
    fn best_to(&self) -> Result<(Vec<f64>, Vec<usize>), Error> {
        let n = self.csr.n();
        let mut best = alloc::filled("heaviest paths to sinks", n, 0.0f64)?;
        let mut arg = alloc::filled("heaviest first edges", n, usize::MAX)?;
        backward(self.csr, self.order, |u| {
            let (mut top, mut pick) = (f64::NEG_INFINITY, usize::MAX);
            for e in self.edges(u)? {
                let v = self.head(e)?;
                let through = self.weight(e)? + best[v];
                if through > top {
                    (top, pick) = (through, e);
                }
            }
            if pick != usize::MAX {
                (best[u], arg[u]) = (top, pick);
            }
            Ok(())
        })?;
        Ok((best, arg))
    }

    /// Per node: the heaviest weight of a path from a source and its last
    /// edge (`usize::MAX` at sources), in one slot.
    fn best_from(&self) -> Result<Vec<(f64, usize)>, Error> {
        let n = self.csr.n();
        let mut best =
            alloc::filled("heaviest paths from sources", n, (f64::NEG_INFINITY, usize::MAX))?;
        forward(self.csr, self.order, |u| {
            if best[u].0 == f64::NEG_INFINITY {
                best[u].0 = 0.0;
            }
            let here = best[u].0;
            for e in self.edges(u)? {
                let v = self.head(e)?;
                let through = here + self.weight(e)?;
                let slot = &mut best[v];
                if through > slot.0 {
                    *slot = (through, e);
                }
            }
            Ok(())
        })?;
        Ok(best)
    }

    /// Per node: the heaviest edge weight into it and that edge (one slot
    /// per node, so each edge costs one random access).
    fn heaviest_in(&self) -> Result<Vec<(f64, usize)>, Error> {
        let n = self.csr.n();
        let mut top = alloc::filled("heaviest edges in", n, (f64::NEG_INFINITY, usize::MAX))?;
        // Any node order will do: id order reads the rows one after another.
        let mut ticker = Ticker::new();
        for u in 0..n {
            let edges = self.edges(u)?;
            ticker.tick_by(edges.len() + 1)?;
            for e in edges {
                let (v, x) = (self.head(e)?, self.weight(e)?);
                let slot = &mut top[v];
                if x > slot.0 {
                    *slot = (x, e);
                }
            }
        }
        Ok(top)
    }

    /// The tail of stored edge `e`: the row holding it.
    fn tail(&self, e: usize) -> Result<usize, Error> {
        let u = self.csr.indptr().partition_point(|p| p.to_usize() <= e);
        u.checked_sub(1).ok_or(Error::InputChanged { what: "indptr" })
    }

    /// The sources: level 0 of the order.
    fn sources(&self, offsets: &[usize]) -> Result<&[I], Error> {
        let end = offsets.get(1).copied().unwrap_or(0);
        self.order.get(..end).ok_or(Error::InputChanged { what: "indices" })
    }

    /// The heaviest edge of `u`'s row (lowest index on ties), and its weight.
    fn heaviest_out(&self, u: usize) -> Result<Option<(usize, f64)>, Error> {
        let mut found: Option<(usize, f64)> = None;
        for e in self.edges(u)? {
            let x = self.weight(e)?;
            if found.is_none_or(|(_, top)| x > top) {
                found = Some((e, x));
            }
        }
        Ok(found)
    }

    /// Follow `tight` edges forward from every `reached` node, in order.
    fn spread_forward(
        &self,
        reached: &mut [bool],
        keep: &mut [bool],
        mut tight: impl FnMut(usize, usize, usize) -> Result<bool, Error>,
    ) -> Result<(), Error> {
        forward(self.csr, self.order, |u| {
            if !reached[u] {
                return Ok(());
            }
            for e in self.edges(u)? {
                let v = self.head(e)?;
                if tight(u, e, v)? {
                    keep[e] = true;
                    reached[v] = true;
                }
            }
            Ok(())
        })
    }

    /// Follow `tight` edges backward into every `reached` node, in reverse order.
    fn spread_backward(
        &self,
        reached: &mut [bool],
        keep: &mut [bool],
        tight: impl Fn(usize, usize, usize) -> Result<bool, Error>,
    ) -> Result<(), Error> {
        backward(self.csr, self.order, |u| {
            for e in self.edges(u)? {
                let v = self.head(e)?;
                if reached[v] && tight(u, e, v)? {
                    keep[e] = true;
                    reached[u] = true;
                }
            }
            Ok(())
        })
    }
}

/// A path walked edge by edge: `next(u)` gives the chosen edge and the node
/// it leads to, or `None` at the end.
fn walk(
    start: usize,
    keep: &mut [bool],
    nodes: &mut Vec<usize>,
    n: usize,
    mut next: impl FnMut(usize) -> Result<Option<(usize, usize)>, Error>,
) -> Result<(), Error> {
    let mut u = start;
    nodes.push(u);
    // A DAG path has fewer than n edges; more means the input changed.
    for _ in 0..n {
        match next(u)? {
            None => return Ok(()),
            Some((e, v)) => {
                keep[e] = true;
                nodes.push(v);
                u = v;
            }
        }
    }
    Err(Error::InputChanged { what: "indices" })
}

/// The `k` heaviest edges (lowest index first on ties), heaviest first.
fn heaviest_edges(w: &[f64], k: usize) -> Result<Vec<usize>, Error> {
    if k <= 64 {
        // One sequential scan keeping the best k so far, heaviest first.
        let mut best: Vec<(f64, usize)> = Vec::with_capacity(k + 1);
        let mut ticker = Ticker::new();
        for (e, &x) in w.iter().enumerate() {
            ticker.tick()?;
            if best.len() == k && best.last().is_none_or(|&(low, _)| x <= low) {
                continue;
            }
            // After every kept edge of weight >= x (earlier index wins ties).
            let at = best.partition_point(|&(y, _)| y >= x);
            best.insert(at, (x, e));
            best.truncate(k);
        }
        return Ok(best.into_iter().map(|(_, e)| e).collect());
    }
    let mut all = alloc::with_capacity("edge ranking", w.len())?;
    all.extend(0..w.len());
    let rank = |a: &usize, b: &usize| w[*b].total_cmp(&w[*a]).then(a.cmp(b));
    if k < all.len() && k > 0 {
        all.select_nth_unstable_by(k - 1, rank);
        all.truncate(k);
    }
    all.truncate(k);
    all.sort_unstable_by(rank);
    Ok(all)
}

/// The main path of `csr` under `weight` and `method`; `all_ties` follows
/// every tied edge and returns the union.
pub fn main_path<I: Idx, P: Idx>(
    csr: &Csr<'_, I, P>,
    weight: EdgeWeight<'_>,
    method: Method,
    all_ties: bool,
    threads: usize,
) -> Result<Acyclic<MainPath, I>, Error> {
    let (owned, order, log_weights) = match weight {
        EdgeWeight::Count(kind) => match path_counts_of(csr, threads, kind)? {
            Err(cyclic) => return Ok(Err(cyclic)),
            Ok((counts, order)) => match counts.log {
                Some(log) => (Some(log.through_edge), order, true),
                None => (Some(counts.through_edge), order, false),
            },
        },
        EdgeWeight::Each(w) => {
            if w.len() != csr.m() {
                return Err(Error::LengthMismatch {
                    what: "edge weights",
                    expected: csr.m(),
                    got: w.len(),
                });
            }
            if let Some(position) = w.iter().position(|x| !x.is_finite()) {
                return Err(Error::BadWeight {
                    what: "edge weight",
                    position,
                    value: w[position].to_string(),
                });
            }
            match levels::level_order(csr, threads)? {
                Err(cyclic) => return Ok(Err(cyclic)),
                Ok(order) => (None, order, false),
            }
        }
    };
    let w: &[f64] = match (&owned, weight) {
        (Some(owned), _) => owned,
        (None, EdgeWeight::Each(w)) => w,
        (None, EdgeWeight::Count(_)) => {
            return Err(Error::Internal { reason: "main path weights went missing".into() })
        }
    };
    let found = extract(csr, &order, w, method, all_ties)?;
    let (edges, path) = found;
    let edge_weight = edges.iter().map(|&e| w[e]).collect();
    Ok(Ok(MainPath { edges, path, edge_weight, log_weights }))
}

/// The chosen edges (ascending) and, for a single path, its nodes.
#[allow(clippy::type_complexity)]
fn extract<I: Idx, P: Idx>(
    csr: &Csr<'_, I, P>,
    order: &LevelOrder<I>,
    w: &[f64],
    method: Method,
    all_ties: bool,
) -> Result<(Vec<usize>, Option<Vec<usize>>), Error> {
    let (n, m) = (csr.n(), csr.m());
    let g = Graph { csr, order: &order.order, w };
    let mut keep = alloc::filled("main path edges", m, false)?;
    let mut path = None;
    match method {
        Method::Global => {
            let (best, arg) = g.best_to()?;
            // Sources with an edge out; the heaviest, lowest id on ties.
            let mut sources: Vec<usize> =
                g.sources(&order.offsets)?.iter().map(|u| u.to_usize()).collect();
            sources.sort_unstable();
            let mut starts = Vec::new();
            let mut start_weight = f64::NEG_INFINITY;
            for u in sources {
                if !g.edges(u)?.is_empty() {
                    if best[u] > start_weight {
                        starts.clear();
                        start_weight = best[u];
                    }
                    if best[u] == start_weight {
                        starts.push(u);
                    }
                }
            }
            if all_ties {
                let mut reached = alloc::filled("main path nodes", n, false)?;
                for &s in &starts {
                    reached[s] = true;
                }
                g.spread_forward(&mut reached, &mut keep, |u, e, v| {
                    Ok(arg[u] != usize::MAX && g.weight(e)? + best[v] == best[u])
                })?;
            } else if let Some(&s) = starts.first() {
                let mut nodes = Vec::new();
                walk(s, &mut keep, &mut nodes, n, |u| {
                    Ok(match arg.get(u).copied() {
                        Some(e) if e != usize::MAX => Some((e, g.head(e)?)),
                        _ => None,
                    })
                })?;
                path = Some(nodes);
            } else {
                path = Some(Vec::new());
            }
        }
        Method::Forward => {
            // The heaviest edges out of sources (lowest index on ties).
            let mut sources: Vec<usize> =
                g.sources(&order.offsets)?.iter().map(|u| u.to_usize()).collect();
            sources.sort_unstable();
            let mut seeds = Vec::new();
            let mut seed_weight = f64::NEG_INFINITY;
            for u in sources {
                for e in g.edges(u)? {
                    let x = g.weight(e)?;
                    if x > seed_weight {
                        seeds.clear();
                        seed_weight = x;
                    }
                    if x == seed_weight {
                        seeds.push((u, e));
                    }
                }
            }
            if all_ties {
                let mut reached = alloc::filled("main path nodes", n, false)?;
                for &(_, e) in &seeds {
                    keep[e] = true;
                    reached[g.head(e)?] = true;
                }
                let mut row_top = (usize::MAX, 0.0);
                g.spread_forward(&mut reached, &mut keep, |u, e, _| {
                    if row_top.0 != u {
                        row_top = (u, g.heaviest_out(u)?.map_or(f64::NAN, |(_, x)| x));
                    }
                    Ok(g.weight(e)? == row_top.1)
                })?;
            } else if let Some(&(s, e)) = seeds.first() {
                let mut nodes = vec![s];
                keep[e] = true;
                walk(g.head(e)?, &mut keep, &mut nodes, n, |u| {
                    Ok(match g.heaviest_out(u)? {
                        Some((e, _)) => Some((e, g.head(e)?)),
                        None => None,
                    })
                })?;
                path = Some(nodes);
            } else {
                path = Some(Vec::new());
            }
        }
        Method::Backward => {
            let top = g.heaviest_in()?;
            // The heaviest edges into sinks.
            let mut seeds = Vec::new();
            let mut seed_weight = f64::NEG_INFINITY;
            for u in 0..n {
                for e in g.edges(u)? {
                    let v = g.head(e)?;
                    if !g.edges(v)?.is_empty() {
                        continue;
                    }
                    let x = g.weight(e)?;
                    if x > seed_weight {
                        seeds.clear();
                        seed_weight = x;
                    }
                    if x == seed_weight {
                        seeds.push((u, e, v));
                    }
                }
            }
            if all_ties {
                let mut reached = alloc::filled("main path nodes", n, false)?;
                for &(u, e, _) in &seeds {
                    keep[e] = true;
                    reached[u] = true;
                }
                g.spread_backward(&mut reached, &mut keep, |_, e, v| Ok(g.w[e] == top[v].0))?;
            } else if let Some(&(u, e, v)) = seeds.first() {
                let mut nodes = vec![v];
                keep[e] = true;
                walk(u, &mut keep, &mut nodes, n, |x| {
                    Ok(match top.get(x).copied() {
                        Some((_, e)) if e != usize::MAX => Some((e, g.tail(e)?)),
                        _ => None,
                    })
                })?;
                nodes.reverse();
                path = Some(nodes);
            } else {
                path = Some(Vec::new());
            }
        }
        Method::KeyRoute { routes, global } => {
            let seeds = heaviest_edges(w, routes)?;
            let mut tails = alloc::with_capacity("key routes", seeds.len())?;
            for &e in &seeds {
                keep[e] = true;
                tails.push(g.tail(e)?);
            }
            let (mut ahead, mut behind) = (Vec::new(), Vec::new());
            for (&e, &u) in seeds.iter().zip(&tails) {
                ahead.push(g.head(e)?);
                behind.push(u);
            }
            let mut scratch = Vec::new();
            if global {
                let (best, arg) = g.best_to()?;
                let best_in = g.best_from()?;
                if all_ties {
                    let mut reached = alloc::filled("main path nodes", n, false)?;
                    for &v in &ahead {
                        reached[v] = true;
                    }
                    g.spread_forward(&mut reached, &mut keep, |u, e, v| {
                        Ok(arg[u] != usize::MAX && g.weight(e)? + best[v] == best[u])
                    })?;
                    let mut reached = alloc::filled("main path nodes", n, false)?;
                    for &u in &behind {
                        reached[u] = true;
                    }
                    g.spread_backward(&mut reached, &mut keep, |u, e, v| {
                        let (here, there) = (best_in[u].0, best_in[v]);
                        Ok(there.1 != usize::MAX && here + g.weight(e)? == there.0)
                    })?;
                } else {
                    for (&v, &u) in ahead.iter().zip(&behind) {
                        walk(v, &mut keep, &mut scratch, n, |x| {
                            Ok(match arg.get(x).copied() {
                                Some(e) if e != usize::MAX => Some((e, g.head(e)?)),
                                _ => None,
                            })
                        })?;
                        walk(u, &mut keep, &mut scratch, n, |x| {
                            Ok(match best_in.get(x).copied() {
                                Some((_, e)) if e != usize::MAX => Some((e, g.tail(e)?)),
                                _ => None,
                            })
                        })?;
                    }
                }
            } else {
                let top = g.heaviest_in()?;
                if all_ties {
                    let mut reached = alloc::filled("main path nodes", n, false)?;
                    for &v in &ahead {
                        reached[v] = true;
                    }
                    let mut row_top = (usize::MAX, 0.0);
                    g.spread_forward(&mut reached, &mut keep, |u, e, _| {
                        if row_top.0 != u {
                            row_top = (u, g.heaviest_out(u)?.map_or(f64::NAN, |(_, x)| x));
                        }
                        Ok(g.weight(e)? == row_top.1)
                    })?;
                    let mut reached = alloc::filled("main path nodes", n, false)?;
                    for &u in &behind {
                        reached[u] = true;
                    }
                    g.spread_backward(&mut reached, &mut keep, |_, e, v| Ok(g.w[e] == top[v].0))?;
                } else {
                    for (&v, &u) in ahead.iter().zip(&behind) {
                        walk(v, &mut keep, &mut scratch, n, |x| {
                            Ok(match g.heaviest_out(x)? {
                                Some((e, _)) => Some((e, g.head(e)?)),
                                None => None,
                            })
                        })?;
                        walk(u, &mut keep, &mut scratch, n, |x| {
                            Ok(match top.get(x).copied() {
                                Some((_, e)) if e != usize::MAX => Some((e, g.tail(e)?)),
                                _ => None,
                            })
                        })?;
                    }
                }
            }
        }
    }
    let edges = keep.iter().enumerate().filter_map(|(e, &k)| k.then_some(e)).collect();
    Ok((edges, path))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::edges::edges_to_csr;
    use crate::rng::SplitMix64;

    /// Every source-to-sink path's weight, by plain recursion.
    fn heaviest_by_enumeration(csr: &Csr<'_, i64>, w: &[f64], u: usize) -> f64 {
        let range = csr.row_range(u);
        if range.is_empty() {
            return 0.0;
        }
        range
            .map(|e| w[e] + heaviest_by_enumeration(csr, w, csr.indices()[e] as usize))
            .fold(f64::NEG_INFINITY, f64::max)
    }

    #[test]
    fn global_main_path_is_the_heaviest_source_to_sink_path() {
        let mut rng = SplitMix64::new(5);
        for _ in 0..300 {
            let n = 1 + rng.below(9) as usize;
            let (mut src, mut dst) = (Vec::new(), Vec::new());
            for _ in 0..rng.below(16) {
                let (a, b) = (rng.below(n as u64) as i64, rng.below(n as u64) as i64);
                if a != b {
                    src.push(a.min(b));
                    dst.push(a.max(b));
                }
            }
            let g = edges_to_csr(&src, &dst, n, false).unwrap();
            let csr = Csr::new(&g.indptr, &g.indices).unwrap();
            let w: Vec<f64> = (0..csr.m()).map(|_| rng.below(4) as f64).collect();
            let found =
                main_path(&csr, EdgeWeight::Each(&w), Method::Global, false, 1).unwrap().unwrap();
            let has_in: Vec<bool> = (0..n).map(|v| g.indices.contains(&(v as i64))).collect();
            let expected = (0..n)
                .filter(|&u| !has_in[u] && !csr.row(u).is_empty())
                .map(|u| heaviest_by_enumeration(&csr, &w, u))
                .fold(f64::NEG_INFINITY, f64::max);
            let got: f64 = found.edge_weight.iter().sum();
            if csr.m() == 0 {
                assert!(found.edges.is_empty());
            } else {
                assert_eq!(got, expected);
            }
            let all =
                main_path(&csr, EdgeWeight::Each(&w), Method::Global, true, 1).unwrap().unwrap();
            assert!(found.edges.iter().all(|e| all.edges.contains(e)));
        }
    }

    #[test]
    fn key_routes_keep_their_seeds() {
        let (src, dst) = (vec![0i64, 1, 1, 2, 3], vec![1i64, 2, 3, 4, 4]);
        let g = edges_to_csr(&src, &dst, 5, false).unwrap();
        let csr = Csr::new(&g.indptr, &g.indices).unwrap();
        let w = [1.0, 5.0, 2.0, 1.0, 9.0];
        for global in [false, true] {
            let method = Method::KeyRoute { routes: 1, global };
            let found = main_path(&csr, EdgeWeight::Each(&w), method, false, 1).unwrap().unwrap();
            // Seed 3 -> 4 (weight 9); back 1 -> 3 then 0 -> 1.
            assert_eq!(found.edges, vec![0, 2, 4]);
        }
    }
}
