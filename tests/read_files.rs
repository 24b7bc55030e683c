//! ambit_read against independent writers and readers: shapefiles written
//! by pyshp and by GDAL (pyogrio), real open shapefiles carried by
//! libpysal, GeoJSON, newline-delimited GeoJSON and CSV, each compared with
//! GDAL's reading through pyogrio (projected files converted with pyproj).
//! The checks and their sources are listed in tests/python/read_check.py.

mod common;

#[test]
fn files_read_as_gdal_reads_them() {
    let out = common::python_check("read_check.py");
    println!("{out}");
}
