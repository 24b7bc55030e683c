//! Cooperative interruption of long computations.
//!
//! A computation that can run for more than a few milliseconds (building a
//! layer, one ambit_share over a big polygon, a nearest search far from
//! everything, a sweep) asks an [`Interrupt`] now and then whether to stop,
//! and if so returns [`GeomError::Interrupted`](crate::error::GeomError)
//! without leaving partial state. The core never knows where the request
//! comes from: the SQL layer answers from SQLite's interrupt flag
//! (`sqlite3_interrupt`, Ctrl-C in the shell); tests answer from a counter.
//!
//! Contract for callers of [`Interrupt::requested`]: call it at least every
//! few milliseconds of work (ambit promises to honour an interrupt within
//! 0.2 s), and not for every vertex (an implementation may read a clock).
//! Once it has answered `true` it keeps answering `true`.

use std::sync::atomic::{AtomicBool, Ordering};

use crate::error::GeomError;

/// Asked by long computations: should the work stop now?
pub trait Interrupt {
    /// True when the work should stop.
    fn requested(&self) -> bool;

    /// `Err(GeomError::Interrupted)` when the work should stop.
    fn check(&self) -> Result<(), GeomError> {
        if self.requested() {
            Err(GeomError::Interrupted)
        } else {
            Ok(())
        }
    }
}

/// Never asks to stop: for callers that cannot be interrupted (tests,
/// benchmarks, the planar tools).
#[derive(Clone, Copy, Debug, Default)]
pub struct Never;

impl Interrupt for Never {
    fn requested(&self) -> bool {
        false
    }
}

/// A flag another thread sets: how parallel work (which must not call back
/// into SQLite from worker threads) learns of an interrupt. Reading it is
/// one relaxed atomic load.
#[derive(Debug, Default)]
pub struct StopFlag(AtomicBool);

impl StopFlag {
    /// A flag that is not set.
    pub fn new() -> StopFlag {
        StopFlag(AtomicBool::new(false))
    }

    /// Asks every reader to stop.
    pub fn set(&self) {
        self.0.store(true, Ordering::Relaxed);
    }
}

impl Interrupt for StopFlag {
    fn requested(&self) -> bool {
        self.0.load(Ordering::Relaxed)
    }
}

/// Stops after `n` questions: lets tests interrupt a computation at every
/// point it checks and see that nothing partial is left.
#[derive(Debug)]
pub struct AfterChecks {
    left: std::cell::Cell<u64>,
}

impl AfterChecks {
    /// Answers `false` `n` times, then `true` for ever.
    pub fn new(n: u64) -> AfterChecks {
        AfterChecks {
            left: std::cell::Cell::new(n),
        }
    }
}

impl Interrupt for AfterChecks {
    fn requested(&self) -> bool {
        match self.left.get() {
            0 => true,
            n => {
                self.left.set(n - 1);
                false
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn never_never_stops_and_a_flag_stops_once_set() {
        assert!(Never.check().is_ok());
        let flag = StopFlag::new();
        assert!(!flag.requested());
        flag.set();
        assert!(flag.requested());
        assert_eq!(flag.check(), Err(GeomError::Interrupted));
    }

    #[test]
    fn after_checks_counts_down_then_stays_set() {
        let stop = AfterChecks::new(2);
        assert!(!stop.requested());
        assert!(!stop.requested());
        assert!(stop.requested());
        assert!(stop.requested());
    }
}
