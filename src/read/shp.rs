//! ESRI shapefile main files (.shp) and index files (.shx), after the
//! ESRI Shapefile Technical Description (July 1998):
//!
//! - main file header, 100 bytes ("The Main File Header", table 1): file
//!   code 9994 at byte 0 and the file length in 16-bit words at byte 24,
//!   big endian; version 1000 at byte 28 and the shape type at byte 32,
//!   little endian; then the bounding box;
//! - each record ("Record Headers", table 2): its number (from 1) and its
//!   content length in 16-bit words, 4 bytes each big endian; then the
//!   content, starting with its shape type, little endian;
//! - contents ("Shape Types in XY Space" and the Z and M sections): Null
//!   (0); Point (1, 11, 21): X, Y; MultiPoint (8, 18, 28): box, NumPoints,
//!   points; PolyLine (3, 13, 23) and Polygon (5, 15, 25): box, NumParts,
//!   NumPoints, the index of each part's first point, points. Z and M
//!   arrays follow the points in the Z and M types; ambit reads X and Y
//!   only. MultiPatch (31) is not read;
//! - a polygon's rings: "the vertices of a ring are in clockwise order" for
//!   an outer ring, holes counterclockwise; a hole belongs to the outer ring
//!   that contains it. Each outer ring starts a polygon of the result
//!   (POLYGON for one, MULTIPOLYGON for several); a counterclockwise ring
//!   inside no outer ring is taken as an outer ring.
//! - the index file (.shx, "Organization of the Index File"): the same
//!   100-byte header, then 8 bytes per record.
//!
//! Every count is checked against the bytes the record holds before
//! anything is allocated for it, so a hostile file costs at most its size.

use crate::geometry::{Dimensions, Geometry, Part, Shape};

use super::Problem;

/// The length of the main file and index file headers.
pub const HEADER_LEN: usize = 100;

fn be_i32(b: &[u8], at: usize) -> i32 {
    i32::from_be_bytes([b[at], b[at + 1], b[at + 2], b[at + 3]])
}

fn le_i32(b: &[u8], at: usize) -> i32 {
    i32::from_le_bytes([b[at], b[at + 1], b[at + 2], b[at + 3]])
}

fn le_f64(b: &[u8], at: usize) -> f64 {
    let mut a = [0u8; 8];
    a.copy_from_slice(&b[at..at + 8]);
    f64::from_le_bytes(a)
}

/// Checks a main or index file header; returns the file length it
/// announces, in bytes, or what is wrong.
pub fn check_header(bytes: &[u8], what: &str) -> Result<usize, String> {
    if bytes.len() < HEADER_LEN {
        return Err(format!(
            "the {what} has {} bytes, fewer than its 100-byte header",
            bytes.len()
        ));
    }
    let code = be_i32(bytes, 0);
    if code != 9994 {
        return Err(format!(
            "the {what} does not start with the shapefile file code 9994 (found {code}): not a shapefile, or corrupt"
        ));
    }
    let words = be_i32(bytes, 24);
    if words < 50 {
        return Err(format!(
            "the {what} header gives an impossible file length ({words} words)"
        ));
    }
    Ok(words as usize * 2)
}

/// Where each record's content lies in the main file: (record number,
/// start, length in bytes). Stops with what is wrong when a record does
/// not fit in the file.
pub fn records(bytes: &[u8]) -> Result<Vec<(i32, usize, usize)>, String> {
    let announced = check_header(bytes, ".shp")?;
    let end = announced.min(bytes.len());
    let mut at = HEADER_LEN;
    let mut out = Vec::new();
    while at + 8 <= end {
        let number = be_i32(bytes, at);
        let words = be_i32(bytes, at + 4);
        let start = at + 8;
        if words < 2 || start + words as usize * 2 > bytes.len() {
            return Err(format!(
                "record {} at byte {at} announces {} bytes of content, which the file (of {} bytes) does not hold: the .shp is truncated or corrupt",
                out.len() + 1,
                words as i64 * 2,
                bytes.len()
            ));
        }
        let len = words as usize * 2;
        out.push((number, start, len));
        at = start + len;
    }
    Ok(out)
}

/// The number of records an index file lists.
pub fn index_records(bytes: &[u8]) -> Result<usize, String> {
    let announced = check_header(bytes, ".shx")?;
    Ok((announced.min(bytes.len()) - HEADER_LEN) / 8)
}

/// The geometry of one record's content, longitude/latitude untouched.
pub fn shape(content: &[u8]) -> Result<Geometry, Problem> {
    let bad = |message: String| Problem::Malformed { message };
    let len = content.len();
    if len < 4 {
        return Err(bad("the record is too short for its shape type".into()));
    }
    let kind = le_i32(content, 0);
    let need = |n: usize| -> Result<(), Problem> {
        if n > len {
            Err(bad(format!(
                "a shape of type {kind} needs {n} bytes, the record holds {len}"
            )))
        } else {
            Ok(())
        }
    };
    let xy = Dimensions::Xy;
    match kind {
        0 => Err(Problem::NoGeometry {
            what: "null shape (the record has no geometry)",
        }),
        1 | 11 | 21 => {
            need(20)?;
            Ok(Geometry::new(
                xy,
                Shape::Point(vec![le_f64(content, 4), le_f64(content, 12)]),
            ))
        }
        8 | 18 | 28 => {
            need(40)?;
            let n = le_i32(content, 36);
            if n < 0 || (n as usize) > (len - 40) / 16 {
                return Err(bad(format!(
                    "the record announces {n} points, which do not fit in its {len} bytes"
                )));
            }
            let points = (0..n as usize)
                .map(|i| vec![le_f64(content, 40 + 16 * i), le_f64(content, 48 + 16 * i)])
                .collect();
            Ok(Geometry::new(xy, Shape::MultiPoint(points)))
        }
        3 | 13 | 23 | 5 | 15 | 25 => {
            need(44)?;
            let parts = le_i32(content, 36);
            let points = le_i32(content, 40);
            let fits = parts >= 0
                && points >= 0
                && (parts as u64) * 4 + (points as u64) * 16 + 44 <= len as u64;
            if !fits {
                return Err(bad(format!(
                    "the record announces {parts} parts and {points} points, which do not fit in its {len} bytes"
                )));
            }
            let (parts, points) = (parts as usize, points as usize);
            let first = 44 + 4 * parts;
            let mut starts = Vec::with_capacity(parts);
            for p in 0..parts {
                let s = le_i32(content, 44 + 4 * p);
                let prev = starts.last().copied().unwrap_or(0);
                if s < 0 || (s as usize) > points || (s as usize) < prev || (p == 0 && s != 0) {
                    return Err(bad(format!(
                        "part {} starts at point {s}, which is not in order within the record's {points} points",
                        p + 1
                    )));
                }
                starts.push(s as usize);
            }
            let rings: Vec<Part> = (0..parts)
                .map(|p| {
                    let end = starts.get(p + 1).copied().unwrap_or(points);
                    let mut part = Vec::with_capacity(2 * (end - starts[p]));
                    for i in starts[p]..end {
                        part.push(le_f64(content, first + 16 * i));
                        part.push(le_f64(content, first + 16 * i + 8));
                    }
                    part
                })
                .collect();
            if matches!(kind, 3 | 13 | 23) {
                let shape = match rings.len() {
                    1 => Shape::LineString(rings.into_iter().next().unwrap_or_default()),
                    _ => Shape::MultiLineString(rings),
                };
                Ok(Geometry::new(xy, shape))
            } else {
                Ok(Geometry::new(xy, polygons(rings)))
            }
        }
        31 => Err(bad("MultiPatch shapes (type 31) are not read".into())),
        other => Err(bad(format!("unknown shape type {other}"))),
    }
}

/// Twice the signed planar area of a ring (positive counterclockwise).
fn signed_area2(ring: &[f64]) -> f64 {
    let n = ring.len() / 2;
    let mut s = 0.0;
    for i in 0..n.saturating_sub(1) {
        s += ring[2 * i] * ring[2 * i + 3] - ring[2 * i + 2] * ring[2 * i + 1];
    }
    s
}

/// Planar point-in-ring by crossing number.
fn inside(ring: &[f64], x: f64, y: f64) -> bool {
    let n = ring.len() / 2;
    let mut c = false;
    for i in 0..n.saturating_sub(1) {
        let (x1, y1, x2, y2) = (
            ring[2 * i],
            ring[2 * i + 1],
            ring[2 * i + 2],
            ring[2 * i + 3],
        );
        if (y1 > y) != (y2 > y) && x < (x2 - x1) * (y - y1) / (y2 - y1) + x1 {
            c = !c;
        }
    }
    c
}

/// Groups rings into polygons by their orientation (module doc).
fn polygons(rings: Vec<Part>) -> Shape {
    let mut outer: Vec<(Vec<Part>, f64)> = Vec::new();
    let mut holes: Vec<Part> = Vec::new();
    for ring in rings {
        let a = signed_area2(&ring);
        if a <= 0.0 {
            outer.push((vec![ring], -a));
        } else {
            holes.push(ring);
        }
    }
    for hole in holes {
        let target = if outer.len() == 1 {
            Some(0)
        } else {
            let (x, y) = (hole.first().copied(), hole.get(1).copied());
            match (x, y) {
                (Some(x), Some(y)) => outer
                    .iter()
                    .enumerate()
                    .filter(|(_, (rings, _))| inside(&rings[0], x, y))
                    .min_by(|a, b| a.1 .1.total_cmp(&b.1 .1))
                    .map(|(i, _)| i),
                _ => None,
            }
        };
        match target {
            Some(i) => outer[i].0.push(hole),
            None => {
                let a = signed_area2(&hole).abs();
                outer.push((vec![hole], a));
            }
        }
    }
    if outer.len() == 1 {
        Shape::Polygon(outer.pop().map(|o| o.0).unwrap_or_default())
    } else {
        Shape::MultiPolygon(outer.into_iter().map(|o| o.0).collect())
    }
}
