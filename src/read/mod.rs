//! Reading the files analysts download: ESRI shapefiles (plain or zipped),
//! CSV with longitude/latitude or WKT columns, GeoJSON and
//! newline-delimited GeoJSON. Pure Rust, no SQLite here: the SQL table
//! ambit_read (crate::sql::read) drives a [`Reader`].
//!
//! A [`Reader`] walks the files a path or pattern names ([`files`]), one
//! dataset at a time (a zip may hold several), and yields one [`Row`] per
//! record: the file it came from, the record's number in its file (from 1;
//! a CSV's header is not counted), the geometry as a GeoPackage blob in
//! longitude/latitude (srs_id 4326), the attributes as a JSON object with
//! their types, and, for a row that cannot be read, the reason. With
//! [`BadRows::Error`] (the default) the first such row stops the reading
//! with an error naming the file, the row and the reason; with
//! [`BadRows::Keep`] it comes out with a NULL geometry and the reason.
//! Every geometry passes the checks of [`crate::blob::encode_valid`]; a row
//! that fails them is a bad row, never dropped.

pub mod dbf;
pub mod delimited;
pub mod error;
pub mod features;
pub mod files;
pub mod shp;
pub mod srs;

use std::collections::VecDeque;
use std::path::{Path, PathBuf};
use std::sync::Arc;

use serde_json::{Map, Value};

use crate::blob;
use crate::geometry::Geometry;

pub use error::{Problem, ReadError};
pub use srs::Frame;

/// What to do with a row that cannot be read.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum BadRows {
    /// Stop with an error naming the file, row and reason.
    #[default]
    Error,
    /// Keep the row with a NULL geometry and the reason.
    Keep,
}

/// The formats ambit reads.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Format {
    Shapefile,
    Csv,
    GeoJson,
}

/// The options of a reading (the JSON object of ambit_read's second
/// argument).
#[derive(Clone, Debug, Default)]
pub struct Options {
    /// `bad_rows`: "error" (default) or "keep".
    pub bad_rows: BadRows,
    /// `format`: "shapefile", "csv" or "geojson"; by default from the name.
    pub format: Option<Format>,
    /// `srs`: the definition of the coordinates, instead of the file's own.
    pub srs: Option<String>,
    /// `lon`, `lat`, `wkt`: CSV column names.
    pub lon: Option<String>,
    pub lat: Option<String>,
    pub wkt: Option<String>,
    /// `delimiter`: a CSV's one-character field separator.
    pub delimiter: Option<u8>,
    /// `encoding`: the text encoding of a .dbf (a label such as
    /// "windows-1252"), instead of its .cpg or language driver id.
    pub encoding: Option<String>,
}

const OPTION_NAMES: &str = "bad_rows, format, srs, lon, lat, wkt, delimiter, encoding";

impl Options {
    /// Reads the options from a JSON object text.
    pub fn from_json(text: &str) -> Result<Options, ReadError> {
        let fail = |message: String| ReadError::Options { message };
        let value: Value = serde_json::from_str(text).map_err(|e| {
            fail(format!(
                "not a JSON object ({e}); for example '{{\"bad_rows\": \"keep\"}}'"
            ))
        })?;
        let Value::Object(map) = value else {
            return Err(fail(
                "must be a JSON object, for example '{\"bad_rows\": \"keep\"}'".into(),
            ));
        };
        let mut o = Options::default();
        for (key, v) in map {
            let Some(s) = v.as_str().map(str::to_string) else {
                return Err(fail(format!("{key} must be a text, got {v}")));
            };
            match key.as_str() {
                "bad_rows" => {
                    o.bad_rows = match s.as_str() {
                        "error" => BadRows::Error,
                        "keep" => BadRows::Keep,
                        _ => {
                            return Err(fail(format!(
                                "bad_rows must be \"error\" or \"keep\", got {s:?}"
                            )))
                        }
                    }
                }
                "format" => {
                    o.format = Some(match s.to_ascii_lowercase().as_str() {
                        "shapefile" => Format::Shapefile,
                        "csv" => Format::Csv,
                        "geojson" => Format::GeoJson,
                        _ => {
                            return Err(fail(format!(
                                "format must be \"shapefile\", \"csv\" or \"geojson\", got {s:?}"
                            )))
                        }
                    })
                }
                "srs" => o.srs = Some(s),
                "lon" => o.lon = Some(s),
                "lat" => o.lat = Some(s),
                "wkt" => o.wkt = Some(s),
                "delimiter" => {
                    let b = s.as_bytes();
                    if b.len() != 1 {
                        return Err(fail(format!(
                            "delimiter must be one ASCII character, got {s:?}"
                        )));
                    }
                    o.delimiter = Some(b[0]);
                }
                "encoding" => {
                    if encoding_rs::Encoding::for_label(s.as_bytes()).is_none() {
                        return Err(fail(format!("encoding {s:?} is not an encoding label ambit knows (for example \"utf-8\", \"windows-1252\", \"iso-8859-1\")")));
                    }
                    o.encoding = Some(s);
                }
                _ => {
                    return Err(fail(format!(
                        "unknown option {key:?}; the options are {OPTION_NAMES}"
                    )))
                }
            }
        }
        Ok(o)
    }
}

/// One row read.
#[derive(Clone, Debug, PartialEq)]
pub struct Row {
    /// The file (for a zip member, `archive.zip/member.shp`).
    pub file: Arc<str>,
    /// The record's number in its file, from 1.
    pub row: u64,
    /// A GeoPackage blob in longitude/latitude (srs_id 4326); `None` for a
    /// bad row.
    pub geom: Option<Vec<u8>>,
    /// The attributes, a JSON object.
    pub attributes: String,
    /// Why the row could not be read, for a kept bad row.
    pub problem: Option<String>,
}

/// A record as a format reader gives it, before conversion.
pub struct RawRow {
    pub row: u64,
    pub geometry: Result<Geometry, Problem>,
    pub attributes: Map<String, Value>,
}

/// The records of one dataset, in order.
pub trait RowSource {
    /// The next record, `None` at the end, or what stops the reading.
    fn next_row(&mut self) -> Result<Option<RawRow>, ReadError>;
}

/// One dataset: its name, rows and spatial reference.
struct Dataset {
    name: Arc<str>,
    rows: Box<dyn RowSource>,
    frame: Frame,
}

/// Reads the rows of every file a path or pattern names.
pub struct Reader {
    options: Options,
    paths: VecDeque<PathBuf>,
    pending: VecDeque<Dataset>,
    current: Option<Dataset>,
}

impl Reader {
    /// Finds the files of `pattern`; nothing is read until the first row
    /// is asked for.
    pub fn open(pattern: &str, options: Options) -> Result<Reader, ReadError> {
        Ok(Reader {
            options,
            paths: files::expand(pattern)?.into(),
            pending: VecDeque::new(),
            current: None,
        })
    }

    /// The next row, `None` after the last.
    pub fn next_row(&mut self) -> Result<Option<Row>, ReadError> {
        loop {
            if self.current.is_none() {
                if let Some(d) = self.pending.pop_front() {
                    self.current = Some(d);
                } else if let Some(p) = self.paths.pop_front() {
                    let sets = open_path(&p, &self.options)?;
                    self.pending.extend(sets);
                    continue;
                } else {
                    return Ok(None);
                }
            }
            let Some(d) = self.current.as_mut() else {
                continue;
            };
            match d.rows.next_row()? {
                None => self.current = None,
                Some(raw) => return finish(raw, d, self.options.bad_rows).map(Some),
            }
        }
    }
}

/// Converts a record to a row: reprojection, checks, the blob.
fn finish(raw: RawRow, d: &Dataset, bad_rows: BadRows) -> Result<Row, ReadError> {
    let geom = raw.geometry.and_then(|mut g| {
        d.frame.to_lonlat(&mut g)?;
        blob::encode_valid(&g, 4326, &crate::interrupt::Never).map_err(Problem::Geometry)
    });
    let attributes = Value::Object(raw.attributes).to_string();
    match geom {
        Ok(blob) => Ok(Row {
            file: Arc::clone(&d.name),
            row: raw.row,
            geom: Some(blob),
            attributes,
            problem: None,
        }),
        Err(problem) => match bad_rows {
            BadRows::Error => Err(ReadError::BadRow {
                file: d.name.to_string(),
                row: raw.row,
                problem,
            }),
            BadRows::Keep => Ok(Row {
                file: Arc::clone(&d.name),
                row: raw.row,
                geom: None,
                attributes,
                problem: Some(problem.to_string()),
            }),
        },
    }
}

/// Reads one file held in memory, named `name` (its extension tells the
/// format: .zip, .csv, .geojson and the others of ambit_read; a bare .shp
/// has no parts beside it in memory, so shapefiles come inside a .zip).
/// All rows at once: for tests and fuzzing, where files are small.
pub fn read_bytes(name: &str, bytes: Vec<u8>, options: &Options) -> Result<Vec<Row>, ReadError> {
    let sets = if name.to_ascii_lowercase().ends_with(".zip") {
        open_zip(name, bytes, options)?
    } else {
        match options.format.or_else(|| format_of(name)) {
            Some(Format::Shapefile) => {
                return Err(ReadError::MissingPart {
                    file: name.to_string(),
                    part: ".shx",
                })
            }
            Some(f) => vec![open_text(name, bytes, f, options)?],
            None => {
                return Err(ReadError::UnknownFormat {
                    file: name.to_string(),
                })
            }
        }
    };
    let mut rows = Vec::new();
    for mut d in sets {
        while let Some(raw) = d.rows.next_row()? {
            rows.push(finish(raw, &d, options.bad_rows)?);
        }
    }
    Ok(rows)
}

/// The format a file name tells, if any.
fn format_of(name: &str) -> Option<Format> {
    let lower = name.to_ascii_lowercase();
    let ends = |exts: &[&str]| exts.iter().any(|e| lower.ends_with(e));
    if ends(&[".shp"]) {
        Some(Format::Shapefile)
    } else if ends(&[".csv", ".tsv", ".txt"]) {
        Some(Format::Csv)
    } else if ends(&[
        ".geojson",
        ".json",
        ".ndjson",
        ".geojsonl",
        ".geojsons",
        ".jsonl",
        ".geojsonseq",
    ]) {
        Some(Format::GeoJson)
    } else {
        None
    }
}

/// The frame of a dataset: the option srs, else the file's own definition,
/// else longitude/latitude.
fn frame(options: &Options, own: Option<(&str, &str)>) -> Result<Frame, ReadError> {
    match (&options.srs, own) {
        (Some(s), _) => Frame::from_definition(s, "option srs"),
        (None, Some((text, file))) => Frame::from_definition(text, file),
        (None, None) => Ok(Frame::LonLat),
    }
}

/// The parts of one shapefile, as found beside its .shp.
struct ShapefileParts {
    name: String,
    shp: Vec<u8>,
    shx: Option<Vec<u8>>,
    dbf: Option<(String, Vec<u8>)>,
    prj: Option<(String, Vec<u8>)>,
    cpg: Option<(String, Vec<u8>)>,
}

/// The records of a shapefile.
struct ShapeRows {
    shp: Vec<u8>,
    records: Vec<(i32, usize, usize)>,
    table: dbf::Table,
    next: usize,
}

impl RowSource for ShapeRows {
    fn next_row(&mut self) -> Result<Option<RawRow>, ReadError> {
        let k = self.next;
        let Some(&(_, start, len)) = self.records.get(k) else {
            return Ok(None);
        };
        self.next += 1;
        let (attributes, geometry) = match self.table.record(k) {
            Ok((a, false)) => (a, shp::shape(&self.shp[start..start + len])),
            Ok((a, true)) => (
                a,
                Err(Problem::Malformed {
                    message: "the .dbf marks this record as deleted".into(),
                }),
            ),
            Err(p) => (Map::new(), Err(p)),
        };
        Ok(Some(RawRow {
            row: k as u64 + 1,
            geometry,
            attributes,
        }))
    }
}

fn open_shapefile(parts: ShapefileParts, options: &Options) -> Result<Dataset, ReadError> {
    let name = parts.name;
    let corrupt = |message: String| ReadError::Corrupt {
        file: name.clone(),
        message,
    };
    let shx = parts.shx.ok_or_else(|| ReadError::MissingPart {
        file: name.clone(),
        part: ".shx",
    })?;
    let (dbf_name, dbf_bytes) = parts.dbf.ok_or_else(|| ReadError::MissingPart {
        file: name.clone(),
        part: ".dbf",
    })?;
    let records = shp::records(&parts.shp).map_err(corrupt)?;
    let indexed = shp::index_records(&shx).map_err(corrupt)?;
    if indexed != records.len() {
        return Err(corrupt(format!(
            "the .shx lists {indexed} records but the .shp holds {}",
            records.len()
        )));
    }
    let codec = match (&options.encoding, &parts.cpg) {
        (Some(label), _) => {
            encoding_rs::Encoding::for_label(label.as_bytes()).map(dbf::Codec::Declared)
        }
        (None, Some((cpg_name, text))) => {
            let text = String::from_utf8_lossy(text);
            Some(dbf::codec_of_cpg(&text).ok_or_else(|| ReadError::Corrupt {
                file: cpg_name.clone(),
                message: format!(
                    "the code page {:?} is not one ambit knows; give the encoding with the option encoding (for example \"windows-1252\")",
                    text.trim()
                ),
            })?)
        }
        (None, None) => None,
    };
    let table = dbf::Table::open(dbf_bytes, codec, &dbf_name)?;
    if table.records != records.len() {
        return Err(corrupt(format!(
            "the .dbf holds {} records but the .shp {}: the two parts do not belong together",
            table.records,
            records.len()
        )));
    }
    let prj_text = parts
        .prj
        .as_ref()
        .map(|(n, b)| (String::from_utf8_lossy(b).into_owned(), n.clone()));
    let frame = frame(
        options,
        prj_text.as_ref().map(|(t, n)| (t.as_str(), n.as_str())),
    )?;
    Ok(Dataset {
        name: Arc::from(name.as_str()),
        rows: Box::new(ShapeRows {
            shp: parts.shp,
            records,
            table,
            next: 0,
        }),
        frame,
    })
}

/// A CSV or GeoJSON dataset from its bytes.
fn open_text(
    name: &str,
    bytes: Vec<u8>,
    format: Format,
    options: &Options,
) -> Result<Dataset, ReadError> {
    let frame = frame(options, None)?;
    let rows: Box<dyn RowSource> = match format {
        Format::Csv => Box::new(delimited::Delimited::open(
            bytes,
            name,
            options,
            frame.is_lonlat(),
        )?),
        _ => Box::new(features::Features::open(bytes, name)?),
    };
    Ok(Dataset {
        name: Arc::from(name),
        rows,
        frame,
    })
}

/// The datasets of one file.
fn open_path(path: &Path, options: &Options) -> Result<Vec<Dataset>, ReadError> {
    let name = path.display().to_string();
    if name.to_ascii_lowercase().ends_with(".zip") {
        return open_zip(&name, files::read(path)?, options);
    }
    match options.format.or_else(|| format_of(&name)) {
        Some(Format::Shapefile) => {
            let shp = files::read(path)?;
            let named =
                |p: Option<(PathBuf, Vec<u8>)>| p.map(|(p, b)| (p.display().to_string(), b));
            let parts = ShapefileParts {
                name: name.clone(),
                shp,
                shx: files::sibling(path, "shx")?.map(|(_, b)| b),
                dbf: named(files::sibling(path, "dbf")?),
                prj: named(files::sibling(path, "prj")?),
                cpg: named(files::sibling(path, "cpg")?),
            };
            Ok(vec![open_shapefile(parts, options)?])
        }
        Some(f) => Ok(vec![open_text(&name, files::read(path)?, f, options)?]),
        None => Err(ReadError::UnknownFormat { file: name }),
    }
}

/// The datasets of a zip archive: every shapefile (with the parts of the
/// same name beside it in the archive), then every .csv, .tsv, .geojson,
/// .ndjson and .geojsonl member, in name order. Other members (metadata,
/// spatial index files, read-me text) are not datasets and are passed over.
fn open_zip(name: &str, bytes: Vec<u8>, options: &Options) -> Result<Vec<Dataset>, ReadError> {
    let mut members = files::unzip(bytes, name)?;
    members.sort_by(|a, b| a.0.cmp(&b.0));
    let listing: Vec<String> = members.iter().map(|m| m.0.clone()).collect();
    let lower = |m: &str| m.to_ascii_lowercase();
    let mut out = Vec::new();
    let stems: Vec<String> = members
        .iter()
        .filter(|(m, _)| lower(m).ends_with(".shp"))
        .map(|(m, _)| m[..m.len() - 4].to_string())
        .collect();
    for stem in stems {
        let mut take = |ext: &str| -> Option<(String, Vec<u8>)> {
            let i = members.iter().position(|(m, _)| {
                m.len() == stem.len() + ext.len()
                    && m.starts_with(stem.as_str())
                    && m[stem.len()..].eq_ignore_ascii_case(ext)
            })?;
            let (m, b) = members.remove(i);
            Some((format!("{name}/{m}"), b))
        };
        let Some((shp_name, shp)) = take(".shp") else {
            continue;
        };
        let parts = ShapefileParts {
            name: shp_name,
            shp,
            shx: take(".shx").map(|(_, b)| b),
            dbf: take(".dbf"),
            prj: take(".prj"),
            cpg: take(".cpg"),
        };
        out.push(open_shapefile(parts, options)?);
    }
    for (m, bytes) in members {
        let l = lower(&m);
        let format = if l.ends_with(".csv") || l.ends_with(".tsv") {
            Format::Csv
        } else if [".geojson", ".ndjson", ".geojsonl"]
            .iter()
            .any(|e| l.ends_with(e))
        {
            Format::GeoJson
        } else {
            continue;
        };
        out.push(open_text(&format!("{name}/{m}"), bytes, format, options)?);
    }
    if out.is_empty() {
        return Err(ReadError::Corrupt {
            file: name.to_string(),
            message: format!(
                "the archive holds no shapefile (.shp), CSV or GeoJSON member; its members are {listing:?}"
            ),
        });
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geometry::Shape;

    #[test]
    fn patterns_match_names_without_backtracking_blowup() {
        let m = |p: &str, n: &str| {
            files::matches(
                &p.chars().collect::<Vec<_>>(),
                &n.chars().collect::<Vec<_>>(),
            )
        };
        assert!(m("blocks_*.zip", "blocks_99001.zip"));
        assert!(m("blocks_?????.zip", "blocks_99001.zip"));
        assert!(!m("blocks_*.zip", "blocks_99001.shp"));
        assert!(!m("blocks_??.zip", "blocks_99001.zip"));
        // A pattern that is exponential for naive recursive matching.
        let long = "a".repeat(5000);
        assert!(!m("*a*a*a*a*a*a*a*a*b", &long));
    }

    #[test]
    fn code_pages_are_named_as_the_cpg_files_name_them() {
        // Labels of the WHATWG Encoding Standard (which maps iso-8859-1 to
        // windows-1252); DOS code pages are not in it.
        let name = |t: &str| match dbf::codec_of_cpg(t) {
            Some(dbf::Codec::Declared(e)) => e.name().to_string(),
            Some(dbf::Codec::AsciiOnly(p)) => format!("ascii-only {p}"),
            Some(dbf::Codec::Undeclared) => "undeclared".into(),
            None => "unknown".into(),
        };
        assert_eq!(name("UTF-8\r\n"), "UTF-8");
        assert_eq!(name("1252"), "windows-1252");
        assert_eq!(name("88591"), "windows-1252");
        assert_eq!(name("ISO-8859-2"), "ISO-8859-2");
        assert_eq!(name("437"), "ascii-only 437");
        assert_eq!(name("no such page"), "unknown");
    }

    /// A polygon record's content (ESRI 1998, "Polygon"): type 5, box,
    /// NumParts, NumPoints, Parts, Points.
    fn polygon_record(rings: &[&[(f64, f64)]]) -> Vec<u8> {
        let mut c = 5i32.to_le_bytes().to_vec();
        c.extend([0u8; 32]);
        let points: usize = rings.iter().map(|r| r.len()).sum();
        c.extend((rings.len() as i32).to_le_bytes());
        c.extend((points as i32).to_le_bytes());
        let mut start = 0i32;
        for r in rings {
            c.extend(start.to_le_bytes());
            start += r.len() as i32;
        }
        for r in rings {
            for (x, y) in r.iter() {
                c.extend(x.to_le_bytes());
                c.extend(y.to_le_bytes());
            }
        }
        c
    }

    #[test]
    fn holes_go_to_the_outer_ring_that_contains_them() {
        // ESRI 1998: outer rings clockwise, holes counterclockwise.
        let a: &[(f64, f64)] = &[(0.0, 0.0), (0.0, 1.0), (1.0, 1.0), (1.0, 0.0), (0.0, 0.0)];
        let b: &[(f64, f64)] = &[(2.0, 0.0), (2.0, 1.0), (3.0, 1.0), (3.0, 0.0), (2.0, 0.0)];
        let hole: &[(f64, f64)] = &[(2.2, 0.2), (2.8, 0.2), (2.8, 0.8), (2.2, 0.8), (2.2, 0.2)];
        let g = shp::shape(&polygon_record(&[a, b, hole])).unwrap();
        let Shape::MultiPolygon(polys) = g.shape else {
            panic!("two outer rings make a multipolygon: {g:?}");
        };
        assert_eq!(polys.len(), 2);
        assert_eq!(polys[0].len(), 1);
        assert_eq!(polys[1].len(), 2, "the hole lies in the second outer ring");
        // One ring drawn counterclockwise (against the description) is
        // still an area, not a hole of nothing.
        let ccw: Vec<(f64, f64)> = a.iter().rev().copied().collect();
        let g = shp::shape(&polygon_record(&[&ccw])).unwrap();
        assert!(matches!(g.shape, Shape::Polygon(ref r) if r.len() == 1));
    }

    #[test]
    fn a_csv_in_utm_is_converted_with_the_srs_option() {
        let options = Options::from_json(r#"{"srs": "EPSG:32609"}"#).unwrap();
        let rows = read_bytes("d.csv", b"x,y\n500000,0\n".to_vec(), &options).unwrap();
        let g = blob::decode(rows[0].geom.as_ref().unwrap())
            .unwrap()
            .geometry;
        let p = g.point_values().unwrap();
        // UTM zone 9: central meridian 6 * 9 - 183 = -129 degrees, false
        // easting 500000 m, false northing 0 on the equator (the UTM
        // definition).
        assert!((p[0] + 129.0).abs() < 1e-9 && p[1].abs() < 1e-9, "{p:?}");
    }
}
