//! Interrupts in the stock shell: Ctrl-C (SIGINT, which makes the shell
//! call sqlite3_interrupt) stops each long ambit computation promptly, not
//! at the end of its current chunk of work. ambit promises 0.2 s; the
//! asserts allow 1 s so a loaded two-core machine does not fail them, and
//! each test prints the latency it measured (`cargo test --release --test
//! host_interrupts -- --nocapture --test-threads=1`).
//!
//! Every test sends SIGINT a set time after a marker appears on the
//! shell's stderr (printed just before the long statement starts, or the
//! layer build's progress line), so the signal lands in the computation
//! measured, whatever the time the setup took; and every test checks
//! that the error is ambit's own ("<function>: interrupted"), which it
//! reports only when it stopped part way through, long before the end
//! (each computation below runs for seconds to minutes uninterrupted).
//! Shapes are invented.

mod common;

use std::io::{Read, Write};
use std::process::{Command, Stdio};
use std::sync::mpsc;
use std::time::{Duration, Instant};

/// The generous limit of the asserts (ambit promises 0.2 s).
const LIMIT: Duration = Duration::from_secs(1);

/// A statement that fails at once with a message naming 'started': the
/// marker printed on stderr just before the statement measured.
const MARKER_SQL: &str = "SELECT ambit_km('started');";
const MARKER: &str = "'started'";

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

/// A table `big` holding one ring of `n` vertices (invented, about 340 km
/// across, around (-100, 40)).
fn big_ring(n: usize) -> String {
    format!(
        "CREATE TABLE ring AS WITH RECURSIVE i(n) AS (SELECT 0 UNION ALL SELECT n + 1 FROM i WHERE n < {last})
  SELECT n, -100 + 2 * cos(n * 2 * 3.141592653589793 / {n}) * (1 + 0.001 * (n % 2)) AS x,
         40 + 1.5 * sin(n * 2 * 3.141592653589793 / {n}) AS y FROM i;
CREATE TABLE big AS SELECT ST_GeomFromText('POLYGON ((' || group_concat(x || ' ' || y, ', ') || ', '
  || (SELECT x || ' ' || y FROM ring WHERE n = 0) || '))') AS geom FROM (SELECT x, y FROM ring ORDER BY n);
DROP TABLE ring;
",
        last = n - 1
    )
}

/// Runs `sql` in the shell (with `env` set), sends SIGINT `delay` after
/// `marker` first appears on its stderr, and returns how long the shell
/// took to finish after the signal, with its stderr.
fn interrupt_after_marker(
    sql: &str,
    env: &[(&str, &str)],
    marker: &str,
    delay: Duration,
) -> (Duration, String) {
    let script = format!(
        ".load {}\n{sql}\n",
        common::library().with_extension("").display()
    );
    let mut child = Command::new(common::SHELL)
        .arg(":memory:")
        .env("AMBIT_PROGRESS", "0")
        .envs(env.iter().copied())
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let mut stdin = child.stdin.take().unwrap();
    stdin.write_all(script.as_bytes()).unwrap();
    drop(stdin);
    // stderr is read as it comes (progress lines end in a carriage
    // return, not a newline); the text seen so far goes to this thread.
    let mut stderr = child.stderr.take().unwrap();
    let (sender, receiver) = mpsc::channel::<String>();
    let reader = std::thread::spawn(move || {
        let mut all = Vec::new();
        let mut buf = [0u8; 4096];
        while let Ok(n) = stderr.read(&mut buf) {
            if n == 0 {
                break;
            }
            all.extend_from_slice(&buf[..n]);
            let _ = sender.send(String::from_utf8_lossy(&all).into_owned());
        }
        String::from_utf8_lossy(&all).into_owned()
    });
    let deadline = Instant::now() + Duration::from_secs(600);
    loop {
        let seen = receiver
            .recv_timeout(deadline.saturating_duration_since(Instant::now()))
            .unwrap_or_else(|_| panic!("{marker} never appeared on stderr"));
        if seen.contains(marker) {
            break;
        }
    }
    std::thread::sleep(delay);
    let signalled = Instant::now();
    let status = Command::new("kill")
        .args(["-INT", &child.id().to_string()])
        .status()
        .unwrap();
    assert!(status.success());
    child.wait().unwrap();
    let took = signalled.elapsed();
    let mut out = String::new();
    child
        .stdout
        .take()
        .unwrap()
        .read_to_string(&mut out)
        .unwrap();
    (took, reader.join().unwrap())
}

/// Runs `sql` (setup, marker, long statement) and checks that `function`
/// reported its own interrupt within [`LIMIT`]; prints the latency.
fn check_stops(what: &str, sql: &str, function: &str, delay: Duration) {
    let (took, stderr) = interrupt_after_marker(sql, &[], MARKER, delay);
    eprintln!("{what}: stopped {took:?} after SIGINT");
    assert!(
        stderr.contains(&format!("{function}: interrupted")),
        "{what}: {stderr}"
    );
    assert!(took < LIMIT, "{what}: took {took:?} to stop");
}

#[test]
fn ctrl_c_stops_a_sweep_between_rows_not_chunks() {
    // 1,000,000 rows about 680 km east of the polygon, nearest distance
    // asked: about a millisecond a row, so a chunk of 8192 rows (set here:
    // the default is smaller) is seconds of work. Before 2026-12-02 the
    // sweep looked at the interrupt only between chunks.
    let sql = format!(
        "{FOREST}{MARKER_SQL}
SELECT count(*), sum(nearest_m) FROM ambit_sweep('forest',
           'WITH RECURSIVE i(n) AS (SELECT 1 UNION ALL SELECT n + 1 FROM i WHERE n < 1000000)
            SELECT n, ST_Point(-92 + (n % 13) * 0.01, 40 + (n % 11) * 0.01) FROM i');"
    );
    let (took, stderr) = interrupt_after_marker(
        &sql,
        &[("AMBIT_CHUNK_ROWS", "8192")],
        MARKER,
        Duration::from_millis(1500),
    );
    eprintln!("sweep stopped {took:?} after SIGINT");
    // The sweep's error is SQLite's "interrupted", from the virtual table.
    assert!(stderr.contains("interrupted"), "{stderr}");
    assert!(took < LIMIT, "took {took:?} to stop");
}

#[test]
fn ctrl_c_stops_a_distance_from_near_the_antipode_of_a_big_polygon() {
    // A 200,000-vertex ring and a point near its antipode: the bounds
    // prune little there and nearly every edge gets Karney's inverse,
    // about 20 s of work on this machine. Before 2026-12-02
    // ambit_distance never looked at the interrupt.
    let sql = format!(
        "{}{MARKER_SQL}\nSELECT ambit_distance(geom, ST_Point(80, -40)) FROM big;",
        big_ring(200_000)
    );
    check_stops(
        "ambit_distance near the antipode",
        &sql,
        "ambit_distance",
        Duration::from_millis(1000),
    );
}

#[test]
fn ctrl_c_stops_the_checks_of_a_huge_polygon() {
    // The polygon checks of a 2,000,000-vertex ring (about a second, then
    // seconds more of Karney's area): SIGINT 0.2 s into the call lands in
    // the checks, which before 2026-12-02 never looked at the interrupt.
    let sql = format!(
        "{}{MARKER_SQL}\nSELECT ambit_area(geom) FROM big;",
        big_ring(2_000_000)
    );
    check_stops(
        "decode and check of 2,000,000 vertices (ambit_area)",
        &sql,
        "ambit_area",
        Duration::from_millis(200),
    );
}

#[test]
fn ctrl_c_stops_ambit_near_while_it_prepares_a_huge_query() {
    // ambit_near with a 2,000,000-vertex query: checking and preparing it
    // take seconds; before 2026-12-02 the preparation ignored the
    // interrupt.
    let sql = format!(
        "{}SELECT ambit_layer('spot', ST_Point(-100, 40), 10);\n{MARKER_SQL}
SELECT count(*) FROM big, ambit_near('spot', big.geom);",
        big_ring(2_000_000)
    );
    check_stops(
        "ambit_near preparing 2,000,000 vertices",
        &sql,
        "ambit_near",
        Duration::from_millis(600),
    );
}

#[test]
fn ctrl_c_stops_a_nearest_search_at_the_antipode_of_a_big_polygon() {
    // A 2-degree square (edges of about 200 km) at the antipode of a
    // 200,000-vertex ring: minutes of work (253 s measured on
    // 2026-12-02).
    let sql = format!(
        "{}SELECT ambit_layer('ring', geom, 0) FROM big;\n{MARKER_SQL}
SELECT ambit_nearest('ring', ST_GeomFromText('POLYGON ((79 -41, 81 -41, 81 -39, 79 -39, 79 -41))'));",
        big_ring(200_000)
    );
    check_stops(
        "ambit_nearest at the antipode",
        &sql,
        "ambit_nearest",
        Duration::from_millis(1000),
    );
}

#[test]
fn ctrl_c_stops_a_sweep_inside_a_costly_row() {
    // Each row here is a 2-degree square near the antipode of a
    // 200,000-vertex ring: its nearest distance alone takes minutes, so
    // checking between rows is not enough; the nearest search reads the
    // stop flag too.
    let sql = format!("{}SELECT ambit_layer('forest', geom, '0.5 mi', 1) FROM big;\n{MARKER_SQL}
SELECT count(*), sum(nearest_m) FROM ambit_sweep('forest',
  'SELECT n, ST_GeomFromText(''POLYGON ((79 -41, 81 -41, 81 -39, 79 -39, 79 -41))'') FROM (SELECT 1 AS n UNION ALL SELECT 2 UNION ALL SELECT 3 UNION ALL SELECT 4)');",
        big_ring(200_000));
    let (took, stderr) = interrupt_after_marker(&sql, &[], MARKER, Duration::from_millis(1000));
    eprintln!("sweep of costly rows stopped {took:?} after SIGINT");
    assert!(stderr.contains("interrupted"), "{stderr}");
    assert!(took < LIMIT, "took {took:?} to stop");
}

#[test]
fn a_layer_build_shows_progress_and_ctrl_c_stops_it() {
    // 400,000 small squares prepared on one thread (about half a second
    // on a quiet machine): the build prints its progress line
    // (AMBIT_PROGRESS=1) and SIGINT, sent when the first one appears, stops
    // it part way.
    let sql = "CREATE TABLE grid AS
  WITH RECURSIVE i(n) AS (SELECT 1 UNION ALL SELECT n + 1 FROM i WHERE n < 400000)
  SELECT n AS id, ST_GeomFromText(printf('POLYGON ((%f %f, %f %f, %f %f, %f %f, %f %f))',
    -131.3 + (n % 997) * 0.0005, 38.2 + (n / 997) * 0.0004,
    -131.3 + (n % 997) * 0.0005 + 0.0003, 38.2 + (n / 997) * 0.0004,
    -131.3 + (n % 997) * 0.0005 + 0.0003, 38.2 + (n / 997) * 0.0004 + 0.0003,
    -131.3 + (n % 997) * 0.0005, 38.2 + (n / 997) * 0.0004 + 0.0003,
    -131.3 + (n % 997) * 0.0005, 38.2 + (n / 997) * 0.0004)) AS geom FROM i;
SELECT ambit_layer('grid', geom, 100, id) FROM grid;
SELECT count(*) FROM ambit_layers WHERE name = 'grid';";
    let (took, stderr) = interrupt_after_marker(
        sql,
        &[("AMBIT_PROGRESS", "1"), ("RAYON_NUM_THREADS", "1")],
        "ambit_layer 'grid': ",
        Duration::ZERO,
    );
    eprintln!("layer build stopped {took:?} after SIGINT");
    assert!(stderr.contains("features"), "{stderr}");
    // ambit reports "interrupted" only when it stopped before storing the
    // layer: in the preparation or, on a fast machine where the features
    // were all prepared before the signal, in the indexing after it.
    assert!(stderr.contains("ambit_layer: interrupted"), "{stderr}");
    assert!(took < LIMIT, "took {took:?} to stop");
}
