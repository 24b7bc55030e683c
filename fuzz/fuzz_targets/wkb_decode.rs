//! Plain ISO WKB: any bytes give a geometry or an error, never a panic;
//! what decodes is written back byte for byte (little endian input) or at
//! least to a blob that decodes to the same geometry.
#![no_main]

use ambit::blob::wkb;
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let _ = wkb::peek_type_at(data, 0);
    let Ok(g) = wkb::read_exact(data) else {
        return;
    };
    let bytes = wkb::write(&g);
    assert_eq!(bytes.len(), wkb::encoded_len(&g));
    let back = wkb::read_exact(&bytes).expect("ambit reads the WKB it writes");
    assert_eq!(wkb::write(&back), bytes, "{data:?}");
});
