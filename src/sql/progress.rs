//! Progress of long statements on stderr: shown when stderr is a terminal
//! or AMBIT_PROGRESS=1, never when AMBIT_PROGRESS=0. One line, rewritten
//! in place at most twice a second, ended by a newline when the work ends
//! (finished or not).

use std::io::IsTerminal;
use std::sync::Mutex;
use std::time::Instant;

/// Whether progress is shown (AMBIT_PROGRESS, else: is stderr a terminal).
pub fn enabled() -> bool {
    match std::env::var("AMBIT_PROGRESS").as_deref() {
        Ok("1") => true,
        Ok("0") => false,
        _ => std::io::stderr().is_terminal(),
    }
}

/// A progress line `<what>: <done> of <total> <unit>, <rate> <unit>/s, <left> s left`.
/// Safe to report from any thread.
pub struct Meter {
    what: String,
    unit: &'static str,
    total: u64,
    start: Instant,
    state: Mutex<MeterState>,
}

struct MeterState {
    last: Instant,
    printed: bool,
    ended: bool,
}

impl Meter {
    /// A meter for `total` units of work, or `None` when progress is not
    /// shown.
    pub fn start(what: String, unit: &'static str, total: u64) -> Option<Meter> {
        enabled().then(|| Meter {
            what,
            unit,
            total,
            start: Instant::now(),
            state: Mutex::new(MeterState {
                last: Instant::now(),
                printed: false,
                ended: false,
            }),
        })
    }

    /// `done` units are done; prints if half a second has passed since the
    /// last line, or when `done` reaches the total.
    pub fn report(&self, done: u64) {
        let mut state = self.state.lock().unwrap_or_else(|e| e.into_inner());
        let now = Instant::now();
        let last = done >= self.total;
        if state.ended || (!last && now.duration_since(state.last).as_secs_f64() < 0.5) {
            return;
        }
        state.last = now;
        state.printed = true;
        let secs = now.duration_since(self.start).as_secs_f64().max(1e-9);
        let rate = done as f64 / secs;
        let left = if !last && rate > 0.0 {
            format!(", {:.0} s left", (self.total - done) as f64 / rate)
        } else {
            String::new()
        };
        let unit = self.unit;
        eprint!(
            "\r{}: {done} of {} {unit}, {rate:.0} {unit}/s{left}   ",
            self.what, self.total
        );
        if last {
            eprintln!();
            state.ended = true;
        }
    }
}

impl Drop for Meter {
    /// Ends a line left open (the work stopped early).
    fn drop(&mut self) {
        let state = self.state.get_mut().unwrap_or_else(|e| e.into_inner());
        if state.printed && !state.ended {
            eprintln!();
        }
    }
}
