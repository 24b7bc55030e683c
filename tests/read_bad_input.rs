//! ambit_read on bad input, in the real sqlite3 shell (Debian's 3.40.1):
//! every row that cannot be read is named with its file, row and reason,
//! as an error by default and as a kept row with `bad_rows: keep`; broken
//! files are errors naming the file; hostile files end in an error, never
//! a crash or a hang.
//!
//! The shapefiles are written here byte by byte after the ESRI Shapefile
//! Technical Description (July 1998): the 100-byte main file header (file
//! code 9994 and length in 16-bit words big endian at bytes 0 and 24,
//! version 1000 and shape type little endian at 28 and 32), record headers
//! (number and content length in words, big endian), Point contents (type
//! 1, X, Y little endian) and Null contents (type 0); the index file with
//! 8 bytes per record; and the dBASE III table (header, 32-byte field
//! descriptors ended by 0x0D, records with a deletion flag).

mod common;

use std::path::{Path, PathBuf};

use common::{shell_at, ShellRun};

/// A fresh folder for one test, under target/tmp (tests leave nothing in
/// /tmp).
fn folder(name: &str) -> PathBuf {
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR"))
        .join(format!("ambit-read-bad-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

fn run(dir: &Path, sql: &str) -> ShellRun {
    shell_at(Some(dir), &[":memory:"], &[], sql)
}

/// Main file header (ESRI 1998, table 1) for `words` 16-bit words in all.
fn header(words: i32, shape_type: i32) -> Vec<u8> {
    let mut h = vec![0u8; 100];
    h[0..4].copy_from_slice(&9994i32.to_be_bytes());
    h[24..28].copy_from_slice(&words.to_be_bytes());
    h[28..32].copy_from_slice(&1000i32.to_le_bytes());
    h[32..36].copy_from_slice(&shape_type.to_le_bytes());
    h
}

/// A point shapefile `stem`.shp/.shx/.dbf in `dir`: one record per entry
/// of `points` (None: a null shape), one character field NAME with
/// `names` (raw bytes, so legacy code pages can be written), language
/// driver id `ldid`.
fn point_shapefile(
    dir: &Path,
    stem: &str,
    points: &[Option<(f64, f64)>],
    names: &[&[u8]],
    ldid: u8,
) {
    let mut shp = Vec::new();
    let mut shx = Vec::new();
    let mut offset = 50i32;
    for (i, p) in points.iter().enumerate() {
        let mut content = Vec::new();
        match p {
            Some((x, y)) => {
                content.extend(1i32.to_le_bytes());
                content.extend(x.to_le_bytes());
                content.extend(y.to_le_bytes());
            }
            None => content.extend(0i32.to_le_bytes()),
        }
        let words = (content.len() / 2) as i32;
        shp.extend((i as i32 + 1).to_be_bytes());
        shp.extend(words.to_be_bytes());
        shp.extend(content);
        shx.extend(offset.to_be_bytes());
        shx.extend(words.to_be_bytes());
        offset += 4 + words;
    }
    let mut main = header(50 + (shp.len() / 2) as i32, 1);
    main.extend(shp);
    let mut index = header(50 + (shx.len() / 2) as i32, 1);
    index.extend(shx);
    std::fs::write(dir.join(format!("{stem}.shp")), main).unwrap();
    std::fs::write(dir.join(format!("{stem}.shx")), index).unwrap();
    // dBASE III: version 3, record count, header length 32 + 32 + 1,
    // record length 1 + 10; one field NAME, type C, length 10.
    let mut dbf = vec![0u8; 32];
    dbf[0] = 3;
    dbf[4..8].copy_from_slice(&(names.len() as u32).to_le_bytes());
    dbf[8..10].copy_from_slice(&65u16.to_le_bytes());
    dbf[10..12].copy_from_slice(&11u16.to_le_bytes());
    dbf[29] = ldid;
    let mut field = vec![0u8; 32];
    field[..4].copy_from_slice(b"NAME");
    field[11] = b'C';
    field[16] = 10;
    dbf.extend(field);
    dbf.push(0x0D);
    for n in names {
        dbf.push(b' ');
        let mut v = n.to_vec();
        v.resize(10, b' ');
        dbf.extend(v);
    }
    dbf.push(0x1A);
    std::fs::write(dir.join(format!("{stem}.dbf")), dbf).unwrap();
}

fn error_of(run: &ShellRun) -> String {
    assert_ne!(run.status, 0, "expected an error, got {}", run.stdout);
    run.stderr.trim().to_string()
}

#[test]
fn a_good_point_shapefile_reads_with_its_attributes() {
    let dir = folder("good");
    point_shapefile(
        &dir,
        "sites",
        &[Some((-120.5, 38.25)), Some((-120.0, 38.0))],
        &[b"01001", b"b"],
        0,
    );
    let out = run(&dir, "SELECT file, row, ST_AsText(geom), attributes, problem IS NULL FROM ambit_read('sites.shp');");
    // Expected values: the coordinates and text written above.
    assert_eq!(
        out.stdout.trim(),
        "sites.shp|1|POINT (-120.5 38.25)|{\"NAME\":\"01001\"}|1\nsites.shp|2|POINT (-120 38)|{\"NAME\":\"b\"}|1",
        "{}",
        out.stderr
    );
}

#[test]
fn a_null_shape_is_an_error_naming_the_row_or_a_kept_row_with_its_reason() {
    let dir = folder("null");
    point_shapefile(
        &dir,
        "sites",
        &[Some((-120.5, 38.25)), None],
        &[b"a", b"b"],
        0,
    );
    let e = error_of(&run(&dir, "SELECT count(*) FROM ambit_read('sites.shp');"));
    assert!(
        e.contains("ambit_read: sites.shp, row 2: null shape"),
        "{e}"
    );
    assert!(e.contains("\"bad_rows\": \"keep\""), "{e}");
    let out = run(&dir, "SELECT row, geom IS NULL, json_extract(attributes, '$.NAME'), problem FROM ambit_read('sites.shp', '{\"bad_rows\": \"keep\"}');");
    assert_eq!(
        out.stdout.trim(),
        "1|0|a|\n2|1|b|null shape (the record has no geometry)",
        "{}",
        out.stderr
    );
}

#[test]
fn missing_parts_and_unreadable_definitions_are_errors_naming_the_file() {
    let dir = folder("parts");
    point_shapefile(&dir, "a", &[Some((1.0, 2.0))], &[b"x"], 0);
    std::fs::remove_file(dir.join("a.dbf")).unwrap();
    let e = error_of(&run(&dir, "SELECT count(*) FROM ambit_read('a.shp');"));
    assert!(
        e.contains("a.shp: the shapefile has no .dbf file beside it"),
        "{e}"
    );
    point_shapefile(&dir, "b", &[Some((1.0, 2.0))], &[b"x"], 0);
    std::fs::remove_file(dir.join("b.shx")).unwrap();
    let e = error_of(&run(&dir, "SELECT count(*) FROM ambit_read('b.shp');"));
    assert!(e.contains("b.shp: the shapefile has no .shx file"), "{e}");
    point_shapefile(&dir, "c", &[Some((1.0, 2.0))], &[b"x"], 0);
    std::fs::write(dir.join("c.prj"), "not a definition at all").unwrap();
    let e = error_of(&run(&dir, "SELECT count(*) FROM ambit_read('c.shp');"));
    assert!(
        e.contains("c.prj: spatial reference 'not a definition at all' cannot be used"),
        "{e}"
    );
    let e = error_of(&run(
        &dir,
        "SELECT count(*) FROM ambit_read('c.shp', '{\"srs\": \"EPSG:banana\"}');",
    ));
    assert!(
        e.contains("option srs: spatial reference 'EPSG:banana' cannot be used"),
        "{e}"
    );
    // A .dbf that belongs to another shapefile: the counts differ.
    point_shapefile(
        &dir,
        "d",
        &[Some((1.0, 2.0)), Some((1.0, 2.0))],
        &[b"x", b"y"],
        0,
    );
    std::fs::copy(dir.join("c.dbf"), dir.join("d.dbf")).unwrap();
    let e = error_of(&run(&dir, "SELECT count(*) FROM ambit_read('d.shp');"));
    assert!(e.contains("the .dbf holds 1 records but the .shp 2"), "{e}");
    let e = error_of(&run(
        &dir,
        "SELECT count(*) FROM ambit_read('nothing_*.shp');",
    ));
    assert!(e.contains("no file matches \"nothing_*.shp\""), "{e}");
}

#[test]
fn legacy_code_pages_are_decoded_from_the_cpg_or_the_language_driver() {
    let dir = folder("codepage");
    // 0xE9 is é in Windows-1252 and ISO-8859-1 (the code page tables of
    // those standards); 0x82 is é in DOS code page 437, which ambit cannot
    // decode and says so.
    point_shapefile(&dir, "cpg", &[Some((1.0, 2.0))], &[b"caf\xe9"], 0);
    std::fs::write(dir.join("cpg.cpg"), "1252").unwrap();
    point_shapefile(&dir, "ldid", &[Some((1.0, 2.0))], &[b"caf\xe9"], 0x57);
    point_shapefile(&dir, "dos", &[Some((1.0, 2.0))], &[b"caf\x82"], 0x01);
    let out = run(&dir, "SELECT json_extract(attributes, '$.NAME') FROM ambit_read('cpg.shp') UNION ALL SELECT json_extract(attributes, '$.NAME') FROM ambit_read('ldid.shp');");
    assert_eq!(out.stdout.trim(), "café\ncafé", "{}", out.stderr);
    let e = error_of(&run(&dir, "SELECT count(*) FROM ambit_read('dos.shp');"));
    assert!(
        e.contains("dos.shp, row 1: field NAME: the text uses code page 437"),
        "{e}"
    );
    let out = run(&dir, "SELECT json_extract(attributes, '$.NAME') FROM ambit_read('dos.shp', '{\"encoding\": \"windows-1252\"}');");
    // 0x82 is the low single quotation mark in Windows-1252 (its table).
    assert_eq!(out.stdout.trim(), "caf\u{201a}", "{}", out.stderr);
}

#[test]
fn csv_rows_with_blank_garbled_out_of_range_or_swapped_coordinates_are_reported() {
    let dir = folder("csv");
    std::fs::write(
        dir.join("sites.csv"),
        "id,name,lat,lon\n\
         01,good,38.5,-120.25\n\
         02,blank,,-120.25\n\
         03,garbled,38.5,abc\n\
         04,far,95.0,-200.0\n\
         05,swapped,-120.25,38.5\n\
         06,short\n",
    )
    .unwrap();
    let e = error_of(&run(&dir, "SELECT count(*) FROM ambit_read('sites.csv');"));
    assert!(e.contains("sites.csv, row 2: column lat is blank"), "{e}");
    let out = run(&dir, "SELECT row, json_extract(attributes, '$.id'), ST_AsText(geom), problem FROM ambit_read('sites.csv', '{\"bad_rows\": \"keep\"}');");
    let lines: Vec<&str> = out.stdout.lines().collect();
    assert_eq!(lines.len(), 6, "{}\n{}", out.stdout, out.stderr);
    assert_eq!(lines[0], "1|01|POINT (-120.25 38.5)|");
    assert_eq!(lines[1], "2|02||column lat is blank");
    assert_eq!(
        lines[2],
        "3|03||column lon holds \"abc\", which is not a number"
    );
    assert!(
        lines[3].starts_with("4|04||longitude -200, latitude 95 is outside"),
        "{}",
        lines[3]
    );
    assert!(
        lines[4].contains("are the longitude and latitude columns swapped?"),
        "{}",
        lines[4]
    );
    assert!(
        lines[5].starts_with("6|06||the line has 2 fields, the header 4"),
        "{}",
        lines[5]
    );
}

#[test]
fn corrupt_and_hostile_files_are_errors_not_crashes() {
    let dir = folder("hostile");
    // Not a zip at all, and a zip cut short.
    std::fs::write(dir.join("junk.zip"), b"PK\x03\x04 this is not an archive").unwrap();
    let e = error_of(&run(&dir, "SELECT count(*) FROM ambit_read('junk.zip');"));
    assert!(e.contains("junk.zip: not a readable zip archive"), "{e}");
    // A record announcing 2^31 - 1 parts and points in a 60-byte record:
    // refused before anything is allocated for them.
    point_shapefile(&dir, "huge", &[Some((1.0, 2.0))], &[b"x"], 0);
    let mut shp = std::fs::read(dir.join("huge.shp")).unwrap();
    let mut content = 5i32.to_le_bytes().to_vec();
    content.extend([0u8; 32]);
    content.extend(i32::MAX.to_le_bytes());
    content.extend(i32::MAX.to_le_bytes());
    content.extend([0u8; 16]);
    shp.truncate(100);
    shp.extend(1i32.to_be_bytes());
    shp.extend(((content.len() / 2) as i32).to_be_bytes());
    shp.extend(&content);
    let words = (shp.len() / 2) as i32;
    shp[24..28].copy_from_slice(&words.to_be_bytes());
    std::fs::write(dir.join("huge.shp"), shp).unwrap();
    let e = error_of(&run(&dir, "SELECT count(*) FROM ambit_read('huge.shp');"));
    assert!(
        e.contains("huge.shp, row 1: the record announces 2147483647 parts"),
        "{e}"
    );
    // A record whose content length runs past the end of the file.
    point_shapefile(&dir, "cut", &[Some((1.0, 2.0))], &[b"x"], 0);
    let mut shp = std::fs::read(dir.join("cut.shp")).unwrap();
    shp[104..108].copy_from_slice(&1_000_000i32.to_be_bytes());
    std::fs::write(dir.join("cut.shp"), shp).unwrap();
    let e = error_of(&run(&dir, "SELECT count(*) FROM ambit_read('cut.shp');"));
    assert!(
        e.contains("cut.shp: record 1 at byte 100 announces 2000000 bytes"),
        "{e}"
    );
    // Not a shapefile at all.
    std::fs::write(dir.join("text.shp"), "hello").unwrap();
    let e = error_of(&run(&dir, "SELECT count(*) FROM ambit_read('text.shp');"));
    assert!(e.contains("text.shp"), "{e}");
    // Bad options.
    let e = error_of(&run(
        &dir,
        "SELECT count(*) FROM ambit_read('text.shp', '{\"bad_row\": \"keep\"}');",
    ));
    assert!(e.contains("unknown option \"bad_row\""), "{e}");
}

#[test]
fn a_pattern_reads_many_files_in_one_statement() {
    let dir = folder("pattern");
    point_shapefile(
        &dir,
        "state_01",
        &[Some((1.0, 2.0)), Some((3.0, 4.0))],
        &[b"a", b"b"],
        0,
    );
    point_shapefile(&dir, "state_02", &[Some((5.0, 6.0))], &[b"c"], 0);
    std::fs::write(dir.join("other.csv"), "lon,lat\n1,2\n").unwrap();
    let out = run(
        &dir,
        "SELECT file, row, json_extract(attributes, '$.NAME') FROM ambit_read('state_*.shp');",
    );
    assert_eq!(
        out.stdout.trim(),
        "state_01.shp|1|a\nstate_01.shp|2|b\nstate_02.shp|1|c",
        "{}",
        out.stderr
    );
}

/// Writes a zip archive with `members` (name, bytes) using Python's zipfile
/// (deflated), an independent writer.
fn zip_with(path: &Path, members: &[(&str, Vec<u8>)]) {
    let dir = path.parent().unwrap();
    let mut names = Vec::new();
    for (i, (name, bytes)) in members.iter().enumerate() {
        let part = dir.join(format!("member-{i}"));
        std::fs::write(&part, bytes).unwrap();
        names.push(format!("({:?}, {:?})", part.display().to_string(), name));
    }
    let script = format!(
        "import zipfile\nwith zipfile.ZipFile({:?}, 'w', zipfile.ZIP_DEFLATED) as z:\n    for src, name in [{}]:\n        z.write(src, name)\n",
        path.display().to_string(),
        names.join(", ")
    );
    let status = std::process::Command::new(common::python())
        .arg("-c")
        .arg(script)
        .status()
        .unwrap();
    assert!(status.success());
}

#[test]
fn zips_cut_short_or_without_a_part_are_errors_naming_the_archive() {
    let dir = folder("zips");
    point_shapefile(&dir, "s", &[Some((1.0, 2.0))], &[b"x"], 0);
    let part = |ext: &str| std::fs::read(dir.join(format!("s.{ext}"))).unwrap();
    zip_with(
        &dir.join("whole.zip"),
        &[
            ("s.shp", part("shp")),
            ("s.shx", part("shx")),
            ("s.dbf", part("dbf")),
        ],
    );
    zip_with(
        &dir.join("nodbf.zip"),
        &[("s.shp", part("shp")), ("s.shx", part("shx"))],
    );
    let out = run(
        &dir,
        "SELECT file, row, ST_AsText(geom) FROM ambit_read('whole.zip');",
    );
    assert_eq!(
        out.stdout.trim(),
        "whole.zip/s.shp|1|POINT (1 2)",
        "{}",
        out.stderr
    );
    let e = error_of(&run(&dir, "SELECT count(*) FROM ambit_read('nodbf.zip');"));
    assert!(
        e.contains("nodbf.zip/s.shp: the shapefile has no .dbf file"),
        "{e}"
    );
    // The same archive cut at every tenth byte: always an error, never a crash.
    let bytes = std::fs::read(dir.join("whole.zip")).unwrap();
    for cut in (1..bytes.len()).step_by(10) {
        std::fs::write(dir.join("cut.zip"), &bytes[..cut]).unwrap();
        let r = run(&dir, "SELECT count(*) FROM ambit_read('cut.zip');");
        assert!(
            r.status == 1 && r.stderr.contains("ambit_read: cut.zip"),
            "cut at {cut}: {} {}",
            r.status,
            r.stderr
        );
    }
}

#[test]
fn geojson_features_without_a_valid_geometry_are_reported() {
    let dir = folder("geojson");
    std::fs::write(
        dir.join("parks.ndjson"),
        "{\"type\":\"Feature\",\"properties\":{\"name\":\"a\"},\"geometry\":{\"type\":\"Point\",\"coordinates\":[-120.5,38.25]}}\n\
         \n\
         {\"type\":\"Feature\",\"properties\":{\"name\":\"b\"},\"geometry\":null}\n\
         {not json\n\
         {\"type\":\"Feature\",\"properties\":{\"name\":\"d\"},\"geometry\":{\"type\":\"Polygon\",\"coordinates\":[[[0,0],[1,1],[1,0],[0,1],[0,0]]]}}\n",
    )
    .unwrap();
    let out = run(&dir, "SELECT row, json_extract(attributes, '$.name'), ST_AsText(geom), substr(problem, 1, 40) FROM ambit_read('parks.ndjson', '{\"bad_rows\": \"keep\"}');");
    let lines: Vec<&str> = out.stdout.lines().collect();
    assert_eq!(lines.len(), 4, "{}\n{}", out.stdout, out.stderr);
    assert_eq!(lines[0], "1|a|POINT (-120.5 38.25)|");
    assert_eq!(lines[1], "2|b||the feature's geometry is null");
    assert!(lines[2].starts_with("3|||invalid JSON"), "{}", lines[2]);
    // A bow tie: the ring crosses itself (README, "Valid geometries").
    assert!(lines[3].starts_with("4|d||invalid polygon"), "{}", lines[3]);
    let e = error_of(&run(
        &dir,
        "SELECT count(*) FROM ambit_read('parks.ndjson');",
    ));
    assert!(
        e.contains("parks.ndjson, row 2: the feature's geometry is null"),
        "{e}"
    );
}
