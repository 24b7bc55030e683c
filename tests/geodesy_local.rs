//! The fast path (flat ellipsoid at the mid-latitude with an error bound)
//! and the degree padding, against Karney's geodesic algorithms as
//! implemented in `geographiclib-rs` (a general-purpose reference library).

mod geodesic_reference;

use ambit::geodesy::ellipsoid::A;
use ambit::geodesy::{degrees_padding, distance, local_distance_with_bound, within_fast};
use geodesic_reference::{direct, geod, XorShift};

/// Random first point: latitude uniform in [-lat_max, lat_max], longitude
/// uniform, 10% of cases within 0.5 degrees of the antimeridian.
fn random_point(rng: &mut XorShift, lat_max: f64) -> (f64, f64) {
    let lat = rng.range(-lat_max, lat_max);
    let lon = if rng.uniform() < 0.1 {
        let l = 180.0 + rng.range(-0.5, 0.5);
        if l > 180.0 {
            l - 360.0
        } else {
            l
        }
    } else {
        rng.range(-180.0, 180.0)
    };
    (lon, lat)
}

/// The design page's envelope d^3 (1 + tan^2 phi) / (8 R^2), R = a.
fn envelope(d: f64, lat_deg: f64) -> f64 {
    let t = lat_deg.to_radians().tan();
    d * d * d * (1.0 + t * t) / (8.0 * A * A)
}

#[test]
fn local_bound_holds_on_a_million_random_pairs() {
    // Reference: Karney's inverse (geographiclib-rs via ambit::geodesy::distance).
    let g = geod();
    let mut rng = XorShift::new(0x0001_0ca1_0001);
    let n = 1_000_000;
    let mut in_domain = 0usize;
    let mut max_ratio = 0.0f64; // |err| / envelope, pairs with d > 2 km
    let mut band_ratio = [0.0f64; 4]; // the same by |lat| band 0-20-40-60-80
    let mut max_ratio_at = (0.0, 0.0);
    let mut max_err_small = 0.0f64; // |err| for d < 1 m
    let mut max_use = 0.0f64; // |err| / err_bound
    for i in 0..n {
        let p = random_point(&mut rng, 80.5);
        let s = if i % 2 == 0 {
            rng.range(0.0, 51_000.0)
        } else {
            rng.log_range(1e-3, 51_000.0)
        };
        let q = direct(&g, p, rng.range(-180.0, 180.0), s);
        let (d, e) = local_distance_with_bound(p, q);
        if !e.is_finite() {
            assert!(
                p.1.abs() > 80.0 || q.1.abs() > 80.0 || d > 50_000.0,
                "{p:?} {q:?}"
            );
            continue;
        }
        in_domain += 1;
        let exact = distance(p.0, p.1, q.0, q.1);
        let err = (d - exact).abs();
        assert!(
            err <= e,
            "bound violated: {p:?} {q:?} d={d} exact={exact} bound={e}"
        );
        max_use = max_use.max(err / e);
        let latm = 0.5 * (p.1 + q.1);
        if exact > 2_000.0 {
            let r = err / envelope(exact, latm);
            let band = ((latm.abs() / 20.0) as usize).min(3);
            band_ratio[band] = band_ratio[band].max(r);
            if r > max_ratio {
                max_ratio = r;
                max_ratio_at = (exact, latm);
            }
        }
        if exact < 1.0 {
            max_err_small = max_err_small.max(err);
        }
    }
    println!(
        "local metric: {in_domain} of {n} pairs in the validated domain; \
         max |err| / (d^3 (1+tan^2)/(8 a^2)) over d > 2 km = {max_ratio:.4} (at d = {:.0} m, \
         lat {:.2}); by |lat| band 0-20/20-40/40-60/60-80: {band_ratio:.4?}; \
         max |err| below 1 m = {max_err_small:.2e} m; max |err| / bound = {max_use:.4}",
        max_ratio_at.0, max_ratio_at.1
    );
    assert!(in_domain > 900_000);
}

#[test]
fn local_error_at_design_page_distances() {
    // The design page says: under 5 um at 0.8 km and under 40 mm at 16 km up
    // to latitude 70. Measured here against Karney's inverse.
    let g = geod();
    let mut rng = XorShift::new(0x0001_0ca1_0002);
    for (s, claim) in [(804.672, 5e-6), (16_000.0, 0.040)] {
        let mut max_err = 0.0f64;
        for _ in 0..20_000 {
            let p = random_point(&mut rng, 70.0);
            let q = direct(&g, p, rng.range(-180.0, 180.0), s);
            if q.1.abs() > 70.0 {
                continue;
            }
            let (d, _) = local_distance_with_bound(p, q);
            max_err = max_err.max((d - distance(p.0, p.1, q.0, q.1)).abs());
        }
        println!(
            "local metric at {s} m, |lat| <= 70: max |err| = {max_err:.3e} m (design page: < {claim:e})"
        );
        assert!(max_err < claim);
    }
}

#[test]
fn within_fast_never_disagrees_near_thresholds() {
    // Thresholds: half a mile, one mile, three miles (international mile =
    // 1609.344 m exactly).
    let g = geod();
    let mut rng = XorShift::new(0x0001_0ca1_0003);
    let thresholds = [804.672, 1609.344, 4828.032];
    let per = 40_000;
    let mut settled = 0usize;
    let mut total = 0usize;
    for &thr in &thresholds {
        for i in 0..per {
            let p = random_point(&mut rng, 80.0);
            // Within 1 m of the threshold; every 10th within 1 mm.
            let off = if i % 10 == 0 {
                rng.range(-1e-3, 1e-3)
            } else {
                rng.range(-1.0, 1.0)
            };
            let q = direct(&g, p, rng.range(-180.0, 180.0), thr + off);
            let exact = distance(p.0, p.1, q.0, q.1) <= thr;
            total += 1;
            if let Some(fast) = within_fast(p, q, thr) {
                settled += 1;
                assert_eq!(fast, exact, "mismatch: {p:?} {q:?} threshold {thr}");
            }
        }
    }
    println!(
        "within_fast near thresholds (within 1 m): {total} pairs, 0 mismatches, settled {:.2}%",
        100.0 * settled as f64 / total as f64
    );
    assert!(total >= 100_000);
}

#[test]
fn within_fast_settle_share_realistic_mix() {
    let g = geod();
    let mut rng = XorShift::new(0x0001_0ca1_0004);
    let thresholds = [804.672, 1609.344, 4828.032];
    let n = 300_000;
    let mut settled = 0usize;
    for i in 0..n {
        let thr = thresholds[i % 3];
        let p = random_point(&mut rng, 70.0);
        let q = direct(&g, p, rng.range(-180.0, 180.0), rng.range(0.0, 10_000.0));
        if let Some(fast) = within_fast(p, q, thr) {
            settled += 1;
            assert_eq!(fast, distance(p.0, p.1, q.0, q.1) <= thr);
        }
    }
    println!(
        "within_fast realistic mix (thresholds 804.672/1609.344/4828.032 m, distances uniform \
         0..10 km, |lat| <= 70): settled {:.4}% of {n} pairs by the fast path ({} left to the \
         exact path)",
        100.0 * settled as f64 / n as f64,
        n - settled
    );
}

#[test]
fn local_bound_holds_on_a_grid_up_to_the_domain_edge() {
    // Grid of first latitudes, azimuths and distances up to the edge of the
    // validated domain (|lat| <= 80, d <= 50 km); reference Karney's inverse.
    let g = geod();
    let mut max_use = 0.0f64;
    let mut checked = 0;
    for lat_i in -16..=16 {
        let lat = lat_i as f64 * 5.0;
        for az_i in 0..72 {
            let az = az_i as f64 * 5.0;
            for &s in &[
                1.0, 100.0, 1_000.0, 5_000.0, 10_000.0, 20_000.0, 35_000.0, 49_000.0,
            ] {
                let p = (179.9, lat);
                let q = direct(&g, p, az, s);
                let (d, e) = local_distance_with_bound(p, q);
                if !e.is_finite() {
                    continue;
                }
                checked += 1;
                let err = (d - distance(p.0, p.1, q.0, q.1)).abs();
                assert!(err <= e, "{p:?} {q:?}: err {err} bound {e}");
                max_use = max_use.max(err / e);
            }
        }
    }
    println!(
        "local metric grid (lon 179.9, across the antimeridian): {checked} pairs, max |err| / bound = {max_use:.4}"
    );
}

#[test]
fn local_outside_domain_and_nan() {
    // Beyond the validated domain the bound is infinite, so the caller
    // must use the exact distance (common practice, no source).
    assert_eq!(
        local_distance_with_bound((0.0, 80.5), (0.0, 80.6)).1,
        f64::INFINITY
    );
    assert_eq!(
        local_distance_with_bound((0.0, 0.0), (0.5, 0.0)).1,
        f64::INFINITY
    ); // 55.7 km
    assert_eq!(
        local_distance_with_bound((0.0, 89.9), (180.0, 89.9)).1,
        f64::INFINITY
    );
    let (d, e) = local_distance_with_bound((f64::NAN, 0.0), (0.0, 0.0));
    assert!(d.is_nan() && e == f64::INFINITY);
    assert_eq!(within_fast((f64::NAN, 0.0), (0.0, 0.0), 100.0), None);
    assert_eq!(within_fast((0.0, 0.0), (0.0, 0.001), f64::NAN), None);
    assert_eq!(within_fast((0.0, 0.0), (f64::INFINITY, 0.001), 100.0), None);
    // Across the antimeridian: 179.999 to -179.999 is 0.002 degrees of
    // longitude, about 222.6 m at the equator (a 0.002 * pi / 180 = 222.64 m).
    let (d, e) = local_distance_with_bound((179.999, 0.0), (-179.999, 0.0));
    assert!((d - 222.638_981_6).abs() < 1e-3 && e < 1e-6, "{d} {e}");
    assert_eq!(
        within_fast((179.999, 0.0), (-179.999, 0.0), 804.672),
        Some(true)
    );
    // Longitudes written outside [-180, 180] (each reduced exactly modulo
    // 360): the same pair gives the same answer within round-off.
    let (d0, e0) = local_distance_with_bound((-179.9995, 10.0), (179.9995, 10.0001));
    for (k1, k2) in [(360.0, -360.0), (3600.0, -7200.0), (-1.44e6, 3.6e8)] {
        let (d1, e1) = local_distance_with_bound((-179.9995 + k1, 10.0), (179.9995 + k2, 10.0001));
        // (Adding k rounds the input itself: by up to 7 mm of longitude for
        // k = 3.6e8, so only the exact comparison is tight there.)
        let tol = if k2.abs() < 1e4 { 1e-7 } else { 1e-2 };
        assert!(
            (d1 - d0).abs() < tol && e1.is_finite() && (e1 - e0).abs() < 1e-9,
            "{k1} {k2}: {d1} vs {d0}"
        );
        let exact = distance(-179.9995 + k1, 10.0, 179.9995 + k2, 10.0001);
        assert!((d1 - exact).abs() <= e1);
    }
    // Ties go to the exact path.
    let (d, _) = local_distance_with_bound((10.0, 10.0), (10.0, 10.001));
    assert_eq!(within_fast((10.0, 10.0), (10.0, 10.001), d), None);
}

#[test]
fn degrees_padding_contains_random_points() {
    // Points placed at geodesic distance <= metres from a random box point
    // with Karney's direct problem (geographiclib-rs) must fall inside the
    // grown box.
    let g = geod();
    let mut rng = XorShift::new(0x0001_0ca1_0005);
    let n = 200_000;
    let mut tight_lat = 0.0f64;
    let mut tight_lon = 0.0f64;
    let mut whole_circle = 0;
    for _ in 0..n {
        let lat_min = rng.range(-89.0, 88.0);
        let lat_max = (lat_min + rng.range(0.0, 3.0)).min(89.99);
        let lon_min = rng.range(-180.0, 180.0);
        let lon_w = rng.range(0.0, 5.0);
        let metres = if rng.uniform() < 0.9 {
            rng.log_range(1.0, 100_000.0)
        } else {
            rng.range(1e5, 2e6)
        };
        let (dlon, dlat) = degrees_padding(lat_min, lat_max, metres);
        assert!(dlon > 0.0 && dlat > 0.0);
        let x = (lon_min + rng.range(0.0, lon_w), rng.range(lat_min, lat_max));
        // Concentrate the distance near its maximum.
        let s = metres * rng.uniform().powf(0.05);
        let q = direct(&g, x, rng.range(-180.0, 180.0), s);
        assert!(
            q.1 >= lat_min - dlat && q.1 <= lat_max + dlat,
            "lat {q:?} box {lat_min}..{lat_max} pad {dlat}"
        );
        let ex_lat = (lat_min - q.1).max(q.1 - lat_max).max(0.0);
        tight_lat = tight_lat.max(ex_lat / dlat);
        if dlon >= 360.0 {
            whole_circle += 1;
            continue;
        }
        // Longitude outside [lon_min, lon_min + lon_w], modulo 360.
        let rel = (q.0 - lon_min).rem_euclid(360.0);
        let ex_lon = if rel <= lon_w {
            0.0
        } else {
            (rel - lon_w).min(360.0 - rel)
        };
        assert!(ex_lon <= dlon, "lon {q:?} box {lon_min}+{lon_w} pad {dlon}");
        tight_lon = tight_lon.max(ex_lon / dlon);
    }
    println!(
        "degrees_padding: {n} random points all inside the grown box ({whole_circle} with the whole \
         circle); largest used share of the padding: lat {tight_lat:.6}, lon {tight_lon:.6}"
    );
    // A box reaching a pole once grown takes the whole circle of longitude.
    assert_eq!(degrees_padding(89.9, 89.95, 20_000.0).0, 360.0);
    assert_eq!(degrees_padding(-89.999, -89.0, 1_000.0).0, 360.0);
    let (a, b) = degrees_padding(f64::NAN, 1.0, 1.0);
    assert!(a.is_nan() && b.is_nan());
    // At the equator 1 km is 1000 / M(0) rad = 0.0090437 deg of latitude
    // (M(0) = a (1 - e2) = 6335439.327 m, NIMA TR8350.2 constants).
    let (dlon, dlat) = degrees_padding(0.0, 0.0, 1_000.0);
    assert!((dlat - 0.009_043_695).abs() < 1e-8, "{dlat}");
    assert!(dlon > 0.008_983 && dlon < 0.008_984, "{dlon}");
}
