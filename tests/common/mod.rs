//! Shared helpers for the host tests: find the library cargo built for this
//! test run and drive the real `sqlite3` shell with it.
#![allow(dead_code)]

use std::io::Write;
use std::path::PathBuf;
use std::process::{Command, Output, Stdio};

/// The shell analysts have: Debian 12's sqlite3 (SQLite 3.40.1).
pub const SHELL: &str = "/usr/bin/sqlite3";

/// The loadable library built for this test run. `cargo test` builds the
/// cdylib next to the test executables, in target/<profile>/deps/.
pub fn library() -> PathBuf {
    let exe = std::env::current_exe().expect("test executable path");
    let deps = exe.parent().expect("deps folder");
    let lib = deps.join("libambit.so");
    assert!(
        lib.exists(),
        "{} is missing; cargo test builds it with the library",
        lib.display()
    );
    lib
}

/// What a shell run printed and how it ended.
pub struct ShellRun {
    pub status: i32,
    pub stdout: String,
    pub stderr: String,
}

/// Runs `sql` in a fresh in-memory database of the sqlite3 shell after
/// loading ambit, in list mode, and returns what it printed.
pub fn shell(sql: &str) -> ShellRun {
    shell_with(&[":memory:"], sql)
}

/// Runs `sql` in the sqlite3 shell with the given command-line arguments.
pub fn shell_with(args: &[&str], sql: &str) -> ShellRun {
    shell_env(args, &[], sql)
}

/// Runs `sql` in the sqlite3 shell with the given arguments and extra
/// environment variables.
pub fn shell_env(args: &[&str], env: &[(&str, &str)], sql: &str) -> ShellRun {
    shell_at(None, args, env, sql)
}

/// Runs `sql` in the sqlite3 shell in the folder `dir` (the current folder
/// when `None`).
pub fn shell_at(
    dir: Option<&std::path::Path>,
    args: &[&str],
    env: &[(&str, &str)],
    sql: &str,
) -> ShellRun {
    let script = format!(".load {}\n{sql}\n", library().with_extension("").display());
    run_shell(dir, args, env, &script)
}

/// The folder of the library built for this run, as the value of the
/// library search path (LD_LIBRARY_PATH) that README "Install" documents:
/// the example scripts' `.load libambit` finds the library there.
pub fn library_search_path() -> String {
    library()
        .parent()
        .expect("library folder")
        .to_str()
        .expect("utf-8 path")
        .to_string()
}

/// Runs a script of sql-examples/ as it is written, its `.load libambit`
/// line included, in the sqlite3 shell in the folder `dir`, with the
/// library found through LD_LIBRARY_PATH as README "Install" says.
pub fn shell_script_at(dir: &std::path::Path, args: &[&str], script: &str) -> ShellRun {
    assert!(
        script.contains("\n.load libambit\n"),
        "the script loads ambit with `.load libambit`"
    );
    let path = library_search_path();
    run_shell(Some(dir), args, &[("LD_LIBRARY_PATH", &path)], script)
}

fn run_shell(
    dir: Option<&std::path::Path>,
    args: &[&str],
    env: &[(&str, &str)],
    script: &str,
) -> ShellRun {
    let mut command = Command::new(SHELL);
    if let Some(dir) = dir {
        command.current_dir(dir);
    }
    let mut child = command
        .args(args)
        .envs(env.iter().copied())
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap_or_else(|e| panic!("cannot start {SHELL} ({e}); tests/prepare-host installs it"));
    child
        .stdin
        .take()
        .expect("stdin")
        .write_all(script.as_bytes())
        .expect("write to the shell");
    let Output {
        status,
        stdout,
        stderr,
    } = child.wait_with_output().expect("shell output");
    ShellRun {
        status: status.code().unwrap_or(-1),
        stdout: String::from_utf8_lossy(&stdout).into_owned(),
        stderr: String::from_utf8_lossy(&stderr).into_owned(),
    }
}

/// Runs `sql`, asserts it succeeded, and returns its output trimmed.
pub fn query(sql: &str) -> String {
    let run = shell(sql);
    assert!(
        run.status == 0 && run.stderr.is_empty(),
        "query failed: {sql}\nstatus {}\nstderr: {}",
        run.status,
        run.stderr
    );
    run.stdout.trim_end().to_string()
}

/// Runs a check script of tests/python/ with the built library as its
/// argument, asserts it succeeded with its closing "N passed, 0 failed"
/// line, and returns what it printed.
pub fn python_check(script: &str) -> String {
    python_check_with(script, &[])
}

/// [`python_check`] with more arguments after the library's path.
pub fn python_check_with(script: &str, more: &[&str]) -> String {
    python_check_in(&python(), script, more)
}

/// The Python of the tests: the virtual environment tests/prepare-host
/// makes with Debian's python3 and the packages of
/// tests/python/requirements.txt.
pub fn python() -> String {
    let venv = concat!(env!("CARGO_MANIFEST_DIR"), "/target/test-venv/bin/python");
    assert!(
        std::path::Path::new(venv).exists(),
        "{venv} is missing; run tests/prepare-host"
    );
    venv.to_string()
}

/// Debian's own Python: its sqlite3 module is built on the system SQLite
/// (3.40.1, the library of the stock shell) with extension loading.
pub const SYSTEM_PYTHON: &str = "/usr/bin/python3";

/// [`python_check_with`] run by the interpreter `python`.
pub fn python_check_in(python: &str, script: &str, more: &[&str]) -> String {
    let path = format!("{}/tests/python/{script}", env!("CARGO_MANIFEST_DIR"));
    let out = Command::new(python)
        .arg(&path)
        .arg(library())
        .args(more)
        .output()
        .expect("python3 is needed; tests/prepare-host installs it");
    let stdout = String::from_utf8_lossy(&out.stdout).into_owned();
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(
        out.status.success(),
        "{script} failed (missing packages? run tests/prepare-host)\n{stdout}\n{stderr}"
    );
    assert!(stdout.contains(" passed, 0 failed"), "{stdout}");
    stdout
}

// ----------------------------------------------------------------------
// Example scripts on a copy of the demo database, and the brute-force
// references their tests compare with (tests/example_*.rs).
// ----------------------------------------------------------------------

/// The committed demo database (demo-db/README.md).
pub const DEMO_DB: &str = "demo-db/demo-region.gpkg";

/// A fresh folder for one example test under target/tmp (never /tmp), with
/// a results/ folder in it.
pub fn example_dir(name: &str) -> PathBuf {
    let dir = std::path::Path::new(env!("CARGO_TARGET_TMPDIR"))
        .join(format!("ambit-example-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(dir.join("results")).expect("results folder");
    dir
}

/// Runs the SQL of sql-examples/`script` as written (ambit found through
/// LD_LIBRARY_PATH, see [`shell_script_at`]) on a fresh copy of the demo
/// database in `dir`, the way the script's header says to run it; asserts
/// it succeeded without messages and returns the copy and what the script
/// printed.
pub fn run_on_demo_copy(dir: &std::path::Path, script: &str, sql: &str) -> (PathBuf, String) {
    let db = dir.join(script.replace(".sql", ".gpkg"));
    std::fs::copy(
        std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join(DEMO_DB),
        &db,
    )
    .expect("copy of the demo database");
    let run = shell_script_at(dir, &[db.to_str().expect("path")], sql);
    assert!(
        run.status == 0 && run.stderr.is_empty(),
        "{script} failed (status {}):\n{}",
        run.status,
        run.stderr
    );
    (db, run.stdout)
}

/// The text of sql-examples/`script`.
pub fn example_sql(script: &str) -> String {
    std::fs::read_to_string(format!(
        "{}/sql-examples/{script}",
        env!("CARGO_MANIFEST_DIR")
    ))
    .expect("example script")
}

/// The rows of `sql` on `db` (ambit loaded), fields split at '|'.
pub fn db_rows(db: &std::path::Path, sql: &str) -> Vec<Vec<String>> {
    let out = Command::new(SHELL)
        .arg(db)
        .arg(format!(".load {}", library().with_extension("").display()))
        .arg(sql)
        .output()
        .expect("sqlite3");
    assert!(
        out.status.success(),
        "{sql}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8_lossy(&out.stdout)
        .lines()
        .map(|l| l.split('|').map(str::to_string).collect())
        .collect()
}

/// The tables printed in the shell's box mode: for each, its header cells
/// and its rows of cells (trimmed).
pub fn box_tables(printed: &str) -> Vec<(Vec<String>, Vec<Vec<String>>)> {
    let mut tables = Vec::new();
    let mut current: Option<(Vec<String>, Vec<Vec<String>>)> = None;
    for line in printed.lines() {
        if line.starts_with('┌') {
            current = Some((Vec::new(), Vec::new()));
        } else if line.starts_with('└') {
            tables.extend(current.take());
        } else if let Some(t) = current.as_mut() {
            if line.starts_with('│') {
                let cells: Vec<String> = line
                    .trim_matches('│')
                    .split('│')
                    .map(|c| c.trim().to_string())
                    .collect();
                if t.0.is_empty() {
                    t.0 = cells;
                } else {
                    t.1.push(cells);
                }
            }
        }
    }
    tables
}

/// A prepared geometry from the hex of a geometry blob.
pub fn prepared_hex(hex: &str) -> ambit::proximity::Prepared {
    let bytes: Vec<u8> = (0..hex.len())
        .step_by(2)
        .map(|i| u8::from_str_radix(&hex[i..i + 2], 16).expect("hex"))
        .collect();
    let g = ambit::blob::decode_valid(&bytes, &ambit::interrupt::Never)
        .expect("valid blob")
        .geometry;
    ambit::proximity::Prepared::new(&g)
}

/// A lower bound on the distance between two prepared geometries from
/// their bounding balls (minus infinity when one has none).
fn ball_gap(a: &ambit::proximity::Prepared, b: &ambit::proximity::Prepared) -> f64 {
    match (a.ball, b.ball) {
        (Some(x), Some(y)) => x.gap(&y),
        _ => f64::NEG_INFINITY,
    }
}

/// True when the exact geodesic minimum distance
/// (ambit::proximity::distance) is at most `reach`; the exact computation
/// is skipped only when the bounding balls prove the distance larger.
pub fn within_reach(
    a: &ambit::proximity::Prepared,
    b: &ambit::proximity::Prepared,
    reach: f64,
) -> bool {
    ball_gap(a, b) <= reach && ambit::proximity::distance(a, b).is_some_and(|d| d <= reach)
}

/// The exact distance from `a` to the nearest of `features` and its
/// position, by brute force: every feature is considered, in the order of
/// its ball lower bound, and the search stops only when that bound exceeds
/// the best exact distance found. Ties go to the earlier feature.
pub fn nearest_of(
    a: &ambit::proximity::Prepared,
    features: &[ambit::proximity::Prepared],
) -> Option<(f64, usize)> {
    let mut order: Vec<(f64, usize)> = features
        .iter()
        .enumerate()
        .map(|(i, f)| (ball_gap(a, f), i))
        .collect();
    order.sort_by(|x, y| x.0.total_cmp(&y.0).then(x.1.cmp(&y.1)));
    let mut best: Option<(f64, usize)> = None;
    for (lower, i) in order {
        if best.is_some_and(|(d, _)| lower > d) {
            break;
        }
        if let Some(d) = ambit::proximity::distance(a, &features[i]) {
            if best.is_none_or(|(b, j)| d < b || (d == b && i < j)) {
                best = Some((d, i));
            }
        }
    }
    best
}

/// Rounds like SQLite's round(x, 1) for the percentages the scripts print.
pub fn pct1(part: i64, whole: i64) -> Option<f64> {
    (whole != 0).then(|| (1000.0 * part as f64 / whole as f64).round() / 10.0)
}

/// Runs sql-examples/`name` as written on the database file `db` with
/// `dir` as the current folder (so its `results/...` files land in
/// `dir/results`) and ambit found through LD_LIBRARY_PATH.
pub fn run_example_on(dir: &std::path::Path, db: &std::path::Path, name: &str) -> ShellRun {
    std::fs::create_dir_all(dir.join("results")).expect("results folder");
    shell_script_at(dir, &[db.to_str().expect("utf-8 path")], &example_sql(name))
}

/// The cells of the rows of a table printed in the shell's box mode (the
/// lines with `│`), header row first.
pub fn box_rows(printed: &str) -> Vec<Vec<String>> {
    printed
        .lines()
        .filter(|l| l.starts_with('│'))
        .map(|l| {
            l.trim_matches('│')
                .split('│')
                .map(|c| c.trim().to_string())
                .collect()
        })
        .collect()
}
