//! The ready set of a DAG handed to an executor, one batch at a time.
//!
//! A [`Frontier`] owns the state an executor needs: each task's remaining
//! in-degree, its [`State`] (waiting, ready, running, done, failed,
//! skipped) and the ready set of [`crate::ready`] under the chosen policy.
//! [`Frontier::take`] hands out up to `k` ready tasks in policy order and
//! marks them running; [`Frontier::finish`] marks running tasks done and
//! releases their successors (each enters the ready set when its last
//! predecessor is done, in stored row order); [`Frontier::fail`] marks
//! running tasks failed and every task reachable from them skipped (never
//! handed out).
//!
//! Taken one at a time by one worker, the tasks come out in exactly the
//! order [`crate::kahn`] emits under the same tie: the sources enter the
//! ready set in ascending id and successors in row order, as there.
//!
//! Misuse (finishing a task that is not running, listing a task twice) is
//! reported as a [`Misuse`] naming the task, and leaves the state as it was:
//! a batch is checked whole before any task in it changes. The structure is
//! not synchronised; the binding puts it behind one lock.

use std::fmt;

use crate::interrupt::Ticker;
use crate::kahn::{kahn, Outcome};
use crate::ready::{IdHeap, Key, Queue, RandomPick, ReadySet, Stack, Tie};
use crate::schedule::{bottom_levels, Duration};
use crate::{alloc, Csr, Error, Idx};

/// Where a task stands.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[repr(u8)]
pub enum State {
    /// Some predecessor is not done yet.
    Waiting,
    /// Every predecessor is done; in the ready set.
    Ready,
    /// Handed out by [`Frontier::take`].
    Running,
    /// Reported finished.
    Done,
    /// Reported failed.
    Failed,
    /// A descendant of a failed task: never handed out.
    Skipped,
    /// Internal: named earlier in the batch being checked.
    Listed,
}

impl State {
    /// The state's plain name.
    pub fn name(self) -> &'static str {
        match self {
            State::Waiting => "waiting",
            State::Ready => "ready",
            State::Running => "running",
            State::Done => "done",
            State::Failed => "failed",
            State::Skipped => "skipped",
            State::Listed => "listed twice",
        }
    }
}

/// What a refused batch tried to do.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Action {
    Finish,
    Fail,
}

impl Action {
    pub fn name(self) -> &'static str {
        match self {
            Action::Finish => "finish",
            Action::Fail => "fail",
        }
    }
}

/// A refused batch: `task` (at `position` in the batch) is not running; it
/// is in `state` ([`State::Listed`] when the batch names it twice).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Misuse {
    pub action: Action,
    pub task: usize,
    pub position: usize,
    pub state: State,
}

impl fmt::Display for Misuse {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let why = match self.state {
            State::Waiting | State::Ready => "it was never taken".to_string(),
            State::Listed => "the batch lists it twice".to_string(),
            other => format!("it is already {}", other.name()),
        };
        write!(f, "cannot {} task {}: {why}", self.action.name(), self.task)
    }
}

/// The ready set of a policy, owning everything it needs.
enum Ready {
    Queue(Queue),
    Stack(Stack),
    Random(RandomPick),
    /// Smallest id first.
    Ids(IdHeap),
    /// Smallest rank first: the heap holds ranks, `node_at` maps them back.
    Ranked {
        heap: IdHeap,
        rank_of: Vec<usize>,
        node_at: Vec<usize>,
    },
}

impl Ready {
    /// The ready set of `tie` on `n` nodes (keys checked against `n`).
    fn of(tie: &Tie<'_>, n: usize) -> Result<Self, Error> {
        Ok(match *tie {
            Tie::Queue => Ready::Queue(Queue::default()),
            Tie::Stack => Ready::Stack(Stack::default()),
            Tie::Random { seed } => Ready::Random(RandomPick::new(seed)),
            Tie::Priority(Key { values: None, descending }) => Ready::Ids(IdHeap::new(descending)),
            Tie::Priority(Key { values: Some(values), descending }) => {
                values.check(n)?;
                let flip = if descending { !0u64 } else { 0 };
                // Ties go to the smaller id, as in every priority policy.
                let mut node_at = alloc::with_capacity("frontier ranks", n)?;
                node_at.extend(0..n);
                crate::interrupt::sort_by_distinct_key(&mut node_at, |&v| {
                    (values.rank(v) ^ flip, v)
                })?;
                let mut rank_of = alloc::filled("frontier ranks", n, 0usize)?;
                let mut ticker = Ticker::new();
                for (rank, &v) in node_at.iter().enumerate() {
                    ticker.tick()?;
                    rank_of[v] = rank;
                }
                Ready::Ranked { heap: IdHeap::new(false), rank_of, node_at }
            }
        })
    }

    #[inline]
    fn push(&mut self, task: usize) {
        match self {
            Ready::Queue(r) => r.push(task),
            Ready::Stack(r) => r.push(task),
            Ready::Random(r) => r.push(task),
            Ready::Ids(r) => r.push(task),
            Ready::Ranked { heap, rank_of, .. } => heap.push(rank_of[task]),
        }
    }

    #[inline]
    fn pop(&mut self) -> Option<usize> {
        match self {
            Ready::Queue(r) => r.pop(),
            Ready::Stack(r) => r.pop(),
            Ready::Random(r) => r.pop(),
            Ready::Ids(r) => r.pop(),
            Ready::Ranked { heap, node_at, .. } => heap.pop().and_then(|r| node_at.get(r).copied()),
        }
    }
}

/// The remaining in-degree of a skipped task: no count of finished
/// predecessors ever brings it to zero (a task has at most `m` of them).
const SKIPPED: usize = usize::MAX / 2;

/// The executor's view of a DAG: see the module documentation.
pub struct Frontier {
    /// Row `u` of the graph is `targets[offsets[u]..offsets[u + 1]]`
    /// (task ids fit `u32`: half the memory traffic of `usize`).
    offsets: Vec<usize>,
    targets: Vec<u32>,
    /// Predecessors not yet done, per task; [`SKIPPED`] for a skipped task,
    /// so that releasing a successor reads one slot, never its state.
    left: Vec<usize>,
    state: Vec<State>,
    ready: Ready,
    ready_count: usize,
    running: usize,
    done: Vec<usize>,
    failed: Vec<usize>,
    skipped: Vec<usize>,
}

impl fmt::Debug for Frontier {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.debug_struct("Frontier")
            .field("n", &self.n())
            .field("ready", &self.ready_count)
            .field("running", &self.running)
            .field("done", &self.done.len())
            .finish()
    }
}

impl Frontier {
    /// The frontier of `csr` under `tie`, or the Kahn outcome naming a cycle.
    /// O(V + E) (a copy of the graph), plus O(V log V) for a keyed priority.
    pub fn new<I: Idx, P: Idx>(
        csr: &Csr<'_, I, P>,
        tie: &Tie<'_>,
    ) -> Result<Result<Self, Outcome<I>>, Error> {
        let frontier = Self::build(csr, Ready::of(tie, csr.n())?)?;
        frontier.or_cycle(csr)
    }

    /// The frontier of `csr` handing out the largest bottom level first
    /// (duration plus the longest duration-weighted path below, see
    /// [`bottom_levels`]), ties to the smaller id.
    pub fn critical<I: Idx, P: Idx, T: Duration>(
        csr: &Csr<'_, I, P>,
        durations: &[T],
    ) -> Result<Result<Self, Outcome<I>>, Error> {
        let level = match bottom_levels(csr, durations)? {
            Ok(level) => level,
            Err(cyclic) => return Ok(Err(cyclic)),
        };
        let mut complemented = alloc::with_capacity("critical ranks", csr.n())?;
        complemented.extend(level.iter().map(|l| !l.sort_key()));
        let key = Key { values: Some(crate::KeyValues::U64(&complemented)), descending: false };
        let frontier = Self::build(csr, Ready::of(&Tie::Priority(key), csr.n())?)?;
        frontier.or_cycle(csr)
    }

    /// `self` if its copy of the graph is acyclic, else the Kahn outcome of
    /// `csr` naming a cycle.
    fn or_cycle<I: Idx, P: Idx>(
        self,
        csr: &Csr<'_, I, P>,
    ) -> Result<Result<Self, Outcome<I>>, Error> {
        if self.acyclic()? {
            return Ok(Ok(self));
        }
        let outcome = kahn(csr, &Tie::Queue)?;
        if outcome.is_complete() {
            return Err(Error::InputChanged { what: "indices" });
        }
        Ok(Err(outcome))
    }

    /// Kahn's loop (LIFO, the cheapest) over the copy: whether it reaches
    /// every task.
    fn acyclic(&self) -> Result<bool, Error> {
        let n = self.n();
        let mut count = alloc::with_capacity("frontier check", n)?;
        count.extend_from_slice(&self.left);
        let mut stack: Vec<u32> = alloc::with_capacity("frontier check", n)?;
        stack.extend((0..n).filter(|&v| count[v] == 0).map(|v| v as u32));
        let mut reached = 0usize;
        let mut ticker = Ticker::new();
        while let Some(u) = stack.pop() {
            let u = u as usize;
            reached += 1;
            let (start, end) = (self.offsets[u], self.offsets[u + 1]);
            ticker.tick_by(end - start + 1)?;
            for &v in &self.targets[start..end] {
                let v = v as usize;
                count[v] -= 1;
                if count[v] == 0 {
                    stack.push(v as u32);
                }
            }
        }
        Ok(reached == n)
    }

    fn build<I: Idx, P: Idx>(csr: &Csr<'_, I, P>, ready: Ready) -> Result<Self, Error> {
        let n = csr.n();
        if n > u32::MAX as usize {
            return Err(Error::TooLarge { what: "tasks", count: n, max: u32::MAX as usize });
        }
        let mut offsets = alloc::with_capacity("frontier rows", n + 1)?;
        offsets.extend(csr.indptr().iter().map(|p| p.to_usize()));
        // The copy is what the frontier reads from now on: check it, not
        // the caller's arrays (which another thread may be changing).
        if offsets.len() != n + 1
            || offsets.windows(2).any(|w| w[0] > w[1])
            || offsets.last() != Some(&csr.m())
        {
            return Err(Error::InputChanged { what: "indptr" });
        }
        let mut targets: Vec<u32> = alloc::with_capacity("frontier edges", csr.m())?;
        let mut left = alloc::filled("frontier in-degrees", n, 0usize)?;
        for &v in csr.indices() {
            match left.get_mut(v.to_usize()) {
                Some(count) => *count += 1,
                None => {
                    csr.check_indices()?; // names the offending entry
                    return Err(Error::InputChanged { what: "indices" });
                }
            }
            targets.push(v.to_usize() as u32);
        }
        let mut frontier = Frontier {
            offsets,
            targets,
            state: alloc::filled("frontier states", n, State::Waiting)?,
            left,
            ready,
            ready_count: 0,
            running: 0,
            done: alloc::with_capacity("finished tasks", n)?,
            failed: Vec::new(),
            skipped: Vec::new(),
        };
        for v in 0..n {
            if frontier.left[v] == 0 {
                frontier.make_ready(v);
            }
        }
        Ok(frontier)
    }

    fn make_ready(&mut self, v: usize) {
        self.state[v] = State::Ready;
        self.ready.push(v);
        self.ready_count += 1;
    }

    /// Number of tasks.
    pub fn n(&self) -> usize {
        self.state.len()
    }

    /// Tasks in the ready set.
    pub fn ready_count(&self) -> usize {
        self.ready_count
    }

    /// Tasks handed out and not yet reported.
    pub fn running_count(&self) -> usize {
        self.running
    }

    /// The running tasks, ascending id.
    pub fn running(&self) -> Vec<usize> {
        (0..self.n()).filter(|&v| self.state[v] == State::Running).collect()
    }

    /// Finished tasks, in the order they were reported.
    pub fn done(&self) -> &[usize] {
        &self.done
    }

    /// Failed tasks, in the order they were reported.
    pub fn failed(&self) -> &[usize] {
        &self.failed
    }

    /// Skipped tasks, in the order they were skipped.
    pub fn skipped(&self) -> &[usize] {
        &self.skipped
    }

    /// Tasks neither done, failed nor skipped.
    pub fn remaining(&self) -> usize {
        self.n() - self.done.len() - self.failed.len() - self.skipped.len()
    }

    /// Every task is done, failed or skipped.
    pub fn is_done(&self) -> bool {
        self.remaining() == 0
    }

    /// The state of task `v`, if it is one.
    pub fn state(&self, v: usize) -> Option<State> {
        self.state.get(v).copied()
    }

    /// Up to `k` ready tasks (all when `None`) in policy order, now running.
    pub fn take(&mut self, k: Option<usize>) -> Result<Vec<usize>, Error> {
        let count = k.map_or(self.ready_count, |k| k.min(self.ready_count));
        let mut taken = alloc::with_capacity("taken tasks", count)?;
        while taken.len() < count {
            let Some(v) = self.ready.pop() else {
                return Err(Error::Internal { reason: "ready set shorter than its count".into() });
            };
            self.state[v] = State::Running;
            taken.push(v);
        }
        self.ready_count -= count;
        self.running += count;
        Ok(taken)
    }

    /// Check that every task of the batch is running and named once; on
    /// success the batch's tasks are [`State::Listed`].
    fn check(&mut self, tasks: &[i64], action: Action) -> Result<Result<(), Misuse>, Error> {
        let n = self.n();
        for (position, &task) in tasks.iter().enumerate() {
            let refusal = match usize::try_from(task).ok().filter(|&v| v < n) {
                None => Err(Error::NoSuchNode { what: "tasks", value: task as i128, n }),
                Some(v) if self.state[v] == State::Running => {
                    self.state[v] = State::Listed;
                    continue;
                }
                Some(v) => Ok(Misuse { action, task: v, position, state: self.state[v] }),
            };
            // Undo the marks of this batch before reporting.
            for &earlier in &tasks[..position] {
                self.state[earlier as usize] = State::Running;
            }
            return refusal.map(Err);
        }
        Ok(Ok(()))
    }

    /// Mark running `tasks` done and release their successors; returns the
    /// number of tasks that became ready.
    pub fn finish(&mut self, tasks: &[i64]) -> Result<Result<usize, Misuse>, Error> {
        if let Err(misuse) = self.check(tasks, Action::Finish)? {
            return Ok(Err(misuse));
        }
        let before = self.ready_count;
        let mut ticker = Ticker::new();
        for &task in tasks {
            let u = task as usize;
            self.state[u] = State::Done;
            self.done.push(u);
            let (start, end) = (self.offsets[u], self.offsets[u + 1]);
            ticker.tick_by(end - start + 1)?;
            for position in start..end {
                let v = self.targets[position] as usize;
                self.left[v] -= 1;
                if self.left[v] == 0 {
                    self.make_ready(v);
                }
            }
        }
        self.running -= tasks.len();
        Ok(Ok(self.ready_count - before))
    }

    /// Mark running `tasks` failed and every task reachable from them
    /// skipped; returns the newly skipped tasks (depth-first from each
    /// failed task, rows in stored order).
    pub fn fail(&mut self, tasks: &[i64]) -> Result<Result<Vec<usize>, Misuse>, Error> {
        if let Err(misuse) = self.check(tasks, Action::Fail)? {
            return Ok(Err(misuse));
        }
        let first = self.skipped.len();
        let mut stack = Vec::new();
        let mut ticker = Ticker::new();
        for &task in tasks {
            let u = task as usize;
            self.state[u] = State::Failed;
            self.failed.push(u);
            stack.push(u);
            while let Some(w) = stack.pop() {
                let (start, end) = (self.offsets[w], self.offsets[w + 1]);
                ticker.tick_by(end - start + 1)?;
                for position in start..end {
                    let v = self.targets[position] as usize;
                    // A descendant of a running task cannot have been taken
                    // or become ready: it is waiting, or skipped already.
                    if self.state[v] == State::Waiting {
                        self.state[v] = State::Skipped;
                        self.left[v] = SKIPPED;
                        self.skipped.push(v);
                        stack.push(v);
                    }
                }
            }
        }
        self.running -= tasks.len();
        Ok(Ok(self.skipped[first..].to_vec()))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::KeyValues;

    /// 0 -> 2, 1 -> 2, 2 -> 3, 1 -> 4, 4 -> 3 and 5 isolated.
    const INDPTR: [i64; 7] = [0, 1, 3, 4, 4, 5, 5];
    const INDICES: [i64; 5] = [2, 2, 4, 3, 3];

    fn one_at_a_time(mut f: Frontier) -> Vec<usize> {
        let mut seen = Vec::new();
        while let [v] = f.take(Some(1)).unwrap()[..] {
            seen.push(v);
            f.finish(&[v as i64]).unwrap().unwrap();
        }
        assert!(f.is_done());
        seen
    }

    #[test]
    fn one_worker_follows_kahn_under_every_tie() {
        let csr = Csr::new(&INDPTR, &INDICES).unwrap();
        let key = [5.0, 1.0, 0.0, 2.0, -3.0, 9.0];
        let ties = [
            Tie::Queue,
            Tie::Stack,
            Tie::Priority(Key::default()),
            Tie::Priority(Key { values: None, descending: true }),
            Tie::Priority(Key { values: Some(KeyValues::F64(&key)), descending: false }),
            Tie::Priority(Key { values: Some(KeyValues::F64(&key)), descending: true }),
            Tie::Random { seed: 7 },
        ];
        for tie in ties {
            let f = Frontier::new(&csr, &tie).unwrap().unwrap();
            let kahn_order: Vec<usize> =
                kahn(&csr, &tie).unwrap().order.iter().map(|&v| v as usize).collect();
            assert_eq!(one_at_a_time(f), kahn_order, "{tie:?}");
        }
    }

    #[test]
    fn critical_takes_the_longest_remaining_path_first() {
        let csr = Csr::new(&INDPTR, &INDICES).unwrap();
        // Unit durations: bottom levels 3, 3, 2, 1, 2, 1 (worked by hand).
        let f = Frontier::critical(&csr, &[1i64; 6]).unwrap().unwrap();
        assert_eq!(one_at_a_time(f), vec![0, 1, 2, 4, 3, 5]);
    }

    #[test]
    fn misuse_names_the_task_and_changes_nothing() {
        let csr = Csr::new(&INDPTR, &INDICES).unwrap();
        let mut f = Frontier::new(&csr, &Tie::Queue).unwrap().unwrap();
        assert_eq!(f.take(Some(2)).unwrap(), vec![0, 1]);
        let refused = f.finish(&[0, 5]).unwrap().unwrap_err();
        assert_eq!((refused.task, refused.position, refused.state), (5, 1, State::Ready));
        assert_eq!(refused.to_string(), "cannot finish task 5: it was never taken");
        let twice = f.finish(&[1, 1]).unwrap().unwrap_err();
        assert_eq!(twice.state, State::Listed);
        assert_eq!(f.state(0), Some(State::Running));
        assert_eq!(f.state(1), Some(State::Running));
        assert!(matches!(f.finish(&[9]), Err(Error::NoSuchNode { value: 9, .. })));
        assert_eq!(f.finish(&[0]).unwrap(), Ok(0));
        let again = f.finish(&[0]).unwrap().unwrap_err();
        assert_eq!(again.to_string(), "cannot finish task 0: it is already done");
        assert_eq!(f.running(), vec![1]);
    }

    #[test]
    fn failing_skips_exactly_the_descendants() {
        let csr = Csr::new(&INDPTR, &INDICES).unwrap();
        let mut f = Frontier::new(&csr, &Tie::Queue).unwrap().unwrap();
        assert_eq!(f.take(None).unwrap(), vec![0, 1, 5]);
        f.finish(&[0, 5]).unwrap().unwrap();
        // Descendants of 1 (by hand): 2, 4 and 3.
        let mut skipped = f.fail(&[1]).unwrap().unwrap();
        skipped.sort();
        assert_eq!(skipped, vec![2, 3, 4]);
        assert!(f.is_done());
        assert_eq!((f.ready_count(), f.running_count(), f.remaining()), (0, 0, 0));
        assert!(f.take(None).unwrap().is_empty());
    }

    #[test]
    fn a_cycle_is_reported_as_the_kahn_outcome() {
        let csr = Csr::new(&[0i32, 1, 2], &[1, 0]).unwrap();
        let outcome = Frontier::new(&csr, &Tie::Queue).unwrap().unwrap_err();
        assert!(!outcome.is_complete());
        // A cycle below an acyclic prefix: 0 -> 1 -> 2 -> 1.
        let csr = Csr::new(&[0i64, 1, 2, 3], &[1, 2, 1]).unwrap();
        let outcome = Frontier::new(&csr, &Tie::Stack).unwrap().unwrap_err();
        assert_eq!(outcome.cycle, vec![1, 2]);
    }

    #[test]
    fn an_id_beyond_the_nodes_is_named_not_wrapped() {
        // 2**32 would wrap to node 0 in the u32 copy.
        let csr = Csr::new(&[0i64, 1, 1], &[1 << 32]).unwrap();
        assert!(matches!(
            Frontier::new(&csr, &Tie::Queue),
            Err(Error::IndexOutOfRange { position: 0, .. })
        ));
        let csr = Csr::new(&[0i32, 1, 1], &[-1]).unwrap();
        assert!(Frontier::new(&csr, &Tie::Queue).is_err());
    }
}
