//! The loadable-extension entry point: check the host, then register.
//!
//! The API bindings of libsqlite3-sys 0.38 are generated from SQLite
//! 3.34.1, so that is the oldest host ambit supports. The check below runs
//! before anything else touches the host's routine table: an older host gets
//! an error message from `.load` / `load_extension`, never an abort.

use std::os::raw::{c_char, c_int};

use rusqlite::ffi;
use rusqlite::Connection;

/// The oldest SQLite ambit loads into, as SQLite numbers versions
/// (3.34.1 = 3034001).
pub const MINIMUM_SQLITE: c_int = ffi::SQLITE_VERSION_NUMBER;

/// [`MINIMUM_SQLITE`] as text, e.g. "3.34.1".
pub fn minimum_sqlite_text() -> String {
    version_text(MINIMUM_SQLITE)
}

fn version_text(v: c_int) -> String {
    format!("{}.{}.{}", v / 1_000_000, v / 1000 % 1000, v % 1000)
}

/// Checks the host's version, then hands over to rusqlite and registers
/// every function.
///
/// # Safety
/// `db`, `pz_err_msg` and `p_api` must be what SQLite's extension loader
/// passes to an entry point: `p_api` points to the host's routine table,
/// whose leading fields (including `malloc` and `libversion_number`) exist
/// in every SQLite 3 release; `pz_err_msg` is a writable slot.
pub unsafe fn init(
    db: *mut ffi::sqlite3,
    pz_err_msg: *mut *mut c_char,
    p_api: *mut ffi::sqlite3_api_routines,
) -> c_int {
    if p_api.is_null() {
        return ffi::SQLITE_ERROR;
    }
    let host = match (*p_api).libversion_number {
        Some(f) => f(),
        None => 0,
    };
    if host < MINIMUM_SQLITE {
        let message = format!(
            "ambit needs SQLite {} or newer, this host is SQLite {}; use a newer sqlite3 shell or a host such as apsw that bundles a recent SQLite",
            minimum_sqlite_text(),
            version_text(host)
        );
        set_error(p_api, pz_err_msg, &message);
        return ffi::SQLITE_ERROR;
    }
    // A panic must not unwind into the host (it would abort the process):
    // registration errors and panics alike become the load's error message.
    let loaded = std::panic::catch_unwind(|| {
        Connection::extension_init2(db, pz_err_msg, p_api, |conn| {
            crate::sql::register(&conn)?;
            Ok(false)
        })
    });
    loaded.unwrap_or_else(|_| {
        set_error(
            p_api,
            pz_err_msg,
            "ambit could not initialise: the host's SQLite routine table is incomplete",
        );
        ffi::SQLITE_ERROR
    })
}

/// Hands `message` to the host as the load error, in memory from the host's
/// own allocator (SQLite frees it with sqlite3_free).
///
/// # Safety
/// As for [`init`]; `p_api` is not null.
unsafe fn set_error(
    p_api: *mut ffi::sqlite3_api_routines,
    pz_err_msg: *mut *mut c_char,
    message: &str,
) {
    let (Some(malloc), false) = ((*p_api).malloc, pz_err_msg.is_null()) else {
        return;
    };
    let bytes = message.as_bytes();
    let buf = malloc(bytes.len() as c_int + 1).cast::<u8>();
    if !buf.is_null() {
        std::ptr::copy_nonoverlapping(bytes.as_ptr(), buf, bytes.len());
        *buf.add(bytes.len()) = 0;
        *pz_err_msg = buf.cast::<c_char>();
    }
}
