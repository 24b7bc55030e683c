//! GeoPackage geometry blobs (and anything else `blob::decode` is handed):
//! any bytes give a geometry or an error, never a panic or an allocation
//! beyond what the blob can hold; a blob that decodes re-encodes to bytes
//! that decode to the same geometry.
#![no_main]

use ambit::blob::{self, gpkg};
use ambit::geometry::Geometry;
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let _ = blob::summary(data);
    let _ = gpkg::read_header(data);
    let Ok(decoded) = blob::decode(data) else {
        return;
    };
    // What is checked for use is also decoded.
    let valid = blob::decode_valid(data);
    if let Ok(v) = &valid {
        assert!(same(&v.geometry, &decoded.geometry));
    }
    let again = gpkg::write(&decoded.geometry, decoded.srs_id);
    let back = blob::decode(&again).expect("ambit reads the GeoPackage blobs it writes");
    assert_eq!(back.srs_id, decoded.srs_id);
    assert!(same(&back.geometry, &decoded.geometry), "{data:?}");
});

/// Equality with NaN ordinates compared by their bits.
fn same(a: &Geometry, b: &Geometry) -> bool {
    ambit::blob::wkb::write(a) == ambit::blob::wkb::write(b)
}
