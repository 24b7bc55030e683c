//! The SQL surface: the only module that knows SQLite. It converts SQL
//! values to the core's types and back, and turns the core's errors into
//! SQL errors that name the function, the argument and the problem. It
//! computes no geometry itself.
//!
//! Every function is a row of the `FUNCTIONS` tables: its SQL name, its parameter
//! names (the last `optional` of them may be left out), whether it is
//! deterministic, and its body. [`register`] walks that table.

pub mod args;
pub mod entry;
pub mod gpkg;
pub mod info;
pub mod interrupt;
pub mod io;
pub mod layer;
pub mod layer_from;
pub mod measure;
pub mod progress;
pub mod read;
pub mod render;
pub mod reproject;
pub mod state;
pub mod stats;
pub mod sweep;
pub mod tables;
pub mod units;

use std::panic::{catch_unwind, AssertUnwindSafe};

use std::sync::Arc;

use rusqlite::functions::FunctionFlags;
use rusqlite::types::Value;
use rusqlite::Connection;

pub use args::Args;
use state::ConnState;

/// The result of a function body: a value or an error message that already
/// names the function.
pub type SqlResult = Result<Value, rusqlite::Error>;

/// One SQL function.
pub struct SqlFunction {
    /// The name users call it by.
    pub name: &'static str,
    /// Parameter names, used in error messages and in the reference.
    pub params: &'static [&'static str],
    /// How many of the trailing parameters may be left out.
    pub optional: usize,
    /// Same arguments, same result (lets SQLite factor calls out of loops).
    pub deterministic: bool,
    /// The body.
    pub body: fn(&Args) -> SqlResult,
}

/// Every SQL function ambit registers, family by family.
pub fn functions() -> impl Iterator<Item = &'static SqlFunction> {
    [
        io::FUNCTIONS,
        measure::FUNCTIONS,
        layer::FUNCTIONS,
        units::FUNCTIONS,
        info::FUNCTIONS,
        gpkg::FUNCTIONS,
    ]
    .into_iter()
    .flatten()
}

/// An SQL error with a message a user can act on, `"<function>: <message>"`.
pub fn error(function: &str, message: impl std::fmt::Display) -> rusqlite::Error {
    rusqlite::Error::SqliteFailure(
        rusqlite::ffi::Error::new(rusqlite::ffi::SQLITE_ERROR),
        Some(format!("{function}: {message}")),
    )
}

/// The SQL error for an interrupted computation: SQLite's own
/// SQLITE_INTERRUPT code (so hosts see an ordinary interrupt), with a
/// message naming the function.
pub fn interrupted(function: &str) -> rusqlite::Error {
    rusqlite::Error::SqliteFailure(
        rusqlite::ffi::Error::new(rusqlite::ffi::SQLITE_INTERRUPT),
        Some(format!("{function}: interrupted")),
    )
}

/// Registers every function of [`functions`] on `conn`, once per arity it
/// accepts, so that SQLite itself refuses a wrong argument count; then the
/// aggregate ambit_layer and the table-valued functions. All of them share
/// one [`ConnState`], which lives as long as the connection (SQLite drops
/// the functions, and with them the state, when it closes).
pub fn register(conn: &Connection) -> rusqlite::Result<()> {
    let state = Arc::new(ConnState::default());
    for f in functions() {
        let mut flags = FunctionFlags::SQLITE_UTF8;
        if f.deterministic {
            flags |= FunctionFlags::SQLITE_DETERMINISTIC | FunctionFlags::SQLITE_INNOCUOUS;
        }
        let most = f.params.len();
        for arity in most - f.optional..=most {
            let function: &'static SqlFunction = f;
            let state = Arc::clone(&state);
            conn.create_scalar_function(f.name, arity as i32, flags, move |ctx| {
                let values = (0..ctx.len()).map(|i| ctx.get_raw(i));
                let args = Args::new(function.name, function.params, values, &state).in_call(ctx);
                let result = guard(function.name, || (function.body)(&args));
                if result.is_err() {
                    state.note_failure();
                }
                result
            })?;
        }
    }
    layer::register_aggregate(conn, &state)?;
    layer_from::register(conn, &state)?;
    gpkg::register(conn)?;
    render::register(conn)?;
    stats::register(conn)?;
    tables::register(conn, &state)?;
    read::register(conn, &state)?;
    reproject::register(conn, &state)?;
    Ok(())
}

/// Runs `body`; a panic (a bug in ambit) becomes an SQL error naming the
/// function instead of crossing into SQLite.
pub fn guard<T>(name: &str, body: impl FnOnce() -> rusqlite::Result<T>) -> rusqlite::Result<T> {
    match catch_unwind(AssertUnwindSafe(body)) {
        Ok(result) => result,
        Err(panic) => {
            let what = panic
                .downcast_ref::<&str>()
                .map(|s| s.to_string())
                .or_else(|| panic.downcast_ref::<String>().cloned())
                .unwrap_or_default();
            Err(error(
                name,
                format!("internal error, please report it with the query that caused it: {what}"),
            ))
        }
    }
}
