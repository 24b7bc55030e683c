//! Layers from SQL: the aggregate ambit_layer that builds them, and the
//! scalar questions asked of them (ambit_reached, ambit_nearest,
//! ambit_count, ambit_layer_drop). The index and the answers are in
//! crate::proximity::layer.

use std::sync::Arc;

use rusqlite::functions::{Aggregate, Context, FunctionFlags};
use rusqlite::types::Value;
use rusqlite::Connection;

use crate::blob;
use crate::error::GeomError;
use crate::geometry::Geometry;
use crate::interrupt::Interrupt;
use crate::memory;
use crate::proximity::{quick, Feature, Layer, Prepared};
use crate::sql::interrupt::{run_parallel, HostInterrupt};
use crate::sql::state::ConnState;
use crate::sql::{error, guard, interrupted, progress, Args, SqlFunction, SqlResult};

pub const FUNCTIONS: &[SqlFunction] = &[
    SqlFunction {
        name: "ambit_layer_drop",
        params: &["name"],
        optional: 0,
        deterministic: false,
        body: drop_layer,
    },
    SqlFunction {
        name: "ambit_reached",
        params: &["layer", "geom"],
        optional: 0,
        deterministic: false,
        body: reached,
    },
    SqlFunction {
        name: "ambit_nearest",
        params: &["layer", "geom", "max_m"],
        optional: 1,
        deterministic: false,
        body: nearest,
    },
    SqlFunction {
        name: "ambit_count",
        params: &["layer", "geom", "metres"],
        optional: 1,
        deterministic: false,
        body: count,
    },
    SqlFunction {
        name: "ambit_share",
        params: &["layer", "geom"],
        optional: 0,
        deterministic: false,
        body: share,
    },
];

/// Why ambit_share refuses points and lines.
pub const SHARE_NEEDS_AREAS: &str =
    "a share is a part of an area; for points and lines ask ambit_reached";

/// The parameters of the aggregate ambit_layer.
pub const LAYER_PARAMS: &[&str] = &["name", "geom", "reach_m", "feature_id"];
const LAYER: &str = "ambit_layer";

/// A distance argument in metres (see [`Args::distance`]: numbers are
/// metres, text carries its unit); NULL gives `None`.
pub fn distance_arg(args: &Args, i: usize) -> rusqlite::Result<Option<f64>> {
    args.distance(i)
}

/// The layer named by argument 0.
fn layer_arg(args: &Args) -> rusqlite::Result<Option<Arc<Layer>>> {
    match args.text(0)? {
        None => Ok(None),
        Some(name) => args.state().layer(args.name(), name).map(Some),
    }
}

/// The layer and the prepared geometry of a query, or `None` for NULLs.
fn query(args: &Args) -> rusqlite::Result<Option<(Arc<Layer>, Prepared)>> {
    let Some(layer) = layer_arg(args)? else {
        return Ok(None);
    };
    match args.geometry(1)? {
        None => Ok(None),
        Some(d) => Prepared::build(&d.geometry, &args.interrupt())
            .map(|g| Some((layer, g)))
            .map_err(|e| query_error(args, e)),
    }
}

/// The SQL error for a question about a layer that did not finish.
fn query_error(args: &Args, e: GeomError) -> rusqlite::Error {
    match e {
        GeomError::Interrupted => interrupted(args.name()),
        other => args.fail_arg(1, other),
    }
}

fn reached(args: &Args) -> SqlResult {
    let Some(layer) = layer_arg(args)? else {
        return Ok(Value::Null);
    };
    Ok(match args.geometry(1)? {
        Some(d) => Value::Integer(
            quick::reached(&layer, &d.geometry, &args.interrupt())
                .map_err(|e| query_error(args, e))?
                .into(),
        ),
        None => Value::Null,
    })
}

fn nearest(args: &Args) -> SqlResult {
    let max_m = distance_arg(args, 2)?;
    Ok(match query(args)? {
        Some((layer, g)) => layer
            .nearest_until(&g, max_m, &args.interrupt())
            .map_err(|e| query_error(args, e))?
            .map_or(Value::Null, Value::Real),
        None => Value::Null,
    })
}

fn count(args: &Args) -> SqlResult {
    let metres = distance_arg(args, 2)?;
    Ok(match query(args)? {
        Some((layer, g)) => Value::Integer(
            layer
                .count_until(&g, metres, &args.interrupt())
                .map_err(|e| query_error(args, e))? as i64,
        ),
        None => Value::Null,
    })
}

fn share(args: &Args) -> SqlResult {
    let Some(layer) = layer_arg(args)? else {
        return Ok(Value::Null);
    };
    let Some(decoded) = args.geometry(1)? else {
        return Ok(Value::Null);
    };
    decoded
        .geometry
        .require_polygonal(SHARE_NEEDS_AREAS)
        .map_err(|e| args.fail_arg(1, e.to_string()))?;
    let stop = args.interrupt();
    let g = match Prepared::build(&decoded.geometry, &stop) {
        Ok(g) => g,
        Err(crate::error::GeomError::Interrupted) => {
            return Err(crate::sql::interrupted(args.name()))
        }
        Err(e) => return Err(args.fail_arg(1, e)),
    };
    match layer.share(&g, &stop) {
        Ok(v) => Ok(v.map_or(Value::Null, Value::Real)),
        Err(crate::proximity::share::ShareError::Geom(crate::error::GeomError::Interrupted)) => {
            Err(crate::sql::interrupted(args.name()))
        }
        Err(e) => Err(args.fail(e.to_string())),
    }
}

fn drop_layer(args: &Args) -> SqlResult {
    Ok(match args.text(0)? {
        None => Value::Null,
        Some(name) => Value::Integer(
            args.state()
                .take(name)
                .map_or(0, |l| l.features().len() as i64),
        ),
    })
}

/// Features read by one ambit_layer call, prepared when it finishes.
#[derive(Default)]
pub(crate) struct Pending {
    pub(crate) name: Option<String>,
    rows: i64,
    pub(crate) features: Vec<(i64, f64, Geometry)>,
    /// True when the call gives no feature_id (ids are row numbers).
    pub(crate) implicit_ids: bool,
    /// The layer this call adds to, as it was at the first row: ids it
    /// holds are refused at once.
    base: Option<Arc<Layer>>,
    /// A row failed: the statement fails, and the finalisation SQLite
    /// still calls (to clean up) must leave the layer as it was.
    failed: bool,
    /// The connection's count of failed ambit calls at the first row: if
    /// it has moved by the finalisation, another expression of this
    /// statement failed (say ST_GeomFromText on a later row), and the
    /// layer must stay as it was.
    failures_at_start: Option<u64>,
}

/// Runs `work` on the rayon pool while this thread watches `host`; on an
/// interrupt returns at once (`Err(GeomError::Interrupted)`), leaving the
/// work to finish and be freed in the background. For work that cannot
/// stop part way (rstar's bulk load).
fn detached<T: Send + 'static>(
    host: &HostInterrupt<'_>,
    work: impl FnOnce() -> T + Send + 'static,
) -> Result<T, GeomError> {
    let (sender, receiver) = std::sync::mpsc::sync_channel(1);
    rayon::spawn(move || {
        // A closed channel (the statement was interrupted) drops the value.
        let _ = sender.send(work());
    });
    loop {
        match receiver.recv_timeout(std::time::Duration::from_millis(5)) {
            Ok(value) => return Ok(value),
            Err(std::sync::mpsc::RecvTimeoutError::Timeout) => host.check()?,
            Err(std::sync::mpsc::RecvTimeoutError::Disconnected) => {
                return Err(GeomError::Interrupted)
            }
        }
    }
}

/// Builds layers: the aggregate ambit_layer(name, geom [, reach_m [,
/// feature_id]]), and ambit_layer_from (crate::sql::layer_from), which
/// feeds it the rows of its query.
pub(crate) struct LayerBuilder {
    pub(crate) state: Arc<ConnState>,
    /// The SQL function building, as its messages name it.
    pub(crate) function: &'static str,
}

/// The SQL error for a layer that could not be built from `count`
/// features (of which an estimated `bytes` of memory were needed).
fn build_error(
    function: &'static str,
    name: &str,
    count: usize,
    bytes: usize,
    implicit_ids: bool,
    e: GeomError,
) -> rusqlite::Error {
    match e {
        GeomError::Interrupted => interrupted(function),
        GeomError::OutOfMemory { .. } => error(
            function,
            format!(
                "not enough memory for layer '{name}' ({count} features, about {}): {e}; the layer is unchanged. \
                 Build it from fewer or simpler features, or allow the process more memory",
                memory::describe_bytes(bytes)
            ),
        ),
        GeomError::DuplicateFeatureId { id, earlier: true } => error(
            function,
            format!(
                "layer '{name}' already holds feature id {id}{}; a layer never holds an id twice \
                 (adding the same rows again would count them twice): drop it first with \
                 SELECT ambit_layer_drop('{name}'), or give these features new ids; the layer is unchanged",
                if implicit_ids {
                    " (without feature_id, the features of every call are numbered 1, 2, ...)"
                } else {
                    ""
                }
            ),
        ),
        GeomError::DuplicateFeatureId { id, earlier: false } => error(
            function,
            format!(
                "feature id {id} is given twice for layer '{name}'; a layer never holds an id twice: \
                 give every feature its own id (a table's primary key, for example); the layer is unchanged"
            ),
        ),
        other => error(function, format!("layer '{name}': {other}")),
    }
}

impl LayerBuilder {
    pub(crate) fn step_args(&self, args: &Args, acc: &mut Pending) -> rusqlite::Result<()> {
        acc.rows += 1;
        let name = args.required_text(0)?;
        match &acc.name {
            None => {
                acc.name = Some(name.to_string());
                acc.implicit_ids = args.len() < 4;
                acc.base = self.state.find(name);
            }
            Some(n) if n != name => {
                return Err(args.fail_arg(
                    0,
                    format!("is '{name}' but this call is building layer '{n}'; use one ambit_layer call per layer"),
                ))
            }
            Some(_) => {}
        }
        let reach = args.reach(2)?.unwrap_or(0.0);
        let id = match args.len() {
            4 => args
                .integer(3)?
                .ok_or_else(|| args.fail_arg(3, "must not be NULL"))?,
            _ => acc.rows,
        };
        let Some(bytes) = args.blob(1)? else {
            return Ok(());
        };
        let decoded = blob::decode_valid(bytes, &args.interrupt()).map_err(|e| match e {
            GeomError::Interrupted => interrupted(LAYER),
            e => args.fail(format!("feature {id} of layer '{name}': {e}")),
        })?;
        if decoded.geometry.is_empty() {
            return Ok(());
        }
        if acc.base.as_ref().is_some_and(|b| b.holds(id)) {
            let e = GeomError::DuplicateFeatureId { id, earlier: true };
            return Err(build_error(self.function, name, 0, 0, acc.implicit_ids, e));
        }
        let n = acc.features.len() + 1;
        memory::reserve_one(&mut acc.features).map_err(|e| {
            build_error(
                self.function,
                name,
                n,
                n * std::mem::size_of::<(i64, f64, Geometry)>(),
                false,
                e,
            )
        })?;
        acc.features.push((id, reach, decoded.geometry));
        Ok(())
    }

    /// Builds layer `name` from what it held plus `rows`, and stores it
    /// only when everything succeeded: on an error or an interrupt the
    /// layer stays as it was (absent, or with its old features, index and
    /// answers). The old layer answers queries until the new one replaces
    /// it.
    pub(crate) fn build(
        &self,
        host: &HostInterrupt<'_>,
        name: &str,
        rows: Vec<(i64, f64, Geometry)>,
        implicit_ids: bool,
    ) -> rusqlite::Result<i64> {
        let base = self.state.find(name);
        let added = rows.len();
        if added == 0 {
            if base.is_none() {
                self.state.put(name, Layer::default());
            }
            return Ok(0);
        }
        let base_len = base.as_ref().map_or(0, |b| b.features().len());
        let fail = |bytes: usize, e: GeomError| {
            build_error(self.function, name, added, bytes, implicit_ids, e)
        };
        let mut ids: Vec<i64> = memory::vec_with_capacity(added).map_err(|e| fail(added * 8, e))?;
        ids.extend(rows.iter().map(|r| r.0));
        let all_ids = Layer::check_ids(base.as_deref(), &ids).map_err(|e| fail(added * 16, e))?;
        drop(ids);
        let bytes = Layer::estimated_bytes(base_len + added, rows.iter().map(|r| &r.2));
        memory::probe(bytes).map_err(|e| fail(bytes, e))?;

        let meter = progress::Meter::start(
            format!("{} '{name}'", self.function),
            "features",
            added as u64,
        );
        let report = |done: usize| {
            if let Some(m) = &meter {
                m.report(done as u64)
            }
        };
        let prepared = run_parallel(host, |flag| Layer::prepare(rows, flag, &report))
            .map_err(|e| fail(bytes, e))?;
        drop(meter);
        let base_features = base.as_ref().map_or(&[][..], |b| b.features());
        let index = Layer::index(base_features, &prepared, all_ids, host)
            .and_then(|input| detached(host, move || input.load()))
            .and_then(|index| {
                // A new layer keeps the prepared array as it is.
                let features: Vec<Feature> = match base_len {
                    0 => Vec::new(),
                    n => memory::vec_with_capacity(n + added)?,
                };
                if host.requested_now() {
                    return Err(GeomError::Interrupted);
                }
                Ok((index, features))
            });
        let (index, mut features) = match index {
            Ok(done) => done,
            Err(e) => {
                memory::discard(prepared);
                return Err(fail(bytes, e));
            }
        };

        // Nothing below can fail, and it is quick (an interrupt arriving
        // now is reported by SQLite after the layer was stored): the old
        // layer is swapped for the new; its index is freed in the
        // background.
        drop(base);
        let features = match self.state.take(name) {
            None => prepared,
            Some(old) => {
                match Arc::try_unwrap(old) {
                    Ok(layer) => {
                        let (old_features, old_index) = layer.into_parts();
                        memory::discard(old_index);
                        features.extend(old_features);
                    }
                    // Still read by another statement of this connection.
                    Err(shared) => features.extend(shared.features().iter().cloned()),
                }
                features.extend(prepared);
                features
            }
        };
        self.state.put(name, Layer::assemble(index, features));
        Ok(added as i64)
    }
}

impl Aggregate<Pending, i64> for LayerBuilder {
    fn init(&self, _ctx: &mut Context<'_>) -> rusqlite::Result<Pending> {
        Ok(Pending::default())
    }

    fn step(&self, ctx: &mut Context<'_>, acc: &mut Pending) -> rusqlite::Result<()> {
        if acc.failed {
            return Ok(());
        }
        if acc.failures_at_start.is_none() {
            acc.failures_at_start = Some(self.state.failures());
        }
        let ctx: &Context<'_> = ctx;
        let values = (0..ctx.len()).map(|i| ctx.get_raw(i));
        let args = Args::new(LAYER, LAYER_PARAMS, values, &self.state).in_call(ctx);
        let result = guard(LAYER, || self.step_args(&args, acc));
        if result.is_err() {
            // Free the rows (in the background); finalize will change
            // nothing.
            memory::discard(std::mem::take(&mut acc.features));
            *acc = Pending {
                failed: true,
                ..Pending::default()
            };
        }
        result
    }

    /// SQLite calls this when the rows are done, and also to clean up
    /// after a statement that failed or was interrupted part way; the
    /// layer is changed only when no row failed and the statement was not
    /// interrupted.
    fn finalize(&self, ctx: &mut Context<'_>, acc: Option<Pending>) -> rusqlite::Result<i64> {
        let Some(Pending {
            name: Some(name),
            features,
            implicit_ids,
            base,
            failed: false,
            failures_at_start,
            ..
        }) = acc
        else {
            return Ok(0);
        };
        drop(base);
        if failures_at_start != Some(self.state.failures()) {
            // Another ambit function failed since the first row: this is
            // SQLite cleaning up after that error (or, if statements of
            // the connection were interleaved, a failure elsewhere, which
            // is reported rather than risked).
            memory::discard(features);
            return Err(crate::sql::error(
                LAYER,
                format!("another ambit function failed while layer '{name}' was being built, so the layer is unchanged; fix that error and run the statement again"),
            ));
        }
        let ctx: &Context<'_> = ctx;
        let host = HostInterrupt::of_call(ctx);
        if host.requested_now() {
            memory::discard(features);
            return Err(interrupted(LAYER));
        }
        guard(LAYER, || self.build(&host, &name, features, implicit_ids))
    }
}

/// Registers ambit_layer with 2, 3 and 4 arguments.
pub fn register_aggregate(conn: &Connection, state: &Arc<ConnState>) -> rusqlite::Result<()> {
    for arity in 2..=4 {
        conn.create_aggregate_function(
            LAYER,
            arity,
            FunctionFlags::SQLITE_UTF8,
            LayerBuilder {
                state: Arc::clone(state),
                function: LAYER,
            },
        )?;
    }
    Ok(())
}
