//! A topological order maintained under edge insertions and deletions
//! (Pearce & Kelly, "A dynamic topological sort algorithm for directed
//! acyclic graphs", ACM JEA 11, 2006; venue from memory).
//!
//! The graph is held as per-node successor and predecessor vectors that grow
//! in place, so an insertion never rebuilds anything. The order is two
//! arrays, `position[node]` and `node_at[position]`, so "does `u` come before
//! `v`" is one comparison.
//!
//! Inserting `u -> v` with `u` already before `v` costs O(1). Otherwise let
//! `lb = position[v] < ub = position[u]`: a depth-first search forward from
//! `v` over nodes placed before `ub` (the set F) and one backward from `u`
//! over nodes placed after `lb` (the set B) bound the affected region. When
//! the forward search reaches `u` the edge would close a cycle and the search
//! stack is the witness path `v -> ... -> u`. Otherwise the positions held by
//! F and B are pooled and handed out again, B first, then F, each keeping its
//! relative order. Cost: O(|F| + |B| + edges leaving them, plus a sort of the
//! region), independent of the graph's size.
//!
//! Deletion never invalidates an order, so it only edits the two vectors.
//! An edge is found by a scan of its source's successors (O(out-degree)),
//! and removed with `swap_remove`, so no tombstones accumulate.
//!
//! Batches are all or nothing. Edges go in one Pearce-Kelly step at a
//! time while the steps' work (nodes and edges searched) stays below what
//! one re-sort of the batch's window would cost: the positions between the
//! lowest target and the highest source of the edges that go backwards,
//! times one plus twice the mean degree. Past that point the remaining
//! edges are pushed and the window alone is re-sorted by Kahn's algorithm
//! (edges entering or leaving it already go forward), so a batch never
//! costs much more than the cheaper of the two. A batch whose steps each
//! drag a growing region (a chain arriving backwards) drops from quadratic
//! to one linear pass. Every change (edge pushed, node moved, edge removed)
//! is logged, so a refused edge or an interrupt undoes the batch exactly.
//! When the window holds a cycle, halving finds the first edge that closes
//! one in O(log k) window re-sorts, and one search gives its witness.

use crate::interrupt::Ticker;
use crate::{alloc, Csr, Error, Idx, Tie};

/// What a single insertion did.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Insertion {
    /// The edge went in; `affected` nodes changed position (0 when `u`
    /// already came before `v`).
    Added { affected: usize },
    /// The edge would close a cycle and was refused; nothing changed.
    /// `cycle` is the path `v -> ... -> u` (just `[u]` for a self-loop);
    /// the refused edge `u -> v` closes it.
    Refused { cycle: Vec<usize> },
}

/// What a batch insertion did.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum BatchInsertion {
    /// Every edge went in; `affected` sums the per-edge affected regions.
    Added { affected: usize },
    /// Edge number `index` of the batch would close a cycle with the graph
    /// plus the batch edges before it; nothing changed. `cycle` is as for
    /// [`Insertion::Refused`].
    Refused { index: usize, cycle: Vec<usize> },
}

/// One logged change, undone in reverse order.
#[derive(Debug, Clone, Copy)]
enum Change {
    /// `u -> v` was pushed onto both vectors.
    Pushed { u: usize, v: usize },
    /// `node` moved away from `position`.
    Moved { node: usize, position: usize },
    /// `u -> v` was swap-removed from `out[u][at_out]` and `inc[v][at_in]`.
    Removed { u: usize, v: usize, at_out: usize, at_in: usize },
}

/// A directed acyclic graph together with a topological order of it.
#[derive(Debug, Clone, Default)]
pub struct DynamicOrder {
    out: Vec<Vec<usize>>,
    inc: Vec<Vec<usize>>,
    position: Vec<usize>,
    node_at: Vec<usize>,
    edges: usize,
    /// Scratch, all false between operations.
    mark: Vec<bool>,
    forward: Vec<usize>,
    backward: Vec<usize>,
    stack: Vec<(usize, usize)>,
    slots: Vec<usize>,
    /// Per node: its predecessors inside a re-sorted window (0 between operations).
    in_window: Vec<usize>,
    queue: Vec<usize>,
    /// Nodes and edges the searches of the current batch visited.
    work: usize,
    /// Batches finished by a window re-sort (tests read it).
    resorts: usize,
    /// Tests set it to re-sort every batch from its first edge.
    force_resort: bool,
    /// Total affected-region size over every insertion so far.
    affected_total: u64,
}

fn node(what: &'static str, value: i64, n: usize) -> Result<usize, Error> {
    usize::try_from(value).ok().filter(|&v| v < n).ok_or(Error::NoSuchNode {
        what,
        value: value as i128,
        n,
    })
}

/// Capacity for a list of `len` edges that will grow.
fn slack(len: usize) -> usize {
    len + len / 8 + 2
}

fn grow<T>(what: &'static str, v: &mut Vec<T>, extra: usize) -> Result<(), Error> {
    v.try_reserve(extra).map_err(|_| Error::Allocation {
        what,
        count: v.len().saturating_add(extra),
        bytes_each: std::mem::size_of::<T>(),
    })
}

impl DynamicOrder {
    /// `n` nodes, no edges, ordered by id.
    pub fn new(n: usize) -> Result<Self, Error> {
        let mut this = DynamicOrder::default();
        this.add_nodes(n)?;
        Ok(this)
    }

    /// The graph `csr` in the order Kahn's algorithm (FIFO) gives it, or the
    /// cycle Kahn's algorithm reports when `csr` has one.
    pub fn from_csr<I: Idx, P: Idx>(
        csr: &Csr<'_, I, P>,
    ) -> Result<Result<Self, Vec<usize>>, Error> {
        let outcome = crate::kahn(csr, &Tie::Queue)?;
        if !outcome.is_complete() {
            return Ok(Err(outcome.cycle.iter().map(|c| c.to_usize()).collect()));
        }
        let n = csr.n();
        let mut this = DynamicOrder::new(n)?;
        let mut in_degree = alloc::filled("in-degrees", n, 0usize)?;
        let mut ticker = Ticker::new();
        for &v in csr.indices() {
            ticker.tick()?;
            // kahn() checked every endpoint
            if let Some(d) = in_degree.get_mut(v.to_usize()) {
                *d += 1;
            }
        }
        for (u, &d) in in_degree.iter().enumerate() {
            let row = csr.checked_row(u)?;
            ticker.tick_by(row.len() + 1)?;
            // room for a few insertions before the first reallocation
            this.out[u] = alloc::with_capacity("successor lists", slack(row.len()))?;
            this.inc[u] = alloc::with_capacity("predecessor lists", slack(d))?;
        }
        for u in 0..n {
            let row = csr.checked_row(u)?;
            ticker.tick_by(row.len() + 1)?;
            for &v in row {
                let v = v.to_usize();
                let Some(into) = this.inc.get_mut(v) else {
                    return Err(Error::InputChanged { what: "indices" });
                };
                into.push(u);
                this.out[u].push(v);
            }
        }
        for (at, &v) in outcome.order.iter().enumerate() {
            ticker.tick()?;
            let v = v.to_usize();
            this.position[v] = at;
            this.node_at[at] = v;
        }
        this.edges = csr.m();
        Ok(Ok(this))
    }

    /// Number of nodes.
    pub fn n(&self) -> usize {
        self.position.len()
    }

    /// Number of edges (duplicates counted).
    pub fn m(&self) -> usize {
        self.edges
    }

    /// The nodes in topological order.
    pub fn order(&self) -> &[usize] {
        &self.node_at
    }

    /// `positions()[v]` is the place of `v` in [`DynamicOrder::order`].
    pub fn positions(&self) -> &[usize] {
        &self.position
    }

    /// The place of node `v` in the order.
    pub fn position(&self, v: i64) -> Result<usize, Error> {
        Ok(self.position[node("v", v, self.n())?])
    }

    /// Whether `u` comes before `v` in the order (false when `u == v`).
    pub fn precedes(&self, u: i64, v: i64) -> Result<bool, Error> {
        let n = self.n();
        let (u, v) = (node("u", u, n)?, node("v", v, n)?);
        Ok(self.position[u] < self.position[v])
    }

    /// Successors of `u` (in the order their edges were added, except that
    /// a removal moves the last edge of the row into the gap).
    pub fn successors(&self, u: usize) -> &[usize] {
        self.out.get(u).map_or(&[], |row| row.as_slice())
    }

    /// Total size of every affected region so far (nodes repositioned).
    pub fn affected_total(&self) -> u64 {
        self.affected_total
    }

    /// Append `count` isolated nodes, placed last in the order.
    pub fn add_nodes(&mut self, count: usize) -> Result<(), Error> {
        let n = self.n();
        let total =
            n.checked_add(count).filter(|&t| t <= i64::MAX as usize).ok_or(Error::TooLarge {
                what: "node count",
                count: n.saturating_add(count),
                max: i64::MAX as usize,
            })?;
        grow("successor lists", &mut self.out, count)?;
        grow("predecessor lists", &mut self.inc, count)?;
        grow("positions", &mut self.position, count)?;
        grow("order", &mut self.node_at, count)?;
        grow("marks", &mut self.mark, count)?;
        grow("window counts", &mut self.in_window, count)?;
        self.out.resize_with(total, Vec::new);
        self.inc.resize_with(total, Vec::new);
        self.position.extend(n..total);
        self.node_at.extend(n..total);
        self.mark.resize(total, false);
        self.in_window.resize(total, 0);
        Ok(())
    }

    /// Insert `u -> v` unless it would close a cycle.
    pub fn add_edge(&mut self, u: i64, v: i64) -> Result<Insertion, Error> {
        let n = self.n();
        let (u, v) = (node("u", u, n)?, node("v", v, n)?);
        self.insert(u, v, None)
    }

    /// Insert every `src[k] -> dst[k]`, or none of them when one would close
    /// a cycle (with the graph plus the batch edges before it) or the caller
    /// interrupts.
    pub fn add_edges(&mut self, src: &[i64], dst: &[i64]) -> Result<BatchInsertion, Error> {
        let (n, count) = (self.n(), src.len());
        if dst.len() != count {
            return Err(Error::LengthMismatch { what: "dst", expected: count, got: dst.len() });
        }
        for (what, ends) in [("src", src), ("dst", dst)] {
            for (position, &value) in ends.iter().enumerate() {
                if usize::try_from(value).map_or(true, |x| x >= n) {
                    return Err(Error::IndexOutOfRange { what, position, value: value as i128, n });
                }
            }
        }
        let mut log = Vec::new();
        let before = self.affected_total;
        match self.insert_all(src, dst, &mut log) {
            Ok(None) => {
                Ok(BatchInsertion::Added { affected: (self.affected_total - before) as usize })
            }
            Ok(Some((index, cycle))) => {
                self.undo(log);
                self.affected_total = before;
                Ok(BatchInsertion::Refused { index, cycle })
            }
            Err(e) => {
                self.undo(log);
                self.affected_total = before;
                Err(e)
            }
        }
    }

    /// The batch one Pearce-Kelly step at a time until their work exceeds
    /// what one re-sort of the batch's window would cost; then the rest by
    /// that re-sort. `Some((index, cycle))` for the first edge that closes
    /// a cycle. Every change is in `log`.
    fn insert_all(
        &mut self,
        src: &[i64],
        dst: &[i64],
        log: &mut Vec<Change>,
    ) -> Result<Option<(usize, Vec<usize>)>, Error> {
        let budget = if self.force_resort { 0 } else { self.resort_cost(src, dst) };
        let mut ticker = Ticker::new();
        self.work = 0;
        for (index, (&u, &v)) in src.iter().zip(dst).enumerate() {
            ticker.tick()?;
            if self.work >= budget {
                return self.finish_by_resorts(src, dst, index, log, &mut ticker);
            }
            match self.insert(u as usize, v as usize, Some(log))? {
                Insertion::Added { .. } => {}
                Insertion::Refused { cycle } => return Ok(Some((index, cycle))),
            }
        }
        Ok(None)
    }

    /// Edges `from..` by one window re-sort; when they close a cycle, find
    /// the first edge that does by halving: a half that re-sorts fine stays
    /// in, a half that does not is undone and halved again (O(log k)
    /// re-sorts). That edge's witness comes from one Pearce-Kelly search.
    fn finish_by_resorts(
        &mut self,
        src: &[i64],
        dst: &[i64],
        from: usize,
        log: &mut Vec<Change>,
        ticker: &mut Ticker,
    ) -> Result<Option<(usize, Vec<usize>)>, Error> {
        let (mut start, mut len) = (from, src.len() - from);
        // invariant: with the edges before `start` in, edges start..start + len close a cycle
        if self.resort_rest(&src[start..], &dst[start..], log, ticker)? {
            return Ok(None);
        }
        while len > 1 {
            let half = len / 2;
            let end = start + half;
            if self.resort_rest(&src[start..end], &dst[start..end], log, ticker)? {
                start = end;
                len -= half;
            } else {
                len = half;
            }
        }
        match self.insert(src[start] as usize, dst[start] as usize, Some(log))? {
            Insertion::Refused { cycle } => Ok(Some((start, cycle))),
            Insertion::Added { .. } => Err(Error::Internal {
                reason: format!("batch edge {start} was expected to close a cycle"),
            }),
        }
    }

    /// The smallest window of positions holding both ends of every edge
    /// that goes backwards in the current order (`None` when none does).
    fn window(&self, src: &[i64], dst: &[i64]) -> Option<(usize, usize)> {
        let mut found: Option<(usize, usize)> = None;
        for (&u, &v) in src.iter().zip(dst) {
            let (pu, pv) = (self.position[u as usize], self.position[v as usize]);
            if pu >= pv {
                let (lo, hi) = found.unwrap_or((pv, pu));
                found = Some((lo.min(pv), hi.max(pu)));
            }
        }
        found
    }

    /// Work units (nodes plus edge scans) of a re-sort of the batch's window.
    fn resort_cost(&self, src: &[i64], dst: &[i64]) -> usize {
        let Some((lower, upper)) = self.window(src, dst) else {
            return usize::MAX;
        };
        let width = upper - lower + 1;
        let per_node = 1 + 2 * self.edges / self.n().max(1);
        width.saturating_mul(per_node)
    }

    /// Push every edge, then re-sort the window of positions between the
    /// backward ones by Kahn's algorithm (FIFO, ready nodes in their current
    /// order). Edges entering or leaving the window already go forward, so
    /// only the window changes. False (and the pushes and the window
    /// undone) when the window holds a cycle.
    fn resort_rest(
        &mut self,
        src: &[i64],
        dst: &[i64],
        log: &mut Vec<Change>,
        ticker: &mut Ticker,
    ) -> Result<bool, Error> {
        let start = log.len();
        for (&u, &v) in src.iter().zip(dst) {
            let (u, v) = (u as usize, v as usize);
            grow("successor lists", &mut self.out[u], 1)?;
            grow("predecessor lists", &mut self.inc[v], 1)?;
            self.out[u].push(v);
            self.inc[v].push(u);
            self.edges += 1;
            log.push(Change::Pushed { u, v });
        }
        let Some((lower, upper)) = self.window(src, dst) else {
            return Ok(true);
        };
        self.slots.clear();
        self.slots.extend_from_slice(&self.node_at[lower..=upper]);
        let sorted = self.kahn_window(lower, ticker);
        for &x in &self.slots {
            self.mark[x] = false;
            self.in_window[x] = 0;
        }
        if matches!(sorted, Ok(true)) {
            // a later edge of the batch may still be refused: log the old places
            grow("undo log", log, self.slots.len())?;
            log.extend(
                self.slots
                    .iter()
                    .enumerate()
                    .map(|(k, &node)| Change::Moved { node, position: lower + k }),
            );
            self.affected_total += self.slots.len() as u64;
            self.resorts += 1;
            return Ok(true);
        }
        for (k, &x) in self.slots.iter().enumerate() {
            self.position[x] = lower + k;
            self.node_at[lower + k] = x;
        }
        let pushed = log.split_off(start);
        self.undo(pushed);
        sorted
    }

    /// Kahn's algorithm on the nodes of `slots` (the window starting at
    /// `lower`), writing the new order in place; false on a cycle.
    fn kahn_window(&mut self, lower: usize, ticker: &mut Ticker) -> Result<bool, Error> {
        let (out, mark, counts) = (&self.out, &mut self.mark, &mut self.in_window);
        for &x in &self.slots {
            mark[x] = true;
        }
        for &x in &self.slots {
            ticker.tick_by(out[x].len() + 1)?;
            for &w in &out[x] {
                if mark[w] {
                    counts[w] += 1;
                }
            }
        }
        let queue = &mut self.queue;
        queue.clear();
        queue.extend(self.slots.iter().copied().filter(|&x| counts[x] == 0));
        let mut head = 0;
        while let Some(&x) = queue.get(head) {
            ticker.tick_by(out[x].len() + 1)?;
            self.position[x] = lower + head;
            self.node_at[lower + head] = x;
            head += 1;
            for &w in &out[x] {
                if mark[w] {
                    counts[w] -= 1;
                    if counts[w] == 0 {
                        queue.push(w);
                    }
                }
            }
        }
        Ok(head == self.slots.len())
    }

    /// Remove one copy of `u -> v`; false (and nothing changed) when there is none.
    pub fn remove_edge(&mut self, u: i64, v: i64) -> Result<bool, Error> {
        let n = self.n();
        let (u, v) = (node("u", u, n)?, node("v", v, n)?);
        Ok(self.delete(u, v).is_some())
    }

    /// Remove one copy of every `src[k] -> dst[k]` (a pair listed twice
    /// removes two copies). `Some(k)` when edge `k` is missing (after the
    /// removal of the ones before it); nothing changed then.
    pub fn remove_edges(&mut self, src: &[i64], dst: &[i64]) -> Result<Option<usize>, Error> {
        let (n, count) = (self.n(), src.len());
        if dst.len() != count {
            return Err(Error::LengthMismatch { what: "dst", expected: count, got: dst.len() });
        }
        let mut log = Vec::new();
        let mut ticker = Ticker::new();
        for (index, (&u, &v)) in src.iter().zip(dst).enumerate() {
            let ends = ticker.tick().and_then(|()| {
                let u =
                    usize::try_from(u).ok().filter(|&x| x < n).ok_or(Error::IndexOutOfRange {
                        what: "src",
                        position: index,
                        value: u as i128,
                        n,
                    })?;
                let v =
                    usize::try_from(v).ok().filter(|&x| x < n).ok_or(Error::IndexOutOfRange {
                        what: "dst",
                        position: index,
                        value: v as i128,
                        n,
                    })?;
                Ok((u, v))
            });
            let (u, v) = match ends {
                Ok(pair) => pair,
                Err(e) => {
                    self.undo(log);
                    return Err(e);
                }
            };
            match self.delete(u, v) {
                Some(change) => log.push(change),
                None => {
                    self.undo(log);
                    return Ok(Some(index));
                }
            }
        }
        Ok(None)
    }

    /// Edges as CSR (rows in successor-list order), int64.
    pub fn to_csr(&self) -> Result<(Vec<i64>, Vec<i64>), Error> {
        let mut indptr = alloc::with_capacity("indptr", self.n() + 1)?;
        let mut indices = alloc::with_capacity("indices", self.edges)?;
        indptr.push(0i64);
        for row in &self.out {
            indices.extend(row.iter().map(|&v| v as i64));
            indptr.push(indices.len() as i64);
        }
        Ok((indptr, indices))
    }

    fn delete(&mut self, u: usize, v: usize) -> Option<Change> {
        // the most recent copy, so that add-then-remove leaves rows as they were
        let at_out = self.out[u].iter().rposition(|&w| w == v)?;
        let at_in = self.inc[v].iter().rposition(|&w| w == u)?;
        self.out[u].swap_remove(at_out);
        self.inc[v].swap_remove(at_in);
        self.edges -= 1;
        Some(Change::Removed { u, v, at_out, at_in })
    }

    fn undo(&mut self, log: Vec<Change>) {
        for change in log.into_iter().rev() {
            match change {
                Change::Pushed { u, v } => {
                    self.out[u].pop();
                    self.inc[v].pop();
                    self.edges -= 1;
                }
                Change::Moved { node, position } => {
                    self.position[node] = position;
                    self.node_at[position] = node;
                }
                Change::Removed { u, v, at_out, at_in } => {
                    // capacity is still there: swap_remove never shrinks
                    let row = &mut self.out[u];
                    row.push(v);
                    let last = row.len() - 1;
                    row.swap(at_out, last);
                    let col = &mut self.inc[v];
                    col.push(u);
                    let last = col.len() - 1;
                    col.swap(at_in, last);
                    self.edges += 1;
                }
            }
        }
    }

    /// Pearce-Kelly insertion of `u -> v` (ids already checked).
    fn insert(
        &mut self,
        u: usize,
        v: usize,
        mut log: Option<&mut Vec<Change>>,
    ) -> Result<Insertion, Error> {
        if u == v {
            return Ok(Insertion::Refused { cycle: vec![u] });
        }
        // reserve first so that a failed allocation changes nothing
        grow("successor lists", &mut self.out[u], 1)?;
        grow("predecessor lists", &mut self.inc[v], 1)?;
        let (lower, upper) = (self.position[v], self.position[u]);
        let mut affected = 0;
        if lower < upper {
            if let Some(cycle) = self.search_forward(v, u, upper) {
                return Ok(Insertion::Refused { cycle });
            }
            self.search_backward(u, lower);
            affected = self.reorder(log.as_deref_mut());
        }
        self.out[u].push(v);
        self.inc[v].push(u);
        self.edges += 1;
        if let Some(log) = log {
            log.push(Change::Pushed { u, v });
        }
        self.affected_total += affected as u64;
        Ok(Insertion::Added { affected })
    }

    /// Depth-first from `start` over nodes placed before `upper`, marking
    /// them into `forward`. Returns the path `start -> ... -> target` (and
    /// clears every mark) when `target` is reached.
    fn search_forward(&mut self, start: usize, target: usize, upper: usize) -> Option<Vec<usize>> {
        self.forward.clear();
        self.stack.clear();
        self.mark[start] = true;
        self.forward.push(start);
        self.stack.push((start, 0));
        while let Some(&mut (x, ref mut next)) = self.stack.last_mut() {
            let Some(&w) = self.out[x].get(*next) else {
                self.stack.pop();
                continue;
            };
            *next += 1;
            self.work += 1;
            if w == target {
                let mut cycle: Vec<usize> = self.stack.iter().map(|&(x, _)| x).collect();
                cycle.push(target);
                for &f in &self.forward {
                    self.mark[f] = false;
                }
                return Some(cycle);
            }
            if !self.mark[w] && self.position[w] < upper {
                self.mark[w] = true;
                self.forward.push(w);
                self.stack.push((w, 0));
            }
        }
        None
    }

    /// Depth-first backward from `start` over nodes placed after `lower`,
    /// marking them into `backward`.
    fn search_backward(&mut self, start: usize, lower: usize) {
        self.backward.clear();
        self.stack.clear();
        self.mark[start] = true;
        self.backward.push(start);
        self.stack.push((start, 0));
        while let Some(&mut (x, ref mut next)) = self.stack.last_mut() {
            let Some(&w) = self.inc[x].get(*next) else {
                self.stack.pop();
                continue;
            };
            *next += 1;
            self.work += 1;
            if !self.mark[w] && self.position[w] > lower {
                self.mark[w] = true;
                self.backward.push(w);
                self.stack.push((w, 0));
            }
        }
    }

    /// Hand the positions of `backward` and `forward` out again: backward
    /// nodes first, then forward ones, each set in its current relative
    /// order. Clears the marks; returns the region's size.
    fn reorder(&mut self, mut log: Option<&mut Vec<Change>>) -> usize {
        let position = &self.position;
        self.forward.sort_unstable_by_key(|&x| position[x]);
        self.backward.sort_unstable_by_key(|&x| position[x]);
        self.slots.clear();
        self.slots.extend(self.backward.iter().chain(&self.forward).map(|&x| position[x]));
        self.slots.sort_unstable();
        let moved = self.backward.iter().chain(&self.forward);
        for (&x, &slot) in moved.zip(&self.slots) {
            self.mark[x] = false;
            if let Some(log) = log.as_deref_mut() {
                log.push(Change::Moved { node: x, position: self.position[x] });
            }
            self.position[x] = slot;
            self.node_at[slot] = x;
        }
        let size = self.forward.len() + self.backward.len();
        self.work += size;
        size
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rng::SplitMix64;
    use crate::testing::random_dag;

    /// Plain reference: is `to` reachable from `from` (breadth-first over
    /// an edge list)?
    fn reaches(edges: &[(usize, usize)], n: usize, from: usize, to: usize) -> bool {
        let mut seen = vec![false; n];
        let mut todo = vec![from];
        seen[from] = true;
        while let Some(x) = todo.pop() {
            if x == to {
                return true;
            }
            for &(a, b) in edges {
                if a == x && !seen[b] {
                    seen[b] = true;
                    todo.push(b);
                }
            }
        }
        false
    }

    fn check(d: &DynamicOrder, edges: &[(usize, usize)]) {
        let n = d.n();
        let mut sorted = d.order().to_vec();
        sorted.sort_unstable();
        assert_eq!(sorted, (0..n).collect::<Vec<_>>(), "order is a permutation");
        for (at, &x) in d.order().iter().enumerate() {
            assert_eq!(d.positions()[x], at);
        }
        for &(a, b) in edges {
            assert!(d.positions()[a] < d.positions()[b], "edge {a} -> {b} goes backwards");
        }
        let mut mine: Vec<(usize, usize)> =
            (0..n).flat_map(|u| d.successors(u).iter().map(move |&v| (u, v))).collect();
        let mut theirs = edges.to_vec();
        mine.sort_unstable();
        theirs.sort_unstable();
        assert_eq!(mine, theirs, "edge multiset");
        assert_eq!(d.m(), edges.len());
        assert!(d.mark.iter().all(|&m| !m), "marks cleared");
    }

    fn assert_cycle(edges: &[(usize, usize)], u: usize, v: usize, cycle: &[usize]) {
        assert_eq!(cycle.first(), Some(&v));
        assert_eq!(cycle.last(), Some(&u));
        for pair in cycle.windows(2) {
            assert!(edges.contains(&(pair[0], pair[1])), "{pair:?} is no edge");
        }
    }

    #[test]
    fn random_sequences_match_reachability() {
        let mut rng = SplitMix64::new(12);
        let mut resorts = 0;
        for _ in 0..300 {
            let (indptr, indices) = random_dag(&mut rng, 14, 30);
            let csr = Csr::new(&indptr, &indices).unwrap();
            let mut d = DynamicOrder::from_csr(&csr).unwrap().unwrap();
            d.force_resort = rng.below(2) == 0;
            let n = d.n();
            let mut edges: Vec<(usize, usize)> =
                (0..n).flat_map(|u| csr.row(u).iter().map(move |&v| (u, v as usize))).collect();
            check(&d, &edges);
            if n == 0 {
                continue;
            }
            for _ in 0..40 {
                let u = rng.below(n as u64) as usize;
                let v = rng.below(n as u64) as usize;
                match rng.below(4) {
                    0 if !edges.is_empty() => {
                        let (a, b) = edges[rng.below(edges.len() as u64) as usize];
                        assert!(d.remove_edge(a as i64, b as i64).unwrap());
                        let at = edges.iter().rposition(|&e| e == (a, b)).unwrap();
                        edges.remove(at);
                    }
                    1 => {
                        let before = (d.order().to_vec(), edges.clone());
                        let size = 1 + rng.below(10);
                        let batch: Vec<(usize, usize)> = (0..size)
                            .map(|_| (rng.below(n as u64) as usize, rng.below(n as u64) as usize))
                            .collect();
                        let src: Vec<i64> = batch.iter().map(|e| e.0 as i64).collect();
                        let dst: Vec<i64> = batch.iter().map(|e| e.1 as i64).collect();
                        match d.add_edges(&src, &dst).unwrap() {
                            BatchInsertion::Added { .. } => edges.extend(&batch),
                            BatchInsertion::Refused { index, cycle } => {
                                let mut with: Vec<_> = edges.clone();
                                with.extend(&batch[..index]);
                                let (a, b) = batch[index];
                                assert!(reaches(&with, n, b, a));
                                for j in 0..index {
                                    let mut prefix = edges.clone();
                                    prefix.extend(&batch[..j]);
                                    let (a, b) = batch[j];
                                    assert!(!reaches(&prefix, n, b, a), "edge {j} closes a cycle");
                                }
                                assert_cycle(&with, a, b, &cycle);
                                assert_eq!(d.order(), &before.0[..]);
                                assert_eq!(before.1, edges);
                            }
                        }
                    }
                    _ => {
                        let closes = reaches(&edges, n, v, u);
                        let before = d.order().to_vec();
                        let rows: Vec<Vec<usize>> =
                            (0..n).map(|x| d.successors(x).to_vec()).collect();
                        match d.add_edge(u as i64, v as i64).unwrap() {
                            Insertion::Added { .. } => {
                                assert!(!closes);
                                edges.push((u, v));
                            }
                            Insertion::Refused { cycle } => {
                                assert!(closes);
                                assert_cycle(&edges, u, v, &cycle);
                                assert_eq!(d.order(), &before[..]);
                                let now: Vec<Vec<usize>> =
                                    (0..n).map(|x| d.successors(x).to_vec()).collect();
                                assert_eq!(rows, now);
                            }
                        }
                    }
                }
                check(&d, &edges);
            }
            resorts += d.resorts;
        }
        assert!(resorts > 50, "the window re-sort ran {resorts} times");
    }

    #[test]
    fn failed_removal_batch_restores_rows_exactly() {
        let mut d = DynamicOrder::new(4).unwrap();
        d.add_edges(&[0, 0, 0, 1], &[1, 2, 3, 2]).unwrap();
        let rows: Vec<Vec<usize>> = (0..4).map(|x| d.successors(x).to_vec()).collect();
        assert_eq!(d.remove_edges(&[0, 1, 0], &[1, 2, 1]).unwrap(), Some(2));
        let now: Vec<Vec<usize>> = (0..4).map(|x| d.successors(x).to_vec()).collect();
        assert_eq!(rows, now);
        assert_eq!(d.m(), 4);
        assert_eq!(d.remove_edges(&[0, 1], &[1, 2]).unwrap(), None);
        assert_eq!(d.m(), 2);
    }

    #[test]
    fn bad_ids_are_named() {
        let mut d = DynamicOrder::new(3).unwrap();
        let e = d.add_edge(0, 3).unwrap_err();
        assert!(e.to_string().contains("v = 3"), "{e}");
        let e = d.add_edges(&[0, 1], &[1, -1]).unwrap_err();
        assert!(e.to_string().contains("dst[1] = -1"), "{e}");
        assert_eq!(d.add_edge(1, 1).unwrap(), Insertion::Refused { cycle: vec![1] });
        assert!(d.add_nodes(usize::MAX).is_err());
        d.add_nodes(2).unwrap();
        assert_eq!(d.order(), &[0, 1, 2, 3, 4]);
    }

    #[test]
    fn long_batch_closing_a_cycle_at_its_end() {
        // edges i + 1 -> i in descending i, then 0 -> n - 1: single steps
        // would be quadratic; the re-sorts find edge n - 1 quickly
        let n = 200_000usize;
        let mut src: Vec<i64> = (1..n as i64).rev().collect();
        let mut dst: Vec<i64> = (0..n as i64 - 1).rev().collect();
        src.push(0);
        dst.push(n as i64 - 1);
        let mut d = DynamicOrder::new(n).unwrap();
        match d.add_edges(&src, &dst).unwrap() {
            BatchInsertion::Refused { index, cycle } => {
                assert_eq!(index, n - 1);
                assert_eq!(cycle, (0..n).rev().collect::<Vec<_>>());
            }
            other => panic!("{other:?}"),
        }
        assert_eq!(d.m(), 0);
        assert_eq!(d.order(), &(0..n).collect::<Vec<_>>()[..]);
        src.pop();
        dst.pop();
        let added = d.add_edges(&src, &dst).unwrap();
        assert!(matches!(added, BatchInsertion::Added { .. }), "{added:?}");
        assert_eq!(d.order(), &(0..n).rev().collect::<Vec<_>>()[..]);
    }

    #[test]
    fn cyclic_input_reports_a_cycle() {
        let (indptr, indices) = (vec![0i64, 1, 2], vec![1i64, 0]);
        let csr = Csr::new(&indptr, &indices).unwrap();
        let cycle = DynamicOrder::from_csr(&csr).unwrap().unwrap_err();
        assert_eq!(cycle.len(), 2);
    }
}
