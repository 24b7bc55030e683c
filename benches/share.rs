//! ambit_share on a generated state-size region: the share of every block's
//! area within half a mile of a park, on one core (the scalar function row
//! by row, and the sweep with one thread) and through the sweep on two
//! threads, with how the blocks split into wholly out of reach (decided by
//! the exact reach test), wholly within (decided by the bounding ball or
//! by the quadrature) and partly within (the quadrature).
//!
//! Run: `cargo bench --bench share` (default 400000 blocks; give others as
//! arguments, e.g. `cargo bench --bench share -- 50000`). Needs
//! /usr/bin/sqlite3 and /usr/bin/time. Inputs are invented
//! (demo-db/build-region, seed 7, as benches/sweep.rs uses).

mod support;

use support::{build_region, shell, sizes_from_args, times};

const LAYER: &str = "SELECT ambit_layer('parks', geom, ambit_miles(0.5), fid) FROM parks;";

fn run(blocks: usize, dir: &std::path::Path) {
    let db = build_region(blocks, dir);
    let (counts, _, _) = shell(
        &db,
        &[],
        "SELECT (SELECT count(*) FROM blocks), (SELECT count(*) FROM parks), (SELECT max(length(geom)) / 16 FROM parks);",
    );
    println!(
        "\n{blocks} blocks requested: blocks|parks|vertices of the largest park = {}",
        counts.trim()
    );

    let sweep = |threads: &str| {
        let (out, rss, _) = shell(
            &db,
            &[("RAYON_NUM_THREADS", threads)],
            &format!(
                "{LAYER}\n.timer on\nSELECT count(*), sum(share = 0), sum(share = 1), sum(share > 0 AND share < 1), printf('%.9f', avg(share)) \
                 FROM ambit_sweep('parks', 'SELECT fid, geom FROM blocks');"
            ),
        );
        let row = out
            .lines()
            .find(|l| l.contains('|'))
            .unwrap_or("")
            .to_string();
        (row, times(&out)[0], rss)
    };
    let (row2, sweep2, rss2) = sweep("2");
    let (row1, sweep1, _) = sweep("1");
    assert_eq!(row1, row2, "the sweep's answer depends on its threads");
    let (scalar_out, _, _) = shell(
        &db,
        &[],
        &format!("{LAYER}\n.timer on\nSELECT printf('%.9f', avg(ambit_share('parks', geom))) FROM blocks;"),
    );
    let scalar = times(&scalar_out)[0];
    let (reached_out, _, _) = shell(
        &db,
        &[("RAYON_NUM_THREADS", "2")],
        &format!("{LAYER}\n.timer on\nSELECT sum(reached) FROM ambit_sweep('parks', 'SELECT fid, geom FROM blocks');"),
    );
    let reached = times(&reached_out)[0];
    let cells: Vec<f64> = row2.split('|').filter_map(|c| c.parse().ok()).collect();
    let n = cells[0];
    println!("blocks|share 0|share 1|partial|mean share = {row2}");
    println!(
        "partial blocks: {:.1}% of blocks (the only ones that need the quadrature)",
        100.0 * cells[3] / n
    );
    println!("| path | seconds | blocks per second |");
    println!("|---|---|---|");
    for (path, t) in [
        ("scalar ambit_share, one core", scalar),
        ("ambit_sweep share, 1 thread", sweep1),
        ("ambit_sweep share, 2 threads", sweep2),
        ("ambit_sweep reached only, 2 threads (for scale)", reached),
    ] {
        println!("| {path} | {t:.2} | {:.0} |", n / t);
    }
    println!(
        "sweep 1 thread / 2 threads = {:.2}; peak RSS of the 2-thread sweep {rss2:.0} MiB",
        sweep1 / sweep2
    );
}

fn main() {
    let sizes = sizes_from_args(&[400_000]);
    let dir = std::env::temp_dir().join(format!("ambit-share-bench-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    println!("ambit_share benchmark (invented region; parks at 0.5 mi)");
    for n in sizes {
        run(n, &dir);
    }
    std::fs::remove_dir_all(&dir).ok();
}
