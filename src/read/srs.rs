//! The spatial reference of a file's coordinates: longitude/latitude as
//! ambit measures, or a projected system to convert from.
//!
//! Read from a shapefile's .prj (ESRI WKT1), or given by the user as the
//! option `srs` (an `EPSG:n` code, WKT or a PROJ string). GeoJSON is
//! longitude/latitude on WGS84 by its standard (RFC 7946, section 4).
//! NAD83 is taken as WGS84: they differ by about a metre, far below any
//! access threshold (design.md, "Semantics").

use super::ReadError;

/// How a file's coordinates become longitude/latitude.
#[derive(Debug)]
pub enum Frame {
    /// Already longitude, latitude in degrees.
    LonLat,
}

impl Frame {
    /// The frame of a definition found in (or given for) `file`; an error
    /// naming the file and the definition when it cannot be read or used.
    pub fn from_definition(definition: &str, file: &str) -> Result<Frame, ReadError> {
        let text = definition.trim().trim_start_matches('\u{feff}').trim();
        let upper = text.to_ascii_uppercase();
        let fail = |message: &str| ReadError::Definition {
            file: file.to_string(),
            definition: text.to_string(),
            message: message.to_string(),
        };
        if text.is_empty() {
            return Err(fail("the definition is empty"));
        }
        let lonlat_codes = [
            "EPSG:4326",
            "EPSG:4269",
            "OGC:CRS84",
            "CRS:84",
            "4326",
            "4269",
        ];
        if lonlat_codes.contains(&upper.replace(' ', "").as_str()) {
            return Ok(Frame::LonLat);
        }
        // WKT1 (OGC 01-009, ESRI .prj): a GEOGCS at the top level is
        // geographic; WKT2 (ISO 19162): GEOGCRS or GEODCRS.
        let keyword: String = upper
            .chars()
            .take_while(|c| c.is_ascii_alphanumeric() || *c == '_')
            .collect();
        let bracket = upper[keyword.len()..].trim_start().starts_with(['[', '(']);
        if bracket
            && matches!(
                keyword.as_str(),
                "GEOGCS" | "GEOGCRS" | "GEODCRS" | "GEOGRAPHICCRS"
            )
        {
            return Ok(Frame::LonLat);
        }
        if upper.starts_with("+PROJ=LONGLAT") || upper.starts_with("+PROJ=LATLONG") {
            return Ok(Frame::LonLat);
        }
        let projected = (bracket
            && matches!(keyword.as_str(), "PROJCS" | "PROJCRS" | "PROJECTEDCRS"))
            || upper.starts_with("+PROJ=")
            || upper.starts_with("EPSG:");
        if projected {
            return Err(fail(
                "a projected system; this build of ambit reads only longitude/latitude files (convert the file to EPSG:4326 first)",
            ));
        }
        Err(fail(
            "not a definition ambit can read (EPSG:n, WKT as in a .prj file, or a PROJ string)",
        ))
    }
}

impl Frame {
    /// Converts `g` to longitude/latitude in place.
    pub fn to_lonlat(&self, _g: &mut crate::geometry::Geometry) -> Result<(), super::Problem> {
        match self {
            Frame::LonLat => Ok(()),
        }
    }
}
