//! sql-examples/sensitivity.sql on a copy of the demo database: the shares
//! of residents within 0.25, 0.5, 0.75 and 1 mile of a park equal an
//! independent computation, grow with the threshold, and follow the
//! thresholds table when it is changed.
//!
//! The reference takes every block against every park with the exact
//! geodesic distance of ambit::proximity::distance (checked against brute
//! force in tests/proximity_bruteforce.rs) to find its nearest park,
//! skipping a park only when its bounding ball proves it farther than the
//! nearest found so far; no layer, index or sweep.

mod common;

use ambit::proximity::Prepared;
use rayon::prelude::*;
use std::collections::BTreeMap;
use std::path::Path;

const SCRIPT: &str = "sensitivity.sql";
/// NIST SP 811, appendix B.8: 1 mi = 1609.344 m exactly.
const MILE: f64 = 1609.344;
/// The thresholds line of the script, to check and to replace.
const THRESHOLDS: &str = "FROM (VALUES (0.25), (0.5), (0.75), (1.0));";

/// (fid, county, population) of every block and its nearest park, metres.
fn reference(db: &Path) -> Vec<(i64, String, i64, f64)> {
    let q = |sql: &str| common::db_rows(db, sql);
    let parks: Vec<Prepared> = q("SELECT hex(geom) FROM parks WHERE geom IS NOT NULL")
        .into_par_iter()
        .map(|r| common::prepared_hex(&r[0]))
        .collect();
    q("SELECT fid, geoid, population, hex(geom) FROM blocks ORDER BY fid")
        .into_par_iter()
        .map(|r| {
            let b = common::prepared_hex(&r[3]);
            let d = common::nearest_of(&b, &parks).expect("a park").0;
            (
                r[0].parse().unwrap(),
                r[1][..5].to_string(),
                r[2].parse().unwrap(),
                d,
            )
        })
        .collect()
}

/// County (and "99" for the region) -> population and population within
/// each threshold (metres), ties within.
fn shares(blocks: &[(i64, String, i64, f64)], metres: &[f64]) -> BTreeMap<String, (i64, Vec<i64>)> {
    let mut out: BTreeMap<String, (i64, Vec<i64>)> = BTreeMap::new();
    for (_, county, pop, d) in blocks {
        for key in [county.clone(), "99".to_string()] {
            let e = out.entry(key).or_insert((0, vec![0; metres.len()]));
            e.0 += pop;
            for (k, &m) in metres.iter().enumerate() {
                if *d <= m {
                    e.1[k] += pop;
                }
            }
        }
    }
    out
}

/// Checks the printed wide table against the reference: header, one row per
/// county and the region last, percentages that never fall left to right.
fn check_printed(printed: &str, miles: &[&str], expected: &BTreeMap<String, (i64, Vec<i64>)>) {
    let tables = common::box_tables(printed);
    assert_eq!(tables.len(), 1, "{printed}");
    let (header, rows) = &tables[0];
    let mut want_header = vec!["county".to_string(), "name".into(), "population".into()];
    want_header.extend(miles.iter().map(|m| format!("{m} mi")));
    assert_eq!(header, &want_header);
    assert_eq!(rows.len(), expected.len());
    assert_eq!(rows.last().unwrap()[0], "99", "the region is the last row");
    for row in rows {
        let (pop, within) = &expected[&row[0]];
        assert_eq!(row[2], pop.to_string(), "population of {}", row[0]);
        let pcts: Vec<f64> = row[3..].iter().map(|c| c.parse().unwrap()).collect();
        let want: Vec<f64> = within
            .iter()
            .map(|&w| common::pct1(w, *pop).unwrap())
            .collect();
        assert_eq!(pcts, want, "shares of {}", row[0]);
        assert!(
            pcts.windows(2).all(|w| w[0] <= w[1]),
            "shares of {} fall as the threshold grows: {pcts:?}",
            row[0]
        );
    }
}

#[test]
fn sensitivity_equals_an_independent_computation_and_is_monotone() {
    let dir = common::example_dir("sensitivity");
    let sql = common::example_sql(SCRIPT);
    assert!(sql.contains(THRESHOLDS), "the thresholds line changed");
    let (db, printed) = common::run_on_demo_copy(&dir, SCRIPT, &sql);
    for caution in [
        "Straight-line reach is not walking access",
        "the park list is incomplete",
        "local practice and qualified review",
    ] {
        assert!(
            printed.contains(caution),
            "no caution '{caution}':\n{printed}"
        );
    }
    let blocks = reference(&db);
    let metres: Vec<f64> = [0.25, 0.5, 0.75, 1.0].iter().map(|m| m * MILE).collect();
    let expected = shares(&blocks, &metres);
    check_printed(&printed, &["0.25", "0.5", "0.75", "1.0"], &expected);

    // The stored nearest distances: one per block, equal to the reference.
    let q = |sql: &str| common::db_rows(&db, sql);
    let stored = q("SELECT fid, nearest_park_m FROM block_park_distance ORDER BY fid");
    assert_eq!(stored.len(), blocks.len());
    for (r, b) in stored.iter().zip(&blocks) {
        assert_eq!(r[0], b.0.to_string());
        let d: f64 = r[1].parse().unwrap();
        assert!((d - b.3).abs() <= 1e-6, "block {}: {d} vs {}", b.0, b.3);
    }
    // The long table: every county and threshold, never falling, and the
    // spread is real (the 1-mile share exceeds the quarter-mile one).
    let long = q(
        "SELECT county_geoid, miles, population, population_within FROM county_park_sensitivity \
                  ORDER BY county_geoid, miles",
    );
    assert_eq!(long.len(), expected.len() * metres.len());
    for chunk in long.chunks(metres.len()) {
        let (pop, within) = &expected[&chunk[0][0]];
        let got: Vec<i64> = chunk.iter().map(|r| r[3].parse().unwrap()).collect();
        assert_eq!(&got, within, "county {}", chunk[0][0]);
        assert_eq!(chunk[0][2], pop.to_string());
        assert!(got.windows(2).all(|w| w[0] <= w[1]), "{got:?}");
        if *pop > 0 {
            assert!(
                got[0] < got[metres.len() - 1],
                "county {}: no spread",
                chunk[0][0]
            );
        }
    }
    let csv = std::fs::read_to_string(dir.join("results/county-park-sensitivity.csv")).unwrap();
    assert_eq!(csv.lines().count(), long.len() + 1);
    std::fs::remove_dir_all(&dir).ok();

    // Other thresholds, written only in the thresholds table: the printed
    // table follows them.
    let dir = common::example_dir("sensitivity-other");
    let other = sql.replace(THRESHOLDS, "FROM (VALUES (2.0), (0.1), (0.6));");
    let (_, printed) = common::run_on_demo_copy(&dir, SCRIPT, &other);
    let metres: Vec<f64> = [0.1, 0.6, 2.0].iter().map(|m| m * MILE).collect();
    check_printed(&printed, &["0.1", "0.6", "2.0"], &shares(&blocks, &metres));
    std::fs::remove_dir_all(&dir).ok();
}
