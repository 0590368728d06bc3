//! Edge lists to CSR.

use crate::interrupt::{Ticker, STRIDE};
use crate::{alloc, Error, Idx};

/// A CSR graph built from an edge list, owning its arrays.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct OwnedCsr<I> {
    pub indptr: Vec<I>,
    pub indices: Vec<I>,
    /// `edge_ids[k]` is the input position of the k-th stored edge, when asked for.
    pub edge_ids: Option<Vec<I>>,
}

/// Group the edges `src[k] -> dst[k]` by source with a stable counting sort
/// (O(n + m)), so each row keeps the input order of its edges.
pub fn edges_to_csr<I: Idx>(
    src: &[I],
    dst: &[I],
    n: usize,
    with_edge_ids: bool,
) -> Result<OwnedCsr<I>, Error> {
    let m = src.len();
    if dst.len() != m {
        return Err(Error::LengthMismatch { what: "dst", expected: m, got: dst.len() });
    }
    if n > I::MAX_USIZE {
        return Err(Error::TooLarge { what: "node count", count: n, max: I::MAX_USIZE });
    }
    if m > I::MAX_USIZE {
        return Err(Error::TooLarge { what: "edge count", count: m, max: I::MAX_USIZE });
    }
    let out_of_range = |what, position: usize, value: I| Error::IndexOutOfRange {
        what,
        position,
        value: value.to_i128(),
        n,
    };
    if let Some(position) = crate::interrupt::position(dst, |v| v.to_usize() >= n)? {
        return Err(out_of_range("dst", position, dst[position]));
    }
    // cursor[u + 1] counts row u, then becomes the next write slot of row u.
    let mut ticker = Ticker::new();
    let mut cursor = alloc::filled("indptr", n.saturating_add(1), 0usize)?;
    for (position, u) in src.iter().enumerate() {
        ticker.tick()?;
        match cursor.get_mut(u.to_usize().wrapping_add(1)) {
            Some(count) if u.to_usize() < n => *count += 1,
            _ => return Err(out_of_range("src", position, *u)),
        }
    }
    for u in 0..n {
        ticker.tick()?;
        cursor[u + 1] += cursor[u];
    }
    let mut indptr: Vec<I> = alloc::with_capacity("indptr", cursor.len())?;
    for part in cursor.chunks(STRIDE as usize) {
        ticker.tick_by(part.len())?;
        indptr.extend(part.iter().map(|&c| I::from_usize(c)));
    }
    let mut indices = alloc::filled("indices", m, I::default())?;
    let mut edge_ids =
        if with_edge_ids { alloc::filled("edge ids", m, I::default())? } else { Vec::new() };
    // The endpoints were checked above, but the caller's arrays may have
    // changed since: every write below is checked, never out of bounds.
    let changed = || Error::InputChanged { what: "src" };
    for (k, (u, v)) in src.iter().zip(dst).enumerate() {
        ticker.tick()?;
        let slot = cursor.get_mut(u.to_usize()).ok_or_else(changed)?;
        *indices.get_mut(*slot).ok_or_else(changed)? = *v;
        if with_edge_ids {
            *edge_ids.get_mut(*slot).ok_or_else(changed)? = I::from_usize(k);
        }
        *slot += 1;
    }
    Ok(OwnedCsr { indptr, indices, edge_ids: with_edge_ids.then_some(edge_ids) })
}

/// The input positions, ascending, of the stored edges `stored` of the CSR
/// that [`edges_to_csr`] builds from `src` (stable grouping by source, with
/// `indptr` its offsets): one pass over `src`, without building the edge
/// ids of every edge.
pub fn input_positions_of<I: Idx, P: Idx>(
    src: &[I],
    indptr: &[P],
    stored: &[i64],
) -> Result<Vec<i64>, Error> {
    let m = src.len();
    if indptr.last().map_or(0, |last| last.to_usize()) != m {
        return Err(Error::LengthMismatch {
            what: "src (edges counted by indptr)",
            expected: indptr.last().map_or(0, |last| last.to_usize()),
            got: m,
        });
    }
    let mut wanted = alloc::filled("picked edges", m.div_ceil(64), 0u64)?;
    for (position, &k) in stored.iter().enumerate() {
        let Some(word) = usize::try_from(k).ok().filter(|&k| k < m).map(|k| k / 64) else {
            return Err(Error::IndexOutOfRange {
                what: "stored edge positions",
                position,
                value: k as i128,
                n: m,
            });
        };
        wanted[word] |= 1 << (k as usize % 64);
    }
    let found = if m <= u32::MAX as usize {
        pick_positions::<I, P, u32>(src, indptr, &wanted, stored.len())?
    } else {
        pick_positions::<I, P, u64>(src, indptr, &wanted, stored.len())?
    };
    if found.len() != stored.len() {
        // Repeated stored positions, or `src` other than the one counted.
        return Err(Error::LengthMismatch {
            what: "input positions found for the stored edge positions",
            expected: stored.len(),
            got: found.len(),
        });
    }
    Ok(found)
}

/// The pass of [`input_positions_of`], with row cursors of width `C` (any
/// that holds the edge count).
fn pick_positions<I: Idx, P: Idx, C: Idx>(
    src: &[I],
    indptr: &[P],
    wanted: &[u64],
    count: usize,
) -> Result<Vec<i64>, Error> {
    let n = indptr.len().saturating_sub(1);
    let mut cursor = alloc::with_capacity("row cursors", n)?;
    cursor.extend(indptr[..n].iter().map(|p| C::from_usize(p.to_usize())));
    // One slot more than wanted: every edge is written at the end, and only
    // a wanted one is kept (about a third of the edges are wanted after a
    // cut of a random graph, so a branch on it would be a coin toss).
    let mut found = alloc::filled("input positions", count + 1, 0i64)?;
    let mut kept = 0usize;
    let mut ticker = crate::interrupt::Ticker::new();
    let changed = || Error::InputChanged { what: "src" };
    for (chunk, sources) in src.chunks(1 << 16).enumerate() {
        ticker.tick_by(sources.len())?;
        for (j, &u) in sources.iter().enumerate() {
            let slot = cursor.get_mut(u.to_usize()).ok_or_else(changed)?;
            let k = slot.to_usize();
            *slot = C::from_usize(k + 1);
            let bit = wanted.get(k / 64).ok_or_else(changed)? >> (k % 64) & 1;
            // Past the last slot: more edges found than asked for (repeated
            // stored positions, or `src` other than the one counted).
            *found.get_mut(kept).ok_or(Error::LengthMismatch {
                what: "input positions found for the stored edge positions",
                expected: count,
                got: kept,
            })? = ((chunk << 16) + j) as i64;
            kept += bit as usize;
        }
    }
    found.truncate(kept);
    Ok(found)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn input_positions_of_chosen_edges_match_the_full_edge_ids() {
        let src = [3i64, 0, 3, 1, 0, 3, 2];
        let dst = [0i64, 1, 1, 2, 2, 2, 3];
        let built = edges_to_csr(&src, &dst, 4, true).unwrap();
        let ids = built.edge_ids.unwrap();
        for stored in [vec![], vec![0i64], vec![1, 4, 6], (0..7).collect()] {
            let mut expected: Vec<i64> = stored.iter().map(|&k| ids[k as usize]).collect();
            expected.sort_unstable();
            assert_eq!(input_positions_of(&src, &built.indptr, &stored).unwrap(), expected);
        }
        assert!(input_positions_of(&src, &built.indptr, &[7]).is_err());
        assert!(input_positions_of(&src, &built.indptr, &[-1]).is_err());
        assert!(input_positions_of(&src, &built.indptr, &[2, 2]).is_err());
        assert!(input_positions_of(&src[..6], &built.indptr, &[0]).is_err());
    }

    #[test]
    fn rows_keep_input_order() {
        let g = edges_to_csr(&[2i64, 0, 2, 0], &[1, 2, 0, 1], 3, true).unwrap();
        assert_eq!(g.indptr, vec![0, 2, 2, 4]);
        assert_eq!(g.indices, vec![2, 1, 1, 0]);
        assert_eq!(g.edge_ids, Some(vec![1, 3, 0, 2]));
    }

    #[test]
    fn isolated_nodes_and_empty_graphs() {
        let g = edges_to_csr::<i32>(&[], &[], 3, false).unwrap();
        assert_eq!(g.indptr, vec![0, 0, 0, 0]);
        assert!(g.indices.is_empty() && g.edge_ids.is_none());
        let g = edges_to_csr::<i32>(&[], &[], 0, false).unwrap();
        assert_eq!(g.indptr, vec![0]);
    }

    #[test]
    fn bad_endpoints_are_named() {
        let e = edges_to_csr(&[0i64, -3], &[1, 1], 2, false).unwrap_err();
        assert_eq!(e, Error::IndexOutOfRange { what: "src", position: 1, value: -3, n: 2 });
        let e = edges_to_csr(&[0i32], &[5], 2, false).unwrap_err();
        assert_eq!(e, Error::IndexOutOfRange { what: "dst", position: 0, value: 5, n: 2 });
        let e = edges_to_csr(&[0i32], &[], 2, false).unwrap_err();
        assert!(matches!(e, Error::LengthMismatch { what: "dst", .. }));
        let e = edges_to_csr::<i32>(&[], &[], 1 << 40, false).unwrap_err();
        assert!(matches!(e, Error::TooLarge { .. }));
    }
}
