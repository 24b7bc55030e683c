//! The national-size job on a generated state-size region: ambit's sweep
//! against a bare scan, against per-row scalar calls, and end to end
//! against the Python pipeline a strong analyst would write
//! (benches/baseline/access_baseline.py: shapely 2 STRtree with dwithin in
//! a projected CRS), with peak memory of each.
//!
//! Run: `cargo bench --bench sweep` (default sizes 100000 and 400000
//! blocks; give others as arguments, e.g. `cargo bench --bench sweep --
//! 50000`). It needs /usr/bin/sqlite3, /usr/bin/time and the Python packages
//! of benches/baseline/requirements.txt (installed if missing).
//!
//! Inputs per size (all invented, demo-db/build-region): blocks of about 40
//! vertices tiling the land, about 1 park per 65 blocks (30 vertices
//! typical), and the two recreation-facility sources merged into
//! `bench_facilities` with a reach of 1 mile inside an urban area and 3
//! miles outside. One layer holds the parks (0.5 mile) and facilities.
//! Printed, from one run per size:
//! - the reached-only sweep (`SELECT count(*), sum(reached)`) on 1 and 2
//!   threads and a warm bare scan (`sum(length(geom))`), best of three
//!   each, side by side: sweep / scan (target <= 5) and 1 / 2 threads;
//!   and the same sweep with the whole shell pinned to one core (taskset
//!   -c 0) against both cores (target >= 1.8: with one worker thread the
//!   thread reading the query still runs beside it on the second core, so
//!   1 / 2 threads understates what the second core adds);
//! - sweep (2 threads) / bare scan of the same blob column
//!   (`SELECT sum(length(geom)) FROM blocks`, and a scan that loads every
//!   blob, `SELECT max(geom) FROM blocks`) in the same process; target <= 5
//!   against the scan of the issue;
//! - per-row scalar calls (ambit_reached and ambit_nearest) / sweep on 2
//!   threads: should approach the core count;
//! - Python end to end / ambit end to end (each a whole process: for ambit
//!   the shell loading the library, building the layer, the sweep reading
//!   every block (reached, and nearest_m within 10 km, which is what the
//!   Python pipeline computes), the county table; for Python reading, projecting,
//!   indexing, querying, writing); target >= 10;
//! - peak resident memory of each (target: ambit under 1 GB, flat as rows
//!   grow).

mod support;

use std::path::Path;
use std::process::Command;

use support::{build_region, root, shell, shell_on, sizes_from_args, timed, times};

const LAYER: &str = "
SELECT ambit_layer_drop('urban');
SELECT ambit_layer('urban', geom) FROM urban_areas;
DROP TABLE IF EXISTS bench_facilities;
CREATE TABLE bench_facilities AS
  SELECT row_number() OVER () AS fid,
         CASE WHEN ambit_reached('urban', geom) THEN ambit_miles(1) ELSE ambit_miles(3) END AS reach_m,
         geom
  FROM (SELECT geom FROM rec_sites UNION ALL SELECT geom FROM fitness_list);
";

const BUILD: &str = "
SELECT ambit_layer('access', geom, ambit_miles(0.5), fid) FROM parks;
SELECT ambit_layer('access', geom, reach_m, 1000000 + fid) FROM bench_facilities;
";

const COUNTY: &str = "
SELECT substr(b.geoid, 1, 5) AS county, count(*) AS blocks, sum(b.population) AS population,
       sum(CASE WHEN s.reached THEN b.population ELSE 0 END) AS reached_population
FROM blocks b JOIN sweep s ON s.id = b.fid GROUP BY county ORDER BY county;
";

fn ensure_python_packages() {
    let ok = Command::new("python3")
        .args(["-c", "import shapely, pyproj, numpy"])
        .status()
        .map(|s| s.success())
        .unwrap_or(false);
    if !ok {
        let req = root().join("benches/baseline/requirements.txt");
        let status = Command::new("python3")
            .args(["-m", "pip", "install", "-q", "-r"])
            .arg(req)
            .status()
            .unwrap();
        assert!(status.success(), "pip install failed");
    }
}

fn run(blocks: usize, dir: &Path) {
    let db = build_region(blocks, dir);
    shell(&db, &[], LAYER);
    let (counts, _, _) = shell(
        &db,
        &[],
        "SELECT (SELECT count(*) FROM blocks), (SELECT count(*) FROM parks), (SELECT count(*) FROM bench_facilities), \
         (SELECT sum(reach_m = ambit_miles(1)) FROM bench_facilities), \
         (SELECT round(avg(length(geom) - 49) / 16.0, 1) FROM blocks);",
    );
    println!("\n{blocks} blocks requested: blocks|parks|facilities|urban facilities|mean block vertices = {}", counts.trim());

    // The bare scans, in a process of their own.
    let (scans, _, _) = shell(
        &db,
        &[],
        ".timer on\nSELECT sum(length(geom)) FROM blocks;\nSELECT length(max(geom)) FROM blocks;",
    );
    let t = times(&scans);
    let (scan_len, scan_blob) = (t[0], t[1]);
    // ambit end to end in one process: layer, sweep (reading the blocks;
    // reached, and the nearest distance within 10 km as the Python pipeline
    // computes it), county table.
    let e2e = format!(
        ".timer on\n{BUILD}\
         CREATE TABLE sweep AS SELECT id, reached, nearest_m FROM ambit_sweep('access', 'SELECT fid, geom FROM blocks', '10 km');\n{COUNTY}"
    );
    let (out, ambit_rss, ambit_wall) = shell(&db, &[("RAYON_NUM_THREADS", "2")], &e2e);
    let t = times(&out);
    let (build, sweep2) = (t[0] + t[1], t[2]);
    // The same sweep on one thread, and the scalar functions row by row.
    let (out1, _, _) = shell(
        &db,
        &[("RAYON_NUM_THREADS", "1")],
        &format!("{BUILD}\n.timer on\nSELECT count(*), sum(reached), sum(nearest_m) FROM ambit_sweep('access', 'SELECT fid, geom FROM blocks');"),
    );
    let sweep1 = times(&out1)[0];
    let (outs, _, _) = shell(
        &db,
        &[],
        &format!("{BUILD}\n.timer on\nSELECT sum(ambit_reached('access', geom)), sum(ambit_nearest('access', geom)) FROM blocks;"),
    );
    let scalar = times(&outs)[0];
    // The reached-only sweep (the indicator's question), warm: the bare
    // scans and the sweep on 1 and 2 threads in one process each, best of
    // three runs.
    let reached_only = |threads: &str, cpus: Option<&str>| -> (f64, f64) {
        let (out, _, _) = shell_on(
            &db,
            &[("RAYON_NUM_THREADS", threads)],
            &format!(
                "{BUILD}\nSELECT sum(length(geom)) FROM blocks;\n.timer on\n\
                 SELECT sum(length(geom)) FROM blocks;\nSELECT sum(length(geom)) FROM blocks;\nSELECT sum(length(geom)) FROM blocks;\n\
                 SELECT count(*), sum(reached) FROM ambit_sweep('access', 'SELECT fid, geom FROM blocks');\n\
                 SELECT count(*), sum(reached) FROM ambit_sweep('access', 'SELECT fid, geom FROM blocks');\n\
                 SELECT count(*), sum(reached) FROM ambit_sweep('access', 'SELECT fid, geom FROM blocks');"
            ),
            cpus,
        );
        let t = times(&out);
        let best = |xs: &[f64]| xs.iter().copied().fold(f64::INFINITY, f64::min);
        (best(&t[0..3]), best(&t[3..6]))
    };
    let (warm_scan, reached1) = reached_only("1", None);
    let (_, reached2) = reached_only("2", None);
    // One core against two: the whole shell pinned to CPU 0 (the thread
    // reading the query and one worker share it), against both cores.
    let (_, one_core) = reached_only("1", Some("0"));
    let ambit_csv = dir.join(format!("ambit-{blocks}.csv"));
    shell(
        &db,
        &[],
        &format!(
            ".mode csv\n.headers on\n.once {}\nSELECT id AS fid, reached FROM sweep;",
            ambit_csv.display()
        ),
    );

    // The Python pipeline, reading included.
    let py_csv = dir.join(format!("python-{blocks}.csv"));
    let mut cmd = Command::new("/usr/bin/time");
    cmd.arg("-v")
        .arg("python3")
        .arg(root().join("benches/baseline/access_baseline.py"))
        .arg(&db)
        .args([
            "--facilities",
            "bench_facilities",
            "--reach-column",
            "reach_m",
            "--out",
        ])
        .arg(&py_csv)
        .arg("--compare")
        .arg(&ambit_csv);
    let (py_out, _, py_rss, py_wall) = timed(&mut cmd);
    let differ = py_out
        .lines()
        .find(|l| l.starts_with("compare"))
        .unwrap_or("compare: (no line)")
        .to_string();

    println!("  bare scan sum(length(geom)) {scan_len:.3} s; scan loading every blob max(geom) {scan_blob:.3} s");
    println!("  layer build {build:.3} s; sweep on 2 threads {sweep2:.3} s, on 1 thread {sweep1:.3} s; scalar calls per row {scalar:.3} s");
    println!(
        "  sweep / bare scan = {:.1} (sum(length)), {:.1} (max(geom))   [target <= 5]",
        sweep2 / scan_len.max(1e-3),
        sweep2 / scan_blob.max(1e-3)
    );
    println!(
        "  reached-only sweep: 1 thread {reached1:.3} s, 2 threads {reached2:.3} s; warm bare scan {warm_scan:.3} s: \
         sweep (2 threads) / warm scan = {:.1}   [target <= 5]; 1 thread / 2 threads = {:.2}   [target >= 1.8]",
        reached2 / warm_scan.max(1e-3),
        reached1 / reached2
    );
    println!(
        "  reached-only sweep on one core (taskset -c 0) {one_core:.3} s, on two cores {reached2:.3} s: one / two = {:.2}   [target >= 1.8]",
        one_core / reached2
    );
    println!(
        "  scalar per row / sweep on 2 threads = {:.2}; sweep 1 thread / 2 threads = {:.2}   [should approach 2 cores]",
        scalar / sweep2,
        sweep1 / sweep2
    );
    println!(
        "  end to end: ambit {ambit_wall:.2} s, Python {py_wall:.2} s: Python / ambit = {:.1}   [target >= 10]",
        py_wall / ambit_wall
    );
    println!(
        "  peak RSS: ambit {ambit_rss:.0} MiB, Python {py_rss:.0} MiB   [ambit target < 1024 MiB]"
    );
    println!("  reached flags, planar Python vs geodesic ambit: {differ}");
}

fn main() {
    let sizes = sizes_from_args(&[100_000, 400_000]);
    ensure_python_packages();
    let dir = std::env::temp_dir().join(format!("ambit-sweep-bench-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    println!("ambit sweep benchmark (invented region; RAYON_NUM_THREADS=2 unless noted)");
    for n in sizes {
        run(n, &dir);
    }
    std::fs::remove_dir_all(&dir).ok();
}
