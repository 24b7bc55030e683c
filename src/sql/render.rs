//! Results for people to look at, from SQL: the aggregates
//! ambit_feature_collection(geom, properties), a GeoJSON FeatureCollection
//! of the rows, and ambit_choropleth_svg(geom, value [, title]), an SVG
//! map of them. This file only reads the rows; the text is made by
//! crate::render.
//!
//! Both see rows in the order SQLite hands them over, which only an
//! ORDER BY in a subquery fixes, so they are registered without the
//! deterministic flag.

use rusqlite::functions::{Aggregate, Context, FunctionFlags};
use rusqlite::types::ValueRef;
use rusqlite::Connection;

use crate::blob;
use crate::error::GeomError;
use crate::geometry::Geometry;
use crate::render::collection::{self, FeatureCollection};
use crate::render::svg;
use crate::sql::args::describe;
use crate::sql::interrupt::HostInterrupt;
use crate::sql::{error, guard};

const COLLECTION: &str = "ambit_feature_collection";
const COLLECTION_PARAMS: &[&str] = &["geom", "properties"];
const MAP: &str = "ambit_choropleth_svg";
const MAP_PARAMS: &[&str] = &["geom", "value", "title"];

/// Registers ambit_feature_collection (2 arguments) and
/// ambit_choropleth_svg (2 and 3).
pub fn register(conn: &Connection) -> rusqlite::Result<()> {
    conn.create_aggregate_function(COLLECTION, 2, FunctionFlags::SQLITE_UTF8, CollectionAgg)?;
    for arity in 2..=3 {
        conn.create_aggregate_function(MAP, arity, FunctionFlags::SQLITE_UTF8, MapAgg)?;
    }
    Ok(())
}

/// The arguments of one row of an aggregate, for error messages of the
/// form `<function>: argument 2 (value) must be a number, got text 'x'
/// (row 3)`.
struct Row<'a, 'c> {
    function: &'static str,
    params: &'static [&'static str],
    ctx: &'a Context<'c>,
    row: usize,
}

impl Row<'_, '_> {
    fn raw(&self, i: usize) -> ValueRef<'_> {
        if i < self.ctx.len() {
            self.ctx.get_raw(i)
        } else {
            ValueRef::Null
        }
    }

    fn fail(&self, i: usize, message: impl std::fmt::Display) -> rusqlite::Error {
        let param = self.params.get(i).copied().unwrap_or("?");
        error(
            self.function,
            format!("argument {} ({param}): {message} (row {})", i + 1, self.row),
        )
    }

    /// The valid geometry of argument `i`; NULL gives `None`.
    fn geometry(&self, i: usize) -> rusqlite::Result<Option<Geometry>> {
        match self.raw(i) {
            ValueRef::Null => Ok(None),
            ValueRef::Blob(b) => blob::decode_valid(b, &HostInterrupt::of_call(self.ctx))
                .map(|d| Some(d.geometry))
                .map_err(|e| match e {
                    GeomError::Interrupted => crate::sql::interrupted(self.function),
                    e => self.fail(i, e.to_string()),
                }),
            other => Err(self.fail(
                i,
                format!(
                    "must be a geometry blob, got {}; build one with ST_GeomFromText or ambit_from_geojson",
                    describe(other)
                ),
            )),
        }
    }

    /// The number of argument `i`; NULL gives `None`.
    fn number(&self, i: usize) -> rusqlite::Result<Option<f64>> {
        let v = match self.raw(i) {
            ValueRef::Null => return Ok(None),
            ValueRef::Integer(v) => v as f64,
            ValueRef::Real(v) => v,
            other => return Err(self.fail(i, format!("must be a number, got {}", describe(other)))),
        };
        if v.is_finite() {
            Ok(Some(v))
        } else {
            Err(self.fail(i, format!("must be a finite number, got {v}")))
        }
    }

    /// The text of argument `i`; NULL gives `None`.
    fn text(&self, i: usize) -> rusqlite::Result<Option<String>> {
        match self.raw(i) {
            ValueRef::Null => Ok(None),
            ValueRef::Text(t) => std::str::from_utf8(t)
                .map(|s| Some(s.to_string()))
                .map_err(|_| self.fail(i, "is not valid UTF-8 text")),
            other => Err(self.fail(i, format!("must be text, got {}", describe(other)))),
        }
    }
}

/// The state of one ambit_feature_collection call.
#[derive(Default)]
struct CollectionState {
    rows: usize,
    features: FeatureCollection,
}

/// The aggregate ambit_feature_collection(geom, properties).
struct CollectionAgg;

impl CollectionAgg {
    fn step_row(ctx: &Context<'_>, acc: &mut CollectionState) -> rusqlite::Result<()> {
        acc.rows += 1;
        let row = Row {
            function: COLLECTION,
            params: COLLECTION_PARAMS,
            ctx,
            row: acc.rows,
        };
        let geometry = row.geometry(0)?;
        let properties = match row.raw(1) {
            ValueRef::Null => None,
            ValueRef::Text(_) => {
                let text = row.text(1)?.unwrap_or_default();
                Some(collection::properties_from_text(&text).map_err(|e| row.fail(1, e))?)
            }
            other => {
                return Err(row.fail(
                    1,
                    crate::error::GeomError::NotJsonObject {
                        found: describe(other),
                    },
                ))
            }
        };
        acc.features
            .push(geometry.as_ref(), properties)
            .map_err(|e| row.fail(1, e))
    }
}

impl Aggregate<CollectionState, String> for CollectionAgg {
    fn init(&self, _ctx: &mut Context<'_>) -> rusqlite::Result<CollectionState> {
        Ok(CollectionState::default())
    }

    fn step(&self, ctx: &mut Context<'_>, acc: &mut CollectionState) -> rusqlite::Result<()> {
        guard(COLLECTION, || Self::step_row(ctx, acc))
    }

    fn finalize(
        &self,
        _ctx: &mut Context<'_>,
        acc: Option<CollectionState>,
    ) -> rusqlite::Result<String> {
        guard(COLLECTION, || {
            Ok(acc.map_or_else(|| collection::EMPTY.to_string(), |a| a.features.finish()))
        })
    }
}

/// The state of one ambit_choropleth_svg call.
#[derive(Default)]
struct MapState {
    rows: usize,
    features: Vec<(Geometry, Option<f64>)>,
    title: Option<String>,
}

/// The aggregate ambit_choropleth_svg(geom, value [, title]).
struct MapAgg;

impl MapAgg {
    fn step_row(ctx: &Context<'_>, acc: &mut MapState) -> rusqlite::Result<()> {
        acc.rows += 1;
        let row = Row {
            function: MAP,
            params: MAP_PARAMS,
            ctx,
            row: acc.rows,
        };
        let geometry = row.geometry(0)?;
        let value = row.number(1)?;
        if ctx.len() > 2 {
            if let Some(title) = row.text(2)? {
                match &acc.title {
                    None => acc.title = Some(title),
                    Some(t) if *t != title => {
                        return Err(row.fail(
                            2,
                            format!("must be the same in every row, got '{title}' after '{t}'"),
                        ))
                    }
                    Some(_) => {}
                }
            }
        }
        if let Some(g) = geometry {
            svg::polygonal(&g).map_err(|e| row.fail(0, e))?;
            acc.features.push((g, value));
        }
        Ok(())
    }
}

impl Aggregate<MapState, String> for MapAgg {
    fn init(&self, _ctx: &mut Context<'_>) -> rusqlite::Result<MapState> {
        Ok(MapState::default())
    }

    fn step(&self, ctx: &mut Context<'_>, acc: &mut MapState) -> rusqlite::Result<()> {
        guard(MAP, || Self::step_row(ctx, acc))
    }

    fn finalize(&self, _ctx: &mut Context<'_>, acc: Option<MapState>) -> rusqlite::Result<String> {
        let acc = acc.unwrap_or_default();
        guard(MAP, || {
            svg::choropleth(&acc.features, acc.title.as_deref()).map_err(|e| error(MAP, e))
        })
    }
}
