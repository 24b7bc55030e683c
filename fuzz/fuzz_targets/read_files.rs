//! ambit_read's readers on arbitrary bytes, held in memory: the first byte
//! picks the format (a zip archive, which may hold a shapefile; CSV;
//! GeoJSON; newline-delimited GeoJSON), the rest is the file. Every input
//! gives rows or an error, never a panic; every row kept has either a
//! geometry blob that decodes or a reason.
#![no_main]

use ambit::read::{read_bytes, BadRows, Options};
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let Some((&pick, rest)) = data.split_first() else {
        return;
    };
    let name = match pick % 4 {
        0 => "f.zip",
        1 => "f.csv",
        2 => "f.geojson",
        _ => "f.ndjson",
    };
    let options = Options {
        bad_rows: BadRows::Keep,
        ..Options::default()
    };
    if let Ok(rows) = read_bytes(name, rest.to_vec(), &options) {
        for r in rows {
            match (&r.geom, &r.problem) {
                (Some(g), None) => {
                    ambit::blob::decode_valid(g).expect("a kept geometry decodes");
                }
                (None, Some(_)) => {}
                _ => panic!("a row has a geometry or a problem: {r:?}"),
            }
        }
    }
});
