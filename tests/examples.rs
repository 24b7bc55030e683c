//! Every script in sql-examples/ runs in the stock shell, and its numbers are
//! checked against values computed here from their definitions.

mod common;

fn run_example(name: &str) -> common::ShellRun {
    let path = format!("{}/sql-examples/{name}", env!("CARGO_MANIFEST_DIR"));
    let script = std::fs::read_to_string(&path).expect("example script");
    // The script as written, from a folder outside the repository, with
    // ambit found only through LD_LIBRARY_PATH (README, "Install").
    let dir = common::example_dir(&name.replace(".sql", ""));
    let run = common::shell_script_at(&dir, &[":memory:"], &script);
    std::fs::remove_dir_all(&dir).ok();
    run
}

#[test]
fn first_steps_runs_and_its_numbers_are_right() {
    let run = run_example("first-steps.sql");
    assert_eq!(run.status, 0, "{}", run.stderr);
    assert!(run.stderr.is_empty(), "{}", run.stderr);
    // Blob sizes from the layout of OGC 12-128 (8-byte header, 32-byte XY
    // envelope) and ISO WKB (5-byte header, 4-byte counts, 16 bytes a
    // vertex): a 5-vertex polygon, a polygon of two 5-vertex rings, a point.
    let polygon = 40 + 5 + 4 + (4 + 5 * 16);
    let with_hole = 40 + 5 + 4 + 2 * (4 + 5 * 16);
    let point = 40 + 5 + 16;
    for (name, kind, bytes) in [
        ("Alder Commons", "POLYGON", polygon),
        ("Heron Marsh Preserve", "POLYGON", with_hole),
        ("Quarry Lane Ballfield", "POINT", point),
    ] {
        let row = run
            .stdout
            .lines()
            .find(|l| l.contains(name) && l.contains('│'))
            .unwrap_or_else(|| panic!("no row for {name}:\n{}", run.stdout));
        let cells: Vec<&str> = row.split('│').map(str::trim).collect();
        assert_eq!(&cells[3..6], &[kind, "4326", &bytes.to_string()], "{row}");
    }
    assert!(run.stdout.contains(
        "Quarry Lane Ballfield: {\"type\":\"Point\",\"coordinates\":[-131.4981,38.4302]}"
    ));
    // NIST SP 811, appendix B.8: 1 mi = 1609.344 m exactly.
    let miles = [0.5, 1.0, 3.0].map(|m: f64| (m * 1609.344).to_string());
    assert!(
        run.stdout.contains(&format!(
            "│ {} │ {}         │ {}         │",
            miles[0], miles[1], miles[2]
        )),
        "{}",
        run.stdout
    );
}

/// Without the library search path the scripts' `.load libambit` fails
/// with SQLite's own message, and the shell stops (`.bail on`) before any
/// step runs: the setting is what finds the library, not the folder.
#[test]
fn the_scripts_find_ambit_only_through_the_library_search_path() {
    let dir = common::example_dir("no-search-path");
    let script = common::example_sql("exercise-access.sql");
    let db = dir.join("demo.gpkg");
    std::fs::copy(
        std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join(common::DEMO_DB),
        &db,
    )
    .unwrap();
    let out = std::process::Command::new(common::SHELL)
        .current_dir(&dir)
        .arg(&db)
        .env_remove("LD_LIBRARY_PATH")
        .stdin(
            std::fs::File::open(
                std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
                    .join("sql-examples/exercise-access.sql"),
            )
            .unwrap(),
        )
        .output()
        .unwrap();
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(
        !out.status.success(),
        "loaded without the setting: {stderr}"
    );
    assert!(stderr.contains("libambit"), "{stderr}");
    assert!(
        script.contains("\n.bail on\n"),
        "the script stops at errors"
    );
    let tables = common::db_rows(
        &db,
        "SELECT count(*) FROM sqlite_master WHERE name = 'build_parameters'",
    );
    assert_eq!(tables[0][0], "0", "a step ran without ambit");
    std::fs::remove_dir_all(&dir).ok();
}

/// No script names a path that exists only on POSIX systems.
#[test]
fn the_scripts_name_no_posix_only_paths() {
    for entry in std::fs::read_dir(concat!(env!("CARGO_MANIFEST_DIR"), "/sql-examples")).unwrap() {
        let path = entry.unwrap().path();
        if path.extension().is_none_or(|e| e != "sql") {
            continue;
        }
        let text = std::fs::read_to_string(&path).unwrap();
        for line in text.lines().filter(|l| l.starts_with('.')) {
            assert!(
                !line.contains("/dev/") && !line.contains("target/"),
                "{}: {line}",
                path.display()
            );
        }
    }
}

/// Every script in sql-examples/ has a test that runs it on demo-db/ and
/// checks its numbers independently.
#[test]
fn every_example_script_is_tested() {
    let tested = [
        ("first-steps.sql", "tests/examples.rs"),
        ("exercise-access.sql", "tests/demo.rs"),
        ("land-coverage.sql", "tests/example_land_coverage.rs"),
        ("food-access.sql", "tests/example_food_access.rs"),
        ("hazard-proximity.sql", "tests/example_hazard_proximity.rs"),
        ("sensitivity.sql", "tests/example_sensitivity.rs"),
        ("care-access-2sfca.sql", "tests/example_care_access.rs"),
        ("join-measures.sql", "tests/example_join_measures.rs"),
        ("from-downloads.sql", "tests/from_downloads.rs"),
    ];
    let mut found: Vec<String> =
        std::fs::read_dir(concat!(env!("CARGO_MANIFEST_DIR"), "/sql-examples"))
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .filter(|n| n.ends_with(".sql"))
            .collect();
    found.sort();
    let mut listed: Vec<String> = tested.iter().map(|t| t.0.to_string()).collect();
    listed.sort();
    assert_eq!(
        found, listed,
        "add a test for each new script and list it here"
    );
    for (script, test) in tested {
        let text =
            std::fs::read_to_string(format!("{}/{test}", env!("CARGO_MANIFEST_DIR"))).unwrap();
        assert!(text.contains(script), "{test} does not run {script}");
    }
}
