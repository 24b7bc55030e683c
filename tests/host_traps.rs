//! Traps a new analyst falls into, in the stock shell: each was an answer
//! without a word of warning, and each now gets either the intended answer
//! or an error saying what to write instead.
//!
//! - distances written with their unit ('0.5 mi') wherever metres are
//!   taken; a bare number between 0 and 1 refused as a unit slip;
//! - numbers stored as text (a CSV import) get a hint to CAST them;
//! - ambit_sweep runs read-only statements only;
//! - ambit_gpkg_register writes nothing when it fails, and names itself in
//!   every error (views included);
//! - ambit_near's distance taken from a column of another table of the join
//!   (a parameters table) is used, not silently compared with the hidden
//!   column (which returned no rows).

mod common;

use common::{query, shell};

/// Runs `sql` expecting an error whose message holds `message`, and
/// checks the shell went on.
fn refused(sql: &str, message: &str) {
    let r = shell(&format!("{sql}\nSELECT 'alive';"));
    assert_eq!(r.status, 1, "{sql}: {}", r.stdout);
    assert!(
        r.stderr.contains(message),
        "{sql}\n  want: {message}\n  got: {}",
        r.stderr
    );
    assert!(
        r.stdout.trim_end().ends_with("alive"),
        "{sql}: the shell did not go on"
    );
}

// Half a mile is 804.672 m, one mile 1609.344 m, three miles 4828.032 m
// exactly (NIST SP 811, appendix B.8: 1 mi = 1609.344 m, 1 ft = 0.3048 m);
// the thresholds themselves are common practice, no source.

#[test]
fn distances_with_their_unit_equal_the_same_distance_in_metres() {
    // Two points 0.0072 degrees of latitude apart on one meridian: about
    // 797 m, just inside half a mile, well outside 0.4 mi (643.7 m).
    let a = "ST_Point(-100, 40)";
    let b = "ST_Point(-100, 40.0072)";
    let out = query(&format!(
        "SELECT ambit_within({a}, {b}, '0.5 mi'), ambit_within({a}, {b}, 804.672),
                ambit_within({a}, {b}, '2640 ft'), ambit_within({a}, {b}, '0.804672km'),
                ambit_within({a}, {b}, '0.4 Miles'), ambit_within({a}, {b}, '643.7 m'),
                ambit_within({a}, {b}, '880 yd');"
    ));
    assert_eq!(out, "1|1|1|1|0|0|1");
    // Layers: reach and the metres of count/nearest/near, text or number.
    let out = query(&format!(
        "SELECT ambit_layer('text', {b}, '0.5 mi');
         SELECT ambit_layer('metres', {b}, 804.672);
         SELECT ambit_reached('text', {a}), ambit_reached('metres', {a});
         SELECT ambit_count('metres', {a}, '1 mi'), ambit_count('metres', {a}, '0.4 mi');
         SELECT ambit_nearest('metres', {a}, '1 km') IS NOT NULL, ambit_nearest('metres', {a}, '500 m') IS NULL;
         SELECT count(*) FROM ambit_near('metres', {a}, '3 mi');"
    ));
    assert_eq!(out, "1\n1\n1|1\n1|0\n1|1\n1");
}

#[test]
fn a_bare_reach_below_one_metre_is_refused_as_a_unit_slip() {
    // The trap: a reach of 0.5 meant as miles built a layer that reached
    // nothing, silently.
    refused(
        "SELECT ambit_layer('parks', ST_Point(1, 2), 0.5);",
        "ambit_layer: argument 3 (reach_m): a reach of 0.5 metres is almost certainly a unit slip (bare numbers are metres): write '0.5 mi' for 0.5 miles",
    );
    // A column of reaches in kilometres: refused at its first row, and the
    // layer is not left half built.
    refused(
        "CREATE TABLE f(geom, reach_km); INSERT INTO f VALUES (ST_Point(1, 2), 0.8), (ST_Point(1, 3), 1.6);
         SELECT ambit_layer('clinics', geom, reach_km) FROM f;",
        "a reach of 0.8 metres is almost certainly a unit slip",
    );
    // Half a metre stays possible, said explicitly; 0 and whole metres are
    // plain numbers; computed distances elsewhere (a tolerance in
    // ambit_within, the metres of ambit_count) are taken as they are.
    assert_eq!(
        query(
            "SELECT ambit_layer('a', ST_Point(1, 2), '0.5 m'), ambit_layer('b', ST_Point(1, 2), 0), ambit_layer('c', ST_Point(1, 2), 1);
             SELECT ambit_within(ST_Point(1, 2), ST_Point(1, 2), 0.25), ambit_count('c', ST_Point(1, 2), 0.5);"
        ),
        "1|1|1\n1|1"
    );
}

#[test]
fn unreadable_distances_say_what_to_write() {
    refused(
        "SELECT ambit_within(ST_Point(1, 2), ST_Point(1, 2), '800');",
        "ambit_within: argument 3 (metres): '800' has no unit: write '800 m' (or mi, km, ft), or pass a number of metres; a column imported from CSV holds text, CAST(column AS REAL) makes it a number",
    );
    refused(
        "SELECT ambit_within(ST_Point(1, 2), ST_Point(1, 2), '3 leagues');",
        "'3 leagues' has the unknown unit 'leagues'; use m, km, mi, ft, yd or nmi",
    );
    refused(
        "SELECT ambit_within(ST_Point(1, 2), ST_Point(1, 2), 'far');",
        "'far' must be a length such as '0.5 mi', '800 m', '3 km' or '2640 ft'",
    );
    refused(
        "SELECT ambit_within(ST_Point(1, 2), ST_Point(1, 2), '-1 mi');",
        "must be a distance of 0 or more metres, got -1609.344",
    );
}

#[test]
fn numbers_stored_as_text_get_a_hint_to_cast_them() {
    // The trap: a CSV imported with the shell's .import keeps coordinates
    // as text.
    refused(
        "CREATE TABLE f(lon TEXT, lat TEXT); INSERT INTO f VALUES ('-100.5', '40.25');
         SELECT ST_Point(lon, lat) FROM f;",
        "ST_Point: argument 1 (x): must be a number, got text '-100.5'; it is a number stored as text (as a CSV import leaves it): CAST(column AS REAL) makes it a number",
    );
    assert_eq!(
        query(
            "CREATE TABLE f(lon TEXT, lat TEXT); INSERT INTO f VALUES ('-100.5', '40.25');
               SELECT ST_AsText(ST_Point(CAST(lon AS REAL), CAST(lat AS REAL))) FROM f;"
        ),
        "POINT (-100.5 40.25)"
    );
    // Text that is no number gets no such hint.
    let r = shell("SELECT ST_Point('east', 1);");
    assert!(r.stderr.contains("must be a number, got text 'east'"));
    assert!(!r.stderr.contains("CAST"), "{}", r.stderr);
}

#[test]
fn the_sweep_runs_read_only_statements_only() {
    // The trap: ambit_sweep('parks', 'DELETE FROM blocks RETURNING id,
    // geom') deleted every row.
    let setup = "CREATE TABLE blocks(id INTEGER PRIMARY KEY, geom BLOB);
                 INSERT INTO blocks(geom) VALUES (ST_Point(1, 2)), (ST_Point(3, 4));
                 SELECT ambit_layer('parks', ST_Point(1, 2), 100);";
    for statement in [
        "DELETE FROM blocks RETURNING id, geom",
        "UPDATE blocks SET geom = NULL RETURNING id, geom",
        "INSERT INTO blocks(geom) VALUES (ST_Point(5, 6)) RETURNING id, geom",
    ] {
        let r = shell(&format!(
            "{setup}\nSELECT * FROM ambit_sweep('parks', '{}');\nSELECT count(*), count(geom) FROM blocks;",
            statement.replace('\'', "''")
        ));
        assert_eq!(r.status, 1, "{statement}");
        assert!(
            r.stderr.contains("ambit_sweep: argument 2 (query): the query must be a read-only SELECT statement; this one would change the database"),
            "{statement}: {}",
            r.stderr
        );
        assert_eq!(
            r.stdout.trim_end().lines().last(),
            Some("2|2"),
            "{statement}: rows changed"
        );
    }
    // A read-only statement, WITH clause included, still runs.
    assert_eq!(
        query(&format!(
            "{setup}\nSELECT group_concat(reached) FROM ambit_sweep('parks', 'WITH b AS (SELECT id, geom FROM blocks) SELECT id, geom FROM b ORDER BY id');"
        ))
        .lines()
        .last(),
        Some("1,0")
    );
}

/// A GeoPackage geometry blob of POINT(1 2) with srs_id 2229, which ambit
/// cannot measure in and which gpkg_spatial_ref_sys does not define: the
/// header per OGC 12-128, clause 2.1.3 (magic 'GP', version 0, flags 0x01:
/// little endian, no envelope; srs_id as int32), then little-endian WKB.
const POINT_SRS_2229: &str = "X'47500001B50800000101000000000000000000F03F0000000000000040'";

#[test]
fn a_failed_registration_writes_nothing() {
    // The trap: a failed ambit_gpkg_register (unknown srs_id) had already
    // written gpkg_spatial_ref_sys, gpkg_contents and gpkg_geometry_columns.
    let r = shell(&format!(
        "CREATE TABLE t(fid INTEGER PRIMARY KEY, geom BLOB);
         INSERT INTO t(geom) VALUES ({POINT_SRS_2229});
         SELECT ST_SRID(geom) FROM t;
         SELECT ambit_gpkg_register('t', 'geom');
         SELECT group_concat(name) FROM sqlite_schema;
         PRAGMA application_id;"
    ));
    assert_eq!(r.status, 1);
    assert!(
        r.stderr.contains("ambit_gpkg_register: srs_id 2229 of column 'geom' is not in gpkg_spatial_ref_sys; add its definition there first (nothing was written)"),
        "{}",
        r.stderr
    );
    assert_eq!(r.stdout.trim_end(), "2229\nt\n0");
}

#[test]
fn views_register_and_their_errors_name_the_function() {
    // A view has no rowid: it used to fail with a bare "no such column:
    // rowid". GeoPackage allows features in views (OGC 12-128, clause 2.1.6,
    // from memory), so it is registered, and its rows are named by position.
    let setup = "CREATE TABLE t(fid INTEGER PRIMARY KEY, geom BLOB);
                 INSERT INTO t(geom) VALUES (ST_Point(1, 2)), (ST_Point(3, 4));
                 CREATE VIEW v AS SELECT fid, geom FROM t;";
    assert_eq!(
        query(&format!(
            "{setup}SELECT ambit_gpkg_register('v', 'geom');
             SELECT table_name, data_type, min_x, max_y FROM gpkg_contents;"
        )),
        "2\nv|features|1.0|4.0"
    );
    refused(
        &format!(
            "{setup}CREATE VIEW w AS SELECT fid, 'POINT (1 2)' AS geom FROM t;
             SELECT ambit_gpkg_register('w', 'geom');"
        ),
        "ambit_gpkg_register: column 'geom' of 'w' holds a text value in the row number 1 of the view; only geometry blobs can be registered",
    );
    // A read-only file: the write fails inside the savepoint, with the
    // function's name.
    let dir = std::env::temp_dir().join(format!("ambit-traps-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let file = dir.join("readonly.gpkg");
    let path = file.to_string_lossy().into_owned();
    let made = common::shell_with(&[&path], &format!("{setup}SELECT 'made';"));
    assert_eq!(made.stdout.trim(), "made", "{}", made.stderr);
    let r = common::shell_with(
        &["-readonly", &path],
        "SELECT ambit_gpkg_register('t', 'geom');",
    );
    std::fs::remove_dir_all(&dir).unwrap();
    assert_eq!(r.status, 1);
    assert!(
        r.stderr
            .contains("ambit_gpkg_register: attempt to write a readonly database"),
        "{}",
        r.stderr
    );
}

#[test]
fn coordinates_that_fit_only_the_other_way_round_are_called_swapped() {
    // The trap: latitude and longitude swapped. Where the values only make
    // sense swapped (a latitude beyond 90 that is a fine longitude), the
    // error says so; a swap that stays in range cannot be seen in one
    // point, which is why ambit_layers shows each layer's extent.
    refused(
        "SELECT ST_Point(38.5, -121.4);",
        "ST_Point: vertex 1 (38.5, -121.4) has latitude -121.4, outside [-90, 90], but read the other way round (-121.4, 38.5) it is a valid longitude, latitude: are x and y swapped? ambit takes longitude first",
    );
    refused(
        "SELECT ambit_area(ST_GeomFromText('POLYGON ((40 -100, 40.1 -100, 40.1 -100.1, 40 -100))'));",
        "vertex 1 (40, -100) has latitude -100, outside [-90, 90], but read the other way round (-100, 40) it is a valid longitude, latitude: are x and y swapped?",
    );
    // Projected metres are not mistaken for a swap.
    let r = shell("SELECT ST_Point(500000, 4500000);");
    assert!(r.stderr.contains("look projected"), "{}", r.stderr);
    assert!(!r.stderr.contains("swapped"), "{}", r.stderr);
}

#[test]
fn ambit_near_takes_its_distance_from_another_table_of_the_join() {
    // The two points of the first test, about 797 m apart; the distance 3
    // miles (4828.032 m) comes from a one-row parameters table, as in
    // sql-examples/care-access-2sfca.sql. The answer must equal the one with
    // the distance written in place (source: the same query with a literal).
    let setup = "SELECT ambit_layer('p', ST_Point(-100, 40.0072), 0);
         CREATE TABLE params(catchment_m REAL); INSERT INTO params VALUES (4828.032);
         CREATE TABLE places(id INTEGER PRIMARY KEY, geom BLOB);
         INSERT INTO places (geom) VALUES (ST_Point(-100, 40)), (ST_Point(-100, 41));";
    let out = query(&format!(
        "{setup}
         SELECT count(*) FROM places AS g, ambit_near('p', g.geom, 4828.032);
         SELECT count(*) FROM params AS p, places AS g, ambit_near('p', g.geom, p.catchment_m);
         SELECT count(*) FROM places AS g, params AS p, ambit_near('p', g.geom, p.catchment_m);
         SELECT group_concat(g.id || ':' || coalesce(n.distance_m, '-'), ' ')
           FROM params AS p CROSS JOIN places AS g
           LEFT JOIN ambit_near('p', g.geom, p.catchment_m) AS n;
         SELECT group_concat(g.id || ':' || coalesce(n.distance_m, '-'), ' ')
           FROM places AS g LEFT JOIN ambit_near('p', g.geom, 4828.032) AS n;"
    ));
    let lines: Vec<&str> = out.lines().collect();
    // The layer's own "1", then the three counts.
    assert_eq!(lines[..4], ["1", "1", "1", "1"], "{out}");
    assert_eq!(lines[4], lines[5], "{out}");
    assert!(
        lines[4].starts_with("1:") && lines[4].ends_with(" 2:-"),
        "{out}"
    );
}

#[test]
fn a_layer_is_unchanged_when_another_ambit_function_of_its_statement_fails() {
    // The trap: a malformed WKT on the third row failed in ST_GeomFromText,
    // not in ambit_layer, and the two rows before it were still added
    // (SQLite finalises the aggregate to clean up, with no sign of the
    // error). The layer is now absent, and unchanged when it existed.
    let setup = "CREATE TABLE p(id INTEGER PRIMARY KEY, wkt TEXT);
                 INSERT INTO p(wkt) VALUES ('POINT (1 2)'), ('POINT (1 3)'), ('POINT (oops)');";
    refused(
        &format!(
            "{setup}SELECT ambit_layer('parks', ST_GeomFromText(wkt), 10, id) FROM p;
                  SELECT count(*) FROM ambit_layers;"
        ),
        "ST_GeomFromText: argument 1 (wkt): malformed WKT",
    );
    let r = shell(&format!(
        "{setup}SELECT ambit_layer('parks', ST_Point(5, 5), 10, 100);
         SELECT ambit_layer('parks', ST_GeomFromText(wkt), 10, id) FROM p;
         SELECT name, features FROM ambit_layers;
         SELECT ambit_count('parks', ST_Point(1, 2));"
    ));
    assert_eq!(r.status, 1);
    assert_eq!(r.stdout.trim_end(), "1\nparks|1\n0", "{}", r.stderr);
    // Fixed, the same statement builds the layer.
    assert_eq!(
        query(&format!(
            "{setup}UPDATE p SET wkt = 'POINT (1 4)' WHERE id = 3;
             SELECT ambit_layer('parks', ST_GeomFromText(wkt), 10, id) FROM p;
             SELECT name, features FROM ambit_layers;"
        )),
        "3\nparks|3"
    );
}

#[test]
fn a_point_on_a_vertex_is_within_zero_metres() {
    // Regression (2026-12-02, found by tests/properties.rs): a point exactly
    // at the end of an edge was measured picometres away, so a reach of 0
    // (touching) missed it. Distance 0 by definition; nothing to look up.
    assert_eq!(
        query(
            "WITH t(a, b) AS (SELECT ST_GeomFromText('POLYGON ((-153.68261540801987 -17.874480439482014, -153.68269065589342 -17.874575172668493, -153.68281543575773 -17.874575246139187, -153.68261540801987 -17.874480439482014))'),
                                     ST_GeomFromText('POINT (-153.68269065589342 -17.874575172668493)'))
             SELECT ambit_distance(a, b), ambit_within(a, b, 0), ambit_distance(ST_GeomFromText('LINESTRING (0 0, 0.001 0.001)'), ST_Point(0.001, 0.001)) FROM t;
             SELECT ambit_layer('corner', ST_GeomFromText('LINESTRING (0 0, 0.001 0.001)'), 0);
             SELECT ambit_reached('corner', ST_Point(0.001, 0.001)), ambit_reached('corner', ST_Point(360.001, 0.001));"
        ),
        "0.0|1|0.0\n1\n1|1"
    );
}

#[test]
fn a_feature_around_a_pole_is_found_at_the_pole() {
    // Regression (2026-12-02, found by tests/properties.rs): a polygon
    // around the north pole, its vertices at 89.9 degrees, was missed by
    // the layer for queries nearer the pole than its vertices (its index
    // box stopped at the vertices), while ambit_distance said 0.
    let ice = "ST_GeomFromText('POLYGON ((0 89.9, 90 89.9, 180 89.9, -90 89.9, 0 89.9))')";
    assert_eq!(
        query(&format!(
            "SELECT ambit_layer('ice', {ice}, 0, 1);
             SELECT ambit_distance(ST_Point(0, 90), {ice}), ambit_reached('ice', ST_Point(0, 90)),
                    ambit_count('ice', ST_Point(37, 89.95)), ambit_nearest('ice', ST_Point(-120, 89.99));
             SELECT ambit_layer('south', ST_GeomFromText('POLYGON ((0 -89.9, -90 -89.9, 180 -89.9, 90 -89.9, 0 -89.9))'), 0, 1);
             SELECT ambit_reached('south', ST_Point(10, -90)), ambit_reached('south', ST_Point(10, 90));"
        )),
        "1\n0.0|1|1|0.0\n1\n1|0"
    );
}

#[test]
fn a_polygon_or_hole_given_twice_is_refused_as_overlapping() {
    // Regression (2026-12-02, found by tests/properties.rs): the same part
    // twice measured double its area, the same hole twice was accepted;
    // every vertex of the copy lies on the original, which hid them from
    // the containment probes. Neighbours sharing an edge (insides on
    // opposite sides) stay accepted.
    refused(
        "SELECT ambit_area(ST_GeomFromText('MULTIPOLYGON (((0 0, 1 0, 1 1, 0 1, 0 0)), ((0 0, 1 0, 1 1, 0 1, 0 0)))'));",
        "invalid multipolygon: polygon 2 lies inside polygon 1",
    );
    refused(
        "SELECT ambit_area(ST_GeomFromText('POLYGON ((0 0, 4 0, 4 4, 0 4, 0 0), (1 1, 1 2, 2 2, 2 1, 1 1), (1 1, 1 2, 2 2, 2 1, 1 1))'));",
        "invalid polygon: polygon 1, ring 3 lies inside hole ring 2",
    );
    // Two unit squares side by side: the area is the sum (each checked on
    // its own in the same query).
    assert_eq!(
        query(
            "SELECT ambit_area(ST_GeomFromText('MULTIPOLYGON (((0 0, 1 0, 1 1, 0 1, 0 0)), ((1 0, 2 0, 2 1, 1 1, 1 0)))'))
                    = ambit_area(ST_GeomFromText('POLYGON ((0 0, 1 0, 1 1, 0 1, 0 0))'))
                    + ambit_area(ST_GeomFromText('POLYGON ((1 0, 2 0, 2 1, 1 1, 1 0))'));"
        ),
        "1"
    );
}
