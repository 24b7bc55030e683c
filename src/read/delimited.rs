//! CSV (RFC 4180) and other delimited text: points from a longitude and a
//! latitude column, or any geometry from a WKT column.
//!
//! The first record is the header. Without the options `lon`/`lat` or
//! `wkt`, the columns are found by name (case-insensitive): longitude from
//! lon, lng, long, longitude or x; latitude from lat, latitude or y;
//! WKT from wkt, geometry or geom. The other columns become attributes, as
//! TEXT (a CSV file has no types: '01001' keeps its zero; CAST what you
//! need); an empty field is NULL. A UTF-8 byte order mark is skipped.

use serde_json::{Map, Value};

use super::{Problem, RawRow, ReadError, RowSource};
use crate::blob::wkt;
use crate::geometry::Geometry;

/// Where the geometry comes from.
enum Columns {
    LonLat { lon: usize, lat: usize },
    Wkt(usize),
}

/// Rows of one delimited file.
pub struct Delimited {
    reader: csv::Reader<std::io::Cursor<Vec<u8>>>,
    header: Vec<String>,
    columns: Columns,
    record: csv::ByteRecord,
    row: u64,
    check_range: bool,
    file: String,
}

fn find(header: &[String], given: Option<&str>, names: &[&str]) -> Option<usize> {
    match given {
        Some(g) => header.iter().position(|h| h == g),
        None => header
            .iter()
            .position(|h| names.iter().any(|n| h.eq_ignore_ascii_case(n))),
    }
}

impl Delimited {
    /// Opens the text of `file`; `check_range` when its coordinates are
    /// longitude/latitude (no `srs` given).
    pub fn open(
        bytes: Vec<u8>,
        file: &str,
        options: &super::Options,
        check_range: bool,
    ) -> Result<Delimited, ReadError> {
        let delimiter =
            options
                .delimiter
                .unwrap_or(if file.to_ascii_lowercase().ends_with(".tsv") {
                    b'\t'
                } else {
                    b','
                });
        let mut bytes = bytes;
        if bytes.starts_with(&[0xEF, 0xBB, 0xBF]) {
            bytes.drain(..3);
        }
        let mut reader = csv::ReaderBuilder::new()
            .delimiter(delimiter)
            .flexible(true)
            .has_headers(true)
            .from_reader(std::io::Cursor::new(bytes));
        let corrupt = |message: String| ReadError::Corrupt {
            file: file.to_string(),
            message,
        };
        let header: Vec<String> = reader
            .byte_headers()
            .map_err(|e| corrupt(format!("cannot read the header line: {e}")))?
            .iter()
            .map(|h| String::from_utf8_lossy(h).trim().to_string())
            .collect();
        let wkt_col = find(
            &header,
            options.wkt.as_deref(),
            &["wkt", "geometry", "geom"],
        );
        let lon = find(
            &header,
            options.lon.as_deref(),
            &["lon", "lng", "long", "longitude", "x"],
        );
        let lat = find(&header, options.lat.as_deref(), &["lat", "latitude", "y"]);
        let missing = |what: &str, given: &Option<String>| {
            corrupt(match given {
                Some(g) => format!("no column named {g:?} (option {what}); the header is {header:?}"),
                None => format!("cannot tell the geometry columns from the header {header:?}; name them with the options lon and lat, or wkt"),
            })
        };
        let columns = if options.wkt.is_some()
            || (options.lon.is_none()
                && options.lat.is_none()
                && wkt_col.is_some()
                && (lon.is_none() || lat.is_none()))
        {
            Columns::Wkt(wkt_col.ok_or_else(|| missing("wkt", &options.wkt))?)
        } else {
            Columns::LonLat {
                lon: lon.ok_or_else(|| missing("lon", &options.lon))?,
                lat: lat.ok_or_else(|| missing("lat", &options.lat))?,
            }
        };
        Ok(Delimited {
            reader,
            header,
            columns,
            record: csv::ByteRecord::new(),
            row: 0,
            check_range,
            file: file.to_string(),
        })
    }

    fn geometry(&self, fields: &[Option<String>]) -> Result<Geometry, Problem> {
        let text = |i: usize| fields.get(i).cloned().flatten().unwrap_or_default();
        match self.columns {
            Columns::Wkt(i) => {
                let t = text(i);
                if t.trim().is_empty() {
                    return Err(Problem::NoGeometry {
                        what: "the WKT column is blank",
                    });
                }
                wkt::parse(&t).map_err(Problem::Geometry)
            }
            Columns::LonLat { lon, lat } => {
                let number = |i: usize| -> Result<f64, Problem> {
                    let t = text(i);
                    t.trim()
                        .parse::<f64>()
                        .ok()
                        .filter(|v| v.is_finite())
                        .ok_or(Problem::NotANumber {
                            column: self.header[i].clone(),
                            text: t,
                        })
                };
                let (x, y) = (number(lon)?, number(lat)?);
                if self.check_range && (x.abs() > 180.0 || y.abs() > 90.0) {
                    let swapped = y.abs() <= 180.0 && x.abs() <= 90.0;
                    return Err(Problem::OutOfRange {
                        lon: x,
                        lat: y,
                        swapped,
                    });
                }
                Ok(Geometry::point(x, y))
            }
        }
    }
}

impl RowSource for Delimited {
    fn next_row(&mut self) -> Result<Option<RawRow>, ReadError> {
        match self.reader.read_byte_record(&mut self.record) {
            Ok(false) => return Ok(None),
            Ok(true) => {}
            Err(e) => {
                return Err(ReadError::Corrupt {
                    file: self.file.clone(),
                    message: format!("after data row {}: {e}", self.row),
                })
            }
        }
        self.row += 1;
        let mut fields = Vec::with_capacity(self.record.len());
        let mut problem = None;
        for (i, f) in self.record.iter().enumerate() {
            match std::str::from_utf8(f) {
                Ok("") => fields.push(None),
                Ok(s) => fields.push(Some(s.to_string())),
                Err(_) => {
                    fields.push(None);
                    problem.get_or_insert(Problem::Attribute {
                        field: self
                            .header
                            .get(i)
                            .cloned()
                            .unwrap_or_else(|| format!("{}", i + 1)),
                        message: "the text is not UTF-8; convert the file to UTF-8".into(),
                    });
                }
            }
        }
        if fields.len() != self.header.len() && problem.is_none() {
            problem = Some(Problem::Malformed {
                message: format!(
                    "the line has {} fields, the header {}",
                    fields.len(),
                    self.header.len()
                ),
            });
        }
        let skip: &[usize] = match self.columns {
            Columns::LonLat { lon, lat } => &[lon, lat],
            Columns::Wkt(i) => &[i, usize::MAX],
        };
        let mut attributes = Map::new();
        for (i, name) in self.header.iter().enumerate() {
            if skip.contains(&i) {
                continue;
            }
            let v = fields
                .get(i)
                .cloned()
                .flatten()
                .map_or(Value::Null, Value::String);
            attributes.insert(name.clone(), v);
        }
        let geometry = match problem {
            Some(p) => Err(p),
            None => self.geometry(&fields),
        };
        Ok(Some(RawRow {
            row: self.row,
            geometry,
            attributes,
        }))
    }
}
