//! A FIFO Kahn's loop that visits every edge once, in topological order.
//!
//! The dynamic programmes along an order (levels, critical path, path
//! counts) all need the order and one look at each edge `u -> v` after `u`'s
//! value is final. Doing both in the same loop reads each CSR row once
//! instead of twice, which is most of the cost on graphs larger than cache.

use crate::kahn::{kahn, Outcome, Tie};
use crate::{Csr, Error, Idx};

/// What a sweep yields: the value on a DAG, or what Kahn's loop found on a
/// graph with a cycle (blocked nodes and one cycle), so callers can report it.
pub type Acyclic<T, I> = Result<T, Outcome<I>>;

/// A topological order with the boundaries of its levels.
///
/// `order[offsets[k]..offsets[k + 1]]` are the nodes of level `k` (sources
/// are level 0; any other node is one more than its highest predecessor).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct LevelOrder<I> {
    pub order: Vec<I>,
    pub offsets: Vec<usize>,
}

/// FIFO Kahn's loop calling `visit(u, v, edge)` for every stored edge once,
/// when `u` is emitted (so everything `u` depends on is already visited).
/// `emit(u)` runs just before `u`'s edges are visited.
///
/// The queue emits level by level: the level-`k + 1` nodes are exactly the
/// ones made ready while level `k` is emitted, so the FIFO order is sorted by
/// level and the boundaries come for free.
pub fn fifo_sweep<I, E, V>(
    csr: &Csr<'_, I>,
    mut emit: E,
    mut visit: V,
) -> Result<Acyclic<LevelOrder<I>, I>, Error>
where
    I: Idx,
    E: FnMut(usize),
    V: FnMut(usize, usize, usize),
{
    let n = csr.n();
    let mut indegree = csr.in_degrees()?;
    let mut order: Vec<I> = Vec::with_capacity(n);
    for (v, d) in indegree.iter().enumerate() {
        if d.to_usize() == 0 {
            order.push(I::from_usize(v));
        }
    }
    let mut offsets = vec![0];
    let mut level_end = order.len();
    let mut head = 0;
    while head < order.len() {
        if head == level_end {
            offsets.push(head);
            level_end = order.len();
        }
        let u = order[head].to_usize();
        head += 1;
        emit(u);
        let range = csr.row_range(u);
        let start = range.start;
        for (offset, &v) in csr.indices()[range].iter().enumerate() {
            let vi = v.to_usize();
            visit(u, vi, start + offset);
            let slot = &mut indegree[vi];
            let left = slot.to_usize() - 1;
            *slot = I::from_usize(left);
            if left == 0 {
                order.push(v);
            }
        }
    }
    if order.len() < n {
        // The cycle witness is worth a second pass only on this error path.
        return Ok(Err(kahn(csr, &Tie::Queue)?));
    }
    if n > 0 {
        offsets.push(n);
    }
    Ok(Ok(LevelOrder { order, offsets }))
}

/// Per-node or per-edge numbers: one value for all, or one each.
#[derive(Debug, Clone, Copy)]
pub enum Weights<'a> {
    Constant(f64),
    Each(&'a [f64]),
}

impl Weights<'_> {
    #[inline(always)]
    pub fn get(&self, position: usize) -> f64 {
        match self {
            Weights::Constant(w) => *w,
            Weights::Each(w) => w[position],
        }
    }

    /// Check the length and that every value is finite and non-negative.
    pub fn check(&self, what: &'static str, expected: usize) -> Result<(), Error> {
        let Weights::Each(values) = self else {
            return match self.get(0) {
                w if w.is_finite() && w >= 0.0 => Ok(()),
                w => Err(Error::BadWeight {
                    what,
                    position: 0,
                    value: w.to_string(),
                }),
            };
        };
        if values.len() != expected {
            return Err(Error::LengthMismatch {
                what,
                expected,
                got: values.len(),
            });
        }
        match values.iter().position(|w| !(w.is_finite() && *w >= 0.0)) {
            Some(position) => Err(Error::BadWeight {
                what,
                position,
                value: values[position].to_string(),
            }),
            None => Ok(()),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::edges::edges_to_csr;

    #[test]
    fn levels_come_out_sorted_with_boundaries() {
        // 3 -> 0 -> 1 -> 2 and 3 -> 2: levels 3:0, 0:1, 1:2, 2:3; 4 isolated.
        let g = edges_to_csr(&[3i32, 0, 1, 3], &[0, 1, 2, 2], 5, false).unwrap();
        let csr = Csr::new(&g.indptr, &g.indices).unwrap();
        let mut seen = Vec::new();
        let out = fifo_sweep(&csr, |_| {}, |u, v, e| seen.push((u, v, e)))
            .unwrap()
            .unwrap();
        assert_eq!(out.order, vec![3, 4, 0, 1, 2]);
        assert_eq!(out.offsets, vec![0, 2, 3, 4, 5]);
        assert_eq!(seen.len(), 4);
        for (u, v, e) in seen {
            assert_eq!(g.indices[e] as usize, v);
            assert!(csr.row_range(u).contains(&e));
        }
    }

    #[test]
    fn cycles_are_reported_not_swept() {
        let csr = Csr::new(&[0i64, 1, 2, 2], &[1, 0]).unwrap();
        let out = fifo_sweep(&csr, |_| {}, |_, _, _| {}).unwrap().unwrap_err();
        assert_eq!(out.cycle, vec![0, 1]);
        assert_eq!(out.order, vec![2]);
        let empty = Csr::<i32>::new(&[0], &[]).unwrap();
        let out = fifo_sweep(&empty, |_| {}, |_, _, _| {}).unwrap().unwrap();
        assert!(out.order.is_empty() && out.offsets == vec![0]);
    }

    #[test]
    fn weights_are_checked() {
        let w = [1.0, -0.5];
        assert!(matches!(
            Weights::Each(&w).check("edge_weight", 2),
            Err(Error::BadWeight { position: 1, .. })
        ));
        assert!(matches!(
            Weights::Each(&w).check("edge_weight", 3),
            Err(Error::LengthMismatch { .. })
        ));
        let nan = [f64::NAN];
        assert!(Weights::Each(&nan).check("node_weight", 1).is_err());
        assert!(Weights::Constant(1.0).check("edge_weight", 0).is_ok());
    }
}
