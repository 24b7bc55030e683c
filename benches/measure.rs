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

fn main() {
    let mut rng = XorShift(0xbe7c_4a11);
    let n = 20_000;
    let thresholds = [0.5, 1.0, 3.0].map(|m| m * METRES_PER_MILE);
    let mut pairs = Vec::with_capacity(n);
    for _ in 0..n {
        let c = (rng.uniform(-135.0, -125.0), rng.uniform(30.0, 50.0));
        let r = rng.uniform(60.0, 300.0);
        let block = star(&mut rng, c, 39, r);
        let offset = rng.uniform(0.0, 10_000.0) / 111_000.0;
        let angle = rng.uniform(0.0, std::f64::consts::TAU);
        let k = 1.0 / c.1.to_radians().cos();
        let d = (c.0 + offset * k * angle.cos(), c.1 + offset * angle.sin());
        let r = rng.uniform(50.0, 800.0);
        let park = star(&mut rng, d, 29, r);
        pairs.push((block, park));
    }

    let mut decisions = 0u64;
    let mut settled = 0u64;
    let mut reached = 0u64;
    let start = Instant::now();
    for (block, park) in &pairs {
        for &t in &thresholds {
            let mut work = Work::default();
            if within_counted(block, park, t, &mut work) {
                reached += 1;
            }
            decisions += 1;
            if work.exact == 0 {
                settled += 1;
            }
        }
    }
    let within_us = start.elapsed().as_secs_f64() * 1e6 / decisions as f64;

    let start = Instant::now();
    let mut sink = 0.0;
    for (block, park) in pairs.iter().take(2000) {
        sink += distance(block, park).unwrap();
    }
    std::hint::black_box(sink);
    let distance_us = start.elapsed().as_secs_f64() * 1e6 / 2000.0;

    println!("{n} block-park pairs (40- and 30-vertex polygons, centres 0-10 km apart), thresholds 0.5, 1, 3 mi");
    println!(
        "  within: {decisions} decisions, {:.1}% within reach, {:.2}% settled without an exact geodesic computation",
        100.0 * reached as f64 / decisions as f64,
        100.0 * settled as f64 / decisions as f64
    );
    println!(
        "  within: {within_us:.1} us per decision; exact distance: {distance_us:.1} us per pair"
    );
}
