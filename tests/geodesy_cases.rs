//! Hand-made cases for the segment functions (ends, degenerate segments,
//! poles, antimeridian, collinear and touching segments) and the NaN /
//! no-panic contract of every public function. References: Karney's
//! geodesic algorithms in geodesy::distance, and closed forms where noted.

mod geodesic_reference;

use ambit::geodesy::ellipsoid::A;
use ambit::geodesy::segment::GeodesicSegment;
use ambit::geodesy::*;
use geodesic_reference::{brute_psd, geod, RefLine};

const NM: f64 = 1e-8; // 10 nm

#[test]
fn point_segment_ends_and_degenerate() {
    let a = (-0.1, 51.5);
    let b = (0.1, 51.52);
    // p at an end, beyond an end, and a degenerate segment.
    assert!(point_segment_distance(a, a, b) <= NM);
    assert!(point_segment_distance(b, a, b) <= NM);
    let beyond = (-0.2, 51.49);
    assert!(
        (point_segment_distance(beyond, a, b) - distance(beyond.0, beyond.1, a.0, a.1)).abs() <= NM
    );
    let p = (0.0, 51.6);
    assert_eq!(
        point_segment_distance(p, a, a),
        distance(p.0, p.1, a.0, a.1)
    );
    assert_eq!(GeodesicSegment::new(a, a).length(), 0.0);
    // Both ends at the north pole with different longitudes: the same point.
    let d = point_segment_distance((0.0, 89.0), (10.0, 90.0), (100.0, 90.0));
    assert!((d - distance(0.0, 89.0, 0.0, 90.0)).abs() <= NM);
}

#[test]
fn point_segment_along_the_equator_and_a_meridian() {
    // Closed forms (common practice, no source): the equator and meridians
    // are geodesics; the distance from a point on a meridian to an
    // equatorial segment is its meridian arc, which we take from the
    // point-to-point inverse.
    let d = point_segment_distance((0.5, 1.0), (0.0, 0.0), (1.0, 0.0));
    assert!((d - distance(0.5, 1.0, 0.5, 0.0)).abs() <= NM, "{d}");
    // Point on the equator beyond the segment: distance to the end along
    // the equator, a * dlambda.
    let d = point_segment_distance((2.0, 0.0), (0.0, 0.0), (1.0, 0.0));
    assert!((d - A * 1f64.to_radians()).abs() <= NM, "{d}");
    // Segment along a meridian through the pole region: from (10, 89) to
    // (10, 89.9); point on the same meridian beyond the pole side.
    let d = point_segment_distance((10.0, 89.95), (10.0, 89.0), (10.0, 89.9));
    assert!((d - distance(10.0, 89.95, 10.0, 89.9)).abs() <= NM);
}

#[test]
fn point_segment_across_the_antimeridian_and_over_a_pole() {
    let g = geod();
    // Segment crossing 180; point on the other side, and the same problem
    // with longitudes written past 180.
    let (a, b, p) = ((179.99, -16.0), (-179.98, -16.01), (179.999, -16.02));
    let d = point_segment_distance(p, a, b);
    let r = brute_psd(&g, p, &RefLine::new(&g, a, b));
    assert!((d - r).abs() <= 1e-6 && d > 0.0, "{d} vs {r}");
    let d2 = point_segment_distance((179.999, -16.02), (179.99, -16.0), (180.02, -16.01));
    assert!((d2 - d).abs() <= NM);
    let d3 = point_segment_distance((-180.001, -16.02), (-180.01, -16.0), (-539.98, -16.01));
    assert!((d3 - d).abs() <= NM);
    // A segment over the north pole: (0, 89.5) to (180, 89.6) passes the
    // pole; the pole itself is on it (distance 0, common practice).
    let d = point_segment_distance((45.0, 90.0), (0.0, 89.5), (180.0, 89.6));
    assert!(d <= NM, "{d}");
    let p = (90.0, 89.8);
    let d = point_segment_distance(p, (0.0, 89.5), (180.0, 89.6));
    let r = brute_psd(&g, p, &RefLine::new(&g, (0.0, 89.5), (180.0, 89.6)));
    assert!((d - r).abs() <= 1e-6, "{d} vs {r}");
    // Segment of 1000 km near 80 S crossing the antimeridian.
    let (a, b) = ((170.0, -80.0), (-160.0, -78.0));
    let p = (-175.0, -81.0);
    let d = point_segment_distance(p, a, b);
    let r = brute_psd(&g, p, &RefLine::new(&g, a, b));
    assert!((d - r).abs() <= 1e-6, "{d} vs {r}");
}

#[test]
fn point_segment_beyond_the_supported_range_stays_sane() {
    // 5000 km segment, point 8000 km away: outside the validated range; the
    // result must still be an attained distance close to the brute force.
    let g = geod();
    let (a, b, p) = ((0.0, 0.0), (45.0, 10.0), (20.0, 70.0));
    let d = point_segment_distance(p, a, b);
    let r = brute_psd(&g, p, &RefLine::new(&g, a, b));
    assert!(d.is_finite() && (d - r).abs() <= 1e-6, "{d} vs {r}");
    // Nearly antipodal point: finite, not above either end.
    let p = (-160.0, -5.0);
    let d = point_segment_distance(p, a, b);
    assert!(d.is_finite() && d <= distance(p.0, p.1, a.0, a.1) + NM);
    assert!(d <= distance(p.0, p.1, b.0, b.1) + NM);
}

#[test]
fn crossing_touching_and_collinear_segments() {
    // Crossing on the equator/meridian: X at (0.5, 0).
    assert!(segments_intersect(
        (0.0, 0.0),
        (1.0, 0.0),
        (0.5, -1.0),
        (0.5, 1.0)
    ));
    assert_eq!(
        segment_segment_distance((0.0, 0.0), (1.0, 0.0), (0.5, -1.0), (0.5, 1.0)),
        0.0
    );
    // Shared end.
    assert!(segments_intersect(
        (0.0, 0.0),
        (1.0, 0.0),
        (1.0, 0.0),
        (1.0, 1.0)
    ));
    // T-junction: an end in the interior of the other segment.
    assert!(segments_intersect(
        (0.0, 0.0),
        (1.0, 0.0),
        (0.5, 0.0),
        (0.5, 1.0)
    ));
    // Collinear along the equator: overlapping, and disjoint.
    assert!(segments_intersect(
        (0.0, 0.0),
        (1.0, 0.0),
        (0.5, 0.0),
        (2.0, 0.0)
    ));
    assert!(!segments_intersect(
        (0.0, 0.0),
        (1.0, 0.0),
        (1.5, 0.0),
        (2.0, 0.0)
    ));
    let d = segment_segment_distance((0.0, 0.0), (1.0, 0.0), (1.5, 0.0), (2.0, 0.0));
    assert!((d - A * 0.5f64.to_radians()).abs() <= NM, "{d}");
    // Collinear along a meridian: one inside the other.
    assert!(segments_intersect(
        (10.0, 10.0),
        (10.0, 11.0),
        (10.0, 10.2),
        (10.0, 10.4)
    ));
    // Near miss: 1 m apart (the meridian segment stops 1 m short of the
    // equator); the distance is that gap (meridian arc from the inverse).
    let lat = 1.0 / 110_574.0; // about 1 m of latitude at the equator
    assert!(!segments_intersect(
        (0.0, 0.0),
        (1.0, 0.0),
        (0.5, lat),
        (0.5, 1.0)
    ));
    let d = segment_segment_distance((0.0, 0.0), (1.0, 0.0), (0.5, lat), (0.5, 1.0));
    assert!((d - distance(0.5, lat, 0.5, 0.0)).abs() <= NM, "{d}");
    // Parallel segments far apart: rejected by the triangle inequality.
    assert!(!segments_intersect(
        (0.0, 0.0),
        (0.1, 0.0),
        (0.0, 10.0),
        (0.1, 10.0)
    ));
    // Crossing at the antimeridian.
    assert!(segments_intersect(
        (179.9, -0.1),
        (-179.9, 0.1),
        (179.9, 0.1),
        (-179.9, -0.1)
    ));
    assert!(segments_intersect(
        (179.9, -0.1),
        (180.1, 0.1),
        (-180.1, 0.1),
        (-179.9, -0.1)
    ));
    // Crossing at the north pole: two meridian-ish segments over the pole.
    assert!(segments_intersect(
        (0.0, 89.0),
        (180.0, 89.0),
        (90.0, 89.0),
        (-90.0, 89.0)
    ));
    // A segment starting exactly at the pole (azimuths there follow
    // Karney's convention for the pole): meridian 0 from 90 down to 89.
    assert!(segments_intersect(
        (0.0, 90.0),
        (0.0, 89.0),
        (-1.0, 89.5),
        (1.0, 89.5)
    ));
    assert!(!segments_intersect(
        (0.0, 90.0),
        (0.0, 89.0),
        (179.0, 89.5),
        (-179.0, 89.5)
    ));
    assert!(segments_intersect(
        (-1.0, 89.5),
        (1.0, 89.5),
        (0.0, 90.0),
        (0.0, 89.0)
    ));
    let d = point_segment_distance((0.0, 90.0), (0.0, 89.0), (90.0, 89.0));
    let g = geod();
    let r = brute_psd(
        &g,
        (0.0, 90.0),
        &RefLine::new(&g, (0.0, 89.0), (90.0, 89.0)),
    );
    assert!((d - r).abs() <= 1e-6, "{d} vs {r}");
    // Degenerate segment (a point) on and off the other.
    assert!(segments_intersect(
        (0.5, 0.0),
        (0.5, 0.0),
        (0.0, 0.0),
        (1.0, 0.0)
    ));
    assert!(!segments_intersect(
        (0.5, 0.001),
        (0.5, 0.001),
        (0.0, 0.0),
        (1.0, 0.0)
    ));
}

#[test]
fn nan_and_out_of_range_input_never_panics() {
    let bad = [
        (f64::NAN, 0.0),
        (0.0, f64::NAN),
        (f64::INFINITY, 0.0),
        (0.0, f64::NEG_INFINITY),
        (0.0, 90.000001),
        (0.0, -91.0),
    ];
    let ok = (1.0, 2.0);
    let ok2 = (1.1, 2.1);
    for &p in &bad {
        assert!(distance(p.0, p.1, ok.0, ok.1).is_nan());
        assert!(distance(ok.0, ok.1, p.0, p.1).is_nan());
        let (s, a1, a2) = inverse(p.0, p.1, ok.0, ok.1);
        assert!(s.is_nan() && a1.is_nan() && a2.is_nan());
        assert!(point_segment_distance(p, ok, ok2).is_nan());
        assert!(point_segment_distance(ok, p, ok2).is_nan());
        assert!(point_segment_distance(ok, ok2, p).is_nan());
        assert!(!segments_intersect(p, ok, ok, ok2));
        assert!(!segments_intersect(ok, ok2, ok, p));
        assert!(segment_segment_distance(p, ok, ok, ok2).is_nan());
        assert!(GeodesicSegment::new(p, ok).length().is_nan());
        let flat = [ok.0, ok.1, p.0, p.1, ok2.0, ok2.1];
        assert!(ring_area_perimeter(&flat, 2).0.is_nan());
        assert!(line_length(&flat, 2).is_nan());
    }
    // Extreme but finite values: no panic, sensible results.
    let huge = [
        1e300,
        -1e300,
        540.0,
        -540.0,
        1e-300,
        f64::MAX,
        f64::MIN_POSITIVE,
    ];
    for &x in &huge {
        let d = distance(x, 0.0, 0.0, 90.0);
        assert!(
            d.is_finite() && (d - distance(0.0, 0.0, 0.0, 90.0)).abs() < 1e-6,
            "{x}: {d}"
        );
        let _ = point_segment_distance((x, 1.0), (0.0, 0.0), (x, 2.0));
        let _ = segment_segment_distance((x, 1.0), (0.0, 0.0), (x, 2.0), (1.0, -1.0));
        let _ = local_distance_with_bound((x, 1.0), (0.0, 1.0));
        let _ = degrees_padding(-90.0, 90.0, x);
        let _ = ring_area_perimeter(&[x, 0.0, 0.0, 1.0, 1.0, 1.0], 2);
    }
    // Poles and exact antipodes: twice the quarter meridian of WGS84,
    // 10,001,965.729 m (a commonly quoted derived value, from memory).
    assert!((distance(0.0, 90.0, 123.0, -90.0) - 2.0 * 10_001_965.729).abs() < 1e-2);
    let d = distance(0.0, 0.0, 180.0, 0.0);
    assert!((d - 2.0 * 10_001_965.729).abs() < 1e-2, "{d}");
}
