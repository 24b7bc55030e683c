//! SQLite's interrupt flag, seen from inside a long function call.
//!
//! SQLite hosts stop a running statement with `sqlite3_interrupt` (the
//! shell calls it on Ctrl-C). A function that computes for a long time does
//! not see that flag by itself, and `sqlite3_is_interrupted` exists only
//! from SQLite 3.41 on (ambit supports hosts from 3.34.1). So
//! [`HostInterrupt`] asks SQLite the portable way: it prepares and steps
//! `SELECT 1` on the same connection, which fails with SQLITE_INTERRUPT
//! while the flag is set (SQLite keeps the flag set until every statement of
//! the connection has finished, and the calling statement has not). It asks
//! at most once every [`POLL_INTERVAL`], so a call that finishes sooner
//! never touches SQLite, and the cost of a check is a clock read.
//!
//! SQLite must only be called from the thread that runs the statement (the
//! connection's mutex is held by that thread for the whole call), so
//! [`HostInterrupt`] is neither `Send` nor `Sync`. Parallel work learns of
//! an interrupt through a [`StopFlag`] that [`run_parallel`] sets from the
//! calling thread while the workers run.

use std::cell::Cell;
use std::ffi::c_int;
use std::sync::mpsc::{sync_channel, RecvTimeoutError};
use std::time::{Duration, Instant};

use rusqlite::ffi;
use rusqlite::functions::Context;

use crate::interrupt::{Interrupt, StopFlag};

/// How often, at most, SQLite is asked whether the statement was
/// interrupted.
pub const POLL_INTERVAL: Duration = Duration::from_millis(20);

/// Where the connection handle comes from.
#[derive(Clone, Copy)]
enum Source<'c> {
    /// A scalar or aggregate function call: the handle is read from its
    /// context only when a check is due.
    Call(&'c Context<'c>),
    /// A virtual table, which holds its connection's handle.
    Db(*mut ffi::sqlite3),
    /// No connection (tests of the glue): never interrupted.
    None,
}

/// The interrupt flag of the connection a call runs on.
pub struct HostInterrupt<'c> {
    source: Source<'c>,
    next_poll: Cell<Instant>,
    seen: Cell<bool>,
}

impl<'c> HostInterrupt<'c> {
    fn with(source: Source<'c>) -> Self {
        HostInterrupt {
            source,
            next_poll: Cell::new(Instant::now() + POLL_INTERVAL),
            seen: Cell::new(false),
        }
    }

    /// The flag of the connection running the function call `ctx`.
    pub fn of_call(ctx: &'c Context<'c>) -> Self {
        Self::with(Source::Call(ctx))
    }

    /// The flag of connection `db`.
    ///
    /// # Safety
    /// `db` must be a live connection for as long as this value exists, and
    /// the value must be used only on the thread running a statement of it.
    pub unsafe fn of_db(db: *mut ffi::sqlite3) -> Self {
        Self::with(Source::Db(db))
    }

    /// A flag that is never set.
    pub fn detached() -> Self {
        Self::with(Source::None)
    }

    /// The same connection's flag, with its own poll timer (first poll
    /// after [`POLL_INTERVAL`], as for a new value).
    pub fn again(&self) -> Self {
        Self::with(self.source)
    }

    fn handle(&self) -> Option<*mut ffi::sqlite3> {
        match self.source {
            // SAFETY: the context is the live context of the call running on
            // this thread (this type is neither Send nor Sync); the handle is
            // only used below, during that call.
            Source::Call(ctx) => unsafe { ctx.get_connection() }
                .ok()
                .map(|conn| unsafe { conn.handle() }),
            Source::Db(db) => Some(db),
            Source::None => None,
        }
    }
}

/// Prepares and steps `SELECT 1` on `db`: SQLITE_INTERRUPT from either
/// means the running statement was interrupted.
fn statement_interrupted(db: *mut ffi::sqlite3) -> bool {
    let sql = c"SELECT 1";
    let mut stmt: *mut ffi::sqlite3_stmt = std::ptr::null_mut();
    // SAFETY: `db` is the live connection of the statement running on this
    // thread (see HostInterrupt's constructors); nested statements on it are
    // allowed inside a function call; the statement is finalised exactly
    // once before returning.
    unsafe {
        let rc = ffi::sqlite3_prepare_v2(db, sql.as_ptr(), -1, &mut stmt, std::ptr::null_mut());
        if rc != ffi::SQLITE_OK {
            if !stmt.is_null() {
                ffi::sqlite3_finalize(stmt);
            }
            return rc & 0xff == ffi::SQLITE_INTERRUPT;
        }
        let rc: c_int = ffi::sqlite3_step(stmt);
        ffi::sqlite3_finalize(stmt);
        rc & 0xff == ffi::SQLITE_INTERRUPT
    }
}

impl HostInterrupt<'_> {
    /// Asks SQLite now, whenever the last question was asked: for a
    /// decision that must not wait for the next poll (ambit_layer's
    /// finalisation, which SQLite also calls to clean up after an
    /// interrupted statement).
    pub fn requested_now(&self) -> bool {
        self.next_poll.set(Instant::now());
        self.requested()
    }
}

impl Interrupt for HostInterrupt<'_> {
    fn requested(&self) -> bool {
        if self.seen.get() {
            return true;
        }
        let now = Instant::now();
        if now < self.next_poll.get() {
            return false;
        }
        self.next_poll.set(now + POLL_INTERVAL);
        let interrupted = self.handle().is_some_and(statement_interrupted);
        self.seen.set(interrupted);
        interrupted
    }
}

/// Runs `work` on the rayon pool while the calling thread watches `host`
/// every few milliseconds, setting the [`StopFlag`] handed to `work` as soon
/// as the statement is interrupted. `work` must check the flag often (every
/// few milliseconds of work) and stop without leaving partial state.
///
/// A panic in `work` is passed on to the caller (whose guard turns it into
/// an SQL error).
pub fn run_parallel<T: Send>(
    host: &HostInterrupt<'_>,
    work: impl FnOnce(&StopFlag) -> T + Send,
) -> T {
    let flag = StopFlag::new();
    let (sender, receiver) = sync_channel(1);
    let result = rayon::in_place_scope(|scope| {
        let flag = &flag;
        scope.spawn(move |_| {
            // The receiver outlives the scope; a failed send cannot happen.
            let _ = sender.send(work(flag));
        });
        loop {
            match receiver.recv_timeout(Duration::from_millis(5)) {
                Ok(value) => break Some(value),
                Err(RecvTimeoutError::Timeout) => {
                    if host.requested() {
                        flag.set();
                    }
                }
                // `work` panicked; the scope passes the panic on.
                Err(RecvTimeoutError::Disconnected) => break None,
            }
        }
    });
    result.expect("the scope passes on a panic of the work before this point")
}
