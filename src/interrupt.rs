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
use std::sync::Mutex;
use std::time::{Duration, Instant};

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

/// Asks an [`Interrupt`] after a budget of work, not after a count of
/// steps: loops whose steps differ in cost (a box test is nanoseconds, a
/// Karney inverse near the antipode a hundred microseconds) charge each
/// step its worst-case cost in [`cost`] units (about 0.1 µs each) and the
/// pacer asks once [`Pacer::BUDGET`] units have been spent, that is after
/// at most about a millisecond of work; a question is a clock read, so
/// even cheap steps lose under 0.1 % to it.
pub struct Pacer<'a> {
    stop: &'a dyn Interrupt,
    left: u32,
}

/// Worst-case costs of steps in [`Pacer`] units (about 0.1 µs each).
pub mod cost {
    /// A few arithmetic operations, a box test, a hash or heap operation.
    pub const STEP: u32 = 1;
    /// A flat-frame bound or decision, or a few dozen arithmetic
    /// operations.
    pub const FLAT: u32 = 10;
    /// One Karney inverse (a few microseconds, up to about 100 near the
    /// antipode), or a point-in-ring step of a long ring.
    pub const INVERSE: u32 = 1_000;
    /// One exact element distance or crossing test (several inverses).
    pub const EXACT: u32 = 4_000;
}

impl<'a> Pacer<'a> {
    /// Units of work between two questions: about a millisecond at worst.
    pub const BUDGET: u32 = 10_000;

    /// A pacer asking `stop`.
    pub fn new(stop: &'a dyn Interrupt) -> Pacer<'a> {
        Pacer {
            stop,
            left: Self::BUDGET,
        }
    }

    /// Charges `units` of work; asks `stop` when the budget is spent
    /// (`Err(GeomError::Interrupted)` when it says stop).
    #[inline]
    pub fn spend(&mut self, units: u32) -> Result<(), GeomError> {
        if self.left > units {
            self.left -= units;
            return Ok(());
        }
        self.left = Self::BUDGET;
        self.stop.check()
    }

    /// Charges one [`cost::STEP`].
    #[inline]
    pub fn step(&mut self) -> Result<(), GeomError> {
        self.spend(cost::STEP)
    }

    /// Asks `stop` now, whatever is left of the budget.
    pub fn check(&mut self) -> Result<(), GeomError> {
        self.left = Self::BUDGET;
        self.stop.check()
    }
}

/// Measures how a computation asks: the longest stretch of work between
/// two questions (and from the start to the first), for benchmarks that
/// show a path honours an interrupt promptly whatever the host's polling.
/// Answers `false` until `stop_after` has passed since it was made, then
/// `true` for ever, so the time from that moment to the computation's
/// return can be measured too ([`GapMeter::stopped_for`]). Shared by
/// parallel workers, it measures the gaps between any two questions.
#[derive(Debug)]
pub struct GapMeter {
    stop_at: Option<Instant>,
    state: Mutex<GapState>,
}

#[derive(Debug)]
struct GapState {
    last: Instant,
    longest: Duration,
    checks: u64,
    first_true: Option<Instant>,
}

impl GapMeter {
    /// A meter that never asks to stop.
    pub fn new() -> GapMeter {
        GapMeter::stopping_after(None)
    }

    /// A meter that asks to stop once `after` has passed (never for `None`).
    pub fn stopping_after(after: Option<Duration>) -> GapMeter {
        let now = Instant::now();
        GapMeter {
            stop_at: after.map(|d| now + d),
            state: Mutex::new(GapState {
                last: now,
                longest: Duration::ZERO,
                checks: 0,
                first_true: None,
            }),
        }
    }

    fn state(&self) -> std::sync::MutexGuard<'_, GapState> {
        self.state.lock().unwrap_or_else(|e| e.into_inner())
    }

    /// The longest stretch between two questions so far, counting the
    /// stretch from the last question to now (call it when the
    /// computation has returned).
    pub fn longest_gap(&self) -> Duration {
        let s = self.state();
        s.longest.max(s.last.elapsed())
    }

    /// How many times the computation asked.
    pub fn checks(&self) -> u64 {
        self.state().checks
    }

    /// How long ago the meter first answered `true` (`None` if it never
    /// did): called right after the computation returned, how long it went
    /// on after being asked to stop.
    pub fn stopped_for(&self) -> Option<Duration> {
        self.state().first_true.map(|t| t.elapsed())
    }
}

impl Default for GapMeter {
    fn default() -> Self {
        GapMeter::new()
    }
}

impl Interrupt for GapMeter {
    fn requested(&self) -> bool {
        let now = Instant::now();
        let mut s = self.state();
        s.longest = s.longest.max(now - s.last);
        s.last = now;
        s.checks += 1;
        if s.first_true.is_some() {
            return true;
        }
        if self.stop_at.is_some_and(|at| now >= at) {
            s.first_true = Some(now);
            return true;
        }
        false
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

    #[test]
    fn a_pacer_asks_once_its_budget_is_spent() {
        let stop = AfterChecks::new(1);
        let mut pacer = Pacer::new(&stop);
        for _ in 0..Pacer::BUDGET - 1 {
            assert!(pacer.step().is_ok());
        }
        // The budget is spent: the first question (answered no).
        assert!(pacer.step().is_ok());
        assert!(pacer.spend(cost::EXACT).is_ok());
        assert!(pacer.spend(cost::EXACT).is_ok());
        // Spent again: the second question, answered stop.
        assert_eq!(pacer.spend(cost::EXACT), Err(GeomError::Interrupted));
    }

    #[test]
    fn a_gap_meter_counts_questions_and_stops_after_its_time() {
        let meter = GapMeter::new();
        assert!(!meter.requested());
        assert!(!meter.requested());
        assert_eq!(meter.checks(), 2);
        assert_eq!(meter.stopped_for(), None);
        let soon = GapMeter::stopping_after(Some(Duration::ZERO));
        std::thread::sleep(Duration::from_millis(2));
        assert!(soon.requested());
        assert!(soon.requested());
        assert!(soon.longest_gap() >= Duration::from_millis(2));
        assert!(soon.stopped_for().is_some());
    }
}
