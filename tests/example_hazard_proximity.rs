//! sql-examples/hazard-proximity.sql on a copy of the demo database,
//! checked against an independent computation.
//!
//! The indicator: residents of blocks whose boundary lies within 1 mile of
//! a hazard site, a point or a footprint (a screening distance; common
//! practice, no source), and for the populated blocks near the most sites,
//! how many sites and which kinds. The reference takes every block against
//! every site with the exact geodesic distance of ambit::proximity::distance
//! (checked against brute force in tests/proximity_bruteforce.rs), skipping
//! a pair only when its bounding balls prove it farther than the mile; no
//! layer, index or sweep.

mod common;

use ambit::proximity::{distance, Prepared};
use rayon::prelude::*;
use std::collections::BTreeMap;

const SCRIPT: &str = "hazard-proximity.sql";
/// NIST SP 811, appendix B.8: 1 mi = 1609.344 m exactly.
const MILE: f64 = 1609.344;
/// How many blocks the script lists (its parameter most_exposed_listed).
const LISTED: usize = 10;

#[test]
fn hazard_proximity_equals_an_independent_computation() {
    let dir = common::example_dir("hazard");
    let (db, printed) = common::run_on_demo_copy(&dir, SCRIPT, &common::example_sql(SCRIPT));
    for caution in [
        "Living near a site is not exposure",
        "the site list is incomplete",
        "qualified environmental-health staff",
    ] {
        assert!(
            printed.contains(caution),
            "no caution '{caution}':\n{printed}"
        );
    }
    let q = |sql: &str| common::db_rows(&db, sql);
    let blocks: Vec<(i64, String, i64, Prepared)> =
        q("SELECT fid, geoid, population, hex(geom) FROM blocks ORDER BY fid")
            .into_par_iter()
            .map(|r| {
                (
                    r[0].parse().unwrap(),
                    r[1].clone(),
                    r[2].parse().unwrap(),
                    common::prepared_hex(&r[3]),
                )
            })
            .collect();
    let site_rows = q(
        "SELECT fid, kind, ST_GeometryType(geom), hex(geom) FROM hazard_sites \
                       WHERE geom IS NOT NULL ORDER BY fid",
    );
    let sites: Vec<Prepared> = site_rows
        .iter()
        .map(|r| common::prepared_hex(&r[3]))
        .collect();
    assert!(
        site_rows.iter().any(|r| r[2] == "POLYGON"),
        "the demo has footprints"
    );

    // Per block: the sites within the mile (nearest first, ties by fid) and
    // the nearest site.
    struct Near {
        within: Vec<(f64, usize)>,
        nearest: f64,
    }
    let near: Vec<Near> = blocks
        .par_iter()
        .map(|(_, _, _, b)| {
            let mut within: Vec<(f64, usize)> = (0..sites.len())
                .filter(|&i| common::within_reach(b, &sites[i], MILE))
                .map(|i| (distance(b, &sites[i]).unwrap(), i))
                .collect();
            within.sort_by(|x, y| x.0.total_cmp(&y.0).then(x.1.cmp(&y.1)));
            let nearest = common::nearest_of(b, &sites).unwrap().0;
            Near { within, nearest }
        })
        .collect();
    // Footprints count as footprints: some block is within the mile of a
    // polygon site.
    assert!(
        near.iter()
            .any(|n| n.within.iter().any(|&(_, i)| site_rows[i][2] == "POLYGON")),
        "no block near a footprint"
    );

    let script = q("SELECT fid, near_hazard, sites_within, nearest_site_m FROM block_hazard_proximity ORDER BY fid");
    assert_eq!(script.len(), blocks.len());
    for ((b, n), r) in blocks.iter().zip(&near).zip(&script) {
        assert_eq!(r[0], b.0.to_string());
        assert_eq!(r[1] == "1", !n.within.is_empty(), "block {}: near", b.1);
        assert_eq!(
            r[2],
            n.within.len().to_string(),
            "block {}: sites within",
            b.1
        );
        let d: f64 = r[3].parse().unwrap();
        assert!(
            (d - n.nearest).abs() <= 1e-6,
            "block {}: {d} vs {}",
            b.1,
            n.nearest
        );
    }

    // County table: blocks, blocks near, population, population near, pct,
    // most sites near a populated block; "99" is the region.
    let mut expected: BTreeMap<String, [i64; 5]> = BTreeMap::new();
    for (b, n) in blocks.iter().zip(&near) {
        for key in [b.1[..5].to_string(), "99".to_string()] {
            let e = expected.entry(key).or_default();
            let is_near = !n.within.is_empty() as i64;
            e[0] += 1;
            e[1] += is_near;
            e[2] += b.2;
            e[3] += b.2 * is_near;
            if b.2 > 0 {
                e[4] = e[4].max(n.within.len() as i64);
            }
        }
    }
    let tables = common::box_tables(&printed);
    assert_eq!(tables.len(), 2, "{printed}");
    let (header, rows) = &tables[0];
    assert_eq!(
        header,
        &[
            "county",
            "name",
            "blocks",
            "blocks_near",
            "population",
            "population_near",
            "pct",
            "most_sites"
        ]
    );
    assert_eq!(rows.len(), expected.len());
    let stored = q("SELECT county_geoid, blocks, blocks_near_hazard, population, population_near_hazard, \
                    pct_near_hazard, most_sites_near_a_block FROM county_hazard_proximity ORDER BY county_geoid");
    assert_eq!(stored.len() + 1, expected.len());
    for (county, e) in &expected {
        let pct = common::pct1(e[3], e[2]).unwrap();
        let want = [
            e[0].to_string(),
            e[1].to_string(),
            e[2].to_string(),
            e[3].to_string(),
            format!("{pct:.1}"),
            e[4].to_string(),
        ];
        let fix = |cells: &[String]| -> Vec<String> {
            cells
                .iter()
                .enumerate()
                .map(|(i, c)| {
                    if i == 4 {
                        format!("{:.1}", c.parse::<f64>().unwrap())
                    } else {
                        c.clone()
                    }
                })
                .collect()
        };
        let row = rows.iter().find(|r| &r[0] == county).expect("printed row");
        assert_eq!(fix(&row[2..]), want, "printed row of {county}");
        if county != "99" {
            let r = stored.iter().find(|r| &r[0] == county).expect("stored row");
            assert_eq!(fix(&r[1..]), want, "stored row of {county}");
        }
    }

    // The most exposed populated blocks: most sites, then most residents,
    // then GEOID; with the kinds of their sites, nearest first.
    let mut order: Vec<usize> = (0..blocks.len())
        .filter(|&i| blocks[i].2 > 0 && !near[i].within.is_empty())
        .collect();
    order.sort_by(|&a, &b| {
        near[b]
            .within
            .len()
            .cmp(&near[a].within.len())
            .then(blocks[b].2.cmp(&blocks[a].2))
            .then(blocks[a].1.cmp(&blocks[b].1))
    });
    order.truncate(LISTED);
    let (header, rows) = &tables[1];
    assert_eq!(
        header,
        &[
            "rank",
            "block",
            "population",
            "sites",
            "nearest_m",
            "site_kinds"
        ]
    );
    assert_eq!(rows.len(), order.len());
    let stored = q(
        "SELECT rank, geoid, population, sites_within, nearest_site_m, site_kinds \
                    FROM most_exposed_blocks ORDER BY rank",
    );
    for (k, (&i, row)) in order.iter().zip(rows).enumerate() {
        let kinds: Vec<&str> = near[i]
            .within
            .iter()
            .map(|&(_, s)| site_rows[s][1].as_str())
            .collect();
        let want = [
            (k + 1).to_string(),
            blocks[i].1.clone(),
            blocks[i].2.to_string(),
            near[i].within.len().to_string(),
            format!("{:.1}", (near[i].nearest * 10.0).round() / 10.0),
            kinds.join(", "),
        ];
        let mut got = row.clone();
        got[4] = format!("{:.1}", got[4].parse::<f64>().unwrap());
        assert_eq!(got, want, "printed rank {}", k + 1);
        let mut got = stored[k].clone();
        got[4] = format!("{:.1}", got[4].parse::<f64>().unwrap());
        assert_eq!(got, want, "stored rank {}", k + 1);
    }
    assert!(
        near[order[0]].within.len() >= 2,
        "the most exposed block is near several sites"
    );

    let csv = std::fs::read_to_string(dir.join("results/county-hazard-proximity.csv")).unwrap();
    assert!(
        csv.starts_with("county_geoid,county_name,build_year,blocks,"),
        "{csv}"
    );
    assert_eq!(csv.lines().count(), expected.len());
    assert_eq!(
        q("SELECT hazard_reach_m, most_exposed_listed, json_valid(ambit_info) FROM hazard_parameters")[0],
        ["1609.344", &LISTED.to_string(), "1"]
    );
    std::fs::remove_dir_all(&dir).ok();
}
