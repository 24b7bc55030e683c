//! ambit_sweep(layer, query [, max_m]): every row of `query` (its first
//! column an id of any type, its second a geometry) against a layer, on
//! all cores.
//!
//! ```text
//! SELECT id, reached, nearest_m, share
//! FROM ambit_sweep('parks', 'SELECT geoid, geom FROM blocks');
//! ```
//!
//! With `max_m` (metres, or a length with its unit as text), `nearest_m` is
//! NULL where no feature lies within `max_m`, as ambit_nearest's third
//! argument, and the nearest search stops there.
//!
//! Only the columns the statement uses are computed (SQLite tells the
//! table which, in its plan): `reached` alone is the cheapest, `share`
//! the dearest (select the columns you need; `SELECT *` computes all).
//! `share` is NULL for points and lines, which have no area.
//!
//! The query runs on the same connection. Its rows are read in chunks of
//! [`chunk_rows`] rows (copying each chunk's blobs) by the statement's
//! thread, up to [`READ_AHEAD`] chunks ahead; a thread of the sweep's own
//! hands them one after another to rayon (RAYON_NUM_THREADS honoured),
//! which evaluates each chunk's rows in parallel, while SQLite consumes
//! the rows of the chunk before (the buffers of about READ_AHEAD + 1
//! chunks in memory, reused from chunk to chunk), and rows come back in
//! input order, so the output never depends on the thread count or chunk
//! size; memory stays bounded by a few chunks whatever the number of
//! rows. `reached`, `nearest_m` and `share` equal ambit_reached,
//! ambit_nearest and ambit_share on the same row (NULL geometry: all NULL;
//! empty: 0, NULL and NULL). An interrupt (sqlite3_interrupt, Ctrl-C in the shell) stops the
//! sweep within milliseconds: the workers check a stop flag before every
//! row, which the statement's thread sets as soon as it sees the interrupt
//! (see crate::sql::interrupt). Progress (rows done,
//! rows per second, time left) goes to stderr when stderr is a terminal or
//! AMBIT_PROGRESS=1 (AMBIT_PROGRESS=0 silences it).
//!
//! Reading the query: rusqlite's statements borrow their connection, which
//! a virtual-table cursor cannot hold across calls, so [`RawQuery`] drives
//! the statement through SQLite's C API directly. Its `unsafe` blocks are
//! sound for the reasons given beside each: the handle is the connection
//! SQLite handed to this virtual table (valid while the table exists, and
//! nested statements on it are allowed), the statement is finalised exactly
//! once, and column pointers are copied before the next step.

use std::borrow::Cow;
use std::ffi::{c_int, CStr, CString};
use std::marker::PhantomData;
use std::panic::{catch_unwind, AssertUnwindSafe};
use std::sync::mpsc::{sync_channel, Receiver, RecvTimeoutError, SyncSender, TryRecvError};
use std::sync::Arc;
use std::time::{Duration, Instant};

use rayon::prelude::*;
use rusqlite::ffi;
use rusqlite::types::Value;
use rusqlite::vtab::{Context, Filters, IndexInfo, VTab, VTabConnection, VTabCursor};

use crate::blob;
use crate::interrupt::{Interrupt, StopFlag};
use crate::proximity::{quick, Layer, Prepared};
use crate::sql::interrupt::HostInterrupt;
use crate::sql::state::ConnState;
use crate::sql::tables::{argument_plan_with, arguments, table_error};
use crate::sql::{guard, interrupted, Args};

const SWEEP: &str = "ambit_sweep";
const SWEEP_PARAMS: &[&str] = &["layer", "query", "max_m"];

/// The most rows one parallel task evaluates before others can take the
/// rest of its share.
const ROWS_PER_TASK: usize = 16;

/// Rows per chunk: AMBIT_CHUNK_ROWS if set (1 or more), else 1024. Small
/// chunks keep the blobs read ahead in the processor's caches until the
/// workers decode them, and shorten the start and end of a sweep where
/// only the reader or only the workers run: on the 400 k-block bench
/// region the reached-only sweep on two cores took 0.38-0.42 s with 1024
/// rows against 0.50-0.58 s with 8192 (one core: the same).
pub fn chunk_rows() -> usize {
    std::env::var("AMBIT_CHUNK_ROWS")
        .ok()
        .and_then(|v| v.parse().ok())
        .filter(|&n: &usize| n >= 1)
        .unwrap_or(1024)
}

/// The handle of the connection a virtual table lives on.
#[derive(Clone, Copy)]
pub struct DbHandle(*mut ffi::sqlite3);

impl DbHandle {
    /// Wraps the handle of a live connection.
    ///
    /// # Safety
    /// `db` must be a connection that outlives every use of the handle.
    pub unsafe fn new(db: *mut ffi::sqlite3) -> DbHandle {
        DbHandle(db)
    }
}

/// A prepared statement driven through the C API (see the module doc).
pub struct RawQuery {
    db: *mut ffi::sqlite3,
    stmt: *mut ffi::sqlite3_stmt,
}

impl RawQuery {
    fn message(db: *mut ffi::sqlite3) -> String {
        // SAFETY: db is a live connection; sqlite3_errmsg returns a
        // NUL-terminated string owned by SQLite, copied here at once.
        unsafe { CStr::from_ptr(ffi::sqlite3_errmsg(db)) }
            .to_string_lossy()
            .into_owned()
    }

    /// Prepares `sql` (one statement) on the connection.
    pub fn prepare(handle: DbHandle, sql: &str) -> Result<RawQuery, String> {
        let db = handle.0;
        let text =
            CString::new(sql).map_err(|_| "the query contains a NUL character".to_string())?;
        let mut stmt = std::ptr::null_mut();
        let mut tail = std::ptr::null();
        // SAFETY: db is a live connection, text outlives the call, and the
        // out-pointers are valid locals.
        let rc = unsafe { ffi::sqlite3_prepare_v2(db, text.as_ptr(), -1, &mut stmt, &mut tail) };
        if rc != ffi::SQLITE_OK {
            return Err(RawQuery::message(db));
        }
        let query = RawQuery { db, stmt };
        if stmt.is_null() {
            return Err("the query is empty".to_string());
        }
        // SAFETY: tail points into `text` (or at its terminating NUL).
        let rest = unsafe { CStr::from_ptr(tail) }.to_string_lossy();
        if !rest.trim().trim_end_matches(';').trim().is_empty() {
            return Err("the query must be a single SELECT statement".to_string());
        }
        // SAFETY: stmt is a live prepared statement (owned by `query`).
        if unsafe { ffi::sqlite3_stmt_readonly(stmt) } == 0 {
            return Err(
                "the query must be a read-only SELECT statement; this one would change the database (INSERT, UPDATE or DELETE ... RETURNING, and other writes are refused), so it was not run".to_string(),
            );
        }
        Ok(query)
    }

    /// Columns of the result.
    pub fn columns(&self) -> usize {
        // SAFETY: stmt is a live prepared statement.
        unsafe { ffi::sqlite3_column_count(self.stmt) as usize }
    }

    /// Steps to the next row: `Ok(true)` with a row, `Ok(false)` at the
    /// end, or SQLite's message (an interrupt shows up here).
    pub fn step(&mut self) -> Result<bool, String> {
        // SAFETY: stmt is a live prepared statement.
        match unsafe { ffi::sqlite3_step(self.stmt) } {
            ffi::SQLITE_ROW => Ok(true),
            ffi::SQLITE_DONE => Ok(false),
            _ => Err(RawQuery::message(self.db)),
        }
    }

    /// Column `i` of the current row as a geometry cell: a blob is appended
    /// to `arena` (one allocation per chunk instead of one per row) and
    /// named by its range there; NULL stays NULL; other values are copied.
    fn geometry_cell(&self, i: usize, arena: &mut Vec<u8>) -> Cell {
        // SAFETY: stmt has a current row (step returned true) and i is a
        // column index below columns(); the blob pointer is copied from
        // before any further call on the statement.
        unsafe {
            match ffi::sqlite3_column_type(self.stmt, i as c_int) {
                ffi::SQLITE_BLOB => {
                    let p = ffi::sqlite3_column_blob(self.stmt, i as c_int).cast::<u8>();
                    let n = ffi::sqlite3_column_bytes(self.stmt, i as c_int) as usize;
                    let start = arena.len();
                    if !p.is_null() {
                        arena.extend_from_slice(std::slice::from_raw_parts(p, n));
                    }
                    Cell::Blob(start..arena.len())
                }
                ffi::SQLITE_NULL => Cell::Null,
                _ => Cell::Other(self.value(i)),
            }
        }
    }

    /// Column `i` of the current row, copied.
    pub fn value(&self, i: usize) -> Value {
        let i = i as c_int;
        // SAFETY: stmt has a current row (step returned true) and i is a
        // column index below columns(); blob and text pointers are copied
        // before any further call on the statement.
        unsafe {
            match ffi::sqlite3_column_type(self.stmt, i) {
                ffi::SQLITE_INTEGER => Value::Integer(ffi::sqlite3_column_int64(self.stmt, i)),
                ffi::SQLITE_FLOAT => Value::Real(ffi::sqlite3_column_double(self.stmt, i)),
                ffi::SQLITE_TEXT => {
                    let p = ffi::sqlite3_column_text(self.stmt, i);
                    let n = ffi::sqlite3_column_bytes(self.stmt, i) as usize;
                    let bytes = if p.is_null() {
                        &[][..]
                    } else {
                        std::slice::from_raw_parts(p, n)
                    };
                    Value::Text(String::from_utf8_lossy(bytes).into_owned())
                }
                ffi::SQLITE_BLOB => {
                    let p = ffi::sqlite3_column_blob(self.stmt, i).cast::<u8>();
                    let n = ffi::sqlite3_column_bytes(self.stmt, i) as usize;
                    Value::Blob(if p.is_null() {
                        Vec::new()
                    } else {
                        std::slice::from_raw_parts(p, n).to_vec()
                    })
                }
                _ => Value::Null,
            }
        }
    }
}

impl Drop for RawQuery {
    fn drop(&mut self) {
        // SAFETY: stmt came from sqlite3_prepare_v2 and is finalised once.
        unsafe {
            ffi::sqlite3_finalize(self.stmt);
        }
    }
}

/// The geometry column of one input row: its blob's bytes in the chunk's
/// arena, NULL, or any other value (an error when evaluated).
enum Cell {
    Null,
    Blob(std::ops::Range<usize>),
    Other(Value),
}

/// Input rows read from the query: ids, and geometries whose blobs lie
/// one after another in `arena`.
#[derive(Default)]
struct Chunk {
    ids: Vec<Value>,
    cells: Vec<Cell>,
    arena: Vec<u8>,
}

impl Chunk {
    fn len(&self) -> usize {
        self.ids.len()
    }
}

/// A geometry cell with its bytes, as [`evaluate`] reads it.
enum Geom<'a> {
    Null,
    Blob(&'a [u8]),
    Other(&'a Value),
}

/// One output row.
struct Row {
    id: Value,
    reached: Value,
    nearest: Value,
    share: Value,
}

/// The result columns, as numbered in the table's schema.
const COL_REACHED: u32 = 1;
const COL_NEAREST: u32 = 2;
const COL_SHARE: u32 = 3;
/// The first hidden (argument) column.
const FIRST_ARG: c_int = 4;
/// Where the plan number keeps the mask of result columns used.
const USED_SHIFT: u32 = 16;

/// Which result columns a statement uses.
#[derive(Clone, Copy, Debug)]
struct Wanted(u32);

impl Wanted {
    /// From SQLite's column-used mask (bit 63 stands for columns 63 and up).
    fn from_col_used(mask: u64) -> Wanted {
        Wanted((mask & 0b1110) as u32)
    }

    fn has(self, col: u32) -> bool {
        self.0 & (1 << col) != 0
    }
}

/// Evaluates one row against the layer, computing only what is wanted.
fn evaluate(
    layer: &Layer,
    id: Value,
    geom: Geom<'_>,
    wanted: Wanted,
    max_m: Option<f64>,
    stop: &dyn Interrupt,
) -> Result<Row, String> {
    let (reached, nearest, share) = match geom {
        Geom::Null => (Value::Null, Value::Null, Value::Null),
        Geom::Blob(bytes) => {
            let fail = |e: &dyn std::fmt::Display| format!("row with id {}: {e}", show(&id));
            let decoded = blob::decode_valid(bytes, stop).map_err(|e| fail(&e))?;
            // Reached alone: decided from the envelope and a few vertices
            // where the layer's boxes and balls settle it, otherwise by the
            // exact test (crate::proximity::quick), as ambit_reached does.
            if wanted.0 == 1 << COL_REACHED {
                let r = quick::reached(layer, &decoded.geometry, stop).map_err(|e| fail(&e))?;
                return Ok(Row {
                    id,
                    reached: Value::Integer(r.into()),
                    nearest: Value::Null,
                    share: Value::Null,
                });
            }
            let g = Prepared::build(&decoded.geometry, stop).map_err(|e| fail(&e))?;
            let (reached, nearest) = match (wanted.has(COL_REACHED), wanted.has(COL_NEAREST)) {
                (true, true) => {
                    let (r, n) = layer
                        .reached_and_nearest_until(&g, max_m, stop)
                        .map_err(|e| fail(&e))?;
                    (Some(r), n)
                }
                (true, false) => (
                    Some(layer.reached_until(&g, stop).map_err(|e| fail(&e))?),
                    None,
                ),
                (false, true) => (
                    None,
                    layer.nearest_until(&g, max_m, stop).map_err(|e| fail(&e))?,
                ),
                (false, false) => (None, None),
            };
            // Points and lines have no area: their share is NULL here
            // (ambit_share refuses them), so that SELECT * works on any
            // geometry.
            let share = if wanted.has(COL_SHARE) && decoded.geometry.require_polygonal("").is_ok() {
                layer.share(&g, stop).map_err(|e| fail(&e))?
            } else {
                None
            };
            (
                reached.map_or(Value::Null, |r| Value::Integer(r.into())),
                nearest.map_or(Value::Null, Value::Real),
                share.map_or(Value::Null, Value::Real),
            )
        }
        Geom::Other(other) => {
            return Err(format!(
                "row with id {}: the query's second column must be a geometry blob, got {}",
                show(&id),
                kind(other)
            ))
        }
    };
    Ok(Row {
        id,
        reached,
        nearest,
        share,
    })
}

fn show(v: &Value) -> String {
    match v {
        Value::Integer(i) => i.to_string(),
        Value::Real(r) => r.to_string(),
        Value::Text(t) => format!("'{t}'"),
        Value::Blob(_) => "(a blob)".to_string(),
        Value::Null => "NULL".to_string(),
    }
}

fn kind(v: &Value) -> &'static str {
    match v {
        Value::Integer(_) => "an integer",
        Value::Real(_) => "a real",
        Value::Text(_) => "text",
        Value::Blob(_) => "a blob",
        Value::Null => "NULL",
    }
}

/// Progress on stderr, at most twice a second.
struct Progress {
    total: Option<u64>,
    done: u64,
    start: Instant,
    last: Instant,
}

impl Progress {
    fn enabled() -> bool {
        crate::sql::progress::enabled()
    }

    fn report(&mut self, rows: u64, last: bool) {
        self.done += rows;
        let now = Instant::now();
        if !last && now.duration_since(self.last).as_secs_f64() < 0.5 {
            return;
        }
        self.last = now;
        let secs = now.duration_since(self.start).as_secs_f64().max(1e-9);
        let rate = self.done as f64 / secs;
        let left = match self.total {
            Some(t) if rate > 0.0 && t >= self.done => {
                format!(", {:.0} s left", (t - self.done) as f64 / rate)
            }
            _ => String::new(),
        };
        let of = self.total.map_or(String::new(), |t| format!(" of {t}"));
        eprint!(
            "\r{SWEEP}: {}{of} rows, {rate:.0} rows/s{left}   {}",
            self.done,
            if last { "\n" } else { "" }
        );
    }
}

#[repr(C)]
pub struct SweepTable {
    base: ffi::sqlite3_vtab,
    state: Arc<ConnState>,
    db: DbHandle,
}

// SAFETY: #[repr(C)] with the sqlite3_vtab base first (see tables.rs).
unsafe impl<'vtab> VTab<'vtab> for SweepTable {
    type Aux = Arc<ConnState>;
    type Cursor = SweepCursor<'vtab>;

    fn connect(
        db: &mut VTabConnection,
        aux: Option<&Arc<ConnState>>,
        _module: &[u8],
        _database: &[u8],
        _table: &[u8],
        _args: &[&[u8]],
    ) -> rusqlite::Result<(Cow<'static, CStr>, Self)> {
        // SAFETY: the handle of the connection this table lives on, which
        // outlives the table; it is only used to prepare the sweep's query
        // on that same connection while the table exists (module doc).
        let handle = unsafe { DbHandle::new(db.handle()) };
        Ok((
            Cow::Borrowed(
                c"CREATE TABLE x(id, reached INTEGER, nearest_m REAL, share REAL, layer HIDDEN, query HIDDEN, max_m HIDDEN)",
            ),
            SweepTable {
                base: ffi::sqlite3_vtab::default(),
                state: aux.cloned().unwrap_or_default(),
                db: handle,
            },
        ))
    }

    fn best_index(&self, info: &mut IndexInfo) -> rusqlite::Result<bool> {
        let used = Wanted::from_col_used(info.col_used());
        argument_plan_with(info, FIRST_ARG, 3, 2, (used.0 << USED_SHIFT) as c_int)
    }

    fn open(&'vtab mut self) -> rusqlite::Result<SweepCursor<'vtab>> {
        Ok(SweepCursor {
            base: ffi::sqlite3_vtab_cursor::default(),
            table: self,
            run: None,
            rows: Vec::new(),
            at: 0,
            phantom: PhantomData,
        })
    }
}

/// A running sweep.
struct Run {
    query: RawQuery,
    /// The query has no more rows.
    finished: bool,
    /// The chunks read and not yet handed out, evaluated in order.
    pipeline: Pipeline,
    /// The largest arena a chunk has needed (the next one reserves that).
    arena_hint: usize,
    progress: Option<Progress>,
}

#[repr(C)]
pub struct SweepCursor<'vtab> {
    base: ffi::sqlite3_vtab_cursor,
    table: &'vtab SweepTable,
    run: Option<Run>,
    rows: Vec<Row>,
    at: usize,
    phantom: PhantomData<&'vtab SweepTable>,
}

impl SweepCursor<'_> {
    fn start(&mut self, args: &Args, wanted: Wanted) -> rusqlite::Result<()> {
        let name = args.required_text(0)?;
        let sql = args.required_text(1)?;
        let max_m = args.distance(2)?;
        let layer = args.state().layer(SWEEP, name)?;
        let query = RawQuery::prepare(self.table.db, sql).map_err(|e| args.fail_arg(1, e))?;
        if query.columns() < 2 {
            return Err(args.fail_arg(
                1,
                "must return two columns, an id and a geometry: SELECT id, geom FROM ...",
            ));
        }
        let progress = Progress::enabled().then(|| {
            let total = RawQuery::prepare(self.table.db, &format!("SELECT count(*) FROM ({sql})"))
                .ok()
                .and_then(|mut q| match q.step() {
                    Ok(true) => match q.value(0) {
                        Value::Integer(n) => Some(n as u64),
                        _ => None,
                    },
                    _ => None,
                });
            Progress {
                total,
                done: 0,
                start: Instant::now(),
                last: Instant::now(),
            }
        });
        let pipeline = Pipeline::start(layer, wanted, max_m)
            .map_err(|e| table_error(SWEEP, format!("could not start its worker: {e}")))?;
        self.run = Some(Run {
            query,
            finished: false,
            pipeline,
            arena_hint: 0,
            progress,
        });
        self.next_chunk()
    }

    /// Reads `run`'s next chunk of rows (fewer at the end, then
    /// `run.finished`).
    fn read_chunk(run: &mut Run) -> rusqlite::Result<Chunk> {
        let limit = chunk_rows();
        // A chunk the workers are done with, emptied, or a new one.
        let mut chunk = run.pipeline.recycled().unwrap_or_else(|| Chunk {
            ids: Vec::with_capacity(limit.min(1 << 16)),
            cells: Vec::with_capacity(limit.min(1 << 16)),
            arena: Vec::with_capacity(run.arena_hint),
        });
        while chunk.len() < limit {
            match run.query.step() {
                Ok(true) => {
                    chunk.ids.push(run.query.value(0));
                    let cell = run.query.geometry_cell(1, &mut chunk.arena);
                    chunk.cells.push(cell);
                }
                Ok(false) => {
                    run.finished = true;
                    break;
                }
                Err(e) => {
                    run.pipeline.stop.set();
                    return Err(table_error(SWEEP, format!("the query failed: {e}")));
                }
            }
        }
        run.arena_hint = run.arena_hint.max(chunk.arena.len());
        Ok(chunk)
    }

    /// Hands the next chunk's rows to the cursor. Pipelined: this thread
    /// (which alone may call SQLite) reads up to [`READ_AHEAD`] chunks
    /// ahead of the one handed out, while the workers evaluate them one
    /// after another without waiting for this thread, and SQLite consumes
    /// the rows handed over. It blocks only when the read-ahead is full or
    /// the query is done and the next chunk is still being evaluated.
    fn next_chunk(&mut self) -> rusqlite::Result<()> {
        self.rows.clear();
        self.at = 0;
        let Some(run) = self.run.as_mut() else {
            return Ok(());
        };
        // SAFETY: the handle is the live connection of this virtual table,
        // and `host` is used only here, on the thread running the statement.
        let host = unsafe { HostInterrupt::of_db(self.table.db.0) };
        let outcome = loop {
            if let Some(outcome) = run.pipeline.try_next() {
                break outcome;
            }
            if !run.finished && run.pipeline.in_flight < READ_AHEAD {
                let chunk = SweepCursor::read_chunk(run)?;
                if chunk.len() > 0 {
                    run.pipeline.send(chunk);
                }
                continue;
            }
            if run.pipeline.in_flight == 0 {
                return Ok(());
            }
            break run.pipeline.wait(&host);
        };
        let (rows, n) = match outcome {
            Ok(rows) => {
                let n = rows.len() as u64;
                (rows, n)
            }
            Err(Some(_)) if host.requested() => return Err(interrupted(SWEEP)),
            Err(Some(message)) => return Err(table_error(SWEEP, message)),
            Err(None) => return Err(interrupted(SWEEP)),
        };
        self.rows = rows;
        if let Some(p) = run.progress.as_mut() {
            p.report(n, run.finished && run.pipeline.in_flight == 0);
        }
        Ok(())
    }
}

/// Chunks read from the query ahead of the one being handed out (each
/// holds its rows' blobs: at most this many plus the one handed out are in
/// memory).
const READ_AHEAD: usize = 3;

/// What the evaluating thread sends back for one chunk, in input order:
/// its rows, or the first error (`None`: stopped).
type Outcome = Result<Vec<Row>, Option<String>>;

/// The chunks on their way through the workers: a thread of its own
/// takes them in order from `input` and evaluates each on the rayon pool
/// ([`evaluate_chunk`]), sending the rows to `output`. The one stop flag
/// serves every chunk: set on an interrupt, an error while reading, or
/// when the sweep is dropped (the cursor closed early), it makes the
/// workers give up before their next row.
struct Pipeline {
    input: Option<SyncSender<Chunk>>,
    output: Receiver<Outcome>,
    /// Chunks evaluated, emptied for the reader to fill again: a chunk's
    /// buffers (its arena holds megabytes) are allocated a few times per
    /// sweep, not once per chunk. Fresh allocations of that size are
    /// mapped pages, each zeroed by the kernel on first touch on the
    /// reading thread and unmapped when freed: measurable serial work,
    /// and page-table traffic for the other cores.
    recycle: Receiver<Chunk>,
    /// Chunks sent and not yet received back.
    in_flight: usize,
    stop: Arc<StopFlag>,
}

impl Pipeline {
    fn start(layer: Arc<Layer>, wanted: Wanted, max_m: Option<f64>) -> std::io::Result<Pipeline> {
        let stop = Arc::new(StopFlag::new());
        let (input, chunks) = sync_channel::<Chunk>(READ_AHEAD);
        let (sender, output) = sync_channel::<Outcome>(READ_AHEAD);
        let (give_back, recycle) = sync_channel::<Chunk>(READ_AHEAD + 1);
        let flag = Arc::clone(&stop);
        std::thread::Builder::new()
            .name("ambit-sweep".to_string())
            .spawn(move || {
                for mut chunk in chunks {
                    let out = if flag.requested() {
                        Err(None)
                    } else {
                        evaluate_chunk(&layer, &mut chunk, wanted, max_m, &flag)
                    };
                    // The cursor may have gone; then nobody needs the rows.
                    if sender.send(out).is_err() {
                        break;
                    }
                    // Its buffers go back to the reader (none is kept if
                    // the reader has enough already).
                    chunk.ids.clear();
                    chunk.cells.clear();
                    chunk.arena.clear();
                    let _ = give_back.try_send(chunk);
                }
            })?;
        Ok(Pipeline {
            input: Some(input),
            output,
            recycle,
            in_flight: 0,
            stop,
        })
    }

    /// Queues a chunk for evaluation (never blocks: at most READ_AHEAD are
    /// in flight).
    fn send(&mut self, chunk: Chunk) {
        if let Some(input) = &self.input {
            // The thread lives as long as `output`, so this only fails if
            // it died, which `wait` reports.
            let _ = input.send(chunk);
        }
        self.in_flight += 1;
    }

    /// An emptied chunk to fill, if one has come back.
    fn recycled(&self) -> Option<Chunk> {
        self.recycle.try_recv().ok()
    }

    /// The oldest chunk's rows if they are ready.
    fn try_next(&mut self) -> Option<Outcome> {
        if self.in_flight == 0 {
            return None;
        }
        match self.output.try_recv() {
            Ok(out) => {
                self.in_flight -= 1;
                Some(out)
            }
            Err(TryRecvError::Empty) => None,
            Err(TryRecvError::Disconnected) => {
                self.in_flight = 0;
                Some(Err(Some(
                    "internal error: the sweep's workers stopped".to_string(),
                )))
            }
        }
    }

    /// The oldest chunk's rows, watching `host` for an interrupt meanwhile
    /// (the flag is set within a few milliseconds of one).
    fn wait(&mut self, host: &HostInterrupt<'_>) -> Outcome {
        loop {
            match self.output.recv_timeout(Duration::from_millis(5)) {
                Ok(out) => {
                    self.in_flight -= 1;
                    return out;
                }
                Err(RecvTimeoutError::Timeout) => {
                    if host.requested() {
                        self.stop.set();
                    }
                }
                Err(RecvTimeoutError::Disconnected) => {
                    self.in_flight = 0;
                    return Err(Some(
                        "internal error: the sweep's workers stopped".to_string(),
                    ));
                }
            }
        }
    }
}

impl Drop for Pipeline {
    fn drop(&mut self) {
        self.stop.set();
        // Closing the input ends the evaluating thread after its chunk.
        self.input = None;
    }
}

/// Evaluates one chunk on the rayon pool (RAYON_NUM_THREADS honoured).
/// Rows differ in cost by 1000x (a block beside a park of thousands of
/// edges against one in the open), and neighbours in a table are often
/// alike; leaves of at most ROWS_PER_TASK rows let idle threads take work
/// from a busy one instead of waiting for its whole half. The workers
/// check the stop flag before every row (and the costly searches inside a
/// row). A panic is caught here and becomes an error: it must not reach
/// rayon, which would abort the host.
fn evaluate_chunk(
    layer: &Layer,
    chunk: &mut Chunk,
    wanted: Wanted,
    max_m: Option<f64>,
    flag: &StopFlag,
) -> Outcome {
    let Chunk { ids, cells, arena } = chunk;
    let arena = &*arena;
    let work = || {
        ids.par_drain(..)
            .zip(cells.par_iter())
            .with_max_len(ROWS_PER_TASK)
            .map(|(id, cell)| {
                if flag.requested() {
                    return Err(None);
                }
                let geom = match &cell {
                    Cell::Null => Geom::Null,
                    Cell::Blob(range) => Geom::Blob(&arena[range.clone()]),
                    Cell::Other(v) => Geom::Other(v),
                };
                evaluate(layer, id, geom, wanted, max_m, flag).map_err(Some)
            })
            .collect()
    };
    catch_unwind(AssertUnwindSafe(work)).unwrap_or_else(|panic| {
        let what = panic
            .downcast_ref::<&str>()
            .map(|s| s.to_string())
            .or_else(|| panic.downcast_ref::<String>().cloned())
            .unwrap_or_default();
        Err(Some(format!(
            "internal error, please report it with the query that caused it: {what}"
        )))
    })
}

// SAFETY: #[repr(C)] with the sqlite3_vtab_cursor base first.
unsafe impl VTabCursor for SweepCursor<'_> {
    fn filter(
        &mut self,
        idx: c_int,
        _s: Option<&str>,
        values: &Filters<'_>,
    ) -> rusqlite::Result<()> {
        if idx & 0b11 != 0b11 {
            return Err(table_error(
                SWEEP,
                "needs a layer name and a query: SELECT * FROM ambit_sweep('layer', 'SELECT id, geom FROM ...')",
            ));
        }
        let state = Arc::clone(&self.table.state);
        let args = Args::new(SWEEP, SWEEP_PARAMS, arguments(idx, values, 3), &state);
        let wanted = Wanted((idx as u32) >> USED_SHIFT);
        self.run = None;
        guard(SWEEP, || self.start(&args, wanted))
    }

    fn next(&mut self) -> rusqlite::Result<()> {
        self.at += 1;
        if self.at >= self.rows.len() {
            guard(SWEEP, || self.next_chunk())?;
        }
        Ok(())
    }

    fn eof(&self) -> bool {
        self.at >= self.rows.len()
    }

    fn column(&self, ctx: &mut Context, i: c_int) -> rusqlite::Result<()> {
        let row = &self.rows[self.at];
        match i {
            0 => ctx.set_result(&row.id),
            1 => ctx.set_result(&row.reached),
            2 => ctx.set_result(&row.nearest),
            3 => ctx.set_result(&row.share),
            _ => ctx.set_result(&Value::Null),
        }
    }

    fn rowid(&self) -> rusqlite::Result<i64> {
        Ok(self.at as i64 + 1)
    }
}
