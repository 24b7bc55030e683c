//! Layers against brute force: every answer of the index equals the answer
//! of the exact distance over all features (ambit::proximity::distance,
//! itself checked against brute force in tests/proximity_bruteforce.rs), on
//! random layers with fixed seeds; the order features are added in changes
//! nothing; and the hard cases: the antimeridian, multipolygons, a hole
//! holding a block, a 200,000-vertex polygon, empty geometries.

use ambit::blob::wkt;
use ambit::geometry::validate::validate;
use ambit::interrupt::Never;
use ambit::proximity::{distance, Feature, Layer, Prepared};
use ambit::testing::XorShift;
use ambit::units::METRES_PER_MILE;

fn prepare(text: &str) -> Prepared {
    let g = wkt::parse(text).unwrap();
    validate(&g, 4326, &Never).unwrap();
    Prepared::new(&g)
}

fn feature(id: i64, text: &str, reach: f64) -> Feature {
    let g = wkt::parse(text).unwrap();
    validate(&g, 4326, &Never).unwrap();
    Feature {
        id,
        reach,
        geometry: Prepared::new(&g),
    }
}

/// A closed star-shaped ring around `c` (degrees of latitude for radii).
fn ring(rng: &mut XorShift, c: (f64, f64), n: usize, r: f64) -> String {
    let k = 1.0 / c.1.to_radians().cos();
    let mut pts: Vec<String> = (0..n)
        .map(|i| {
            let t = i as f64 / n as f64 * std::f64::consts::TAU;
            let rr = r * rng.uniform(0.6, 1.0);
            format!("{} {}", c.0 + rr * k * t.cos(), c.1 + rr * t.sin())
        })
        .collect();
    pts.push(pts[0].clone());
    format!("({})", pts.join(", "))
}

fn random_feature_text(rng: &mut XorShift, c: (f64, f64)) -> String {
    match rng.below(4) {
        0 => format!("POINT ({} {})", c.0, c.1),
        1 => format!("POLYGON ({})", ring(rng, c, 12, 0.004)),
        2 => {
            let outer = ring(rng, c, 16, 0.008);
            let hole = ring(rng, c, 6, 0.002);
            format!("POLYGON ({outer}, {hole})")
        }
        _ => {
            let a = ring(rng, c, 8, 0.002);
            let d = (c.0 + 0.01, c.1 - 0.005);
            let b = ring(rng, d, 8, 0.002);
            format!("MULTIPOLYGON (({a}), ({b}))")
        }
    }
}

/// A region of `n` random features around `centre` (spread `spread`
/// degrees), with reaches of 0, 0.5, 1 or 3 miles.
fn random_layer(rng: &mut XorShift, centre: (f64, f64), spread: f64, n: usize) -> Vec<Feature> {
    let reaches = [
        0.0,
        0.5 * METRES_PER_MILE,
        METRES_PER_MILE,
        3.0 * METRES_PER_MILE,
    ];
    (0..n)
        .map(|i| {
            let c = (
                centre.0 + rng.uniform(-spread, spread),
                centre.1 + rng.uniform(-spread, spread) * 0.7,
            );
            let text = random_feature_text(rng, c);
            feature(i as i64 + 1, &text, reaches[rng.below(4) as usize])
        })
        .collect()
}

fn random_block(rng: &mut XorShift, centre: (f64, f64), spread: f64) -> Prepared {
    let c = (
        centre.0 + rng.uniform(-spread, spread),
        centre.1 + rng.uniform(-spread, spread) * 0.7,
    );
    if rng.below(5) == 0 {
        prepare(&format!("POINT ({} {})", c.0, c.1))
    } else {
        prepare(&format!("POLYGON ({})", ring(rng, c, 10, 0.0015)))
    }
}

/// Checks every query of `layer` against brute force for `blocks`.
fn check_against_brute_force(layer: &Layer, blocks: &[Prepared]) -> (usize, usize) {
    let mut reached_count = 0;
    for (b, block) in blocks.iter().enumerate() {
        let exact: Vec<(i64, f64, f64)> = layer
            .features()
            .iter()
            .map(|f| (f.id, distance(block, &f.geometry).unwrap(), f.reach))
            .collect();
        let within: Vec<&(i64, f64, f64)> = exact.iter().filter(|(_, d, r)| d <= r).collect();
        assert_eq!(layer.reached(block), !within.is_empty(), "block {b}");
        assert_eq!(layer.count(block, None), within.len(), "block {b}");
        assert_eq!(
            layer.count(block, Some(2000.0)),
            exact.iter().filter(|(_, d, _)| *d <= 2000.0).count(),
            "block {b}"
        );
        let mut expected: Vec<(i64, f64)> = within.iter().map(|(id, d, _)| (*id, *d)).collect();
        expected.sort_by(|x, y| x.1.total_cmp(&y.1).then(x.0.cmp(&y.0)));
        let near = layer.near(block, None);
        assert_eq!(near.len(), expected.len(), "block {b}");
        for (got, want) in near.iter().zip(&expected) {
            assert_eq!(got.0, want.0, "block {b}");
            assert!(
                (got.1 - want.1).abs() <= 1e-6,
                "block {b}: {got:?} {want:?}"
            );
        }
        let nearest = exact.iter().map(|e| e.1).fold(f64::INFINITY, f64::min);
        let got = layer.nearest(block, None).unwrap();
        assert!(
            (got - nearest).abs() <= 1e-6,
            "block {b}: nearest {got} vs {nearest}"
        );
        match layer.nearest(block, Some(1500.0)) {
            Some(d) => assert!((d - nearest).abs() <= 1e-6 && nearest <= 1500.0),
            None => assert!(nearest > 1500.0, "block {b}"),
        }
        reached_count += !within.is_empty() as usize;
    }
    (reached_count, blocks.len())
}

#[test]
fn random_layers_answer_as_brute_force() {
    let mut rng = XorShift(0x1a7e_5eed);
    for (centre, spread) in [
        ((-131.0, 38.5), 0.4),
        ((12.0, -40.0), 0.3),
        ((179.95, -17.0), 0.3),
    ] {
        let features = random_layer(&mut rng, centre, spread, 100);
        let layer = Layer::new(features);
        let blocks: Vec<Prepared> = (0..150)
            .map(|_| random_block(&mut rng, centre, spread))
            .collect();
        let (reached, total) = check_against_brute_force(&layer, &blocks);
        assert!(
            reached > 20 && reached < total,
            "{reached} of {total} reached near {centre:?}"
        );
    }
}

#[test]
fn the_order_of_features_changes_nothing() {
    let mut rng = XorShift(0x0de7_e2a1);
    let centre = (-131.0, 38.5);
    let features = random_layer(&mut rng, centre, 0.1, 120);
    let mut reversed = features.clone();
    reversed.reverse();
    let (a, b) = (Layer::new(features), Layer::new(reversed));
    for _ in 0..300 {
        let block = random_block(&mut rng, centre, 0.1);
        assert_eq!(a.reached(&block), b.reached(&block));
        assert_eq!(a.count(&block, None), b.count(&block, None));
        assert_eq!(a.near(&block, Some(3000.0)), b.near(&block, Some(3000.0)));
        assert_eq!(a.nearest(&block, None), b.nearest(&block, None));
    }
}

#[test]
fn an_island_chain_across_the_antimeridian() {
    // Parks on islands at 179.9 E and 179.9 W; blocks on both sides.
    let layer = Layer::new(vec![
        feature(1, "POLYGON ((179.90 -16.00, 179.95 -16.00, 179.95 -15.95, 179.90 -15.95, 179.90 -16.00))", 804.672),
        feature(2, "POLYGON ((-179.95 -16.00, -179.90 -16.00, -179.90 -15.95, -179.95 -15.95, -179.95 -16.00))", 804.672),
        feature(3, "POLYGON ((179.99 -16.10, -179.99 -16.10, -179.99 -16.08, 179.99 -16.08, 179.99 -16.10))", 0.0),
    ]);
    let blocks: Vec<Prepared> = [
        "POINT (179.955 -15.975)",
        "POINT (-179.955 -15.975)",
        "POINT (180.0 -16.09)",
        "POINT (-180.0 -16.2)",
        "POLYGON ((179.999 -16.05, -179.999 -16.05, -179.999 -16.04, 179.999 -16.04, 179.999 -16.05))",
    ]
    .iter()
    .map(|t| prepare(t))
    .collect();
    check_against_brute_force(&layer, &blocks);
    assert!(layer.reached(&blocks[0]) && layer.reached(&blocks[1]) && layer.reached(&blocks[2]));
    assert!(!layer.reached(&blocks[3]));
}

#[test]
fn a_block_in_a_parks_hole_is_at_the_holes_distance() {
    let park =
        "POLYGON ((-131.10 38.40, -131.00 38.40, -131.00 38.48, -131.10 38.48, -131.10 38.40), \
                (-131.06 38.43, -131.04 38.43, -131.04 38.45, -131.06 38.45, -131.06 38.43))";
    let layer = Layer::new(vec![feature(1, park, 100.0)]);
    let block = prepare("POLYGON ((-131.051 38.439, -131.049 38.439, -131.049 38.441, -131.051 38.441, -131.051 38.439))");
    let d = layer.nearest(&block, None).unwrap();
    assert!(d > 700.0 && d < 900.0, "{d}");
    assert!(!layer.reached(&block));
    let layer = Layer::new(vec![feature(1, park, 900.0)]);
    assert!(layer.reached(&block));
}

#[test]
fn a_200000_vertex_polygon_is_indexed_and_answers_exactly() {
    // A ragged forest boundary: 200,000 vertices on a circle of ~0.5 degrees
    // with a saw-tooth of 0.002 degrees.
    let n = 200_000;
    let (cx, cy) = (-131.0f64, 38.5f64);
    let k = 1.0 / cy.to_radians().cos();
    let mut pts: Vec<String> = (0..n)
        .map(|i| {
            let t = i as f64 / n as f64 * std::f64::consts::TAU;
            let r = 0.5 + if i % 2 == 0 { 0.002 } else { 0.0 };
            format!("{} {}", cx + r * k * t.cos(), cy + r * t.sin())
        })
        .collect();
    pts.push(pts[0].clone());
    let big = feature(1, &format!("POLYGON (({}))", pts.join(", ")), 804.672);
    assert!(
        big.geometry.indexed(),
        "large polygons get an element index"
    );
    let layer = Layer::new(vec![big]);
    let mut rng = XorShift(0xb16_f0e5);
    let blocks: Vec<Prepared> = (0..30)
        .map(|i| {
            // Inside, just outside and well outside the boundary.
            let r = [0.3, 0.505, 0.512, 0.52, 0.6][i % 5] + rng.uniform(-0.002, 0.002);
            let t = rng.uniform(0.0, std::f64::consts::TAU);
            let c = (cx + r * k * t.cos(), cy + r * t.sin());
            prepare(&format!("POLYGON ({})", ring(&mut rng, c, 10, 0.001)))
        })
        .collect();
    let (reached, _) = check_against_brute_force(&layer, &blocks);
    assert!(reached > 8 && reached < 30, "{reached}");
}

#[test]
fn empty_blocks_reach_nothing() {
    let layer = Layer::new(vec![feature(1, "POINT (-131 38.5)", 1e6)]);
    let empty = prepare("POLYGON EMPTY");
    assert!(!layer.reached(&empty));
    assert_eq!(layer.count(&empty, None), 0);
    assert!(layer.near(&empty, None).is_empty());
    assert_eq!(layer.nearest(&empty, None), None);
}

/// An edge: its two ends (lon, lat).
type Edge = ((f64, f64), (f64, f64));

/// The edges of a closed ring given as WKT coordinates "x y, x y, ...".
fn ring_edges(text: &str) -> Vec<Edge> {
    let pts: Vec<(f64, f64)> = text
        .trim_matches(|c| c == '(' || c == ')')
        .split(", ")
        .map(|p| {
            let mut xy = p.split(' ').map(|v| v.parse::<f64>().unwrap());
            (xy.next().unwrap(), xy.next().unwrap())
        })
        .collect();
    pts.windows(2).map(|w| (w[0], w[1])).collect()
}

/// Far from every feature (50 km to 2,500 km), the best-first nearest
/// search gives the same number as the exact distance of every feature
/// (ambit::proximity::distance, bit for bit), and as brute force over all
/// edge pairs with the exact edge-to-edge distance
/// (ambit::geodesy::segment::segment_segment_distance, itself checked
/// against dense sampling with geographiclib-rs in
/// tests/geodesy_bruteforce.rs); the blocks lie outside every feature, so
/// no containment is involved (checked: the distances are positive).
#[test]
fn far_blocks_get_the_exact_nearest_distance() {
    use ambit::geodesy::segment::segment_segment_distance;
    let mut rng = XorShift(0x5eed_0010);
    // A wiggly ring of 3,000 vertices about 2 degrees across, and small
    // parks scattered 3-6 degrees east of it.
    let big_ring = ring(&mut rng, (-100.0, 40.0), 3000, 1.0);
    let mut texts = vec![format!("POLYGON ({big_ring})")];
    for _ in 0..40 {
        let c = (rng.uniform(-96.0, -93.0), rng.uniform(36.0, 44.0));
        texts.push(format!("POLYGON ({})", ring(&mut rng, c, 12, 0.004)));
    }
    let features: Vec<Feature> = texts
        .iter()
        .enumerate()
        .map(|(i, t)| feature(i as i64 + 1, t, 800.0))
        .collect();
    let layer = Layer::new(features);
    let edges: Vec<Vec<Edge>> = texts
        .iter()
        .map(|t| ring_edges(t.trim_start_matches("POLYGON ")))
        .collect();
    for k in 0..12 {
        // Blocks north-west of everything, 0.5 to 22 degrees away.
        let far = 0.5 + 2.0 * k as f64;
        let c = (-104.0 - far * 0.5, 42.0 + far * 0.8);
        let block_ring = ring(&mut rng, c, 10, 0.0015);
        let block = prepare(&format!("POLYGON ({block_ring})"));
        let by_feature = layer
            .features()
            .iter()
            .map(|f| distance(&block, &f.geometry).unwrap())
            .fold(f64::INFINITY, f64::min);
        let got = layer.nearest(&block, None).unwrap();
        assert_eq!(got, by_feature, "block {k} at {c:?}");
        assert!(got > 0.0);
        let block_edges = ring_edges(&block_ring);
        let brute = edges
            .iter()
            .flatten()
            .flat_map(|&(b1, b2)| {
                block_edges
                    .iter()
                    .map(move |&(a1, a2)| segment_segment_distance(a1, a2, b1, b2))
            })
            .fold(f64::INFINITY, f64::min);
        assert!(
            (got - brute).abs() <= 1e-6,
            "block {k}: nearest {got} vs brute force {brute}"
        );
        // A cap just below the distance gives none; at it, the distance.
        assert_eq!(layer.nearest(&block, Some(got * (1.0 - 1e-9))), None);
        assert_eq!(layer.nearest(&block, Some(got)), Some(got));
        assert_eq!(
            layer.reached_and_nearest(&block, Some(got)),
            (false, Some(got))
        );
    }
}

/// The cheap path of the reach question (ambit::proximity::quick) against
/// brute force: random blocks near random layers, each answered both ways;
/// a decided verdict is always right, and all three verdicts occur (so the
/// comparison covers the cheap answers as well as the exact fallback).
#[test]
fn the_quick_reach_verdict_agrees_with_brute_force() {
    use ambit::proximity::quick::{reached, reached_verdict, Verdict};
    let mut rng = XorShift(0x9e1c_0a75);
    let mut seen = [0usize; 3];
    for (centre, spread) in [
        ((-131.0, 38.5), 0.4),
        ((12.0, -40.0), 0.3),
        ((179.95, -17.0), 0.3),
        ((25.0, 79.5), 0.2),
    ] {
        let layer = Layer::new(random_layer(&mut rng, centre, spread, 120));
        for b in 0..400 {
            let c = (
                centre.0 + rng.uniform(-spread, spread),
                centre.1 + rng.uniform(-spread, spread) * 0.7,
            );
            let text = match rng.below(5) {
                0 => format!("POINT ({} {})", c.0, c.1),
                1 => format!(
                    "LINESTRING ({} {}, {} {})",
                    c.0,
                    c.1,
                    c.0 + 0.003,
                    c.1 + 0.001
                ),
                _ => format!("POLYGON ({})", ring(&mut rng, c, 10, 0.0015)),
            };
            let g = wkt::parse(&text).unwrap();
            validate(&g, 4326, &Never).unwrap();
            let block = Prepared::new(&g);
            let truth = layer
                .features()
                .iter()
                .any(|f| distance(&block, &f.geometry).unwrap() <= f.reach);
            let verdict = reached_verdict(&layer, &g);
            match verdict {
                Verdict::Reached => assert!(truth, "{centre:?} block {b}: {text}"),
                Verdict::NotReached => assert!(!truth, "{centre:?} block {b}: {text}"),
                Verdict::Undecided => {}
            }
            seen[verdict as usize] += 1;
            assert_eq!(
                reached(&layer, &g, &Never).unwrap(),
                truth,
                "{centre:?} block {b}: {text}"
            );
        }
    }
    assert!(seen.iter().all(|&n| n > 20), "verdicts seen: {seen:?}");
}

/// A block vertex a millimetre beyond a point facility's reach is not taken
/// as reached by the cheap path, and one a millimetre inside is; distances
/// from Karney's direct problem (geographiclib-rs), so they do not come
/// from ambit's own geodesy.
#[test]
fn the_quick_reach_verdict_holds_at_the_reach_boundary() {
    use ambit::proximity::quick::{reached, reached_verdict, Verdict};
    use geographiclib_rs::{DirectGeodesic, Geodesic};
    let wgs84 = Geodesic::wgs84();
    let reach = METRES_PER_MILE;
    let facility = (-131.2, 38.4);
    let layer = Layer::new(vec![feature(
        1,
        &format!("POINT ({} {})", facility.0, facility.1),
        reach,
    )]);
    for azimuth in [0.0, 37.0, 90.0, 181.0, 300.0] {
        for (offset, inside) in [(-0.001, true), (0.001, false)] {
            let (lat, lon): (f64, f64) =
                wgs84.direct(facility.1, facility.0, azimuth, reach + offset);
            // A small block whose nearest point to the facility is this
            // vertex: it extends straight away from the facility.
            let (lat2, lon2): (f64, f64) =
                wgs84.direct(facility.1, facility.0, azimuth, reach + offset + 150.0);
            let (lat3, lon3): (f64, f64) = wgs84.direct(lat, lon, azimuth + 90.0, 80.0);
            let text =
                format!("POLYGON (({lon} {lat}, {lon3} {lat3}, {lon2} {lat2}, {lon} {lat}))");
            let g = wkt::parse(&text).unwrap();
            validate(&g, 4326, &Never).unwrap();
            let verdict = reached_verdict(&layer, &g);
            if !inside {
                assert_ne!(verdict, Verdict::Reached, "azimuth {azimuth}: {text}");
            }
            assert_eq!(
                reached(&layer, &g, &Never).unwrap(),
                inside,
                "azimuth {azimuth}, offset {offset}"
            );
        }
    }
}
