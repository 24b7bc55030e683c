//! ambit_to_lonlat(geom [, source]): a geometry blob from any spatial
//! reference to WGS84 longitude/latitude (srs_id 4326), so a projected
//! layer can go straight into ambit_layer. The conversion itself is
//! [`crate::reproject`]; this file finds the source system and reports
//! errors.
//!
//! The source system is, in this order: the `source` argument when given
//! (an integer: the srs_id of a gpkg_spatial_ref_sys row of this database
//! if there is one, else an EPSG code; text: 'EPSG:n', WKT or PROJ text);
//! else the blob's srs_id looked up in gpkg_spatial_ref_sys (its
//! `definition`, or when that cannot be read, its
//! organization/organization_coordsys_id if the organization is EPSG).
//! srs_id 0 and -1 (undefined), 4326 and 4269 without a row are
//! longitude/latitude.
//!
//! Parsed definitions are kept per connection (up to [`CACHE_LIMIT`]), so
//! a column of one system is parsed once; the srs_id row is read at each
//! call, so a change of gpkg_spatial_ref_sys is seen at once.

use std::collections::HashMap;
use std::sync::{Arc, Mutex};

use rusqlite::functions::{Context, FunctionFlags};
use rusqlite::types::{Value, ValueRef};
use rusqlite::{Connection, OptionalExtension};

use crate::blob;
use crate::error::GeomError;
use crate::reproject::Reprojection;
use crate::sql::args::describe;
use crate::sql::state::ConnState;
use crate::sql::{guard, Args};

const NAME: &str = "ambit_to_lonlat";
const PARAMS: &[&str] = &["geom", "source"];

/// How many parsed definitions one connection keeps.
pub const CACHE_LIMIT: usize = 64;

/// The srs_id of the result: WGS84 longitude/latitude.
const LONLAT_SRS_ID: i32 = 4326;

/// Parsed definitions of one connection, by their text.
#[derive(Default)]
struct Cache {
    parsed: Mutex<HashMap<String, Arc<Reprojection>>>,
}

impl Cache {
    /// The reprojection of `text`, parsed at most once per connection
    /// (unless the cache was full and cleared).
    fn get(&self, text: &str) -> Result<Arc<Reprojection>, crate::error::GeomError> {
        let mut parsed = self.parsed.lock().unwrap_or_else(|e| e.into_inner());
        if let Some(r) = parsed.get(text) {
            return Ok(Arc::clone(r));
        }
        let r = Arc::new(Reprojection::from_definition(text)?);
        if parsed.len() >= CACHE_LIMIT {
            parsed.clear();
        }
        parsed.insert(text.to_string(), Arc::clone(&r));
        Ok(r)
    }
}

/// Registers ambit_to_lonlat with 1 and 2 arguments. It reads
/// gpkg_spatial_ref_sys, so it is neither deterministic nor innocuous.
pub fn register(conn: &Connection, state: &Arc<ConnState>) -> rusqlite::Result<()> {
    let cache = Arc::new(Cache::default());
    for arity in 1..=2 {
        let cache = Arc::clone(&cache);
        let state = Arc::clone(state);
        conn.create_scalar_function(NAME, arity, FunctionFlags::SQLITE_UTF8, move |ctx| {
            let values = (0..ctx.len()).map(|i| ctx.get_raw(i));
            let args = Args::new(NAME, PARAMS, values, &state).in_call(ctx);
            let result = guard(NAME, || call(ctx, &args, &cache));
            if result.is_err() {
                state.note_failure();
            }
            result
        })?;
    }
    Ok(())
}

/// Where the source system came from, for error messages.
enum Source {
    /// Already longitude/latitude: nothing to convert.
    LonLat,
    Parsed(Arc<Reprojection>),
}

fn call(ctx: &Context<'_>, args: &Args<'_>, cache: &Cache) -> rusqlite::Result<Value> {
    let Some(bytes) = args.blob(0)? else {
        return Ok(Value::Null);
    };
    let decoded = blob::decode(bytes).map_err(|e| args.fail_arg(0, e))?;
    // SAFETY: the connection this function was called on, used only within
    // this call and on this thread, to read gpkg_spatial_ref_sys.
    let conn = unsafe { ctx.get_connection()? };
    let given = if ctx.len() > 1 {
        ctx.get_raw(1)
    } else {
        ValueRef::Null
    };
    let source = match given {
        ValueRef::Null => from_srs_id(&conn, args, cache, decoded.srs_id.into(), None)?,
        ValueRef::Integer(n) => from_srs_id(&conn, args, cache, n, Some(1))?,
        ValueRef::Text(_) => {
            let text = args.text(1)?.unwrap_or_default();
            match text.trim().parse::<i64>() {
                Ok(n) => from_srs_id(&conn, args, cache, n, Some(1))?,
                Err(_) => Source::Parsed(cache.get(text).map_err(|e| args.fail_arg(1, e))?),
            }
        }
        other => {
            return Err(args.fail_arg(
                1,
                format!(
                    "must be an EPSG code or srs_id (integer) or a definition ('EPSG:n', WKT or PROJ text), got {}",
                    describe(other)
                ),
            ))
        }
    };
    let mut g = decoded.geometry;
    if let Source::Parsed(r) = &source {
        r.to_lonlat(&mut g).map_err(|e| args.fail_arg(0, e))?;
    }
    blob::encode_valid(&g, LONLAT_SRS_ID, &args.interrupt())
        .map(Value::Blob)
        .map_err(|e| match e {
            GeomError::Interrupted => crate::sql::interrupted(args.name()),
            e => args.fail_arg(0, e),
        })
}

/// The source system of srs_id `srs_id`: its gpkg_spatial_ref_sys row, or
/// for an argument (`arg` = Some(index)) without a row, EPSG code `srs_id`.
fn from_srs_id(
    conn: &Connection,
    args: &Args<'_>,
    cache: &Cache,
    srs_id: i64,
    arg: Option<usize>,
) -> rusqlite::Result<Source> {
    let what = match arg {
        Some(_) => format!("srs_id {srs_id}"),
        None => format!("srs_id {srs_id} of the geometry"),
    };
    let fail = |message: String| match arg {
        Some(i) => args.fail_arg(i, message),
        None => args.fail_arg(0, message),
    };
    let row = spatial_ref_row(conn, srs_id)
        .map_err(|e| fail(format!("reading gpkg_spatial_ref_sys: {e}")))?;
    let Some((organization, code, definition)) = row else {
        if arg.is_some() && srs_id > 0 {
            let text = format!("EPSG:{srs_id}");
            return cache
                .get(&text)
                .map(Source::Parsed)
                .map_err(|e| fail(e.to_string()));
        }
        if crate::geometry::validate::ACCEPTED_SRS.contains(&srs_id) {
            return Ok(Source::LonLat);
        }
        return Err(fail(format!(
            "{what} has no row in gpkg_spatial_ref_sys of this database; give the source system as argument 2 (an EPSG code, 'EPSG:n', WKT or PROJ text)"
        )));
    };
    let epsg = organization.eq_ignore_ascii_case("EPSG") && code > 0;
    let undefined =
        definition.trim().is_empty() || definition.trim().eq_ignore_ascii_case("undefined");
    if undefined && !epsg {
        return if matches!(srs_id, 0 | -1) {
            Ok(Source::LonLat)
        } else {
            Err(fail(format!(
                "{what} is 'undefined' in gpkg_spatial_ref_sys; give the source system as argument 2 (an EPSG code, 'EPSG:n', WKT or PROJ text)"
            )))
        };
    }
    let from_definition = if undefined {
        None
    } else {
        Some(cache.get(&definition))
    };
    match from_definition {
        Some(Ok(r)) => Ok(Source::Parsed(r)),
        other if epsg => cache
            .get(&format!("EPSG:{code}"))
            .map(Source::Parsed)
            .map_err(|e| match other {
                Some(Err(first)) => {
                    fail(format!("{what} (gpkg_spatial_ref_sys): {first}; and {e}"))
                }
                _ => fail(format!("{what} (gpkg_spatial_ref_sys): {e}")),
            }),
        Some(Err(e)) => Err(fail(format!("{what} (gpkg_spatial_ref_sys): {e}"))),
        _ => unreachable!("undefined without EPSG returned above"),
    }
}

/// The organization, organization_coordsys_id and definition of srs_id
/// `srs_id`, or None when the database has no gpkg_spatial_ref_sys or no
/// such row.
fn spatial_ref_row(
    conn: &Connection,
    srs_id: i64,
) -> rusqlite::Result<Option<(String, i64, String)>> {
    let has_table: bool = conn.query_row(
        "SELECT count(*) > 0 FROM sqlite_schema WHERE type IN ('table', 'view') AND name = 'gpkg_spatial_ref_sys'",
        [],
        |r| r.get(0),
    )?;
    if !has_table {
        return Ok(None);
    }
    conn.query_row(
        "SELECT coalesce(organization, ''), coalesce(organization_coordsys_id, 0), coalesce(definition, '') FROM gpkg_spatial_ref_sys WHERE srs_id = ?1",
        [srs_id],
        |r| Ok((r.get(0)?, r.get(1)?, r.get(2)?)),
    )
    .optional()
}
