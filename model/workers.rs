//! Worker threads for the commands that run many experiments at once
//! (sweeps, convergence levels, the benchmark's sweep).

use crate::error::{ConfigError, ConfigIssue, RunError};

/// Most worker threads: more than this only adds scheduling overhead on
/// any machine this model runs on (each member is one thread's work).
pub const MAX_THREADS: usize = 256;

/// A rayon pool of `threads` workers (0: one per core).
pub fn thread_pool(threads: usize) -> Result<rayon::ThreadPool, RunError> {
    if threads > MAX_THREADS {
        return Err(RunError::Config(ConfigError::single(
            "command line",
            ConfigIssue::new("--threads", "too many worker threads")
                .value(threads.to_string())
                .allowed(format!("0 (one per core) to {MAX_THREADS}")),
        )));
    }
    rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()
        .map_err(|e| RunError::Output {
            context: "sweep thread pool".into(),
            message: e.to_string(),
        })
}

/// Runs `work` on every item on the pool's threads and returns the results
/// in the items' order. Each thread takes the next item nobody has started
/// when it finishes one (greedy list scheduling), so the threads stay busy
/// until the last item has started. Rayon's parallel iterators split the
/// list in halves up front instead: on a sweep whose first half held the
/// slower members (one charging scheme, then the other) one thread ran
/// alone at the end for most of a member's time.
pub fn each_in_order<T: Sync, R: Send>(
    pool: &rayon::ThreadPool,
    items: &[T],
    work: impl Fn(&T) -> R + Sync,
) -> Vec<R> {
    use std::sync::atomic::{AtomicUsize, Ordering};
    use std::sync::Mutex;
    let next = AtomicUsize::new(0);
    let results: Vec<Mutex<Option<R>>> = items.iter().map(|_| Mutex::new(None)).collect();
    pool.broadcast(|_| loop {
        let i = next.fetch_add(1, Ordering::Relaxed);
        let Some(item) = items.get(i) else { break };
        let r = work(item);
        if let Ok(mut slot) = results[i].lock() {
            *slot = Some(r);
        }
    });
    // Every index below the length was taken by exactly one thread, which
    // stored its result before the broadcast returned.
    results
        .into_iter()
        .filter_map(|m| m.into_inner().ok().flatten())
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::sync::atomic::{AtomicUsize, Ordering};

    #[test]
    fn each_in_order_runs_every_item_once_and_keeps_the_order() {
        // Items of unequal work on pools of 1 to 3 threads, and no items:
        // every item runs exactly once and the results come back in the
        // items' order (common practice for a work queue).
        for threads in 1..=3 {
            let pool = thread_pool(threads).unwrap();
            let calls = AtomicUsize::new(0);
            let items: Vec<u64> = (0..37).map(|i| (i * 7919) % 101).collect();
            let out = each_in_order(&pool, &items, |&x| {
                calls.fetch_add(1, Ordering::Relaxed);
                // Uneven work, so threads finish items at different times.
                (0..x * 1000).fold(x, |a, b| a.wrapping_mul(31).wrapping_add(b))
            });
            let expected: Vec<u64> = items
                .iter()
                .map(|&x| (0..x * 1000).fold(x, |a, b| a.wrapping_mul(31).wrapping_add(b)))
                .collect();
            assert_eq!(out, expected, "{threads} threads");
            assert_eq!(calls.load(Ordering::Relaxed), items.len());
            let none: Vec<u64> = each_in_order(&pool, &[] as &[u64], |&x| x);
            assert!(none.is_empty());
        }
    }
}
