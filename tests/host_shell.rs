//! ambit in the real shell analysts use: /usr/bin/sqlite3 of Debian 12
//! (SQLite 3.40.1), loaded with `.load`, the way the README says.

mod common;

use common::{query, shell};

#[test]
fn loads_into_the_stock_shell_and_answers() {
    let out = query("SELECT ambit_version(), sqlite_version();");
    assert_eq!(out, format!("{}|3.40.1", env!("CARGO_PKG_VERSION")));
}

/// The functions of design.md's vocabulary that this build registers.
const FUNCTIONS: &[&str] = &[
    "ST_GeomFromText",
    "ST_GeomFromWKB",
    "ST_Point",
    "ST_AsText",
    "ST_AsBinary",
    "ST_X",
    "ST_Y",
    "ST_SRID",
    "ST_GeometryType",
    "ST_IsEmpty",
    "ST_MinX",
    "ST_MaxX",
    "ST_MinY",
    "ST_MaxY",
    "ambit_from_geojson",
    "ambit_to_geojson",
    "ambit_to_lonlat",
    "ambit_distance",
    "ambit_within",
    "ambit_area",
    "ambit_length",
    "ambit_layer",
    "ambit_layer_from",
    "ambit_layer_drop",
    "ambit_reached",
    "ambit_nearest",
    "ambit_count",
    "ambit_share",
    "ambit_gpkg_register",
    "ambit_feature_collection",
    "ambit_choropleth_svg",
    "ambit_miles",
    "ambit_feet",
    "ambit_km",
    "ambit_version",
    "ambit_info",
    // The SQL standard's aggregates that SQLite lacks (src/sql/stats.rs).
    "stddev_samp",
    "stddev_pop",
    "var_samp",
    "var_pop",
];

#[test]
fn registers_the_vocabulary_deterministic_where_it_is() {
    // pragma_function_list: flags bit 0x800 is SQLITE_DETERMINISTIC.
    let out = query(
        "SELECT name, max(flags & 0x800 != 0) FROM pragma_function_list \
         WHERE name LIKE 'st\\_%' ESCAPE '\\' OR name LIKE 'ambit\\_%' ESCAPE '\\' \
         OR name IN ('stddev_samp', 'stddev_pop', 'var_samp', 'var_pop') \
         GROUP BY name ORDER BY name;",
    );
    let mut expected: Vec<String> = FUNCTIONS
        .iter()
        .map(|f| {
            // Layer functions depend on the connection's layers,
            // ambit_info on the thread pool, ambit_to_lonlat on the
            // database's gpkg_spatial_ref_sys, and the rendering aggregates
            // on the order of their rows.
            let deterministic = !matches!(
                *f,
                "ambit_info"
                    | "ambit_layer"
                    | "ambit_layer_from"
                    | "ambit_layer_drop"
                    | "ambit_reached"
                    | "ambit_nearest"
                    | "ambit_count"
                    | "ambit_share"
                    | "ambit_gpkg_register"
                    | "ambit_to_lonlat"
                    | "ambit_feature_collection"
                    | "ambit_choropleth_svg"
            );
            format!("{}|{}", f.to_lowercase(), deterministic as i32)
        })
        .collect();
    expected.sort();
    let mut got: Vec<&str> = out.lines().collect();
    got.sort();
    assert_eq!(got, expected);
}

#[test]
fn null_in_null_out_for_every_geometry_function() {
    for call in [
        "ST_GeomFromText(NULL)",
        "ST_GeomFromText(NULL, 4326)",
        "ST_GeomFromWKB(NULL)",
        "ST_GeomFromWKB(NULL, 4326)",
        "ST_Point(NULL, 1)",
        "ST_Point(1, NULL, 4326)",
        "ST_AsText(NULL)",
        "ST_AsBinary(NULL)",
        "ST_X(NULL)",
        "ST_Y(NULL)",
        "ST_SRID(NULL)",
        "ST_GeometryType(NULL)",
        "ST_IsEmpty(NULL)",
        "ambit_from_geojson(NULL)",
        "ambit_to_geojson(NULL)",
        "ambit_to_geojson(NULL, 3)",
        "ambit_distance(NULL, ST_Point(1, 2))",
        "ambit_distance(ST_Point(1, 2), NULL)",
        "ambit_distance(ST_GeomFromText('POINT EMPTY'), ST_Point(1, 2))",
        "ambit_within(NULL, ST_Point(1, 2), 5)",
        "ambit_within(ST_Point(1, 2), ST_Point(1, 2), NULL)",
        "ambit_area(NULL)",
        "ambit_length(NULL)",
        "ambit_miles(NULL)",
        "ambit_feet(NULL)",
        "ambit_km(NULL)",
    ] {
        assert_eq!(query(&format!("SELECT {call} IS NULL;")), "1", "{call}");
    }
}

#[test]
fn units_use_the_exact_international_definitions() {
    // NIST SP 811 (2008), appendix B.8: 1 mi = 1609.344 m, 1 ft = 0.3048 m
    // exactly. Half a mile (parks) and one and three miles (facilities,
    // urban and rural) are the thresholds of the trade (common practice, no
    // source).
    assert_eq!(
        query("SELECT ambit_miles(0.5), ambit_miles(1), ambit_miles(3), ambit_feet(5280), ambit_km(1.5);"),
        "804.672|1609.344|4828.032|1609.344|1500.0"
    );
}

/// One bad input: the SQL, then the pieces its error message must hold
/// (the function, the argument, the problem).
struct Bad {
    sql: &'static str,
    message: &'static [&'static str],
}

// A GeoPackage blob: 'GP', version 0, flags 0x01 (little endian, no
// envelope), srs_id 5070 (0x13CE), then the WKB of POINT (1 2).
const GPKG_5070: &str = "x'47500001CE1300000101000000000000000000F03F0000000000000040'";

const BAD_INPUTS: &[Bad] = &[
    Bad {
        sql: "SELECT ST_AsText('POINT (1 2)');",
        message: &["ST_AsText: argument 1 (geom)", "must be a geometry blob, got text 'POINT (1 2)'", "ST_GeomFromText"],
    },
    Bad {
        sql: "SELECT ST_X(42);",
        message: &["ST_X: argument 1 (geom)", "must be a geometry blob, got integer 42"],
    },
    Bad {
        sql: "SELECT ST_AsText(x'');",
        message: &["ST_AsText: argument 1 (geom)", "empty blob"],
    },
    Bad {
        sql: "SELECT ST_AsText(x'47500003');",
        message: &["ST_AsText: argument 1 (geom)", "truncated GeoPackage geometry: the header needs 8 bytes at byte 0 but the blob has 4 bytes"],
    },
    Bad {
        sql: "SELECT ST_AsText(x'0101000000000000000000F03F');",
        message: &["ST_AsText: argument 1 (geom)", "truncated WKB: a point's coordinates needs 16 bytes at byte 5 but the blob has 13 bytes"],
    },
    Bad {
        sql: "SELECT ST_AsText(x'0163000000');",
        message: &["ST_AsText: argument 1 (geom)", "unknown WKB geometry type code 99 at byte 1"],
    },
    Bad {
        sql: "SELECT ST_AsText(x'47500001000000000201000000000000000000F03F0000000000000040');",
        message: &["ST_AsText: argument 1 (geom)", "bad WKB byte-order byte 0x02 at byte 8"],
    },
    Bad {
        sql: "SELECT ST_AsBinary(x'0201000000');",
        message: &["ST_AsBinary: argument 1 (geom)", "first byte 0x02", "WKB byte order (0 or 1)"],
    },
    Bad {
        sql: "SELECT ST_GeomFromText('POLYGON ((0 0, 1 0, 0 0))');",
        message: &["ST_GeomFromText: argument 1 (wkt)", "ring 1 has 3 points; a polygon ring needs at least 4"],
    },
    Bad {
        sql: "SELECT ST_GeomFromText('POLYGON ((0 0, 1 0, 1 1, 0 1))');",
        message: &["ST_GeomFromText: argument 1 (wkt)", "ring 1 is not closed"],
    },
    Bad {
        sql: "SELECT ST_AsText(x'0101000000000000000000F87F000000000000F03F');",
        message: &["ST_AsText: argument 1 (geom)", "vertex 1 has a NaN or infinite coordinate"],
    },
    Bad {
        sql: "SELECT ST_Point(200, 95);",
        message: &["ST_Point: vertex 1 (200, 95) is outside longitude [-540, 540] / latitude [-90, 90]"],
    },
    Bad {
        sql: "SELECT ST_Point(500000, 4500000);",
        message: &["ST_Point: vertex 1 (500000, 4500000)", "look projected"],
    },
    Bad {
        sql: "SELECT ST_Point(1, 2, 3857);",
        message: &["ST_Point: srs_id 3857 is not longitude/latitude", "ambit_to_lonlat"],
    },
    Bad {
        sql: "SELECT ST_AsText(x'47500001CE1300000101000000000000000000F03F0000000000000040');",
        message: &["ST_AsText: argument 1 (geom): srs_id 5070 is not longitude/latitude", "EPSG:4326"],
    },
    Bad {
        sql: "SELECT ST_GeomFromText('POINT (1 2');",
        message: &["ST_GeomFromText: argument 1 (wkt): malformed WKT at character"],
    },
    Bad {
        sql: "SELECT ambit_from_geojson('{\"type\": \"Point\"');",
        message: &["ambit_from_geojson: argument 1 (geojson): malformed GeoJSON"],
    },
    Bad {
        sql: "SELECT ambit_from_geojson('{\"type\": \"Circle\", \"coordinates\": [1, 2]}');",
        message: &["ambit_from_geojson: argument 1 (geojson): malformed GeoJSON", "Circle"],
    },
    Bad {
        sql: "SELECT ST_X();",
        message: &["wrong number of arguments to function ST_X()"],
    },
    Bad {
        sql: "SELECT ST_Point(1, 2, 3, 4);",
        message: &["wrong number of arguments to function ST_Point()"],
    },
    Bad {
        sql: "SELECT ST_Point('east', 2);",
        message: &["ST_Point: argument 1 (x): must be a number, got text 'east'"],
    },
    Bad {
        sql: "SELECT ST_X(ST_GeomFromText('LINESTRING (0 0, 1 1)'));",
        message: &["ST_X: argument 1 (geom): expected a POINT, got a LINESTRING"],
    },
    Bad {
        sql: "SELECT ambit_to_geojson(ST_Point(1, 2), 99);",
        message: &["ambit_to_geojson: argument 2 (decimals): must be between 0 and 15, got 99"],
    },
    Bad {
        sql: "SELECT ST_AsText(x'47500021E61000000101000000000000000000F03F0000000000000040');",
        message: &["ST_AsText: argument 1 (geom): ExtendedGeoPackageBinary"],
    },
    Bad {
        sql: "SELECT ST_GeomFromWKB(ST_Point(1, 2), 4269);",
        message: &["ST_GeomFromWKB: argument 2 (srid): is 4269 but the GeoPackage blob already carries srs_id 4326"],
    },
    Bad {
        sql: "SELECT ambit_within(ST_Point(1, 2), ST_Point(1, 2), -5);",
        message: &["ambit_within: argument 3 (metres): must be a distance of 0 or more metres, got -5"],
    },
    Bad {
        sql: "SELECT ambit_within(ST_Point(1, 2), ST_Point(1, 2), 'far');",
        message: &["ambit_within: argument 3 (metres): 'far' must be a length such as '0.5 mi', '800 m', '3 km' or '2640 ft'"],
    },
    Bad {
        sql: "SELECT ambit_distance(ST_Point(1, 2), x'47500001CE1300000101000000000000000000F03F0000000000000040');",
        message: &["ambit_distance: argument 2 (b): srs_id 5070 is not longitude/latitude"],
    },
    Bad {
        sql: "SELECT ambit_area('POLYGON ((0 0, 1 0, 1 1, 0 0))');",
        message: &["ambit_area: argument 1 (geom): must be a geometry blob, got text"],
    },
    Bad {
        sql: "SELECT ambit_feature_collection(ST_Point(1, 2), '[1, 2]');",
        message: &["ambit_feature_collection: argument 2 (properties): must be a JSON object", "got a JSON array (row 1)"],
    },
    Bad {
        sql: "SELECT ambit_choropleth_svg(ST_Point(1, 2), 5);",
        message: &["ambit_choropleth_svg: argument 1 (geom): expects polygons (POLYGON or MULTIPOLYGON), got a POINT"],
    },
    Bad {
        sql: "SELECT ambit_choropleth_svg(ST_GeomFromText('POLYGON ((0 0, 1 0, 1 1, 0 0))'), 'x');",
        message: &["ambit_choropleth_svg: argument 2 (value): must be a number, got text 'x'"],
    },
    Bad {
        sql: "SELECT ambit_choropleth_svg(ST_Point(1, 2));",
        message: &["wrong number of arguments to function ambit_choropleth_svg()"],
    },
    // Valid geometries (README): polygons must mean one area.
    Bad {
        sql: "SELECT ST_GeomFromText('POLYGON((0 0,0.001 0,0.001 0.001,0 0),(1 1,2 1,2 2,1 1))');",
        message: &["ST_GeomFromText: argument 1 (wkt): invalid polygon: polygon 1, ring 2 is a hole outside its exterior ring 1; a hole must lie inside its exterior (a separate area is another polygon of a MULTIPOLYGON)"],
    },
    Bad {
        sql: "SELECT ST_GeomFromText('POLYGON((0 0, 1 1, 1 0, 0 1, 0 0))');",
        message: &["ST_GeomFromText: argument 1 (wkt): invalid polygon: polygon 1, ring 1 crosses the same ring near (0.5, 0.5) (edges at vertex 1 and vertex 3); a ring must not cross itself (it may touch itself at a vertex): split the area into polygons or repair it"],
    },
    Bad {
        sql: "SELECT ST_GeomFromText('POLYGON((0 0, 0.5 0.5, 1 1, 1 0, 0.5 0.5, 0 1, 0 0))');",
        message: &["ST_GeomFromText: argument 1 (wkt): invalid polygon: polygon 1, ring 1 crosses the same ring near (0.5, 0.5)"],
    },
    Bad {
        sql: "SELECT ST_GeomFromText('POLYGON((0 0, 1 0, 1 1, 0 1, 0 0),(0.1 0.1, 0.9 0.1, 0.9 0.9, 0.1 0.9, 0.1 0.1),(0.4 0.4, 0.6 0.4, 0.6 0.6, 0.4 0.6, 0.4 0.4))');",
        message: &["ST_GeomFromText: argument 1 (wkt): invalid polygon: polygon 1, ring 3 lies inside hole ring 2; holes must not nest (an island in a hole is another polygon of a MULTIPOLYGON)"],
    },
    Bad {
        sql: "SELECT ST_GeomFromText('POLYGON((0 0, 1 0, 1 1, 0 1, 0 0),(0.5 0.5, 1.5 0.5, 1.5 0.6, 0.5 0.5))');",
        message: &["ST_GeomFromText: argument 1 (wkt): invalid polygon: polygon 1, ring 1 crosses ring 2 near (1, 0.5) (edges at vertex 2 and vertex 1); the rings of a polygon may touch at points but not cross"],
    },
    Bad {
        sql: "SELECT ST_GeomFromText('MULTIPOLYGON(((0 0, 1 0, 1 1, 0 1, 0 0)),((0.5 0.5, 2 0.5, 2 2, 0.5 0.5)))');",
        message: &["ST_GeomFromText: argument 1 (wkt): invalid polygon: polygon 1, ring 1 crosses polygon 2, ring 1 near (1, 1) (edges at vertex 3 and vertex 3); the polygons of a MULTIPOLYGON must not overlap (they may touch at points)"],
    },
    Bad {
        sql: "SELECT ST_GeomFromText('MULTIPOLYGON(((0 0, 1 0, 1 1, 0 1, 0 0)),((0.2 0.2, 0.4 0.2, 0.4 0.4, 0.2 0.2)))');",
        message: &["ST_GeomFromText: argument 1 (wkt): invalid multipolygon: polygon 2 lies inside polygon 1; the polygons of a MULTIPOLYGON must not overlap"],
    },
    Bad {
        sql: "SELECT ambit_from_geojson('{\"type\":\"Polygon\",\"coordinates\":[[[0,0],[1,1],[1,0],[0,1],[0,0]]]}');",
        message: &["ambit_from_geojson: argument 1", "invalid polygon: polygon 1, ring 1 crosses the same ring near (0.5, 0.5)"],
    },
    Bad {
        sql: "SELECT ambit_miles('half');",
        message: &["ambit_miles: argument 1 (miles): must be a number, got text 'half'"],
    },
    Bad {
        sql: "SELECT stddev_samp(x) FROM (SELECT 'abc' AS x);",
        message: &["stddev_samp: argument 1 (x): must be a number, got text 'abc'"],
    },
];

#[test]
fn every_bad_input_gets_a_clear_error_and_the_shell_survives() {
    for bad in BAD_INPUTS {
        let run = shell(&format!("{}\nSELECT 'alive';", bad.sql));
        assert_eq!(run.status, 1, "{}: exit status\n{}", bad.sql, run.stderr);
        for piece in bad.message {
            assert!(
                run.stderr.contains(piece),
                "{}\n  expected in the message: {piece}\n  got: {}",
                bad.sql,
                run.stderr
            );
        }
        assert_eq!(
            run.stdout.trim(),
            "alive",
            "{}: shell did not go on",
            bad.sql
        );
        assert!(
            !run.stderr.contains("panic"),
            "{}: a panic reached the user: {}",
            bad.sql,
            run.stderr
        );
    }
}

/// Invalid polygons stored as blobs (written by other tools) are refused by
/// every measuring function, with the function and argument named
/// (issue 13: the area of the first was -6,153,954,914 m2 and its share
/// 9.98e-5; the bow-tie's area 0 and share NULL).
#[test]
fn stored_invalid_polygons_are_refused_by_every_function() {
    let wkb = |text: &str| {
        let bytes = ambit::blob::wkb::write(&ambit::blob::wkt::parse(text).unwrap());
        let hex: String = bytes.iter().map(|b| format!("{b:02X}")).collect();
        format!("x'{hex}'")
    };
    let hole = wkb("POLYGON((0 0,0.001 0,0.001 0.001,0 0),(1 1,2 1,2 2,1 1))");
    let bowtie = wkb("POLYGON((0 0, 1 1, 1 0, 0 1, 0 0))");
    let outside = "invalid polygon: polygon 1, ring 2 is a hole outside its exterior ring 1";
    let crossing = "invalid polygon: polygon 1, ring 1 crosses the same ring near (0.5, 0.5)";
    for (sql, message) in [
        (format!("SELECT ambit_area({hole});"), format!("ambit_area: argument 1 (geom): {outside}")),
        (format!("SELECT ambit_area({bowtie});"), format!("ambit_area: argument 1 (geom): {crossing}")),
        (format!("SELECT ambit_length({bowtie});"), format!("ambit_length: argument 1 (geom): {crossing}")),
        (format!("SELECT ambit_distance(ST_Point(0, 0), {hole});"), format!("ambit_distance: argument 2 (b): {outside}")),
        (
            format!("SELECT ambit_layer('p', ST_Point(0.5, 0.5), 10); SELECT ambit_share('p', {hole});"),
            format!("ambit_share: argument 2 (geom): {outside}"),
        ),
        (
            format!("SELECT ambit_layer('p', ST_Point(0.5, 0.5), 10); SELECT ambit_share('p', {bowtie});"),
            format!("ambit_share: argument 2 (geom): {crossing}"),
        ),
        (format!("SELECT ambit_layer('q', {bowtie}, 10);"), format!("ambit_layer: feature 1 of layer 'q': {crossing}")),
    ] {
        let run = shell(&format!("{sql}\nSELECT 'alive';"));
        assert!(run.stderr.contains(&message), "{sql}\n  expected: {message}\n  got: {}", run.stderr);
        assert!(run.stdout.trim().ends_with("alive"), "{sql}: {}", run.stdout);
    }
}

#[test]
fn describing_functions_read_any_well_formed_blob() {
    // ST_SRID and ST_GeometryType say what a blob is even when ambit would
    // refuse to measure with it, so users can find what to reproject.
    assert_eq!(
        query(&format!(
            "SELECT ST_SRID({GPKG_5070}), ST_GeometryType({GPKG_5070}), ST_IsEmpty({GPKG_5070});"
        )),
        "5070|POINT|0"
    );
}

#[test]
fn geopackage_and_wkb_blobs_are_accepted_alike() {
    let out = query(
        "SELECT ST_AsText(ST_Point(-97.25, 35.5)), \
                ST_AsText(ST_AsBinary(ST_Point(-97.25, 35.5))), \
                ST_SRID(ST_AsBinary(ST_Point(1, 2))), \
                ST_SRID(ST_GeomFromWKB(ST_AsBinary(ST_Point(1, 2)))), \
                ST_SRID(ST_GeomFromWKB(ST_AsBinary(ST_Point(1, 2)), 4269));",
    );
    assert_eq!(out, "POINT (-97.25 35.5)|POINT (-97.25 35.5)|0|4326|4269");
}

#[test]
fn round_trips_in_the_shell_are_exact() {
    for wkt in [
        "POINT (-97.123456789012 35.987654321098)",
        "POINT EMPTY",
        "LINESTRING (0 0, 1 1, 2 0.5)",
        "POLYGON ((0 0, 10 0, 10 10, 0 10, 0 0), (2 2, 2 3, 3 3, 2 2))",
        "MULTIPOINT ((1 2), (3 4))",
        "MULTILINESTRING ((0 0, 1 1), (2 2, 3 3))",
        "MULTIPOLYGON (((0 0, 1 0, 1 1, 0 0)), ((5 5, 6 5, 6 6, 5 5)))",
        "GEOMETRYCOLLECTION (POINT (1 2), LINESTRING (0 0, 1 1))",
        "POINT Z (1 2 3)",
        "LINESTRING M (0 0 1, 1 1 2)",
        "POLYGON ZM ((0 0 1 2, 1 0 1 2, 1 1 1 2, 0 0 1 2))",
    ] {
        let sql = format!(
            "SELECT ST_AsText(ST_GeomFromText('{wkt}')), \
                    ST_AsText(ST_GeomFromWKB(ST_AsBinary(ST_GeomFromText('{wkt}')))), \
                    ST_GeomFromWKB(ST_GeomFromText('{wkt}')) = ST_GeomFromText('{wkt}');"
        );
        assert_eq!(query(&sql), format!("{wkt}|{wkt}|1"), "{wkt}");
    }
}

#[test]
fn gpkg_register_refuses_what_a_geopackage_cannot_hold_and_changes_no_row() {
    let setup = "CREATE TABLE t(fid INTEGER PRIMARY KEY, geom BLOB);";
    for (rows, message) in [
        (
            "INSERT INTO t(geom) VALUES (ST_Point(1, 2)), ('POINT (1 2)');",
            "ambit_gpkg_register: column 'geom' of 't' holds a text value in the row with rowid 2; only geometry blobs can be registered",
        ),
        (
            "INSERT INTO t(geom) VALUES (ST_Point(1, 2)), (ST_Point(1, 2, 4269));",
            "srs_id 4269 differs from srs_id 4326 of earlier rows",
        ),
        (
            "INSERT INTO t(geom) VALUES (ST_AsBinary(ST_Point(1, 2)));",
            "holds plain WKB; a GeoPackage layer needs GeoPackage geometry blobs",
        ),
    ] {
        let r = shell(&format!("{setup}{rows}SELECT ambit_gpkg_register('t', 'geom');\nSELECT 'alive';"));
        assert_eq!(r.status, 1, "{rows}");
        assert!(r.stderr.contains(message), "{rows}\n{}", r.stderr);
        assert_eq!(r.stdout.trim(), "alive");
    }
    let r = shell(&format!(
        "{setup}INSERT INTO t(geom) VALUES (ST_Point(1, 2));
         SELECT ambit_gpkg_register('t', 'geom', 'POLYGON');
         SELECT ambit_gpkg_register('t', 'nope');
         SELECT ambit_gpkg_register('nope', 'geom');
         SELECT ambit_gpkg_register('t', 'geom', 'CIRCLE');"
    ));
    for message in [
        "holds POINT geometries, which a POLYGON column cannot hold",
        "table 't' has no column 'nope' (its columns: fid, geom)",
        "ambit_gpkg_register: no table named 'nope'",
        "'CIRCLE' is not a GeoPackage geometry type",
    ] {
        assert!(r.stderr.contains(message), "{message}\n{}", r.stderr);
    }
    // The rows are the same bytes before and after registering.
    let out = query(&format!(
        "{setup}INSERT INTO t(geom) VALUES (ST_GeomFromText('POLYGON ((0 0, 1 0, 1 1, 0 0))')), (NULL), (ST_Point(3, 4));
         CREATE TABLE before AS SELECT fid, geom FROM t;
         SELECT ambit_gpkg_register('t', 'geom');
         SELECT count(*) FROM t JOIN before USING (fid) WHERE t.geom IS before.geom;
         SELECT geometry_type_name, min_x, max_y FROM gpkg_geometry_columns JOIN gpkg_contents USING (table_name);
         PRAGMA application_id;"
    ));
    assert_eq!(out, "2\n3\nGEOMETRY|0.0|4.0\n1196444487");
}
