//! Interrupts in the stock shell: Ctrl-C (SIGINT, which makes the shell
//! call sqlite3_interrupt) stops a long ambit computation promptly, not at
//! the end of its current chunk of work. ambit promises 0.2 s; the asserts
//! allow 1 s so a loaded two-core machine does not fail them, and each
//! test prints the latency it measured.

mod common;

use std::io::Write;
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

/// A layer with one 20,000-vertex polygon (a wobbly ellipse about 85 km
/// across, invented), so that rows far from it cost about a millisecond
/// each: a chunk of 8192 such rows takes seconds.
const FOREST: &str = "CREATE TABLE ring AS WITH RECURSIVE i(n) AS (SELECT 0 UNION ALL SELECT n + 1 FROM i WHERE n < 19999)
  SELECT n, -100 + 0.5 * cos(n * 2 * 3.141592653589793 / 20000) * (1 + 0.01 * (n % 7)) AS x,
         40 + 0.4 * sin(n * 2 * 3.141592653589793 / 20000) AS y FROM i;
CREATE TABLE park AS SELECT ST_GeomFromText('POLYGON ((' || group_concat(x || ' ' || y, ', ') || ', '
  || (SELECT x || ' ' || y FROM ring WHERE n = 0) || '))') AS geom FROM (SELECT x, y FROM ring ORDER BY n);
SELECT ambit_layer('forest', geom, '0.5 mi') FROM park;
";

/// A table `big` holding one 200,000-vertex ring (invented, about 340 km
/// across, around (-100, 40)): from a point near its antipode the bounds
/// prune little and nearly every edge needs Karney's inverse, about 20 s of
/// work on this machine.
const BIG_RING: &str = "CREATE TABLE ring AS WITH RECURSIVE i(n) AS (SELECT 0 UNION ALL SELECT n + 1 FROM i WHERE n < 199999)
  SELECT n, -100 + 2 * cos(n * 2 * 3.141592653589793 / 200000) * (1 + 0.001 * (n % 2)) AS x,
         40 + 1.5 * sin(n * 2 * 3.141592653589793 / 200000) AS y FROM i;
CREATE TABLE big AS SELECT ST_GeomFromText('POLYGON ((' || group_concat(x || ' ' || y, ', ') || ', '
  || (SELECT x || ' ' || y FROM ring WHERE n = 0) || '))') AS geom FROM (SELECT x, y FROM ring ORDER BY n);
";

/// Runs `sql` in the shell, sends SIGINT after `after`, and returns how
/// long the shell took to finish after the signal, with its stderr.
fn interrupt_after(sql: &str, after: Duration) -> (Duration, String) {
    let script = format!(
        ".load {}\n{sql}\n",
        common::library().with_extension("").display()
    );
    let mut child = Command::new(common::SHELL)
        .arg(":memory:")
        .env("AMBIT_PROGRESS", "0")
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let mut stdin = child.stdin.take().unwrap();
    stdin.write_all(script.as_bytes()).unwrap();
    std::thread::sleep(after);
    let signalled = Instant::now();
    let status = Command::new("kill")
        .args(["-INT", &child.id().to_string()])
        .status()
        .unwrap();
    assert!(status.success());
    drop(stdin);
    let out = child.wait_with_output().unwrap();
    (
        signalled.elapsed(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

#[test]
fn ctrl_c_stops_a_sweep_between_rows_not_chunks() {
    // 1,000,000 rows about 680 km east of the polygon, nearest distance
    // asked: about a millisecond a row, so the first chunk alone is
    // seconds of work. Before 2026-12-02 the sweep looked at the interrupt
    // only between chunks.
    let sql = format!(
        "{FOREST}SELECT count(*), sum(nearest_m) FROM ambit_sweep('forest',
           'WITH RECURSIVE i(n) AS (SELECT 1 UNION ALL SELECT n + 1 FROM i WHERE n < 1000000)
            SELECT n, ST_Point(-92 + (n % 13) * 0.01, 40 + (n % 11) * 0.01) FROM i');"
    );
    let (took, stderr) = interrupt_after(&sql, Duration::from_millis(2000));
    eprintln!("sweep stopped {took:?} after SIGINT");
    assert!(stderr.contains("interrupt"), "{stderr}");
    assert!(took < Duration::from_secs(1), "took {took:?} to stop");
}

#[test]
fn ctrl_c_stops_a_distance_from_near_the_antipode_of_a_big_polygon() {
    // A 200,000-vertex ring (invented, about 340 km across) and a point
    // near its antipode: the bounds prune little there and nearly every
    // edge gets Karney's inverse, about 20 s of work on this machine.
    // Before 2026-12-02 ambit_distance never looked at the interrupt.
    let sql = format!("{BIG_RING}SELECT ambit_distance(geom, ST_Point(80, -40)) FROM big;");
    let (took, stderr) = interrupt_after(&sql, Duration::from_millis(3000));
    eprintln!("ambit_distance stopped {took:?} after SIGINT");
    assert!(stderr.contains("interrupt"), "{stderr}");
    assert!(took < Duration::from_secs(1), "took {took:?} to stop");
}

#[test]
fn ctrl_c_stops_a_sweep_inside_a_costly_row() {
    // Each row here is a 2-degree square (edges of about 200 km) near the
    // antipode of a 200,000-vertex ring: its nearest distance alone takes
    // minutes (253 s measured on 2026-12-02; a point there takes 0.1 s
    // since the best-first search), so checking between rows is not
    // enough; the nearest search reads the stop flag too.
    let sql = format!("{BIG_RING}SELECT ambit_layer('forest', geom, '0.5 mi', 1) FROM big;
SELECT count(*), sum(nearest_m) FROM ambit_sweep('forest',
  'SELECT n, ST_GeomFromText(''POLYGON ((79 -41, 81 -41, 81 -39, 79 -39, 79 -41))'') FROM (SELECT 1 AS n UNION ALL SELECT 2 UNION ALL SELECT 3 UNION ALL SELECT 4)');");
    let (took, stderr) = interrupt_after(&sql, Duration::from_millis(3000));
    eprintln!("sweep of costly rows stopped {took:?} after SIGINT");
    assert!(stderr.contains("interrupt"), "{stderr}");
    assert!(took < Duration::from_secs(1), "took {took:?} to stop");
}
