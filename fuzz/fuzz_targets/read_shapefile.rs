//! A shapefile's main file and dBASE table from arbitrary bytes (the first
//! two bytes give where the .shp ends and the .dbf begins): the record
//! walk, every shape and every dBASE record give a value or an error, never
//! a panic, and nothing is allocated beyond the input's size.
#![no_main]

use ambit::read::{dbf, shp};
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    if data.len() < 2 {
        return;
    }
    let split = (u16::from_le_bytes([data[0], data[1]]) as usize).min(data.len() - 2);
    let (main, table) = data[2..].split_at(split);
    if let Ok(records) = shp::records(main) {
        for (_, start, len) in records {
            let _ = shp::shape(&main[start..start + len]);
        }
    }
    let _ = shp::index_records(main);
    if let Ok(t) = dbf::Table::open(table.to_vec(), None, "f.dbf") {
        for k in 0..t.records {
            let _ = t.record(k);
        }
    }
});
