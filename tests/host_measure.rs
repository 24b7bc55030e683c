//! ambit's measures (ambit_area, ambit_length, ambit_distance,
//! ambit_within) through the SQL surface in a Python host (apsw), checked
//! against an independent implementation of Karney's geodesic algorithms
//! (geographiclib from PyPI; C. F. F. Karney, "Algorithms for geodesics",
//! J. Geodesy 87:43-55 (2013)). The checks live in
//! tests/python/measure_check.py.

mod common;

#[test]
fn area_length_distance_and_within_agree_with_geographiclib() {
    common::python_check("measure_check.py");
}
