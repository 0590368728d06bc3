//! The worker pool: at most one per process, built on first use, capped at
//! the usable cores and never shared across `fork`.
//!
//! The first parallel call builds a pool; a later call asking for more
//! workers (up to the cap) replaces it, and one asking for fewer reuses it
//! (results never depend on the worker count). Workers beyond
//! [`std::thread::available_parallelism`] only add switching, so requests
//! are capped there: `threads=10000` costs what the cores cost. A forked
//! child inherits the parent's memory but none of its threads, so a pool
//! remembered by another process id is abandoned (leaked, not dropped:
//! dropping would signal threads that do not exist in the child) and a
//! fresh one is built. Rayon's global pool is never touched.

use std::sync::{Arc, Mutex};

use rayon::{ThreadPool, ThreadPoolBuilder};

use crate::Error;

struct Cached {
    pid: u32,
    threads: usize,
    pool: Arc<ThreadPool>,
}

static POOL: Mutex<Option<Cached>> = Mutex::new(None);

/// The cores this process may use (1 when the system cannot tell).
pub fn usable_cores() -> usize {
    std::thread::available_parallelism().map_or(1, |n| n.get())
}

/// The worker count a request for `threads` gets: at least 1, at most the
/// usable cores.
pub fn capped(threads: usize) -> usize {
    threads.clamp(1, usable_cores())
}

/// The process's pool, with at least `capped(threads)` workers.
pub fn pool(threads: usize) -> Result<Arc<ThreadPool>, Error> {
    let threads = capped(threads);
    let pid = std::process::id();
    // A poisoned lock only means another caller panicked mid-lookup; the
    // slot itself is always consistent.
    let mut slot = POOL.lock().unwrap_or_else(|e| e.into_inner());
    if let Some(stale) = slot.take_if(|c| c.pid != pid) {
        std::mem::forget(stale.pool);
    }
    if let Some(cached) = slot.as_ref().filter(|c| c.threads >= threads) {
        return Ok(Arc::clone(&cached.pool));
    }
    let pool = ThreadPoolBuilder::new()
        .num_threads(threads)
        .thread_name(|k| format!("toporank-{k}"))
        .build()
        .map_err(|e| Error::ThreadPool { threads, reason: e.to_string() })?;
    let pool = Arc::new(pool);
    // The smaller pool it replaces ends when its last user lets go.
    *slot = Some(Cached { pid, threads, pool: Arc::clone(&pool) });
    Ok(pool)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn one_pool_capped_at_the_cores() {
        let cores = usable_cores();
        let a = pool(2).unwrap();
        let b = pool(2).unwrap();
        assert!(Arc::ptr_eq(&a, &b));
        assert_eq!(a.current_num_threads(), 2.min(cores));
        let big = pool(10_000).unwrap();
        assert_eq!(big.current_num_threads(), cores);
        // Fewer workers asked: the larger pool serves.
        assert!(Arc::ptr_eq(&pool(1).unwrap(), &big));
        assert_eq!(capped(0), 1);
    }
}
