//! Layers, their queries and the sweep in the stock shell: the sweep gives
//! the scalar functions' answers, whatever the thread count, chunk size or
//! the order the layer was built in; errors name what is wrong; Ctrl-C
//! stops a long sweep; progress is shown when asked.

mod common;

use std::io::Write;
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

use common::{query, shell, shell_env};

/// An invented neighbourhood: 40 parks (polygons, some with holes) and 20
/// facilities with 1- or 3-mile reach, and 3,000 blocks on a grid, all
/// built in SQL from deterministic arithmetic.
const SETUP: &str = "
CREATE TABLE parks AS
  WITH RECURSIVE i(n) AS (SELECT 1 UNION ALL SELECT n + 1 FROM i WHERE n < 40)
  SELECT n AS park_id, ST_GeomFromText(printf(
    'POLYGON ((%f %f, %f %f, %f %f, %f %f, %f %f)%s)',
    -131.2 + (n % 8) * 0.05, 38.3 + (n / 8) * 0.04,
    -131.2 + (n % 8) * 0.05 + 0.01, 38.3 + (n / 8) * 0.04,
    -131.2 + (n % 8) * 0.05 + 0.01, 38.3 + (n / 8) * 0.04 + 0.008,
    -131.2 + (n % 8) * 0.05, 38.3 + (n / 8) * 0.04 + 0.008,
    -131.2 + (n % 8) * 0.05, 38.3 + (n / 8) * 0.04,
    CASE WHEN n % 5 = 0 THEN printf(', (%f %f, %f %f, %f %f, %f %f)',
      -131.2 + (n % 8) * 0.05 + 0.003, 38.3 + (n / 8) * 0.04 + 0.002,
      -131.2 + (n % 8) * 0.05 + 0.007, 38.3 + (n / 8) * 0.04 + 0.002,
      -131.2 + (n % 8) * 0.05 + 0.007, 38.3 + (n / 8) * 0.04 + 0.006,
      -131.2 + (n % 8) * 0.05 + 0.003, 38.3 + (n / 8) * 0.04 + 0.002)
    ELSE '' END)) AS geom FROM i;
CREATE TABLE facilities AS
  WITH RECURSIVE i(n) AS (SELECT 1 UNION ALL SELECT n + 1 FROM i WHERE n < 20)
  SELECT 100 + n AS fid, CASE WHEN n % 2 = 0 THEN ambit_miles(1) ELSE ambit_miles(3) END AS reach,
         ST_Point(-131.25 + n * 0.023, 38.26 + (n % 4) * 0.07) AS geom FROM i;
CREATE TABLE blocks AS
  WITH RECURSIVE i(n) AS (SELECT 0 UNION ALL SELECT n + 1 FROM i WHERE n < 2999)
  SELECT printf('99001%06d%04d', n / 100, n % 100) AS geoid,
         CASE WHEN n = 17 THEN NULL WHEN n = 18 THEN ST_GeomFromText('POLYGON EMPTY') ELSE
         ST_GeomFromText(printf('POLYGON ((%f %f, %f %f, %f %f, %f %f, %f %f))',
           -131.3 + (n % 60) * 0.008, 38.2 + (n / 60) * 0.007,
           -131.3 + (n % 60) * 0.008 + 0.006, 38.2 + (n / 60) * 0.007,
           -131.3 + (n % 60) * 0.008 + 0.006, 38.2 + (n / 60) * 0.007 + 0.005,
           -131.3 + (n % 60) * 0.008, 38.2 + (n / 60) * 0.007 + 0.005,
           -131.3 + (n % 60) * 0.008, 38.2 + (n / 60) * 0.007)) END AS geom FROM i;
";

const BUILD: &str = "
SELECT ambit_layer('access', geom, ambit_miles(0.5), park_id) FROM parks;
SELECT ambit_layer('access', geom, reach, fid) FROM facilities;
";

const SWEEP: &str =
    "SELECT id, reached, round(nearest_m, 6) FROM ambit_sweep('access', 'SELECT geoid, geom FROM blocks');";

const SCALAR: &str = "SELECT geoid, ambit_reached('access', geom), round(ambit_nearest('access', geom), 6) FROM blocks;";

fn run(env: &[(&str, &str)], sql: &str) -> String {
    let r = shell_env(&[":memory:"], env, &format!("{SETUP}{sql}"));
    assert!(r.status == 0 && r.stderr.is_empty(), "{}", r.stderr);
    r.stdout
}

#[test]
fn the_sweep_equals_the_scalar_functions_and_does_not_depend_on_threads_or_chunks() {
    let scalar = run(&[], &format!("{BUILD}{SCALAR}"));
    let lines: Vec<&str> = scalar.lines().collect();
    assert_eq!(lines.len(), 2 + 3000);
    let reached = lines.iter().filter(|l| l.contains("|1|")).count();
    assert!(reached > 300 && reached < 2700, "{reached} blocks reached");
    // NULL geometry: NULL, NULL; empty geometry: 0 and no distance.
    assert!(lines.contains(&"990010000000017||"), "NULL block");
    assert!(lines.contains(&"990010000000018|0|"), "empty block");
    for env in [
        vec![("RAYON_NUM_THREADS", "1")],
        vec![("RAYON_NUM_THREADS", "2")],
        vec![("RAYON_NUM_THREADS", "2"), ("AMBIT_CHUNK_ROWS", "7")],
        vec![("AMBIT_CHUNK_ROWS", "1")],
        vec![("AMBIT_CHUNK_ROWS", "100000")],
    ] {
        assert_eq!(run(&env, &format!("{BUILD}{SWEEP}")), scalar, "{env:?}");
    }
    // A layer built in the other order, in one UNION ALL, answers the same.
    let reversed = "SELECT ambit_layer('access', geom, reach, id) FROM (
        SELECT fid AS id, reach, geom FROM facilities
        UNION ALL SELECT park_id, ambit_miles(0.5), geom FROM parks ORDER BY id DESC);";
    let out = run(&[], &format!("{reversed}{SWEEP}"));
    assert_eq!(out.lines().skip(1).collect::<Vec<_>>(), lines[2..].to_vec());
}

/// The sweep computes only the columns a statement names; each column,
/// asked alone or with others, equals its scalar function (share included,
/// NULL for points, which have no area).
#[test]
fn the_sweep_computes_the_columns_asked_and_each_equals_its_scalar() {
    let points = "INSERT INTO blocks VALUES ('990010000009999', ST_Point(-131.2, 38.3));";
    let scalar = run(
        &[],
        &format!(
            "{points}{BUILD}SELECT geoid, ambit_reached('access', geom), round(ambit_nearest('access', geom), 6),
               CASE WHEN ST_GeometryType(geom) = 'POINT' THEN 'null'
                    ELSE iif(ambit_share('access', geom) IS NULL, 'null', printf('%.12f', ambit_share('access', geom))) END
             FROM blocks;"
        ),
    );
    let column = |k: usize| -> Vec<String> {
        scalar
            .lines()
            .skip(2)
            .map(|l| {
                let c: Vec<&str> = l.split('|').collect();
                format!("{}|{}", c[0], c[k])
            })
            .collect()
    };
    for (k, expr) in [
        (1, "reached"),
        (2, "round(nearest_m, 6)"),
        (3, "iif(share IS NULL, 'null', printf('%.12f', share))"),
    ] {
        let out = run(
            &[("RAYON_NUM_THREADS", "2")],
            &format!("{points}{BUILD}SELECT id, {expr} FROM ambit_sweep('access', 'SELECT geoid, geom FROM blocks');"),
        );
        let got: Vec<String> = out.lines().skip(2).map(str::to_string).collect();
        let want = column(k);
        assert_eq!(got.len(), want.len(), "{expr}");
        let differ: Vec<_> = got
            .iter()
            .zip(&want)
            .filter(|(g, w)| g != w)
            .take(3)
            .collect();
        assert!(differ.is_empty(), "{expr}: {differ:?}");
    }
    let all = run(
        &[],
        &format!("{points}{BUILD}SELECT id, reached, round(nearest_m, 6), iif(share IS NULL, 'null', printf('%.12f', share)) FROM ambit_sweep('access', 'SELECT geoid, geom FROM blocks');"),
    );
    assert!(
        all == scalar,
        "all columns at once differ from the scalar functions"
    );
    // Shares lie in [0, 1], with blocks wholly in and wholly out of reach.
    let shares: Vec<f64> = column(3)
        .iter()
        .filter_map(|l| l.split('|').nth(1).and_then(|v| v.parse().ok()))
        .collect();
    assert!(shares.iter().all(|s| (0.0..=1.0).contains(s)));
    assert!(shares.contains(&0.0) && shares.contains(&1.0));
    assert!(shares.iter().filter(|&&s| s > 0.0 && s < 1.0).count() > 100);
}

#[test]
fn counts_and_near_rows_agree_with_each_other() {
    let out = run(
        &[],
        &format!(
            "{BUILD}
             SELECT sum(c), sum(n) FROM (
               SELECT ambit_count('access', b.geom) AS c,
                      (SELECT count(*) FROM ambit_near('access', b.geom)) AS n
               FROM blocks b);
             SELECT count(*) FROM blocks b WHERE ambit_reached('access', b.geom) = 1
               AND NOT EXISTS (SELECT 1 FROM ambit_near('access', b.geom));"
        ),
    );
    let lines: Vec<&str> = out.lines().collect();
    let sums: Vec<&str> = lines[2].split('|').collect();
    assert_eq!(sums[0], sums[1]);
    assert_eq!(lines[3], "0");
}

#[test]
fn the_layer_table_lists_layers() {
    let out = run(
        &[],
        &format!("{BUILD}SELECT name, features, vertices, bytes > 0 FROM ambit_layers;"),
    );
    // 40 parks: 32 of 5 vertices, 8 with a 4-vertex hole; 20 points.
    let vertices = 40 * 5 + 8 * 4 + 20;
    assert!(out.ends_with(&format!("access|60|{vertices}|1\n")), "{out}");
}

#[test]
fn layer_errors_name_what_is_wrong() {
    let cases = [
        (
            "SELECT ambit_layer('parks', ST_Point(1, 2)); SELECT ambit_reached('clinics', ST_Point(1, 2));",
            "ambit_reached: no layer named 'clinics' on this connection (layers on this connection: 'parks'); build it with SELECT ambit_layer('clinics', geom) FROM ...",
        ),
        (
            "SELECT ambit_layer('parks', geom, 0, id) FROM (SELECT 7 AS id, x'0101000000000000000000F03F' AS geom);",
            "ambit_layer: feature 7 of layer 'parks': truncated WKB",
        ),
        (
            "SELECT ambit_layer('parks', ST_Point(1, 2), -5);",
            "ambit_layer: argument 3 (reach_m): must be a distance of 0 or more metres, got -5",
        ),
        (
            "SELECT ambit_layer('parks', ST_Point(1, 2), 'far');",
            "ambit_layer: argument 3 (reach_m): 'far' must be a length such as '0.5 mi', '800 m', '3 km' or '2640 ft'",
        ),
        (
            "SELECT ambit_layer(name, ST_Point(1, 2)) FROM (SELECT 'a' AS name UNION ALL SELECT 'b');",
            "use one ambit_layer call per layer",
        ),
        (
            "SELECT * FROM ambit_sweep('nope', 'SELECT 1, ST_Point(1, 2)');",
            "ambit_sweep: no layer named 'nope'",
        ),
        (
            "SELECT ambit_layer('p', ST_Point(1, 2)); SELECT * FROM ambit_sweep('p', 'SELECT 1, ''POINT (1 2)''');",
            "ambit_sweep: row with id 1: the query's second column must be a geometry blob, got text",
        ),
        (
            "SELECT ambit_layer('p', ST_Point(1, 2)); SELECT * FROM ambit_sweep('p', 'SELECT 1, ST_Point(1, 2); SELECT 2');",
            "ambit_sweep: argument 2 (query): the query must be a single SELECT statement",
        ),
        (
            "SELECT ambit_layer('p', ST_Point(1, 2)); SELECT ambit_nearest('p', ST_Point(1, 2), -1);",
            "ambit_nearest: argument 3 (max_m): must be a distance of 0 or more metres, got -1",
        ),
        (
            "SELECT * FROM ambit_near;",
            "ambit_near: needs a layer name and a geometry",
        ),
    ];
    for (sql, message) in cases {
        let r = shell(&format!("{sql}\nSELECT 'alive';"));
        assert_eq!(r.status, 1, "{sql}");
        assert!(
            r.stderr.contains(message),
            "{sql}\n  want: {message}\n  got: {}",
            r.stderr
        );
        assert!(
            r.stdout.trim_end().ends_with("alive"),
            "{sql}: {}",
            r.stdout
        );
    }
}

#[test]
fn null_and_empty_geometries_in_a_layer_are_skipped() {
    let out = query(
        "SELECT ambit_layer('p', geom) FROM (SELECT NULL AS geom UNION ALL SELECT ST_GeomFromText('POINT EMPTY') \
           UNION ALL SELECT ST_Point(1, 2));
         SELECT features FROM ambit_layers;
         SELECT ambit_reached('p', NULL) IS NULL, ambit_nearest('p', ST_GeomFromText('POINT EMPTY')) IS NULL;",
    );
    assert_eq!(out, "1\n1\n1|1");
}

#[test]
fn progress_is_shown_when_asked() {
    let r = shell_env(
        &[":memory:"],
        &[("AMBIT_PROGRESS", "1")],
        &format!("{SETUP}{BUILD}SELECT count(*) FROM ambit_sweep('access', 'SELECT geoid, geom FROM blocks');"),
    );
    assert_eq!(r.status, 0, "{}", r.stderr);
    assert!(
        r.stderr.contains("ambit_sweep: 3000 of 3000 rows"),
        "{}",
        r.stderr
    );
    assert!(r.stderr.contains("rows/s"), "{}", r.stderr);
    let quiet = shell_env(
        &[":memory:"],
        &[("AMBIT_PROGRESS", "0")],
        &format!("{SETUP}{BUILD}SELECT count(*) FROM ambit_sweep('access', 'SELECT geoid, geom FROM blocks');"),
    );
    assert!(quiet.stderr.is_empty(), "{}", quiet.stderr);
}

#[test]
fn ctrl_c_stops_a_long_sweep_promptly() {
    // About 5 million rows: minutes of work if not interrupted.
    let sql = format!(
        ".load {}\n{SETUP}{BUILD}\
         SELECT count(*) FROM ambit_sweep('access', 'WITH RECURSIVE i(n) AS (SELECT 1 UNION ALL SELECT n + 1 FROM i WHERE n < 5000000) \
           SELECT n, ST_Point(-131.3 + (n % 997) * 0.0005, 38.2 + (n % 991) * 0.0004) FROM i');\n",
        common::library().with_extension("").display()
    );
    let mut child = Command::new(common::SHELL)
        .arg(":memory:")
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let mut stdin = child.stdin.take().unwrap();
    stdin.write_all(sql.as_bytes()).unwrap();
    std::thread::sleep(Duration::from_millis(2500));
    let signalled = Instant::now();
    let status = Command::new("kill")
        .args(["-INT", &child.id().to_string()])
        .status()
        .unwrap();
    assert!(status.success());
    drop(stdin);
    let out = child.wait_with_output().unwrap();
    let took = signalled.elapsed();
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(took < Duration::from_secs(3), "took {took:?} to stop");
    assert!(stderr.contains("interrupt"), "{stderr}");
}
