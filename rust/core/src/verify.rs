//! Checking a proposed order.

use crate::{Csr, Error, Idx};

/// Why a sequence is not a topological order of a graph.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Violation {
    /// `order[position]` is not a node id.
    OutOfRange { position: usize, value: i128 },
    /// `node` appears at `first` and again at `second`.
    Duplicate { node: usize, first: usize, second: usize },
    /// `node` (the smallest missing one) does not appear.
    Missing { node: usize },
    /// Stored edge number `edge`, `u -> v`, goes backwards (or is a self-loop).
    Edge { edge: usize, u: usize, v: usize, pos_u: usize, pos_v: usize },
}

/// Position of every node in `order`, which must be a permutation of `0..n`.
pub fn positions<J: Idx>(order: &[J], n: usize) -> Result<Vec<J>, Violation> {
    let unset = usize::MAX;
    let mut position = vec![unset; n];
    for (p, v) in order.iter().enumerate() {
        let node = v.to_usize();
        match position.get_mut(node) {
            None => return Err(Violation::OutOfRange { position: p, value: v.to_i128() }),
            Some(slot) if *slot != unset => {
                return Err(Violation::Duplicate { node, first: *slot, second: p })
            }
            Some(slot) => *slot = p,
        }
    }
    if let Some(node) = position.iter().position(|&p| p == unset) {
        return Err(Violation::Missing { node });
    }
    Ok(position.into_iter().map(J::from_usize).collect())
}

/// `Ok(None)` when `order` is a topological order of `csr`; otherwise the
/// first problem: a bad entry of `order`, or the first backward edge in
/// stored (CSR) edge order. `Err` only when the graph itself is malformed.
pub fn verify<I: Idx, P: Idx, J: Idx>(
    csr: &Csr<'_, I, P>,
    order: &[J],
) -> Result<Option<Violation>, Error> {
    csr.check_indices()?;
    let position = match positions(order, csr.n()) {
        Ok(position) => position,
        Err(violation) => return Ok(Some(violation)),
    };
    for u in 0..csr.n() {
        let pos_u = position[u].to_usize();
        let range = csr.row_range(u);
        let start = range.start;
        for (offset, v) in csr.indices()[range].iter().enumerate() {
            let pos_v = position[v.to_usize()].to_usize();
            if pos_v <= pos_u {
                let v = v.to_usize();
                return Ok(Some(Violation::Edge { edge: start + offset, u, v, pos_u, pos_v }));
            }
        }
    }
    Ok(None)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn positions_invert_and_name_problems() {
        assert_eq!(positions(&[2i32, 0, 1], 3).unwrap(), vec![1, 2, 0]);
        assert_eq!(
            positions(&[2i32, 0, 2], 3).unwrap_err(),
            Violation::Duplicate { node: 2, first: 0, second: 2 }
        );
        assert_eq!(positions(&[2i32, 0], 3).unwrap_err(), Violation::Missing { node: 1 });
        assert_eq!(
            positions(&[0i64, -1], 2).unwrap_err(),
            Violation::OutOfRange { position: 1, value: -1 }
        );
    }

    #[test]
    fn verify_finds_first_backward_edge_in_storage_order() {
        // 0 -> 1, 0 -> 2, 2 -> 1
        let g = Csr::new(&[0i64, 2, 2, 3], &[1, 2, 1]).unwrap();
        assert_eq!(verify(&g, &[0i64, 2, 1]).unwrap(), None);
        assert_eq!(
            verify(&g, &[0i64, 1, 2]).unwrap(),
            Some(Violation::Edge { edge: 2, u: 2, v: 1, pos_u: 2, pos_v: 1 })
        );
        let looped = Csr::new(&[0i64, 1], &[0]).unwrap();
        assert!(matches!(
            verify(&looped, &[0i64]).unwrap(),
            Some(Violation::Edge { u: 0, v: 0, .. })
        ));
    }
}
