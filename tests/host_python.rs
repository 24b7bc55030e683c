//! ambit in a Python host (apsw from PyPI, with its bundled, newer SQLite),
//! read back by independent readers (shapely; struct per OGC 12-128). The
//! checks live in tests/python/host_apsw.py.

mod common;

use std::process::Command;

#[test]
fn loads_into_apsw_and_independent_readers_agree() {
    let script = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/python/host_apsw.py");
    let out = Command::new("python3")
        .arg(script)
        .arg(common::library())
        .output()
        .expect("python3 is needed; tests/prepare-host installs it");
    let stdout = String::from_utf8_lossy(&out.stdout);
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(
        out.status.success(),
        "host_apsw.py failed (missing packages? run tests/prepare-host)\n{stdout}\n{stderr}"
    );
    assert!(stdout.contains(" passed, 0 failed"), "{stdout}");
}
