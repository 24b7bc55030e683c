//! The main job on the demo region: the committed demo database
//! regenerates byte for byte; sql-examples/exercise-access.sql gives the
//! county figures of an independent computation; its output GeoPackage
//! opens in an independent reader (pyogrio, PyPI).
//!
//! The independent computation takes every block against every park and
//! facility, with the exact geodesic distance of ambit::proximity::distance
//! (itself checked against brute force in tests/proximity_bruteforce.rs),
//! skipping only pairs whose bounding balls are provably farther apart than
//! the reach; it redoes the merge of the two facility lists (20 m) and the
//! urban tagging the same way. No layer, index or sweep is used.

mod common;

use std::collections::HashMap;
use std::path::{Path, PathBuf};
use std::process::Command;

use ambit::proximity::Prepared;
use ambit::units::METRES_PER_MILE;
use rayon::prelude::*;

/// How the committed demo database is made (demo-db/README.md says the same).
const DEMO_BLOCKS: &str = "21000";
const DEMO_SEED: &str = "20261201";
const DEMO: &str = "demo-db/demo-region.gpkg";

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn temp_dir(name: &str) -> PathBuf {
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR"))
        .join(format!("ambit-demo-{name}-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

#[test]
fn the_demo_database_regenerates_byte_identically() {
    let dir = temp_dir("regen");
    let out = dir.join("demo.gpkg");
    let status = Command::new(root().join("demo-db/build-region"))
        .args([DEMO_BLOCKS, DEMO_SEED])
        .arg(&out)
        .env("AMBIT_LIB", common::library().with_extension(""))
        .env("AMBIT_REGION_BIN", env!("CARGO_BIN_EXE_ambit-region"))
        .status()
        .unwrap();
    assert!(status.success());
    let made = std::fs::read(&out).unwrap();
    let committed = std::fs::read(root().join(DEMO)).unwrap();
    assert!(
        committed.len() < 20 * 1024 * 1024,
        "the demo file must stay under 20 MB"
    );
    assert!(
        made == committed,
        "{DEMO} differs from a fresh build ({} vs {} bytes); rebuild it with demo-db/build-region {DEMO_BLOCKS} {DEMO_SEED} {DEMO}",
        made.len(),
        committed.len()
    );
    std::fs::remove_dir_all(&dir).ok();
}

/// Runs the indicator script on a copy of the demo database in `dir`.
fn run_indicator(dir: &Path) -> (PathBuf, String) {
    let db = dir.join("exercise-access.gpkg");
    std::fs::copy(root().join(DEMO), &db).unwrap();
    std::fs::create_dir_all(dir.join("results")).unwrap();
    let script = std::fs::read_to_string(root().join("sql-examples/exercise-access.sql")).unwrap();
    let run = common::shell_script_at(dir, &[db.to_str().unwrap()], &script);
    assert_eq!(run.status, 0, "{}", run.stderr);
    (db, run.stdout)
}

#[test]
fn the_indicator_equals_an_independent_computation() {
    let dir = temp_dir("indicator");
    let (db, printed) = run_indicator(&dir);
    assert!(
        printed.contains("Straight-line reach is not walking access"),
        "{printed}"
    );

    // Inputs, read straight from the demo tables.
    let blocks: Vec<(i64, String, i64, Prepared)> = common::db_rows(
        &db,
        "SELECT fid, geoid, population, hex(geom) FROM blocks ORDER BY fid",
    )
    .into_par_iter()
    .map(|r| {
        (
            r[0].parse().unwrap(),
            r[1].clone(),
            r[2].parse().unwrap(),
            common::prepared_hex(&r[3]),
        )
    })
    .collect();
    let parks: Vec<Prepared> = common::db_rows(&db, "SELECT hex(geom) FROM parks")
        .into_par_iter()
        .map(|r| common::prepared_hex(&r[0]))
        .collect();
    let urban: Vec<Prepared> = common::db_rows(&db, "SELECT hex(geom) FROM urban_areas")
        .iter()
        .map(|r| common::prepared_hex(&r[0]))
        .collect();
    let registry: Vec<Prepared> = common::db_rows(
        &db,
        "SELECT hex(geom) FROM rec_sites WHERE geom IS NOT NULL",
    )
    .iter()
    .map(|r| common::prepared_hex(&r[0]))
    .collect();
    let licensed: Vec<Prepared> = common::db_rows(
        &db,
        "SELECT hex(geom) FROM fitness_list WHERE geom IS NOT NULL",
    )
    .iter()
    .map(|r| common::prepared_hex(&r[0]))
    .collect();

    // The merge: a licensing entry within 20 m of a registry site is the
    // same place. Then urban (inside or touching an urban area: 1 mile) or
    // rural (3 miles); half a mile for parks (common practice, no source).
    let mut facilities: Vec<(&Prepared, f64)> = Vec::new();
    let kept: Vec<&Prepared> = registry
        .iter()
        .chain(
            licensed
                .iter()
                .filter(|l| !registry.iter().any(|r| common::within_reach(l, r, 20.0))),
        )
        .collect();
    for f in kept {
        let is_urban = urban.iter().any(|u| common::within_reach(f, u, 0.0));
        facilities.push((
            f,
            if is_urban {
                METRES_PER_MILE
            } else {
                3.0 * METRES_PER_MILE
            },
        ));
    }
    let expected_facilities: i64 = common::db_rows(&db, "SELECT count(*) FROM facilities")[0][0]
        .parse()
        .unwrap();
    assert_eq!(
        facilities.len() as i64,
        expected_facilities,
        "merged facility count"
    );
    let urban_count = facilities.iter().filter(|f| f.1 == METRES_PER_MILE).count() as i64;
    let expected_urban: i64 = common::db_rows(&db, "SELECT sum(urban) FROM facilities")[0][0]
        .parse()
        .unwrap();
    assert_eq!(urban_count, expected_urban, "urban facilities");

    let half_mile = 0.5 * METRES_PER_MILE;
    let flags: Vec<bool> = blocks
        .par_iter()
        .map(|(_, _, _, b)| {
            parks.iter().any(|p| common::within_reach(b, p, half_mile))
                || facilities
                    .iter()
                    .any(|(f, reach)| common::within_reach(b, f, *reach))
        })
        .collect();

    // Identical flags, block by block.
    let script_flags: HashMap<i64, bool> =
        common::db_rows(&db, "SELECT fid, access FROM block_access")
            .iter()
            .map(|r| (r[0].parse().unwrap(), r[1] == "1"))
            .collect();
    let mut mismatches = 0;
    for ((fid, geoid, _, _), flag) in blocks.iter().zip(&flags) {
        if script_flags.get(fid) != Some(flag) {
            mismatches += 1;
            eprintln!(
                "block {geoid}: script {:?}, independent {flag}",
                script_flags.get(fid)
            );
        }
    }
    assert_eq!(mismatches, 0);

    // Identical county figures.
    let mut counties: HashMap<String, (i64, i64, i64)> = HashMap::new();
    for ((_, geoid, pop, _), flag) in blocks.iter().zip(&flags) {
        let c = counties.entry(geoid[..5].to_string()).or_default();
        c.0 += 1;
        c.1 += pop;
        if *flag {
            c.2 += pop;
        }
    }
    let table = common::db_rows(
        &db,
        "SELECT county_geoid, blocks, population, population_with_access, pct_with_access FROM county_access ORDER BY county_geoid",
    );
    assert_eq!(table.len(), counties.len());
    assert!((5..=8).contains(&table.len()), "about 6 counties");
    for r in &table {
        let (n, pop, with) = counties[&r[0]];
        assert_eq!(
            r[1..4],
            [n.to_string(), pop.to_string(), with.to_string()],
            "county {}",
            r[0]
        );
        let pct = (1000.0 * with as f64 / pop as f64).round() / 10.0;
        assert_eq!(r[4].parse::<f64>().unwrap(), pct, "county {}", r[0]);
        // State 2 + county 3 digits; the state code 99 is the invented one.
        assert!(r[0].len() == 5 && r[0].starts_with("99"), "{}", r[0]);
    }
    // The map the script draws is the one README.md shows.
    let map = std::fs::read(dir.join("results/exercise-access-map.svg")).unwrap();
    let committed = std::fs::read(root().join("demo-db/exercise-access-map.svg")).unwrap();
    assert!(
        map == committed,
        "demo-db/exercise-access-map.svg is stale: copy results/exercise-access-map.svg over it after running the README's first command"
    );
    // The CSV for joining carries the same figures.
    let csv = std::fs::read_to_string(dir.join("results/county-exercise-access.csv")).unwrap();
    assert!(
        csv.starts_with("county_geoid,county_name,build_year,"),
        "{csv}"
    );
    assert_eq!(csv.lines().count(), table.len() + 1);
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn the_output_geopackage_opens_in_an_independent_reader() {
    let dir = temp_dir("reader");
    let (db, _) = run_indicator(&dir);
    let check = r#"
import sys, pyogrio
path = sys.argv[1]
layers = {name for name, _ in pyogrio.list_layers(path)}
for want in ("block_access", "county_access", "facilities", "blocks", "parks"):
    assert want in layers, (want, layers)
info = pyogrio.read_info(path, layer="county_access")
assert info["geometry_type"] in ("MultiPolygon", "Polygon"), info["geometry_type"]
assert "4326" in str(info["crs"]), info["crs"]
meta, fids, geometries, fields = pyogrio.raw.read(path, layer="county_access")
names = list(meta["fields"])
pct = fields[names.index("pct_with_access")]
assert len(geometries) == len(pct) > 0
assert all(g is not None and len(g) > 0 for g in geometries)
print(len(pct), "counties", ",".join(f"{v:.1f}" for v in pct))
meta, fids, geometries, fields = pyogrio.raw.read(path, layer="block_access", max_features=50)
assert len(geometries) == 50
"#;
    let out = Command::new(common::python())
        .args(["-c", check])
        .arg(&db)
        .output()
        .expect("python3; tests/prepare-host installs pyogrio");
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert!(
        out.status.success(),
        "pyogrio could not read the output (run tests/prepare-host): {stdout}\n{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let ours: Vec<String> = common::db_rows(
        &db,
        "SELECT printf('%.1f', pct_with_access) FROM county_access ORDER BY fid",
    )
    .into_iter()
    .map(|r| r[0].clone())
    .collect();
    assert!(
        stdout.trim().ends_with(&ours.join(",")),
        "{stdout} vs {ours:?}"
    );
    std::fs::remove_dir_all(&dir).ok();
}
