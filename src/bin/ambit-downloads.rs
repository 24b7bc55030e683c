//! `ambit-downloads`: writes the invented region's raw inputs as an analyst
//! would download them, so the demo can start where an analyst starts.
//!
//! It reads the CSV folder that `ambit-region` writes (see
//! src/bin/ambit-region.rs) and writes into the output folder:
//!
//! - `blocks_<county>.zip`, one per county (as census blocks are published
//!   per state or county): a zipped ESRI shapefile (.shp, .shx, .dbf, .prj,
//!   .cpg) of the county's blocks in NAD83 longitude/latitude, with the
//!   fields GEOID (character, 15: state 2 + county 3 + tract 6 + block 4,
//!   leading zeros kept), POP (numeric, population) and WATER (numeric, 1
//!   for a water block); the CSV is read row by row and each county's file
//!   written when the next county starts, so one county's blocks are in
//!   memory at a time (ambit-region writes each county's blocks together;
//!   a county met again later is an error);
//! - `counties.zip` (GEOID character 5, NAME) and `urban_areas.zip` (NAME),
//!   the same way;
//! - `parks/parks_utm9n.shp` with .shx, .dbf, .prj, .cpg, not zipped: the
//!   parks (PARK_ID, NAME) projected to NAD83 / UTM zone 9N (EPSG 26909)
//!   with ambit's own reprojection ([`ambit::reproject`]), its .prj the ESRI
//!   WKT of that system;
//! - `rec_sites.geojson`: the recreation registry as a GeoJSON
//!   FeatureCollection (RFC 7946; a site without coordinates has a null
//!   geometry);
//! - `fitness_list.csv`: the licensing list with `latitude` and `longitude`
//!   columns (latitude first, as such lists often are), blank for the
//!   entries never geocoded, and three more rows as downloads have them:
//!   one garbled coordinate, one with latitude and longitude exchanged, one
//!   with both blank;
//! - `README.txt`, saying that all of it is invented.
//!
//! Every shapefile has a .cpg saying UTF-8 (the .dbf text is UTF-8) and a
//! .prj; the dBASE tables follow the dBASE III layout that shapefiles use
//! (ESRI Shapefile Technical Description, 1998), written by the dbase
//! crate, the shapes by the shapefile crate, the archives by the zip crate
//! (deflate, members with a fixed time stamp; the .dbf headers carry the
//! day they were written, as dBASE does). Coordinates are written as the region's CSV holds them
//! (longitude/latitude exactly; projected parks to the double the
//! projection gives, within micrometres of the source after the inverse).
//!
//! Usage:
//!
//! ```text
//! target/release/ambit-region --blocks 21000 --seed 20261201 --out /tmp/region
//! target/release/ambit-downloads --region /tmp/region --out downloads
//! ```
//!
//! or `demo-db/build-region 21000 20261201 region.gpkg --downloads downloads`.
//! sql-examples/from-downloads.sql builds the input tables from them.

use std::collections::{BTreeMap, BTreeSet};
use std::fs::File;
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};
use std::process::ExitCode;

use ambit::blob::wkt;
use ambit::geometry::{Geometry, Shape};
use ambit::reproject::Reprojection;
use dbase::{FieldName, FieldValue, Record, TableWriterBuilder};

/// NAD83 longitude/latitude as ESRI WKT, as .prj files of census downloads
/// carry it (ellipsoid GRS 1980: a = 6378137, 1/f = 298.257222101).
pub const NAD83_PRJ: &str = r#"GEOGCS["GCS_North_American_1983",DATUM["D_North_American_1983",SPHEROID["GRS_1980",6378137.0,298.257222101]],PRIMEM["Greenwich",0.0],UNIT["Degree",0.0174532925199433]]"#;

/// NAD83 / UTM zone 9N (EPSG 26909) as ESRI WKT: transverse Mercator,
/// central meridian -129 (zone 9: 6 * 9 - 183), scale 0.9996, false easting
/// 500 km (the UTM definition).
pub const PARKS_PRJ: &str = r#"PROJCS["NAD_1983_UTM_Zone_9N",GEOGCS["GCS_North_American_1983",DATUM["D_North_American_1983",SPHEROID["GRS_1980",6378137.0,298.257222101]],PRIMEM["Greenwich",0.0],UNIT["Degree",0.0174532925199433]],PROJECTION["Transverse_Mercator"],PARAMETER["False_Easting",500000.0],PARAMETER["False_Northing",0.0],PARAMETER["Central_Meridian",-129.0],PARAMETER["Scale_Factor",0.9996],PARAMETER["Latitude_Of_Origin",0.0],UNIT["Meter",1.0]]"#;

/// The bad rows appended to fitness_list.csv: license number, business,
/// category, latitude, longitude (as text, as downloaded).
pub const BAD_FITNESS_ROWS: [[&str; 5]; 3] = [
    // A garbled latitude: the letter O for a zero.
    [
        "FL-900001",
        "Harbor Lane Boxing",
        "boxing gym",
        "38.5O41",
        "-131.2207",
    ],
    // Latitude and longitude exchanged.
    [
        "FL-900002",
        "Tidewater Yoga Loft",
        "yoga studio",
        "-131.0554",
        "38.6117",
    ],
    // Never geocoded.
    ["FL-900003", "Cedar Row Fitness", "fitness center", "", ""],
];

type Failure = String;

fn fail(what: impl std::fmt::Display) -> Failure {
    what.to_string()
}

/// The rows of one CSV of the region, as maps of column name to text.
fn read_csv(dir: &Path, name: &str) -> Result<Vec<BTreeMap<String, String>>, Failure> {
    let mut rows = Vec::new();
    each_csv_row(dir, name, |row| {
        rows.push(row);
        Ok(())
    })?;
    Ok(rows)
}

/// Hands the rows of the region's `name`.csv to `each` one at a time, so
/// that a nation's blocks (some 8 GB of WKT) are never all in memory.
fn each_csv_row(
    dir: &Path,
    name: &str,
    mut each: impl FnMut(BTreeMap<String, String>) -> Result<(), Failure>,
) -> Result<(), Failure> {
    let path = dir.join(format!("{name}.csv"));
    let mut reader = csv::Reader::from_path(&path)
        .map_err(|e| fail(format!("cannot read {}: {e}", path.display())))?;
    let headers = reader
        .headers()
        .map_err(|e| fail(format!("{}: {e}", path.display())))?
        .clone();
    for record in reader.records() {
        let record = record.map_err(|e| fail(format!("{}: {e}", path.display())))?;
        each(
            headers
                .iter()
                .zip(record.iter())
                .map(|(h, v)| (h.to_string(), v.to_string()))
                .collect(),
        )?;
    }
    Ok(())
}

fn field<'a>(row: &'a BTreeMap<String, String>, name: &str) -> Result<&'a str, Failure> {
    row.get(name)
        .map(String::as_str)
        .ok_or_else(|| fail(format!("the region's CSV has no column {name}")))
}

fn geometry(row: &BTreeMap<String, String>) -> Result<Option<Geometry>, Failure> {
    let text = field(row, "wkt")?;
    if text.is_empty() {
        return Ok(None);
    }
    wkt::parse(text)
        .map(Some)
        .map_err(|e| fail(format!("bad WKT in the region's CSV: {e}")))
}

/// The rings of a polygonal geometry as shapefile rings (the first of each
/// polygon outer, the others holes; the shapefile crate orders outer rings
/// clockwise and holes counter-clockwise, as the 1998 description asks).
fn shape_polygon(g: &Geometry) -> Result<shapefile::Polygon, Failure> {
    let width = g.dims.width();
    let polygons: Vec<&Vec<Vec<f64>>> = match &g.shape {
        Shape::Polygon(rings) => vec![rings],
        Shape::MultiPolygon(polys) => polys.iter().collect(),
        _ => {
            return Err(fail(
                "a polygon layer holds a geometry that is not polygonal",
            ))
        }
    };
    let mut rings = Vec::new();
    for polygon in polygons {
        for (i, ring) in polygon.iter().enumerate() {
            let points: Vec<shapefile::Point> = ring
                .chunks_exact(width)
                .map(|v| shapefile::Point::new(v[0], v[1]))
                .collect();
            rings.push(if i == 0 {
                shapefile::PolygonRing::Outer(points)
            } else {
                shapefile::PolygonRing::Inner(points)
            });
        }
    }
    Ok(shapefile::Polygon::with_rings(rings))
}

fn name(text: &str) -> Result<FieldName, Failure> {
    FieldName::try_from(text).map_err(|_| fail(format!("bad dBASE field name {text}")))
}

/// One dBASE field: its name and how it is declared.
enum Field {
    Text(&'static str, u8),
    Number(&'static str, u8),
}

/// Writes `stem`.shp/.shx/.dbf/.prj/.cpg with polygon `shapes` and their
/// `records` (values in the order of `fields`); returns the paths written.
fn write_shapefile(
    stem: &Path,
    prj: &str,
    fields: &[Field],
    features: &[(shapefile::Polygon, Vec<FieldValue>)],
) -> Result<Vec<PathBuf>, Failure> {
    let mut builder = TableWriterBuilder::with_encoding(dbase::encoding::Unicode);
    for f in fields {
        builder = match f {
            Field::Text(n, len) => builder.add_character_field(name(n)?, *len),
            Field::Number(n, len) => builder.add_numeric_field(name(n)?, *len, 0),
        };
    }
    let shp = stem.with_extension("shp");
    let mut writer = shapefile::Writer::from_path(&shp, builder)
        .map_err(|e| fail(format!("cannot write {}: {e}", shp.display())))?;
    for (shape, values) in features {
        let mut record = Record::default();
        for (f, v) in fields.iter().zip(values) {
            let n = match f {
                Field::Text(n, _) | Field::Number(n, _) => n,
            };
            record.insert(n.to_string(), v.clone());
        }
        writer
            .write_shape_and_record(shape, &record)
            .map_err(|e| fail(format!("{}: {e}", shp.display())))?;
    }
    drop(writer);
    std::fs::write(stem.with_extension("prj"), prj).map_err(fail)?;
    std::fs::write(stem.with_extension("cpg"), "UTF-8").map_err(fail)?;
    Ok(["shp", "shx", "dbf", "prj", "cpg"]
        .iter()
        .map(|e| stem.with_extension(e))
        .collect())
}

/// Moves `files` into the zip archive `zip_path` (deflate, fixed time
/// stamp), under their file names.
fn zip_files(zip_path: &Path, files: &[PathBuf]) -> Result<(), Failure> {
    let out = File::create(zip_path).map_err(|e| fail(format!("{}: {e}", zip_path.display())))?;
    let mut zip = zip::ZipWriter::new(BufWriter::new(out));
    let options = zip::write::SimpleFileOptions::default()
        .compression_method(zip::CompressionMethod::Deflated)
        .last_modified_time(zip::DateTime::default());
    for file in files {
        let member = file
            .file_name()
            .and_then(|n| n.to_str())
            .ok_or_else(|| fail("bad file name"))?;
        zip.start_file(member, options)
            .map_err(|e| fail(format!("{}: {e}", zip_path.display())))?;
        let bytes = std::fs::read(file).map_err(fail)?;
        zip.write_all(&bytes).map_err(fail)?;
        std::fs::remove_file(file).map_err(fail)?;
    }
    zip.finish()
        .map_err(|e| fail(format!("{}: {e}", zip_path.display())))?
        .flush()
        .map_err(fail)?;
    Ok(())
}

fn text(v: &str) -> FieldValue {
    FieldValue::Character((!v.is_empty()).then(|| v.to_string()))
}

fn number(v: &str) -> Result<FieldValue, Failure> {
    v.parse::<f64>()
        .map(|n| FieldValue::Numeric(Some(n)))
        .map_err(|_| fail(format!("not a number in the region's CSV: {v}")))
}

/// One zipped shapefile per county, written as the county's last block is
/// read: ambit-region writes each county's blocks together, so only one
/// county is held in memory (a county met again after another is an error,
/// never a second file overwriting the first).
fn write_blocks(region: &Path, out: &Path) -> Result<usize, Failure> {
    type Features = Vec<(shapefile::Polygon, Vec<FieldValue>)>;
    let fields = [
        Field::Text("GEOID", 15),
        Field::Number("POP", 10),
        Field::Number("WATER", 1),
    ];
    let write = |county: &str, features: &Features| -> Result<(), Failure> {
        let stem = out.join(format!("blocks_{county}"));
        let files = write_shapefile(&stem, NAD83_PRJ, &fields, features)?;
        zip_files(&out.join(format!("blocks_{county}.zip")), &files)
    };
    let mut written = BTreeSet::new();
    let mut current: Option<(String, Features)> = None;
    each_csv_row(region, "blocks", |row| {
        let geoid = field(&row, "geoid")?;
        let county: String = geoid.chars().take(5).collect();
        let g = geometry(&row)?.ok_or_else(|| fail(format!("block {geoid} has no geometry")))?;
        let feature = (
            shape_polygon(&g)?,
            vec![
                text(geoid),
                number(field(&row, "population")?)?,
                number(field(&row, "water")?)?,
            ],
        );
        if let Some((c, features)) = &mut current {
            if *c == county {
                features.push(feature);
                return Ok(());
            }
        }
        if let Some((c, features)) = current.take() {
            write(&c, &features)?;
            written.insert(c);
        }
        if written.contains(&county) {
            return Err(fail(format!(
                "the region's blocks.csv does not hold county {county}'s blocks together \
                 (block {geoid} comes after other counties' blocks)"
            )));
        }
        current = Some((county, vec![feature]));
        Ok(())
    })?;
    if let Some((c, features)) = current {
        write(&c, &features)?;
        written.insert(c);
    }
    Ok(written.len())
}

fn write_areas(region: &Path, out: &Path, table: &str) -> Result<(), Failure> {
    let mut features = Vec::new();
    let counties = table == "counties";
    for row in read_csv(region, table)? {
        let g = geometry(&row)?.ok_or_else(|| fail(format!("a row of {table} has no geometry")))?;
        let mut values = Vec::new();
        if counties {
            values.push(text(field(&row, "geoid")?));
        }
        values.push(text(field(&row, "name")?));
        features.push((shape_polygon(&g)?, values));
    }
    let fields: Vec<Field> = if counties {
        vec![Field::Text("GEOID", 5), Field::Text("NAME", 100)]
    } else {
        vec![Field::Text("NAME", 100)]
    };
    let files = write_shapefile(&out.join(table), NAD83_PRJ, &fields, &features)?;
    zip_files(&out.join(format!("{table}.zip")), &files)
}

fn write_parks(region: &Path, out: &Path) -> Result<usize, Failure> {
    let utm = Reprojection::from_definition(PARKS_PRJ).map_err(fail)?;
    let mut features = Vec::new();
    for row in read_csv(region, "parks")? {
        let mut g = geometry(&row)?.ok_or_else(|| fail("a park has no geometry"))?;
        utm.from_lonlat(&mut g).map_err(fail)?;
        features.push((
            shape_polygon(&g)?,
            vec![text(field(&row, "park_id")?), text(field(&row, "name")?)],
        ));
    }
    let dir = out.join("parks");
    std::fs::create_dir_all(&dir).map_err(fail)?;
    write_shapefile(
        &dir.join("parks_utm9n"),
        PARKS_PRJ,
        &[Field::Text("PARK_ID", 12), Field::Text("NAME", 100)],
        &features,
    )?;
    Ok(features.len())
}

fn write_rec_sites(region: &Path, out: &Path) -> Result<usize, Failure> {
    let mut features = Vec::new();
    for row in read_csv(region, "rec_sites")? {
        let geometry = match geometry(&row)? {
            Some(g) => {
                let p = g
                    .point_values()
                    .ok_or_else(|| fail("a recreation site is not a point"))?;
                serde_json::json!({"type": "Point", "coordinates": [p[0], p[1]]})
            }
            None => serde_json::Value::Null,
        };
        let value = |name: &str| -> Result<serde_json::Value, Failure> {
            let v = field(&row, name)?;
            Ok(if v.is_empty() {
                serde_json::Value::Null
            } else {
                serde_json::Value::String(v.to_string())
            })
        };
        features.push(serde_json::json!({
            "type": "Feature",
            "properties": {
                "site_code": value("site_code")?,
                "site_name": value("site_name")?,
                "activity": value("activity")?,
            },
            "geometry": geometry,
        }));
    }
    let n = features.len();
    let collection = serde_json::json!({"type": "FeatureCollection", "features": features});
    let path = out.join("rec_sites.geojson");
    std::fs::write(&path, format!("{collection}\n"))
        .map_err(|e| fail(format!("{}: {e}", path.display())))?;
    Ok(n)
}

fn write_fitness(region: &Path, out: &Path) -> Result<usize, Failure> {
    let path = out.join("fitness_list.csv");
    let mut w =
        csv::Writer::from_path(&path).map_err(|e| fail(format!("{}: {e}", path.display())))?;
    w.write_record([
        "license_no",
        "business",
        "category",
        "latitude",
        "longitude",
    ])
    .map_err(fail)?;
    let rows = read_csv(region, "fitness_list")?;
    for row in &rows {
        let (lat, lon) = match geometry(row)? {
            Some(g) => {
                let p = g
                    .point_values()
                    .ok_or_else(|| fail("a fitness entry is not a point"))?;
                (format!("{}", p[1]), format!("{}", p[0]))
            }
            None => (String::new(), String::new()),
        };
        w.write_record([
            field(row, "license_no")?,
            field(row, "business")?,
            field(row, "category")?,
            &lat,
            &lon,
        ])
        .map_err(fail)?;
    }
    for bad in BAD_FITNESS_ROWS {
        w.write_record(bad).map_err(fail)?;
    }
    w.flush().map_err(fail)?;
    Ok(rows.len() + BAD_FITNESS_ROWS.len())
}

fn run(region: &Path, out: &Path) -> Result<(), Failure> {
    std::fs::create_dir_all(out).map_err(|e| fail(format!("{}: {e}", out.display())))?;
    let counties = write_blocks(region, out)?;
    write_areas(region, out, "counties")?;
    write_areas(region, out, "urban_areas")?;
    let parks = write_parks(region, out)?;
    let sites = write_rec_sites(region, out)?;
    let fitness = write_fitness(region, out)?;
    std::fs::write(
        out.join("README.txt"),
        "Invented data, not a real place: the raw downloads of ambit's demo region\n\
         (written by ambit-downloads from the output of ambit-region).\n\
         blocks_<county>.zip, counties.zip, urban_areas.zip: shapefiles, NAD83 longitude/latitude.\n\
         parks/parks_utm9n.shp: parks in NAD83 / UTM zone 9N.\n\
         rec_sites.geojson: recreation site registry. fitness_list.csv: licensing list with\n\
         latitude/longitude columns, some rows blank or garbled.\n",
    )
    .map_err(fail)?;
    eprintln!(
        "ambit-downloads: {counties} county block files, {parks} parks, {sites} recreation sites, {fitness} fitness list rows in {}",
        out.display()
    );
    Ok(())
}

const USAGE: &str = "usage: ambit-downloads --region DIR --out DIR\n  \
    --region DIR  the CSV folder written by ambit-region\n  \
    --out DIR     where the downloads are written (created if missing)\n";

fn main() -> ExitCode {
    let mut region = None;
    let mut out = None;
    let mut args = std::env::args().skip(1);
    while let Some(arg) = args.next() {
        match arg.as_str() {
            "--region" => region = args.next().map(PathBuf::from),
            "--out" => out = args.next().map(PathBuf::from),
            "--help" | "-h" => {
                print!("{USAGE}");
                return ExitCode::SUCCESS;
            }
            other => {
                eprint!("ambit-downloads: unknown argument {other}\n{USAGE}");
                return ExitCode::from(2);
            }
        }
    }
    let (Some(region), Some(out)) = (region, out) else {
        eprint!("ambit-downloads: --region and --out are required\n{USAGE}");
        return ExitCode::from(2);
    };
    match run(&region, &out) {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("ambit-downloads: {e}");
            ExitCode::FAILURE
        }
    }
}
