//! The spatial reference of a file's coordinates: longitude/latitude as
//! ambit measures, or another system converted with
//! [`crate::reproject::Reprojection`].
//!
//! Read from a shapefile's .prj (ESRI WKT1), or given by the user as the
//! option `srs` (an `EPSG:n` code, WKT1/ESRI WKT, WKT2 or a PROJ string),
//! which takes the place of the file's own. A shapefile without a .prj and
//! CSV are read as longitude/latitude unless `srs` says otherwise; GeoJSON
//! is longitude/latitude on WGS84 by its standard (RFC 7946, section 4).
//! NAD83 is taken as WGS84: they differ by about a metre, far below any
//! access threshold (design.md, "Semantics").

use super::{Problem, ReadError};
use crate::geometry::Geometry;
use crate::reproject::Reprojection;

/// How a file's coordinates become longitude/latitude.
#[derive(Debug)]
pub enum Frame {
    /// Already WGS84 (or NAD83) longitude, latitude in degrees.
    LonLat,
    /// Converted vertex by vertex.
    Convert(Box<Reprojection>),
}

impl Frame {
    /// The frame of a definition found in (or given for) `file`; an error
    /// naming the file and the definition when it cannot be read or used.
    pub fn from_definition(definition: &str, file: &str) -> Result<Frame, ReadError> {
        let text = definition.trim().trim_start_matches('\u{feff}').trim();
        let r = Reprojection::from_definition(text).map_err(|e| ReadError::Definition {
            file: file.to_string(),
            message: e.to_string(),
        })?;
        if r.is_lonlat() && identity(&r) {
            return Ok(Frame::LonLat);
        }
        Ok(Frame::Convert(Box::new(r)))
    }

    /// True when coordinates are checked as longitude/latitude as read.
    pub fn is_lonlat(&self) -> bool {
        matches!(self, Frame::LonLat)
    }

    /// Converts `g` to longitude/latitude in place.
    pub fn to_lonlat(&self, g: &mut Geometry) -> Result<(), Problem> {
        match self {
            Frame::LonLat => Ok(()),
            Frame::Convert(r) => r.to_lonlat(g).map_err(Problem::Geometry),
        }
    }
}

/// True when a longitude/latitude system leaves coordinates as they are
/// (WGS84 or NAD83, Greenwich, degrees): then no vertex needs converting.
/// Tested on three points spread over the globe, to 1e-11 degrees (about
/// a micrometre).
fn identity(r: &Reprojection) -> bool {
    [(-120.5, 38.25), (10.0, -45.0), (150.0, 70.0)]
        .iter()
        .all(|&(x, y)| {
            let mut g = Geometry::point(x, y);
            r.to_lonlat(&mut g).is_ok()
                && g.point_values()
                    .is_some_and(|p| (p[0] - x).abs() < 1e-11 && (p[1] - y).abs() < 1e-11)
        })
}
