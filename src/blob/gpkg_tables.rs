//! The GeoPackage container tables ambit writes when it registers a table
//! of geometries (OGC 12-128): their definitions (Annex C, table definition
//! SQL, reproduced from memory of the standard and checked by reading the
//! result back with an independent GeoPackage reader in the tests), the
//! spatial reference rows every GeoPackage must hold (Requirements 11: the
//! rows for srs_id -1, 0 and 4326), and the file header values
//! (Requirement 2: application_id 'GPKG'; user_version 10300 for version
//! 1.3).

/// `PRAGMA application_id` of a GeoPackage: the ASCII bytes 'GPKG'.
pub const APPLICATION_ID: i64 = 0x4750_4B47;
/// `PRAGMA user_version` of a GeoPackage 1.3 file.
pub const USER_VERSION: i64 = 10300;

/// The definitions of gpkg_spatial_ref_sys, gpkg_contents and
/// gpkg_geometry_columns (created only if missing).
pub const CREATE_TABLES: &str = "
CREATE TABLE IF NOT EXISTS gpkg_spatial_ref_sys (
  srs_name TEXT NOT NULL,
  srs_id INTEGER PRIMARY KEY,
  organization TEXT NOT NULL,
  organization_coordsys_id INTEGER NOT NULL,
  definition TEXT NOT NULL,
  description TEXT
);
CREATE TABLE IF NOT EXISTS gpkg_contents (
  table_name TEXT NOT NULL PRIMARY KEY,
  data_type TEXT NOT NULL,
  identifier TEXT UNIQUE,
  description TEXT DEFAULT '',
  last_change DATETIME NOT NULL DEFAULT (strftime('%Y-%m-%dT%H:%M:%fZ','now')),
  min_x DOUBLE,
  min_y DOUBLE,
  max_x DOUBLE,
  max_y DOUBLE,
  srs_id INTEGER,
  CONSTRAINT fk_gc_r_srs_id FOREIGN KEY (srs_id) REFERENCES gpkg_spatial_ref_sys(srs_id)
);
CREATE TABLE IF NOT EXISTS gpkg_geometry_columns (
  table_name TEXT NOT NULL,
  column_name TEXT NOT NULL,
  geometry_type_name TEXT NOT NULL,
  srs_id INTEGER NOT NULL,
  z TINYINT NOT NULL,
  m TINYINT NOT NULL,
  CONSTRAINT pk_geom_cols PRIMARY KEY (table_name, column_name),
  CONSTRAINT uk_gc_table_name UNIQUE (table_name),
  CONSTRAINT fk_gc_tn FOREIGN KEY (table_name) REFERENCES gpkg_contents(table_name),
  CONSTRAINT fk_gc_srs FOREIGN KEY (srs_id) REFERENCES gpkg_spatial_ref_sys (srs_id)
);
";

/// A row of gpkg_spatial_ref_sys.
pub struct SpatialRef {
    pub srs_name: &'static str,
    pub srs_id: i64,
    pub organization: &'static str,
    pub organization_coordsys_id: i64,
    pub definition: &'static str,
    pub description: &'static str,
}

/// The rows ambit writes: the three every GeoPackage must have
/// (Requirement 11) and NAD83, which ambit also reads as longitude/latitude.
/// Definitions are OGC WKT of the EPSG entries (from memory).
pub const SPATIAL_REFS: &[SpatialRef] = &[
    SpatialRef {
        srs_name: "Undefined cartesian SRS",
        srs_id: -1,
        organization: "NONE",
        organization_coordsys_id: -1,
        definition: "undefined",
        description: "undefined cartesian coordinate reference system",
    },
    SpatialRef {
        srs_name: "Undefined geographic SRS",
        srs_id: 0,
        organization: "NONE",
        organization_coordsys_id: 0,
        definition: "undefined",
        description: "undefined geographic coordinate reference system",
    },
    SpatialRef {
        srs_name: "WGS 84 geodetic",
        srs_id: 4326,
        organization: "EPSG",
        organization_coordsys_id: 4326,
        definition: "GEOGCS[\"WGS 84\",DATUM[\"WGS_1984\",SPHEROID[\"WGS 84\",6378137,298.257223563,AUTHORITY[\"EPSG\",\"7030\"]],AUTHORITY[\"EPSG\",\"6326\"]],PRIMEM[\"Greenwich\",0,AUTHORITY[\"EPSG\",\"8901\"]],UNIT[\"degree\",0.0174532925199433,AUTHORITY[\"EPSG\",\"9122\"]],AUTHORITY[\"EPSG\",\"4326\"]]",
        description: "longitude/latitude coordinates in decimal degrees on the WGS 84 spheroid",
    },
    SpatialRef {
        srs_name: "NAD83",
        srs_id: 4269,
        organization: "EPSG",
        organization_coordsys_id: 4269,
        definition: "GEOGCS[\"NAD83\",DATUM[\"North_American_Datum_1983\",SPHEROID[\"GRS 1980\",6378137,298.257222101,AUTHORITY[\"EPSG\",\"7019\"]],AUTHORITY[\"EPSG\",\"6269\"]],PRIMEM[\"Greenwich\",0,AUTHORITY[\"EPSG\",\"8901\"]],UNIT[\"degree\",0.0174532925199433,AUTHORITY[\"EPSG\",\"9122\"]],AUTHORITY[\"EPSG\",\"4269\"]]",
        description: "longitude/latitude coordinates in decimal degrees on the GRS 1980 spheroid",
    },
];

/// The GeoPackage geometry type a column of these types is registered as:
/// the common type, or GEOMETRY when they differ (OGC 12-128, Requirement
/// 32: every stored geometry must be of the column's type or a subtype).
pub fn column_type<'a>(types: impl IntoIterator<Item = &'a str>) -> &'a str {
    let mut found: Option<&str> = None;
    for t in types {
        match found {
            None => found = Some(t),
            Some(f) if f == t => {}
            Some(_) => return "GEOMETRY",
        }
    }
    found.unwrap_or("GEOMETRY")
}

/// True when a geometry of type `stored` may sit in a column declared
/// `declared` (Requirement 32; the type hierarchy of Annex E: GEOMETRY
/// holds all, GEOMCOLLECTION holds the multi types).
pub fn assignable(stored: &str, declared: &str) -> bool {
    stored == declared
        || declared == "GEOMETRY"
        || (declared == "GEOMCOLLECTION"
            && matches!(stored, "MULTIPOINT" | "MULTILINESTRING" | "MULTIPOLYGON"))
}

/// The geometry type names of OGC 12-128 that ambit can register.
pub const TYPE_NAMES: &[&str] = &[
    "GEOMETRY",
    "POINT",
    "LINESTRING",
    "POLYGON",
    "MULTIPOINT",
    "MULTILINESTRING",
    "MULTIPOLYGON",
    "GEOMCOLLECTION",
];

/// The definition of gpkg_extensions (OGC 12-128, clause 2.5.2.1.1,
/// Table 17 / Annex C), created only if missing.
pub const CREATE_EXTENSIONS: &str = "
CREATE TABLE IF NOT EXISTS gpkg_extensions (
  table_name TEXT,
  column_name TEXT,
  extension_name TEXT NOT NULL,
  definition TEXT NOT NULL,
  scope TEXT NOT NULL,
  CONSTRAINT ge_tce UNIQUE (table_name, column_name, extension_name)
);
";

/// The gpkg_extensions row of an R-tree spatial index (OGC 12-128, Annex
/// F.3 "RTree Spatial Indexes": extension name, definition and scope
/// write-only, "because it does not change the result of reads").
pub const RTREE_EXTENSION: (&str, &str, &str) = (
    "gpkg_rtree_index",
    "http://www.geopackage.org/spec/#extension_rtree",
    "write-only",
);

/// The column types a GeoPackage user table may declare (OGC 12-128,
/// clause 1.1.1.1.3, Table 1 "GeoPackage Data Types"; TEXT and BLOB may
/// carry a size, as TEXT(15)), besides the geometry type names of
/// [`TYPE_NAMES`] and their Annex E subtypes.
pub const DATA_TYPES: &[&str] = &[
    "BOOLEAN",
    "TINYINT",
    "SMALLINT",
    "MEDIUMINT",
    "INT",
    "INTEGER",
    "FLOAT",
    "DOUBLE",
    "REAL",
    "TEXT",
    "BLOB",
    "DATE",
    "DATETIME",
];

/// True when `declared` (a column's declared type, as SQLite reports it) is
/// one of the GeoPackage data types of Table 1 or a geometry type.
pub fn is_data_type(declared: &str) -> bool {
    let t = declared.trim().to_ascii_uppercase();
    let base = t.split('(').next().unwrap_or("").trim();
    if base.is_empty() {
        return false;
    }
    let sized = t.len() > base.len();
    (DATA_TYPES.contains(&base) && (!sized || base == "TEXT" || base == "BLOB"))
        || (!sized && (TYPE_NAMES.contains(&base) || base == "CURVE" || base == "SURFACE"))
}

/// A quoted SQL identifier.
pub fn ident(name: &str) -> String {
    format!("\"{}\"", name.replace('"', "\"\""))
}

/// The name of the R-tree of column `column` of `table`: `rtree_<t>_<c>`.
pub fn rtree_name(table: &str, column: &str) -> String {
    format!("rtree_{table}_{column}")
}

/// The SQL that builds the R-tree spatial index of column `c` of table `t`
/// whose integer primary key is `i`, in order: the virtual table, the
/// statement that fills it, and the seven triggers that keep it current.
/// The templates are those of OGC 12-128 Annex F.3 "RTree Spatial
/// Indexes": "Create Virtual Table", "Load Spatial Index Values" (with the
/// condition added in version 1.3 that skips empty geometries) and the
/// triggers of version 1.4 (insert, update6, update7, update2, update5,
/// update4, delete; 1.4 replaced update1 by update6 and update7, which
/// work under UPSERT, and update3 by update5, which also fires when only
/// the primary key changes), with the names quoted as SQL identifiers.
pub fn rtree_sql(t: &str, c: &str, i: &str) -> Vec<String> {
    let r = ident(&rtree_name(t, c));
    let trigger = |suffix: &str| ident(&format!("{}_{suffix}", rtree_name(t, c)));
    let (t, c, i) = (ident(t), ident(c), ident(i));
    let values =
        format!("NEW.{i}, ST_MinX(NEW.{c}), ST_MaxX(NEW.{c}), ST_MinY(NEW.{c}), ST_MaxY(NEW.{c})");
    let new_set = format!("(NEW.{c} NOTNULL AND NOT ST_IsEmpty(NEW.{c}))");
    let new_unset = format!("(NEW.{c} ISNULL OR ST_IsEmpty(NEW.{c}))");
    vec![
        format!("CREATE VIRTUAL TABLE {r} USING rtree(id, minx, maxx, miny, maxy)"),
        format!(
            "INSERT OR REPLACE INTO {r} SELECT {i}, ST_MinX({c}), ST_MaxX({c}), ST_MinY({c}), ST_MaxY({c}) FROM {t} WHERE NOT ST_IsEmpty({c})"
        ),
        format!(
            "CREATE TRIGGER {} AFTER INSERT ON {t} WHEN (NEW.{c} NOT NULL AND NOT ST_IsEmpty(NEW.{c})) BEGIN INSERT OR REPLACE INTO {r} VALUES ({values}); END",
            trigger("insert")
        ),
        format!(
            "CREATE TRIGGER {} AFTER UPDATE OF {c} ON {t} WHEN OLD.{i} = NEW.{i} AND {new_set} AND (OLD.{c} NOTNULL AND NOT ST_IsEmpty(OLD.{c})) BEGIN UPDATE {r} SET minx = ST_MinX(NEW.{c}), maxx = ST_MaxX(NEW.{c}), miny = ST_MinY(NEW.{c}), maxy = ST_MaxY(NEW.{c}) WHERE id = NEW.{i}; END",
            trigger("update6")
        ),
        format!(
            "CREATE TRIGGER {} AFTER UPDATE OF {c} ON {t} WHEN OLD.{i} = NEW.{i} AND {new_set} AND (OLD.{c} ISNULL OR ST_IsEmpty(OLD.{c})) BEGIN INSERT INTO {r} VALUES ({values}); END",
            trigger("update7")
        ),
        format!(
            "CREATE TRIGGER {} AFTER UPDATE OF {c} ON {t} WHEN OLD.{i} = NEW.{i} AND {new_unset} BEGIN DELETE FROM {r} WHERE id = OLD.{i}; END",
            trigger("update2")
        ),
        format!(
            "CREATE TRIGGER {} AFTER UPDATE ON {t} WHEN OLD.{i} != NEW.{i} AND {new_set} BEGIN DELETE FROM {r} WHERE id = OLD.{i}; INSERT OR REPLACE INTO {r} VALUES ({values}); END",
            trigger("update5")
        ),
        format!(
            "CREATE TRIGGER {} AFTER UPDATE ON {t} WHEN OLD.{i} != NEW.{i} AND {new_unset} BEGIN DELETE FROM {r} WHERE id IN (OLD.{i}, NEW.{i}); END",
            trigger("update4")
        ),
        format!(
            "CREATE TRIGGER {} AFTER DELETE ON {t} WHEN OLD.{c} NOT NULL BEGIN DELETE FROM {r} WHERE id = OLD.{i}; END",
            trigger("delete")
        ),
    ]
}

/// The box an R-tree spatial index stores for a geometry blob: its XY
/// envelope `[min_x, max_x, min_y, max_y]` in the blob's own coordinates
/// (any spatial reference: no longitude/latitude check), read from the
/// GeoPackage header when it carries one (OGC 12-128, clause 2.1.3.1.1),
/// else computed from the WKB; `None` for an empty geometry (the Annex F.3
/// triggers never index one).
pub fn rtree_box(buf: &[u8]) -> Result<Option<[f64; 4]>, crate::error::GeomError> {
    if crate::blob::encoding(buf)? == crate::blob::Encoding::GeoPackage {
        let header = crate::blob::gpkg::read_header(buf)?;
        if header.empty {
            return Ok(None);
        }
        if let Some(envelope) = header.envelope {
            return Ok(Some(envelope));
        }
    }
    let decoded = crate::blob::decode(buf)?;
    Ok(decoded
        .geometry
        .envelope()
        .map(|e| [e.min_x, e.max_x, e.min_y, e.max_y]))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn column_types_follow_the_type_hierarchy() {
        assert_eq!(column_type(["POLYGON", "POLYGON"]), "POLYGON");
        assert_eq!(column_type(["POLYGON", "MULTIPOLYGON"]), "GEOMETRY");
        assert!(assignable("MULTIPOLYGON", "GEOMCOLLECTION"));
        assert!(!assignable("POLYGON", "MULTIPOLYGON"));
        assert!(assignable("POINT", "GEOMETRY"));
        assert_eq!(APPLICATION_ID.to_be_bytes()[4..], *b"GPKG");
    }

    #[test]
    fn declared_types_follow_table_1() {
        // OGC 12-128, clause 1.1.1.1.3, Table 1.
        for ok in [
            "INTEGER",
            "real",
            "TEXT(15)",
            "BLOB(10)",
            "DATETIME",
            "MULTIPOLYGON",
            "POINT",
        ] {
            assert!(is_data_type(ok), "{ok}");
        }
        for bad in ["", "NUM", "VARCHAR", "INTEGER(3)", "POINT(2)"] {
            assert!(!is_data_type(bad), "{bad}");
        }
    }

    #[test]
    fn rtree_boxes_come_from_the_header_or_the_coordinates() {
        use crate::blob::{gpkg, wkb, wkt};
        // Projected coordinates are not range-checked.
        let g = wkt::parse("LINESTRING (500000 4000000, 510000 3990000)").unwrap();
        let expected = Some([500000.0, 510000.0, 3990000.0, 4000000.0]);
        assert_eq!(rtree_box(&gpkg::write(&g, 32617)).unwrap(), expected);
        assert_eq!(rtree_box(&wkb::write(&g)).unwrap(), expected);
        let empty = wkt::parse("POLYGON EMPTY").unwrap();
        assert_eq!(rtree_box(&gpkg::write(&empty, 4326)).unwrap(), None);
        assert!(rtree_box(b"xyz").is_err());
    }
}
