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
    let script = format!(".load {}\n{sql}\n", library().with_extension("").display());
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
    let path = format!("{}/tests/python/{script}", env!("CARGO_MANIFEST_DIR"));
    let out = Command::new("python3")
        .arg(&path)
        .arg(library())
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
