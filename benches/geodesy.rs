//! Quick timings of the geodesy core (printed, never asserted: wall time
//! depends on the machine). Run with `cargo bench --bench geodesy`.

#[path = "../tests/geodesic_reference/mod.rs"]
mod geodesic_reference;

use ambit::geodesy::segment::GeodesicSegment;
use ambit::geodesy::*;
use geodesic_reference::{direct, geod, XorShift};
use geographiclib_rs::Geodesic;
use std::hint::black_box;
use std::time::Instant;

fn ns_per(n: usize, t: Instant) -> f64 {
    t.elapsed().as_nanos() as f64 / n as f64
}

fn main() {
    let g = geod();
    let mut rng = XorShift::new(0x5bee_d001);
    let n = 100_000;
    // Pairs within 10 km; segments 100 m to 20 km with points within 5 km
    // of them (typical of block-to-park edges).
    let mut pairs = Vec::with_capacity(n);
    let mut segs = Vec::with_capacity(n);
    for _ in 0..n {
        let p = (rng.range(-180.0, 180.0), rng.range(-70.0, 70.0));
        let q = direct(&g, p, rng.range(-180.0, 180.0), rng.range(0.0, 10_000.0));
        pairs.push((p, q));
        let b = direct(
            &g,
            p,
            rng.range(-180.0, 180.0),
            rng.log_range(100.0, 20_000.0),
        );
        let x = direct(&g, p, rng.range(-180.0, 180.0), rng.range(0.0, 10_000.0));
        let c = direct(&g, x, rng.range(-180.0, 180.0), rng.range(0.0, 5_000.0));
        let d = direct(
            &g,
            c,
            rng.range(-180.0, 180.0),
            rng.log_range(100.0, 20_000.0),
        );
        segs.push((x, p, b, c, d));
    }

    let t = Instant::now();
    let mut acc = 0.0;
    for i in 0..n {
        let gg = Geodesic::new(6_378_137.0, black_box(1.0 / 298.257_223_563));
        acc += black_box(&gg).a;
        let _ = i;
    }
    let t_new = ns_per(n, t);
    let t = Instant::now();
    for _ in 0..n {
        acc += black_box(Geodesic::wgs84()).a;
    }
    let t_copy = ns_per(n, t);
    let t = Instant::now();
    for _ in 0..n {
        acc += black_box(inverse::wgs84()).a;
    }
    let t_static = ns_per(n, t);

    let t = Instant::now();
    for &(p, q) in &pairs {
        acc += distance(p.0, p.1, q.0, q.1);
    }
    let t_dist = ns_per(n, t);
    let t = Instant::now();
    for &(p, q) in &pairs {
        acc += inverse(p.0, p.1, q.0, q.1).1;
    }
    let t_inv = ns_per(n, t);
    let t = Instant::now();
    for &(p, q) in &pairs {
        acc += local_distance_with_bound(p, q).0;
    }
    let t_local = ns_per(n, t);
    let t = Instant::now();
    let mut settled = 0;
    for &(p, q) in &pairs {
        if within_fast(p, q, 1609.344).is_some() {
            settled += 1;
        }
    }
    let t_fast = ns_per(n, t);

    let t = Instant::now();
    for &(x, a, b, _, _) in &segs {
        acc += point_segment_distance(x, a, b);
    }
    let t_psd = ns_per(n, t);
    let prepared: Vec<GeodesicSegment> = segs
        .iter()
        .map(|s| GeodesicSegment::new(s.1, s.2))
        .collect();
    let t = Instant::now();
    let mut steps_total = 0u64;
    for (s, &(x, ..)) in prepared.iter().zip(&segs) {
        let (d, steps, _) = s.distance_to_with_steps(x);
        acc += d;
        steps_total += steps as u64;
    }
    let t_prep = ns_per(n, t);
    let t = Instant::now();
    for &(_, a, b, c, d) in &segs {
        acc += segment_segment_distance(a, b, c, d);
    }
    let t_ssd = ns_per(n, t);
    let t = Instant::now();
    let mut crossing = 0;
    for &(_, a, b, c, d) in &segs {
        if segments_intersect(a, b, c, d) {
            crossing += 1;
        }
    }
    let t_x = ns_per(n, t);
    black_box(acc);

    println!("timings, release build, ns per call (means over {n} calls):");
    println!("  Geodesic::new (construct)        {t_new:8.1}");
    println!("  Geodesic::wgs84() (copy out)     {t_copy:8.1}");
    println!("  ambit inverse::wgs84() (&static) {t_static:8.1}");
    println!("  distance (pairs < 10 km)         {t_dist:8.1}");
    println!("  inverse with azimuths            {t_inv:8.1}");
    println!("  local_distance_with_bound        {t_local:8.1}");
    println!("  within_fast (1609.344 m)         {t_fast:8.1}   settled {settled} of {n}");
    println!("  point_segment_distance           {t_psd:8.1}");
    println!(
        "  GeodesicSegment::distance_to     {t_prep:8.1}   (prepared; mean {:.2} interception steps)",
        steps_total as f64 / n as f64
    );
    println!("  segment_segment_distance         {t_ssd:8.1}");
    println!("  segments_intersect               {t_x:8.1}   ({crossing} crossing)");
}
