//! Decode cost of a 40-vertex polygon blob, GeoPackage and WKB, beside the
//! cost of a bare SQLite scan of the same column.
//!
//! Run: `cargo bench --bench decode` (optional argument: the number of
//! polygons, default 200000). It prints, from one run:
//! - in process: nanoseconds per blob for `blob::decode` (structure only) and
//!   `blob::decode_valid` (plus the coordinate and ring checks);
//! - in the stock sqlite3 shell with the release library: the time of a bare
//!   scan that loads every blob (`SELECT max(geom) FROM t`), the time of the
//!   same scan through a function that decodes each blob
//!   (`SELECT sum(ST_IsEmpty(geom)) FROM t`), and their ratio. The target
//!   is: decoding adds less than the scan itself (overhead / scan < 1).

use std::io::Write;
use std::path::Path;
use std::process::{Command, Stdio};
use std::time::Instant;

use ambit::blob::{self, gpkg, wkb};
use ambit::geometry::{Dimensions, Geometry, Shape};
use ambit::interrupt::Never;

const VERTICES: usize = 40;

/// A small fixed-seed generator (xorshift64*), so every run measures the
/// same polygons.
struct Rng(u64);
impl Rng {
    fn next(&mut self) -> f64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        (self.0.wrapping_mul(0x2545_f491_4f6c_dd1d) >> 11) as f64 / (1u64 << 53) as f64
    }
}

/// A star-shaped block-sized polygon of `VERTICES` vertices (the last
/// closing the ring) around a random centre.
fn polygon(rng: &mut Rng) -> Geometry {
    let (cx, cy) = (-100.0 + rng.next() * 4.0, 38.0 + rng.next() * 3.0);
    let mut ring = Vec::with_capacity(VERTICES * 2);
    for i in 0..VERTICES - 1 {
        let angle = i as f64 / (VERTICES - 1) as f64 * std::f64::consts::TAU;
        let r = 0.002 * (0.6 + 0.4 * rng.next());
        ring.extend_from_slice(&[cx + r * angle.cos(), cy + r * angle.sin()]);
    }
    ring.extend_from_slice(&[ring[0], ring[1]]);
    Geometry::new(Dimensions::Xy, Shape::Polygon(vec![ring]))
}

fn ns_per_blob(blobs: &[Vec<u8>], f: impl Fn(&[u8]) -> usize) -> f64 {
    let mut best = f64::INFINITY;
    for _ in 0..3 {
        let start = Instant::now();
        let mut sink = 0usize;
        for b in blobs {
            sink = sink.wrapping_add(f(b));
        }
        std::hint::black_box(sink);
        best = best.min(start.elapsed().as_secs_f64());
    }
    best * 1e9 / blobs.len() as f64
}

/// Runs SQL in the stock shell with ambit loaded and returns what it printed.
fn shell(db: &Path, library: &Path, sql: &str) -> String {
    let mut child = Command::new("/usr/bin/sqlite3")
        .arg(db)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("the bench needs /usr/bin/sqlite3 (tests/prepare-host installs it)");
    let script = format!(".load {}\n{sql}\n", library.with_extension("").display());
    child
        .stdin
        .take()
        .unwrap()
        .write_all(script.as_bytes())
        .unwrap();
    let out = child.wait_with_output().unwrap();
    assert!(
        out.status.success(),
        "shell failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8_lossy(&out.stdout).into_owned()
}

/// The "real" seconds of each statement timed by `.timer on` in `output`.
fn times(output: &str) -> Vec<f64> {
    output
        .lines()
        .filter_map(|l| l.strip_prefix("Run Time: real "))
        .map(|l| l.split_whitespace().next().unwrap().parse().unwrap())
        .collect()
}

fn main() {
    let n: usize = std::env::args()
        .skip(1)
        .find_map(|a| a.parse().ok())
        .unwrap_or(200_000);
    let mut rng = Rng(0x5eed_ab17);
    let polygons: Vec<Geometry> = (0..n).map(|_| polygon(&mut rng)).collect();
    let gp: Vec<Vec<u8>> = polygons.iter().map(|g| gpkg::write(g, 4326)).collect();
    let wk: Vec<Vec<u8>> = polygons.iter().map(wkb::write).collect();
    println!(
        "{n} polygons of {VERTICES} vertices: GeoPackage blob {} bytes, WKB blob {} bytes",
        gp[0].len(),
        wk[0].len()
    );

    println!("\nin process (best of 3):");
    for (name, blobs) in [("GeoPackage", &gp), ("WKB", &wk)] {
        let plain = ns_per_blob(blobs, |b| blob::decode(b).unwrap().geometry.vertex_count());
        let valid = ns_per_blob(blobs, |b| {
            blob::decode_valid(b, &Never)
                .unwrap()
                .geometry
                .vertex_count()
        });
        println!("  {name:<10} decode {plain:7.1} ns/blob   decode + checks {valid:7.1} ns/blob");
    }

    // The release library, built by `cargo bench` beside this binary.
    let exe = std::env::current_exe().unwrap();
    let library = exe.parent().unwrap().join("libambit.so");
    assert!(library.exists(), "{} missing", library.display());
    let dir = std::env::temp_dir().join(format!("ambit-bench-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let db = dir.join("bench.sqlite");
    // Load the same polygons through the shell: WKT text (exact, shortest
    // round-trip numbers) imported as CSV, then stored as blobs by ambit.
    let csv = dir.join("polygons.csv");
    let text: String = polygons
        .iter()
        .map(|g| format!("\"{}\"\n", ambit::blob::wkt::write(g)))
        .collect();
    std::fs::write(&csv, text).unwrap();
    let loads = format!(
        "CREATE TABLE w(wkt TEXT);\n.import --csv {} w\n\
         CREATE TABLE gp(id INTEGER PRIMARY KEY, geom BLOB);\n\
         INSERT INTO gp(geom) SELECT ST_GeomFromText(wkt) FROM w;\n\
         CREATE TABLE wk(id INTEGER PRIMARY KEY, geom BLOB);\n\
         INSERT INTO wk(geom) SELECT ST_AsBinary(geom) FROM gp;\n\
         DROP TABLE w;\nVACUUM;\n",
        csv.display()
    );
    shell(&db, &library, &loads);

    let mut sql = String::from("SELECT sqlite_version();\n.timer on\n");
    for table in ["gp", "wk"] {
        for _ in 0..3 {
            sql.push_str(&format!(
                "SELECT length(max(geom)) FROM {table};\nSELECT sum(ST_IsEmpty(geom)) FROM {table};\n"
            ));
        }
    }
    let output = shell(&db, &library, &sql);
    let version = output.lines().next().unwrap_or("?");
    let times = times(&output);
    println!("\nin the sqlite3 shell (SQLite {version}), best of 3:");
    for (k, name) in ["GeoPackage", "WKB"].iter().enumerate() {
        let runs = &times[k * 6..k * 6 + 6];
        let scan = runs
            .iter()
            .step_by(2)
            .cloned()
            .fold(f64::INFINITY, f64::min);
        let decode = runs
            .iter()
            .skip(1)
            .step_by(2)
            .cloned()
            .fold(f64::INFINITY, f64::min);
        let overhead = decode - scan;
        println!(
            "  {name:<10} bare scan {:6.1} ns/row   scan + decode {:6.1} ns/row   decode adds {:6.1} ns/row = {:.2} x the scan (target < 1)",
            scan * 1e9 / n as f64,
            decode * 1e9 / n as f64,
            overhead * 1e9 / n as f64,
            overhead / scan
        );
    }
    std::fs::remove_dir_all(&dir).ok();
}
