//! Cooperative interruption of long loops (Ctrl-C from Python).
//!
//! The core knows nothing of Python. The binding installs one process-wide
//! hook with [`set_hook`]; long loops own a [`Ticker`] and call
//! [`Ticker::tick`] once per unit of work (a node, an edge, a row). The
//! ticker reads the clock only every `STRIDE` ticks and calls the hook at
//! most every [`INTERVAL`], so the cost in a hot loop is one counter
//! decrement and a predictable branch. When the hook reports a stop
//! request, the loop returns [`Error::Interrupted`].

use std::sync::atomic::{AtomicUsize, Ordering};
use std::time::{Duration, Instant};

use crate::Error;

/// How often, at most, the hook is asked.
pub const INTERVAL: Duration = Duration::from_millis(100);
/// Ticks between two looks at the clock.
const STRIDE: u32 = 1 << 16;

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

/// Per-loop countdown to the next stop check.
#[derive(Debug)]
pub struct Ticker {
    countdown: u32,
    last: Instant,
}

impl Default for Ticker {
    fn default() -> Self {
        Self::new()
    }
}

impl Ticker {
    pub fn new() -> Self {
        Ticker { countdown: STRIDE, last: Instant::now() }
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
        if now.duration_since(self.last) < INTERVAL {
            return Ok(());
        }
        self.last = now;
        if ask_hook() {
            Err(Error::Interrupted)
        } else {
            Ok(())
        }
    }
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
}
