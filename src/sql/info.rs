//! ambit_version() and ambit_info(): what a results table records so that
//! next year's run can be compared with this year's.

use rusqlite::types::Value;
use serde_json::json;

use crate::blob::{geojson, MAX_NESTING};
use crate::geometry::validate::ACCEPTED_SRS;
use crate::sql::{entry, Args, SqlFunction, SqlResult};
use crate::units;

pub const FUNCTIONS: &[SqlFunction] = &[
    SqlFunction {
        name: "ambit_version",
        params: &[],
        optional: 0,
        deterministic: true,
        body: version,
    },
    SqlFunction {
        name: "ambit_info",
        params: &[],
        optional: 0,
        // The thread count can change between connections of one process.
        deterministic: false,
        body: info,
    },
];

/// The version of this build of ambit.
pub const VERSION: &str = env!("CARGO_PKG_VERSION");

fn version(_args: &Args) -> SqlResult {
    Ok(Value::Text(VERSION.to_string()))
}

/// The build's settings as one JSON object.
pub fn info_json() -> serde_json::Value {
    json!({
        "ambit_version": VERSION,
        "sqlite_version": rusqlite::version(),
        "sqlite_minimum": entry::minimum_sqlite_text(),
        "coordinates": {
            "axis_order": "longitude, latitude (degrees)",
            "accepted_srs_ids": ACCEPTED_SRS,
            "longitude_range": [-540, 540],
            "latitude_range": [-90, 90],
        },
        "ellipsoid": {
            "name": "WGS84",
            "a_m": 6378137.0,
            "inverse_flattening": 298.257223563,
            "source": "NIMA TR8350.2",
        },
        "units_m": {
            "mile": units::METRES_PER_MILE,
            "foot": units::METRES_PER_FOOT,
            "kilometre": units::METRES_PER_KILOMETRE,
            "source": "NIST SP 811, appendix B.8",
        },
        "codecs": {
            "input": ["GeoPackage geometry blob (OGC 12-128)", "ISO WKB", "WKT (OGC 06-103r4)", "GeoJSON (RFC 7946)"],
            "output": ["GeoPackage geometry blob, little endian, XY envelope", "ISO WKB, little endian", "WKT", "GeoJSON"],
            "geojson_default_decimals": geojson::DEFAULT_DECIMALS,
            "max_collection_nesting": MAX_NESTING,
        },
        "methods": {
            "distance": "Karney 2013 geodesic inverse (geographiclib-rs 0.2.7), 15 nm",
            "point_to_edge": "ellipsoidal gnomonic interception, Karney 2013 section 8",
            "edge_to_edge": "0 if the geodesic edges cross, else the least end-to-edge distance",
            "within_fast_path": "flat ellipsoid at mid-latitude with error bound 2 d^3 (1 + tan^2 lat) / (8 a^2) + 5e-8 m, |lat| <= 80, d <= 50 km",
            "area": "Karney 2013 section 6 (geographiclib-rs PolygonArea)",
            "edges": "geodesics",
        },
        "threads": rayon::current_num_threads(),
    })
}

fn info(_args: &Args) -> SqlResult {
    Ok(Value::Text(info_json().to_string()))
}
