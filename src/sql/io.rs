//! Geometry in and out: the standard constructors and accessors of OGC
//! Simple Features SQL / ISO 13249-3 (ST_*), and ambit's GeoJSON pair.
//!
//! Geometry results are GeoPackage blobs (see [`crate::blob::gpkg`]).
//! Functions that describe a blob (ST_SRID, ST_GeometryType, ST_IsEmpty)
//! read any well-formed blob; all others also check it for use
//! (longitude/latitude srs_id, coordinate ranges, rings).

use rusqlite::types::Value;

use crate::blob::{self, geojson, wkt, Decoded};
use crate::error::GeomError;
use crate::geometry::{Geometry, GeometryType};
use crate::sql::{Args, SqlFunction, SqlResult};

/// The srs_id given when a constructor is called without one: WGS84.
pub const DEFAULT_SRS_ID: i64 = 4326;

pub const FUNCTIONS: &[SqlFunction] = &[
    SqlFunction {
        name: "ST_GeomFromText",
        params: &["wkt", "srid"],
        optional: 1,
        deterministic: true,
        body: geom_from_text,
    },
    SqlFunction {
        name: "ST_GeomFromWKB",
        params: &["wkb", "srid"],
        optional: 1,
        deterministic: true,
        body: geom_from_wkb,
    },
    SqlFunction {
        name: "ST_Point",
        params: &["x", "y", "srid"],
        optional: 1,
        deterministic: true,
        body: point,
    },
    SqlFunction {
        name: "ST_AsText",
        params: &["geom"],
        optional: 0,
        deterministic: true,
        body: as_text,
    },
    SqlFunction {
        name: "ST_AsBinary",
        params: &["geom"],
        optional: 0,
        deterministic: true,
        body: as_binary,
    },
    SqlFunction {
        name: "ST_X",
        params: &["geom"],
        optional: 0,
        deterministic: true,
        body: x,
    },
    SqlFunction {
        name: "ST_Y",
        params: &["geom"],
        optional: 0,
        deterministic: true,
        body: y,
    },
    SqlFunction {
        name: "ST_SRID",
        params: &["geom"],
        optional: 0,
        deterministic: true,
        body: srid,
    },
    SqlFunction {
        name: "ST_GeometryType",
        params: &["geom"],
        optional: 0,
        deterministic: true,
        body: geometry_type,
    },
    SqlFunction {
        name: "ST_IsEmpty",
        params: &["geom"],
        optional: 0,
        deterministic: true,
        body: is_empty,
    },
    SqlFunction {
        name: "ambit_from_geojson",
        params: &["geojson"],
        optional: 0,
        deterministic: true,
        body: from_geojson,
    },
    SqlFunction {
        name: "ambit_to_geojson",
        params: &["geom", "decimals"],
        optional: 1,
        deterministic: true,
        body: to_geojson,
    },
];

/// The srid argument at `i`, default [`DEFAULT_SRS_ID`]; must fit an int32.
fn srid_arg(args: &Args, i: usize) -> rusqlite::Result<i32> {
    let srid = if i < args.len() {
        args.integer(i)?
            .ok_or_else(|| args.fail_arg(i, "must not be NULL"))?
    } else {
        DEFAULT_SRS_ID
    };
    i32::try_from(srid).map_err(|_| args.fail_arg(i, format!("{srid} is not a valid srs_id")))
}

/// A GeoPackage blob for a freshly built geometry, checked for use; a
/// problem is reported against argument `arg` when one argument holds the
/// whole geometry.
fn output(args: &Args, arg: Option<usize>, g: &Geometry, srs_id: i32) -> SqlResult {
    blob::encode_valid(g, srs_id, &args.interrupt())
        .map(Value::Blob)
        .map_err(|e| match (arg, e) {
            (_, GeomError::Interrupted) => crate::sql::interrupted(args.name()),
            (Some(i), e) => args.fail_arg(i, e),
            (None, e) => args.fail(e),
        })
}

fn geom_from_text(args: &Args) -> SqlResult {
    let Some(text) = args.text(0)? else {
        return Ok(Value::Null);
    };
    let srs_id = srid_arg(args, 1)?;
    let g = wkt::parse(text).map_err(|e| args.fail_arg(0, e))?;
    output(args, Some(0), &g, srs_id)
}

fn geom_from_wkb(args: &Args) -> SqlResult {
    let Some(bytes) = args.blob(0)? else {
        return Ok(Value::Null);
    };
    let decoded = blob::decode(bytes).map_err(|e| args.fail_arg(0, e))?;
    let srs_id = match blob::encoding(bytes).map_err(|e| args.fail_arg(0, e))? {
        blob::Encoding::Wkb => srid_arg(args, 1)?,
        // A GeoPackage blob keeps its own srs_id; a different one asked for
        // would silently relabel coordinates, so it is refused.
        blob::Encoding::GeoPackage => {
            if args.len() > 1 {
                let asked = srid_arg(args, 1)?;
                if asked != decoded.srs_id {
                    return Err(args.fail_arg(
                        1,
                        format!(
                            "is {asked} but the GeoPackage blob already carries srs_id {}; ambit does not relabel coordinates",
                            decoded.srs_id
                        ),
                    ));
                }
            }
            decoded.srs_id
        }
    };
    output(args, Some(0), &decoded.geometry, srs_id)
}

fn point(args: &Args) -> SqlResult {
    let (Some(x), Some(y)) = (args.number(0)?, args.number(1)?) else {
        return Ok(Value::Null);
    };
    let srs_id = srid_arg(args, 2)?;
    output(args, None, &Geometry::point(x, y), srs_id)
}

/// The checked geometry of argument 0, or `None` for NULL.
fn geom(args: &Args) -> rusqlite::Result<Option<Decoded>> {
    args.geometry(0)
}

fn as_text(args: &Args) -> SqlResult {
    Ok(match geom(args)? {
        None => Value::Null,
        Some(d) => Value::Text(wkt::try_write(&d.geometry).map_err(|e| args.fail_arg(0, e))?),
    })
}

fn as_binary(args: &Args) -> SqlResult {
    Ok(match geom(args)? {
        None => Value::Null,
        Some(d) => Value::Blob(blob::wkb::try_write(&d.geometry).map_err(|e| args.fail_arg(0, e))?),
    })
}

/// Ordinate `index` of a point; NULL for POINT EMPTY.
fn ordinate(args: &Args, index: usize) -> SqlResult {
    let Some(d) = geom(args)? else {
        return Ok(Value::Null);
    };
    let found = d.geometry.geometry_type();
    if found != GeometryType::Point {
        return Err(args.fail_arg(
            0,
            GeomError::WrongType {
                expected: "POINT",
                found: found.wkt_keyword(),
            },
        ));
    }
    Ok(match d.geometry.point_values() {
        Some(v) => Value::Real(v[index]),
        None => Value::Null,
    })
}

fn x(args: &Args) -> SqlResult {
    ordinate(args, 0)
}

fn y(args: &Args) -> SqlResult {
    ordinate(args, 1)
}

fn srid(args: &Args) -> SqlResult {
    let Some(bytes) = args.blob(0)? else {
        return Ok(Value::Null);
    };
    let summary = blob::summary(bytes).map_err(|e| args.fail_arg(0, e))?;
    Ok(Value::Integer(summary.srs_id.into()))
}

fn geometry_type(args: &Args) -> SqlResult {
    let Some(bytes) = args.blob(0)? else {
        return Ok(Value::Null);
    };
    let summary = blob::summary(bytes).map_err(|e| args.fail_arg(0, e))?;
    Ok(Value::Text(summary.geometry_type.gpkg_name().to_string()))
}

fn is_empty(args: &Args) -> SqlResult {
    Ok(match args.geometry_unchecked(0)? {
        None => Value::Null,
        Some(d) => Value::Integer(d.geometry.is_empty().into()),
    })
}

fn from_geojson(args: &Args) -> SqlResult {
    let Some(text) = args.text(0)? else {
        return Ok(Value::Null);
    };
    match geojson::parse(text).map_err(|e| args.fail_arg(0, e))? {
        None => Ok(Value::Null),
        // RFC 7946, section 4: GeoJSON coordinates are WGS84 longitude and
        // latitude.
        Some(g) => output(args, Some(0), &g, DEFAULT_SRS_ID as i32),
    }
}

/// The largest number of decimals ambit_to_geojson writes.
pub const MAX_GEOJSON_DECIMALS: i64 = 15;

fn to_geojson(args: &Args) -> SqlResult {
    let decimals = match args.len() {
        1 => geojson::DEFAULT_DECIMALS,
        _ => match args.integer(1)? {
            Some(d) if (0..=MAX_GEOJSON_DECIMALS).contains(&d) => d as usize,
            Some(d) => {
                return Err(args.fail_arg(
                    1,
                    format!("must be between 0 and {MAX_GEOJSON_DECIMALS}, got {d}"),
                ))
            }
            None => geojson::DEFAULT_DECIMALS,
        },
    };
    Ok(match geom(args)? {
        None => Value::Null,
        Some(d) => {
            Value::Text(geojson::try_write(&d.geometry, decimals).map_err(|e| args.fail_arg(0, e))?)
        }
    })
}
