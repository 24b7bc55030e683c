//! Every script in sql-examples/ runs in the stock shell, and its numbers are
//! checked against values computed here from their definitions.

mod common;

fn run_example(name: &str) -> common::ShellRun {
    let path = format!("{}/sql-examples/{name}", env!("CARGO_MANIFEST_DIR"));
    let script = std::fs::read_to_string(&path).expect("example script");
    // The scripts load the release build by its relative path; the test
    // loads the library built for this run instead (common::shell does).
    let body: String = script
        .lines()
        .filter(|l| !l.starts_with(".load "))
        .map(|l| format!("{l}\n"))
        .collect();
    assert!(
        script.contains(".load target/release/libambit"),
        "{name} loads ambit"
    );
    common::shell_with(&[":memory:"], &body)
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
