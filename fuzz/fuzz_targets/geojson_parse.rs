//! GeoJSON text: any text gives a geometry, `None` or an error, never a
//! panic; what parses is written as GeoJSON that parses again, and writing
//! that a second time gives the same text (rounding is stable).
#![no_main]

use ambit::blob::geojson;
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    let Ok(Some(g)) = geojson::parse(text) else {
        return;
    };
    for decimals in [geojson::DEFAULT_DECIMALS, geojson::MAX_DECIMALS] {
        let written = geojson::write(&g, decimals);
        let back = geojson::parse(&written)
            .unwrap_or_else(|e| panic!("ambit reads the GeoJSON it writes: {written:?}: {e}"))
            .expect("a geometry, not a null feature");
        assert_eq!(geojson::write(&back, decimals), written, "{text:?}");
    }
});
