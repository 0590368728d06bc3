//! The seed promise, pinned: the exact orders that tie="random" (and the
//! stack and priority policies) produced before the ready sets were merged
//! into one module. Same input, same seed, same order, across releases.

use crate::condense::condensed_order;
use crate::kahn::kahn;
use crate::schedule::{list_schedule, Policy, Scheduled};
use crate::{Csr, Key, KeyValues, Tie};

/// CLRS's dressing DAG (see `kahn.rs`), a random DAG and a graph with cycles.
const DRESS: ([i64; 10], [i64; 9]) = ([0, 2, 4, 5, 7, 8, 8, 9, 9, 9], [1, 7, 2, 7, 5, 2, 4, 5, 7]);
const DAG_INDPTR: [i64; 25] =
    [0, 1, 1, 1, 1, 2, 4, 5, 5, 5, 6, 6, 6, 8, 8, 9, 9, 9, 10, 10, 10, 10, 10, 10, 11];
const DAG_INDICES: [i64; 11] = [5, 8, 2, 12, 17, 15, 22, 18, 17, 18, 18];
const CYCLIC: ([i64; 9], [i64; 15]) =
    ([0, 1, 5, 8, 10, 11, 13, 15, 15], [4, 5, 7, 6, 2, 6, 1, 4, 2, 4, 0, 0, 6, 3, 4]);

/// Seed, then its orders: Kahn on the dressing DAG and on the random DAG,
/// the condensed order of the cyclic graph, a 3-worker unit schedule.
type Pin = (u64, [i64; 9], [i64; 24], [i64; 8], [i64; 24]);

#[test]
fn seeded_orders_are_pinned() {
    let dress = Csr::new(&DRESS.0, &DRESS.1).unwrap();
    let dag = Csr::new(&DAG_INDPTR, &DAG_INDICES).unwrap();
    let cyclic = Csr::new(&CYCLIC.0, &CYCLIC.1).unwrap();
    let random = |g: &Csr<'_, i64>, seed| kahn(g, &Tie::Random { seed }).unwrap().order;
    let scheduled = |seed| {
        let unit = [1i64; 24];
        match list_schedule(&dag, &unit, 3, &Policy::Tie(Tie::Random { seed })).unwrap() {
            Scheduled::Done(s) => s.order,
            Scheduled::Cyclic(_) => unreachable!("a DAG"),
        }
    };
    let pinned: [Pin; 4] = [
        (
            0,
            [8, 3, 0, 1, 4, 2, 6, 7, 5],
            [21, 9, 0, 5, 1, 6, 3, 14, 4, 8, 2, 11, 7, 16, 13, 17, 20, 23, 15, 10, 12, 22, 18, 19],
            [1, 2, 3, 5, 6, 7, 0, 4],
            [21, 9, 0, 5, 1, 6, 3, 14, 12, 22, 19, 11, 7, 17, 13, 4, 16, 23, 15, 8, 2, 18, 10, 20],
        ),
        (
            1,
            [6, 8, 3, 0, 4, 1, 7, 2, 5],
            [13, 16, 20, 7, 19, 11, 14, 6, 3, 9, 4, 23, 15, 10, 17, 0, 8, 5, 2, 12, 21, 18, 22, 1],
            [1, 2, 3, 5, 6, 0, 4, 7],
            [13, 16, 20, 7, 19, 11, 14, 6, 3, 9, 10, 4, 21, 8, 17, 0, 1, 23, 5, 15, 2, 12, 22, 18],
        ),
        (
            7,
            [3, 0, 1, 6, 8, 4, 2, 7, 5],
            [9, 0, 21, 11, 23, 4, 20, 19, 1, 6, 15, 10, 8, 7, 13, 3, 16, 5, 2, 12, 22, 14, 17, 18],
            [1, 2, 3, 5, 6, 7, 0, 4],
            [9, 0, 19, 11, 23, 4, 15, 20, 1, 6, 21, 10, 8, 7, 13, 3, 16, 5, 2, 12, 14, 22, 17, 18],
        ),
        (
            12345,
            [0, 8, 1, 6, 7, 3, 2, 4, 5],
            [3, 4, 1, 23, 9, 6, 8, 15, 14, 11, 16, 21, 7, 19, 13, 17, 20, 10, 0, 5, 2, 12, 22, 18],
            [1, 2, 3, 5, 6, 7, 0, 4],
            [3, 4, 1, 23, 9, 6, 20, 16, 14, 11, 15, 21, 7, 19, 13, 17, 8, 10, 0, 5, 2, 12, 22, 18],
        ),
    ];
    for (seed, on_dress, on_dag, condensed, schedule) in pinned {
        assert_eq!(random(&dress, seed), on_dress, "seed {seed}");
        assert_eq!(random(&dag, seed), on_dag, "seed {seed}");
        assert_eq!(condensed_order(&cyclic, &Tie::Random { seed }).unwrap(), condensed);
        assert_eq!(scheduled(seed), schedule, "seed {seed}");
    }
    let key: Vec<i64> = (0..24).map(|v| (v * 7) % 5).collect();
    let by_key = Tie::Priority(Key { values: Some(KeyValues::I64(&key)), descending: true });
    assert_eq!(
        kahn(&dag, &Tie::Stack).unwrap().order,
        [23, 21, 20, 19, 16, 14, 13, 11, 10, 9, 15, 7, 6, 17, 4, 8, 3, 1, 0, 5, 12, 18, 22, 2]
    );
    assert_eq!(
        kahn(&dag, &by_key).unwrap().order,
        [7, 4, 9, 14, 19, 1, 6, 17, 11, 16, 21, 3, 8, 13, 23, 0, 5, 2, 12, 22, 18, 10, 15, 20]
    );
    assert_eq!(condensed_order(&cyclic, &Tie::Stack).unwrap(), [1, 2, 3, 5, 6, 0, 4, 7]);
    let by_id_desc = Tie::Priority(Key { values: None, descending: true });
    assert_eq!(condensed_order(&cyclic, &by_id_desc).unwrap(), [6, 5, 3, 2, 1, 7, 4, 0]);
}
