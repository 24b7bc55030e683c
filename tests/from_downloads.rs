//! The demo from the raw downloads: demo-db/build-region --downloads writes
//! the invented region's files as an analyst downloads them
//! (src/bin/ambit-downloads.rs), sql-examples/from-downloads.sql builds the
//! input tables from them with ambit_read, and the indicator
//! (sql-examples/exercise-access.sql) then prints the same county table as
//! the README's first command on demo-db/demo-region.gpkg. The downloads
//! themselves are checked by independent readers (GDAL through pyogrio,
//! PROJ through pyproj; tests/python/downloads_check.py).
//!
//! The region is generated at test time with the demo's arguments
//! (`--blocks 21000 --seed 20261201`, recorded in the demo database's
//! gpkg_contents description), so nothing large is committed.

mod common;

use std::path::Path;
use std::process::Command;

/// The demo database's generator arguments.
const BLOCKS: &str = "21000";
const SEED: &str = "20261201";

fn build_downloads(dir: &Path) {
    let script = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-db/build-region");
    let run = Command::new(script)
        .args([BLOCKS, SEED])
        .arg(dir.join("region.gpkg"))
        .arg("--downloads")
        .arg(dir.join("downloads"))
        .env("AMBIT_LIB", common::library().with_extension(""))
        .env("AMBIT_REGION_BIN", env!("CARGO_BIN_EXE_ambit-region"))
        .env("AMBIT_DOWNLOADS_BIN", env!("CARGO_BIN_EXE_ambit-downloads"))
        .env("SQLITE3", common::SHELL)
        .output()
        .expect("build-region runs");
    assert!(
        run.status.success(),
        "build-region --downloads failed:\n{}\n{}",
        String::from_utf8_lossy(&run.stdout),
        String::from_utf8_lossy(&run.stderr)
    );
}

#[test]
fn the_indicator_from_the_downloads_prints_the_demo_county_table() {
    let dir = common::example_dir("from-downloads");
    build_downloads(&dir);
    let demo = Path::new(env!("CARGO_MANIFEST_DIR")).join(common::DEMO_DB);

    // The files themselves, read by GDAL and PROJ against the demo database.
    let out = common::python_check_with(
        "downloads_check.py",
        &[
            dir.join("downloads").to_str().unwrap(),
            demo.to_str().unwrap(),
        ],
    );
    println!("{out}");

    // The input tables from the downloads.
    let db = dir.join("results/from-downloads.gpkg");
    let run = common::run_example_on(&dir, &db, "from-downloads.sql");
    assert!(
        run.status == 0 && run.stderr.is_empty(),
        "from-downloads.sql failed:\n{}",
        run.stderr
    );
    // Every row that could not be placed is reported with its file, row
    // and reason: the demo's entries without coordinates (blank cells) and
    // the download's garbled and swapped rows (src/bin/ambit-downloads.rs).
    let problems = common::db_rows(
        &db,
        "SELECT file, row, problem FROM download_problems ORDER BY rowid",
    );
    let csv = std::fs::read_to_string(dir.join("downloads/fitness_list.csv")).unwrap();
    let blank: Vec<usize> = csv
        .lines()
        .skip(1)
        .enumerate()
        .filter(|(_, l)| l.ends_with(",,"))
        .map(|(i, _)| i + 1)
        .collect();
    assert_eq!(problems.len(), blank.len() + 2, "{problems:?}");
    assert!(problems
        .iter()
        .all(|p| p[0] == "downloads/fitness_list.csv"));
    for row in &blank {
        assert!(
            problems
                .iter()
                .any(|p| p[1] == row.to_string() && p[2].contains("blank")),
            "row {row}: {problems:?}"
        );
    }
    assert!(
        problems
            .iter()
            .any(|p| p[2].contains("\"38.5O41\", which is not a number")),
        "{problems:?}"
    );
    assert!(
        problems.iter().any(|p| p[2].contains("swapped")),
        "{problems:?}"
    );
    // Printed: the rows that could not be placed by file and reason, with
    // how many and the first row (the blank ones as one line).
    let printed = run
        .stdout
        .lines()
        .find(|l| l.contains("is blank"))
        .unwrap_or_else(|| panic!("{}", run.stdout));
    let cells: Vec<&str> = printed.split('│').map(str::trim).collect();
    assert_eq!(
        cells[1..5],
        [
            "downloads/fitness_list.csv",
            "column longitude is blank",
            &blank.len().to_string(),
            &blank[0].to_string()
        ],
        "{printed}"
    );
    // Each row says where it came from. The licensing list row by row
    // against the CSV itself (row n is the n-th line after the header);
    // its rows without a geometry are exactly those listed, with the same
    // reason, in download_problems.
    let listed = common::db_rows(
        &db,
        "SELECT source_file, source_row, license_no, geom IS NULL, coalesce(problem, '') \
         FROM fitness_list ORDER BY fid",
    );
    let lines: Vec<&str> = csv.lines().skip(1).collect();
    assert_eq!(listed.len(), lines.len());
    for (i, (row, line)) in listed.iter().zip(&lines).enumerate() {
        assert_eq!(row[0], "downloads/fitness_list.csv", "{row:?}");
        assert_eq!(row[1], (i + 1).to_string(), "{row:?}");
        assert_eq!(
            Some(row[2].as_str()),
            line.split(',').next(),
            "{row:?}: {line}"
        );
        assert_eq!(row[3] == "1", !row[4].is_empty(), "{row:?}");
    }
    let kept: Vec<Vec<String>> = listed
        .iter()
        .filter(|r| r[3] == "1")
        .map(|r| vec![r[0].clone(), r[1].clone(), r[4].clone()])
        .collect();
    assert_eq!(kept, problems);
    // The blocks: each from its county's zipped shapefile (named by the
    // county GEOID, src/bin/ambit-downloads.rs), every file's rows numbered
    // 1 to its count once each, and none without a geometry.
    let traced = common::db_rows(
        &db,
        "SELECT count(*), \
           sum(source_file = 'downloads/blocks_' || substr(geoid, 1, 5) || '.zip/blocks_' \
               || substr(geoid, 1, 5) || '.shp'), \
           sum(geom IS NULL OR problem IS NOT NULL), \
           (SELECT count(*) FROM (SELECT source_file FROM blocks GROUP BY source_file \
              HAVING min(source_row) != 1 OR max(source_row) != count(*) \
                OR count(DISTINCT source_row) != count(*))), \
           (SELECT count(DISTINCT source_file) FROM blocks) \
         FROM blocks",
    );
    assert_eq!(traced, [["21047", "21047", "0", "0", "6"]]);
    assert!(
        run.stdout.contains("│ blocks       │ 21047 │ 0"),
        "{}",
        run.stdout
    );

    // The indicator on both: the same county table.
    let from_downloads = common::run_example_on(&dir, &db, "exercise-access.sql");
    assert!(
        from_downloads.status == 0 && from_downloads.stderr.is_empty(),
        "{}",
        from_downloads.stderr
    );
    let demo_dir = common::example_dir("from-downloads-demo");
    let (demo_copy, demo_printed) = common::run_on_demo_copy(
        &demo_dir,
        "exercise-access.sql",
        &common::example_sql("exercise-access.sql"),
    );
    let table = common::box_rows(&from_downloads.stdout);
    assert!(table.len() == 7, "{}", from_downloads.stdout);
    assert_eq!(table, common::box_rows(&demo_printed));

    // Block by block: the same access, and nearest distances within 1e-6 m
    // (only the parks moved, by the forward and inverse UTM projection,
    // which round-trip within 1e-7 m: tests/host_reproject.rs).
    let pairs = common::db_rows(
        &db,
        &format!(
            "ATTACH '{}' AS demo; SELECT count(*), sum(a.access != b.access), \
             max(abs(a.nearest_m - b.nearest_m)) < 1e-6 \
             FROM block_results AS a JOIN demo.block_results AS b ON b.geoid = a.geoid",
            demo_copy.display()
        ),
    );
    assert_eq!(pairs, [["21047", "0", "1"]]);
    std::fs::remove_dir_all(&dir).ok();
    std::fs::remove_dir_all(&demo_dir).ok();
}

/// ambit-downloads holds one county's blocks in memory at a time (a
/// nation's blocks are some 8 GB of WKT), writing each county's file when
/// the next county starts; a blocks.csv that does not keep each county's
/// blocks together is refused with the block that broke the order, rather
/// than a county's later blocks overwriting its first file.
#[test]
fn the_downloads_refuse_a_county_whose_blocks_are_not_together() {
    let dir = common::example_dir("downloads-county-order");
    let region = dir.join("region");
    std::fs::create_dir_all(&region).unwrap();
    let square = |x: f64| {
        format!(
            "\"POLYGON (({x} 38, {} 38, {} 38.01, {x} 38.01, {x} 38))\"",
            x + 0.01,
            x + 0.01
        )
    };
    std::fs::write(
        region.join("blocks.csv"),
        format!(
            "fid,geoid,population,water,wkt\n\
             1,990030001001000,10,0,{}\n\
             2,990010001001000,12,0,{}\n\
             3,990030001001001,14,0,{}\n",
            square(-131.0),
            square(-130.9),
            square(-130.8)
        ),
    )
    .unwrap();
    let run = Command::new(env!("CARGO_BIN_EXE_ambit-downloads"))
        .arg("--region")
        .arg(&region)
        .arg("--out")
        .arg(dir.join("downloads"))
        .output()
        .expect("ambit-downloads runs");
    let stderr = String::from_utf8_lossy(&run.stderr);
    assert!(!run.status.success(), "{stderr}");
    assert!(
        stderr.contains(
            "does not hold county 99003's blocks together \
             (block 990030001001001 comes after other counties' blocks)"
        ),
        "{stderr}"
    );
    // The counties read before were written, one file each, in the order
    // met (not sorted first).
    for county in ["99003", "99001"] {
        assert!(
            dir.join(format!("downloads/blocks_{county}.zip")).exists(),
            "{county}"
        );
    }
    std::fs::remove_dir_all(&dir).ok();
}
