//! List scheduling of a task DAG on identical workers (Graham, Bell System
//! Technical Journal 45, 1966; SIAM J. Appl. Math. 17(2), 1969).
//!
//! Every node is a task with a duration; an edge `u -> v` means `v` may
//! start only when `u` has finished. The simulation is event driven:
//!
//! * at time 0 the tasks of in-degree 0 enter the ready set in ascending id;
//! * whenever workers are free and tasks are ready, the policy picks the next
//!   task and the lowest-numbered free worker starts it at once (a greedy
//!   schedule: no worker idles while a task is ready);
//! * the next event time is the earliest finish; every task finishing then
//!   completes, in ascending worker number, and releases its successors in
//!   stored row order (each enters the ready set when its last predecessor
//!   completes) before any new task starts.
//!
//! The policies are those of [`crate::kahn`] (queue, stack, priority by a
//! rank with ties to the smaller id, seeded random) plus the critical-path
//! priority: the largest bottom level first, where the bottom level of a task
//! is its duration plus the largest bottom level among its successors (the
//! duration-weighted longest path from the task to the end, itself
//! included). The bottom levels come from the sweep engine's backward pass
//! ([`bottom_levels`]); every ready set is one of [`crate::ready`].
//!
//! With one worker the start order is exactly Kahn's order under the same
//! policy. Cost: O(V + E) plus O(V log p) for the worker pool, and
//! O(V log V) for the rank-based policies.

use std::cmp::Reverse;
use std::collections::BinaryHeap;
use std::fmt::Debug;

use crate::interrupt::Ticker;
use crate::kahn::{kahn, Outcome, Tie};
use crate::ready::{critical, with_ready, ReadySet, WithReady};
use crate::sweep::{fifo_sweep, prefetch, settle_backward, Disjoint};
use crate::{alloc, Csr, Error, Idx};

/// A task duration and the time it induces: `i64` or `f64`.
pub trait Duration: Copy + PartialOrd + Send + Sync + Debug + 'static {
    const ZERO: Self;
    const ONE: Self;
    /// Finite and not negative.
    fn is_valid(self) -> bool;
    /// `None` when the sum leaves the representable (finite) range.
    fn checked_sum(self, other: Self) -> Option<Self>;
    /// An unsigned key whose order is the order of valid values, equal keys
    /// for equal values.
    fn sort_key(self) -> u64;
    fn show(self) -> String;
    fn to_f64(self) -> f64;
}

impl Duration for i64 {
    const ZERO: Self = 0;
    const ONE: Self = 1;
    fn is_valid(self) -> bool {
        self >= 0
    }
    fn checked_sum(self, other: Self) -> Option<Self> {
        self.checked_add(other)
    }
    #[inline]
    fn sort_key(self) -> u64 {
        self as u64
    }
    fn show(self) -> String {
        self.to_string()
    }
    fn to_f64(self) -> f64 {
        self as f64
    }
}

impl Duration for f64 {
    const ZERO: Self = 0.0;
    const ONE: Self = 1.0;
    fn is_valid(self) -> bool {
        self.is_finite() && self >= 0.0
    }
    fn checked_sum(self, other: Self) -> Option<Self> {
        let sum = self + other;
        sum.is_finite().then_some(sum)
    }
    #[inline]
    fn sort_key(self) -> u64 {
        // For non-negative floats the bit pattern orders like the value;
        // adding 0.0 turns -0.0 into 0.0 so the two share a key.
        (self + 0.0).to_bits()
    }
    fn show(self) -> String {
        format!("{self:?}")
    }
    fn to_f64(self) -> f64 {
        self
    }
}

/// Which ready task starts next: any tie-break of Kahn's order, or the
/// critical path first.
#[derive(Debug, Clone, Copy)]
pub enum Policy<'a> {
    /// As in Kahn's order (queue, stack, priority by key with ties to the
    /// smaller id, seeded random); with one worker the start order is
    /// exactly Kahn's order under the same tie.
    Tie(Tie<'a>),
    /// The largest bottom level, ties to the smaller id.
    CriticalPath,
}

/// A finished list schedule.
#[derive(Debug, Clone, PartialEq)]
pub struct Schedule<I, T> {
    /// Start time of each task, by node id.
    pub start: Vec<T>,
    /// Worker (0-based) that runs each task, by node id.
    pub worker: Vec<i64>,
    /// The tasks in the order they started (ties in time: in start order).
    pub order: Vec<I>,
    /// Latest finish time.
    pub makespan: T,
    /// Longest duration-weighted path (the makespan with unlimited workers).
    pub critical_path: T,
    /// Sum of all durations.
    pub total_work: T,
}

/// A schedule, or the Kahn outcome naming a cycle that makes one impossible.
#[derive(Debug, Clone, PartialEq)]
pub enum Scheduled<I, T> {
    Done(Schedule<I, T>),
    Cyclic(Outcome<I>),
}

/// Check the durations and return their sum.
fn total_work<T: Duration>(durations: &[T], n: usize) -> Result<T, Error> {
    if durations.len() != n {
        return Err(Error::LengthMismatch { what: "duration", expected: n, got: durations.len() });
    }
    let mut total = T::ZERO;
    let mut ticker = Ticker::new();
    for (node, &d) in durations.iter().enumerate() {
        ticker.tick()?;
        if !d.is_valid() {
            return Err(Error::InvalidDuration { node, value: d.show() });
        }
        total = total.checked_sum(d).ok_or(Error::DurationOverflow { total_of: node + 1 })?;
    }
    Ok(total)
}

/// Bottom level of every task (its duration plus the largest bottom level of
/// its successors), or the Kahn outcome naming a cycle.
///
/// The sweep engine's order and backward pass; exposed for the
/// critical-path order of policy comparisons; O(V + E).
pub fn bottom_levels<I: Idx, P: Idx, T: Duration>(
    csr: &Csr<'_, I, P>,
    durations: &[T],
) -> Result<Result<Vec<T>, Outcome<I>>, Error> {
    total_work(durations, csr.n())?;
    let levels = match fifo_sweep(csr, (), |_, _| (), |_, _, _, _| {})? {
        Ok((levels, _)) => levels,
        Err(cyclic) => return Ok(Err(cyclic)),
    };
    let mut level = alloc::filled("bottom levels", csr.n(), T::ZERO)?;
    let cells = Disjoint::new(&mut level);
    settle_backward(csr, &levels, 1, |u| {
        let mut below = T::ZERO;
        for &v in csr.checked_row(u)? {
            // SAFETY: (settle_backward's contract) successors are settled and
            // no worker writes them now; `get` checks the index.
            let candidate = unsafe { cells.get(v.to_usize()) }?;
            if candidate > below {
                below = candidate;
            }
        }
        // Sums stay below the total work, which was checked above.
        // SAFETY: (settle_backward's contract) only this call writes u.
        unsafe { cells.set(u, durations[u].checked_sum(below).unwrap_or(below)) }
    })?;
    Ok(Ok(level))
}

/// List-schedule the tasks of `csr` with `durations` on `workers` workers.
pub fn list_schedule<I: Idx, P: Idx, T: Duration>(
    csr: &Csr<'_, I, P>,
    durations: &[T],
    workers: usize,
    policy: &Policy<'_>,
) -> Result<Scheduled<I, T>, Error> {
    let n = csr.n();
    let total = total_work(durations, n)?;
    if workers == 0 {
        return Err(Error::NoWorkers);
    }
    let simulate = Simulate { csr, durations, workers, total };
    match policy {
        Policy::Tie(tie) => with_ready(tie, n, n, 0, simulate)?,
        Policy::CriticalPath => {
            let level = match bottom_levels(csr, durations)? {
                Ok(level) => level,
                Err(cyclic) => return Ok(Scheduled::Cyclic(cyclic)),
            };
            // Complemented so that the smallest key is the largest level.
            let mut complemented = alloc::with_capacity("critical ranks", n)?;
            let mut ticker = Ticker::new();
            for part in level.chunks(crate::interrupt::STRIDE as usize) {
                ticker.tick_by(part.len())?;
                complemented.extend(part.iter().map(|l| !l.sort_key()));
            }
            simulate.run(critical(&complemented))
        }
    }
}

/// The event-driven simulation, for any ready set.
struct Simulate<'a, 'g, I: Idx, P: Idx, T> {
    csr: &'a Csr<'g, I, P>,
    durations: &'a [T],
    workers: usize,
    total: T,
}

impl<I: Idx, P: Idx, T: Duration> WithReady for Simulate<'_, '_, I, P, T> {
    type Output = Result<Scheduled<I, T>, Error>;

    fn run<R: ReadySet>(self, mut ready: R) -> Result<Scheduled<I, T>, Error> {
        let Simulate { csr, durations, workers, total } = self;
        let n = csr.n();
        let changed = Error::InputChanged { what: "indices" };
        // Per task: earliest start and predecessors still running, side by
        // side so an edge costs one random memory access, not two.
        let mut ticker = Ticker::new();
        let mut waiting: Vec<(T, u64)> = alloc::with_capacity("schedule", n)?;
        for part in csr.in_degrees()?.chunks(crate::interrupt::STRIDE as usize) {
            ticker.tick_by(part.len())?;
            waiting.extend(part.iter().map(|d| (T::ZERO, d.to_usize() as u64)));
        }
        for (v, &(_, left)) in waiting.iter().enumerate() {
            ticker.tick()?;
            if left == 0 {
                ready.push(v);
            }
        }
        let (indptr, indices) = (csr.indptr(), csr.indices());

        // Workers beyond the task count would never be used.
        let slots = workers.min(n);
        let mut free: BinaryHeap<Reverse<usize>> = (0..slots).map(Reverse).collect();
        // (finish time key, worker, task) of the running tasks.
        let mut running: BinaryHeap<Reverse<(u64, usize, usize)>> =
            BinaryHeap::with_capacity(slots);
        let mut start = alloc::filled("start times", n, T::ZERO)?;
        let mut worker = alloc::filled("workers", n, -1i64)?;
        let mut order: Vec<I> = alloc::with_capacity("order", n)?;
        let mut now = T::ZERO;
        let mut critical_path = T::ZERO;
        // Every sum below is at most the total work, checked above.
        let add = |a: T, b: T| a.checked_sum(b).unwrap_or(a);

        loop {
            while let Some(&Reverse(w)) = free.peek() {
                let Some(t) = ready.pop() else { break };
                if order.len() == n {
                    return Err(changed);
                }
                free.pop();
                // The row is read when the task finishes, a few events later.
                if let Some(row_start) = indptr.get(t) {
                    prefetch(indices.as_ptr().wrapping_add(row_start.to_usize()));
                }
                start[t] = now;
                worker[t] = w as i64;
                order.push(I::from_usize(t));
                running.push(Reverse((add(now, durations[t]).sort_key(), w, t)));
            }
            let Some(Reverse((finish_key, first_worker, first_task))) = running.pop() else {
                break;
            };
            now = add(start[first_task], durations[first_task]);
            let mut done = Some((first_worker, first_task));
            while let Some((w, task)) = done {
                free.push(Reverse(w));
                let reach = add(waiting[task].0, durations[task]);
                if reach > critical_path {
                    critical_path = reach;
                }
                let row = csr.checked_row(task)?;
                ticker.tick_by(row.len() + 1)?;
                for &v in row {
                    let v = v.to_usize();
                    let Some((earliest, left)) = waiting.get_mut(v) else {
                        return Err(changed);
                    };
                    if reach > *earliest {
                        *earliest = reach;
                    }
                    *left = left.wrapping_sub(1);
                    if *left == 0 {
                        prefetch(indptr.as_ptr().wrapping_add(v));
                        ready.push(v);
                    }
                }
                done = match running.peek() {
                    Some(&Reverse((key, w, task))) if key == finish_key => {
                        running.pop();
                        Some((w, task))
                    }
                    _ => None,
                };
            }
        }

        if order.len() < n {
            return Ok(Scheduled::Cyclic(kahn(csr, &Tie::Queue)?));
        }
        Ok(Scheduled::Done(Schedule {
            start,
            worker,
            order,
            makespan: now,
            critical_path,
            total_work: total,
        }))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::edges::edges_to_csr;
    use crate::kahn::{Key, KeyValues};
    use crate::rng::SplitMix64;

    fn graph(src: &[i64], dst: &[i64], n: usize) -> (Vec<i64>, Vec<i64>) {
        let g = edges_to_csr(src, dst, n, false).unwrap();
        (g.indptr, g.indices)
    }

    fn run<T: Duration>(
        indptr: &[i64],
        indices: &[i64],
        durations: &[T],
        workers: usize,
        policy: Policy<'_>,
    ) -> Schedule<i64, T> {
        let g = Csr::new(indptr, indices).unwrap();
        match list_schedule(&g, durations, workers, &policy).unwrap() {
            Scheduled::Done(s) => s,
            Scheduled::Cyclic(_) => panic!("unexpected cycle"),
        }
    }

    /// Graham's timing anomaly, 1969 (values from memory): tasks T1..T9 with
    /// durations 3, 2, 2, 2, 4, 4, 4, 4, 9, edges T1 -> T9 and T4 -> T5..T8,
    /// list (T1, ..., T9) on 3 processors: makespan 12. Shorter tasks (each
    /// minus 1) give 13, a fourth processor gives 15, and dropping the edges
    /// T4 -> T5 and T4 -> T6 gives 16.
    #[test]
    fn graham_anomaly() {
        let src = [0i64, 3, 3, 3, 3];
        let dst = [8i64, 4, 5, 6, 7];
        let (indptr, indices) = graph(&src, &dst, 9);
        let durations = [3i64, 2, 2, 2, 4, 4, 4, 4, 9];
        let list = Policy::Tie(Tie::Priority(Key::default()));
        assert_eq!(run(&indptr, &indices, &durations, 3, list).makespan, 12);
        let shorter: Vec<i64> = durations.iter().map(|d| d - 1).collect();
        assert_eq!(run(&indptr, &indices, &shorter, 3, list).makespan, 13);
        assert_eq!(run(&indptr, &indices, &durations, 4, list).makespan, 15);
        let (indptr, indices) = graph(&[0, 3, 3], &[8, 6, 7], 9);
        assert_eq!(run(&indptr, &indices, &durations, 3, list).makespan, 16);
    }

    fn random_dag(rng: &mut SplitMix64) -> (Vec<i64>, Vec<i64>, usize) {
        let (indptr, indices) = crate::testing::random_dag(rng, 16, 40);
        let n = indptr.len() - 1;
        (indptr, indices, n)
    }

    /// Longest path by plain relaxation over all edges, n rounds.
    fn longest_path(indptr: &[i64], indices: &[i64], durations: &[i64]) -> i64 {
        let n = durations.len();
        let mut finish: Vec<i64> = durations.to_vec();
        for _ in 0..n {
            for u in 0..n {
                for &v in &indices[indptr[u] as usize..indptr[u + 1] as usize] {
                    finish[v as usize] = finish[v as usize].max(finish[u] + durations[v as usize]);
                }
            }
        }
        finish.into_iter().max().unwrap_or(0)
    }

    #[test]
    fn schedules_are_feasible_greedy_and_within_grahams_bound() {
        let mut rng = SplitMix64::new(21);
        for round in 0..300 {
            let (indptr, indices, n) = random_dag(&mut rng);
            let durations: Vec<i64> = (0..n).map(|_| rng.below(5) as i64).collect();
            let workers = 1 + rng.below(4) as usize;
            let policies = [
                Policy::Tie(Tie::Queue),
                Policy::Tie(Tie::Stack),
                Policy::Tie(Tie::Priority(Key::default())),
                Policy::Tie(Tie::Random { seed: round }),
                Policy::CriticalPath,
            ];
            for policy in policies {
                let s = run(&indptr, &indices, &durations, workers, policy);
                let finish = |v: usize| s.start[v] + durations[v];
                for u in 0..n {
                    for &v in &indices[indptr[u] as usize..indptr[u + 1] as usize] {
                        assert!(s.start[v as usize] >= finish(u), "precedence {u} -> {v}");
                    }
                    assert!((0..workers as i64).contains(&s.worker[u]));
                }
                for a in 0..n {
                    for b in a + 1..n {
                        let overlap = s.start[a] < finish(b) && s.start[b] < finish(a);
                        assert!(!(s.worker[a] == s.worker[b] && overlap), "{a} and {b} overlap");
                    }
                }
                let cp = longest_path(&indptr, &indices, &durations);
                assert_eq!(s.critical_path, cp);
                let total: i64 = durations.iter().sum();
                assert_eq!(s.total_work, total);
                assert_eq!(s.makespan, (0..n).map(finish).max().unwrap_or(0));
                // Graham's bound, in integers: makespan <= total / p + (1 - 1/p) cp.
                let p = workers as i64;
                assert!(p * s.makespan <= total + (p - 1) * cp, "Graham's bound");
                assert!(s.makespan >= cp && p * s.makespan >= total);
            }
        }
    }

    #[test]
    fn one_worker_replays_kahns_order() {
        let mut rng = SplitMix64::new(8);
        for round in 0..200 {
            let (indptr, indices, n) = random_dag(&mut rng);
            let g = Csr::new(&indptr, &indices).unwrap();
            let unit = vec![1i64; n];
            let key: Vec<u64> = (0..n).map(|_| rng.below(4)).collect();
            let ties = [
                Tie::Queue,
                Tie::Stack,
                Tie::Priority(Key::default()),
                Tie::Priority(Key { values: Some(KeyValues::U64(&key)), descending: true }),
                Tie::Random { seed: round },
            ];
            for tie in ties {
                let s = run(&indptr, &indices, &unit, 1, Policy::Tie(tie));
                assert_eq!(s.order, kahn(&g, &tie).unwrap().order);
                assert_eq!(s.makespan, n as i64);
            }
        }
    }

    #[test]
    fn critical_path_first_on_a_fork() {
        // 0 -> 1 -> 2 -> 3 and a lone task 4; with two workers and unit
        // durations the chain must start first for makespan 4 (common
        // practice: longest remaining path first is optimal on such forks).
        let (indptr, indices) = graph(&[0, 1, 2], &[1, 2, 3], 5);
        let unit = [1i64; 5];
        let s = run(&indptr, &indices, &unit, 1, Policy::CriticalPath);
        assert_eq!(s.order, vec![0, 1, 2, 3, 4]);
        let g = Csr::new(&indptr, &indices).unwrap();
        let levels = bottom_levels(&g, &unit).unwrap().unwrap();
        assert_eq!(levels, vec![4, 3, 2, 1, 1]);
        let floats = [0.5, 0.25, 0.0, -0.0, 2.0];
        let levels = bottom_levels(&g, &floats).unwrap().unwrap();
        assert_eq!(levels, vec![0.75, 0.25, 0.0, 0.0, 2.0]);
        let s = run(&indptr, &indices, &floats, 2, Policy::CriticalPath);
        assert_eq!(s.makespan, 2.0);
        assert_eq!(s.start, vec![0.0, 0.5, 0.75, 0.75, 0.0]);
    }

    #[test]
    fn bad_input_is_an_error_and_cycles_are_reported() {
        let (indptr, indices) = graph(&[0], &[1], 2);
        let g = Csr::new(&indptr, &indices).unwrap();
        let err = list_schedule(&g, &[1.0, f64::NAN], 2, &Policy::Tie(Tie::Queue)).unwrap_err();
        assert!(err.to_string().contains("duration[1] = NaN"), "{err}");
        let err = list_schedule(&g, &[-3i64, 1], 2, &Policy::Tie(Tie::Queue)).unwrap_err();
        assert!(err.to_string().contains("duration[0] = -3"), "{err}");
        assert_eq!(
            list_schedule(&g, &[1i64, 1], 0, &Policy::Tie(Tie::Queue)).unwrap_err(),
            Error::NoWorkers
        );
        assert_eq!(
            list_schedule(&g, &[i64::MAX, 1], 1, &Policy::Tie(Tie::Queue)).unwrap_err(),
            Error::DurationOverflow { total_of: 2 }
        );
        assert!(matches!(
            list_schedule(&g, &[1i64], 1, &Policy::Tie(Tie::Queue)),
            Err(Error::LengthMismatch { what: "duration", .. })
        ));
        let (indptr, indices) = graph(&[0, 1, 1], &[1, 2, 1], 3);
        let g = Csr::new(&indptr, &indices).unwrap();
        for policy in [Policy::Tie(Tie::Queue), Policy::CriticalPath] {
            match list_schedule(&g, &[1i64; 3], 2, &policy).unwrap() {
                Scheduled::Cyclic(outcome) => assert_eq!(outcome.cycle, vec![1]),
                Scheduled::Done(_) => panic!("a self-loop is a cycle"),
            }
        }
    }
}
