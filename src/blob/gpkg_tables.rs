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
}
