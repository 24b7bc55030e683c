//! GeoJSON files (RFC 7946): a FeatureCollection (section 3.3), a single
//! Feature or Geometry, or newline-delimited GeoJSON (one Feature or
//! Geometry per line; a leading record separator 0x1E, as in RFC 8142
//! text sequences, is skipped). A Feature's `properties` become the
//! attributes, with their JSON types; its geometry is read as
//! ambit_from_geojson reads one. Coordinates are longitude/latitude on
//! WGS84 (RFC 7946, section 4).

use serde_json::{Map, Value};

use super::{Problem, RawRow, ReadError, RowSource};
use crate::blob::geojson;
use crate::geometry::Geometry;

/// Rows of one GeoJSON file.
pub enum Features {
    /// Features of a parsed document, next first.
    Whole {
        features: std::vec::IntoIter<Value>,
        row: u64,
    },
    /// Lines of a newline-delimited file.
    Lines { text: String, at: usize, row: u64 },
}

impl Features {
    /// Reads the text of `file`.
    pub fn open(bytes: Vec<u8>, file: &str) -> Result<Features, ReadError> {
        let corrupt = |message: String| ReadError::Corrupt {
            file: file.to_string(),
            message,
        };
        let text = String::from_utf8(bytes).map_err(|e| {
            corrupt(format!(
                "the file is not UTF-8 text (RFC 7946, section 11): {e}"
            ))
        })?;
        let lower = file.to_ascii_lowercase();
        let lines = [".ndjson", ".geojsonl", ".geojsons", ".jsonl", ".geojsonseq"]
            .iter()
            .any(|e| lower.ends_with(e));
        if !lines {
            match serde_json::from_str::<Value>(&text) {
                Ok(mut value) => {
                    let features = match value.get("type").and_then(Value::as_str) {
                        Some("FeatureCollection") => {
                            match value.get_mut("features").map(Value::take) {
                                Some(Value::Array(a)) => a,
                                _ => {
                                    return Err(corrupt(
                                        "the FeatureCollection has no \"features\" array".into(),
                                    ))
                                }
                            }
                        }
                        Some(_) => vec![value],
                        None => {
                            return Err(corrupt(
                                "the JSON text is not a GeoJSON object (no \"type\" member)".into(),
                            ))
                        }
                    };
                    return Ok(Features::Whole {
                        features: features.into_iter(),
                        row: 0,
                    });
                }
                Err(e) if e.to_string().starts_with("trailing characters") => {}
                Err(e) => return Err(corrupt(format!("invalid JSON: {e}"))),
            }
        }
        Ok(Features::Lines {
            text,
            at: 0,
            row: 0,
        })
    }
}

/// A feature (or bare geometry) value as a row.
fn row_of(value: &Value, row: u64) -> RawRow {
    let mut attributes = Map::new();
    let geometry = match value.get("type").and_then(Value::as_str) {
        Some("Feature") => {
            if let Some(Value::Object(p)) = value.get("properties") {
                attributes = p.clone();
            }
            match value.get("geometry") {
                None | Some(Value::Null) => Err(Problem::NoGeometry {
                    what: "the feature's geometry is null",
                }),
                Some(g) => geometry(g),
            }
        }
        Some(_) => geometry(value),
        None => Err(Problem::Malformed {
            message: "not a GeoJSON Feature or Geometry (no \"type\" member)".into(),
        }),
    };
    RawRow {
        row,
        geometry,
        attributes,
    }
}

fn geometry(g: &Value) -> Result<Geometry, Problem> {
    match geojson::parse(&g.to_string()) {
        Ok(Some(g)) => Ok(g),
        Ok(None) => Err(Problem::NoGeometry {
            what: "the feature's geometry is null",
        }),
        Err(e) => Err(Problem::Geometry(e)),
    }
}

impl RowSource for Features {
    fn next_row(&mut self) -> Result<Option<RawRow>, ReadError> {
        match self {
            Features::Whole { features, row } => Ok(features.next().map(|f| {
                *row += 1;
                row_of(&f, *row)
            })),
            Features::Lines { text, at, row } => loop {
                if *at >= text.len() {
                    return Ok(None);
                }
                let end = text[*at..].find('\n').map_or(text.len(), |i| *at + i);
                let line = text[*at..end].trim_start_matches('\u{1e}').trim();
                *at = end + 1;
                if line.is_empty() {
                    continue;
                }
                *row += 1;
                return Ok(Some(match serde_json::from_str::<Value>(line) {
                    Ok(v) => row_of(&v, *row),
                    Err(e) => RawRow {
                        row: *row,
                        geometry: Err(Problem::Malformed {
                            message: format!("invalid JSON: {e}"),
                        }),
                        attributes: Map::new(),
                    },
                }));
            },
        }
    }
}
