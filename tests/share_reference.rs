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

/// From a degree to a continent: one point's geodesic circle inside (and
/// clipped by) geodesic boxes, a 170 x 119 degree box and a ring along the
/// equator, against areas measured with Karney's geographiclib
/// (tests/python/share_large_check.py).
#[test]
fn coverage_share_of_large_polygons_agrees_with_geographiclib() {
    let out = common::python_check("share_large_check.py");
    println!("{out}");
}

/// One long ambit_share call (150,000 vertices, 2,000 parks), scalar and in
/// the sweep, returns soon after apsw's Connection.interrupt from a timer
/// thread; prints the latency (tests/python/share_interrupt_check.py).
#[test]
fn a_long_share_stops_when_interrupted() {
    let out = common::python_check("share_interrupt_check.py");
    println!("{out}");
}
