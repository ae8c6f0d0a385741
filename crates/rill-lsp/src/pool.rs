//! The analysis threads: a fixed set, started with the server and ended
//! with it, so that the number of open documents never decides the number
//! of threads (queueing is `schedule`'s, through `Shared::analysis_slots`).
//!
//! Hand-written (a channel and a few threads) rather than tokio's blocking
//! pool, which grows a thread whenever none is idle at the instant of a
//! call, or a rayon pool, whose threads steal queued jobs while they wait
//! inside an analysis's own parallel loops (one analysis would then run
//! nested inside another on the same stack).

use std::sync::mpsc;
use std::sync::{Arc, Mutex};
use tokio::sync::oneshot;

type Job = Box<dyn FnOnce() + Send + 'static>;

pub struct Pool {
    /// Dropping it (with the pool) ends the idle threads; a busy one ends
    /// after its job.
    jobs: mpsc::Sender<Job>,
}

impl Pool {
    /// `threads` threads waiting for jobs; they end when the pool is dropped.
    pub fn new(threads: usize) -> Pool {
        let (tx, rx) = mpsc::channel::<Job>();
        let rx = Arc::new(Mutex::new(rx));
        for i in 0..threads.max(1) {
            let rx = rx.clone();
            let spawned = std::thread::Builder::new()
                .name(format!("rill-analysis-{i}"))
                .spawn(move || loop {
                    let job = {
                        let rx = rx.lock().unwrap_or_else(|e| e.into_inner());
                        rx.recv()
                    };
                    match job {
                        // A panicking analysis must not take its thread along.
                        Ok(job) => {
                            let _ = std::panic::catch_unwind(std::panic::AssertUnwindSafe(job));
                        }
                        Err(_) => return,
                    }
                });
            if spawned.is_err() && i > 0 {
                break; // fewer threads than asked, still a working pool
            }
        }
        Pool { jobs: tx }
    }

    /// Run `f` on a pool thread; `None` if it panicked or the pool is gone.
    pub async fn run<T: Send + 'static>(
        &self,
        f: impl FnOnce() -> T + Send + 'static,
    ) -> Option<T> {
        let (tx, rx) = oneshot::channel();
        let job: Job = Box::new(move || {
            let _ = tx.send(f());
        });
        self.jobs.send(job).ok()?;
        rx.await.ok()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[tokio::test]
    async fn jobs_run_and_a_panic_is_contained() {
        let pool = Pool::new(2);
        assert_eq!(pool.run(|| 6 * 7).await, Some(42));
        assert_eq!(pool.run(|| -> i32 { panic!("bad input") }).await, None);
        assert_eq!(pool.run(|| 1).await, Some(1));
    }
}
