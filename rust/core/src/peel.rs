//! One shard's step of a level-synchronous peel across shards.
//!
//! A graph too large for one process is split into shards, each owning a
//! range of nodes and the out-edges of those nodes. A shard's CSR numbers
//! its own nodes `0..n` and every node it points to in another shard as an
//! *outside slot* `n + s`; `slot_group[s]` names the shard that owns slot
//! `s`. Per node the shard keeps the in-edges not yet accounted for
//! (`remaining`) and the largest level offered so far (`level`).
//!
//! A [`peel`] call applies the messages received from other shards (an
//! in-degree decrement and a candidate level per node), then runs Kahn's
//! loop inside the shard until nothing more is ready, and returns, grouped
//! by destination shard, one message per outside node reached: how many of
//! its in-edges were used and the largest candidate level (`level + 1` of a
//! predecessor). A node's level is the maximum over its in-edges, so the
//! order in which messages arrive does not matter and the result is exact.

use crate::interrupt::Ticker;
use crate::{alloc, Csr, Error, Idx};

/// The fixed part of a shard: its CSR and the owners of its outside slots.
#[derive(Debug, Clone, Copy)]
pub struct Shard<'a, I: Idx> {
    /// `n + 1` row offsets into `targets` for the shard's `n` own nodes.
    pub indptr: &'a [I],
    /// Per edge: an own node `< n`, or `n + s` for outside slot `s`.
    pub targets: &'a [I],
    /// Per outside slot, the destination group (shard) in `0..groups`.
    pub slot_group: &'a [I],
    /// Number of destination groups.
    pub groups: usize,
}

/// Messages for the shard's own nodes: local id, decrement, candidate level.
#[derive(Debug, Clone, Copy)]
pub struct Inbox<'a, I: Idx> {
    pub nodes: &'a [I],
    pub counts: &'a [I],
    pub levels: &'a [I],
}

/// What one [`peel`] call produced.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Peeled<I> {
    /// Own nodes levelled by this call.
    pub peeled: usize,
    /// Outside slots reached, grouped by destination (group `g` is
    /// `offsets[g]..offsets[g + 1]`), each group in first-reached order.
    pub slots: Vec<I>,
    /// Per reported slot, the number of its in-edges used.
    pub counts: Vec<I>,
    /// Per reported slot, the largest candidate level offered.
    pub levels: Vec<I>,
    /// `groups + 1` boundaries into `slots`.
    pub offsets: Vec<usize>,
}

fn internal(reason: String) -> Error {
    Error::Internal { reason }
}

/// Apply `inbox`, peel everything that becomes ready, report what leaves.
///
/// With `seed_zero`, every own node whose `remaining` is 0 before the inbox
/// is applied starts the peel too (the first round, once in-degrees are
/// known); later calls pass `false` so nodes are never levelled twice.
/// `remaining` and `level` are updated in place: a levelled node has
/// `remaining == 0` and its final `level`. Cost: O(n + slots) for the
/// checks and scratch, plus the inbox and the edges of the peeled nodes.
pub fn peel<I: Idx>(
    shard: &Shard<'_, I>,
    remaining: &mut [I],
    level: &mut [I],
    inbox: &Inbox<'_, I>,
    seed_zero: bool,
) -> Result<Peeled<I>, Error> {
    let csr = Csr::new(shard.indptr, shard.targets)?;
    let n = csr.n();
    let outside = shard.slot_group.len();
    let limit = n.checked_add(outside).filter(|&l| l <= I::MAX_USIZE).ok_or(Error::TooLarge {
        what: "own nodes + outside slots",
        count: n.saturating_add(outside),
        max: I::MAX_USIZE,
    })?;
    for (what, got) in [("remaining", remaining.len()), ("level", level.len())] {
        if got != n {
            return Err(Error::LengthMismatch { what, expected: n, got });
        }
    }
    for (what, got) in [("inbox counts", inbox.counts.len()), ("inbox levels", inbox.levels.len())]
    {
        if got != inbox.nodes.len() {
            return Err(Error::LengthMismatch { what, expected: inbox.nodes.len(), got });
        }
    }

    let mut ticker = Ticker::new();
    let mut queue: Vec<usize> = alloc::with_capacity("peel queue", n)?;
    if seed_zero {
        for (v, r) in remaining.iter().enumerate() {
            ticker.tick()?;
            if r.to_usize() == 0 {
                queue.push(v);
            }
        }
    }
    for (k, &node) in inbox.nodes.iter().enumerate() {
        ticker.tick()?;
        let v = node.to_usize();
        let (Some(r), Some(l)) = (remaining.get_mut(v), level.get_mut(v)) else {
            return Err(Error::IndexOutOfRange {
                what: "inbox nodes",
                position: k,
                value: node.to_i128(),
                n,
            });
        };
        let (have, take) = (r.to_usize(), inbox.counts[k].to_usize());
        if take == 0 || take > have {
            return Err(internal(format!(
                "a decrement of {} for node {v} that has {have} in-edges left",
                inbox.counts[k].to_i128()
            )));
        }
        *r = I::from_usize(have - take);
        *l = (*l).max(inbox.levels[k]);
        if have == take {
            queue.push(v);
        }
    }

    let mut slot_count: Vec<usize> = alloc::filled("outside slot counts", outside, 0)?;
    let mut slot_level: Vec<I> = alloc::filled("outside slot levels", outside, I::default())?;
    let mut reached: Vec<usize> = alloc::with_capacity("outside slots reached", outside)?;
    let mut head = 0;
    while let Some(&u) = queue.get(head) {
        head += 1;
        let next = level[u].to_usize() + 1;
        if next > I::MAX_USIZE {
            return Err(Error::TooLarge { what: "level", count: next, max: I::MAX_USIZE });
        }
        let next = I::from_usize(next);
        let (start, row) = csr.checked_row_at(u)?;
        ticker.tick_by(row.len() + 1)?;
        for (offset, target) in row.iter().enumerate() {
            let position = start + offset;
            let t = target.to_usize();
            if t < n {
                let have = remaining[t].to_usize();
                if have == 0 {
                    return Err(internal(format!(
                        "node {t} reached more often than its in-degree"
                    )));
                }
                remaining[t] = I::from_usize(have - 1);
                level[t] = level[t].max(next);
                if have == 1 {
                    queue.push(t);
                }
            } else if t < limit {
                let s = t - n;
                if slot_count[s] == 0 {
                    reached.push(s);
                }
                slot_count[s] += 1;
                slot_level[s] = slot_level[s].max(next);
            } else {
                return Err(Error::IndexOutOfRange {
                    what: "targets",
                    position,
                    value: target.to_i128(),
                    n: limit,
                });
            }
        }
    }

    // Group the reached slots by destination: a stable counting sort.
    let mut offsets: Vec<usize> = alloc::filled("group offsets", shard.groups + 1, 0)?;
    for &s in &reached {
        let g = shard.slot_group[s].to_usize();
        if g >= shard.groups {
            return Err(Error::IndexOutOfRange {
                what: "slot_group",
                position: s,
                value: shard.slot_group[s].to_i128(),
                n: shard.groups,
            });
        }
        offsets[g + 1] += 1;
    }
    for g in 0..shard.groups {
        offsets[g + 1] += offsets[g];
    }
    let mut fill = offsets.clone();
    let mut slots: Vec<I> = alloc::filled("reached slots", reached.len(), I::default())?;
    let mut counts: Vec<I> = alloc::filled("reached counts", reached.len(), I::default())?;
    let mut levels: Vec<I> = alloc::filled("reached levels", reached.len(), I::default())?;
    for &s in &reached {
        let g = shard.slot_group[s].to_usize();
        let at = fill[g];
        fill[g] += 1;
        slots[at] = I::from_usize(s);
        counts[at] = I::from_usize(slot_count[s]);
        levels[at] = slot_level[s];
    }
    Ok(Peeled { peeled: queue.len(), slots, counts, levels, offsets })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rng::SplitMix64;
    use crate::testing::random_dag_edges;

    /// Plain reference: levels by repeated relaxation (Bellman-Ford style,
    /// longest path), `None` for nodes on or behind a cycle.
    fn reference_levels(n: usize, src: &[i64], dst: &[i64]) -> Vec<Option<i64>> {
        let mut indeg = vec![0usize; n];
        for &d in dst {
            indeg[d as usize] += 1;
        }
        let mut level: Vec<Option<i64>> = vec![None; n];
        let mut done = vec![false; n];
        loop {
            let mut changed = false;
            for v in 0..n {
                if done[v] {
                    continue;
                }
                let preds: Vec<usize> = (0..src.len())
                    .filter(|&k| dst[k] as usize == v)
                    .map(|k| src[k] as usize)
                    .collect();
                if preds.iter().all(|&p| done[p]) {
                    level[v] =
                        Some(preds.iter().map(|&p| level[p].unwrap() + 1).max().unwrap_or(0));
                    done[v] = true;
                    changed = true;
                }
            }
            if !changed {
                return level;
            }
        }
    }

    struct Built {
        indptr: Vec<i64>,
        targets: Vec<i64>,
        slot_nodes: Vec<i64>,
        slot_group: Vec<i64>,
        remaining: Vec<i64>,
        level: Vec<i64>,
    }

    /// Shards by contiguous id ranges of `block` nodes, the way the Python
    /// driver builds them; in-degrees counted globally here.
    fn shards(n: usize, src: &[i64], dst: &[i64], block: usize) -> Vec<Built> {
        let groups = n.div_ceil(block).max(1);
        let mut indeg = vec![0i64; n];
        for &d in dst {
            indeg[d as usize] += 1;
        }
        (0..groups)
            .map(|g| {
                let (lo, hi) = (g * block, ((g + 1) * block).min(n));
                let own = hi - lo;
                let mut slot_nodes: Vec<i64> = dst
                    .iter()
                    .zip(src)
                    .filter(|(&d, &s)| {
                        (lo..hi).contains(&(s as usize)) && !(lo..hi).contains(&(d as usize))
                    })
                    .map(|(&d, _)| d)
                    .collect();
                slot_nodes.sort();
                slot_nodes.dedup();
                let mut rows: Vec<Vec<i64>> = vec![Vec::new(); own];
                for (&s, &d) in src.iter().zip(dst) {
                    let s = s as usize;
                    if (lo..hi).contains(&s) {
                        let d = d as usize;
                        let t = if (lo..hi).contains(&d) {
                            (d - lo) as i64
                        } else {
                            own as i64 + slot_nodes.binary_search(&(d as i64)).unwrap() as i64
                        };
                        rows[s - lo].push(t);
                    }
                }
                let mut indptr = vec![0i64];
                let mut targets = Vec::new();
                for row in rows {
                    targets.extend(row);
                    indptr.push(targets.len() as i64);
                }
                let slot_group = slot_nodes.iter().map(|&v| v / block as i64).collect();
                Built {
                    indptr,
                    targets,
                    slot_nodes,
                    slot_group,
                    remaining: indeg[lo..hi].to_vec(),
                    level: vec![0; own],
                }
            })
            .collect()
    }

    /// Run rounds until no messages move; return levels (None if unlevelled) and rounds.
    fn run(n: usize, src: &[i64], dst: &[i64], block: usize) -> (Vec<Option<i64>>, usize) {
        let mut built = shards(n, src, dst, block);
        let groups = built.len();
        let mut inboxes: Vec<(Vec<i64>, Vec<i64>, Vec<i64>)> = vec![Default::default(); groups];
        let mut rounds = 0;
        loop {
            rounds += 1;
            let mut next: Vec<(Vec<i64>, Vec<i64>, Vec<i64>)> = vec![Default::default(); groups];
            let mut moved = 0;
            for g in 0..groups {
                let b = &mut built[g];
                let shard = Shard {
                    indptr: &b.indptr,
                    targets: &b.targets,
                    slot_group: &b.slot_group,
                    groups,
                };
                let (nodes, counts, levels) = &inboxes[g];
                let inbox = Inbox { nodes, counts, levels };
                let out =
                    peel(&shard, &mut b.remaining, &mut b.level, &inbox, rounds == 1).unwrap();
                for (d, to) in next.iter_mut().enumerate() {
                    for k in out.offsets[d]..out.offsets[d + 1] {
                        let global = b.slot_nodes[out.slots[k] as usize];
                        assert_eq!(global as usize / block, d);
                        to.0.push(global - (d * block) as i64);
                        to.1.push(out.counts[k]);
                        to.2.push(out.levels[k]);
                        moved += 1;
                    }
                }
            }
            inboxes = next;
            if moved == 0 {
                break;
            }
        }
        let mut level = Vec::new();
        for b in &built {
            for (r, l) in b.remaining.iter().zip(&b.level) {
                level.push((*r == 0).then_some(*l));
            }
        }
        (level, rounds)
    }

    #[test]
    fn random_dags_match_the_reference_for_every_shard_size() {
        let mut rng = SplitMix64::new(41);
        for _ in 0..60 {
            let n = 1 + rng.below(40) as usize;
            let m = rng.below(90) as usize;
            let (src, dst) = random_dag_edges(&mut rng, n, m);
            let expected = reference_levels(n, &src, &dst);
            for block in [1, 2, 3, 7, n] {
                assert_eq!(run(n, &src, &dst, block).0, expected, "n={n} block={block}");
            }
        }
    }

    #[test]
    fn cycles_and_their_descendants_stay_unlevelled() {
        // 0 -> 1 -> 2 -> 1 (cycle) -> 3; 4 -> 0; 5 isolated (from memory: a node
        // is levelled exactly when no cycle reaches it).
        let (src, dst) = (vec![0, 1, 2, 2, 4], vec![1, 2, 1, 3, 0]);
        let expected = vec![Some(1), None, None, None, Some(0), Some(0)];
        assert_eq!(reference_levels(6, &src, &dst), expected);
        for block in [1, 2, 4, 6] {
            assert_eq!(run(6, &src, &dst, block).0, expected, "block={block}");
        }
    }

    #[test]
    fn a_chain_takes_one_round_per_shard_crossing() {
        let n = 12;
        let src: Vec<i64> = (0..n as i64 - 1).collect();
        let dst: Vec<i64> = (1..n as i64).collect();
        let (level, rounds) = run(n, &src, &dst, 4);
        assert_eq!(level, (0..n as i64).map(Some).collect::<Vec<_>>());
        // Two crossings: the third shard's round sends nothing and ends the run.
        assert_eq!(rounds, 3);
        assert_eq!(run(n, &src, &dst, n).1, 1);
    }

    #[test]
    fn bad_messages_and_targets_are_errors() {
        let indptr = [0i64, 1, 1];
        let targets = [2i64];
        let slot_group = [1i64];
        let shard =
            Shard { indptr: &indptr, targets: &targets, slot_group: &slot_group, groups: 2 };
        let (mut remaining, mut level) = (vec![0i64, 1], vec![0i64, 0]);
        let bad = Inbox { nodes: &[5i64], counts: &[1], levels: &[1] };
        let e = peel(&shard, &mut remaining, &mut level, &bad, false).unwrap_err();
        assert!(matches!(e, Error::IndexOutOfRange { what: "inbox nodes", value: 5, .. }), "{e:?}");
        let too_many = Inbox { nodes: &[1i64], counts: &[2], levels: &[1] };
        let e = peel(&shard, &mut remaining, &mut level, &too_many, false).unwrap_err();
        assert!(matches!(e, Error::Internal { .. }), "{e:?}");
        let e = peel(&shard, &mut remaining[..1], &mut level, &too_many, false).unwrap_err();
        assert!(matches!(e, Error::LengthMismatch { what: "remaining", .. }), "{e:?}");

        let far = [3i64];
        let shard = Shard { targets: &far, ..shard };
        let none = Inbox { nodes: &[], counts: &[], levels: &[] };
        let e = peel(&shard, &mut remaining, &mut level, &none, true).unwrap_err();
        assert!(matches!(e, Error::IndexOutOfRange { what: "targets", value: 3, .. }), "{e:?}");

        let ok = Shard { targets: &targets, slot_group: &[2i64], ..shard };
        let e = peel(&ok, &mut remaining, &mut level, &none, true).unwrap_err();
        assert!(matches!(e, Error::IndexOutOfRange { what: "slot_group", .. }), "{e:?}");
    }

    #[test]
    fn the_outbox_is_grouped_and_aggregated() {
        // Own nodes 0, 1 (0 -> 1); outside slots 0 (group 2), 1 (group 0).
        // 0 -> slot 0, 1 -> slot 0, 1 -> slot 1, 0 -> slot 1.
        let indptr = [0i64, 3, 5];
        let targets = [1i64, 2, 3, 2, 3];
        let slot_group = [2i64, 0];
        let shard =
            Shard { indptr: &indptr, targets: &targets, slot_group: &slot_group, groups: 3 };
        let (mut remaining, mut level) = (vec![0i64, 1], vec![0i64, 0]);
        let none = Inbox { nodes: &[], counts: &[], levels: &[] };
        let out = peel(&shard, &mut remaining, &mut level, &none, true).unwrap();
        assert_eq!(out.peeled, 2);
        assert_eq!(level, vec![0, 1]);
        assert_eq!(out.offsets, vec![0, 1, 1, 2]);
        assert_eq!(out.slots, vec![1, 0]);
        assert_eq!(out.counts, vec![2, 2]);
        assert_eq!(out.levels, vec![2, 2]);
    }
}
