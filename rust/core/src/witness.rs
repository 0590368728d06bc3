//! Directed cycles as evidence: one shortest cycle through a given node, or
//! through the smallest node that lies on any cycle.

use crate::alloc;
use crate::interrupt::Ticker;
use crate::scc::strong_components;
use crate::{Csr, Error, Idx};

/// A shortest directed cycle through `through`, starting there, or `None`
/// when no cycle passes through it. A self-loop is a cycle of one node.
///
/// Breadth-first search from `through` in stored edge order; among cycles
/// of the shortest length, the one found first in that order is returned.
/// O(V + E), stopping as soon as the cycle closes.
pub fn shortest_cycle_through<I: Idx, P: Idx>(
    csr: &Csr<'_, I, P>,
    through: i128,
) -> Result<Option<Vec<I>>, Error> {
    csr.check_indices()?;
    let n = csr.n();
    if through < 0 || through >= n as i128 {
        return Err(Error::NoSuchNode { what: "through", value: through, n });
    }
    let start = through as usize;
    // parent[v] == n: not reached yet.
    let unseen = I::from_usize(n);
    let mut parent = alloc::filled("cycle search parents", n, unseen)?;
    parent[start] = I::from_usize(start);
    let mut queue: Vec<usize> = alloc::with_capacity("cycle search queue", n)?;
    queue.push(start);
    let mut head = 0;
    let mut ticker = Ticker::new();
    while head < queue.len() {
        let u = queue[head];
        head += 1;
        let row = csr.checked_row(u)?;
        ticker.tick_by(row.len() + 1)?;
        for &w in row {
            let w = w.to_usize();
            if w == start {
                let mut cycle = Vec::new();
                let mut x = u;
                while x != start {
                    cycle.push(I::from_usize(x));
                    x = parent[x].to_usize();
                }
                cycle.push(I::from_usize(start));
                cycle.reverse();
                return Ok(Some(cycle));
            }
            let Some(slot) = parent.get_mut(w) else {
                return Err(Error::InputChanged { what: "indices" });
            };
            if *slot == unseen {
                *slot = I::from_usize(u);
                queue.push(w);
            }
        }
    }
    Ok(None)
}

/// One directed cycle of `csr`, or `None` for a DAG: a shortest cycle
/// through the smallest node id that lies on any cycle. O(V + E).
pub fn find_cycle<I: Idx, P: Idx>(csr: &Csr<'_, I, P>) -> Result<Option<Vec<I>>, Error> {
    let components = strong_components(csr)?;
    let sizes = components.try_sizes()?;
    let mut ticker = Ticker::new();
    let mut on_cycle = None;
    for v in 0..csr.n() {
        let row = csr.checked_row(v)?;
        ticker.tick_by(row.len() + 1)?;
        if sizes[components.labels[v].to_usize()].to_usize() > 1
            || row.iter().any(|w| w.to_usize() == v)
        {
            on_cycle = Some(v);
            break;
        }
    }
    match on_cycle {
        Some(v) => shortest_cycle_through(csr, v as i128),
        None => Ok(None),
    }
}

/// The strongly connected components of a graph and one shortest cycle in
/// each component that holds a cycle (more than one node, or a self-loop).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Witnesses<I> {
    /// Component of every node, numbered as [`strong_components`] does.
    pub labels: Vec<I>,
    /// Number of components.
    pub count: usize,
    /// The components holding a cycle, ascending.
    pub components: Vec<I>,
    /// The witness of `components[k]` is `nodes[offsets[k]..offsets[k + 1]]`.
    pub offsets: Vec<usize>,
    /// The witness cycles one after another, each starting at its node.
    pub nodes: Vec<I>,
}

/// For every strongly connected component holding a cycle, a shortest cycle
/// through its smallest node id, the same cycle [`shortest_cycle_through`]
/// returns for that node.
///
/// Each breadth-first search follows only the edges inside its own
/// component, so every node is dequeued once and every row scanned once
/// over all components: O(V + E) in total, however many components there
/// are.
pub fn component_witnesses<I: Idx, P: Idx>(csr: &Csr<'_, I, P>) -> Result<Witnesses<I>, Error> {
    csr.check_indices()?;
    let n = csr.n();
    let found = strong_components(csr)?;
    let sizes = found.try_sizes()?;
    let labels = &found.labels;
    // first[c]: the smallest node of component c (n while none seen yet).
    let mut first = alloc::filled("component first nodes", found.count, n)?;
    for (v, label) in labels.iter().enumerate() {
        let slot = &mut first[label.to_usize()];
        if *slot == n {
            *slot = v;
        }
    }
    let unseen = I::from_usize(n);
    // Components are disjoint and every search stays inside its own, so
    // the parents never need resetting between searches.
    let mut parent = alloc::filled("cycle search parents", n, unseen)?;
    let mut queue: Vec<usize> = alloc::with_capacity("cycle search queue", n)?;
    let mut components: Vec<I> = Vec::new();
    let mut offsets: Vec<usize> = alloc::with_capacity("witness offsets", 1)?;
    offsets.push(0);
    // The witnesses are disjoint simple cycles: n nodes at most.
    let mut nodes: Vec<I> = alloc::with_capacity("witness nodes", n)?;
    let mut ticker = Ticker::new();
    for (c, &start) in first.iter().enumerate() {
        ticker.tick()?;
        if start >= n {
            continue;
        }
        let label = I::from_usize(c);
        if sizes[c].to_usize() < 2 {
            let row = csr.checked_row(start)?;
            ticker.tick_by(row.len())?;
            if !row.iter().any(|w| w.to_usize() == start) {
                continue;
            }
        }
        parent[start] = I::from_usize(start);
        queue.clear();
        queue.push(start);
        let mut head = 0;
        let mut closed = None;
        'search: while head < queue.len() {
            let u = queue[head];
            head += 1;
            let row = csr.checked_row(u)?;
            ticker.tick_by(row.len() + 1)?;
            for &w in row {
                let w = w.to_usize();
                if labels.get(w) != Some(&label) {
                    continue;
                }
                if w == start {
                    closed = Some(u);
                    break 'search;
                }
                if parent[w] == unseen {
                    parent[w] = I::from_usize(u);
                    queue.push(w);
                }
            }
        }
        let Some(mut x) = closed else {
            return Err(Error::Internal { reason: "a cyclic component without a cycle".into() });
        };
        let from = nodes.len();
        while x != start {
            nodes.push(I::from_usize(x));
            x = parent[x].to_usize();
        }
        nodes.push(I::from_usize(start));
        nodes[from..].reverse();
        components.push(label);
        offsets.push(nodes.len());
    }
    Ok(Witnesses { labels: found.labels, count: found.count, components, offsets, nodes })
}

#[cfg(test)]
// Reachability and distance matrices read best with explicit indices.
#[allow(clippy::needless_range_loop)]
mod tests {
    use super::*;
    use crate::rng::SplitMix64;
    use crate::scc::tests::random_csr;

    /// Shortest-path lengths by breadth-first search from every node.
    fn distances(g: &Csr<'_, i64>) -> Vec<Vec<usize>> {
        let n = g.n();
        (0..n)
            .map(|s| {
                let mut d = vec![usize::MAX; n];
                d[s] = 0;
                let mut frontier = vec![s];
                while !frontier.is_empty() {
                    let mut next = Vec::new();
                    for u in frontier {
                        for &v in g.row(u) {
                            if d[v as usize] == usize::MAX {
                                d[v as usize] = d[u] + 1;
                                next.push(v as usize);
                            }
                        }
                    }
                    frontier = next;
                }
                d
            })
            .collect()
    }

    fn assert_cycle(g: &Csr<'_, i64>, cycle: &[i64]) {
        let k = cycle.len();
        for step in 0..k {
            let (u, v) = (cycle[step], cycle[(step + 1) % k]);
            assert!(g.row(u as usize).contains(&v), "{u} -> {v} is not an edge");
        }
        let mut distinct = cycle.to_vec();
        distinct.sort();
        distinct.dedup();
        assert_eq!(distinct.len(), k);
    }

    #[test]
    fn shortest_cycles_match_breadth_first_distances() {
        let mut rng = SplitMix64::new(31);
        for _ in 0..400 {
            let (indptr, indices) = random_csr(&mut rng, 10, 20);
            let g = Csr::new(&indptr, &indices).unwrap();
            let d = distances(&g);
            for v in 0..g.n() {
                // Shortest cycle through v: an edge u -> v closing a shortest v ~> u path.
                let best = (0..g.n())
                    .filter(|&u| g.row(u).contains(&(v as i64)) && d[v][u] != usize::MAX)
                    .map(|u| d[v][u] + 1)
                    .min();
                let found = shortest_cycle_through(&g, v as i128).unwrap();
                assert_eq!(found.as_ref().map(Vec::len), best);
                if let Some(cycle) = found {
                    assert_eq!(cycle[0], v as i64);
                    assert_cycle(&g, &cycle);
                }
            }
            let any = find_cycle(&g).unwrap();
            let first = (0..g.n()).find(|&v| {
                (0..g.n()).any(|u| g.row(u).contains(&(v as i64)) && d[v][u] != usize::MAX)
            });
            assert_eq!(any.as_ref().map(|c| c[0] as usize), first);
            if let Some(cycle) = any {
                assert_cycle(&g, &cycle);
            }
        }
    }

    #[test]
    fn self_loop_and_bad_node() {
        let g = Csr::new(&[0i32, 1, 2], &[1, 1]).unwrap();
        assert_eq!(find_cycle(&g).unwrap(), Some(vec![1]));
        assert_eq!(shortest_cycle_through(&g, 0).unwrap(), None);
        assert_eq!(
            shortest_cycle_through(&g, 2).unwrap_err(),
            Error::NoSuchNode { what: "through", value: 2, n: 2 }
        );
        assert!(shortest_cycle_through(&g, -1).is_err());
    }

    #[test]
    fn component_witnesses_match_the_search_through_each_first_node() {
        let mut rng = SplitMix64::new(47);
        for _ in 0..400 {
            let (indptr, indices) = random_csr(&mut rng, 12, 24);
            let g = Csr::new(&indptr, &indices).unwrap();
            let found = component_witnesses(&g).unwrap();
            assert_eq!(found.labels, strong_components(&g).unwrap().labels);
            assert_eq!(found.offsets.len(), found.components.len() + 1);
            let mut expected = Vec::new();
            for c in 0..found.count {
                let start = (0..g.n()).find(|&v| found.labels[v] as usize == c).unwrap();
                if let Some(cycle) = shortest_cycle_through(&g, start as i128).unwrap() {
                    expected.push((c as i64, cycle));
                }
            }
            let got: Vec<(i64, Vec<i64>)> = (0..found.components.len())
                .map(|k| {
                    let cycle = found.nodes[found.offsets[k]..found.offsets[k + 1]].to_vec();
                    assert_cycle(&g, &cycle);
                    (found.components[k], cycle)
                })
                .collect();
            assert_eq!(got, expected);
        }
    }
}
