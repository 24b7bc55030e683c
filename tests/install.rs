//! Installed without Rust: the Python wheel (dist/make-wheel.py, as
//! dist/build makes it) installs with pip into a fresh virtual environment of
//! Debian's python3, and the README's Python lines print the county table of
//! the stock shell, with the sqlite3 module and with apsw (PyPI); the R
//! example (sql-examples/r/exercise-access.R, with Debian's RSQLite) reads
//! the same table into a data.frame. The reference is the stock shell
//! running sql-examples/exercise-access.sql as the README's first command
//! does, itself checked against an independent computation in
//! tests/demo.rs; the README's printed table must be that table too.
//!
//! The wheel and the R example use the library built for this test run, so
//! the check needs no cross toolchain. To check dist/build's release file
//! (glibc 2.17) instead, name its folder in AMBIT_INSTALL_LIBDIR:
//! `AMBIT_INSTALL_LIBDIR=target/dist/linux-x86_64 cargo test --release --test install`.

mod common;

use std::path::{Path, PathBuf};
use std::process::Command;

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// The folder of the library under test: AMBIT_INSTALL_LIBDIR, or the
/// folder of the library built for this run.
fn library_dir() -> PathBuf {
    match std::env::var_os("AMBIT_INSTALL_LIBDIR") {
        Some(dir) => std::fs::canonicalize(root().join(dir)).expect("AMBIT_INSTALL_LIBDIR"),
        None => common::library().parent().unwrap().to_path_buf(),
    }
}

/// A fresh folder under target/tmp (not /tmp) for one test.
fn work_dir(name: &str) -> PathBuf {
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR")).join(format!("install-{name}"));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(dir.join("results")).unwrap();
    dir
}

/// Runs a command and returns its standard output; fails on error.
fn run(command: &mut Command) -> String {
    let out = command
        .output()
        .unwrap_or_else(|e| panic!("{command:?}: {e}"));
    let stdout = String::from_utf8_lossy(&out.stdout).into_owned();
    assert!(
        out.status.success(),
        "{command:?} failed:\n{stdout}\n{}",
        String::from_utf8_lossy(&out.stderr)
    );
    stdout
}

/// The county table the stock shell prints for the README's first command,
/// header first (cells trimmed); run once for all tests of this file.
fn shell_county_table() -> Vec<Vec<String>> {
    static TABLE: std::sync::OnceLock<Vec<Vec<String>>> = std::sync::OnceLock::new();
    TABLE.get_or_init(shell_run).clone()
}

fn shell_run() -> Vec<Vec<String>> {
    let dir = common::example_dir("install-shell");
    let (_, printed) = common::run_on_demo_copy(
        &dir,
        "exercise-access.sql",
        &common::example_sql("exercise-access.sql"),
    );
    std::fs::remove_dir_all(&dir).ok();
    let tables = common::box_tables(&printed);
    assert_eq!(tables.len(), 1, "{printed}");
    let (header, rows) = tables.into_iter().next().unwrap();
    std::iter::once(header).chain(rows).collect()
}

/// True when two cells say the same: equal text, or equal numbers (R and
/// Python write 28.0 as 28 and 28.0).
fn same_cell(a: &str, b: &str) -> bool {
    a == b || matches!((a.parse::<f64>(), b.parse::<f64>()), (Ok(x), Ok(y)) if x == y)
}

fn assert_same_rows(what: &str, got: &[Vec<String>], shell: &[Vec<String>]) {
    assert_eq!(
        got.len(),
        shell.len(),
        "{what}: {got:?} vs the shell's {shell:?}"
    );
    for (g, s) in got.iter().zip(shell) {
        assert!(
            g.len() == s.len() && g.iter().zip(s).all(|(a, b)| same_cell(a, b)),
            "{what}: {g:?} vs the shell's {s:?}"
        );
    }
}

/// The ```python blocks of README.md's "### Python" part of "## Install".
fn readme_python_blocks() -> Vec<String> {
    let readme = std::fs::read_to_string(root().join("README.md")).unwrap();
    let install = &readme[readme.find("\n## Install").expect("README has ## Install")..];
    let python = &install[install
        .find("\n### Python")
        .expect("Install has ### Python")..];
    let python = &python[..python[1..].find("\n### ").map_or(python.len(), |i| i + 1)];
    python
        .split("```python\n")
        .skip(1)
        .map(|b| b[..b.find("```").expect("closed block")].to_string())
        .collect()
}

#[test]
fn the_wheel_installs_and_the_readme_python_lines_print_the_shell_table() {
    let shell = shell_county_table();

    // The README's printed table is the shell's.
    let readme = std::fs::read_to_string(root().join("README.md")).unwrap();
    let first = &readme[readme.find("## Two commands").unwrap()..];
    let printed = &first[first.find("```text\n").unwrap()..];
    let readme_rows = common::box_rows(&printed[..printed[8..].find("```").unwrap() + 8]);
    assert_eq!(readme_rows, shell, "README.md's first table");

    let dir = work_dir("wheel");
    let version = env!("CARGO_PKG_VERSION");
    let lib_dir = library_dir();
    run(Command::new(common::SYSTEM_PYTHON)
        .arg(root().join("dist/make-wheel.py"))
        .args([version, "linux-x86_64"])
        .arg(&lib_dir)
        .arg(dir.join("wheels")));
    let wheel = dir.join(format!(
        "wheels/ambit_sqlite-{version}-py3-none-manylinux_2_17_x86_64.manylinux2014_x86_64.whl"
    ));
    assert!(wheel.exists(), "{}", wheel.display());

    // A fresh virtual environment of Debian's python3, and pip.
    let venv = dir.join("venv");
    run(Command::new(common::SYSTEM_PYTHON)
        .args(["-m", "venv"])
        .arg(&venv));
    run(Command::new(venv.join("bin/python"))
        .args([
            "-m",
            "pip",
            "install",
            "-q",
            "--no-index",
            "--disable-pip-version-check",
        ])
        .arg(&wheel));

    // The library path it reports loads in the stock shell.
    let path = run(Command::new(venv.join("bin/python")).args([
        "-c",
        "import ambit_sqlite; print(ambit_sqlite.library_path())",
    ]));
    let path = path.trim();
    assert!(path.starts_with(venv.to_str().unwrap()), "{path}");
    let version_row = run(Command::new(common::SHELL)
        .arg(":memory:")
        .arg(format!(".load {path}"))
        .arg("SELECT ambit_version()"));
    assert_eq!(version_row.trim(), version);

    // The README's lines, as written, in a folder laid out like the
    // repository: the sqlite3 module of the fresh venv, then apsw (from the
    // tests' environment) with the installed package.
    let blocks = readme_python_blocks();
    assert_eq!(blocks.len(), 2, "one block for sqlite3, one for apsw");
    let site = std::fs::read_dir(venv.join("lib"))
        .unwrap()
        .next()
        .unwrap()
        .unwrap()
        .path()
        .join("site-packages");
    for (block, python, host) in [
        (&blocks[0], venv.join("bin/python"), "sqlite3"),
        (&blocks[1], PathBuf::from(common::python()), "apsw"),
    ] {
        assert!(
            block.contains(&format!("import {host}, ambit_sqlite")),
            "{block}"
        );
        assert!(block.lines().count() <= 3, "three lines: {block}");
        std::fs::create_dir_all(dir.join("sql-examples")).unwrap();
        std::fs::copy(
            root().join("sql-examples/exercise-access.sql"),
            dir.join("sql-examples/exercise-access.sql"),
        )
        .unwrap();
        std::fs::copy(
            root().join(common::DEMO_DB),
            dir.join("results/exercise-access.gpkg"),
        )
        .unwrap();
        let printed = run(Command::new(python)
            .current_dir(&dir)
            .env("PYTHONPATH", &site)
            .args(["-c", block]));
        let rows: Vec<Vec<String>> = printed
            .lines()
            .map(|l| l.split('\t').map(str::to_string).collect())
            .collect();
        assert_same_rows(&format!("Python with {host}"), &rows, &shell[1..]);
        assert!(dir.join("results/exercise-access-map.svg").exists());
        std::fs::remove_file(dir.join("results/exercise-access-map.svg")).unwrap();
    }
    std::fs::remove_dir_all(&dir).ok();
}

/// A Python whose sqlite3 module cannot load extensions gets a message that
/// names the ways out, not an AttributeError.
#[test]
fn a_python_without_extension_loading_is_told_the_way_out() {
    let check = r#"
import sys
sys.path.insert(0, sys.argv[1])
import ambit_sqlite
class Connection:          # what such a Python's sqlite3 gives: no enable_load_extension
    pass
Connection.__module__ = "sqlite3"
try:
    ambit_sqlite.load(Connection())
except RuntimeError as e:
    print(e)
"#;
    let printed = run(Command::new(common::SYSTEM_PYTHON)
        .args(["-c", check])
        .arg(root().join("dist/python")));
    for words in [
        "without extension loading",
        "apsw",
        "pip install apsw",
        "/usr/bin/python3",
    ] {
        assert!(printed.contains(words), "{printed}");
    }
}

#[test]
fn the_r_example_reads_the_shell_table_into_a_data_frame() {
    let shell = shell_county_table();
    let dir = work_dir("r");
    let db = dir.join("results/exercise-access-r.gpkg");
    std::fs::copy(root().join(common::DEMO_DB), &db).unwrap();
    let printed = run(Command::new("Rscript")
        .current_dir(&dir)
        .arg(root().join("sql-examples/r/exercise-access.R"))
        .arg(library_dir().join("libambit.so"))
        .arg(&db)
        .arg(dir.join("county.csv")));
    assert!(printed.contains("Cinder Hill"), "{printed}");
    let csv = std::fs::read_to_string(dir.join("county.csv")).unwrap();
    let rows: Vec<Vec<String>> = csv
        .lines()
        .map(|l| {
            l.split(',')
                .map(|c| c.trim_matches('"').to_string())
                .collect()
        })
        .collect();
    assert_same_rows("R data.frame", &rows, &shell);
    assert!(dir.join("results/exercise-access-map.svg").exists());
    std::fs::remove_dir_all(&dir).ok();
}
