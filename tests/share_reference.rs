//! ambit_share against an independent reference: shapely buffers, unions
//! and intersections in PROJ's azimuthal equidistant projection (pyproj),
//! on random block-sized and county-sized polygons and layers, plus the
//! exact 0 and 1 cases and refused inputs. The checks live in
//! tests/python/share_check.py.

mod common;

#[test]
fn coverage_share_agrees_with_shapely_in_an_azimuthal_equidistant_plane() {
    let out = common::python_check("share_check.py");
    println!("{out}");
}
