//! Property tests over the SQL surface, through the built library in a real
//! host (Debian's /usr/bin/python3 and its sqlite3 module, SQLite 3.40.1):
//! thousands of random geometries from a fixed seed (points to multipolygons
//! with holes, a metre to 300 km, at the equator, the antimeridian, high
//! latitudes and exactly the poles), and identities and inequalities that
//! must hold whatever the numbers: symmetric distances, the triangle
//! inequality, within = (distance <= metres), areas additive over holes,
//! parts and fans, layer answers equal to brute force through
//! ambit_distance, shares in [0, 1] and 0 exactly when nothing is reached,
//! the sweep equal bit for bit to the scalar functions and across threads and
//! chunk sizes, failed ambit_layer statements leaving the layer unchanged,
//! polygons that do not mean one area refused. The checks and their sources
//! live in tests/python/properties.py; properties that fail on today's code
//! are listed in its KNOWN_FAILING (still run, reported, not failing).

mod common;

#[test]
fn properties_hold_over_random_geometries() {
    let out = common::python_check_in(common::SYSTEM_PYTHON, "properties.py", &[]);
    println!("{out}");
}
