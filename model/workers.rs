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
