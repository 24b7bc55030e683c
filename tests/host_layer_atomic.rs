//! Layers are all or nothing, in the stock shell and the system Python:
//! a failed row, an interrupt or a memory limit leaves a layer as it was
//! before the statement (absent when new); a feature id a layer already
//! holds is refused, so re-running a script cannot double its counts;
//! ambit_layers shows each layer's extent, so swapped coordinates show.

mod common;

use std::process::Command;

use common::{shell, shell_env};

/// Runs `sql` in the shell (which goes on after errors) and returns
/// (stdout, stderr).
fn run(sql: &str) -> (String, String) {
    let r = shell(&format!("{sql}\nSELECT 'alive';"));
    assert!(r.stdout.trim_end().ends_with("alive"), "{}", r.stdout);
    (r.stdout, r.stderr)
}

const THREE_ROWS_BAD_SECOND: &str =
    "SELECT ambit_layer('x', g, 10, i) FROM (SELECT 4 AS i, ST_Point(1, 2) AS g \
     UNION ALL SELECT 5, x'0101000000' UNION ALL SELECT 6, ST_Point(3, 4));";

/// What a layer answers: its row of ambit_layers and three questions.
const ANSWERS: &str = "SELECT '#', features, vertices, bytes FROM ambit_layers WHERE name = 'x';
SELECT '#', ambit_count('x', ST_Point(1, 2), 1e6), round(ambit_nearest('x', ST_Point(1, 2)), 6),
       ambit_reached('x', ST_Point(1, 2));";

fn answers(stdout: &str) -> Vec<&str> {
    stdout.lines().filter(|l| l.starts_with('#')).collect()
}

#[test]
fn a_bad_blob_on_row_2_of_3_leaves_no_layer() {
    let (out, err) = run(&format!(
        "{THREE_ROWS_BAD_SECOND}\nSELECT '#', count(*) FROM ambit_layers;\nSELECT ambit_reached('x', ST_Point(1, 2));"
    ));
    assert!(err.contains("ambit_layer: feature 5 of layer 'x'"), "{err}");
    assert_eq!(answers(&out), ["#|0"], "{out}");
    assert!(err.contains("ambit_reached: no layer named 'x'"), "{err}");
}

#[test]
fn a_bad_blob_leaves_an_existing_layer_unchanged() {
    let build = "SELECT ambit_layer('x', g, 10, i) FROM (SELECT 1 AS i, ST_Point(1, 2.01) AS g \
                 UNION ALL SELECT 2, ST_Point(1.5, 2) UNION ALL SELECT 3, ST_Point(5, 5));";
    let (out, err) = run(&format!(
        "{build}\n{ANSWERS}\n{THREE_ROWS_BAD_SECOND}\n{ANSWERS}"
    ));
    assert!(err.contains("ambit_layer: feature 5 of layer 'x'"), "{err}");
    let rows = answers(&out);
    assert_eq!(rows.len(), 4, "{out}");
    assert_eq!(rows[0], rows[2], "ambit_layers row changed");
    assert_eq!(rows[1], rows[3], "answers changed");
    assert!(rows[0].starts_with("#|3|3|"), "{out}");
}

#[test]
fn an_error_in_a_failing_feature_of_an_existing_layer_keeps_its_answers_in_sqlite_python() {
    // The same in another host: Debian's Python sqlite3 module (SQLite
    // 3.40.1), where the error surfaces as an exception.
    let script = format!(
        r#"
import sqlite3
c = sqlite3.connect(":memory:")
c.enable_load_extension(True)
c.load_extension({lib:?})
c.execute("SELECT ambit_layer('x', ST_Point(1, 2), 0, 1)").fetchall()
try:
    c.execute("{bad}").fetchall()
    print("no error")
except sqlite3.OperationalError as e:
    print("error:", e)
print(c.execute("SELECT features FROM ambit_layers WHERE name = 'x'").fetchall())
"#,
        lib = common::library().display().to_string(),
        bad = THREE_ROWS_BAD_SECOND.trim_end_matches(';')
    );
    let out = Command::new("/usr/bin/python3")
        .args(["-c", &script])
        .output()
        .expect("/usr/bin/python3");
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert!(
        out.status.success(),
        "{stdout}{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(
        stdout.contains("error: ambit_layer: feature 5 of layer 'x'"),
        "{stdout}"
    );
    assert!(stdout.trim_end().ends_with("[(1,)]"), "{stdout}");
}

#[test]
fn an_id_the_layer_already_holds_is_refused_and_the_layer_is_unchanged() {
    let build = "SELECT ambit_layer('x', g, 10, i) FROM (SELECT 1 AS i, ST_Point(1, 2.01) AS g \
                 UNION ALL SELECT 2, ST_Point(1.5, 2) UNION ALL SELECT 3, ST_Point(5, 5));";
    let again = "SELECT ambit_layer('x', g, 10, i) FROM (SELECT 4 AS i, ST_Point(1, 2) AS g UNION ALL SELECT 3, ST_Point(3, 3));";
    let (out, err) = run(&format!("{build}\n{ANSWERS}\n{again}\n{ANSWERS}"));
    assert!(
        err.contains(
            "ambit_layer: layer 'x' already holds feature id 3; a layer never holds an id twice"
        ),
        "{err}"
    );
    assert!(err.contains("SELECT ambit_layer_drop('x')"), "{err}");
    let rows = answers(&out);
    assert_eq!((rows[0], rows[1]), (rows[2], rows[3]), "{out}");
}

#[test]
fn an_id_given_twice_in_one_call_is_refused() {
    let (out, err) = run(
        "SELECT ambit_layer('x', g, 0, i) FROM (SELECT 7 AS i, ST_Point(1, 2) AS g UNION ALL SELECT 8, ST_Point(2, 2) \
           UNION ALL SELECT 7, ST_Point(3, 2));\nSELECT '#', count(*) FROM ambit_layers;",
    );
    assert!(
        err.contains("ambit_layer: feature id 7 is given twice for layer 'x'"),
        "{err}"
    );
    assert_eq!(answers(&out), ["#|0"], "{out}");
}

#[test]
fn running_the_same_statement_twice_does_not_double_the_counts() {
    // Without feature_id the features are numbered 1, 2, ... in each call,
    // so the second run meets id 1 again.
    let build = "SELECT ambit_layer('x', g, 5000) FROM (SELECT ST_Point(1, 2) AS g UNION ALL SELECT ST_Point(1.01, 2));";
    let (out, err) = run(&format!(
        "{build}\n{build}\nSELECT '#', features FROM ambit_layers;\nSELECT '#', ambit_count('x', ST_Point(1, 2));"
    ));
    assert!(
        err.contains("layer 'x' already holds feature id 1 (without feature_id, the features of every call are numbered 1, 2, ...)"),
        "{err}"
    );
    // 0.01 degree of longitude at latitude 2 is about 1.1 km (common
    // practice, no source), within the 5 km reach: both count, once.
    assert_eq!(answers(&out), ["#|2", "#|2"], "{out}");
    // Dropping first, as the message says, rebuilds it.
    let (out, err) = run(&format!(
        "{build}\nSELECT ambit_layer_drop('x');\n{build}\nSELECT '#', features FROM ambit_layers;"
    ));
    assert!(err.is_empty(), "{err}");
    assert_eq!(answers(&out), ["#|2"], "{out}");
}

#[test]
fn ambit_layers_shows_each_layers_extent() {
    // The invented region's grid of points; the expected extent is the
    // least and greatest coordinate, computed by SQLite from the same
    // numbers (brute force).
    let sql = "CREATE TABLE p AS WITH RECURSIVE i(n) AS (SELECT 1 UNION ALL SELECT n + 1 FROM i WHERE n < 500)
         SELECT n AS id, -131.3 + (n % 37) * 0.013 AS lon, 38.2 + (n % 41) * 0.011 AS lat FROM i;
       SELECT ambit_layer('pts', ST_Point(lon, lat), 100, id) FROM p;
       SELECT ambit_layer('swapped', ST_Point(lat, lon), 100, id) FROM p WHERE lon > -90;
       SELECT ambit_layer('ring', ST_GeomFromText('POLYGON ((-131.4 38.1, -130.9 38.1, -130.9 38.7, -131.4 38.7, -131.4 38.1))'));
       SELECT ambit_layer('dateline', g, 0, i) FROM (SELECT 1 AS i, ST_Point(179.5, -16.2) AS g UNION ALL SELECT 2, ST_Point(-179.25, -16.0));
       SELECT ambit_layer('empty', NULL);
       SELECT '#', name, west, south, east, north FROM ambit_layers ORDER BY name;
       SELECT '#', min(lon), min(lat), max(lon), max(lat) FROM p;";
    let (out, err) = run(sql);
    assert!(err.is_empty(), "{err}");
    let rows = answers(&out);
    let want = rows.last().unwrap().trim_start_matches("#|");
    assert_eq!(
        rows[..rows.len() - 1],
        [
            // West > east: across the antimeridian (RFC 7946, section 5.2).
            "#|dateline|179.5|-16.2|-179.25|-16.0",
            "#|empty||||",
            &format!("#|pts|{want}"),
            "#|ring|-131.4|38.1|-130.9|38.7",
        ],
        "{out}"
    );
    // latitude and longitude swapped but in range: accepted, and the
    // extent shows it (longitudes near 38, latitudes near -131 would be
    // refused, so no row qualifies; see the next case).
    let swapped = "CREATE TABLE s AS SELECT -80.5 + n * 0.01 AS lon, 38.2 + n * 0.01 AS lat FROM (SELECT 1 AS n UNION ALL SELECT 2);
       SELECT ambit_layer('sites', ST_Point(lat, lon)) FROM s;
       SELECT '#', west, south, east, north FROM ambit_layers;";
    let (out, err) = run(swapped);
    assert!(err.is_empty(), "{err}");
    assert_eq!(answers(&out), ["#|38.21|-80.49|38.22|-80.48"], "{out}");
}

#[test]
fn progress_of_a_layer_build_is_shown_when_asked() {
    let sql = "SELECT ambit_layer('x', ST_Point(n * 0.001, 1)) FROM (WITH RECURSIVE i(n) AS (SELECT 1 UNION ALL SELECT n + 1 FROM i WHERE n < 5000) SELECT n FROM i);";
    let r = shell_env(&[":memory:"], &[("AMBIT_PROGRESS", "1")], sql);
    assert_eq!(r.status, 0, "{}", r.stderr);
    assert!(
        r.stderr.contains("ambit_layer 'x': 5000 of 5000 features"),
        "{}",
        r.stderr
    );
    let quiet = shell_env(&[":memory:"], &[("AMBIT_PROGRESS", "0")], sql);
    assert!(quiet.stderr.is_empty(), "{}", quiet.stderr);
}

/// Runs `sql` in the shell under `ulimit -v` (KiB) and returns
/// (exit status, stdout, stderr).
fn limited_shell(kib: u64, db: &str, sql: &str) -> (i32, String, String) {
    let script = format!(
        ".load {}\n{sql}\n",
        common::library().with_extension("").display()
    );
    let path = std::env::temp_dir().join(format!("ambit-limit-{}-{kib}.sql", std::process::id()));
    std::fs::write(&path, script).unwrap();
    let out = Command::new("bash")
        .args([
            "-c",
            &format!(
                "ulimit -v {kib}; {} {db} < {}",
                common::SHELL,
                path.display()
            ),
        ])
        .output()
        .unwrap();
    let _ = std::fs::remove_file(&path);
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

#[test]
fn a_layer_too_big_for_a_memory_limit_is_an_error_not_an_abort() {
    // 1 GB of address space (ulimit -v 1000000 KiB). Three million points
    // take about 2.9 GB here (peak resident size measured with
    // /usr/bin/time -v), and a 10-million-vertex ring about 3 GB.
    let (status, out, err) = limited_shell(
        1_000_000,
        ":memory:",
        "SELECT ambit_layer('small', ST_Point(1, 2));
         SELECT ambit_layer('big', ST_Point(-131.3 + (n % 997) * 0.0005, 38.2 + (n % 991) * 0.0004), 100, n)
           FROM (WITH RECURSIVE i(n) AS (SELECT 1 UNION ALL SELECT n + 1 FROM i WHERE n < 3000000) SELECT n FROM i);
         SELECT '#', name, features FROM ambit_layers;
         SELECT '#', round(ambit_nearest('small', ST_Point(1, 2.001)), 3);",
    );
    assert_eq!(
        status, 1,
        "the shell reports an error and is not aborted: {err}"
    );
    assert!(
        err.contains("ambit_layer: not enough memory for layer 'big' (3000000 features, about "),
        "{err}"
    );
    assert!(!err.contains("memory allocation"), "{err}");
    // 0.001 degree of latitude near the equator is about 110.6 m (common
    // practice, no source): the connection still answers.
    assert_eq!(answers(&out), ["#|small|1", "#|110.576"], "{out}");

    // One polygon of 10 million vertices, read with the shell's readfile().
    let n: u32 = 10_000_000;
    let mut wkb = vec![1u8];
    wkb.extend(3u32.to_le_bytes());
    wkb.extend(1u32.to_le_bytes());
    wkb.extend(n.to_le_bytes());
    for k in 0..n - 1 {
        let t = std::f64::consts::TAU * k as f64 / (n - 1) as f64;
        wkb.extend((-131.0 + 0.2 * t.cos()).to_le_bytes());
        wkb.extend((38.4 + 0.2 * t.sin()).to_le_bytes());
    }
    let first: Vec<u8> = wkb[13..29].to_vec();
    wkb.extend(first);
    let file = std::env::temp_dir().join(format!("ambit-ring-{}.wkb", std::process::id()));
    std::fs::write(&file, &wkb).unwrap();
    drop(wkb);
    let (status, out, err) = limited_shell(
        1_000_000,
        ":memory:",
        &format!(
            "SELECT ambit_layer('small', ST_Point(1, 2));
             SELECT ambit_layer('ring', readfile('{}'));
             SELECT '#', name, features FROM ambit_layers;",
            file.display()
        ),
    );
    let _ = std::fs::remove_file(&file);
    assert_eq!(status, 1, "{err}");
    assert!(
        err.contains("ambit_layer: not enough memory for layer 'ring' (1 features, about "),
        "{err}"
    );
    assert_eq!(answers(&out), ["#|small|1"], "{out}");
}

#[test]
fn interrupts_stop_layer_builds_and_far_nearest_searches_promptly_and_change_nothing() {
    // tests/python/layer_interrupt.py: 300,000 features, interrupted from
    // another thread at 10% to 75% of a build, into an existing layer and a
    // new one; prints the latencies.
    let path = format!(
        "{}/tests/python/layer_interrupt.py",
        env!("CARGO_MANIFEST_DIR")
    );
    let out = Command::new("/usr/bin/python3")
        .arg(&path)
        .arg(common::library())
        .output()
        .expect("/usr/bin/python3 (Debian's, which can load extensions)");
    let stdout = String::from_utf8_lossy(&out.stdout);
    println!("{stdout}");
    assert!(
        out.status.success() && stdout.contains(" passed, 0 failed"),
        "{stdout}\n{}",
        String::from_utf8_lossy(&out.stderr)
    );
}

/// ambit_layer_from reads its rows itself, so an error of SQLite's own in
/// a later row (here an integer overflow, which ambit_layer's aggregate
/// cannot see) fails the statement and leaves the layer as it was: with
/// its old answers when it existed, absent when it was new.
#[test]
fn ambit_layer_from_leaves_the_layer_unchanged_after_an_error_of_sqlite() {
    let build = "SELECT ambit_layer_from('x', 'SELECT g, 10, i FROM (SELECT 1 AS i, ST_Point(1, 2.01) AS g \
                 UNION ALL SELECT 2, ST_Point(1.5, 2) UNION ALL SELECT 3, ST_Point(5, 5))');";
    let overflow = "SELECT ambit_layer_from('x', 'SELECT g, 10, CASE WHEN i = 3 THEN abs(-9223372036854775807 - 1) ELSE 10 + i END FROM \
                    (SELECT 1 AS i, ST_Point(7, 7) AS g UNION ALL SELECT 2, ST_Point(8, 8) UNION ALL SELECT 3, ST_Point(9, 9))');";
    let (out, err) = run(&format!("{build}\n{ANSWERS}\n{overflow}\n{ANSWERS}"));
    assert!(
        err.contains(
            "ambit_layer_from: the query failed: integer overflow; the layer is unchanged"
        ),
        "{err}"
    );
    let rows = answers(&out);
    assert_eq!(rows.len(), 4, "{out}");
    assert_eq!(rows[0], rows[2], "ambit_layers row changed");
    assert_eq!(rows[1], rows[3], "answers changed");
    assert!(rows[0].starts_with("#|3|3|"), "{out}");
    // A new layer stays absent.
    let (out, err) = run(&format!(
        "{}\nSELECT '#', count(*) FROM ambit_layers;",
        overflow.replace("'x'", "'y'")
    ));
    assert!(err.contains("integer overflow"), "{err}");
    assert_eq!(answers(&out), ["#|0"], "{out}");
    // The same statement with ambit_layer adds the row before the error:
    // the case ambit_layer_from exists for (README, ambit_layer).
    let (out, err) = run(
        "SELECT ambit_layer('z', g, 10, CASE WHEN i = 3 THEN abs(-9223372036854775807 - 1) ELSE 10 + i END) FROM \
         (SELECT 1 AS i, ST_Point(7, 7) AS g UNION ALL SELECT 2, ST_Point(8, 8) UNION ALL SELECT 3, ST_Point(9, 9));\n\
         SELECT '#', features FROM ambit_layers WHERE name = 'z';",
    );
    assert!(err.contains("integer overflow"), "{err}");
    assert_eq!(answers(&out), ["#|2"], "{out}");
}

/// ambit_layer_from builds the same layer as ambit_layer from the same
/// rows, refuses ids the layer holds, and names the query's row and column
/// in its errors; writing or multi-statement queries are refused before
/// they run.
#[test]
fn ambit_layer_from_builds_what_ambit_layer_builds_and_explains_its_errors() {
    let rows = "SELECT ST_Point(1, 2.01) AS g, 10 AS r, 1 AS i UNION ALL SELECT ST_Point(1.5, 2), '1 km', 2 \
                UNION ALL SELECT ST_GeomFromText('POLYGON ((3 3, 3.1 3, 3.1 3.1, 3 3.1, 3 3))'), 0, 3";
    let sql = format!(
        "CREATE TABLE src AS {rows};\n\
         SELECT '#', ambit_layer('x', g, r, i) FROM src;\n{ANSWERS}\n\
         SELECT ambit_layer_drop('x');\n\
         SELECT '#', ambit_layer_from('x', 'SELECT g, r, i FROM src');\n{ANSWERS}\n\
         SELECT ambit_layer_from('x', 'SELECT g, r, i FROM src');\n\
         SELECT ambit_layer_from('w', 'SELECT g, ''-3 m'', i FROM src');\n\
         SELECT ambit_layer_from('w', 'DELETE FROM src RETURNING g');\n\
         SELECT ambit_layer_from('w', 'SELECT g FROM src; SELECT 1');\n\
         SELECT ambit_layer_from('w', 'SELECT g, r, i, 4 FROM src');\n\
         SELECT '#', count(*) FROM src;\n\
         SELECT '#', count(*) FROM ambit_layers WHERE name = 'w';"
    );
    let (out, err) = run(&sql);
    let got = answers(&out);
    assert_eq!(got.len(), 8, "{out}\n{err}");
    assert_eq!(got[0], "#|3");
    assert_eq!(got[3], "#|3");
    assert_eq!(got[1], got[4], "ambit_layers rows differ");
    assert_eq!(got[2], got[5], "answers differ");
    assert_eq!(got[6], "#|3", "the table lost rows");
    assert_eq!(got[7], "#|0", "a failed call left a layer");
    for needle in [
        "ambit_layer_from: layer 'x' already holds feature id 1",
        "ambit_layer_from: row 1 of the query, column 2 (reach_m)",
        "ambit_layer_from: argument 2 (query): must be a read-only SELECT",
        "ambit_layer_from: argument 2 (query): must be a single SELECT",
        "ambit_layer_from: argument 2 (query): must return 1 to 3 columns",
    ] {
        assert!(err.contains(needle), "missing {needle:?} in:\n{err}");
    }
}
