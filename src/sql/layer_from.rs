//! ambit_layer_from(name, query): a layer built from the rows of a query
//! that the function runs itself.
//!
//! ```text
//! SELECT ambit_layer_from('parks', 'SELECT geom, ''0.5 mi'', fid FROM parks');
//! ```
//!
//! The query's columns are those of ambit_layer after the name: a geometry,
//! and optionally a reach (metres, or a length with its unit as text) and
//! a feature id. The rows are checked and the features prepared exactly as
//! ambit_layer does ([`LayerBuilder`]); the difference is who reads the
//! rows. An aggregate cannot tell that SQLite abandoned its statement
//! after one of SQLite's own errors in a later row (an integer overflow, a
//! failed CAST in a strict table, a progress handler's abort): SQLite still
//! finalises it, so ambit_layer would store the rows before the error.
//! Here every error of the query reaches this function, which then stores
//! nothing: the layer stays exactly as it was. The query must be one
//! read-only SELECT.
//!
//! The query runs on the calling connection through rusqlite's statement
//! API. The one `unsafe` call obtains that connection from the function's
//! context; it is sound because the connection is the one SQLite is running
//! this call on, alive for the whole call, and used only on this thread
//! within the call (nested statements on it are allowed).

use std::sync::Arc;

use rusqlite::functions::{Context, FunctionFlags};
use rusqlite::types::ValueRef;
use rusqlite::Connection;

use crate::sql::interrupt::HostInterrupt;
use crate::sql::layer::{LayerBuilder, Pending, LAYER_PARAMS};
use crate::sql::state::ConnState;
use crate::sql::{error, guard, interrupted, Args};

pub const NAME: &str = "ambit_layer_from";
const PARAMS: &[&str] = &["name", "query"];

/// How a failure of the query is reported: an interrupt as SQLite's
/// interrupt, anything else with the query's own message.
fn query_failed(e: rusqlite::Error) -> rusqlite::Error {
    match e {
        rusqlite::Error::SqliteFailure(f, _)
            if f.code == rusqlite::ErrorCode::OperationInterrupted =>
        {
            interrupted(NAME)
        }
        other => error(
            NAME,
            format!("the query failed: {other}; the layer is unchanged"),
        ),
    }
}

fn call(ctx: &Context<'_>, builder: &LayerBuilder) -> rusqlite::Result<i64> {
    let state = Arc::clone(&builder.state);
    let args = Args::new(NAME, PARAMS, (0..ctx.len()).map(|i| ctx.get_raw(i)), &state);
    let name = args.required_text(0)?;
    let sql = args.required_text(1)?;
    // SAFETY: the connection this function was called on, alive for the
    // whole call and used only within it, on this thread (module doc).
    let conn = unsafe { ctx.get_connection()? };
    let mut stmt = conn.prepare(sql).map_err(|e| match e {
        rusqlite::Error::MultipleStatement => args.fail_arg(
            1,
            "must be a single SELECT statement: SELECT geom, reach_m, feature_id FROM ...",
        ),
        other => args.fail_arg(1, format!("could not be prepared: {other}")),
    })?;
    if !stmt.readonly() {
        return Err(args.fail_arg(
            1,
            "must be a read-only SELECT statement; this one would change the database, so it was not run",
        ));
    }
    let columns = stmt.column_count();
    if !(1..=3).contains(&columns) {
        return Err(args.fail_arg(
            1,
            format!(
                "must return 1 to 3 columns (geom, and optionally reach_m and feature_id, as ambit_layer takes them), not {columns}"
            ),
        ));
    }
    let mut acc = Pending::default();
    let mut rows = stmt.raw_query();
    let mut row_number = 0i64;
    while let Some(row) = rows.next().map_err(query_failed)? {
        row_number += 1;
        let mut values = [ValueRef::Null; 4];
        values[0] = ValueRef::Text(name.as_bytes());
        for (i, slot) in values[1..=columns].iter_mut().enumerate() {
            *slot = row.get_ref(i)?;
        }
        let row_args = Args::new(
            NAME,
            LAYER_PARAMS,
            values[..=columns].iter().copied(),
            &state,
        )
        .from_query_row(row_number);
        builder.step_args(&row_args, &mut acc)?;
    }
    drop(rows);
    let host = HostInterrupt::of_call(ctx);
    if host.requested_now() {
        return Err(interrupted(NAME));
    }
    let features = std::mem::take(&mut acc.features);
    builder.build(&host, name, features, acc.implicit_ids)
}

/// Registers ambit_layer_from(name, query).
pub fn register(conn: &Connection, state: &Arc<ConnState>) -> rusqlite::Result<()> {
    let builder = LayerBuilder {
        state: Arc::clone(state),
        function: NAME,
    };
    conn.create_scalar_function(NAME, 2, FunctionFlags::SQLITE_UTF8, move |ctx| {
        let result = guard(NAME, || call(ctx, &builder));
        if result.is_err() {
            builder.state.note_failure();
        }
        result
    })
}
