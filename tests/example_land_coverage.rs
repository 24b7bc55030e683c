//! sql-examples/land-coverage.sql on the demo database: the county table
//! adds up from the block table, every share is in [0, 1], blocks wholly
//! inside parks count whole, and the county percentages match an
//! independent reference (shapely buffers and areas in PROJ's azimuthal
//! equidistant projection, tests/python/land_coverage_check.py).

mod common;

use std::path::PathBuf;

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

#[test]
fn land_coverage_adds_up_and_matches_an_independent_reference() {
    let dir = std::env::temp_dir().join(format!("ambit-land-coverage-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let db = dir.join("land-coverage.gpkg");
    std::fs::copy(root().join("demo-db/demo-region.gpkg"), &db).unwrap();
    let run = common::run_example_on(&dir, &db, "land-coverage.sql");
    assert_eq!(run.status, 0, "{}", run.stderr);
    assert!(run.stderr.is_empty(), "{}", run.stderr);
    assert!(
        run.stdout.contains("not land with walking access"),
        "caution printed"
    );

    // Every land block once, shares in [0, 1]; water-only blocks left out.
    let counts = common::db_rows(
        &db,
        "SELECT (SELECT count(*) FROM blocks WHERE water = 0), count(*), sum(share < 0 OR share > 1), \
                sum(share = 0), sum(share = 1) FROM block_land_coverage;",
    );
    let c: Vec<i64> = counts[0].iter().map(|v| v.parse().unwrap()).collect();
    assert_eq!(c[0], c[1], "one row per land block");
    assert_eq!(c[2], 0, "shares outside [0, 1]");
    assert!(
        c[3] > 0 && c[4] > 0,
        "blocks wholly out of and within reach: {c:?}"
    );

    // A block touching a park (distance 0, by a layer of the parks with no
    // reach) lies wholly within half a mile of it when it is less than half
    // a mile across: its share is exactly 1.
    let touching = common::db_rows(
        &db,
        "SELECT ambit_layer('touch', geom, 0) FROM parks;
         SELECT count(*), sum(l.share = 1) FROM block_land_coverage l JOIN blocks b ON b.fid = l.fid
         WHERE ambit_reached('touch', b.geom) AND ambit_length(b.geom) < 2 * ambit_miles(0.5);",
    );
    let last = touching.last().unwrap();
    let (n, whole): (i64, i64) = (last[0].parse().unwrap(), last[1].parse().unwrap_or(0));
    assert!(n > 100, "{n} blocks touch a park");
    assert_eq!(
        n, whole,
        "blocks touching a park are wholly within half a mile of it"
    );

    // The county table is the area-weighted sum of its blocks.
    let sums = common::db_rows(
        &db,
        "SELECT c.county_geoid, c.land_km2, c.land_within_reach_km2, c.pct_land_within_reach,
                sum(l.area_m2) / 1e6, sum(l.area_m2 * l.share) / 1e6
         FROM county_land_coverage c JOIN block_land_coverage l ON l.county_geoid = c.county_geoid
         GROUP BY c.county_geoid ORDER BY c.county_geoid;",
    );
    assert_eq!(sums.len(), 6);
    for r in &sums {
        let v: Vec<f64> = r[1..].iter().map(|x| x.parse().unwrap()).collect();
        assert!((v[0] - v[3]).abs() <= 1e-9 * v[0], "{r:?}");
        assert!((v[1] - v[4]).abs() <= 1e-9 * v[0], "{r:?}");
        assert!((v[2] - 100.0 * v[1] / v[0]).abs() <= 1e-9, "{r:?}");
    }
    // Land areas add up to the geodesic county areas less water.
    let area = common::db_rows(
        &db,
        "SELECT c.county_geoid, ambit_area(k.geom) - coalesce((SELECT sum(ambit_area(b.geom)) FROM blocks b
                 WHERE b.water = 1 AND substr(b.geoid, 1, 5) = c.county_geoid), 0), c.land_km2 * 1e6
         FROM county_land_coverage c JOIN counties k ON k.geoid = c.county_geoid;",
    );
    for r in &area {
        let (want, got): (f64, f64) = (r[1].parse().unwrap(), r[2].parse().unwrap());
        assert!((want - got).abs() <= 1e-9 * want, "{r:?}");
    }
    let csv = std::fs::read_to_string(dir.join("results/county-land-coverage.csv")).unwrap();
    assert_eq!(csv.lines().count(), 7, "{csv}");

    let out = common::python_check_with("land_coverage_check.py", &[db.to_str().unwrap()]);
    println!("{out}");
    std::fs::remove_dir_all(&dir).ok();
}
