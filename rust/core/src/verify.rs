//! Checking a proposed order.

use crate::interrupt::{Ticker, STRIDE};
use crate::{alloc, Csr, Error, Idx};

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

/// Position of every node in `order`, which must be a permutation of `0..n`
/// (`Ok(Err(_))` names the first problem); `Err` only when interrupted or
/// out of memory.
pub fn positions<J: Idx>(order: &[J], n: usize) -> Result<Result<Vec<J>, Violation>, Error> {
    let unset = usize::MAX;
    let mut position = alloc::filled("positions", n, unset)?;
    let mut ticker = Ticker::new();
    for (p, v) in order.iter().enumerate() {
        ticker.tick()?;
        let node = v.to_usize();
        match position.get_mut(node) {
            None => return Ok(Err(Violation::OutOfRange { position: p, value: v.to_i128() })),
            Some(slot) if *slot != unset => {
                return Ok(Err(Violation::Duplicate { node, first: *slot, second: p }))
            }
            Some(slot) => *slot = p,
        }
    }
    if let Some(node) = crate::interrupt::position(&position, |&p| p == unset)? {
        return Ok(Err(Violation::Missing { node }));
    }
    let mut converted = alloc::with_capacity("positions", n)?;
    for part in position.chunks(STRIDE as usize) {
        ticker.tick_by(part.len())?;
        converted.extend(part.iter().map(|&p| J::from_usize(p)));
    }
    Ok(Ok(converted))
}

/// `Ok(None)` when `order` is a topological order of `csr`; otherwise the
/// first problem: a bad entry of `order`, or the first backward edge in
/// stored (CSR) edge order. `Err` only when the graph itself is malformed
/// (or changed during the call), or on an interruption.
pub fn verify<I: Idx, P: Idx, J: Idx>(
    csr: &Csr<'_, I, P>,
    order: &[J],
) -> Result<Option<Violation>, Error> {
    csr.check_indices()?;
    let position = match positions(order, csr.n())? {
        Ok(position) => position,
        Err(violation) => return Ok(Some(violation)),
    };
    let mut ticker = Ticker::new();
    for u in 0..csr.n() {
        let pos_u = position[u].to_usize();
        let (start, row) = csr.checked_row_at(u)?;
        ticker.tick_by(row.len() + 1)?;
        for (offset, v) in row.iter().enumerate() {
            let Some(pos_v) = position.get(v.to_usize()) else {
                return Err(Error::InputChanged { what: "indices" });
            };
            let pos_v = pos_v.to_usize();
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
        assert_eq!(positions(&[2i32, 0, 1], 3).unwrap().unwrap(), vec![1, 2, 0]);
        assert_eq!(
            positions(&[2i32, 0, 2], 3).unwrap().unwrap_err(),
            Violation::Duplicate { node: 2, first: 0, second: 2 }
        );
        assert_eq!(positions(&[2i32, 0], 3).unwrap().unwrap_err(), Violation::Missing { node: 1 });
        assert_eq!(
            positions(&[0i64, -1], 2).unwrap().unwrap_err(),
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
