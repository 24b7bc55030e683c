//! ambit's table-valued functions, as SQLite virtual tables
//! (<https://sqlite.org/vtab.html>, eponymous-only modules):
//!
//! ```text
//! SELECT * FROM ambit_layers;  -> name, features, vertices, bytes, west, south, east, north
//! SELECT * FROM ambit_near('clinics', geom [, m]);  -> feature_id, distance_m
//! SELECT * FROM ambit_sweep('parks', 'SELECT id, geom FROM blocks');
//!                                                   -> id, reached, nearest_m
//! ```
//!
//! How SQL maps onto the callbacks: `FROM ambit_near(a, b, c)` makes
//! SQLite call xBestIndex with equality constraints on the hidden columns
//! `layer`, `geom`, `metres`; [`argument_plan`] hands them to xFilter as
//! arguments in that order; xFilter computes all rows of the call (for
//! ambit_sweep: of its current chunk); xNext / xEof / xColumn walk them.
//! A correlated use (`FROM blocks b, ambit_near('clinics', b.geom) n`)
//! runs xFilter once per block.
//!
//! `unsafe impl` below is required by rusqlite's `VTab` and `VTabCursor`
//! traits, whose contract is that the struct is `#[repr(C)]` with the
//! SQLite base struct as its first field; every struct here is declared
//! that way, which is what makes the implementations sound.

use std::borrow::Cow;
use std::ffi::{c_int, CStr};
use std::marker::PhantomData;
use std::sync::Arc;

use rusqlite::types::{Value, ValueRef};
use rusqlite::vtab::{
    Context, Filters, IndexConstraintOp, IndexInfo, Module, VTab, VTabConfig, VTabConnection,
    VTabCursor,
};
use rusqlite::{ffi, Connection};

use crate::error::GeomError;
use crate::proximity::layer::Extent;
use crate::proximity::Prepared;
use crate::sql::interrupt::HostInterrupt;
use crate::sql::layer::distance_arg;
use crate::sql::state::ConnState;
use crate::sql::{guard, sweep, Args};

/// Registers ambit_layers, ambit_near and ambit_sweep.
pub fn register(conn: &Connection, state: &Arc<ConnState>) -> rusqlite::Result<()> {
    const LAYERS: Module<RowsTable<Layers>> = Module::eponymous_only_module();
    const NEAR_MODULE: Module<RowsTable<Near>> = Module::eponymous_only_module();
    const SWEEP_MODULE: Module<sweep::SweepTable> = Module::eponymous_only_module();
    conn.create_module(c"ambit_layers", &LAYERS, Some(Arc::clone(state)))?;
    conn.create_module(c"ambit_near", &NEAR_MODULE, Some(Arc::clone(state)))?;
    conn.create_module(c"ambit_sweep", &SWEEP_MODULE, Some(Arc::clone(state)))?;
    Ok(())
}

/// An error from a table-valued function, `"<name>: <message>"`.
pub fn table_error(name: &str, message: impl std::fmt::Display) -> rusqlite::Error {
    rusqlite::Error::ModuleError(format!("{name}: {message}"))
}

/// Plans the arguments of a table-valued function whose hidden argument
/// columns start at `first_arg` and number `args`, the first `required` of
/// them needed. Equality constraints on them become xFilter arguments in
/// column order; `idx_num` has bit k set when argument k is given.
/// Returns `Ok(false)` (SQLITE_CONSTRAINT: try another join order) when an
/// argument the statement gives is not usable yet: a needed one, or an
/// optional one taken from another table of the join (`ambit_near('l',
/// b.geom, p.metres)`), which a plan without it would leave to SQLite to
/// compare with the hidden column, so no row would come back.
pub fn argument_plan(
    info: &mut IndexInfo,
    first_arg: c_int,
    args: usize,
    required: usize,
) -> rusqlite::Result<bool> {
    argument_plan_with(info, first_arg, args, required, 0)
}

/// [`argument_plan`], with `extra` bits (above bit 15, for the table's own
/// use) added to the plan number.
pub fn argument_plan_with(
    info: &mut IndexInfo,
    first_arg: c_int,
    args: usize,
    required: usize,
    extra: c_int,
) -> rusqlite::Result<bool> {
    let mut slot: Vec<Option<usize>> = vec![None; args];
    let mut unusable = vec![false; args];
    for (i, c) in info.constraints().enumerate() {
        let k = c.column() - first_arg;
        if k < 0 || k as usize >= args {
            continue;
        }
        let k = k as usize;
        if !c.is_usable() {
            unusable[k] = true;
        } else if c.operator() == IndexConstraintOp::SQLITE_INDEX_CONSTRAINT_EQ {
            slot[k] = Some(i);
        }
    }
    if (0..args).any(|k| slot[k].is_none() && unusable[k]) {
        return Ok(false);
    }
    let mut idx_num = 0;
    let mut argv = 0;
    for (k, s) in slot.iter().enumerate() {
        if let Some(i) = s {
            argv += 1;
            idx_num |= 1 << k;
            let mut usage = info.constraint_usage(*i);
            usage.set_argv_index(argv);
            usage.set_omit(true);
        }
    }
    info.set_idx_num(idx_num | extra);
    info.set_estimated_cost(if (0..required).all(|k| slot[k].is_some()) {
        10.0
    } else {
        1e12
    });
    Ok(true)
}

/// The filter arguments laid out in parameter order, NULL where absent.
pub fn arguments<'a>(idx_num: c_int, values: &'a Filters<'a>, params: usize) -> Vec<ValueRef<'a>> {
    let mut given = values.iter();
    (0..params)
        .map(|k| {
            if idx_num & (1 << k) != 0 {
                given.next().unwrap_or(ValueRef::Null)
            } else {
                ValueRef::Null
            }
        })
        .collect()
}

/// What distinguishes one row-at-once table-valued function from another:
/// its schema, its argument plan, and how a call's rows are computed.
pub trait RowSource: 'static {
    /// The `CREATE TABLE` statement SQLite is told.
    const SCHEMA: &'static CStr;
    /// xBestIndex: the argument plan (see [`argument_plan`]).
    fn plan(info: &mut IndexInfo) -> rusqlite::Result<bool>;
    /// xFilter: all rows of one call, each with a value per visible column.
    fn rows(
        state: &Arc<ConnState>,
        host: HostInterrupt<'_>,
        idx: c_int,
        values: &Filters<'_>,
    ) -> rusqlite::Result<Vec<Vec<Value>>>;
}

/// A table-valued function whose rows are computed whole by `S`.
#[repr(C)]
pub struct RowsTable<S: RowSource> {
    base: ffi::sqlite3_vtab,
    state: Arc<ConnState>,
    /// The handle of the connection the table lives on, for its
    /// statements' interrupt flag.
    db: *mut ffi::sqlite3,
    source: PhantomData<S>,
}

// SAFETY: #[repr(C)] with the sqlite3_vtab base first (see the module doc).
unsafe impl<'vtab, S: RowSource> VTab<'vtab> for RowsTable<S> {
    type Aux = Arc<ConnState>;
    type Cursor = RowsCursor<'vtab, S>;

    fn connect(
        db: &mut VTabConnection,
        aux: Option<&Arc<ConnState>>,
        _module: &[u8],
        _database: &[u8],
        _table: &[u8],
        _args: &[&[u8]],
    ) -> rusqlite::Result<(Cow<'static, CStr>, Self)> {
        db.config(VTabConfig::Innocuous)?;
        Ok((
            Cow::Borrowed(S::SCHEMA),
            RowsTable {
                base: ffi::sqlite3_vtab::default(),
                state: aux.cloned().unwrap_or_default(),
                // SAFETY: the handle of the connection this table lives on,
                // which outlives the table; it is only read by xFilter,
                // which runs on that connection's statement thread.
                db: unsafe { db.handle() },
                source: PhantomData,
            },
        ))
    }

    fn best_index(&self, info: &mut IndexInfo) -> rusqlite::Result<bool> {
        S::plan(info)
    }

    fn open(&'vtab mut self) -> rusqlite::Result<RowsCursor<'vtab, S>> {
        Ok(RowsCursor {
            base: ffi::sqlite3_vtab_cursor::default(),
            table: self,
            rows: Vec::new(),
            at: 0,
        })
    }
}

/// The cursor of a [`RowsTable`]: the rows of the current call.
#[repr(C)]
pub struct RowsCursor<'vtab, S: RowSource> {
    base: ffi::sqlite3_vtab_cursor,
    table: &'vtab RowsTable<S>,
    rows: Vec<Vec<Value>>,
    at: usize,
}

// SAFETY: #[repr(C)] with the sqlite3_vtab_cursor base first.
unsafe impl<S: RowSource> VTabCursor for RowsCursor<'_, S> {
    fn filter(
        &mut self,
        idx: c_int,
        _s: Option<&str>,
        values: &Filters<'_>,
    ) -> rusqlite::Result<()> {
        // SAFETY: the table's connection outlives this call, and xFilter
        // runs on the thread stepping the statement (the table's `db`).
        let host = unsafe { HostInterrupt::of_db(self.table.db) };
        self.rows = S::rows(&self.table.state, host, idx, values)?;
        self.at = 0;
        Ok(())
    }

    fn next(&mut self) -> rusqlite::Result<()> {
        self.at += 1;
        Ok(())
    }

    fn eof(&self) -> bool {
        self.at >= self.rows.len()
    }

    fn column(&self, ctx: &mut Context, i: c_int) -> rusqlite::Result<()> {
        ctx.set_result(self.rows[self.at].get(i as usize).unwrap_or(&Value::Null))
    }

    fn rowid(&self) -> rusqlite::Result<i64> {
        Ok(self.at as i64 + 1)
    }
}

/// ambit_layers: name, features, vertices, bytes, and the extent of the
/// vertices (west, south, east, north in degrees; NULL for an empty
/// layer) of every layer.
pub struct Layers;

impl RowSource for Layers {
    const SCHEMA: &'static CStr =
        c"CREATE TABLE x(name TEXT, features INTEGER, vertices INTEGER, bytes INTEGER, west REAL, south REAL, east REAL, north REAL)";

    fn plan(info: &mut IndexInfo) -> rusqlite::Result<bool> {
        info.set_estimated_cost(10.0);
        Ok(true)
    }

    fn rows(
        state: &Arc<ConnState>,
        _host: HostInterrupt<'_>,
        _idx: c_int,
        _values: &Filters<'_>,
    ) -> rusqlite::Result<Vec<Vec<Value>>> {
        Ok(state
            .all()
            .into_iter()
            .map(|(name, layer)| {
                let extent = layer.extent();
                let side = |f: fn(&Extent) -> f64| {
                    extent.as_ref().map_or(Value::Null, |e| Value::Real(f(e)))
                };
                vec![
                    Value::Text(name),
                    Value::Integer(layer.features().len() as i64),
                    Value::Integer(layer.vertices() as i64),
                    Value::Integer(layer.bytes() as i64),
                    side(|e| e.west),
                    side(|e| e.south),
                    side(|e| e.east),
                    side(|e| e.north),
                ]
            })
            .collect())
    }
}

const NEAR: &str = "ambit_near";
const NEAR_PARAMS: &[&str] = &["layer", "geom", "metres"];

/// ambit_near(layer, geom [, metres]): feature_id, distance_m.
pub struct Near;

impl RowSource for Near {
    const SCHEMA: &'static CStr =
        c"CREATE TABLE x(feature_id INTEGER, distance_m REAL, layer HIDDEN, geom HIDDEN, metres HIDDEN)";

    fn plan(info: &mut IndexInfo) -> rusqlite::Result<bool> {
        argument_plan(info, 2, 3, 2)
    }

    fn rows(
        state: &Arc<ConnState>,
        host: HostInterrupt<'_>,
        idx: c_int,
        values: &Filters<'_>,
    ) -> rusqlite::Result<Vec<Vec<Value>>> {
        if idx & 0b11 != 0b11 {
            return Err(table_error(
                NEAR,
                "needs a layer name and a geometry: SELECT * FROM ambit_near('layer', geom [, metres])",
            ));
        }
        let args = Args::new(NEAR, NEAR_PARAMS, arguments(idx, values, 3), state).watching(host);
        guard(NEAR, || {
            let Some(name) = args.text(0)? else {
                return Ok(Vec::new());
            };
            let layer = args.state().layer(NEAR, name)?;
            let metres = distance_arg(&args, 2)?;
            let near = match args.geometry(1)? {
                Some(d) => {
                    let stop = args.interrupt();
                    let core = |e: GeomError| match e {
                        GeomError::Interrupted => crate::sql::interrupted(NEAR),
                        e => args.fail_arg(1, e),
                    };
                    let g = Prepared::build(&d.geometry, &stop).map_err(core)?;
                    layer.near_until(&g, metres, &stop).map_err(core)?
                }
                None => Vec::new(),
            };
            Ok(near
                .into_iter()
                .map(|(id, d)| vec![Value::Integer(id), Value::Real(d)])
                .collect())
        })
    }
}
