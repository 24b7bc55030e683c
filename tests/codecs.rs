//! The codecs against an independent reader and against hostile input.
//!
//! - The `wkb` crate (georust, crates.io), a WKB reader written apart from
//!   ambit, reads every blob ambit writes to the same coordinates.
//! - Blobs ambit writes read back and re-encode byte-identical; WKT and
//!   GeoJSON text round-trips through blobs.
//! - Truncated, bit-flipped and random blobs and texts give errors, never a
//!   panic, and never allocate beyond what the input could hold.
//! - In the stock sqlite3 shell under a memory limit (bash's `ulimit -v`),
//!   forged counts and geometries too large for memory are SQL errors and
//!   the shell goes on; text holding a NUL byte is refused by name.

mod common;

use ambit::blob::{self, geojson, gpkg, wkb as ambit_wkb, wkt};
use ambit::geometry::{Dimensions, Geometry, Shape};
use ambit::interrupt::Never;
use ambit::testing::{random_geometry, XorShift};
use geo_traits::{
    CoordTrait, GeometryCollectionTrait, GeometryTrait, GeometryType, LineStringTrait,
    MultiLineStringTrait, MultiPointTrait, MultiPolygonTrait, PointTrait, PolygonTrait,
};

const ALL_DIMS: [Dimensions; 4] = [
    Dimensions::Xy,
    Dimensions::Xyz,
    Dimensions::Xym,
    Dimensions::Xyzm,
];

fn coord(rng: &mut XorShift) -> f64 {
    (rng.uniform(-180.0, 180.0) * 1e6).round() / 1e6
}

/// Flattens what the independent reader sees into ambit's model.
fn flatten_coords<C: CoordTrait<T = f64>>(c: C, out: &mut Vec<f64>) {
    for i in 0..c.dim().size() {
        out.push(c.nth_or_panic(i));
    }
}

fn line_values<L: LineStringTrait<T = f64>>(l: &L) -> Vec<f64> {
    let mut v = Vec::new();
    for c in l.coords() {
        flatten_coords(c, &mut v);
    }
    v
}

fn point_values<P: PointTrait<T = f64>>(p: &P) -> Vec<f64> {
    let mut v = Vec::new();
    if let Some(c) = p.coord() {
        flatten_coords(c, &mut v);
    }
    // The independent reader returns POINT EMPTY's NaN ordinates as a coord.
    if v.iter().all(|x| x.is_nan()) {
        v.clear();
    }
    v
}

fn polygon_rings<P: PolygonTrait<T = f64>>(p: &P) -> Vec<Vec<f64>> {
    let mut rings = Vec::new();
    if let Some(e) = p.exterior() {
        rings.push(line_values(&e));
    }
    for i in p.interiors() {
        rings.push(line_values(&i));
    }
    rings
}

fn dims_of<G: GeometryTrait<T = f64>>(g: &G) -> Dimensions {
    match g.dim() {
        geo_traits::Dimensions::Xy => Dimensions::Xy,
        geo_traits::Dimensions::Xyz => Dimensions::Xyz,
        geo_traits::Dimensions::Xym => Dimensions::Xym,
        geo_traits::Dimensions::Xyzm => Dimensions::Xyzm,
        geo_traits::Dimensions::Unknown(n) => panic!("unknown dimension {n}"),
    }
}

fn to_model<G: GeometryTrait<T = f64>>(g: &G) -> Geometry {
    let dims = dims_of(g);
    let shape = match g.as_type() {
        GeometryType::Point(p) => Shape::Point(point_values(p)),
        GeometryType::LineString(l) => Shape::LineString(line_values(l)),
        GeometryType::Polygon(p) => Shape::Polygon(polygon_rings(p)),
        GeometryType::MultiPoint(m) => {
            Shape::MultiPoint(m.points().map(|p| point_values(&p)).collect())
        }
        GeometryType::MultiLineString(m) => {
            Shape::MultiLineString(m.line_strings().map(|l| line_values(&l)).collect())
        }
        GeometryType::MultiPolygon(m) => {
            Shape::MultiPolygon(m.polygons().map(|p| polygon_rings(&p)).collect())
        }
        GeometryType::GeometryCollection(c) => {
            Shape::GeometryCollection(c.geometries().map(|m| to_model(&m)).collect())
        }
        _ => panic!("unexpected type from the independent reader"),
    };
    Geometry::new(dims, shape)
}

#[test]
fn an_independent_reader_sees_what_ambit_writes() {
    let mut rng = XorShift(0x1234_5678_9abc_def1);
    for case in 0..3000 {
        let g = random_geometry(&mut rng, ALL_DIMS[case % 4], 2, &mut coord);
        let bytes = ambit_wkb::write(&g);
        let theirs = wkb::reader::read_wkb(&bytes).expect("independent reader accepts it");
        let model = to_model(&theirs);
        assert_eq!(
            ambit_wkb::write(&model),
            bytes,
            "case {case}: {}",
            wkt::write(&g)
        );
    }
}

#[test]
fn blobs_read_back_and_re_encode_byte_identical() {
    let mut rng = XorShift(0xfeed_f00d);
    for case in 0..3000 {
        let g = random_geometry(&mut rng, ALL_DIMS[case % 4], 2, &mut coord);
        let blob = gpkg::write(&g, 4326);
        let decoded = blob::decode(&blob).unwrap();
        assert_eq!(decoded.geometry, g, "case {case}");
        assert_eq!(gpkg::write(&decoded.geometry, decoded.srs_id), blob);
        let wkb = ambit_wkb::write(&g);
        assert_eq!(ambit_wkb::write(&blob::decode(&wkb).unwrap().geometry), wkb);
    }
}

#[test]
fn text_round_trips_through_blobs() {
    let mut rng = XorShift(0xabad_1dea);
    for case in 0..2000 {
        let g = random_geometry(&mut rng, ALL_DIMS[case % 2], 2, &mut coord);
        // WKT -> blob -> WKT
        let text = wkt::write(&g);
        let blob = gpkg::write(&wkt::parse(&text).unwrap(), 4326);
        assert_eq!(wkt::write(&blob::decode(&blob).unwrap().geometry), text);
        // GeoJSON -> blob -> GeoJSON (coordinates have 6 decimals, so 9
        // decimals lose nothing).
        let json = geojson::write(&g, geojson::DEFAULT_DECIMALS);
        let parsed = geojson::parse(&json).unwrap().unwrap();
        let blob = gpkg::write(&parsed, 4326);
        let again = geojson::write(&blob::decode(&blob).unwrap().geometry, 9);
        assert_eq!(again, json, "case {case}");
    }
}

/// Every prefix, and many single-byte changes, of valid blobs decode to an
/// error or a geometry; nothing panics.
#[test]
fn hostile_blobs_never_panic() {
    let mut rng = XorShift(0xdead_beef);
    let mut errors = 0usize;
    for case in 0..400 {
        let g = random_geometry(&mut rng, ALL_DIMS[case % 4], 3, &mut coord);
        for blob in [gpkg::write(&g, 4326), ambit_wkb::write(&g)] {
            for cut in 0..blob.len() {
                if blob::decode(&blob[..cut]).is_err() {
                    errors += 1;
                }
                let _ = blob::decode_valid(&blob[..cut], &Never);
                let _ = blob::summary(&blob[..cut]);
            }
            for _ in 0..64 {
                let mut bad = blob.clone();
                let i = rng.below(bad.len() as u64) as usize;
                bad[i] = rng.next_u64() as u8;
                let _ = blob::decode_valid(&bad, &Never);
            }
        }
    }
    // Truncation always breaks a blob.
    assert!(errors > 10_000, "{errors}");
    // Pure noise.
    for len in 0..2000 {
        let noise: Vec<u8> = (0..len).map(|_| rng.next_u64() as u8).collect();
        let _ = blob::decode_valid(&noise, &Never);
        let mut gp = b"GP\0\x01".to_vec();
        gp.extend_from_slice(&noise);
        let _ = blob::decode_valid(&gp, &Never);
    }
}

#[test]
fn hostile_text_never_panics() {
    let mut rng = XorShift(0x0bad_cafe);
    let alphabet = b"POINTLESMUYGCR ZE(),.-+e0123456789{}[]\":typecordinas";
    for _ in 0..20_000 {
        let len = rng.below(60) as usize;
        let text: String = (0..len)
            .map(|_| alphabet[rng.below(alphabet.len() as u64) as usize] as char)
            .collect();
        let _ = wkt::parse(&text);
        let _ = geojson::parse(&text);
    }
    for case in 0..300 {
        let g = random_geometry(&mut rng, ALL_DIMS[case % 4], 2, &mut coord);
        let text = wkt::write(&g);
        let json = geojson::write(&g, 6);
        for cut in 0..text.len() {
            let _ = wkt::parse(&text[..cut]);
        }
        for cut in 0..json.len() {
            let _ = geojson::parse(&json[..cut]);
        }
    }
}

/// Runs `sql` in the sqlite3 shell with ambit loaded, under a limit of
/// `kib` KiB of address space (bash's `ulimit -v`), as an analyst's shell
/// on a shared server may run.
fn shell_under_limit(kib: u64, sql: &str) -> common::ShellRun {
    use std::io::Write;
    use std::process::{Command, Stdio};
    let mut child = Command::new("bash")
        .arg("-c")
        .arg(format!(
            "ulimit -v {kib} && exec {} :memory:",
            common::SHELL
        ))
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("bash runs");
    let script = format!(
        ".load {}\n{sql}\n",
        common::library().with_extension("").display()
    );
    child
        .stdin
        .take()
        .expect("stdin")
        .write_all(script.as_bytes())
        .expect("write to the shell");
    let out = child.wait_with_output().expect("shell output");
    common::ShellRun {
        status: out.status.code().unwrap_or(-1),
        stdout: String::from_utf8_lossy(&out.stdout).into_owned(),
        stderr: String::from_utf8_lossy(&out.stderr).into_owned(),
    }
}

const TOO_LARGE: &str = "geometry too large for available memory: could not allocate";
const ADVICE: &str = "split it into smaller geometries or raise the memory limit of the process";

#[test]
fn oversized_geometries_are_sql_errors_under_a_memory_limit() {
    // Regression, issue 13 (2026-12-02): under `ulimit -v 1000000` the
    // shell aborted ("memory allocation of 1200000000 bytes failed") on a
    // 150 MB collection whose header announces 30 M members. Each case
    // below must be an SQL error, and the shell must go on to the last
    // line. Sizes: 40 M rings reserve 40 M x 24 bytes (a Vec<f64> each) =
    // 960 MB, which with the blob itself exceeds 1 GB; 30 M empty
    // positions are 90 MB of text whose JSON tree alone is over 1 GB.
    let run = shell_under_limit(
        1_000_000,
        "SELECT length(ST_GeomFromWKB(CAST(X'0107000000' || X'80C3C901' || zeroblob(150000000) AS BLOB)));
SELECT length(ST_GeomFromWKB(CAST(X'0103000000' || X'005A6202' || zeroblob(160000000) AS BLOB)));
SELECT length(ambit_from_geojson('{\"type\":\"MultiPoint\",\"coordinates\":[' || replace(hex(zeroblob(30000000)), '00', '[],') || '[]]}'));
SELECT length(ST_GeomFromText('MULTIPOINT (' || replace(hex(zeroblob(30000000)), '00', 'EMPTY,') || 'EMPTY)'));
SELECT 'still here', ST_AsText(ST_Point(1, 2));",
    );
    assert_eq!(run.stdout, "still here|POINT (1 2)\n", "{}", run.stderr);
    assert_eq!(
        run.status, 1,
        "an error status, not an abort: {}",
        run.stderr
    );
    let lines: Vec<&str> = run.stderr.lines().collect();
    assert_eq!(lines.len(), 4, "{}", run.stderr);
    // 30 000 000 = 0x01C9C380; 30 M members need 9 bytes each (270 MB).
    assert_eq!(
        lines[0],
        "Runtime error near line 2: ST_GeomFromWKB: argument 1 (wkb): corrupt WKB: 30000000 geometries announced at byte 5 cannot fit in the blob"
    );
    // 40 000 000 = 0x02625A00 rings of 24 bytes.
    assert_eq!(
        lines[1],
        format!("Runtime error near line 3: ST_GeomFromWKB: argument 1 (wkb): {TOO_LARGE} 960000000 bytes for a polygon's rings; {ADVICE}")
    );
    let geojson = format!(
        "Runtime error near line 4: ambit_from_geojson: argument 1 (geojson): {TOO_LARGE} "
    );
    assert!(lines[2].starts_with(&geojson), "{}", lines[2]);
    assert!(lines[2].ends_with(&format!("bytes for the parsed GeoJSON; {ADVICE}")));
    let wkt = format!("Runtime error near line 5: ST_GeomFromText: argument 1 (wkt): {TOO_LARGE} ");
    assert!(lines[3].starts_with(&wkt), "{}", lines[3]);
    assert!(lines[3].ends_with(&format!("bytes for the parsed WKT; {ADVICE}")));
}

#[test]
fn oversized_results_are_sql_errors_under_a_memory_limit() {
    // Issue 13 (2026-12-02), the writers: a valid line of 5 M points, each
    // ordinate the bytes "00000000" (0x30 x 8 = 1.39e-76 as a little-endian
    // double, by the IEEE 754 binary64 layout), is an 80 MB blob whose WKT
    // writes each ordinate without an exponent in about 95 characters
    // (about 1 GB of text): over the limit, an SQL error. Its GeoJSON
    // rounds every ordinate to 0 at 9 decimals ("[0,0]," per point, 30 MB)
    // and fits. 5 000 000 = 0x004C4B40.
    let line = "CAST(X'0102000000' || X'404B4C00' || replace(hex(zeroblob(5000000)), '00', '0000000000000000') AS BLOB)";
    let run = shell_under_limit(
        1_000_000,
        &format!(
            "SELECT length(ST_AsText({line}));
SELECT length(ambit_to_geojson({line}));
SELECT 'still here';"
        ),
    );
    assert_eq!(run.stdout, "30000037\nstill here\n", "{}", run.stderr);
    let wkt = format!("Runtime error near line 2: ST_AsText: argument 1 (geom): {TOO_LARGE} ");
    assert!(run.stderr.starts_with(&wkt), "{}", run.stderr);
    assert!(run
        .stderr
        .ends_with(&format!("bytes for its WKT text; {ADVICE}\n")));
    // 30 000 037 = the 38 bytes of {"type":"LineString","coordinates":[]}
    // plus 6 per point, less the last comma: brute-force count below.
    assert_eq!(
        r#"{"type":"LineString","coordinates":[]}"#.len() + 6 * 5_000_000 - 1,
        30_000_037
    );
}

#[test]
fn text_with_a_nul_byte_is_refused_by_name() {
    // Regression, issue 13 (2026-12-02): these gave a bare "SQL logic
    // error", because the message quoted the NUL and SQLite cannot take a
    // message holding one.
    let run = common::shell(
        "SELECT ST_GeomFromText('POINT (1 2)' || char(0) || 'x');
SELECT ambit_from_geojson('{\"type\":\"Point\",\"coordinates\":[1,2]}' || char(0));
SELECT ST_GeomFromText(char(0));
SELECT ST_X(ST_GeomFromWKB('ab' || char(0) || 'c'));
SELECT 'still here';",
    );
    assert_eq!(run.stdout, "still here\n");
    assert_eq!(
        run.stderr.lines().collect::<Vec<_>>(),
        [
            "Runtime error near line 2: ST_GeomFromText: argument 1 (wkt): contains a NUL byte at offset 11; remove it (text ends there in most programs)",
            "Runtime error near line 3: ambit_from_geojson: argument 1 (geojson): contains a NUL byte at offset 36; remove it (text ends there in most programs)",
            "Runtime error near line 4: ST_GeomFromText: argument 1 (wkt): contains a NUL byte at offset 0; remove it (text ends there in most programs)",
            "Runtime error near line 5: ST_GeomFromWKB: argument 1 (wkb): must be a geometry blob, got text 'ab\\0c'; build one with ST_GeomFromText or ambit_from_geojson",
        ]
    );
}
