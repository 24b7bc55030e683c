//! ambit_gpkg_register(table, column [, type [, spatial_index]]): makes a
//! table of geometry blobs a GeoPackage features layer, so any GeoPackage
//! reader opens it; with `column` NULL, a table without geometry an
//! attributes table (OGC 12-128, clause 2.4); with `spatial_index` 1, it
//! also builds the R-tree spatial index of Annex F.3. And ST_MinX, ST_MaxX,
//! ST_MinY, ST_MaxY, which that index's triggers call, so GeoPackages of
//! other programs stay editable with ambit loaded.
//!
//! It reads the column (never changing a row), checks that every non-NULL
//! value is a GeoPackage geometry blob and that all share one srs_id, then
//! writes the container's metadata: creates gpkg_spatial_ref_sys,
//! gpkg_contents and gpkg_geometry_columns if missing, adds the required
//! spatial reference rows, a gpkg_contents row (data_type 'features', the
//! column's extent, the srs_id) and a gpkg_geometry_columns row (the type
//! given, or the common type of the rows, or GEOMETRY; z and m flags from
//! the rows), and sets the file's application_id and user_version when the
//! file has none. Returns the number of geometries registered. The
//! definitions come from crate::blob::gpkg_tables.

use rusqlite::functions::{Context, FunctionFlags};
use rusqlite::types::ValueRef;
use rusqlite::Connection;

use rusqlite::types::Value;

use crate::blob::{self, gpkg, gpkg_tables};
use crate::sql::{error, guard, Args, SqlFunction, SqlResult};

const NAME: &str = "ambit_gpkg_register";

/// ST_MinX, ST_MaxX, ST_MinY, ST_MaxY (OGC 12-128, Annex F.3, "GeoPackage
/// SQLite Extension"): the envelope of a geometry blob in its own
/// coordinates, whatever its spatial reference.
pub const FUNCTIONS: &[SqlFunction] = &[
    SqlFunction {
        name: "ST_MinX",
        params: &["geom"],
        optional: 0,
        deterministic: true,
        body: |args| envelope_part(args, 0),
    },
    SqlFunction {
        name: "ST_MaxX",
        params: &["geom"],
        optional: 0,
        deterministic: true,
        body: |args| envelope_part(args, 1),
    },
    SqlFunction {
        name: "ST_MinY",
        params: &["geom"],
        optional: 0,
        deterministic: true,
        body: |args| envelope_part(args, 2),
    },
    SqlFunction {
        name: "ST_MaxY",
        params: &["geom"],
        optional: 0,
        deterministic: true,
        body: |args| envelope_part(args, 3),
    },
];

/// Part `i` of `[min_x, max_x, min_y, max_y]`; NULL for NULL and for an
/// empty geometry (the Annex F.3 triggers index neither).
fn envelope_part(args: &Args, i: usize) -> SqlResult {
    let Some(bytes) = args.blob(0)? else {
        return Ok(Value::Null);
    };
    Ok(
        match gpkg_tables::rtree_box(bytes).map_err(|e| args.fail_arg(0, e))? {
            Some(b) => Value::Real(b[i]),
            None => Value::Null,
        },
    )
}

/// Registers ambit_gpkg_register with 2, 3 and 4 arguments.
pub fn register(conn: &Connection) -> rusqlite::Result<()> {
    for arity in 2..=4 {
        conn.create_scalar_function(
            NAME,
            arity,
            FunctionFlags::SQLITE_UTF8 | FunctionFlags::SQLITE_DIRECTONLY,
            |ctx| guard(NAME, || call(ctx)),
        )?;
    }
    Ok(())
}

fn text_arg(ctx: &Context<'_>, i: usize, param: &str) -> rusqlite::Result<String> {
    match ctx.get_raw(i) {
        ValueRef::Text(t) => Ok(String::from_utf8_lossy(t).into_owned()),
        _ => Err(error(
            NAME,
            format!("argument {} ({param}) must be text", i + 1),
        )),
    }
}

use gpkg_tables::ident;

/// What the column holds.
struct Survey {
    rows: i64,
    srs_id: Option<i32>,
    types: Vec<String>,
    has_z: bool,
    has_m: bool,
    all_z: bool,
    all_m: bool,
    extent: Option<[f64; 4]>,
}

/// How a row is named in messages: by rowid in a table; by position in a
/// view, which has no rowid.
fn row_label(is_view: bool, key: i64) -> String {
    if is_view {
        format!("row number {key} of the view")
    } else {
        format!("row with rowid {key}")
    }
}

fn survey(conn: &Connection, table: &str, column: &str, is_view: bool) -> rusqlite::Result<Survey> {
    let key = if is_view {
        "row_number() OVER ()"
    } else {
        "rowid"
    };
    let mut stmt = conn
        .prepare(&format!(
            "SELECT {key}, {} FROM {}",
            ident(column),
            ident(table)
        ))
        .map_err(sqlite)?;
    let mut rows = stmt.query([]).map_err(sqlite)?;
    let mut s = Survey {
        rows: 0,
        srs_id: None,
        types: Vec::new(),
        has_z: false,
        has_m: false,
        all_z: true,
        all_m: true,
        extent: None,
    };
    while let Some(row) = rows.next().map_err(sqlite)? {
        let rowid: i64 = row.get(0).map_err(sqlite)?;
        let label = row_label(is_view, rowid);
        let bytes = match row.get_ref(1).map_err(sqlite)? {
            ValueRef::Null => continue,
            ValueRef::Blob(b) => b,
            other => {
                return Err(error(
                    NAME,
                    format!(
                        "column '{column}' of '{table}' holds a {} value in the {label}; only geometry blobs can be registered",
                        match other {
                            ValueRef::Integer(_) => "integer",
                            ValueRef::Real(_) => "real",
                            _ => "text",
                        }
                    ),
                ))
            }
        };
        let fail = |what: String| {
            error(
                NAME,
                format!("column '{column}' of '{table}', {label}: {what}"),
            )
        };
        if blob::encoding(bytes).map_err(|e| fail(e.to_string()))? != blob::Encoding::GeoPackage {
            return Err(fail(
                "holds plain WKB; a GeoPackage layer needs GeoPackage geometry blobs (make them with ST_GeomFromWKB into a new column)".to_string(),
            ));
        }
        let (g, header) = gpkg::read(bytes).map_err(|e| fail(e.to_string()))?;
        match s.srs_id {
            None => s.srs_id = Some(header.srs_id),
            Some(srs) if srs != header.srs_id => {
                return Err(fail(format!(
                    "srs_id {} differs from srs_id {srs} of earlier rows; a GeoPackage layer has one spatial reference",
                    header.srs_id
                )))
            }
            Some(_) => {}
        }
        let name = g.geometry_type().gpkg_name().to_string();
        if !s.types.contains(&name) {
            s.types.push(name);
        }
        s.has_z |= g.dims.has_z();
        s.has_m |= g.dims.has_m();
        s.all_z &= g.dims.has_z();
        s.all_m &= g.dims.has_m();
        if let Some(e) = g.envelope() {
            s.extent = Some(match s.extent {
                None => [e.min_x, e.min_y, e.max_x, e.max_y],
                Some([a, b, c, d]) => [
                    a.min(e.min_x),
                    b.min(e.min_y),
                    c.max(e.max_x),
                    d.max(e.max_y),
                ],
            });
        }
        s.rows += 1;
    }
    Ok(s)
}

/// An SQLite error met while reading or writing, named as this function's.
fn sqlite(e: rusqlite::Error) -> rusqlite::Error {
    match e {
        rusqlite::Error::SqliteFailure(code, Some(message)) if !message.starts_with(NAME) => {
            rusqlite::Error::SqliteFailure(code, Some(format!("{NAME}: {message}")))
        }
        rusqlite::Error::SqliteFailure(code, None) => {
            rusqlite::Error::SqliteFailure(code, Some(format!("{NAME}: {code}")))
        }
        other => error(NAME, other),
    }
}

/// The savepoint that makes a registration all-or-nothing.
const SAVEPOINT: &str = "ambit_gpkg_register";

fn call(ctx: &Context<'_>) -> rusqlite::Result<i64> {
    let table = text_arg(ctx, 0, "table")?;
    let column = match ctx.get_raw(1) {
        ValueRef::Null => None,
        _ => Some(text_arg(ctx, 1, "column").map_err(|_| {
            error(
                NAME,
                "argument 2 (column) must be text (the geometry column) or NULL (a table without geometry, registered as attributes)",
            )
        })?),
    };
    let declared = if ctx.len() > 2 && ctx.get_raw(2) != ValueRef::Null {
        let t = text_arg(ctx, 2, "type")?.to_uppercase();
        if !gpkg_tables::TYPE_NAMES.contains(&t.as_str()) {
            return Err(error(
                NAME,
                format!(
                    "argument 3 (type) '{t}' is not a GeoPackage geometry type; use one of {} (or NULL for the type of the rows)",
                    gpkg_tables::TYPE_NAMES.join(", ")
                ),
            ));
        }
        Some(t)
    } else {
        None
    };
    let spatial_index = match if ctx.len() > 3 { ctx.get_raw(3) } else { ValueRef::Null } {
        ValueRef::Null | ValueRef::Integer(0) => false,
        ValueRef::Integer(1) => true,
        other => {
            return Err(error(
                NAME,
                format!(
                    "argument 4 (spatial_index) must be 1 (build the GeoPackage R-tree spatial index) or 0, got {}",
                    crate::sql::args::describe(other)
                ),
            ))
        }
    };
    // SAFETY: the connection this function was called on, used only within
    // this call and on this thread, to read the table and write metadata.
    let conn = unsafe { ctx.get_connection()? };
    let Some(column) = column else {
        if declared.is_some() || spatial_index {
            return Err(error(
                NAME,
                "a table without geometry (argument 2 NULL) takes no type and no spatial index",
            ));
        }
        let rows = check_attributes(&conn, &table)?;
        in_savepoint(&conn, || write_attributes(&conn, &table))?;
        return Ok(rows);
    };
    let plan = check(&conn, &table, &column, declared)?;
    let key = if spatial_index {
        Some(index_key(&conn, &table, plan.is_view)?)
    } else {
        None
    };
    in_savepoint(&conn, || {
        write(&conn, &table, &column, &plan)?;
        match &key {
            Some(key) => write_index(&conn, &table, &column, key),
            None => Ok(()),
        }
    })?;
    Ok(plan.survey.rows)
}

/// Runs `writes` inside one savepoint. Every check passed before anything
/// was written, so an SQLite error among the writes (a read-only or full
/// database, a host without the R*Tree module) leaves the file as it was.
fn in_savepoint(
    conn: &Connection,
    writes: impl FnOnce() -> rusqlite::Result<()>,
) -> rusqlite::Result<()> {
    conn.execute_batch(&format!("SAVEPOINT {SAVEPOINT}"))
        .map_err(sqlite)?;
    match writes() {
        Ok(()) => conn
            .execute_batch(&format!("RELEASE {SAVEPOINT}"))
            .map_err(sqlite),
        Err(e) => {
            // The first error is the one to report; a failed rollback
            // cannot add anything the user can act on.
            let _ = conn.execute_batch(&format!("ROLLBACK TO {SAVEPOINT}; RELEASE {SAVEPOINT}"));
            Err(e)
        }
    }
}

/// The columns of `table` with their declared types; an error when there
/// is no such table or view.
fn columns(conn: &Connection, table: &str) -> rusqlite::Result<Vec<(String, String, i64)>> {
    let mut stmt = conn
        .prepare("SELECT name, type, pk FROM pragma_table_info(?1)")
        .map_err(sqlite)?;
    let rows = stmt
        .query_map([table], |r| Ok((r.get(0)?, r.get(1)?, r.get(2)?)))
        .map_err(sqlite)?;
    let columns: Vec<(String, String, i64)> = rows.collect::<Result<_, _>>().map_err(sqlite)?;
    if columns.is_empty() {
        return Err(error(NAME, format!("no table named '{table}'")));
    }
    Ok(columns)
}

/// Checks a table without geometry for registration as attributes: every
/// column must declare a GeoPackage data type (OGC 12-128, clause
/// 1.1.1.1.3, Table 1), which readers need to type its fields. Returns its
/// number of rows.
fn check_attributes(conn: &Connection, table: &str) -> rusqlite::Result<i64> {
    for (name, declared, _) in columns(conn, table)? {
        if !gpkg_tables::is_data_type(&declared) {
            let got = if declared.is_empty() {
                "no declared type (as CREATE TABLE ... AS SELECT leaves expressions)".to_string()
            } else {
                format!("declared type '{declared}'")
            };
            return Err(error(
                NAME,
                format!(
                    "column '{name}' of '{table}' has {got}; GeoPackage readers need one of {} (OGC 12-128, Table 1): declare the table with CREATE TABLE {table} (column TYPE, ...) and fill it with INSERT ... SELECT (nothing was written)",
                    gpkg_tables::DATA_TYPES.join(", ")
                ),
            ));
        }
    }
    conn.query_row(&format!("SELECT count(*) FROM {}", ident(table)), [], |r| {
        r.get(0)
    })
    .map_err(sqlite)
}

/// The integer primary key of `table`, which the R-tree's triggers key
/// their rows by (OGC 12-128, Annex F.3, template variable <i>; clause
/// 2.1.6.1.1, Requirement 29). A view cannot carry triggers.
fn index_key(conn: &Connection, table: &str, is_view: bool) -> rusqlite::Result<String> {
    if is_view {
        return Err(error(
            NAME,
            format!("'{table}' is a view, which cannot carry the triggers of a spatial index; register it without one (argument 4 = 0) or index a table"),
        ));
    }
    let keys: Vec<(String, String)> = columns(conn, table)?
        .into_iter()
        .filter(|(_, _, pk)| *pk > 0)
        .map(|(name, declared, _)| (name, declared))
        .collect();
    match keys.as_slice() {
        [(name, declared)] if declared.eq_ignore_ascii_case("INTEGER") => Ok(name.clone()),
        _ => Err(error(
            NAME,
            format!("a spatial index needs a column declared INTEGER PRIMARY KEY in '{table}' (OGC 12-128, Requirement 29), which the index keys its rows by; '{table}' has none (nothing was written)"),
        )),
    }
}

/// Builds (or rebuilds) the R-tree spatial index of `column` (OGC 12-128,
/// Annex F.3): the rtree_<t>_<c> virtual table, filled, its seven triggers
/// and its gpkg_extensions row.
fn write_index(conn: &Connection, table: &str, column: &str, key: &str) -> rusqlite::Result<()> {
    let rtree = gpkg_tables::rtree_name(table, column);
    for suffix in [
        "insert", "update1", "update2", "update3", "update4", "update5", "update6", "update7",
        "delete",
    ] {
        conn.execute_batch(&format!(
            "DROP TRIGGER IF EXISTS {}",
            ident(&format!("{rtree}_{suffix}"))
        ))
        .map_err(sqlite)?;
    }
    conn.execute_batch(&format!("DROP TABLE IF EXISTS {}", ident(&rtree)))
        .map_err(sqlite)?;
    for statement in gpkg_tables::rtree_sql(table, column, key) {
        conn.execute_batch(&statement).map_err(sqlite)?;
    }
    conn.execute_batch(gpkg_tables::CREATE_EXTENSIONS)
        .map_err(sqlite)?;
    let (name, definition, scope) = gpkg_tables::RTREE_EXTENSION;
    conn.execute(
        "INSERT OR REPLACE INTO gpkg_extensions (table_name, column_name, extension_name, definition, scope) VALUES (?1, ?2, ?3, ?4, ?5)",
        rusqlite::params![table, column, name, definition, scope],
    )
    .map_err(sqlite)?;
    Ok(())
}

/// Writes the container tables and the gpkg_contents row of an attributes
/// table (OGC 12-128, clause 2.4.2, data_type 'attributes', no extent and
/// no spatial reference).
fn write_attributes(conn: &Connection, table: &str) -> rusqlite::Result<()> {
    write_container(conn)?;
    conn.execute(
        "INSERT INTO gpkg_contents (table_name, data_type, identifier, srs_id)
         VALUES (?1, 'attributes', ?1, NULL)
         ON CONFLICT(table_name) DO UPDATE SET data_type = 'attributes',
           last_change = strftime('%Y-%m-%dT%H:%M:%fZ','now'),
           min_x = NULL, min_y = NULL, max_x = NULL, max_y = NULL, srs_id = NULL",
        [table],
    )
    .map_err(sqlite)?;
    Ok(())
}

/// What registration will write, decided before anything is written.
struct Plan {
    survey: Survey,
    srs_id: i64,
    type_name: String,
    is_view: bool,
}

/// Reads the table and checks everything registration needs; writes
/// nothing.
fn check(
    conn: &Connection,
    table: &str,
    column: &str,
    declared: Option<String>,
) -> rusqlite::Result<Plan> {
    let columns: Vec<String> = {
        let mut stmt = conn
            .prepare("SELECT name FROM pragma_table_info(?1)")
            .map_err(sqlite)?;
        let names = stmt
            .query_map([table], |r| r.get::<_, String>(0))
            .map_err(sqlite)?;
        names.collect::<Result<_, _>>().map_err(sqlite)?
    };
    if columns.is_empty() {
        return Err(error(NAME, format!("no table named '{table}'")));
    }
    if !columns.iter().any(|c| c.eq_ignore_ascii_case(column)) {
        return Err(error(
            NAME,
            format!(
                "table '{table}' has no column '{column}' (its columns: {})",
                columns.join(", ")
            ),
        ));
    }
    let is_view: bool = conn
        .query_row(
            "SELECT count(*) > 0 FROM sqlite_schema WHERE type = 'view' AND name = ?1 COLLATE NOCASE",
            [table],
            |r| r.get(0),
        )
        .map_err(sqlite)?;
    let survey = survey(conn, table, column, is_view)?;
    let srs_id = i64::from(survey.srs_id.unwrap_or(4326));
    let found = gpkg_tables::column_type(survey.types.iter().map(String::as_str)).to_string();
    let type_name = match declared {
        Some(t) => {
            if let Some(bad) = survey
                .types
                .iter()
                .find(|st| !gpkg_tables::assignable(st, &t))
            {
                return Err(error(
                    NAME,
                    format!("column '{column}' of '{table}' holds {bad} geometries, which a {t} column cannot hold (OGC 12-128, Requirement 32)"),
                ));
            }
            t
        }
        None => found,
    };
    let built_in = gpkg_tables::SPATIAL_REFS.iter().any(|r| r.srs_id == srs_id);
    let defined = built_in
        || {
            let has_table: bool = conn
            .query_row(
                "SELECT count(*) > 0 FROM sqlite_schema WHERE type = 'table' AND name = 'gpkg_spatial_ref_sys'",
                [],
                |r| r.get(0),
            )
            .map_err(sqlite)?;
            has_table
                && conn
                    .query_row(
                        "SELECT count(*) > 0 FROM gpkg_spatial_ref_sys WHERE srs_id = ?1",
                        [srs_id],
                        |r| r.get::<_, bool>(0),
                    )
                    .map_err(sqlite)?
        };
    if !defined {
        return Err(error(
            NAME,
            format!("srs_id {srs_id} of column '{column}' is not in gpkg_spatial_ref_sys; add its definition there first (nothing was written)"),
        ));
    }
    Ok(Plan {
        survey,
        srs_id,
        type_name,
        is_view,
    })
}

/// Writes the container tables and the rows of one features layer.
fn write(conn: &Connection, table: &str, column: &str, plan: &Plan) -> rusqlite::Result<()> {
    let s = &plan.survey;
    write_container(conn)?;
    let extent = s.extent.map(|e| e.to_vec());
    let e = |i: usize| extent.as_ref().map(|v| v[i]);
    conn.execute(
        "INSERT INTO gpkg_contents (table_name, data_type, identifier, min_x, min_y, max_x, max_y, srs_id)
         VALUES (?1, 'features', ?1, ?2, ?3, ?4, ?5, ?6)
         ON CONFLICT(table_name) DO UPDATE SET data_type = 'features',
           last_change = strftime('%Y-%m-%dT%H:%M:%fZ','now'),
           min_x = excluded.min_x, min_y = excluded.min_y, max_x = excluded.max_x,
           max_y = excluded.max_y, srs_id = excluded.srs_id",
        rusqlite::params![table, e(0), e(1), e(2), e(3), plan.srs_id],
    )
    .map_err(sqlite)?;
    let flag = |any: bool, all: bool| {
        if !any {
            0
        } else if all {
            1
        } else {
            2
        }
    };
    conn.execute(
        "INSERT OR REPLACE INTO gpkg_geometry_columns (table_name, column_name, geometry_type_name, srs_id, z, m)
         VALUES (?1, ?2, ?3, ?4, ?5, ?6)",
        rusqlite::params![
            table,
            column,
            plan.type_name,
            plan.srs_id,
            flag(s.has_z, s.all_z),
            flag(s.has_m, s.all_m)
        ],
    )
    .map_err(sqlite)?;
    Ok(())
}

/// The container tables, the required spatial reference rows (OGC 12-128,
/// Requirement 11) and the file header values, each written only if
/// missing.
fn write_container(conn: &Connection) -> rusqlite::Result<()> {
    conn.execute_batch(gpkg_tables::CREATE_TABLES)
        .map_err(sqlite)?;
    for r in gpkg_tables::SPATIAL_REFS {
        conn.execute(
            "INSERT OR IGNORE INTO gpkg_spatial_ref_sys (srs_name, srs_id, organization, organization_coordsys_id, definition, description) VALUES (?1, ?2, ?3, ?4, ?5, ?6)",
            rusqlite::params![r.srs_name, r.srs_id, r.organization, r.organization_coordsys_id, r.definition, r.description],
        ).map_err(sqlite)?;
    }
    let application_id: i64 = conn
        .query_row("PRAGMA application_id", [], |r| r.get(0))
        .map_err(sqlite)?;
    if application_id == 0 {
        conn.execute_batch(&format!(
            "PRAGMA application_id = {}; PRAGMA user_version = {};",
            gpkg_tables::APPLICATION_ID,
            gpkg_tables::USER_VERSION
        ))
        .map_err(sqlite)?;
    }
    Ok(())
}
