//! The fast path: a flat-ellipsoid local metric with a rigorous error bound,
//! and conservative degree padding for envelopes.
//!
//! # Local metric
//!
//! For two points p, q the ellipsoid is flattened at their mid-latitude
//! φm = (φp + φq) / 2 (the element of length ds² = M² dφ² + N² cos² φ dλ²
//! frozen at φm):
//!
//!   dx = N(φm) cos φm Δλ,  dy = M(φm) Δφ,  d ≈ √(dx² + dy²)
//!
//! with Δλ reduced to [−180°, 180°] (pairs across the antimeridian work).
//! Its error against the geodesic distance grows as d³ and with latitude as
//! 1 + tan² φm (the east–west term on a sphere is d³ tan² φ / (24 R²): a
//! parallel is longer than the geodesic between two of its points). The
//! bound returned is
//!
//!   err_bound = C · d³ (1 + tan² φm) / (8 a²) + 5e-8 m + 1e-14 · d
//!
//! with C = [`LOCAL_BOUND_FACTOR`] = 2, a = 6378137 m. The constant was
//! chosen from a measurement against Karney's inverse (`geographiclib-rs`)
//! over 1,000,000 random pairs at latitudes −80..80 and distances up to
//! 51 km (half uniform, half log-uniform from 1 mm) and a grid of
//! latitudes, azimuths and distances: the largest observed ratio of |error|
//! to d³ (1 + tan² φm) / (8 a²) over pairs longer than 2 km was 0.36
//! (reached near latitude 80; 0.11 below latitude 20), so C = 2 keeps a
//! safety factor of about 5.5. The 50 nm floor covers the error of the
//! exact inverse itself (Karney 2013 states 15 nm; the largest difference
//! seen below 1 m was 2.7 nm), the rounding of the longitude difference
//! (at most 6 nm) and round-off, twice over. `tests/geodesy_local.rs`
//! asserts the bound on every pair and prints the measured ratios.
//!
//! Validated domain: both latitudes in [−80, 80] and d ≤ 50 km. Outside it
//! (closer to a pole, longer pairs) the bound is `INFINITY` so the caller
//! falls back to the exact distance.
//!
//! # Degree padding
//!
//! [`degrees_padding`] turns a distance into a latitude and longitude margin
//! that provably contains every point within that geodesic distance of a
//! box: along any curve of length s, |dφ| ≤ s / M(0) (the meridian radius is
//! smallest at the equator) and |dλ| ≤ s / min(N cos φ) over the latitudes
//! the curve can reach.
//!
//! References: radii of curvature, see [`super::ellipsoid`]; geodesic
//! reference, C. F. F. Karney, "Algorithms for geodesics", J. Geodesy
//! 87:43–55 (2013), doi 10.1007/s00190-012-0578-z.

use super::ellipsoid::{parallel_radius, A, E2, MIN_MERIDIAN_RADIUS};

/// Safety-scaled constant C of the local bound
/// C · d³ (1 + tan² φm) / (8 a²) + 5e-8 m + 1e-14 d.
///
/// Units: dimensionless. Accuracy: the largest ratio of error to
/// d³ (1 + tan² φm) / (8 a²) measured over 10⁶ random pairs longer than
/// 2 km at latitudes −80..80 was 0.36 (`tests/geodesy_local.rs`, reference
/// Karney's inverse); C = 2 keeps a factor of about 5.5 in hand.
/// NULL/NaN: not applicable (constant). References: Karney 2013,
/// doi 10.1007/s00190-012-0578-z (the reference distance).
pub const LOCAL_BOUND_FACTOR: f64 = 2.0;

/// Absolute floor of the local bound: the error of the exact inverse it is
/// compared with, the rounding of the longitude difference and round-off.
///
/// Units: metres (5e-8 m = 50 nm). Accuracy: covers Karney's stated 15 nm
/// plus at most 6 nm of longitude rounding twice over; differences measured
/// at sub-metre distances stay below 3 nm (`tests/geodesy_local.rs`).
/// NULL/NaN: not applicable (constant). References: Karney 2013,
/// doi 10.1007/s00190-012-0578-z (15 nm).
pub const LOCAL_BOUND_FLOOR: f64 = 5e-8;

/// Relative floor of the local bound (round-off growing with distance).
///
/// Units: dimensionless (times the distance). Accuracy: about 100 units of
/// f64 round-off; common practice, no source. NULL/NaN: not applicable
/// (constant). References: none (round-off allowance).
pub const LOCAL_BOUND_RELATIVE: f64 = 1e-14;

/// Largest latitude (absolute) of the validated domain of the local bound.
///
/// Units: degrees. Accuracy: the edge of the validation in
/// `tests/geodesy_local.rs` (random pairs to 80.5, grid to 80). NULL/NaN:
/// not applicable (constant). References: none (ambit's measurement).
pub const LOCAL_MAX_LAT: f64 = 80.0;

/// Largest approximate distance of the validated domain of the local bound.
///
/// Units: metres. Accuracy: the edge of the validation in
/// `tests/geodesy_local.rs` (true distances sampled up to 51 km). NULL/NaN:
/// not applicable (constant). References: none (ambit's measurement).
pub const LOCAL_MAX_DISTANCE: f64 = 50_000.0;

/// Flat-ellipsoid distance at the pair's mid-latitude, with a rigorous
/// bound on its error against the geodesic distance.
///
/// Units: `p`, `q` are (lon, lat) in degrees; returns
/// `(d_approx, err_bound)` in metres, such that
/// |d_approx − geodesic distance| ≤ err_bound.
///
/// Accuracy: err_bound = 2 d³ (1 + tan² φm) / (8 a²) + 5e-8 m + 1e-14 d,
/// for example 6.5 µm at 804.672 m, 51 µm at 1609.344 m and 1.4 mm at
/// 4828.032 m at latitude 45; the actual error is at most 0.18 of the bound
/// (measured against Karney's inverse over 10⁶ random pairs,
/// `tests/geodesy_local.rs`). Outside the validated domain (|lat| > 80 for
/// either point, d_approx > 50 km) the bound is `INFINITY`.
///
/// NULL/NaN: a NaN or infinite coordinate gives `(NaN, INFINITY)`, so a
/// caller that checks the bound falls back to the exact distance (which is
/// NaN). Never panics.
///
/// References: M and N from any geodesy text (Torge & Müller, "Geodesy",
/// 4th ed., section 4.1, from memory); the bound is ambit's, measured
/// against C. F. F. Karney, "Algorithms for geodesics", J. Geodesy 87:43–55
/// (2013), doi 10.1007/s00190-012-0578-z.
#[inline]
pub fn local_distance_with_bound(p: (f64, f64), q: (f64, f64)) -> (f64, f64) {
    if !(p.0.is_finite() && p.1.is_finite() && q.0.is_finite() && q.1.is_finite()) {
        return (f64::NAN, f64::INFINITY);
    }
    // `%` is exact on f64, so each longitude is reduced without error; the
    // difference then rounds by at most 2^-44 degrees (6.3 nm), and the final
    // reduction to [-180, 180] is exact.
    let dl = q.0 % 360.0 - p.0 % 360.0;
    let dlon = (dl - 360.0 * (dl / 360.0).round()).to_radians();
    let dlat = (q.1 - p.1).to_radians();
    let phim = (0.5 * (p.1 + q.1)).to_radians();
    let (s, c) = phim.sin_cos();
    let w = 1.0 - E2 * s * s;
    let n = A / w.sqrt();
    let m = A * (1.0 - E2) / (w * w.sqrt());
    let dx = n * c * dlon;
    let dy = m * dlat;
    // No overflow or underflow is possible at these magnitudes, so the plain
    // square root is as accurate as hypot and several times faster.
    let d = (dx * dx + dy * dy).sqrt();
    if !(p.1.abs() <= LOCAL_MAX_LAT && q.1.abs() <= LOCAL_MAX_LAT && d <= LOCAL_MAX_DISTANCE) {
        return (d, f64::INFINITY);
    }
    // 1 + tan^2 = 1 / cos^2; cos >= cos 80 deg > 0.17 here.
    let bound = LOCAL_BOUND_FACTOR * d * d * d / (8.0 * A * A * c * c)
        + LOCAL_BOUND_FLOOR
        + LOCAL_BOUND_RELATIVE * d;
    (d, bound)
}

/// Decide `distance(p, q) <= threshold` from the local metric when its
/// error bound allows, without changing the answer.
///
/// Units: `p`, `q` (lon, lat) in degrees; `threshold` in metres.
///
/// Accuracy: `Some(answer)` is returned only when
/// |d_approx − threshold| > err_bound, so it always equals the exact test
/// with Karney's distance (0 mismatches on 100,000+ pairs within 1 m of
/// typical thresholds, `tests/geodesy_local.rs`); otherwise `None` and the
/// caller computes the exact distance. Ties go to the exact path.
///
/// NULL/NaN: `None` for NaN or infinite coordinates or a NaN threshold.
/// Never panics.
///
/// References: see [`local_distance_with_bound`].
#[inline]
pub fn within_fast(p: (f64, f64), q: (f64, f64), threshold: f64) -> Option<bool> {
    let (d, e) = local_distance_with_bound(p, q);
    if !e.is_finite() {
        return None;
    }
    if d - threshold > e {
        Some(false)
    } else if threshold - d > e {
        Some(true)
    } else {
        None
    }
}

/// Conservative margins, in degrees, that contain every point within
/// `metres` (geodesic) of a box whose latitudes span [lat_min, lat_max].
///
/// Units: latitudes in degrees, `metres` in metres; returns `(dlon, dlat)`
/// in degrees. A point within `metres` of any point of the box
/// [lon_min, lon_max] × [lat_min, lat_max] lies in
/// [lon_min − dlon, lon_max + dlon] × [lat_min − dlat, lat_max + dlat]
/// (longitudes compared modulo 360).
///
/// Method: dlat = metres / M(0), M(0) = a (1 − e²) the smallest meridian
/// radius; dlon = metres / min N cos φ over the grown latitude range, i.e.
/// at the grown latitude farthest from the equator (N cos φ, the distance
/// from the axis, falls monotonically with |φ|). Both are rounded outward
/// by a relative 1e-12 plus 1e-15 degrees (far above the few-ulp
/// round-off of the arithmetic). When the grown range reaches a pole, or
/// dlon would reach 180, dlon = 360 (the whole circle).
///
/// Accuracy: rigorous (it is an inequality, not an estimate); tested
/// against random points placed with Karney's direct problem in
/// `tests/geodesy_local.rs`.
///
/// NULL/NaN: any NaN argument gives (NaN, NaN). A negative `metres` is
/// treated as 0. An infinite `metres` gives (360, INFINITY). Never panics.
///
/// References: radii of curvature, see [`super::ellipsoid`] (Torge &
/// Müller, "Geodesy", 4th ed., section 4.1, from memory); NIMA TR8350.2.
pub fn degrees_padding(lat_min: f64, lat_max: f64, metres: f64) -> (f64, f64) {
    if lat_min.is_nan() || lat_max.is_nan() || metres.is_nan() {
        return (f64::NAN, f64::NAN);
    }
    let metres = metres.max(0.0);
    let outward = |x: f64| x * (1.0 + 1e-12) + 1e-15;
    let dlat = outward((metres / MIN_MERIDIAN_RADIUS).to_degrees());
    let lo = lat_min.min(lat_max) - dlat;
    let hi = lat_min.max(lat_max) + dlat;
    let far = lo.abs().max(hi.abs());
    if far >= 90.0 || far.is_nan() {
        return (360.0, dlat);
    }
    // Shrink the parallel radius a little so that its round-off cannot make
    // the margin too small.
    let p = parallel_radius(far) * (1.0 - 1e-12);
    if p <= 0.0 || p.is_nan() {
        return (360.0, dlat);
    }
    let dlon = outward((metres / p).to_degrees());
    if dlon >= 180.0 || dlon.is_nan() {
        return (360.0, dlat);
    }
    (dlon, dlat)
}
