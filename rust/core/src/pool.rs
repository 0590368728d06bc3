//! Worker pools, built on first use and never shared across `fork`.
//!
//! A pool is created the first time a parallel sweep asks for a given
//! thread count, then reused. A forked child inherits the parent's memory
//! but none of its threads, so a pool remembered by another process id is
//! abandoned (leaked, not dropped: dropping would signal threads that do not
//! exist in the child) and a fresh one is built. Rayon's global pool is
//! never touched.

use std::sync::{Arc, Mutex};

use rayon::{ThreadPool, ThreadPoolBuilder};

use crate::Error;

struct Cached {
    pid: u32,
    threads: usize,
    pool: Arc<ThreadPool>,
}

static POOLS: Mutex<Vec<Cached>> = Mutex::new(Vec::new());

/// The pool of `threads` workers of this process, built on first use.
pub fn pool(threads: usize) -> Result<Arc<ThreadPool>, Error> {
    let pid = std::process::id();
    // A poisoned lock only means another caller panicked mid-lookup; the
    // list itself is always consistent.
    let mut pools = POOLS.lock().unwrap_or_else(|e| e.into_inner());
    if pools.iter().any(|c| c.pid != pid) {
        for stale in pools.drain(..) {
            std::mem::forget(stale.pool);
        }
    }
    if let Some(cached) = pools.iter().find(|c| c.threads == threads) {
        return Ok(Arc::clone(&cached.pool));
    }
    let pool = ThreadPoolBuilder::new()
        .num_threads(threads)
        .thread_name(|k| format!("toporank-{k}"))
        .build()
        .map_err(|e| Error::ThreadPool { threads, reason: e.to_string() })?;
    let pool = Arc::new(pool);
    pools.push(Cached { pid, threads, pool: Arc::clone(&pool) });
    Ok(pool)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn pools_are_cached_per_thread_count() {
        let a = pool(2).unwrap();
        let b = pool(2).unwrap();
        assert!(Arc::ptr_eq(&a, &b));
        assert_eq!(a.current_num_threads(), 2);
        assert_eq!(pool(3).unwrap().current_num_threads(), 3);
    }
}
