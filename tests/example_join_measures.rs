//! sql-examples/join-measures.sql, run after exercise-access.sql on a copy
//! of the demo database: its z-scores against a computation here from the
//! CSV and the county table (two-pass mean and sample standard deviation)
//! and against Python's statistics module (mean, stdev); its GeoJSON
//! FeatureCollection read back with Python's json and shapely (RFC 7946
//! geometries equal to the county shapes); its SVG maps parsed with
//! Python's xml.etree.ElementTree (well-formed, one path per county). It
//! refuses a file without county_access.

mod common;

use std::collections::HashMap;
use std::path::{Path, PathBuf};
use std::process::Command;

const DEMO: &str = "demo-db/demo-region.gpkg";
const MEASURES: &str = "demo-db/county-measures.csv";

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// A temporary project-like folder: a copy of the demo database and
/// demo-db/county-measures.csv where the script looks for it.
fn setup(name: &str) -> (PathBuf, PathBuf) {
    let dir = std::env::temp_dir().join(format!("ambit-measures-{name}-{}", std::process::id()));
    std::fs::create_dir_all(dir.join("demo-db")).unwrap();
    std::fs::copy(root().join(MEASURES), dir.join(MEASURES)).unwrap();
    let db = dir.join("exercise-access.gpkg");
    std::fs::copy(root().join(DEMO), &db).unwrap();
    (dir, db)
}

/// The measures of the CSV by county: the three numeric columns, None
/// for an empty cell. The file has no quoted cells.
fn read_csv(path: &Path) -> HashMap<String, [Option<f64>; 3]> {
    let text = std::fs::read_to_string(path).unwrap();
    let mut lines = text.lines();
    assert_eq!(
        lines.next().unwrap(),
        "county_geoid,county_name,measure_year,adult_physical_inactivity_pct,adult_obesity_pct,median_household_income"
    );
    lines
        .map(|l| {
            let cells: Vec<&str> = l.split(',').collect();
            assert_eq!(cells.len(), 6, "{l}");
            let num = |s: &str| (!s.is_empty()).then(|| s.parse::<f64>().unwrap());
            (
                cells[0].to_string(),
                [num(cells[3]), num(cells[4]), num(cells[5])],
            )
        })
        .collect()
}

/// z-scores of the values present, (x - mean) / s with s the sample
/// standard deviation, each computed in two passes.
fn z_scores(values: &[Option<f64>]) -> Vec<Option<f64>> {
    let present: Vec<f64> = values.iter().flatten().copied().collect();
    let n = present.len() as f64;
    let mean = present.iter().sum::<f64>() / n;
    let s = (present.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (n - 1.0)).sqrt();
    values.iter().map(|v| v.map(|x| (x - mean) / s)).collect()
}

fn same(a: Option<f64>, b: Option<f64>, tol: f64) -> bool {
    match (a, b) {
        (Some(x), Some(y)) => (x - y).abs() <= tol,
        (None, None) => true,
        _ => false,
    }
}

fn cell(s: &str) -> Option<f64> {
    (!s.is_empty()).then(|| s.parse().unwrap())
}

#[test]
fn the_join_refuses_a_file_without_county_access() {
    let (dir, db) = setup("refuse");
    let run = common::run_example_on(&dir, &db, "join-measures.sql");
    assert_ne!(run.status, 0);
    assert!(
        run.stderr.contains("join-measures.sql: this file has no county_access table; run sql-examples/exercise-access.sql on it first"),
        "{}",
        run.stderr
    );
    assert!(!dir.join("results/county-measures.csv").exists());
    std::fs::remove_dir_all(&dir).ok();
}

/// Reads the outputs back in Python. Arguments: the FeatureCollection, the
/// measures CSV, a file of `geoid pct_with_access hex(WKB)` lines from
/// county_access, and the two SVG maps. Prints one line per check.
const READ_BACK: &str = r#"
import csv, json, statistics, sys
import xml.etree.ElementTree as ET
from shapely import wkb
from shapely.geometry import shape
fc_path, csv_path, county_path, *svgs = sys.argv[1:]
fc = json.load(open(fc_path))
assert fc["type"] == "FeatureCollection" and sorted(fc) == ["features", "type"]
counties = {}
for line in open(county_path):
    geoid, pct, hexwkb = line.split()
    counties[geoid] = (float(pct), wkb.loads(bytes.fromhex(hexwkb)))
rows = {r["county_geoid"]: r for r in csv.DictReader(open(csv_path))}
def zs(values):
    present = [v for v in values.values() if v is not None]
    m, s = statistics.mean(present), statistics.stdev(present)
    return {k: None if v is None else (v - m) / s for k, v in values.items()}
def num(s):
    return float(s) if s != "" else None
z = {
    "z_pct_with_access": zs({g: c[0] for g, c in counties.items()}),
    "z_physical_inactivity": zs({g: num(r["adult_physical_inactivity_pct"]) for g, r in rows.items()}),
    "z_obesity": zs({g: num(r["adult_obesity_pct"]) for g, r in rows.items()}),
    "z_household_income": zs({g: num(r["median_household_income"]) for g, r in rows.items()}),
}
checked = 0
for f in fc["features"]:
    p = f["properties"]
    g = shape(f["geometry"])
    geoid = p["county_geoid"]
    assert g.geom_type == "MultiPolygon" and g.is_valid, (geoid, g.geom_type)
    assert g.equals_exact(counties[geoid][1], 1e-9), geoid
    for name, values in z.items():
        want, got = values[geoid], p[name]
        assert (want is None and got is None) or abs(want - got) < 1e-12, (geoid, name, want, got)
        checked += 1
print("features", len(fc["features"]), "z-scores", checked)
for path in svgs:
    root = ET.fromstring(open(path, "rb").read())
    assert root.tag == "{http://www.w3.org/2000/svg}svg", root.tag
    paths = [p for p in root.iter("{http://www.w3.org/2000/svg}path")
             if (p.get("class") or "").startswith("feature")]
    title = root.find("{http://www.w3.org/2000/svg}title").text
    print("svg", len(paths), "paths:", title)
"#;

#[test]
fn the_join_gives_independent_z_scores_and_its_outputs_read_back() {
    let (dir, db) = setup("join");
    let access = common::run_example_on(&dir, &db, "exercise-access.sql");
    assert_eq!(access.status, 0, "{}", access.stderr);
    let run = common::run_example_on(&dir, &db, "join-measures.sql");
    assert!(run.status == 0 && run.stderr.is_empty(), "{}", run.stderr);
    let printed = run.stdout;

    // The computation here: from the CSV and county_access.
    let measures = read_csv(&root().join(MEASURES));
    let counties: Vec<(String, f64)> = common::db_rows(
        &db,
        "SELECT county_geoid, pct_with_access FROM county_access ORDER BY county_geoid",
    )
    .iter()
    .map(|r| (r[0].clone(), r[1].parse().unwrap()))
    .collect();
    assert_eq!(counties.len(), 6);
    assert_eq!(measures.len(), 6);
    // Columns: access percent, then the three measures of the CSV.
    let columns: Vec<Vec<Option<f64>>> =
        std::iter::once(counties.iter().map(|c| Some(c.1)).collect())
            .chain((0..3).map(|k| counties.iter().map(|c| measures[&c.0][k]).collect()))
            .collect();
    let z: Vec<Vec<Option<f64>>> = columns.iter().map(|c| z_scores(c)).collect();
    // The invented file leaves one income empty: its z-score is NULL.
    assert_eq!(z[3].iter().filter(|v| v.is_none()).count(), 1);

    let stored = common::db_rows(
        &db,
        "SELECT county_geoid, z_pct_with_access, z_physical_inactivity, z_obesity, z_household_income FROM county_measures_joined ORDER BY county_geoid",
    );
    let table = common::box_rows(&printed);
    assert_eq!(
        table[0],
        [
            "county",
            "name",
            "access_pct",
            "inactive_pct",
            "obese_pct",
            "income",
            "z_access",
            "z_inactive",
            "z_obese",
            "z_income"
        ]
    );
    let csv_out = std::fs::read_to_string(dir.join("results/county-measures.csv")).unwrap();
    let csv_rows: Vec<Vec<String>> = csv_out
        .lines()
        .skip(1)
        .map(|l| l.split(',').map(str::to_string).collect())
        .collect();
    assert_eq!(stored.len(), 6);
    assert_eq!(csv_rows.len(), 6, "{csv_out}");
    for (i, (geoid, _)) in counties.iter().enumerate() {
        assert_eq!(&stored[i][0], geoid);
        assert_eq!(&table[i + 1][0], geoid);
        assert_eq!(&csv_rows[i][0], geoid);
        for k in 0..4 {
            let want = z[k][i];
            assert!(
                same(cell(&stored[i][1 + k]), want, 1e-12),
                "{geoid} z{k}: {} vs {want:?}",
                stored[i][1 + k]
            );
            // Printed to 2 decimals, written to the CSV to 4.
            assert!(
                same(cell(&table[i + 1][6 + k]), want, 0.005 + 1e-9),
                "{printed}"
            );
            let last = csv_rows[i].len() - 4 + k;
            assert!(
                same(cell(&csv_rows[i][last]), want, 0.00005 + 1e-9),
                "{csv_out}"
            );
        }
    }
    assert!(
        printed.contains("Measures: 6 rows read from demo-db/county-measures.csv, 6 joined, 0 matching no county; 0 counties without measures."),
        "{printed}"
    );
    assert!(
        printed.contains("do not show that one causes the other"),
        "{printed}"
    );

    // Python: json + shapely for the FeatureCollection, statistics for the
    // z-scores, ElementTree for the maps.
    let county_file = dir.join("counties.txt");
    let lines: Vec<String> = common::db_rows(
        &db,
        "SELECT county_geoid, pct_with_access, hex(ST_AsBinary(geom)) FROM county_access ORDER BY county_geoid",
    )
    .iter()
    .map(|r| r.join(" "))
    .collect();
    std::fs::write(&county_file, lines.join("\n") + "\n").unwrap();
    let out = Command::new(common::python())
        .arg("-c")
        .arg(READ_BACK)
        .arg(dir.join("results/county-measures.geojson"))
        .arg(root().join(MEASURES))
        .arg(&county_file)
        .arg(dir.join("results/county-measures-access-map.svg"))
        .arg(dir.join("results/county-measures-inactivity-map.svg"))
        .output()
        .expect("python3 is needed; tests/prepare-host installs it");
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert!(
        out.status.success(),
        "read-back failed (missing shapely? run tests/prepare-host)\n{stdout}\n{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert_eq!(
        stdout.trim_end(),
        "features 6 z-scores 24\n\
         svg 6 paths: Residents within reach of exercise opportunities (%), invented demo region\n\
         svg 6 paths: Adults physically inactive (%), invented measures, invented demo region"
    );
    std::fs::remove_dir_all(&dir).ok();
}
