//! What the shell-driven benchmarks share: the library built for the run,
//! running SQL in the stock shell under /usr/bin/time, reading its timers.

#![allow(dead_code)]

use std::path::{Path, PathBuf};
use std::process::Command;

pub fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// The library built for this bench run, as `.load` takes it.
pub fn library() -> PathBuf {
    let exe = std::env::current_exe().unwrap();
    let lib = exe.parent().unwrap().join("libambit.so");
    assert!(lib.exists(), "{} missing", lib.display());
    lib.with_extension("")
}

/// Runs a command under /usr/bin/time -v; returns (stdout, stderr, peak RSS
/// in MiB, wall seconds).
pub fn timed(cmd: &mut Command) -> (String, String, f64, f64) {
    let start = std::time::Instant::now();
    let out = cmd.output().expect("command runs");
    let wall = start.elapsed().as_secs_f64();
    let stdout = String::from_utf8_lossy(&out.stdout).into_owned();
    let stderr = String::from_utf8_lossy(&out.stderr).into_owned();
    assert!(out.status.success(), "command failed:\n{stdout}\n{stderr}");
    let rss_kib: f64 = stderr
        .lines()
        .find_map(|l| {
            l.trim()
                .strip_prefix("Maximum resident set size (kbytes): ")
        })
        .and_then(|v| v.trim().parse().ok())
        .unwrap_or(f64::NAN);
    (stdout, stderr, rss_kib / 1024.0, wall)
}

/// Runs SQL in the stock shell with ambit loaded, under /usr/bin/time.
pub fn shell(db: &Path, env: &[(&str, &str)], sql: &str) -> (String, f64, f64) {
    shell_on(db, env, sql, None)
}

/// [`shell`], with the shell and all its threads pinned to the CPUs listed
/// in `cpus` (taskset's list syntax, e.g. "0") when given.
pub fn shell_on(
    db: &Path,
    env: &[(&str, &str)],
    sql: &str,
    cpus: Option<&str>,
) -> (String, f64, f64) {
    let script = db.with_extension(format!("{}.sql", std::process::id()));
    std::fs::write(&script, format!(".load {}\n{sql}\n", library().display())).unwrap();
    let mut cmd = Command::new("/usr/bin/time");
    cmd.arg("-v");
    if let Some(cpus) = cpus {
        cmd.args(["taskset", "-c", cpus]);
    }
    cmd.arg("/usr/bin/sqlite3")
        .arg("-bail")
        .arg(db)
        .arg(format!(".read {}", script.display()))
        .envs(env.iter().copied());
    let (stdout, _, rss, wall) = timed(&mut cmd);
    std::fs::remove_file(&script).ok();
    (stdout, rss, wall)
}

/// The seconds of each statement timed by `.timer on`.
pub fn times(out: &str) -> Vec<f64> {
    out.lines()
        .filter_map(|l| l.strip_prefix("Run Time: real "))
        .map(|l| l.split_whitespace().next().unwrap().parse().unwrap())
        .collect()
}

/// Builds the invented region of `blocks` blocks (seed 7) in `dir` with
/// demo-db/build-region; returns the GeoPackage's path.
pub fn build_region(blocks: usize, dir: &Path) -> PathBuf {
    let db = dir.join(format!("region-{blocks}.gpkg"));
    let status = Command::new(root().join("demo-db/build-region"))
        .args([blocks.to_string(), "7".to_string()])
        .arg(&db)
        .env("AMBIT_LIB", library())
        .env("AMBIT_REGION_BIN", env!("CARGO_BIN_EXE_ambit-region"))
        .status()
        .unwrap();
    assert!(status.success(), "build-region failed");
    db
}

/// The region sizes given on the command line, or `default` when none are.
pub fn sizes_from_args(default: &[usize]) -> Vec<usize> {
    let sizes: Vec<usize> = std::env::args()
        .skip(1)
        .filter_map(|a| a.parse().ok())
        .collect();
    if sizes.is_empty() {
        default.to_vec()
    } else {
        sizes
    }
}
