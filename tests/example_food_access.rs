//! sql-examples/food-access.sql on a copy of the demo database, checked
//! against an independent computation.
//!
//! The definition (USDA Economic Research Service, Food Access Research
//! Atlas, documentation): low access when the nearest supermarket,
//! supercenter or large grocery store is more than 1 mile away in urban
//! areas and more than 10 miles away in rural ones; here measured from the
//! block boundary, and a block is urban when its distance to an urban area
//! is 0. The reference below takes every block against every counted store
//! and every urban area with the exact geodesic distance of
//! ambit::proximity::distance (checked against brute force in
//! tests/proximity_bruteforce.rs), skipping a pair only when its bounding
//! balls prove it farther than what is asked; no layer, index or sweep.

mod common;

use ambit::proximity::Prepared;
use rayon::prelude::*;
use std::collections::BTreeMap;

const SCRIPT: &str = "food-access.sql";
/// NIST SP 811, appendix B.8: 1 mi = 1609.344 m exactly.
const MILE: f64 = 1609.344;
/// The store kinds the Atlas counts (its documentation: supermarkets,
/// supercenters and large grocery stores).
const COUNTED: [&str; 3] = ["supermarket", "supercenter", "large grocery store"];

struct Block {
    fid: i64,
    geoid: String,
    population: i64,
    geom: Prepared,
}

/// County (or "99" for the region) -> [population, low, urban population,
/// urban low, rural population, rural low].
type Sums = BTreeMap<String, [i64; 6]>;

fn sums(blocks: &[Block], urban: &[bool], low: &[bool]) -> Sums {
    let mut out = Sums::new();
    for ((b, &u), &l) in blocks.iter().zip(urban).zip(low) {
        for key in [b.geoid[..5].to_string(), "99".to_string()] {
            let s = out.entry(key).or_default();
            let (p, l) = (b.population, l as i64);
            s[0] += p;
            s[1] += p * l;
            if u {
                s[2] += p;
                s[3] += p * l;
            } else {
                s[4] += p;
                s[5] += p * l;
            }
        }
    }
    out
}

fn opt(v: Option<f64>) -> String {
    v.map_or(String::new(), |x| format!("{x:.1}"))
}

#[test]
fn food_access_equals_an_independent_computation() {
    let dir = common::example_dir("food");
    let (db, printed) = common::run_on_demo_copy(&dir, SCRIPT, &common::example_sql(SCRIPT));
    for caution in [
        "Straight-line distance is not travel distance",
        "store lists are incomplete",
        "not the Food Access Research Atlas's figures",
        "Review with local knowledge",
    ] {
        assert!(
            printed.contains(caution),
            "no caution '{caution}':\n{printed}"
        );
    }

    // Inputs, straight from the demo tables.
    let q = |sql: &str| common::db_rows(&db, sql);
    let blocks: Vec<Block> = q("SELECT fid, geoid, population, hex(geom) FROM blocks ORDER BY fid")
        .into_par_iter()
        .map(|r| Block {
            fid: r[0].parse().unwrap(),
            geoid: r[1].clone(),
            population: r[2].parse().unwrap(),
            geom: common::prepared_hex(&r[3]),
        })
        .collect();
    let listed = q("SELECT kind, hex(geom) FROM groceries WHERE geom IS NOT NULL ORDER BY fid");
    let counted: Vec<Prepared> = listed
        .iter()
        .filter(|r| COUNTED.contains(&r[0].as_str()))
        .map(|r| common::prepared_hex(&r[1]))
        .collect();
    let all_stores: Vec<Prepared> = listed.iter().map(|r| common::prepared_hex(&r[1])).collect();
    let urban_areas: Vec<Prepared> = q("SELECT hex(geom) FROM urban_areas")
        .iter()
        .map(|r| common::prepared_hex(&r[0]))
        .collect();
    assert!(
        counted.len() < all_stores.len(),
        "the demo lists convenience stores"
    );
    assert_eq!(
        q("SELECT count(*) FROM food_stores")[0][0],
        counted.len().to_string(),
        "stores counted"
    );

    // Urban or rural, the nearest counted store, low access.
    let urban: Vec<bool> = blocks
        .par_iter()
        .map(|b| {
            urban_areas
                .iter()
                .any(|u| common::within_reach(&b.geom, u, 0.0))
        })
        .collect();
    let nearest: Vec<f64> = blocks
        .par_iter()
        .map(|b| common::nearest_of(&b.geom, &counted).expect("a store").0)
        .collect();
    let threshold = |u: bool| if u { MILE } else { 10.0 * MILE };
    let low: Vec<bool> = nearest
        .iter()
        .zip(&urban)
        .map(|(&d, &u)| d > threshold(u))
        .collect();

    // Block by block.
    let script: Vec<Vec<String>> = q(
        "SELECT fid, urban, threshold_m, nearest_store_m, low_access FROM block_food_access ORDER BY fid",
    );
    assert_eq!(script.len(), blocks.len());
    for (i, (b, r)) in blocks.iter().zip(&script).enumerate() {
        assert_eq!(r[0], b.fid.to_string());
        assert_eq!(r[1] == "1", urban[i], "block {}: urban", b.geoid);
        assert_eq!(
            r[2].parse::<f64>().unwrap(),
            threshold(urban[i]),
            "block {}",
            b.geoid
        );
        let d: f64 = r[3].parse().unwrap();
        assert!(
            (d - nearest[i]).abs() <= 1e-6,
            "block {}: nearest store {d} m, independent {} m",
            b.geoid,
            nearest[i]
        );
        assert_eq!(r[4] == "1", low[i], "block {}: low access", b.geoid);
    }

    // The county table, stored and printed, and the region row.
    let expected = sums(&blocks, &urban, &low);
    let stored = q(
        "SELECT county_geoid, population, low_access_population, pct_low_access, urban_population, \
         urban_low_access_population, urban_pct_low_access, rural_population, \
         rural_low_access_population, rural_pct_low_access FROM county_food_access ORDER BY county_geoid",
    );
    assert_eq!(
        stored.len() + 1,
        expected.len(),
        "six counties and the region"
    );
    let tables = common::box_tables(&printed);
    assert_eq!(tables.len(), 1, "{printed}");
    let (header, rows) = &tables[0];
    assert_eq!(
        header,
        &[
            "county",
            "name",
            "population",
            "low_access",
            "pct",
            "urban_pop",
            "urban_low",
            "urban_pct",
            "rural_pop",
            "rural_low",
            "rural_pct"
        ]
    );
    assert_eq!(rows.len(), expected.len());
    for (county, s) in &expected {
        let want = [
            s[0].to_string(),
            s[1].to_string(),
            opt(common::pct1(s[1], s[0])),
            s[2].to_string(),
            s[3].to_string(),
            opt(common::pct1(s[3], s[2])),
            s[4].to_string(),
            s[5].to_string(),
            opt(common::pct1(s[5], s[4])),
        ];
        let row = rows.iter().find(|r| &r[0] == county).expect("printed row");
        let printed_cells: Vec<String> = [2, 3, 4, 5, 6, 7, 8, 9, 10]
            .iter()
            .map(|&i| match row[i].parse::<f64>() {
                Ok(v) if [4, 7, 10].contains(&i) => format!("{v:.1}"),
                _ => row[i].clone(),
            })
            .collect();
        assert_eq!(printed_cells, want, "printed row of {county}");
        if county != "99" {
            let r = stored.iter().find(|r| &r[0] == county).expect("stored row");
            let cells: Vec<String> = r[1..]
                .iter()
                .enumerate()
                .map(|(i, c)| match c.parse::<f64>() {
                    Ok(v) if [2, 5, 8].contains(&i) => format!("{v:.1}"),
                    _ => c.clone(),
                })
                .collect();
            assert_eq!(cells, want, "county_food_access row of {county}");
        }
    }
    // Both kinds of low access occur in the demo, and leaving the
    // convenience stores out matters: with them, fewer would count as low.
    let region = expected["99"];
    assert!(
        region[3] > 0 && region[5] > 0,
        "urban and rural low access: {region:?}"
    );
    let low_with_all: i64 = blocks
        .par_iter()
        .zip(&urban)
        .map(|(b, &u)| {
            let far = !all_stores
                .iter()
                .any(|s| common::within_reach(&b.geom, s, threshold(u)));
            b.population * far as i64
        })
        .sum();
    assert!(
        low_with_all < region[1],
        "counting convenience stores: {low_with_all}, without: {}",
        region[1]
    );

    // The CSV carries the same county rows.
    let csv = std::fs::read_to_string(dir.join("results/county-food-access.csv")).unwrap();
    assert!(
        csv.starts_with("county_geoid,county_name,build_year,population,"),
        "{csv}"
    );
    assert_eq!(csv.lines().count(), stored.len() + 1);
    // The parameters are recorded with the results.
    assert_eq!(
        q(
            "SELECT urban_low_access_m, rural_low_access_m, ambit_version = ambit_version(), \
           json_valid(ambit_info) FROM food_access_parameters"
        )[0],
        ["1609.344", "16093.44", "1", "1"]
    );
    // An independent GeoPackage reader (pyogrio, PyPI) opens the result
    // layers and the demo's amenity layers, the mixed-geometry one too.
    let check = r#"
import sys, pyogrio
path = sys.argv[1]
layers = {name for name, _ in pyogrio.list_layers(path)}
for want in ("food_stores", "block_food_access", "county_food_access",
             "groceries", "clinics", "hazard_sites", "libraries"):
    assert want in layers, (want, layers)
meta, fids, geometries, fields = pyogrio.raw.read(path, layer="hazard_sites")
assert all(g is not None and len(g) > 0 for g in geometries)
meta, fids, geometries, fields = pyogrio.raw.read(path, layer="county_food_access")
pct = fields[list(meta["fields"]).index("pct_low_access")]
print(",".join(f"{v:.1f}" for v in pct))
"#;
    let out = std::process::Command::new(common::python())
        .args(["-c", check])
        .arg(&db)
        .output()
        .expect("python3; tests/prepare-host installs pyogrio");
    assert!(
        out.status.success(),
        "pyogrio could not read the output (run tests/prepare-host): {}",
        String::from_utf8_lossy(&out.stderr)
    );
    let ours: Vec<String> = stored
        .iter()
        .map(|r| format!("{:.1}", r[3].parse::<f64>().unwrap()))
        .collect();
    assert_eq!(String::from_utf8_lossy(&out.stdout).trim(), ours.join(","));
    std::fs::remove_dir_all(&dir).ok();
}
