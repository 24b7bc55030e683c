//! Geometry-to-geometry distance and the within test against brute force,
//! on random geometries with fixed seeds.
//!
//! The brute force uses no pruning and no fast path: two geometries are at 0
//! if any vertex of one lies inside a polygon of the other or any two edges
//! cross; otherwise their distance is the least exact distance over all
//! element pairs (Karney's inverse and the gnomonic point-to-segment method,
//! themselves checked against dense sampling in tests/geodesy_bruteforce.rs).

use ambit::blob::wkt;
use ambit::geodesy::segment;
use ambit::geometry::validate::validate;
use ambit::interrupt::Never;
use ambit::proximity::contain::{exact_edge_latitude, point_in_polygon, point_in_ring};
use ambit::proximity::prepared::{wrap_delta, Element, LonLat, Prepared};
use ambit::proximity::{distance, within, within_counted, Work};
use ambit::testing::XorShift;

/// A star-shaped ring of `n` vertices around `c` with radii (degrees of
/// latitude) between `r_min` and `r_max`, closed, counter-clockwise.
fn star(rng: &mut XorShift, c: LonLat, n: usize, r_min: f64, r_max: f64) -> Vec<LonLat> {
    let k = 1.0 / c.1.to_radians().cos();
    let mut ring: Vec<LonLat> = (0..n)
        .map(|i| {
            let t = i as f64 / n as f64 * std::f64::consts::TAU;
            let r = rng.uniform(r_min, r_max);
            (c.0 + r * k * t.cos(), c.1 + r * t.sin())
        })
        .collect();
    ring.push(ring[0]);
    ring
}

fn ring_wkt(ring: &[LonLat]) -> String {
    let v: Vec<String> = ring.iter().map(|(x, y)| format!("{x} {y}")).collect();
    format!("({})", v.join(", "))
}

/// A random point, line, polygon (maybe with a hole) or multipolygon near
/// `c`, of size about `size` degrees.
fn random_geometry(rng: &mut XorShift, c: LonLat, size: f64) -> String {
    let k = 1.0 / c.1.to_radians().cos();
    let jitter = |rng: &mut XorShift| {
        (
            c.0 + rng.uniform(-size, size) * k,
            c.1 + rng.uniform(-size, size),
        )
    };
    match rng.below(5) {
        0 => {
            let p = jitter(rng);
            format!("POINT ({} {})", p.0, p.1)
        }
        1 => {
            let n = 2 + rng.below(4) as usize;
            let pts: Vec<LonLat> = (0..n).map(|_| jitter(rng)).collect();
            format!("LINESTRING {}", ring_wkt(&pts))
        }
        2 => {
            let n = 4 + rng.below(12) as usize;
            let centre = jitter(rng);
            let outer = star(rng, centre, n, size * 0.5, size);
            format!("POLYGON ({})", ring_wkt(&outer))
        }
        3 => {
            let centre = jitter(rng);
            let n = 5 + rng.below(10) as usize;
            let outer = star(rng, centre, n, size * 0.6, size);
            let m = 4 + rng.below(5) as usize;
            let hole = star(rng, centre, m, size * 0.2, size * 0.45);
            format!("POLYGON ({}, {})", ring_wkt(&outer), ring_wkt(&hole))
        }
        _ => {
            // Two parts side by side, apart: a multipolygon's parts must
            // not overlap (README, "Valid geometries"). The second jitter
            // keeps the random stream as it was.
            let (ca, _) = (jitter(rng), jitter(rng));
            let cb = (ca.0 + 1.2 * size * k, ca.1);
            let a = star(rng, ca, 5, size * 0.3, size * 0.5);
            let b = star(rng, cb, 6, size * 0.3, size * 0.5);
            format!("MULTIPOLYGON (({}), ({}))", ring_wkt(&a), ring_wkt(&b))
        }
    }
}

fn prepare(text: &str) -> Prepared {
    let g = wkt::parse(text).unwrap();
    validate(&g, 4326, &Never).unwrap();
    Prepared::new(&g)
}

fn all_vertices(p: &Prepared) -> Vec<LonLat> {
    let mut v = p.points.to_vec();
    for chain in p.chains() {
        v.extend_from_slice(chain);
    }
    v
}

fn brute_distance(a: &Prepared, b: &Prepared) -> f64 {
    let inside = |x: &Prepared, y: &Prepared| {
        all_vertices(x)
            .iter()
            .any(|&p| y.polygons().iter().any(|rings| point_in_polygon(p, rings)))
    };
    if inside(a, b) || inside(b, a) {
        return 0.0;
    }
    let mut best = f64::INFINITY;
    for ea in &a.elements().collect::<Vec<_>>() {
        for eb in &b.elements().collect::<Vec<_>>() {
            let d = match (ea, eb) {
                (Element::Point(p), Element::Point(q)) => {
                    ambit::geodesy::inverse::distance(p.0, p.1, q.0, q.1)
                }
                (Element::Point(p), Element::Edge(s, e))
                | (Element::Edge(s, e), Element::Point(p)) => {
                    segment::point_segment_distance(*p, *s, *e)
                }
                (Element::Edge(a1, a2), Element::Edge(b1, b2)) => {
                    if segment::segments_intersect(*a1, *a2, *b1, *b2) {
                        0.0
                    } else {
                        segment::segment_segment_distance(*a1, *a2, *b1, *b2)
                    }
                }
            };
            best = best.min(d);
        }
    }
    best
}

/// Pairs of random geometries at block to neighbourhood scale, latitudes
/// -70..70, some straddling the antimeridian.
fn random_pairs(seed: u64, count: usize) -> Vec<(String, String)> {
    let mut rng = XorShift(seed);
    (0..count)
        .map(|i| {
            let lon = if i % 7 == 0 {
                179.99
            } else {
                rng.uniform(-180.0, 180.0)
            };
            let c = (lon, rng.uniform(-70.0, 70.0));
            let size = [0.001, 0.005, 0.02][i % 3];
            let d = (
                c.0 + rng.uniform(-3.0, 3.0) * size,
                c.1 + rng.uniform(-3.0, 3.0) * size,
            );
            (
                random_geometry(&mut rng, c, size),
                random_geometry(&mut rng, d, size),
            )
        })
        .collect()
}

#[test]
fn distance_equals_brute_force_on_random_geometries() {
    let mut zeros = 0;
    for (i, (a, b)) in random_pairs(0x00c0_ffee, 3000).iter().enumerate() {
        let (pa, pb) = (prepare(a), prepare(b));
        let d = distance(&pa, &pb).unwrap();
        let brute = brute_distance(&pa, &pb);
        assert!(
            (d - brute).abs() <= 1e-9,
            "case {i}: {d} vs brute force {brute}\n{a}\n{b}"
        );
        assert_eq!(distance(&pb, &pa).unwrap(), d, "case {i}: not symmetric");
        if brute == 0.0 {
            zeros += 1;
        }
    }
    // The mix holds touching and containing pairs as well as disjoint ones.
    assert!(zeros > 300 && zeros < 2700, "{zeros} pairs at distance 0");
}

#[test]
fn within_decisions_match_the_exact_distance_near_the_threshold() {
    // 100,000 decisions within 1 m of the threshold, on 25,000 pairs.
    let mut rng = XorShift(0x7e57_ab1e);
    let mut decisions = 0;
    let mut fast = 0;
    for (i, (a, b)) in random_pairs(0x0bad_f00d, 25_000).iter().enumerate() {
        let (pa, pb) = (prepare(a), prepare(b));
        let d = distance(&pa, &pb).unwrap();
        for _ in 0..4 {
            let offset = rng.uniform(-1.0, 1.0);
            if offset.abs() < 1e-6 {
                continue;
            }
            let threshold = (d + offset).max(0.0);
            let mut work = Work::default();
            let got = within_counted(&pa, &pb, threshold, &mut work);
            assert_eq!(
                got,
                d <= threshold,
                "case {i}: d {d}, threshold {threshold}\n{a}\n{b}"
            );
            decisions += 1;
            if work.exact == 0 {
                fast += 1;
            }
        }
    }
    assert!(decisions >= 99_000, "{decisions}");
    println!(
        "within near the threshold: {decisions} decisions, {:.1}% settled without an exact distance",
        100.0 * fast as f64 / decisions as f64
    );
}

#[test]
fn ties_count_as_within_and_zero_reach_means_touching() {
    let park =
        prepare("POLYGON ((-131.6 38.3, -131.4 38.3, -131.4 38.5, -131.6 38.5, -131.6 38.3))");
    let on_edge = prepare("POINT (-131.4 38.4)");
    assert!(within(&park, &on_edge, 0.0));
    let outside = prepare("POINT (-131.39 38.4)");
    let d = distance(&park, &outside).unwrap();
    assert!(within(&park, &outside, d));
    assert!(!within(&park, &outside, d * (1.0 - 1e-12)));
}

/// The chord shortcut of the point-in-polygon test against the exact
/// latitude of every straddling edge, for points placed very near edges.
#[test]
fn point_in_ring_matches_the_exact_edge_test_near_edges() {
    let mut rng = XorShift(0x9e0d_e51c);
    let mut checked = 0;
    for case in 0..6000 {
        let c = (rng.uniform(-180.0, 180.0), rng.uniform(-75.0, 75.0));
        let size = [0.01, 0.3, 1.5][case % 3];
        let n = 5 + rng.below(10) as usize;
        let ring = star(&mut rng, c, n, size * 0.5, size);
        for _ in 0..20 {
            // A point near a random edge: on the chord, nudged across it.
            let i = rng.below(ring.len() as u64 - 1) as usize;
            let (a, b) = (ring[i], ring[i + 1]);
            let t = rng.uniform(0.01, 0.99);
            let lon = a.0 + wrap_delta(a.0, b.0) * t;
            let lat = exact_edge_latitude(a, b, lon)
                + rng.uniform(-1.0, 1.0) * 10f64.powi(-(rng.below(8) as i32) - 2);
            let p = (lon, lat);
            let mut inside = false;
            for w in ring.windows(2) {
                let da = wrap_delta(p.0, w[0].0);
                let db = da + wrap_delta(w[0].0, w[1].0);
                if ((da <= 0.0 && 0.0 < db) || (db <= 0.0 && 0.0 < da))
                    && exact_edge_latitude(w[0], w[1], p.0) > p.1
                {
                    inside = !inside;
                }
            }
            assert_eq!(
                point_in_ring(p, &ring),
                inside,
                "case {case}: {p:?}\n{ring:?}"
            );
            checked += 1;
        }
    }
    assert_eq!(checked, 120_000);
}

/// The flat-frame bounds on edge-to-edge distance hold around the exact
/// distance (Karney's methods), on random edges of 1 m to 20 km, 0 to
/// 50 km apart, at latitudes -80..80 and across the antimeridian; and it
/// is tight enough to prune (printed). The frame of the four ends, kept
/// (`FlatFrame`), also bounds each end's distance to the other edge, as
/// the exact edge-to-edge distance asks it.
#[test]
fn the_flat_edge_bounds_hold() {
    use ambit::geodesy::local::{edge_distance_bounds, FlatFrame};
    let g = ambit::geodesy::inverse::wgs84();
    let mut rng = XorShift(0x10e_b0b5);
    let direct = |p: LonLat, azi: f64, s: f64| -> LonLat {
        let (lat, lon): (f64, f64) = geographiclib_rs::DirectGeodesic::direct(g, p.1, p.0, azi, s);
        (lon, lat)
    };
    let mut worst_slack: f64 = 0.0;
    let mut useful = 0;
    let mut sub_checked = 0;
    let n = 20_000;
    for case in 0..n {
        let lon = if case % 5 == 0 {
            179.9 + rng.uniform(0.0, 0.2)
        } else {
            rng.uniform(-180.0, 180.0)
        };
        let a1 = (lon, rng.uniform(-79.0, 79.0));
        let la = 10f64.powf(rng.uniform(0.0, 4.3));
        let a2 = direct(a1, rng.uniform(-180.0, 180.0), la);
        let b1 = direct(a1, rng.uniform(-180.0, 180.0), rng.uniform(0.0, 50_000.0));
        let lb = if case % 7 == 0 {
            0.0
        } else {
            10f64.powf(rng.uniform(0.0, 4.3))
        };
        let b2 = direct(b1, rng.uniform(-180.0, 180.0), lb);
        let exact = if segment::segments_intersect(a1, a2, b1, b2) {
            0.0
        } else {
            segment::segment_segment_distance(a1, a2, b1, b2)
        };
        let (lower, upper) = edge_distance_bounds(a1, a2, b1, b2);
        assert!(
            lower <= exact && exact <= upper,
            "case {case}: {lower} <= {exact} <= {upper} fails: {a1:?} {a2:?} {b1:?} {b2:?}"
        );
        if let Some(frame) = FlatFrame::around(a1, a2, b1, b2) {
            for (p, s, e) in [(a1, b1, b2), (a2, b1, b2), (b1, a1, a2), (b2, a1, a2)] {
                let exact = segment::point_segment_distance(p, s, e);
                let (lower, upper) = frame.bounds(p, p, s, e);
                assert!(
                    lower <= exact && exact <= upper,
                    "case {case}, end {p:?} to edge {s:?} {e:?} in the frame of all four: \
                     {lower} <= {exact} <= {upper} fails"
                );
            }
            sub_checked += 1;
        }
        if exact > 10.0 {
            worst_slack = worst_slack.max((exact - lower) / exact);
            if lower > 0.99 * exact {
                useful += 1;
            }
        }
    }
    println!("flat edge bounds: worst relative slack of the lower bound {worst_slack:.2e}; within 1% of exact for {useful} of {n}");
    assert!(
        sub_checked > n / 2,
        "the frame was valid for only {sub_checked} of {n} cases"
    );
}
