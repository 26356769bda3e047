//! Cooperative cancellation: a flag the caller sets and the field engine
//! reads between chunks of work.
//!
//! The engine runs on threads it does not own (rayon's pool, the service's
//! blocking pool), and a thread cannot be stopped from outside without
//! leaving its work half done. So the work asks instead: the field engine
//! looks at the flag before each conductor of each chunk of
//! [`crate::field`] points (64 points; at most a few milliseconds of work
//! for the largest site the service accepts), the refinement of an area
//! maximum and the distance search before each step. A computation that
//! sees the flag stops and returns [`Cancelled`], never a partial result.
//!
//! Plain std: the service sets the flag from its async side when a request
//! is dropped; the core knows nothing of async.

use std::sync::Arc;
use std::sync::atomic::{AtomicBool, Ordering};

/// A cancellation flag shared by every clone. Setting it is final.
///
/// Relaxed atomics suffice: the flag carries no data, and a reader that
/// sees it a chunk late only stops a chunk later.
#[derive(Debug, Clone, Default)]
pub struct Cancel(Arc<AtomicBool>);

impl Cancel {
    /// A fresh, unset flag (one per request in the service).
    pub fn new() -> Cancel {
        Cancel::default()
    }

    /// A flag nobody holds a handle to set: the command line's, and the
    /// one behind every function without a `try_` twin.
    pub fn never() -> Cancel {
        Cancel::default()
    }

    /// Asks every computation holding a clone to stop.
    pub fn cancel(&self) {
        self.0.store(true, Ordering::Relaxed);
    }

    pub fn is_cancelled(&self) -> bool {
        self.0.load(Ordering::Relaxed)
    }

    /// `Err(Cancelled)` once the flag is set: `cancel.check()?` between
    /// steps of work.
    pub fn check(&self) -> Result<(), Cancelled> {
        if self.is_cancelled() { Err(Cancelled) } else { Ok(()) }
    }
}

/// A computation stopped because its [`Cancel`] was set; it has no result.
#[derive(Debug, Clone, Copy, PartialEq, Eq, thiserror::Error)]
#[error("the computation was cancelled")]
pub struct Cancelled;

/// The value of a computation run with [`Cancel::never`], which cannot be
/// cancelled: what lets each plain function wrap its `try_` twin.
pub(crate) fn uncancelled<T>(result: Result<T, Cancelled>) -> T {
    match result {
        Ok(value) => value,
        Err(Cancelled) => unreachable!("a flag nobody can set was set"),
    }
}
