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
