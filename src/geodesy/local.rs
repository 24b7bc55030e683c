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

/// Rigorous lower and upper bounds (metres) on the geodesic minimum
/// distance between the geodesic edges a1-a2 and b1-b2 (an edge may be a
/// single point, a1 == a2), from a flat frame; (0, INFINITY) where the
/// frame is not valid. Cheap: a few tens of nanoseconds, against
/// microseconds for the exact distance.
///
/// Method: the four ends are mapped to an equirectangular frame at their
/// mean latitude φm (x = N(φm) cos φm Δλ, y = M(φm) Δφ, Δλ reduced across
/// the antimeridian), and the planar distance between the two chords is
/// taken (0 if they cross). Three corrections make it a bound:
/// - the geodesic edges bow away from their chords in the frame by at most
///   L² |tan φ| / (4R) on the sphere (from lat'' = −sin φ cos φ −
///   2 tan φ lat'² along a great circle, see crate::proximity::contain),
///   doubled for the ellipsoid: both bows are subtracted;
/// - lengths in the frame differ from lengths on the ellipsoid by the ratio
///   of the true to the frozen radii of curvature across the latitude band
///   the edges and the geodesic between their nearest points can reach;
///   the result is multiplied by the least such ratio k (meridian radius M
///   at the band's edge nearest the equator, parallel radius N cos φ at the
///   edge farthest from it);
/// - 1 µm is subtracted for round-off.
///
/// Any path on the ellipsoid between the two edges that stays in the band
/// is at least k times as long as its image in the frame, which is at
/// least the distance between the bowed images of the edges; so the lower
/// bound holds. For the upper bound, the straight frame segment between
/// the chords' nearest points, extended by both bows to reach the edges
/// themselves, is a path in the band at most K times longer on the
/// ellipsoid than in the frame (K the largest ratio of radii in the band),
/// so the distance is at most K (planar + both bows) + 1 µm. Valid domain: |lat| ≤ [`LOCAL_MAX_LAT`], the four ends within
/// [`LOCAL_MAX_DISTANCE`] of each other; elsewhere 0 (no pruning).
/// tests/proximity_bruteforce.rs checks it against the exact distance.
pub fn edge_distance_bounds(
    a1: (f64, f64),
    a2: (f64, f64),
    b1: (f64, f64),
    b2: (f64, f64),
) -> (f64, f64) {
    match FlatFrame::around(a1, a2, b1, b2) {
        Some(frame) => frame.bounds(a1, a2, b1, b2),
        None => (0.0, f64::INFINITY),
    }
}

/// The flat frame of [`edge_distance_bounds`] for four ends, kept so that
/// the bounds between any two edges (or points) among those ends can be
/// had without computing it again: a pair of edges and then each end
/// against the other edge, as the exact edge-to-edge distance asks.
///
/// Bounds from the frame of four ends hold for any sub-problem on those
/// ends: every ingredient of the proof above is taken over all four (the
/// latitude band, the span that bounds the length of any geodesic among
/// them, the radii ratios k and K relative to the frame's own radii, and
/// the frame's centre latitude, which may be any latitude of the band), so
/// for fewer ends they are only looser.
#[derive(Clone, Copy, Debug)]
pub struct FlatFrame {
    origin_lon: f64,
    lat_m: f64,
    kx: f64,
    ky: f64,
    /// The least and largest ratio of true to frame lengths in the band.
    k: f64,
    big_k: f64,
    /// bow(l) = l² bow_factor: the most a geodesic edge of frame length l
    /// bows away from its chord in the frame.
    bow_factor: f64,
}

impl FlatFrame {
    /// The frame for the ends a1, a2, b1, b2; `None` where it is not valid
    /// (beyond [`LOCAL_MAX_LAT`], the ends farther than
    /// [`LOCAL_MAX_DISTANCE`] apart, or a band reaching within a degree of
    /// a pole).
    pub fn around(
        a1: (f64, f64),
        a2: (f64, f64),
        b1: (f64, f64),
        b2: (f64, f64),
    ) -> Option<FlatFrame> {
        let lats = [a1.1, a2.1, b1.1, b2.1];
        let lat_lo = lats.iter().copied().fold(f64::INFINITY, f64::min);
        let lat_hi = lats.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        if !(lat_lo >= -LOCAL_MAX_LAT && lat_hi <= LOCAL_MAX_LAT) {
            return None;
        }
        let lat_m = (lats[0] + lats[1] + lats[2] + lats[3]) / 4.0;
        let (ky, kx) = radii(lat_m);
        let mut frame = FlatFrame {
            origin_lon: a1.0,
            lat_m,
            kx,
            ky,
            k: 0.0,
            big_k: 0.0,
            bow_factor: 0.0,
        };
        let span = [a1, a2, b1, b2]
            .iter()
            .map(|&p| {
                let q = frame.map(p);
                q.0.abs().max(q.1.abs())
            })
            .fold(0.0, f64::max);
        // (NaN coordinates give a NaN span: no frame.)
        if span.is_nan() || span > LOCAL_MAX_DISTANCE {
            return None;
        }
        // The band: the ends' latitudes grown by the bow of any geodesic
        // among them, in radians. Each end lies within `span` of the
        // origin in both frame coordinates, so two ends lie within
        // 2 sqrt(2) span of each other in the frame (1% more on the
        // ellipsoid covers the radii ratio and the bows).
        let reach = 2.0 * std::f64::consts::SQRT_2 * span * 1.01;
        let tan_max = (lat_lo.abs().max(lat_hi.abs()) + 1.0).to_radians().tan();
        frame.bow_factor = (tan_max + 0.01) / (2.0 * MIN_MERIDIAN_RADIUS);
        let margin = (frame.bow(reach) / MIN_MERIDIAN_RADIUS).to_degrees() + 1e-9;
        let (band_lo, band_hi) = (lat_lo - margin, lat_hi + margin);
        if band_lo < -89.0 || band_hi > 89.0 {
            return None;
        }
        let near_equator = if band_lo <= 0.0 && band_hi >= 0.0 {
            0.0
        } else {
            band_lo.abs().min(band_hi.abs())
        };
        let far = band_lo.abs().max(band_hi.abs());
        let (m_near, p_near) = radii(near_equator);
        let (m_far, p_far) = radii(far);
        frame.k = (m_near / ky).min(p_far / kx) * (1.0 - 1e-12);
        frame.big_k = (m_far / ky).max(p_near / kx) * (1.0 + 1e-12);
        Some(frame)
    }

    fn map(&self, p: (f64, f64)) -> (f64, f64) {
        let mut dlon = p.0 - self.origin_lon;
        // The remainder leaves a difference within a half turn unchanged:
        // skip its cost there.
        if !(-180.0..=180.0).contains(&dlon) {
            dlon %= 360.0;
            if dlon > 180.0 {
                dlon -= 360.0;
            } else if dlon < -180.0 {
                dlon += 360.0;
            }
        }
        (
            self.kx * dlon.to_radians(),
            self.ky * (p.1 - self.lat_m).to_radians(),
        )
    }

    fn bow(&self, l: f64) -> f64 {
        l * l * self.bow_factor
    }

    /// Lower and upper bounds (metres) on the geodesic distance between
    /// the edges a1-a2 and b1-b2 (either may be a point: equal ends), all
    /// four among the ends the frame was made for (see the type's doc).
    pub fn bounds(
        &self,
        a1: (f64, f64),
        a2: (f64, f64),
        b1: (f64, f64),
        b2: (f64, f64),
    ) -> (f64, f64) {
        let (p1, p2, q1, q2) = (self.map(a1), self.map(a2), self.map(b1), self.map(b2));
        let planar = segments_distance(p1, p2, q1, q2);
        let len = |u: (f64, f64), v: (f64, f64)| ((u.0 - v.0).powi(2) + (u.1 - v.1).powi(2)).sqrt();
        let bows = self.bow(len(p1, p2)) + self.bow(len(q1, q2));
        (
            (self.k * (planar - bows) - 1e-6).max(0.0),
            self.big_k * (planar + bows) + 1e-6,
        )
    }
}

/// The meridian radius M(φ) and the parallel radius N(φ) cos φ (metres)
/// at latitude `lat` (degrees), from one sine and cosine: the formulas of
/// [`super::ellipsoid::meridian_radius`] and [`parallel_radius`].
fn radii(lat: f64) -> (f64, f64) {
    let (s, c) = lat.to_radians().sin_cos();
    let w = 1.0 - E2 * s * s;
    let root = w.sqrt();
    (A * (1.0 - E2) / (w * root), A * c.abs() / root)
}

/// Planar distance between segments p1-p2 and q1-q2 (0 if they cross).
fn segments_distance(p1: (f64, f64), p2: (f64, f64), q1: (f64, f64), q2: (f64, f64)) -> f64 {
    let cross = |o: (f64, f64), a: (f64, f64), b: (f64, f64)| {
        (a.0 - o.0) * (b.1 - o.1) - (a.1 - o.1) * (b.0 - o.0)
    };
    let (d1, d2) = (cross(q1, q2, p1), cross(q1, q2, p2));
    let (d3, d4) = (cross(p1, p2, q1), cross(p1, p2, q2));
    if ((d1 > 0.0 && d2 < 0.0) || (d1 < 0.0 && d2 > 0.0))
        && ((d3 > 0.0 && d4 < 0.0) || (d3 < 0.0 && d4 > 0.0))
    {
        return 0.0;
    }
    point_segment(p1, q1, q2)
        .min(point_segment(p2, q1, q2))
        .min(point_segment(q1, p1, p2))
        .min(point_segment(q2, p1, p2))
}

fn point_segment(p: (f64, f64), a: (f64, f64), b: (f64, f64)) -> f64 {
    let (dx, dy) = (b.0 - a.0, b.1 - a.1);
    let l2 = dx * dx + dy * dy;
    let t = if l2 > 0.0 {
        (((p.0 - a.0) * dx + (p.1 - a.1) * dy) / l2).clamp(0.0, 1.0)
    } else {
        0.0
    };
    let (x, y) = (a.0 + t * dx - p.0, a.1 + t * dy - p.1);
    (x * x + y * y).sqrt()
}
