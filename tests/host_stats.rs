//! The aggregates var_samp, var_pop, stddev_samp and stddev_pop in the
//! stock shell: the NIST StRD accuracy sets built in SQL, NULL handling,
//! errors, one row and no rows, and agreement with Python's `statistics`
//! module (exact rational arithmetic) on fixed-seed random data.

mod common;

use std::io::Write;
use std::process::{Command, Stdio};

use common::{query, shell};

fn rel(got: f64, want: f64) -> f64 {
    ((got - want) / want).abs()
}

fn parse(text: &str) -> f64 {
    text.parse()
        .unwrap_or_else(|e| panic!("not a number: {text:?} ({e})"))
}

/// The four statistics of the column `x` of the query `from` (a FROM
/// clause, possibly with a WITH before it), each printed to 17 digits so
/// that no digit is lost on the way out: stddev_samp, stddev_pop,
/// var_samp, var_pop.
fn statistics(with: &str, from: &str) -> [f64; 4] {
    let out = query(&format!(
        "{with} SELECT printf('%!.17g', stddev_samp(x)), printf('%!.17g', stddev_pop(x)), \
         printf('%!.17g', var_samp(x)), printf('%!.17g', var_pop(x)) FROM {from};"
    ));
    let v: Vec<f64> = out.split('|').map(parse).collect();
    assert_eq!(v.len(), 4, "{out}");
    [v[0], v[1], v[2], v[3]]
}

/// Runs the Python `script` with `input` on its standard input, asserts it
/// succeeded and returns what it printed.
fn run_python(script: &str, input: &str) -> String {
    let mut child = Command::new(common::python())
        .args(["-c", script])
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("python3 is needed; tests/prepare-host installs it");
    child
        .stdin
        .take()
        .expect("stdin")
        .write_all(input.as_bytes())
        .expect("write to python3");
    let out = child.wait_with_output().expect("python3 output");
    assert!(
        out.status.success(),
        "python3 failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8_lossy(&out.stdout).into_owned()
}

/// The NIST StRD pattern of NumAcc2 to NumAcc4 in SQL: 1001 rows, `centre`
/// then `low` and `high` alternately, 500 of each (the values are SQL
/// literals, parsed by SQLite).
fn alternating(centre: &str, low: &str, high: &str) -> String {
    format!(
        "WITH RECURSIVE i(n) AS (SELECT 0 UNION ALL SELECT n + 1 FROM i WHERE n < 1000), \
         d(x) AS (SELECT CASE WHEN n = 0 THEN {centre} WHEN n % 2 = 1 THEN {low} ELSE {high} END FROM i)"
    )
}

// The NIST Statistical Reference Datasets, Univariate Summary Statistics
// (https://www.itl.nist.gov/div898/strd/univ/): data and certified values
// from memory of the NIST StRD pages. NIST certifies the sample standard
// deviation; the population forms and variances follow from it by their
// definitions (n = 1001: var_pop = var_samp * 1000 / 1001).
//
// Measured relative errors of stddev_samp against the certified value, in
// this shell (SQLite parses the literals to the same doubles as Rust, and
// the results equal those of the unit tests in src/stats.rs):
//   NumAcc1 0, NumAcc2 5.6e-16, NumAcc3 3.5e-10, NumAcc4 5.6e-9.
// For NumAcc3 and NumAcc4 that is the representation of the data (1e7 + 0.1
// is not a binary fraction), not the method; see src/stats.rs. The bounds
// below leave a margin of about 2 to 10.

#[test]
fn nist_numacc1_is_exact() {
    // NIST StRD NumAcc1 (from memory): 10000001, 10000003, 10000002;
    // certified mean 10000002, sample standard deviation 1.
    let [sd, sd_pop, var, var_pop] = statistics(
        "",
        "(SELECT 10000001 AS x UNION ALL SELECT 10000003 UNION ALL SELECT 10000002)",
    );
    assert_eq!(sd, 1.0);
    assert_eq!(var, 1.0);
    // Population forms by definition: M2 = 2, n = 3.
    assert!(rel(var_pop, 2.0 / 3.0) < 1e-15, "{var_pop}");
    assert!(rel(sd_pop, (2.0f64 / 3.0).sqrt()) < 1e-15, "{sd_pop}");
}

#[test]
fn nist_numacc2_3_4_to_the_measured_precision() {
    // NIST StRD NumAcc2, NumAcc3, NumAcc4 (from memory): certified sample
    // standard deviation 0.1 each; the bound is the measured error with a
    // margin (see above).
    for (name, centre, low, high, bound) in [
        ("NumAcc2", "1.2", "1.1", "1.3", 5e-15),
        ("NumAcc3", "1000000.2", "1000000.1", "1000000.3", 1e-9),
        ("NumAcc4", "10000000.2", "10000000.1", "10000000.3", 1e-8),
    ] {
        let [sd, sd_pop, var, var_pop] = statistics(&alternating(centre, low, high), "d");
        assert!(
            rel(sd, 0.1) < bound,
            "{name}: stddev_samp {sd}, relative error {:e}",
            rel(sd, 0.1)
        );
        assert!(rel(var, 0.01) < 2.0 * bound, "{name}: var_samp {var}");
        let pop = 0.01 * 1000.0 / 1001.0;
        assert!(rel(var_pop, pop) < 2.0 * bound, "{name}: var_pop {var_pop}");
        assert!(
            rel(sd_pop, pop.sqrt()) < bound,
            "{name}: stddev_pop {sd_pop}"
        );
    }
}

#[test]
fn nulls_are_ignored() {
    // SQL standard: the aggregates skip NULLs. 1 and 3 (worked by hand):
    // mean 2, M2 = 2, so var_samp 2, var_pop 1.
    let [sd, sd_pop, var, var_pop] = statistics(
        "",
        "(SELECT NULL AS x UNION ALL SELECT 1 UNION ALL SELECT NULL UNION ALL SELECT 3.0 \
         UNION ALL SELECT NULL)",
    );
    assert_eq!(var, 2.0);
    assert_eq!(var_pop, 1.0);
    assert_eq!(sd, 2.0f64.sqrt());
    assert_eq!(sd_pop, 1.0);
    // Only NULLs: no values, so NULL, the same as no rows.
    assert_eq!(
        query(
            "SELECT typeof(stddev_samp(x)), typeof(stddev_pop(x)), typeof(var_samp(x)), \
             typeof(var_pop(x)) FROM (SELECT NULL AS x UNION ALL SELECT NULL);"
        ),
        "null|null|null|null"
    );
}

#[test]
fn one_row_and_no_rows() {
    // One value: the sample forms divide by n - 1 = 0, so NULL; the
    // population forms are 0.
    assert_eq!(
        query(
            "SELECT typeof(stddev_samp(x)), stddev_pop(x), typeof(var_samp(x)), var_pop(x) \
             FROM (SELECT 42.5 AS x);"
        ),
        "null|0.0|null|0.0"
    );
    // No rows: NULL for all four, and a real for a group of two.
    assert_eq!(
        query(
            "CREATE TABLE empty(x REAL); \
             SELECT typeof(stddev_samp(x)), typeof(stddev_pop(x)), typeof(var_samp(x)), \
             typeof(var_pop(x)) FROM empty;"
        ),
        "null|null|null|null"
    );
    // Per group, as analysts use them: group 2 has one value.
    assert_eq!(
        query(
            "SELECT g, var_samp(x), typeof(stddev_samp(x)) FROM (SELECT 1 AS g, 2 AS x \
             UNION ALL SELECT 1, 4 UNION ALL SELECT 2, 7) GROUP BY g ORDER BY g;"
        ),
        "1|2.0|real\n2||null"
    );
}

#[test]
fn text_blobs_and_infinities_are_errors_naming_the_function_and_argument() {
    for (sql, message) in [
        (
            "SELECT stddev_samp(x) FROM (SELECT 1.5 AS x UNION ALL SELECT 'abc');",
            "stddev_samp: argument 1 (x): must be a number, got text 'abc'",
        ),
        (
            "SELECT stddev_pop(x) FROM (SELECT '12' AS x);",
            "stddev_pop: argument 1 (x): must be a number, got text '12'",
        ),
        (
            "SELECT var_samp(x) FROM (SELECT x'0102' AS x);",
            "var_samp: argument 1 (x): must be a number, got a blob of 2 bytes",
        ),
        (
            "SELECT var_pop(x) FROM (SELECT 1e999 AS x);",
            "var_pop: argument 1 (x): must be a finite number, got inf",
        ),
        (
            "SELECT var_pop(1, 2);",
            "wrong number of arguments to function var_pop()",
        ),
    ] {
        let run = shell(&format!("{sql}\nSELECT 'alive';"));
        assert_eq!(run.status, 1, "{sql}: {}", run.stderr);
        assert!(
            run.stderr.contains(message),
            "{sql}\n  expected: {message}\n  got: {}",
            run.stderr
        );
        assert!(!run.stderr.contains("panic"), "{sql}: {}", run.stderr);
        assert_eq!(run.stdout.trim(), "alive", "{sql}: the shell did not go on");
    }
}

#[test]
fn agrees_with_pythons_statistics_module_on_fixed_seed_data() {
    // 1,000 values from the linear congruential generator
    // s' = (1103515245 s + 12345) mod 2^31 (the constants of the example
    // rand() in the C standard, from memory; any fixed generator would do),
    // seed 20261201; k = s' div 2048 is
    // 20 bits, and x = 45000 + k / 64 is exact in binary, so SQL and Python
    // see the same doubles (around 53000, spread about 4700: county-sized).
    let lcg = "WITH RECURSIVE g(i, s) AS (SELECT 0, 20261201 UNION ALL \
               SELECT i + 1, (1103515245 * s + 12345) % 2147483648 FROM g WHERE i < 1000), \
               d(k, x) AS (SELECT s / 2048, 45000 + (s / 2048) / 64.0 FROM g WHERE i > 0)";
    let ks = query(&format!("{lcg} SELECT k FROM d;"));
    assert_eq!(ks.lines().count(), 1000);
    let ambit = statistics(lcg, "d");

    // Python's statistics module sums the squared deviations with exact
    // fractions before the final rounding (CPython 3.11 Lib/statistics.py,
    // `_ss`; from memory of the source), so it is an independent reference
    // that does not round along the way.
    let script = "import statistics, sys\n\
                  x = [45000 + int(k) / 64 for k in sys.stdin.read().split()]\n\
                  assert len(x) == 1000\n\
                  print(*(repr(f(x)) for f in (statistics.stdev, statistics.pstdev, \
                  statistics.variance, statistics.pvariance)))\n";
    let stdout = run_python(script, &ks);
    let python: Vec<f64> = stdout.split_whitespace().map(parse).collect();
    assert_eq!(python.len(), 4);
    // Measured: all four agree to 9e-16 relative (one or two units in the
    // last place).
    for (name, (got, want)) in ["stdev", "pstdev", "variance", "pvariance"]
        .iter()
        .zip(ambit.iter().zip(&python))
    {
        assert!(
            rel(*got, *want) < 1e-12,
            "{name}: ambit {got} vs Python {want}, relative {:e}",
            rel(*got, *want)
        );
    }
    // A sanity check of the data itself: values of 20 bits over 64 span
    // [45000, 61384), so the standard deviation of a uniform draw is about
    // 16384 / sqrt(12) = 4730.
    assert!((4000.0..5500.0).contains(&python[0]), "{}", python[0]);
}

#[test]
fn extreme_values_agree_with_pythons_exact_statistics() {
    // Regression (2026-12-02): var_pop and var_samp of (1e308, -1e308)
    // were -Inf. Reference: Python's statistics module, which sums squared
    // deviations as exact fractions (CPython 3.11 Lib/statistics.py, from
    // memory of the source) and raises OverflowError where the exact
    // variance exceeds the largest double; ambit returns +Inf there, and its
    // standard deviations stay finite.
    let sets = [
        "1e308, -1e308",
        "1.7e308, 1.7e308, -1.7e308",
        "3e200, 5e200, -1e200",
        "1, 2, 3, 1e300",
        "1e-300, 3e-300, 2e-300",
        "-5e-320, 5e-320, 0",
        "0, 1e150, -1e150, 7",
    ];
    let script = "import statistics, sys\n\
                  for line in sys.stdin.read().splitlines():\n\
                  \x20   x = [float(v) for v in line.split(',')]\n\
                  \x20   out = []\n\
                  \x20   for f in (statistics.stdev, statistics.pstdev, statistics.variance, statistics.pvariance):\n\
                  \x20       try:\n\
                  \x20           out.append(repr(f(x)))\n\
                  \x20       except OverflowError:\n\
                  \x20           out.append('inf')\n\
                  \x20   print(*out)\n";
    let stdout = run_python(script, &sets.join("\n"));
    let python = stdout;
    for (set, line) in sets.iter().zip(python.lines()) {
        let want: Vec<f64> = line.split_whitespace().map(parse).collect();
        let values = set
            .split(',')
            .map(|v| format!("({})", v.trim()))
            .collect::<Vec<_>>()
            .join(", ");
        let got = statistics(&format!("WITH d(x) AS (VALUES {values})"), "d");
        for (name, (g, w)) in ["stdev", "pstdev", "variance", "pvariance"]
            .iter()
            .zip(got.iter().zip(&want))
        {
            assert!(*g >= 0.0, "{set}: {name} is {g}");
            if w.is_infinite() {
                assert_eq!(*g, f64::INFINITY, "{set}: {name}");
            } else {
                assert!(
                    *g == *w || rel(*g, *w) < 1e-14,
                    "{set}: {name}: ambit {g} vs Python {w}"
                );
            }
        }
    }
}
