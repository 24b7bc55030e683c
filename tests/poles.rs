//! Geodesy at and through the poles, in every function and both argument
//! orders (issue 13, item 1).
//!
//! Longitude means nothing at a pole: (0 90), (360 90), (540 90) and
//! (-180 90) are one point. Every answer here must be the same whatever
//! longitude the data wrote at a pole, the same in both argument orders, and
//! equal to an independent reference: a brute-force minimisation over the
//! geodesic edges, densified and refined with geographiclib-rs (Karney's
//! algorithms, a general-purpose reference library) without any of ambit's
//! code. Areas are compared with geographiclib-rs's `PolygonArea` on the
//! ring written with explicit meridians at the pole.

use ambit::blob::wkt;
use ambit::proximity::validity::area as geometry_area;
use ambit::proximity::{distance, within, Feature, Layer, Prepared};
use geographiclib_rs::{DirectGeodesic, Geodesic, InverseGeodesic, PolygonArea, Winding};

type LonLat = (f64, f64);

fn prep(text: &str) -> Prepared {
    Prepared::new(&wkt::parse(text).unwrap())
}

/// The geodesic from a to b as (lat, lon, azimuth, length) for sampling.
fn edge_sampler(g: &Geodesic, a: LonLat, b: LonLat) -> impl Fn(f64) -> LonLat + '_ {
    let (s12, azi1, _, _): (f64, f64, f64, f64) = g.inverse(a.1, a.0, b.1, b.0);
    move |t: f64| {
        let (lat, lon): (f64, f64) = g.direct(a.1, a.0, azi1, s12 * t);
        (lon, lat)
    }
}

/// Brute force: the minimum geodesic distance between the edges of two
/// chains, each edge sampled at 200 points, the best pair then refined by
/// alternating golden-section searches on both edges' parameters.
fn brute_chains(a: &[LonLat], b: &[LonLat]) -> f64 {
    let g = Geodesic::wgs84();
    let d = |p: LonLat, q: LonLat| -> f64 { g.inverse(p.1, p.0, q.1, q.0) };
    let mut best = f64::INFINITY;
    let n = 200;
    for ea in a.windows(2) {
        let fa = edge_sampler(&g, ea[0], ea[1]);
        for eb in b.windows(2) {
            let fb = edge_sampler(&g, eb[0], eb[1]);
            let (mut bi, mut bj, mut bd) = (0, 0, f64::INFINITY);
            let pb: Vec<LonLat> = (0..=n).map(|j| fb(j as f64 / n as f64)).collect();
            for i in 0..=n {
                let p = fa(i as f64 / n as f64);
                for (j, &q) in pb.iter().enumerate() {
                    let x = d(p, q);
                    if x < bd {
                        (bi, bj, bd) = (i, j, x);
                    }
                }
            }
            let h = 1.0 / n as f64;
            let (mut s, mut t) = (bi as f64 * h, bj as f64 * h);
            for _ in 0..6 {
                let golden = |f: &dyn Fn(f64) -> f64, lo: f64, hi: f64| -> f64 {
                    let r = 0.5 * (5f64.sqrt() - 1.0);
                    let (mut lo, mut hi) = (lo.max(0.0), hi.min(1.0));
                    for _ in 0..60 {
                        let x1 = hi - r * (hi - lo);
                        let x2 = lo + r * (hi - lo);
                        if f(x1) < f(x2) {
                            hi = x2;
                        } else {
                            lo = x1;
                        }
                    }
                    0.5 * (lo + hi)
                };
                let q = fb(t);
                s = golden(&|x| d(fa(x), q), s - 2.0 * h, s + 2.0 * h);
                let p = fa(s);
                t = golden(&|x| d(p, fb(x)), t - 2.0 * h, t + 2.0 * h);
            }
            bd = bd.min(d(fa(s), fb(t)));
            best = best.min(bd);
        }
    }
    best
}

fn chain(text: &str) -> Vec<LonLat> {
    let inner = text[text.rfind('(').unwrap() + 1..text.find(')').unwrap()].to_string();
    inner
        .split(',')
        .map(|v| {
            let xy: Vec<f64> = v.split_whitespace().map(|x| x.parse().unwrap()).collect();
            (xy[0], xy[1])
        })
        .collect()
}

/// The example of issue 13: a line from the north pole and a sliver to the
/// south pole. True distance 4,463,343 m (brute force below), whatever
/// longitude is written at either pole, in both orders.
#[test]
fn line_from_the_north_pole_to_a_sliver_through_the_south_pole() {
    let mut seen = Vec::new();
    for north in [0.0, 105.0, 360.0, 540.0, -180.0, -540.0] {
        for south in [360.0, 0.0, -154.49, -180.0, 540.0] {
            let line = format!("LINESTRING({north} 90, 105 4)");
            let poly =
                format!("POLYGON((-154.49 49.98, {south} -90, -154.48 49.98, -154.49 49.98))");
            let (l, p) = (prep(&line), prep(&poly));
            let ab = distance(&l, &p).unwrap();
            let ba = distance(&p, &l).unwrap();
            assert_eq!(ab.round(), 4_463_343.0, "{line} / {poly}: {ab}");
            assert!((ab - ba).abs() < 1e-6, "{line} / {poly}: {ab} vs {ba}");
            assert!(within(&l, &p, ab + 1e-3) && !within(&l, &p, ab - 1e-3));
            assert!(within(&p, &l, ab + 1e-3) && !within(&p, &l, ab - 1e-3));
            seen.push(ab);
        }
    }
    // Brute force over the geodesic edges, with meridians written at the
    // poles (the line is the meridian 105, the sliver's long edges the
    // meridians -154.49 and -154.48).
    let reference = brute_chains(
        &[(105.0, 90.0), (105.0, 4.0)],
        &[
            (-154.49, 49.98),
            (-154.49, -90.0),
            (-154.48, -90.0),
            (-154.48, 49.98),
            (-154.49, 49.98),
        ],
    );
    assert_eq!(reference.round(), 4_463_343.0, "brute force {reference}");
    for d in seen {
        assert!(
            (d - reference).abs() < 1e-3,
            "{d} vs brute force {reference}"
        );
    }
}

/// Pairs of geometries with vertices at and near the poles: distance in
/// both orders against brute force, and independence from the longitude
/// written at a pole.
#[test]
fn distances_at_and_near_the_poles_match_brute_force() {
    // (a, b) with a `{L}` where a pole longitude goes.
    let cases = [
        ("LINESTRING({L} 90, 30 80)", "LINESTRING(-150 85, -100 85)"),
        (
            "LINESTRING({L} -90, 30 -80)",
            "LINESTRING(-150 -85, -100 -85)",
        ),
        (
            "LINESTRING({L} 90, 30 -10)",
            "LINESTRING(-170 -60, -120 -20)",
        ),
        ("LINESTRING(10 89.999, 190 89.999)", "POINT({L} 90)"),
        (
            "LINESTRING(0 89.5, 120 89.5, 240 89.5)",
            "LINESTRING({L} 90, 60 70)",
        ),
        (
            "POLYGON((0 80, {L} 90, 90 80, 45 70, 0 80))",
            "LINESTRING(-135 85, -100 60)",
        ),
        (
            "POLYGON((0 -80, {L} -90, 90 -80, 45 -70, 0 -80))",
            "LINESTRING(170 -88, 120 -60)",
        ),
        ("POINT({L} -90)", "LINESTRING(0 -89.9, 180 -89.9)"),
        ("POINT({L} 90)", "POINT(17 -90)"),
        ("LINESTRING({L} 90, 45 0)", "LINESTRING({L} -90, -135 1)"),
    ];
    for (a, b) in cases {
        let mut first: Option<f64> = None;
        for lon in ["0", "360", "540", "-180", "77.5"] {
            let (ta, tb) = (a.replace("{L}", lon), b.replace("{L}", lon));
            let (pa, pb) = (prep(&ta), prep(&tb));
            let ab = distance(&pa, &pb).unwrap();
            let ba = distance(&pb, &pa).unwrap();
            assert!((ab - ba).abs() < 1e-6, "{ta} / {tb}: {ab} vs {ba}");
            let reference = match first {
                Some(r) => r,
                None => {
                    let r = brute_chains(&meridian_chain(&ta), &meridian_chain(&tb));
                    first = Some(r);
                    r
                }
            };
            assert!(
                (ab - reference).abs() < 1e-3 + 1e-9 * reference,
                "{ta} / {tb}: ambit {ab}, brute force {reference}"
            );
        }
    }
}

/// A chain with a meridian written at each pole vertex (the longitude of
/// its neighbour), the polygon's outline when it is one; a point is a
/// chain of one edge of length 0.
fn meridian_chain(text: &str) -> Vec<LonLat> {
    let c = chain(text);
    if c.len() == 1 {
        return vec![c[0], c[0]];
    }
    let mut out = Vec::new();
    for w in c.windows(2) {
        let (mut a, mut b) = (w[0], w[1]);
        if a.1.abs() == 90.0 && b.1.abs() != 90.0 {
            a.0 = b.0;
        }
        if b.1.abs() == 90.0 && a.1.abs() != 90.0 {
            b.0 = a.0;
        }
        out.push(a);
        out.push(b);
    }
    out
}

/// Points inside polygons with a vertex at a pole, or around one, are at
/// distance 0; just outside they are not.
#[test]
fn containment_with_a_vertex_at_the_pole() {
    for lon in ["0", "360", "540", "-180", "200"] {
        let wedge = prep(&format!("POLYGON((0 80, {lon} 90, 90 80, 45 70, 0 80))"));
        let south = prep(&format!(
            "POLYGON((0 -80, {lon} -90, 90 -80, 45 -70, 0 -80))"
        ));
        for (poly, inside, outside) in [
            (&wedge, "POINT(45 85)", "POINT(-135 85)"),
            (&wedge, "POINT(1 89.99)", "POINT(-1 89.99)"),
            (&south, "POINT(45 -85)", "POINT(-135 -85)"),
            (&south, "POINT(89 -89.99)", "POINT(91 -89.99)"),
        ] {
            let (i, o) = (prep(inside), prep(outside));
            assert_eq!(distance(poly, &i), Some(0.0), "{lon}: {inside}");
            assert_eq!(distance(&i, poly), Some(0.0), "{lon}: {inside}");
            let d = distance(poly, &o).unwrap();
            assert!(d > 0.0, "{lon}: {outside}");
            assert!((d - distance(&o, poly).unwrap()).abs() < 1e-6);
        }
    }
}

/// Area of rings through a pole does not depend on the longitude written
/// at the pole; reference: geographiclib-rs PolygonArea (Karney 2013,
/// section 6) on the ring with both meridians written at the pole.
#[test]
fn area_of_rings_through_a_pole() {
    let g = Geodesic::wgs84();
    let reference = |ring: &[LonLat]| -> f64 {
        let mut pa = PolygonArea::new(&g, Winding::CounterClockwise);
        for p in &ring[..ring.len() - 1] {
            pa.add_point(p.1, p.0);
        }
        pa.compute(true).1.abs()
    };
    let north = reference(&[
        (0.0, 80.0),
        (0.0, 90.0),
        (90.0, 90.0),
        (90.0, 80.0),
        (45.0, 70.0),
        (0.0, 80.0),
    ]);
    let south = reference(&[
        (-154.49, 49.98),
        (-154.49, -90.0),
        (-154.48, -90.0),
        (-154.48, 49.98),
        (-154.49, 49.98),
    ]);
    for lon in ["0", "360", "540", "-180", "200", "-154.49"] {
        let w = wkt::parse(&format!("POLYGON((0 80, {lon} 90, 90 80, 45 70, 0 80))")).unwrap();
        let a = geometry_area(&w);
        assert!((a - north).abs() < 1e-6 * north, "{lon}: {a} vs {north}");
        let s = wkt::parse(&format!(
            "POLYGON((-154.49 49.98, {lon} -90, -154.48 49.98, -154.49 49.98))"
        ))
        .unwrap();
        let a = geometry_area(&s);
        assert!((a - south).abs() < 1e-6 * south, "{lon}: {a} vs {south}");
    }
}

/// Layers answer the same through their index: reached, nearest and count
/// of features with pole vertices, whichever longitude is written there.
#[test]
fn layers_with_pole_vertices() {
    let query = prep("LINESTRING(0 90, 105 4)");
    for south in ["360", "0", "-180", "540"] {
        let poly = format!("POLYGON((-154.49 49.98, {south} -90, -154.48 49.98, -154.49 49.98))");
        let layer = Layer::new(vec![Feature {
            id: 1,
            reach: 4_463_344.0,
            geometry: prep(&poly),
        }]);
        assert!(layer.reached(&query), "{poly}");
        let nearest = layer.nearest(&query, None).unwrap();
        assert_eq!(nearest.round(), 4_463_343.0, "{poly}");
        let short = Layer::new(vec![Feature {
            id: 1,
            reach: 4_463_342.0,
            geometry: prep(&poly),
        }]);
        assert!(!short.reached(&query), "{poly}");
        assert_eq!(short.count(&query, None), 0);
    }
}
