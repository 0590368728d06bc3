//! Strongly connected components and the condensation.
//!
//! Components are found with Pearce's space-efficient variant of Tarjan's
//! algorithm (D. J. Pearce, "A space-efficient algorithm for finding strongly
//! connected components", Information Processing Letters 116(1), 2016), run
//! with an explicit stack so that depth is bounded by memory, not by the
//! thread's call stack. One array, `rindex`, serves as visit index, low link
//! and finally component number.

use crate::alloc;
use crate::interrupt::Ticker;
use crate::sweep::prefetch;
use crate::{Csr, Error, Idx};

/// The strongly connected components of a graph.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Components<I> {
    /// `labels[v]` is the component of node `v`. Components are numbered in
    /// a topological order of the condensation: every edge `u -> v` has
    /// `labels[u] <= labels[v]`.
    pub labels: Vec<I>,
    /// Number of components.
    pub count: usize,
}

impl<I: Idx> Components<I> {
    /// Number of nodes in each component; [`Error::Allocation`] when the
    /// result does not fit in memory.
    pub fn try_sizes(&self) -> Result<Vec<I>, Error> {
        let mut sizes = alloc::filled("component sizes", self.count, I::default())?;
        for label in &self.labels {
            let size = &mut sizes[label.to_usize()];
            *size = I::from_usize(size.to_usize() + 1);
        }
        Ok(sizes)
    }

    /// The nodes of each component, grouped by label (ascending id inside a
    /// component): `(start, members)` with component `c` being
    /// `members[start[c]..start[c + 1]]`. Kept for existing callers; see
    /// [`try_members`](Self::try_members).
    pub fn members(&self) -> (Vec<usize>, Vec<I>) {
        let count = self.count;
        self.members_in(
            vec![0; count + 1],
            vec![0; count + 1],
            vec![I::default(); self.labels.len()],
        )
    }

    /// [`members`](Self::members), reporting [`Error::Allocation`] instead
    /// of aborting when the buffers do not fit in memory.
    pub fn try_members(&self) -> Result<(Vec<usize>, Vec<I>), Error> {
        let start = alloc::filled("component starts", self.count + 1, 0usize)?;
        let cursor = alloc::filled("component cursors", self.count + 1, 0usize)?;
        let members = alloc::filled("component members", self.labels.len(), I::default())?;
        Ok(self.members_in(start, cursor, members))
    }

    /// Number of nodes in each component (kept for existing callers; see
    /// [`try_sizes`](Self::try_sizes)).
    pub fn sizes(&self) -> Vec<I> {
        let mut sizes = vec![0usize; self.count];
        for label in &self.labels {
            sizes[label.to_usize()] += 1;
        }
        sizes.into_iter().map(I::from_usize).collect()
    }

    /// [`members`](Self::members) into zeroed buffers of `count + 1`,
    /// `count + 1` and `n` entries.
    fn members_in(
        &self,
        mut start: Vec<usize>,
        mut cursor: Vec<usize>,
        mut members: Vec<I>,
    ) -> (Vec<usize>, Vec<I>) {
        for label in &self.labels {
            start[label.to_usize() + 1] += 1;
        }
        for c in 0..self.count {
            start[c + 1] += start[c];
        }
        cursor.copy_from_slice(&start);
        for (v, label) in self.labels.iter().enumerate() {
            let slot = &mut cursor[label.to_usize()];
            members[*slot] = I::from_usize(v);
            *slot += 1;
        }
        (start, members)
    }
}

/// One node on the explicit depth-first path: the node, the next and end
/// positions of its CSR row still to scan, and whether it is still the root
/// of its component (nothing it reaches has a smaller index). The flag lives
/// here because it is only needed while the node is on the path.
#[derive(Clone, Copy)]
struct Frame<I, P> {
    node: I,
    next: P,
    end: P,
    root: bool,
}

/// The strongly connected components of `csr`, numbered topologically.
///
/// Depth-first search starts from nodes in descending id (so that nodes
/// joined by no path keep their id order, isolated nodes in particular) and
/// follows edges in stored order, so the numbering is deterministic. O(V + E) time; besides
/// the result, memory is the depth-first path and the component stack (each
/// at most `n` entries).
pub fn strong_components<I: Idx, P: Idx>(csr: &Csr<'_, I, P>) -> Result<Components<I>, Error> {
    let (mut rindex, shift, count) = search::<I, P, I>(csr)?;
    for label in rindex.iter_mut() {
        *label = I::from_usize(label.to_usize() - shift);
    }
    Ok(Components { labels: rindex, count })
}

/// [`strong_components`], plus for each node the number of edges that enter
/// it from other components (parallel edges counted), found during the same
/// search.
pub fn strong_components_with_entries<I: Idx, P: Idx>(
    csr: &Csr<'_, I, P>,
) -> Result<(Components<I>, Vec<I>), Error> {
    let (slots, shift, count) = search::<I, P, Counted<I>>(csr)?;
    let mut labels = alloc::with_capacity("component labels", slots.len())?;
    labels.extend(slots.iter().map(|s| I::from_usize(s.rindex.to_usize() - shift)));
    let mut entered = alloc::with_capacity("edges entering each node", slots.len())?;
    entered.extend(slots.iter().map(|s| s.entered));
    Ok((Components { labels, count }, entered))
}

/// What the search keeps per node: the `rindex` value, and for
/// [`Counted`] also the edges entering from other components, side by side
/// so that one memory access serves both.
trait Slot<I>: Copy + Default {
    fn rindex(&self) -> I;
    fn set_rindex(&mut self, value: I);
    /// One more edge enters this node from a finished component.
    fn enter(&mut self);
}

impl<I: Idx> Slot<I> for I {
    #[inline(always)]
    fn rindex(&self) -> I {
        *self
    }
    #[inline(always)]
    fn set_rindex(&mut self, value: I) {
        *self = value
    }
    #[inline(always)]
    fn enter(&mut self) {}
}

#[derive(Clone, Copy, Default)]
struct Counted<I> {
    rindex: I,
    entered: I,
}

impl<I: Idx> Slot<I> for Counted<I> {
    #[inline(always)]
    fn rindex(&self) -> I {
        self.rindex
    }
    #[inline(always)]
    fn set_rindex(&mut self, value: I) {
        self.rindex = value
    }
    #[inline(always)]
    fn enter(&mut self) {
        self.entered = I::from_usize(self.entered.to_usize() + 1)
    }
}

/// Pearce's search. Returns the per-node slots, where a finished node's
/// `rindex` is its component number plus `shift`, and the component count.
fn search<I: Idx, P: Idx, S: Slot<I>>(
    csr: &Csr<'_, I, P>,
) -> Result<(Vec<S>, usize, usize), Error> {
    csr.check_indices()?;
    let n = csr.n();
    if n > I::MAX_USIZE {
        return Err(Error::TooLarge { what: "node count", count: n, max: I::MAX_USIZE });
    }
    let indptr = csr.indptr();
    let indices = csr.indices();
    // rindex == 0: not visited; 1..: visit index, lowered to the smallest
    // index reachable (the low link) while the node is open; once its
    // component is complete, a component number counted down from n. Open
    // indices stay at most `component` and finished numbers above it
    // (Pearce's invariant, with the count starting one higher than in the
    // paper so the two ranges never touch), so comparisons tell them apart.
    let mut slots: Vec<S> = alloc::filled("component search slots", n, S::default())?;
    // The bounds of row `u`, checked against `indices` once when the row is
    // entered, so every later read of it is in bounds even if the caller
    // changes `indptr` meanwhile (then the call ends with InputChanged).
    let row_bounds = |u: usize| -> Result<(P, P), Error> {
        match indptr.get(u..u.wrapping_add(2)) {
            Some(&[start, end]) if start <= end && end.to_usize() <= indices.len() => {
                Ok((start, end))
            }
            _ => Err(Error::InputChanged { what: "indptr" }),
        }
    };
    // A row just entered is read to its end before long, and the rows of
    // its targets are the likeliest next: ask for their offsets and slots
    // now (the search reads rows at random, so each would be a miss).
    let slots_at = slots.as_ptr();
    let warm = |next: usize, end: usize| {
        for w in indices.get(next..end).unwrap_or(&[]) {
            let w = w.to_usize();
            prefetch(indptr.as_ptr().wrapping_add(w));
            prefetch(slots_at.wrapping_add(w));
        }
    };
    let mut ticker = Ticker::new();
    let mut path: Vec<Frame<I, P>> = Vec::new();
    let mut open: Vec<I> = Vec::new();
    let mut index: usize = 1;
    let mut component = n;

    for start in (0..n).rev() {
        if slots[start].rindex().to_usize() != 0 {
            continue;
        }
        let (next, end) = row_bounds(start)?;
        ticker.tick_by(end.to_usize() - next.to_usize() + 1)?;
        slots[start].set_rindex(I::from_usize(index));
        index += 1;
        path.push(Frame { node: I::from_usize(start), next, end, root: true });
        'path: while let Some(frame) = path.last_mut() {
            let v = frame.node.to_usize();
            let mut low = slots[v].rindex();
            let (mut next, end) = (frame.next.to_usize(), frame.end.to_usize());
            while next < end {
                // In bounds: `end` was checked against `indices` (row_bounds).
                let w = indices[next].to_usize();
                next += 1;
                // Endpoints were checked (check_indices), but may have changed since.
                let Some(slot) = slots.get_mut(w) else {
                    return Err(Error::InputChanged { what: "indices" });
                };
                let rw = slot.rindex();
                if rw.to_usize() == 0 {
                    let (w_next, w_end) = row_bounds(w)?;
                    ticker.tick_by(w_end.to_usize() - w_next.to_usize() + 1)?;
                    warm(w_next.to_usize(), w_end.to_usize());
                    frame.next = P::from_usize(next);
                    slot.set_rindex(I::from_usize(index));
                    slots[v].set_rindex(low);
                    index += 1;
                    path.push(Frame {
                        node: I::from_usize(w),
                        next: w_next,
                        end: w_end,
                        root: true,
                    });
                    continue 'path;
                }
                if rw < low {
                    low = rw;
                    frame.root = false;
                } else if rw.to_usize() > component {
                    slot.enter();
                }
            }
            let is_root = frame.root;
            path.pop();
            if is_root {
                index -= 1;
                while let Some(&w) = open.last() {
                    let w = w.to_usize();
                    if low > slots[w].rindex() {
                        break;
                    }
                    open.pop();
                    slots[w].set_rindex(I::from_usize(component));
                    index -= 1;
                }
                low = I::from_usize(component);
                component -= 1;
            } else {
                open.push(I::from_usize(v));
            }
            slots[v].set_rindex(low);
            if let Some(parent) = path.last_mut() {
                let p = parent.node.to_usize();
                if low < slots[p].rindex() {
                    slots[p].set_rindex(low);
                    parent.root = false;
                } else if low.to_usize() > component {
                    // The tree edge p -> v enters v's finished component.
                    slots[v].enter();
                }
            }
        }
    }
    // Components were numbered n, n - 1, ... in completion order, and a
    // component completes only after every component it reaches: shifting
    // to 0.. gives a topological numbering.
    Ok((slots, component + 1, n - component))
}

/// The condensation of a graph: one node per component, one edge per
/// ordered pair of distinct components joined by at least one edge. Edge
/// positions and edge counts have the width of the graph's `indptr`.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Condensation<I, P = I> {
    pub indptr: Vec<P>,
    /// Targets of each row, ascending.
    pub indices: Vec<I>,
    /// `weights[k]`: how many edges of the graph the k-th condensation edge stands for.
    pub weights: Vec<P>,
}

/// Build the condensation of `csr` for its `components`, in O(V + E).
pub fn condensation<I: Idx, P: Idx>(
    csr: &Csr<'_, I, P>,
    components: &Components<I>,
) -> Result<Condensation<I, P>, Error> {
    csr.check_indices()?;
    let labels = &components.labels;
    if labels.len() != csr.n() {
        return Err(Error::LengthMismatch { what: "labels", expected: csr.n(), got: labels.len() });
    }
    let count = components.count;
    let (start, members) = components.try_members()?;
    // Rows by source, targets in first-seen order, parallel edges merged:
    // last_row[d] remembers the row that last added d, slot[d] where.
    let none = usize::MAX;
    let mut ticker = Ticker::new();
    let mut last_row = alloc::filled("condensation rows", count, none)?;
    let mut slot = alloc::filled("condensation slots", count, 0usize)?;
    let mut row_start = alloc::with_capacity("condensation rows", count + 1)?;
    let mut targets: Vec<usize> = Vec::new();
    let mut weights: Vec<usize> = Vec::new();
    row_start.push(0usize);
    for c in 0..count {
        for &u in &members[start[c]..start[c + 1]] {
            let row = csr.checked_row(u.to_usize())?;
            ticker.tick_by(row.len() + 1)?;
            for &v in row {
                let Some(d) = labels.get(v.to_usize()) else {
                    return Err(Error::InputChanged { what: "indices" });
                };
                let d = d.to_usize();
                if d == c {
                    continue;
                }
                if last_row[d] == c {
                    weights[slot[d]] += 1;
                } else {
                    last_row[d] = c;
                    slot[d] = targets.len();
                    targets.push(d);
                    weights.push(1);
                }
            }
        }
        row_start.push(targets.len());
    }
    // Sort every row by target in linear time: bucket the edges by target
    // (sources come out ascending), then bucket back by source.
    let e = targets.len();
    let mut by_target_start = alloc::filled("condensation columns", count + 1, 0usize)?;
    for &d in &targets {
        by_target_start[d + 1] += 1;
    }
    for d in 0..count {
        by_target_start[d + 1] += by_target_start[d];
    }
    let mut cursor = alloc::with_capacity("condensation cursors", count + 1)?;
    cursor.extend_from_slice(&by_target_start);
    let mut by_target = alloc::filled("condensation edges", e, (0usize, 0usize))?;
    for c in 0..count {
        ticker.tick_by(row_start[c + 1] - row_start[c] + 1)?;
        for k in row_start[c]..row_start[c + 1] {
            let s = &mut cursor[targets[k]];
            by_target[*s] = (c, weights[k]);
            *s += 1;
        }
    }
    let mut cursor = alloc::with_capacity("condensation cursors", count + 1)?;
    cursor.extend_from_slice(&row_start);
    let mut indices = alloc::filled("condensation targets", e, I::default())?;
    let mut sorted_weights = alloc::filled("condensation weights", e, P::default())?;
    for d in 0..count {
        ticker.tick_by(by_target_start[d + 1] - by_target_start[d] + 1)?;
        for &(c, weight) in &by_target[by_target_start[d]..by_target_start[d + 1]] {
            let s = &mut cursor[c];
            indices[*s] = I::from_usize(d);
            sorted_weights[*s] = P::from_usize(weight);
            *s += 1;
        }
    }
    Ok(Condensation {
        indptr: row_start.into_iter().map(P::from_usize).collect(),
        indices,
        weights: sorted_weights,
    })
}

#[cfg(test)]
// Reachability and distance matrices read best with explicit indices.
#[allow(clippy::needless_range_loop)]
pub(crate) mod tests {
    use super::*;
    use crate::edges::edges_to_csr;
    use crate::rng::SplitMix64;

    /// Random graphs with duplicates and self-loops, as CSR.
    pub(crate) fn random_csr(rng: &mut SplitMix64, max_n: u64, max_m: u64) -> (Vec<i64>, Vec<i64>) {
        let n = rng.below(max_n + 1) as usize;
        let m = if n == 0 { 0 } else { rng.below(max_m + 1) as usize };
        let (mut src, mut dst) = (Vec::new(), Vec::new());
        for _ in 0..m {
            src.push(rng.below(n as u64) as i64);
            dst.push(rng.below(n as u64) as i64);
        }
        let g = edges_to_csr(&src, &dst, n, false).unwrap();
        (g.indptr, g.indices)
    }

    #[test]
    fn rows_changed_after_the_checks_end_the_search_with_input_changed() {
        // Valid: 0 -> 1 -> 0. Then indptr is changed so that a row runs
        // past `indices`, or decreases: the search must stop with
        // InputChanged, never index out of bounds (a panic).
        for indptr in [[0i64, 1, 9], [0, 2, 1], [0, 7, 2]] {
            let g = Csr::unchecked(&indptr[..], &[1i64, 0][..]);
            assert_eq!(
                strong_components(&g).unwrap_err(),
                Error::InputChanged { what: "indptr" },
                "{indptr:?}"
            );
            assert_eq!(
                strong_components_with_entries(&g).unwrap_err(),
                Error::InputChanged { what: "indptr" }
            );
        }
        let valid = Components { labels: vec![0i64, 0], count: 1 };
        let g = Csr::unchecked(&[0i64, 1, 9][..], &[1i64, 0][..]);
        assert_eq!(condensation(&g, &valid).unwrap_err(), Error::InputChanged { what: "indptr" });
    }

    /// Reachability by repeated relaxation (Warshall's transitive closure).
    pub(crate) fn reach(indptr: &[i64], indices: &[i64]) -> Vec<Vec<bool>> {
        let n = indptr.len() - 1;
        let mut r = vec![vec![false; n]; n];
        for u in 0..n {
            for &v in &indices[indptr[u] as usize..indptr[u + 1] as usize] {
                r[u][v as usize] = true;
            }
        }
        for k in 0..n {
            for i in 0..n {
                if r[i][k] {
                    for j in 0..n {
                        if r[k][j] {
                            r[i][j] = true;
                        }
                    }
                }
            }
        }
        r
    }

    #[test]
    fn components_match_mutual_reachability_and_are_topological() {
        let mut rng = SplitMix64::new(11);
        for _ in 0..500 {
            let (indptr, indices) = random_csr(&mut rng, 12, 30);
            let g = Csr::new(&indptr, &indices).unwrap();
            let comps = strong_components(&g).unwrap();
            let r = reach(&indptr, &indices);
            let n = g.n();
            for u in 0..n {
                for v in 0..n {
                    let together = u == v || (r[u][v] && r[v][u]);
                    assert_eq!(comps.labels[u] == comps.labels[v], together, "{u} {v}");
                }
            }
            for u in 0..n {
                for &v in g.row(u) {
                    assert!(comps.labels[u] <= comps.labels[v as usize]);
                }
            }
            let (again, entries) = strong_components_with_entries(&g).unwrap();
            assert_eq!(again, comps);
            let mut expected = vec![0i64; n];
            for u in 0..n {
                for &v in g.row(u) {
                    if comps.labels[u] != comps.labels[v as usize] {
                        expected[v as usize] += 1;
                    }
                }
            }
            assert_eq!(entries, expected, "edges entering each node from other components");
            let mut seen = comps.labels.clone();
            seen.sort();
            seen.dedup();
            assert_eq!(seen.len(), comps.count);
            assert!(seen.iter().enumerate().all(|(k, &l)| l == k as i64));
        }
    }

    #[test]
    fn long_path_and_long_cycle_do_not_overflow() {
        // Ten million nodes: a recursive search would need a frame per node.
        let n = 10_000_000usize;
        let indptr: Vec<i32> = (0..=n).map(|u| u.min(n - 1) as i32).collect();
        let indices: Vec<i32> = (1..n).map(|v| v as i32).collect();
        let path = Csr::new(&indptr, &indices).unwrap();
        let comps = strong_components(&path).unwrap();
        assert_eq!(comps.count, n);
        assert!(comps.labels.iter().enumerate().all(|(v, &l)| l as usize == v));
        // The same path walked from its far end: the search goes n deep.
        let indices: Vec<i32> = (0..n - 1).map(|v| v as i32).collect();
        let indptr: Vec<i32> = (0..=n).map(|u| u.saturating_sub(1) as i32).collect();
        let back = Csr::new(&indptr, &indices).unwrap();
        let comps = strong_components(&back).unwrap();
        assert_eq!(comps.count, n);
        assert!(comps.labels.iter().enumerate().all(|(v, &l)| l as usize == n - 1 - v));

        let indptr: Vec<i32> = (0..=n).map(|u| u as i32).collect();
        let indices: Vec<i32> = (1..=n).map(|v| (v % n) as i32).collect();
        let ring = Csr::new(&indptr, &indices).unwrap();
        let comps = strong_components(&ring).unwrap();
        assert_eq!(comps.count, 1);
        assert!(comps.labels.iter().all(|&l| l == 0));
    }

    #[test]
    fn textbook_example() {
        // Source: Cormen, Leiserson, Rivest & Stein, Introduction to
        // Algorithms (3rd ed.), Figure 22.9 (edges from memory): a..h as
        // 0..7; components {a,b,e}, {c,d}, {f,g}, {h}.
        let src = [0i32, 1, 1, 1, 2, 2, 3, 3, 4, 4, 5, 6, 6, 7];
        let dst = [1i32, 2, 4, 5, 3, 6, 2, 7, 0, 5, 6, 5, 7, 7];
        let g = edges_to_csr(&src, &dst, 8, false).unwrap();
        let csr = Csr::new(&g.indptr, &g.indices).unwrap();
        let comps = strong_components(&csr).unwrap();
        assert_eq!(comps.count, 4);
        let l = &comps.labels;
        assert!(l[0] == l[1] && l[1] == l[4]);
        assert!(l[2] == l[3] && l[5] == l[6]);
        assert_eq!(l[0], 0, "{{a, b, e}} is the only source component");
        assert_eq!(l[7], 3, "{{h}} is the only sink component");
        assert_eq!(comps.sizes(), vec![3, 2, 2, 1]);
        let cond = condensation(&csr, &comps).unwrap();
        // {a,b,e} -> {c,d} (b->c), -> {f,g} (b->f, e->f); {c,d} -> {f,g}
        // (c->g), -> {h} (d->h); {f,g} -> {h} (g->h).
        let (abe, cd, fg, h) = (0, l[2], l[5], 3);
        assert!(cd < fg);
        let mut edges: Vec<(i32, i32, i32)> = Vec::new();
        for c in 0..4usize {
            for k in cond.indptr[c] as usize..cond.indptr[c + 1] as usize {
                edges.push((c as i32, cond.indices[k], cond.weights[k]));
            }
        }
        assert_eq!(edges, vec![(abe, cd, 1), (abe, fg, 2), (cd, fg, 1), (cd, h, 1), (fg, h, 1)]);
    }

    #[test]
    fn condensation_merges_parallel_edges_and_sorts_rows() {
        let mut rng = SplitMix64::new(5);
        for _ in 0..300 {
            let (indptr, indices) = random_csr(&mut rng, 10, 25);
            let g = Csr::new(&indptr, &indices).unwrap();
            let comps = strong_components(&g).unwrap();
            let cond = condensation(&g, &comps).unwrap();
            let mut expected = std::collections::BTreeMap::new();
            for u in 0..g.n() {
                for &v in g.row(u) {
                    let (a, b) = (comps.labels[u], comps.labels[v as usize]);
                    if a != b {
                        *expected.entry((a, b)).or_insert(0i64) += 1;
                    }
                }
            }
            let mut got = std::collections::BTreeMap::new();
            for c in 0..comps.count {
                let row = cond.indptr[c] as usize..cond.indptr[c + 1] as usize;
                assert!(cond.indices[row.clone()].windows(2).all(|w| w[0] < w[1]));
                for k in row {
                    got.insert((c as i64, cond.indices[k]), cond.weights[k]);
                }
            }
            assert_eq!(got, expected);
        }
    }

    #[test]
    fn self_loop_is_its_own_component_and_bad_ids_are_errors() {
        let g = Csr::new(&[0i64, 1, 1], &[0]).unwrap();
        let comps = strong_components(&g).unwrap();
        assert_eq!(comps.count, 2);
        let bad = Csr::new(&[0i64, 1], &[3]).unwrap();
        assert!(matches!(strong_components(&bad), Err(Error::IndexOutOfRange { value: 3, .. })));
        let empty = Csr::<i32>::new(&[0], &[]).unwrap();
        assert_eq!(strong_components(&empty).unwrap().count, 0);
    }
}
