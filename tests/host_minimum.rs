//! A host older than the minimum ambit supports gets a clear error from the
//! entry point, never an abort (tests/hosts/old_host.c stands in for it).

mod common;

use std::process::Command;

fn run_old_host(version_number: &str) -> String {
    // One folder per call (the two tests run in parallel), removed at the
    // end: tests leave nothing in the temporary folder.
    let dir = std::env::temp_dir().join(format!(
        "ambit-old-host-{}-{version_number}",
        std::process::id()
    ));
    std::fs::create_dir_all(&dir).unwrap();
    let exe = dir.join(format!("old_host_{version_number}"));
    let source = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/hosts/old_host.c");
    let cc = Command::new("cc")
        .args([source, "-o"])
        .arg(&exe)
        .arg("-ldl")
        .output()
        .expect("cc (gcc) is needed for this test; tests/prepare-host installs it");
    assert!(
        cc.status.success(),
        "compiling old_host.c failed (needs sqlite3ext.h from libsqlite3-dev): {}",
        String::from_utf8_lossy(&cc.stderr)
    );
    let out = Command::new(&exe)
        .arg(common::library())
        .arg(version_number)
        .output()
        .unwrap();
    std::fs::remove_dir_all(&dir).ok();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8_lossy(&out.stdout).into_owned()
}

#[test]
fn an_older_host_is_refused_with_a_message() {
    let out = run_old_host("3030000");
    assert_eq!(
        out,
        "rc=1\nmessage=ambit needs SQLite 3.34.1 or newer, this host is SQLite 3.30.0; \
         use a newer sqlite3 shell or a host such as apsw that bundles a recent SQLite\n"
    );
}

#[test]
fn the_minimum_itself_passes_the_version_check() {
    // Past the version check the rest of the (here empty) routine table is
    // used; its missing routines become an error message: still no abort.
    let out = run_old_host("3034001");
    assert_eq!(
        out,
        "rc=1\nmessage=ambit could not initialise: the host's SQLite routine table is incomplete\n"
    );
}
