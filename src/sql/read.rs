//! ambit_read(path [, options]): the rows of downloaded files, read from
//! SQL (the readers are crate::read).
//!
//! ```text
//! SELECT file, row, geom, attributes, problem
//! FROM ambit_read('downloads/blocks_*.zip', '{"bad_rows": "keep"}');
//! ```
//!
//! A streaming eponymous virtual table (<https://sqlite.org/vtab.html>):
//! xFilter opens the files of the path (nothing is read yet) and reads the
//! first row; xNext reads the next; so memory holds one file at a time,
//! whatever the number of files. SQLite checks for an interrupt between
//! rows. It reads files named in SQL, so it is direct-only
//! (SQLITE_VTAB_DIRECTONLY): usable in statements a user writes, not from
//! triggers or views of a database someone else made.
//!
//! `unsafe impl` below is required by rusqlite's `VTab` and `VTabCursor`
//! traits, whose contract is that the struct is `#[repr(C)]` with the
//! SQLite base struct as its first field, which both structs here are.

use std::borrow::Cow;
use std::ffi::{c_int, CStr};
use std::sync::Arc;

use rusqlite::types::Value;
use rusqlite::vtab::{
    Context, Filters, IndexInfo, Module, VTab, VTabConfig, VTabConnection, VTabCursor,
};
use rusqlite::{ffi, Connection};

use crate::read::{Options, Reader, Row};
use crate::sql::state::ConnState;
use crate::sql::tables::{argument_plan, arguments, table_error};
use crate::sql::{guard, Args};

const READ: &str = "ambit_read";
const READ_PARAMS: &[&str] = &["path", "options"];

/// Registers ambit_read.
pub fn register(conn: &Connection, state: &Arc<ConnState>) -> rusqlite::Result<()> {
    const MODULE: Module<ReadTable> = Module::eponymous_only_module();
    conn.create_module(c"ambit_read", &MODULE, Some(Arc::clone(state)))
}

/// The ambit_read table.
#[repr(C)]
pub struct ReadTable {
    base: ffi::sqlite3_vtab,
    state: Arc<ConnState>,
}

// SAFETY: #[repr(C)] with the sqlite3_vtab base first (see the module doc).
unsafe impl<'vtab> VTab<'vtab> for ReadTable {
    type Aux = Arc<ConnState>;
    type Cursor = ReadCursor<'vtab>;

    fn connect(
        db: &mut VTabConnection,
        aux: Option<&Arc<ConnState>>,
        _module: &[u8],
        _database: &[u8],
        _table: &[u8],
        _args: &[&[u8]],
    ) -> rusqlite::Result<(Cow<'static, CStr>, Self)> {
        db.config(VTabConfig::DirectOnly)?;
        Ok((
            Cow::Borrowed(
                c"CREATE TABLE x(file TEXT, row INTEGER, geom BLOB, attributes TEXT, problem TEXT, path HIDDEN, options HIDDEN)",
            ),
            ReadTable {
                base: ffi::sqlite3_vtab::default(),
                state: aux.cloned().unwrap_or_default(),
            },
        ))
    }

    fn best_index(&self, info: &mut IndexInfo) -> rusqlite::Result<bool> {
        argument_plan(info, 5, 2, 1)
    }

    fn open(&'vtab mut self) -> rusqlite::Result<ReadCursor<'vtab>> {
        Ok(ReadCursor {
            base: ffi::sqlite3_vtab_cursor::default(),
            table: self,
            reader: None,
            row: None,
            count: 0,
        })
    }
}

/// The cursor: the reader and its current row.
#[repr(C)]
pub struct ReadCursor<'vtab> {
    base: ffi::sqlite3_vtab_cursor,
    table: &'vtab ReadTable,
    reader: Option<Reader>,
    row: Option<Row>,
    count: i64,
}

impl ReadCursor<'_> {
    fn advance(&mut self) -> rusqlite::Result<()> {
        let Some(reader) = self.reader.as_mut() else {
            self.row = None;
            return Ok(());
        };
        self.row = guard(READ, || reader.next_row().map_err(|e| table_error(READ, e)))?;
        self.count += 1;
        Ok(())
    }
}

// SAFETY: #[repr(C)] with the sqlite3_vtab_cursor base first.
unsafe impl VTabCursor for ReadCursor<'_> {
    fn filter(
        &mut self,
        idx: c_int,
        _s: Option<&str>,
        values: &Filters<'_>,
    ) -> rusqlite::Result<()> {
        self.reader = None;
        self.row = None;
        self.count = 0;
        if idx & 1 == 0 {
            return Err(table_error(
                READ,
                "needs a path: SELECT * FROM ambit_read('file.shp' [, options])",
            ));
        }
        let args = Args::new(
            READ,
            READ_PARAMS,
            arguments(idx, values, 2),
            &self.table.state,
        );
        let reader = guard(READ, || {
            let Some(path) = args.text(0)? else {
                return Ok(None);
            };
            let options = match args.text(1)? {
                Some(o) => Options::from_json(o).map_err(|e| table_error(READ, e))?,
                None => Options::default(),
            };
            Reader::open(path, options)
                .map(Some)
                .map_err(|e| table_error(READ, e))
        })?;
        self.reader = reader;
        self.advance()
    }

    fn next(&mut self) -> rusqlite::Result<()> {
        self.advance()
    }

    fn eof(&self) -> bool {
        self.row.is_none()
    }

    fn column(&self, ctx: &mut Context, i: c_int) -> rusqlite::Result<()> {
        let Some(r) = &self.row else {
            return ctx.set_result(&Value::Null);
        };
        match i {
            0 => ctx.set_result(&&*r.file),
            1 => ctx.set_result(&(r.row as i64)),
            2 => ctx.set_result(&r.geom),
            3 => ctx.set_result(&r.attributes),
            4 => ctx.set_result(&r.problem),
            _ => ctx.set_result(&Value::Null),
        }
    }

    fn rowid(&self) -> rusqlite::Result<i64> {
        Ok(self.count)
    }
}
