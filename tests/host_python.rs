//! ambit in a Python host (apsw from PyPI, with its bundled, newer SQLite),
//! read back by independent readers (shapely; struct per OGC 12-128). The
//! checks live in tests/python/host_apsw.py.

mod common;

#[test]
fn loads_into_apsw_and_independent_readers_agree() {
    common::python_check("host_apsw.py");
}
