//! ambit's measures (ambit_area, ambit_length, ambit_distance,
//! ambit_within) through the SQL surface in a Python host (apsw), checked
//! against an independent implementation of Karney's geodesic algorithms
//! (geographiclib from PyPI; C. F. F. Karney, "Algorithms for geodesics",
//! J. Geodesy 87:43-55 (2013)). The checks live in
//! tests/python/measure_check.py.

mod common;

use std::process::Command;

#[test]
fn area_length_distance_and_within_agree_with_geographiclib() {
    let script = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/python/measure_check.py");
    let out = Command::new("python3")
        .arg(script)
        .arg(common::library())
        .output()
        .expect("python3 is needed; tests/prepare-host installs it");
    let stdout = String::from_utf8_lossy(&out.stdout);
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(
        out.status.success(),
        "measure_check.py failed (missing packages? run tests/prepare-host)\n{stdout}\n{stderr}"
    );
    assert!(stdout.contains(" passed, 0 failed"), "{stdout}");
}
