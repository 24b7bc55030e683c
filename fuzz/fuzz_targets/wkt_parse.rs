//! WKT text: any text gives a geometry or an error, never a panic; what
//! parses is written as canonical WKT that parses to the same geometry
//! (the parser refuses NaN and infinities, so equality is exact).
#![no_main]

use ambit::blob::wkt;
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    let Ok(g) = wkt::parse(text) else {
        return;
    };
    let written = wkt::write(&g);
    let back = wkt::parse(&written)
        .unwrap_or_else(|e| panic!("ambit reads the WKT it writes: {written:?}: {e}"));
    assert_eq!(back, g, "{text:?} -> {written:?}");
});
