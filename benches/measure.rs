//! The fast path of the within test on a realistic mix, and the cost of a
//! within test and of an exact distance between block-sized polygons.
//!
//! Run: `cargo bench --bench measure`. Prints, from one run:
//! - the share of within decisions settled without any exact geodesic
//!   computation (by bounding balls and the local metric with its error
//!   bound), for blocks of 40 vertices and parks of 30 vertices whose
//!   centres are 0 to 10 km apart, at the thresholds of the trade (0.5, 1
//!   and 3 miles; common practice, no source);
//! - microseconds per within decision and per exact distance.

use std::time::Instant;

use ambit::geometry::{Dimensions, Geometry, Shape};
use ambit::proximity::{distance, within_counted, Prepared, Work};
use ambit::testing::XorShift;
use ambit::units::METRES_PER_MILE;

fn star(rng: &mut XorShift, centre: (f64, f64), n: usize, radius_m: f64) -> Prepared {
    let dlat = radius_m / 111_000.0;
    let k = 1.0 / centre.1.to_radians().cos();
    let mut ring = Vec::with_capacity(2 * n + 2);
    for i in 0..n {
        let t = i as f64 / n as f64 * std::f64::consts::TAU;
        let r = dlat * rng.uniform(0.7, 1.0);
        ring.extend_from_slice(&[centre.0 + r * k * t.cos(), centre.1 + r * t.sin()]);
    }
    ring.extend_from_slice(&[ring[0], ring[1]]);
    Prepared::new(&Geometry::new(Dimensions::Xy, Shape::Polygon(vec![ring])))
}

/// Median and 90th percentile of per-call times, microseconds.
fn percentiles(mut t: Vec<f64>) -> (f64, f64) {
    t.sort_by(f64::total_cmp);
    (t[t.len() / 2], t[t.len() * 9 / 10])
}

/// Times each within decision alone; returns (median us, p90 us, share
/// settled without exact computation, share within reach).
fn run(pairs: &[(Prepared, Prepared, f64)]) -> (f64, f64, f64, f64) {
    let mut times = Vec::with_capacity(pairs.len());
    let (mut settled, mut reached) = (0usize, 0usize);
    for (block, park, t) in pairs {
        let mut work = Work::default();
        let start = Instant::now();
        let hit = within_counted(block, park, *t, &mut work);
        times.push(start.elapsed().as_secs_f64() * 1e6);
        settled += (work.exact == 0) as usize;
        reached += hit as usize;
    }
    let (median, p90) = percentiles(times);
    let n = pairs.len() as f64;
    (median, p90, settled as f64 / n, reached as f64 / n)
}

/// A block near a random centre and a park whose centre is `offset_m`
/// away in a random direction.
fn pair(rng: &mut XorShift, offset_m: f64, park_radius_m: f64) -> (Prepared, Prepared) {
    let c = (rng.uniform(-135.0, -125.0), rng.uniform(30.0, 50.0));
    let r = rng.uniform(60.0, 300.0);
    let block = star(rng, c, 39, r);
    let angle = rng.uniform(0.0, std::f64::consts::TAU);
    let k = 1.0 / c.1.to_radians().cos();
    let o = offset_m / 111_000.0;
    let d = (c.0 + o * k * angle.cos(), c.1 + o * angle.sin());
    (block, star(rng, d, 29, park_radius_m))
}

fn main() {
    let mut rng = XorShift(0xbe7c_4a11);
    let n = 20_000;
    let half_mile = 0.5 * METRES_PER_MILE;
    let thresholds = [0.5, 1.0, 3.0].map(|m| m * METRES_PER_MILE);

    // Typical separations at the park threshold (0.5 mi).
    let inside: Vec<_> = (0..n)
        .map(|_| {
            let o = rng.uniform(0.0, 300.0);
            let (b, p) = pair(&mut rng, o, 2000.0);
            (b, p, half_mile)
        })
        .collect();
    let well_within: Vec<_> = (0..n)
        .map(|_| {
            let o = rng.uniform(800.0, 1200.0);
            let (b, p) = pair(&mut rng, o, 400.0);
            (b, p, half_mile)
        })
        .collect();
    let well_outside: Vec<_> = (0..n)
        .map(|_| {
            let o = rng.uniform(3000.0, 10_000.0);
            let (b, p) = pair(&mut rng, o, 400.0);
            (b, p, half_mile)
        })
        .collect();
    let near: Vec<_> = (0..n / 4)
        .map(|_| {
            let o = rng.uniform(1000.0, 2000.0);
            let (b, p) = pair(&mut rng, o, 400.0);
            let d = distance(&b, &p).unwrap();
            (b, p, d + rng.uniform(-5.0, 5.0))
        })
        .collect();
    // Realistic mix: centres 0-10 km apart, all three thresholds.
    let mut mix = Vec::with_capacity(3 * n);
    for _ in 0..n {
        let offset = rng.uniform(0.0, 10_000.0);
        let park_r = rng.uniform(50.0, 800.0);
        let (b, p) = pair(&mut rng, offset, park_r);
        for &t in &thresholds {
            mix.push((b.clone(), p.clone(), t));
        }
    }

    println!(
        "ambit_within core, one thread: 40-vertex block polygon against 30-vertex park polygon"
    );
    println!(
        "{:<44} {:>9} {:>9} {:>12} {:>9}",
        "pairs", "median us", "p90 us", "fast path", "reached"
    );
    for (name, pairs) in [
        ("block inside the park, 0.5 mi", &inside),
        ("boundaries ~100-800 m apart, 0.5 mi", &well_within),
        ("boundaries 2-10 km apart, 0.5 mi", &well_outside),
        ("within 5 m of the threshold", &near),
        ("realistic mix: 0-10 km, 0.5/1/3 mi", &mix),
    ] {
        let (median, p90, settled, reached) = run(pairs);
        println!(
            "{name:<44} {median:>9.2} {p90:>9.2} {:>11.2}% {:>8.1}%",
            100.0 * settled,
            100.0 * reached
        );
    }
    let settled_only: Vec<_> = mix
        .iter()
        .filter(|(b, p, t)| {
            let mut w = Work::default();
            within_counted(b, p, *t, &mut w);
            w.exact == 0
        })
        .cloned()
        .collect();
    let (median, _, _, _) = run(&settled_only);
    println!("median of the mix's pairs settled by the fast path: {median:.2} us (target < 2 us)");

    let start = Instant::now();
    let mut sink = 0.0;
    for (block, park, _) in mix.iter().step_by(30).take(1000) {
        sink += distance(block, park).unwrap();
    }
    std::hint::black_box(sink);
    println!(
        "exact ambit_distance between the same polygons: {:.1} us per pair",
        start.elapsed().as_secs_f64() * 1e6 / 1000.0
    );
    println!("(point-point and point-segment costs: cargo bench --bench geodesy)");
}
