//! Point-to-segment and segment-to-segment distances against an independent
//! brute-force reference: dense sampling along the geodesic segment with
//! `geographiclib-rs` `GeodesicLine` positions and the inverse, refined by
//! golden section on both sides of the best sample (`tests/common`).
//! Source of truth: Karney's geodesic algorithms as implemented in
//! geographiclib-rs (a general-purpose reference library); the minimisation
//! is ours and independent of the code under test.

mod geodesic_reference;

use ambit::geodesy::segment::GeodesicSegment;
use ambit::geodesy::{point_segment_distance, segment_segment_distance, segments_intersect};
use geodesic_reference::{brute_psd, brute_ssd, direct, geod, RefLine, XorShift};
use geographiclib_rs::Geodesic;

/// A random segment: first end at latitude -70..70 (10% of cases within
/// 0.2 degrees of the antimeridian), length log-uniform in [lmin, lmax].
fn random_segment(
    rng: &mut XorShift,
    g: &geographiclib_rs::Geodesic,
    lmin: f64,
    lmax: f64,
) -> ((f64, f64), (f64, f64)) {
    let lat = rng.range(-70.0, 70.0);
    let lon = if rng.uniform() < 0.1 {
        180.0 + rng.range(-0.2, 0.2)
    } else {
        rng.range(-180.0, 180.0)
    };
    let lon = if lon > 180.0 { lon - 360.0 } else { lon };
    let a = (lon, lat);
    let b = direct(g, a, rng.range(-180.0, 180.0), rng.log_range(lmin, lmax));
    (a, b)
}

/// ambit's point-to-segment distance for case `i`, checked against the
/// brute-force reference to 1 µm; returns (distance, interception steps,
/// fell back, |error|, reference).
fn checked_distance(
    g: &Geodesic,
    i: usize,
    p: (f64, f64),
    a: (f64, f64),
    b: (f64, f64),
    rl: &RefLine,
) -> (f64, u32, bool, f64, f64) {
    let (d, steps, fell) = GeodesicSegment::new(a, b).distance_to_with_steps(p);
    let r = brute_psd(g, p, rl);
    let err = (d - r).abs();
    assert!(
        err <= 1e-6,
        "case {i}: p {p:?} a {a:?} b {b:?}: {d} vs brute {r}"
    );
    (d, steps, fell, err, r)
}

#[test]
fn point_segment_matches_brute_force() {
    let g = geod();
    let mut rng = XorShift::new(0x5eed_0001);
    let n = 10_000;
    let mut max_err = 0.0f64;
    let mut max_err_off = 0.0f64;
    let mut hist = [0usize; 17];
    let mut fallbacks = 0;
    let mut on_segment = 0;
    for i in 0..n {
        let (a, b) = random_segment(&mut rng, &g, 1.0, 20_000.0);
        let rl = RefLine::new(&g, a, b);
        let kind = rng.uniform();
        let p = if kind < 0.15 {
            on_segment += 1;
            rl.at(rng.uniform() * rl.len)
        } else if kind < 0.30 {
            // beyond one end, roughly along the line
            let t = if rng.uniform() < 0.5 { -1.0 } else { 1.0 } * rng.range(0.0, 5_000.0);
            let t = if t > 0.0 { rl.len + t } else { t };
            direct(
                &g,
                rl.at(t),
                rng.range(-180.0, 180.0),
                rng.range(0.0, 1_000.0),
            )
        } else {
            let base = rl.at(rng.range(-0.2, 1.2) * rl.len);
            direct(&g, base, rng.range(-180.0, 180.0), rng.range(0.0, 50_000.0))
        };
        let (d, steps, fell, err, r) = checked_distance(&g, i, p, a, b, &rl);
        hist[(steps as usize).min(16)] += 1;
        if fell {
            fallbacks += 1;
        }
        assert_eq!(d, point_segment_distance(p, a, b));
        max_err = max_err.max(err);
        if r > 1.0 {
            max_err_off = max_err_off.max(err);
        }
    }
    println!(
        "point_segment_distance vs brute force: {n} cases ({on_segment} on the segment), \
         max |error| = {max_err:.3e} m ({max_err_off:.3e} m for distances over 1 m), \
         fallbacks = {fallbacks}"
    );
    println!(
        "interception steps histogram (steps: count): {:?}",
        hist.iter()
            .enumerate()
            .filter(|(_, c)| **c > 0)
            .collect::<Vec<_>>()
    );
    assert_eq!(fallbacks, 0);
}

#[test]
fn point_segment_long_segments_and_far_points() {
    // Supported range: segments up to 1000 km, points up to 1000 km away.
    let g = geod();
    let mut rng = XorShift::new(0x5eed_0002);
    let n = 2_000;
    let mut max_err = 0.0f64;
    let mut max_steps = 0;
    for i in 0..n {
        let (a, b) = random_segment(&mut rng, &g, 50_000.0, 1_000_000.0);
        let rl = RefLine::new(&g, a, b);
        let base = rl.at(rng.range(-0.3, 1.3) * rl.len);
        let p = direct(
            &g,
            base,
            rng.range(-180.0, 180.0),
            rng.range(0.0, 1_000_000.0),
        );
        let (_, steps, fell, err, _) = checked_distance(&g, i, p, a, b, &rl);
        assert!(!fell, "case {i} fell back");
        max_steps = max_steps.max(steps);
        max_err = max_err.max(err);
    }
    println!(
        "long segments (50-1000 km, points to 1000 km): {n} cases, max |error| = {max_err:.3e} m, \
         max steps = {max_steps}"
    );
}

// 10,000 cases in two halves with their own seeds, so the test harness runs
// them on two threads.
#[test]
fn segment_segment_matches_brute_force_over_both_segments_1() {
    segment_segment_cases(0x5eed_0003, 5_000);
}

#[test]
fn segment_segment_matches_brute_force_over_both_segments_2() {
    segment_segment_cases(0x5eed_0004, 5_000);
}

#[test]
fn segment_segment_long_segments() {
    // Segments of 50 to 1000 km, the other within 300 km.
    segment_segment_cases_with(0x5eed_0007, 1_000, 50_000.0, 1_000_000.0, 300_000.0);
}

/// The claim "0 if they cross, else the least of the four end-to-segment
/// distances" against a brute-force minimisation over both segments.
fn segment_segment_cases(seed: u64, n: usize) {
    segment_segment_cases_with(seed, n, 1.0, 20_000.0, 30_000.0);
}

fn segment_segment_cases_with(seed: u64, n: usize, lmin: f64, lmax: f64, reach: f64) {
    let g = geod();
    let mut rng = XorShift::new(seed);
    let mut max_err = 0.0f64;
    let mut crossings = 0;
    let mut detected = 0;
    for i in 0..n {
        let (a1, a2) = random_segment(&mut rng, &g, lmin, lmax);
        let ra = RefLine::new(&g, a1, a2);
        let (b1, b2, crossing) = if rng.uniform() < 0.3 {
            // B through a point X of A, in a random direction.
            let x = ra.at(rng.uniform() * ra.len);
            let az = rng.range(-180.0, 180.0);
            let lb = rng.log_range(lmin, lmax);
            let f = rng.range(0.05, 0.95);
            (
                direct(&g, x, az + 180.0, f * lb),
                direct(&g, x, az, (1.0 - f) * lb),
                true,
            )
        } else {
            let base = ra.at(rng.range(-0.2, 1.2) * ra.len);
            let b1 = direct(&g, base, rng.range(-180.0, 180.0), rng.range(0.0, reach));
            let b2 = direct(&g, b1, rng.range(-180.0, 180.0), rng.log_range(lmin, lmax));
            (b1, b2, false)
        };
        let rb = RefLine::new(&g, b1, b2);
        let d = segment_segment_distance(a1, a2, b1, b2);
        let x = segments_intersect(a1, a2, b1, b2);
        if crossing {
            crossings += 1;
            assert!(x, "case {i}: constructed crossing not detected");
        }
        if x {
            detected += 1;
        }
        let r = brute_ssd(&g, &ra, &rb, 16, 16);
        let err = (d - r).abs();
        assert!(
            err <= 1e-6,
            "case {i}: {a1:?} {a2:?} / {b1:?} {b2:?}: {d} vs brute {r} (x={x})"
        );
        max_err = max_err.max(err);
    }
    println!(
        "segment_segment_distance vs brute force over both segments (seed {seed:#x}, lengths \
         {lmin}..{lmax} m): {n} cases ({crossings} constructed crossings, {detected} found crossing), max |error| = {max_err:.3e} m"
    );
}

#[test]
fn brute_force_reference_is_itself_accurate() {
    // The reference at 64 samples and 1e-10 m against a much denser one (512
    // samples, golden section to 1e-11 m): they must agree to 0.1 um.
    let g = geod();
    let mut rng = XorShift::new(0x5eed_0005);
    let mut max_diff = 0.0f64;
    for _ in 0..300 {
        let (a, b) = random_segment(&mut rng, &g, 1.0, 20_000.0);
        let rl = RefLine::new(&g, a, b);
        let base = rl.at(rng.range(-0.2, 1.2) * rl.len);
        let p = direct(&g, base, rng.range(-180.0, 180.0), rng.range(0.0, 50_000.0));
        let coarse = brute_psd(&g, p, &rl);
        let mut f = |t: f64| geodesic_reference::dist(&g, rl.at(t), p);
        let fine = geodesic_reference::sample_and_golden(&mut f, rl.len, 512, 1e-11);
        max_diff = max_diff.max((coarse - fine).abs());
    }
    println!("brute-force reference, 64 vs 512 samples: max difference {max_diff:.3e} m");
    assert!(max_diff < 1e-7);
}

#[test]
fn point_segment_near_the_poles() {
    // Outside the main domain of the brief (|lat| > 70), to show the method
    // holds there too: segments 1 m to 200 km with a first end at |lat| 80
    // to 89.99 (many pass over or near a pole), points up to 50 km away.
    let g = geod();
    let mut rng = XorShift::new(0x5eed_0006);
    let n = 2_000;
    let mut max_err = 0.0f64;
    let mut max_steps = 0;
    for i in 0..n {
        let lat = rng.range(80.0, 89.99) * if rng.uniform() < 0.5 { 1.0 } else { -1.0 };
        let a = (rng.range(-180.0, 180.0), lat);
        let b = direct(
            &g,
            a,
            rng.range(-180.0, 180.0),
            rng.log_range(1.0, 200_000.0),
        );
        let rl = RefLine::new(&g, a, b);
        let base = rl.at(rng.range(-0.2, 1.2) * rl.len);
        let p = direct(&g, base, rng.range(-180.0, 180.0), rng.range(0.0, 50_000.0));
        let (_, steps, fell, err, _) = checked_distance(&g, i, p, a, b, &rl);
        assert!(!fell, "case {i} fell back");
        max_steps = max_steps.max(steps);
        max_err = max_err.max(err);
    }
    println!(
        "near the poles (|lat| 80..89.99, segments to 200 km): {n} cases, max |error| = {max_err:.3e} m, max steps = {max_steps}"
    );
}
