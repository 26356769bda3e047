//! Field computations off the async threads: at most `max_computations` at
//! once, each with its request's budget and a cancellation flag of its own.
//!
//! Concurrency and shutdown: a computation holds its slot (a semaphore
//! permit) on the blocking thread that runs it, so a slot is free only once
//! the work has really stopped, not when its request is answered. The
//! request's future owns a guard that sets the flag when the future is
//! dropped (by the timeout middleware, or by hyper when the connection
//! closes under it), and the engine stops at its next chunk
//! (`fluxbound_core::cancel`). A computation that ends
//! normally drops the guard too; setting the flag of finished work does
//! nothing.

use super::{Result, Service, ServiceError};
use fluxbound_core::cancel::Cancel;
use fluxbound_core::usecase::Budget;
use std::sync::Arc;
use std::sync::atomic::{AtomicU64, Ordering};
use std::time::Duration;
use tokio::sync::{OwnedSemaphorePermit, Semaphore};

/// Largest computation (segment–point pairs) run on the request's own task
/// rather than the blocking pool: ≈ 0.1 ms on one core at the kernel's
/// 5 × 10⁸ pairs per core-second (tuning number; `bash bench/load/run.sh`
/// shows its effect on the evaluate request of 10,000 pairs).
pub const INLINE_PAIRS: u64 = 50_000;

/// The computation slots and their counters, shared by all clones of the
/// service.
#[derive(Debug, Clone)]
pub(super) struct Slots {
    gate: Arc<Semaphore>,
    counters: Arc<Counters>,
}

#[derive(Debug, Default)]
struct Counters {
    running: AtomicU64,
    cancelled: AtomicU64,
    refused: AtomicU64,
}

/// What `/metrics` shows of the computations.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct ComputeCounts {
    /// Computations running now (on the blocking pool, their flag set or not).
    pub running: u64,
    /// Computations that ended after their flag was set, since start.
    pub cancelled: u64,
    /// Requests answered 503 `busy` since start.
    pub refused: u64,
}

impl Slots {
    /// `max` slots (at least one).
    pub(super) fn new(max: usize) -> Slots {
        Slots { gate: Arc::new(Semaphore::new(max.max(1))), counters: Arc::default() }
    }
}

/// Sets the flag when dropped (see the module docs).
struct CancelOnDrop(Cancel);

impl Drop for CancelOnDrop {
    fn drop(&mut self) {
        self.0.cancel();
    }
}

/// Counts one computation as running until dropped, which happens on the
/// blocking thread once the work has returned.
struct Running(Arc<Counters>);

impl Running {
    fn start(counters: &Arc<Counters>) -> Running {
        counters.running.fetch_add(1, Ordering::Relaxed);
        Running(counters.clone())
    }
}

impl Drop for Running {
    fn drop(&mut self) {
        self.0.running.fetch_sub(1, Ordering::Relaxed);
    }
}

impl Service {
    pub fn compute_counts(&self) -> ComputeCounts {
        let c = &self.compute.counters;
        ComputeCounts {
            running: c.running.load(Ordering::Relaxed),
            cancelled: c.cancelled.load(Ordering::Relaxed),
            refused: c.refused.load(Ordering::Relaxed),
        }
    }

    /// Runs CPU-bound work `f` on the blocking pool (the field engine
    /// itself fans out over rayon) once a slot is free, with the configured
    /// budget and a fresh flag that is set if this future is dropped before
    /// the work ends. Waits at most `compute_queue_ms` for a slot, else
    /// [`ServiceError::Busy`].
    pub(super) async fn compute<T: Send + 'static>(&self, f: impl FnOnce(&Budget) -> T + Send + 'static) -> Result<T> {
        let (slot, budget, running) = self.begin_computation().await?;
        let _cancel_on_drop = CancelOnDrop(budget.cancel.clone());
        let work = move || {
            let _slot: OwnedSemaphorePermit = slot;
            let out = f(&budget);
            if budget.cancel.is_cancelled() {
                running.0.cancelled.fetch_add(1, Ordering::Relaxed);
            }
            drop(running);
            out
        };
        tokio::task::spawn_blocking(work).await.map_err(|e| ServiceError::Internal(format!("compute task failed: {e}")))
    }

    /// [`Service::compute`] for work of at most `pairs` segment–point pairs:
    /// at or below [`INLINE_PAIRS`] it runs on the calling task, still
    /// holding a slot and the budget, since a hand-off to the blocking pool
    /// and back costs more than the work (a request of that size takes
    /// well under a millisecond, so it cannot hold up the async workers
    /// noticeably, and it cannot be dropped half-way: the flag stays unset).
    pub(super) async fn compute_sized<T: Send + 'static>(
        &self,
        pairs: u64,
        f: impl FnOnce(&Budget) -> T + Send + 'static,
    ) -> Result<T> {
        if pairs > INLINE_PAIRS {
            return self.compute(f).await;
        }
        let (_slot, budget, _running) = self.begin_computation().await?;
        Ok(f(&budget))
    }

    /// What every computation holds while it runs: a slot (waiting at most
    /// the configured queue wait), the budget with a fresh flag, and its
    /// place in the running count.
    async fn begin_computation(&self) -> Result<(OwnedSemaphorePermit, Budget, Running)> {
        let slot = self.slot().await?;
        let budget = Budget { cancel: Cancel::new(), ..self.limits().budget() };
        Ok((slot, budget, Running::start(&self.compute.counters)))
    }

    /// A computation slot, waiting at most the configured queue wait.
    async fn slot(&self) -> Result<OwnedSemaphorePermit> {
        let wait = Duration::from_millis(self.limits().compute_queue_ms);
        match tokio::time::timeout(wait, self.compute.gate.clone().acquire_owned()).await {
            Ok(Ok(permit)) => Ok(permit),
            Ok(Err(closed)) => Err(ServiceError::Internal(format!("computation slots: {closed}"))),
            Err(_) => {
                self.compute.counters.refused.fetch_add(1, Ordering::Relaxed);
                tracing::warn!(wait_ms = wait.as_millis() as u64, "every computation slot is busy");
                Err(ServiceError::Busy { retry_after_s: self.limits().busy_retry_after_s() })
            }
        }
    }
}
