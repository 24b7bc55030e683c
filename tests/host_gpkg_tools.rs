//! GeoPackages of other programs and what ambit writes for them, checked
//! with GDAL through pyogrio (PyPI) as the independent reader and writer:
//!
//! - tests/python/gpkg_tools_check.py: a GeoPackage written by GDAL with the
//!   R-tree spatial index of OGC 12-128 Annex F.3 stays editable (INSERT,
//!   UPDATE, DELETE) in the stock sqlite3 shell with ambit loaded (its
//!   triggers call ST_MinX, ST_MaxX, ST_MinY, ST_MaxY, ST_IsEmpty), and the
//!   index rows are the envelopes shapely computes; the index
//!   ambit_gpkg_register builds is seen and used by GDAL; attributes tables
//!   are read with their declared types.
//! - tests/python/gpkg_outputs_check.py: every table the example scripts
//!   leave is registered and GDAL reads all of them without a warning.

mod common;

#[test]
fn other_programs_geopackages_stay_editable_and_indexes_are_right() {
    let out = common::python_check("gpkg_tools_check.py");
    println!("{out}");
}

#[test]
fn every_output_of_the_example_scripts_reads_without_warnings() {
    let dir = common::example_dir("gpkg-outputs");
    let mut files = Vec::new();
    for script in [
        "exercise-access.sql",
        "food-access.sql",
        "hazard-proximity.sql",
        "care-access-2sfca.sql",
        "land-coverage.sql",
        "sensitivity.sql",
    ] {
        let (db, _) = common::run_on_demo_copy(&dir, script, &common::example_sql(script));
        files.push(db);
    }
    // join-measures.sql runs on the output of exercise-access.sql and reads
    // demo-db/county-measures.csv from the current folder.
    let joined = dir.join("join-measures.gpkg");
    std::fs::copy(&files[0], &joined).unwrap();
    std::fs::create_dir_all(dir.join("demo-db")).unwrap();
    std::fs::copy(
        concat!(env!("CARGO_MANIFEST_DIR"), "/demo-db/county-measures.csv"),
        dir.join("demo-db/county-measures.csv"),
    )
    .unwrap();
    let run = common::run_example_on(&dir, &joined, "join-measures.sql");
    assert!(run.status == 0 && run.stderr.is_empty(), "{}", run.stderr);
    files.push(joined);
    let paths: Vec<&str> = files.iter().map(|p| p.to_str().unwrap()).collect();
    let out = common::python_check_with("gpkg_outputs_check.py", &paths);
    println!("{out}");
    std::fs::remove_dir_all(&dir).ok();
}
