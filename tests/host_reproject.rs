//! ambit_to_lonlat against PROJ: tests/python/reproject_check.py converts
//! 10,000 points per system (EPSG 3857, 5070, 2229 in US survey feet,
//! 26918, 32617, 3395 and a WKT2 definition) through the built library in a
//! Python host (apsw) and compares with pyproj 3.7.2 (PROJ 9, from PyPI):
//! at most 1 mm, measured as the geodesic distance on WGS84 with
//! geographiclib (Karney 2013); round trips through PROJ's forward
//! projection; a GeoPackage in UTM written by GDAL (pyogrio); NULL and
//! error semantics. The maximum error per system is printed (run with
//! `--nocapture` to see it).

mod common;

#[test]
fn ambit_to_lonlat_agrees_with_proj_within_a_millimetre() {
    let out = common::python_check("reproject_check.py");
    println!("{out}");
}
