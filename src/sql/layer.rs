//! Layers from SQL: the aggregate ambit_layer that builds them, and the
//! scalar questions asked of them (ambit_reached, ambit_nearest,
//! ambit_count, ambit_layer_drop). The index and the answers are in
//! crate::proximity::layer.

use std::sync::Arc;

use rayon::prelude::*;
use rusqlite::functions::{Aggregate, Context, FunctionFlags};
use rusqlite::types::Value;
use rusqlite::Connection;

use crate::blob;
use crate::geometry::Geometry;
use crate::proximity::{Feature, Layer, Prepared};
use crate::sql::state::ConnState;
use crate::sql::{guard, Args, SqlFunction, SqlResult};

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
    Ok(args
        .geometry(1)?
        .map(|d| (layer, Prepared::new(&d.geometry))))
}

fn reached(args: &Args) -> SqlResult {
    Ok(match query(args)? {
        Some((layer, g)) => Value::Integer(layer.reached(&g).into()),
        None => Value::Null,
    })
}

fn nearest(args: &Args) -> SqlResult {
    let max_m = distance_arg(args, 2)?;
    Ok(match query(args)? {
        Some((layer, g)) => layer.nearest(&g, max_m).map_or(Value::Null, Value::Real),
        None => Value::Null,
    })
}

fn count(args: &Args) -> SqlResult {
    let metres = distance_arg(args, 2)?;
    Ok(match query(args)? {
        Some((layer, g)) => Value::Integer(layer.count(&g, metres) as i64),
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
    let g = Prepared::new(&decoded.geometry);
    match layer.share(&g, &args.interrupt()) {
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
pub struct Pending {
    name: Option<String>,
    rows: i64,
    features: Vec<(i64, f64, Geometry)>,
}

/// The aggregate ambit_layer(name, geom [, reach_m [, feature_id]]).
struct LayerBuilder {
    state: Arc<ConnState>,
}

impl LayerBuilder {
    fn step_args(&self, args: &Args, acc: &mut Pending) -> rusqlite::Result<()> {
        acc.rows += 1;
        let name = args
            .text(0)?
            .ok_or_else(|| args.fail_arg(0, "must not be NULL"))?;
        match &acc.name {
            None => acc.name = Some(name.to_string()),
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
        let decoded = blob::decode_valid(bytes)
            .map_err(|e| args.fail(format!("feature {id} of layer '{name}': {e}")))?;
        if !decoded.geometry.is_empty() {
            acc.features.push((id, reach, decoded.geometry));
        }
        Ok(())
    }
}

impl Aggregate<Pending, i64> for LayerBuilder {
    fn init(&self, _ctx: &mut Context<'_>) -> rusqlite::Result<Pending> {
        Ok(Pending::default())
    }

    fn step(&self, ctx: &mut Context<'_>, acc: &mut Pending) -> rusqlite::Result<()> {
        let values = (0..ctx.len()).map(|i| ctx.get_raw(i));
        let args = Args::new(LAYER, LAYER_PARAMS, values, &self.state);
        guard(LAYER, || self.step_args(&args, acc))
    }

    fn finalize(&self, _ctx: &mut Context<'_>, acc: Option<Pending>) -> rusqlite::Result<i64> {
        let Some(Pending {
            name: Some(name),
            features,
            ..
        }) = acc
        else {
            return Ok(0);
        };
        guard(LAYER, || {
            let added = features.len() as i64;
            let prepared: Vec<Feature> = features
                .into_par_iter()
                .map(|(id, reach, g)| Feature {
                    id,
                    reach,
                    vertices: g.vertex_count(),
                    geometry: Prepared::new(&g),
                })
                .collect();
            let mut all = match self.state.take(&name) {
                Some(old) => Arc::try_unwrap(old)
                    .map(Layer::into_features)
                    .unwrap_or_else(|shared| shared.features().to_vec()),
                None => Vec::new(),
            };
            all.extend(prepared);
            self.state.put(&name, Layer::new(all));
            Ok(added)
        })
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
            },
        )?;
    }
    Ok(())
}
