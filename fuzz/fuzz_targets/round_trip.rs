//! Round trips between every codec: a blob that decodes and passes the
//! checks for use goes GeoPackage -> WKB -> WKT -> GeoPackage unchanged,
//! and through GeoJSON (at 15 decimals) to a geometry of the same type.
//! Z and M may hold NaN (only x and y are checked for use): WKT writes it
//! as `NaN`, which WKT reading refuses, and GeoJSON as `null`, which
//! GeoJSON reading refuses, so such geometries skip those legs.
#![no_main]

use ambit::blob::{self, geojson, gpkg, wkb, wkt};
use ambit::geometry::Geometry;
use libfuzzer_sys::fuzz_target;

/// Equality with NaN ordinates compared by their bits.
fn same(a: &Geometry, b: &Geometry) -> bool {
    wkb::write(a) == wkb::write(b)
}

fuzz_target!(|data: &[u8]| {
    let Ok(decoded) = blob::decode_valid(data) else {
        return;
    };
    let g = decoded.geometry;
    let gp = gpkg::write(&g, decoded.srs_id);
    let (from_gpkg, header) = gpkg::read(&gp).expect("ambit reads the blobs it writes");
    assert_eq!(header.srs_id, decoded.srs_id);
    assert!(same(&from_gpkg, &g));
    let from_wkb = wkb::read_exact(&wkb::write(&g)).expect("ambit reads the WKB it writes");
    assert!(same(&from_wkb, &g));
    let text = wkt::write(&g);
    match wkt::parse(&text) {
        Ok(from_wkt) => assert_eq!(from_wkt, g, "{text:?}"),
        Err(e) => assert!(
            text.contains("NaN") || text.contains("inf"),
            "{text:?}: {e}"
        ),
    }
    // GeoJSON writes a NaN Z as null, which GeoJSON reading refuses.
    let json = geojson::write(&g, geojson::MAX_DECIMALS);
    let from_json = match geojson::parse(&json) {
        Ok(parsed) => parsed.expect("a geometry"),
        Err(e) => {
            assert!(json.contains("null"), "{json:?}: {e}");
            return;
        }
    };
    assert_eq!(from_json.geometry_type(), g.geometry_type(), "{json:?}");
    assert_eq!(from_json.is_empty(), g.is_empty(), "{json:?}");
});
