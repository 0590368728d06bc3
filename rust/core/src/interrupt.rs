//! Cooperative interruption of long loops (Ctrl-C from Python).
//!
//! The core knows nothing of Python. The binding installs one process-wide
//! hook with [`set_hook`]; long loops own a [`Ticker`] and call
//! [`Ticker::tick`] once per unit of work (a node, an edge, a row). The
//! ticker reads the clock only every `STRIDE` ticks and calls the hook at
//! most every [`INTERVAL`], so the cost in a hot loop is one counter
//! decrement and a predictable branch. When the hook reports a stop
//! request, the loop returns [`Error::Interrupted`].
//!
//! The interval is kept per thread, not per ticker: a call made of many
//! phases, each with its own ticker and each shorter than the interval,
//! still asks the hook every [`INTERVAL`] (a fresh ticker asks as soon as
//! the interval has passed since the last question on its thread). Only the
//! thread that runs the call can see a Ctrl-C (Python handles signals on its
//! main thread), so work shared among threads ticks on the calling thread
//! between hand-offs of bounded size.

use std::cell::Cell;
use std::sync::atomic::{AtomicUsize, Ordering};
use std::time::{Duration, Instant};

use crate::Error;

/// How often, at most, the hook is asked.
pub const INTERVAL: Duration = Duration::from_millis(100);
/// Ticks between two looks at the clock.
pub const STRIDE: u32 = 1 << 16;

thread_local! {
    /// When this thread last asked the hook (`None`: never).
    static LAST_ASKED: Cell<Option<Instant>> = const { Cell::new(None) };
}

/// `fn() -> bool` stored as an address: true means "stop".
static HOOK: AtomicUsize = AtomicUsize::new(0);

/// Install the process-wide stop check (the binding's signal check).
pub fn set_hook(hook: fn() -> bool) {
    HOOK.store(hook as usize, Ordering::Release);
}

fn ask_hook() -> bool {
    let address = HOOK.load(Ordering::Acquire);
    if address == 0 {
        return false;
    }
    // SAFETY: the only non-zero value ever stored is a `fn() -> bool`
    // converted by `set_hook`, and function pointers live for the program.
    let hook: fn() -> bool = unsafe { std::mem::transmute::<usize, fn() -> bool>(address) };
    hook()
}

/// Per-loop countdown to the next look at the clock.
#[derive(Debug)]
pub struct Ticker {
    countdown: u32,
}

impl Default for Ticker {
    fn default() -> Self {
        Self::new()
    }
}

impl Ticker {
    pub fn new() -> Self {
        Ticker { countdown: STRIDE }
    }

    /// Count one unit of work; every so often ask whether to stop.
    #[inline(always)]
    pub fn tick(&mut self) -> Result<(), Error> {
        self.countdown -= 1;
        if self.countdown == 0 {
            return self.check();
        }
        Ok(())
    }

    /// Count `units` units of work at once (a whole row, a batch).
    #[inline(always)]
    pub fn tick_by(&mut self, units: usize) -> Result<(), Error> {
        let units = units.min(STRIDE as usize) as u32;
        if units >= self.countdown {
            return self.check();
        }
        self.countdown -= units;
        Ok(())
    }

    #[cold]
    fn check(&mut self) -> Result<(), Error> {
        self.countdown = STRIDE;
        let now = Instant::now();
        let due = LAST_ASKED.with(|last| match last.get() {
            Some(at) if now.duration_since(at) < INTERVAL => false,
            _ => {
                last.set(Some(now));
                true
            }
        });
        if due && ask_hook() {
            Err(Error::Interrupted)
        } else {
            Ok(())
        }
    }
}

/// Make this thread's next check ask the hook whatever the clock says, so a
/// test can interrupt a loop that a fast build finishes within one interval.
#[cfg(test)]
pub fn ask_at_next_check() {
    LAST_ASKED.with(|last| last.set(None));
}

/// The first position in `values` where `found` holds: a plain scan that
/// ticks once per `STRIDE` items (input checks over every node or edge).
pub fn position<T>(
    values: &[T],
    mut found: impl FnMut(&T) -> bool,
) -> Result<Option<usize>, Error> {
    let mut ticker = Ticker::new();
    for (part, chunk) in values.chunks(STRIDE as usize).enumerate() {
        ticker.tick_by(chunk.len())?;
        if let Some(at) = chunk.iter().position(&mut found) {
            return Ok(Some(part * STRIDE as usize + at));
        }
    }
    Ok(None)
}

/// Sort `items` by `key`, ticking as it goes; the keys must be distinct, so
/// the result is the one any correct sort gives. Short slices are sorted in
/// place; longer ones in runs of `STRIDE` items, then merged pairwise
/// through one scratch buffer of the same length (O(n log n) either way).
pub fn sort_by_distinct_key<T: Copy, K: Ord>(
    items: &mut [T],
    key: impl Fn(&T) -> K,
) -> Result<(), Error> {
    const RUN: usize = STRIDE as usize;
    let n = items.len();
    if n <= RUN {
        items.sort_unstable_by_key(&key);
        return Ok(());
    }
    let mut ticker = Ticker::new();
    for run in items.chunks_mut(RUN) {
        ticker.tick_by(run.len())?;
        run.sort_unstable_by_key(&key);
    }
    let mut scratch: Vec<T> = crate::alloc::with_capacity("sort buffer", n)?;
    for part in items.chunks(RUN) {
        ticker.tick_by(part.len())?;
        scratch.extend_from_slice(part);
    }
    let mut width = RUN;
    let mut in_items = true;
    while width < n {
        if in_items {
            merge_pass(items, &mut scratch, width, &key, &mut ticker)?;
        } else {
            merge_pass(&scratch, items, width, &key, &mut ticker)?;
        }
        in_items = !in_items;
        width *= 2;
    }
    if !in_items {
        for (to, from) in items.chunks_mut(RUN).zip(scratch.chunks(RUN)) {
            ticker.tick_by(to.len())?;
            to.copy_from_slice(from);
        }
    }
    Ok(())
}

/// Merge the sorted runs of `width` items of `from` pairwise into `to`.
fn merge_pass<T: Copy, K: Ord>(
    from: &[T],
    to: &mut [T],
    width: usize,
    key: &impl Fn(&T) -> K,
    ticker: &mut Ticker,
) -> Result<(), Error> {
    let n = from.len();
    for left in (0..n).step_by(2 * width) {
        let middle = (left + width).min(n);
        let right = (left + 2 * width).min(n);
        let (a, b) = (&from[left..middle], &from[middle..right]);
        let (mut i, mut j) = (0, 0);
        for slot in &mut to[left..right] {
            ticker.tick()?;
            let take_a = j == b.len() || (i < a.len() && key(&a[i]) < key(&b[j]));
            if take_a {
                *slot = a[i];
                i += 1;
            } else {
                *slot = b[j];
                j += 1;
            }
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ticker_without_hook_never_stops() {
        let mut t = Ticker::new();
        for _ in 0..(3 * STRIDE) {
            t.tick().unwrap();
        }
        t.tick_by(usize::MAX).unwrap();
    }

    #[test]
    fn sorting_by_distinct_keys_matches_the_standard_sort() {
        // The standard library's sort is the reference.
        let mut rng = crate::rng::SplitMix64::new(4);
        for n in [0, 1, 5, STRIDE as usize, STRIDE as usize + 1, 5 * STRIDE as usize + 17] {
            let mut items: Vec<(u64, usize)> = (0..n).map(|v| (rng.below(50), v)).collect();
            let mut expected = items.clone();
            expected.sort_unstable();
            sort_by_distinct_key(&mut items, |&x| x).unwrap();
            assert_eq!(items, expected, "n = {n}");
        }
    }

    #[test]
    fn position_finds_the_first_match_across_chunks() {
        let stride = STRIDE as usize;
        let mut values = vec![0u8; 3 * stride + 5];
        assert_eq!(position(&values, |&v| v == 1).unwrap(), None);
        values[2 * stride + 3] = 1;
        values[3 * stride + 1] = 1;
        assert_eq!(position(&values, |&v| v == 1).unwrap(), Some(2 * stride + 3));
        assert_eq!(position(&values[..4], |&v| v == 0).unwrap(), Some(0));
    }
}
