//! ambit_feature_collection and ambit_choropleth_svg in the stock shell,
//! read back by independent readers: Python's json module and shapely
//! (GeoJSON geometries, RFC 7946), and Python's xml.etree.ElementTree (the
//! SVG is well-formed XML). The counties are invented shapes near
//! longitude -131, latitude 38.5, with invented names.

mod common;

use std::process::Command;

use ambit::render::svg::{NO_DATA, PALETTE};
use common::{query, shell};

/// Six invented counties: a square with a square hole, a multipolygon of
/// two squares, and four plain squares, one with no population. The
/// whole set spans -131.3 .. -130.7 by 38.3 .. 38.7.
const COUNTIES: &str = "
CREATE TABLE c(geoid TEXT, name TEXT, pop INTEGER, geom BLOB);
INSERT INTO c VALUES
 ('99101', 'Wrenfield', 1200, ST_GeomFromText('POLYGON ((-131.3 38.3, -131.1 38.3, -131.1 38.5, -131.3 38.5, -131.3 38.3), (-131.225 38.375, -131.175 38.375, -131.175 38.425, -131.225 38.425, -131.225 38.375))', 4326)),
 ('99103', 'Marrow Bay', 5400, ST_GeomFromText('MULTIPOLYGON (((-131.1 38.3, -130.9 38.3, -130.9 38.5, -131.1 38.5, -131.1 38.3)), ((-130.85 38.3, -130.7 38.3, -130.7 38.4, -130.85 38.4, -130.85 38.3)))', 4326)),
 ('99105', 'Tollin', NULL, ST_GeomFromText('POLYGON ((-131.3 38.5, -131.1 38.5, -131.1 38.7, -131.3 38.7, -131.3 38.5))', 4326)),
 ('99107', 'Quillby', 830, ST_GeomFromText('POLYGON ((-131.1 38.5, -130.9 38.5, -130.9 38.7, -131.1 38.7, -131.1 38.5))', 4326)),
 ('99109', 'Ostery', 22000, ST_GeomFromText('POLYGON ((-130.9 38.5, -130.7 38.5, -130.7 38.7, -130.9 38.7, -130.9 38.5))', 4326)),
 ('99111', 'Brindle Fork', 9100.5, ST_GeomFromText('POLYGON ((-130.85 38.4, -130.7 38.4, -130.7 38.5, -130.85 38.5, -130.85 38.4))', 4326));
";

/// Runs a Python script with the given arguments and returns its output.
fn python(script: &str, args: &[&str]) -> String {
    let out = Command::new(common::python())
        .arg("-c")
        .arg(script)
        .args(args)
        .output()
        .expect("python3 is needed; tests/prepare-host installs it");
    let stdout = String::from_utf8_lossy(&out.stdout).into_owned();
    assert!(
        out.status.success(),
        "python failed (missing shapely? run tests/prepare-host)\n{stdout}\n{}",
        String::from_utf8_lossy(&out.stderr)
    );
    stdout.trim_end().to_string()
}

/// A file in the temporary folder, unique to this test run.
fn scratch(name: &str) -> std::path::PathBuf {
    std::env::temp_dir().join(format!("ambit-host-render-{}-{name}", std::process::id()))
}

/// Reads a FeatureCollection file with json and shapely and prints, per
/// feature, its geometry type, shapely's validity and planar area, and its
/// properties; first the member names of the collection and features.
const READ_COLLECTION: &str = r#"
import json, sys
from shapely.geometry import shape
fc = json.load(open(sys.argv[1]))
print(sorted(fc), fc["type"], len(fc["features"]))
for f in fc["features"]:
    assert sorted(f) == ["geometry", "properties", "type"], sorted(f)
    assert f["type"] == "Feature"
    g = f["geometry"]
    if g is None:
        desc = "null"
    else:
        s = shape(g)
        desc = "%s %s %.6f" % (s.geom_type, s.is_valid, s.area)
    print(desc, json.dumps(f["properties"], sort_keys=True))
"#;

#[test]
fn the_feature_collection_reads_back_with_json_and_shapely() {
    let path = scratch("counties.geojson");
    let sql = format!(
        "{COUNTIES}
         SELECT writefile('{}', ambit_feature_collection(geom, CASE WHEN geoid IS NOT NULL THEN json_object('geoid', geoid, 'name', name, 'pop', pop) END))
         FROM (SELECT * FROM c UNION ALL SELECT '99113', 'Unmapped', 7, NULL
               UNION ALL SELECT NULL, NULL, NULL, ST_GeomFromText('POLYGON ((-131 38, -130.9 38, -130.9 38.1, -131 38))')
               ORDER BY geoid);",
        path.display()
    );
    query(&sql);
    let out = python(READ_COLLECTION, &[path.to_str().unwrap()]);
    // Areas in square degrees, from the squares' sides: 0.2^2 - 0.05^2,
    // 0.2^2 + 0.15 * 0.1, 0.2^2, 0.15 * 0.1; the last a triangle of legs
    // 0.1 (NULL properties, ordered first: NULL sorts before text).
    let expected = r#"['features', 'type'] FeatureCollection 8
Polygon True 0.005000 null
Polygon True 0.037500 {"geoid": "99101", "name": "Wrenfield", "pop": 1200}
MultiPolygon True 0.055000 {"geoid": "99103", "name": "Marrow Bay", "pop": 5400}
Polygon True 0.040000 {"geoid": "99105", "name": "Tollin", "pop": null}
Polygon True 0.040000 {"geoid": "99107", "name": "Quillby", "pop": 830}
Polygon True 0.040000 {"geoid": "99109", "name": "Ostery", "pop": 22000}
Polygon True 0.015000 {"geoid": "99111", "name": "Brindle Fork", "pop": 9100.5}
null {"geoid": "99113", "name": "Unmapped", "pop": 7}"#;
    assert_eq!(out, expected);
    let _ = std::fs::remove_file(path);
}

#[test]
fn the_feature_collection_of_no_rows_is_empty_and_bad_properties_are_named() {
    assert_eq!(
        query(&format!(
            "{COUNTIES} SELECT ambit_feature_collection(geom, NULL) FROM c WHERE 0;"
        )),
        r#"{"type":"FeatureCollection","features":[]}"#
    );
    // Properties are copied through, members in their order.
    assert_eq!(
        query("SELECT ambit_feature_collection(ST_Point(-131, 38.5), json_object('b', 1, 'a', json_array(1, 'x')));"),
        r#"{"type":"FeatureCollection","features":[{"type":"Feature","geometry":{"type":"Point","coordinates":[-131,38.5]},"properties":{"b":1,"a":[1,"x"]}}]}"#
    );
    for (sql, message) in [
        (
            "SELECT ambit_feature_collection(ST_Point(1, 2), json_array(1, 2));",
            "ambit_feature_collection: argument 2 (properties): must be a JSON object such as json_object(...) returns (RFC 7946, section 3.2), got a JSON array (row 1)",
        ),
        (
            "SELECT ambit_feature_collection(geom, p) FROM (SELECT ST_Point(1, 2) AS geom, '{}' AS p UNION ALL SELECT NULL, '{\"a\":');",
            "ambit_feature_collection: argument 2 (properties): must be a JSON object such as json_object(...) returns (RFC 7946, section 3.2), got text that is not JSON (EOF while parsing a value at line 1 column 5) (row 2)",
        ),
        (
            "SELECT ambit_feature_collection(ST_Point(1, 2), 42);",
            "argument 2 (properties): must be a JSON object such as json_object(...) returns (RFC 7946, section 3.2), got integer 42 (row 1)",
        ),
        (
            "SELECT ambit_feature_collection('POINT (1 2)', NULL);",
            "ambit_feature_collection: argument 1 (geom): must be a geometry blob, got text 'POINT (1 2)'; build one with ST_GeomFromText or ambit_from_geojson (row 1)",
        ),
    ] {
        let run = shell(&format!("{sql}\nSELECT 'alive';"));
        assert!(run.stderr.contains(message), "{sql}\n{}", run.stderr);
        assert_eq!(run.stdout.trim(), "alive");
    }
}

/// Parses an SVG file with ElementTree and prints: the root's width,
/// height and viewBox; one line per feature path (class, fill, fill-rule,
/// tooltip); one per legend swatch (class, fill, label); the scale-bar
/// labels; the document title.
const READ_SVG: &str = r#"
import sys
import xml.etree.ElementTree as ET
ns = {"s": "http://www.w3.org/2000/svg"}
root = ET.fromstring(open(sys.argv[1], "rb").read())
assert root.tag == "{http://www.w3.org/2000/svg}svg", root.tag
print("svg", root.get("width"), root.get("height"), root.get("viewBox"))
print("title", root.find("s:title", ns).text)
for p in root.iter("{http://www.w3.org/2000/svg}path"):
    cls = p.get("class") or ""
    if cls.startswith("feature"):
        print("path", cls, p.get("fill"), p.get("fill-rule"), p.find("s:title", ns).text)
legend = root.find("s:g[@class='legend']", ns)
texts = [t.text for t in legend.findall("s:text", ns)]
print("legend", texts[0], "|", texts[1])
for r, t in zip(legend.findall("s:rect", ns), texts[2:]):
    print("swatch", r.get("class"), r.get("fill"), t)
for t in root.iter("{http://www.w3.org/2000/svg}text"):
    if t.get("class") == "scale-label":
        print("scale", t.text)
"#;

fn luminance(hex: &str) -> f64 {
    // WCAG 2.x relative luminance (W3C, WCAG 2.1, "relative luminance").
    let v = u32::from_str_radix(hex.trim_start_matches('#'), 16).unwrap();
    let lin = |c: u32| {
        let c = c as f64 / 255.0;
        if c <= 0.03928 {
            c / 12.92
        } else {
            ((c + 0.055) / 1.055).powf(2.4)
        }
    };
    0.2126 * lin(v >> 16) + 0.7152 * lin((v >> 8) & 0xff) + 0.0722 * lin(v & 0xff)
}

#[test]
fn the_choropleth_is_well_formed_svg_with_a_legend_and_a_scale_bar() {
    let path = scratch("counties.svg");
    let title = r#"Invented <counties> & "towns""#;
    let written = query(&format!(
        "{COUNTIES}
         SELECT writefile('{}', ambit_choropleth_svg(geom, pop, '{}')) FROM (SELECT * FROM c ORDER BY geoid);",
        path.display(),
        title.replace('\'', "''")
    ));
    // (c) writefile wrote the whole document.
    let bytes = std::fs::read(&path).unwrap();
    assert_eq!(written, bytes.len().to_string());
    assert!(bytes.starts_with(b"<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n<svg "));
    let out = python(READ_SVG, &[path.to_str().unwrap()]);
    let lines: Vec<&str> = out.lines().collect();
    let svg_line = lines[0];
    let parts: Vec<&str> = svg_line.split(' ').collect();
    assert_eq!(
        parts[3..].join(" "),
        format!("0 0 {} {}", parts[1], parts[2]),
        "{svg_line}"
    );
    assert_eq!(lines[1], format!("title {title}"));
    // One path per county, in row order, filled by class: five values in
    // five classes of one each (1 the lowest), Tollin without data.
    let paths: Vec<&str> = lines
        .iter()
        .filter(|l| l.starts_with("path "))
        .copied()
        .collect();
    assert_eq!(
        paths,
        [
            format!("path feature q2 {} evenodd 1200 (class 2 of 5)", PALETTE[1]),
            format!("path feature q3 {} evenodd 5400 (class 3 of 5)", PALETTE[2]),
            format!("path feature nodata {NO_DATA} evenodd no data"),
            format!("path feature q1 {} evenodd 830 (class 1 of 5)", PALETTE[0]),
            format!(
                "path feature q5 {} evenodd 22000 (class 5 of 5)",
                PALETTE[4]
            ),
            format!(
                "path feature q4 {} evenodd 9100.5 (class 4 of 5)",
                PALETTE[3]
            ),
        ]
    );
    assert!(lines.contains(&"legend Quantile classes | 5 classes of about equal count (n)"));
    // The legend: classes lowest first, each lower end above the class
    // before, colours in palette order getting darker (WCAG luminance
    // falls), then no data.
    let swatches: Vec<Vec<&str>> = lines
        .iter()
        .filter(|l| l.starts_with("swatch "))
        .map(|l| l.splitn(5, ' ').collect())
        .collect();
    assert_eq!(swatches.len(), 6);
    let labels: Vec<&str> = swatches.iter().map(|s| s[4]).collect();
    assert_eq!(
        labels,
        [
            "830 (1)",
            "1,200 (1)",
            "5,400 (1)",
            "9,100 (1)",
            "22,000 (1)",
            "no data (1)"
        ]
    );
    let mut last_luminance = f64::INFINITY;
    let mut last_value = f64::NEG_INFINITY;
    for (i, s) in swatches[..5].iter().enumerate() {
        assert_eq!(s[..3], ["swatch", "swatch", &format!("q{}", i + 1)]);
        assert_eq!(s[3], PALETTE[i]);
        let l = luminance(s[3]);
        assert!(l < last_luminance, "{s:?}");
        last_luminance = l;
        let value: f64 = s[4]
            .split(' ')
            .next()
            .unwrap()
            .replace(',', "")
            .parse()
            .unwrap();
        assert!(value > last_value, "{s:?}");
        last_value = value;
    }
    assert_eq!(swatches[5][..4], ["swatch", "swatch", "nodata", NO_DATA]);
    // Scale bars: the map is 0.6° of longitude by 0.4° of latitude at
    // 38.5°, wider than high (0.6 cos 38.5° = 0.47), so 640 px hold 0.6° of
    // longitude, about 52.3 km (87.23 km a degree on WGS84: pi/180 N cos
    // phi). The bars may take 40%: 20.9 km, 13.0 mi -> 20 km and 10 mi.
    let scale: Vec<&str> = lines
        .iter()
        .filter(|l| l.starts_with("scale "))
        .copied()
        .collect();
    assert_eq!(scale, ["scale 20 km", "scale 10 mi"]);
    let _ = std::fs::remove_file(path);
}

#[test]
fn choropleth_titles_nulls_and_errors() {
    // No rows: a small document saying so; two arguments: no title.
    let empty = query(&format!(
        "{COUNTIES} SELECT ambit_choropleth_svg(geom, pop) FROM c WHERE 0;"
    ));
    assert!(empty.contains("No polygons to draw"), "{empty}");
    let untitled = query(&format!(
        "{COUNTIES} SELECT ambit_choropleth_svg(geom, pop) FROM c;"
    ));
    assert!(!untitled.contains("<title>Invented") && !untitled.contains("class=\"title\""));
    assert_eq!(untitled.matches("<path class=\"feature ").count(), 6);
    // NULL geometries are left out; a NULL title in some rows is no clash.
    let out = query(&format!(
        "{COUNTIES} SELECT ambit_choropleth_svg(geom, pop, CASE WHEN name = 'Tollin' THEN NULL ELSE 'T' END) FROM (SELECT * FROM c UNION ALL SELECT 'x', 'x', 1, NULL);"
    ));
    assert_eq!(out.matches("<path class=\"feature ").count(), 6);
    assert!(out.contains("<title>T</title>"));
    for (sql, message) in [
        (
            "SELECT ambit_choropleth_svg(ST_GeomFromText('POLYGON ((0 0, 1 0, 1 1, 0 0))'), 'x');",
            "ambit_choropleth_svg: argument 2 (value): must be a number, got text 'x' (row 1)",
        ),
        (
            "SELECT ambit_choropleth_svg(geom, 1) FROM (SELECT ST_GeomFromText('POLYGON ((0 0, 1 0, 1 1, 0 0))') AS geom UNION ALL SELECT ST_Point(1, 2));",
            "ambit_choropleth_svg: argument 1 (geom): expects polygons (POLYGON or MULTIPOLYGON), got a POINT; a choropleth fills areas (row 2)",
        ),
        (
            "SELECT ambit_choropleth_svg(ST_GeomFromText('LINESTRING (0 0, 1 1)'), 1, 'T');",
            "argument 1 (geom): expects polygons (POLYGON or MULTIPOLYGON), got a LINESTRING",
        ),
        (
            "SELECT ambit_choropleth_svg(geom, 1, t) FROM (SELECT ST_GeomFromText('POLYGON ((0 0, 1 0, 1 1, 0 0))') AS geom, 'A' AS t UNION ALL SELECT NULL, 'B');",
            "ambit_choropleth_svg: argument 3 (title): must be the same in every row, got 'B' after 'A' (row 2)",
        ),
        (
            "SELECT ambit_choropleth_svg(ST_GeomFromText('POLYGON ((0 0, 1 0, 1 1, 0 0))'), 1, 7);",
            "ambit_choropleth_svg: argument 3 (title): must be text, got integer 7 (row 1)",
        ),
        (
            "SELECT ambit_choropleth_svg(ST_GeomFromText('POLYGON ((0 0, 1 0, 1 1, 0 0))'), 1e999);",
            "ambit_choropleth_svg: argument 2 (value): must be a finite number, got inf (row 1)",
        ),
        (
            "SELECT ambit_choropleth_svg(x'00', 1);",
            "ambit_choropleth_svg: argument 1 (geom): truncated WKB",
        ),
    ] {
        let run = shell(&format!("{sql}\nSELECT 'alive';"));
        assert!(run.stderr.contains(message), "{sql}\n{}", run.stderr);
        assert_eq!(run.stdout.trim(), "alive", "{sql}");
        assert!(!run.stderr.contains("panic"), "{}", run.stderr);
    }
}
