//! Valid geometries (issue 13, item 2; README, "Valid geometries"): every
//! polygon means one area. Invalid polygons get an error naming the
//! polygon, ring and vertex; small defects of real boundaries with one
//! meaning are accepted, and their area is the even-odd area that the
//! distance code's containment uses.
//!
//! References: areas of accepted shapes come from geographiclib-rs's
//! `PolygonArea` (Karney 2013, section 6; a general-purpose reference
//! library) on the shape's lobes written out by hand; crossings of random
//! rings from the exact geodesic crossing test of every pair of edges
//! (brute force).

use std::time::Instant;

use ambit::blob::{decode_valid, gpkg, wkt};
use ambit::error::{GeomError, PolygonProblem};
use ambit::geodesy::segment::segments_intersect;
use ambit::geometry::{validate, Geometry};
use ambit::interrupt::Never;
use ambit::proximity::validity::{area, check};
use ambit::proximity::{distance, Prepared};
use ambit::testing::XorShift;
use geographiclib_rs::{Geodesic, PolygonArea, Winding};

fn parse(text: &str) -> Geometry {
    wkt::parse(text).unwrap()
}

fn problem(text: &str) -> GeomError {
    check(&parse(text), &Never).unwrap_err()
}

/// |area| of one ring by geographiclib-rs (closing vertex left out).
fn karney(ring: &[(f64, f64)]) -> f64 {
    let g = Geodesic::wgs84();
    let mut pa = PolygonArea::new(&g, Winding::CounterClockwise);
    for p in &ring[..ring.len() - 1] {
        pa.add_point(p.1, p.0);
    }
    pa.compute(true).1.abs()
}

#[test]
fn a_hole_outside_its_shell_is_refused() {
    // Issue 13: this polygon's area was -6,153,954,914 m2.
    let e = problem("POLYGON((0 0,0.001 0,0.001 0.001,0 0),(1 1,2 1,2 2,1 1))");
    assert_eq!(
        e,
        GeomError::InvalidPolygon {
            polygon: 1,
            ring: 2,
            vertex: 1,
            problem: PolygonProblem::HoleOutside
        }
    );
    assert_eq!(
        e.to_string(),
        "invalid polygon: polygon 1, ring 2 is a hole outside its exterior ring 1; a hole must lie inside its exterior (a separate area is another polygon of a MULTIPOLYGON)"
    );
    // Through the decode-and-validate path that every function uses.
    let blob = gpkg::write(
        &parse("POLYGON((0 0,0.001 0,0.001 0.001,0 0),(1 1,2 1,2 2,1 1))"),
        4326,
    );
    assert_eq!(decode_valid(&blob, &Never).unwrap_err(), e);
}

#[test]
fn nested_holes_are_refused() {
    let e = problem(
        "POLYGON((0 0, 1 0, 1 1, 0 1, 0 0), (0.1 0.1, 0.9 0.1, 0.9 0.9, 0.1 0.9, 0.1 0.1), \
         (0.4 0.4, 0.6 0.4, 0.6 0.6, 0.4 0.6, 0.4 0.4))",
    );
    assert_eq!(
        e,
        GeomError::InvalidPolygon {
            polygon: 1,
            ring: 3,
            vertex: 1,
            problem: PolygonProblem::HoleInHole { other_ring: 2 }
        }
    );
}

#[test]
fn crossing_rings_are_refused_with_where() {
    // A bow-tie whose edges cross at (0.5, 0.5): area 0 and share NULL
    // before, with no word about it.
    let e = problem("POLYGON((0 0, 1 1, 1 0, 0 1, 0 0))");
    match &e {
        GeomError::InvalidPolygon {
            polygon: 1,
            ring: 1,
            problem:
                PolygonProblem::Crossing {
                    other_polygon: 1,
                    other_ring: 1,
                    lon,
                    lat,
                    ..
                },
            ..
        } => {
            // The chords cross at (0.5, 0.5); the geodesics within their bow
            // (common practice, no source: 1e-3 degrees is far above it).
            assert!((lon - 0.5).abs() < 1e-3 && (lat - 0.5).abs() < 1e-3, "{e}");
        }
        other => panic!("{other:?}"),
    }
    assert!(e.to_string().contains("crosses the same ring"), "{e}");
    // A hole crossing its shell.
    let e = problem("POLYGON((0 0, 1 0, 1 1, 0 1, 0 0),(0.5 0.5, 1.5 0.5, 1.5 0.6, 0.5 0.5))");
    assert!(
        matches!(
            e,
            GeomError::InvalidPolygon {
                polygon: 1,
                problem: PolygonProblem::Crossing {
                    other_polygon: 1,
                    ..
                },
                ..
            }
        ),
        "{e:?}"
    );
    assert!(e
        .to_string()
        .contains("the rings of a polygon may touch at points but not cross"));
    // Two holes crossing.
    let e = problem(
        "POLYGON((0 0, 1 0, 1 1, 0 1, 0 0),(0.2 0.2, 0.6 0.2, 0.6 0.6, 0.2 0.6, 0.2 0.2),\
         (0.4 0.4, 0.8 0.4, 0.8 0.8, 0.4 0.8, 0.4 0.4))",
    );
    assert!(
        e.to_string().contains("polygon 1, ring 2 crosses ring 3"),
        "{e}"
    );
}

#[test]
fn overlapping_parts_of_a_multipolygon_are_refused() {
    let e = problem("MULTIPOLYGON(((0 0, 1 0, 1 1, 0 1, 0 0)),((0.5 0.5, 2 0.5, 2 2, 0.5 0.5)))");
    assert!(
        e.to_string()
            .contains("polygon 1, ring 1 crosses polygon 2, ring 1")
            && e.to_string()
                .contains("the polygons of a MULTIPOLYGON must not overlap"),
        "{e}"
    );
    let e =
        problem("MULTIPOLYGON(((0 0, 1 0, 1 1, 0 1, 0 0)),((0.2 0.2, 0.4 0.2, 0.4 0.4, 0.2 0.2)))");
    assert_eq!(
        e,
        GeomError::InvalidPolygon {
            polygon: 2,
            ring: 1,
            vertex: 1,
            problem: PolygonProblem::PartInside { other_polygon: 1 }
        }
    );
    // An island in a hole of another part is not an overlap.
    check(&parse(
        "MULTIPOLYGON(((0 0, 1 0, 1 1, 0 1, 0 0),(0.1 0.1, 0.9 0.1, 0.9 0.9, 0.1 0.9, 0.1 0.1)),\
         ((0.4 0.4, 0.6 0.4, 0.6 0.6, 0.4 0.6, 0.4 0.4)))",
        ),
        &Never,
    )
    .unwrap();
}

#[test]
fn a_boundary_passing_through_itself_at_a_vertex_is_refused() {
    // The ring visits (0.5 0.5) twice and crosses itself there: the two
    // passages' directions interleave (no two edges cross in their
    // interiors).
    let e = problem("POLYGON((0 0, 0.5 0.5, 1 1, 1 0, 0.5 0.5, 0 1, 0 0))");
    assert!(
        e.to_string()
            .contains("crosses the same ring near (0.5, 0.5)"),
        "{e}"
    );
    // A hole whose vertex lies on the shell's edge, passing through it.
    let e = problem("POLYGON((0 0, 1 0, 1 1, 0 1, 0 0),(0.5 0, 0.7 -0.1, 0.7 0.5, 0.5 0))");
    assert!(matches!(e, GeomError::InvalidPolygon { .. }), "{e:?}");
}

#[test]
fn small_defects_with_one_meaning_are_accepted_and_measured() {
    let sq = |x0: f64, y0: f64, s: f64| {
        vec![
            (x0, y0),
            (x0 + s, y0),
            (x0 + s, y0 + s),
            (x0, y0 + s),
            (x0, y0),
        ]
    };
    // Repeated consecutive points: the square's area.
    let g = parse("POLYGON((0 0, 0.01 0, 0.01 0, 0.01 0.01, 0 0.01, 0 0.01, 0 0))");
    check(&g, &Never).unwrap();
    let want = karney(&sq(0.0, 0.0, 0.01));
    assert!(
        (area(&g) - want).abs() < 1e-6 * want,
        "{} vs {want}",
        area(&g)
    );

    // A ring of zero area (there and back along a line): accepted, 0.
    let g = parse("POLYGON((0 0, 0.01 0, 0.02 0, 0.01 0, 0 0))");
    check(&g, &Never).unwrap();
    assert_eq!(area(&g), 0.0);

    // A bow-tie whose lobes meet at a vertex: the sum of the lobes.
    let g = parse("POLYGON((0 0, 0.01 0, 0.005 0.005, 0.01 0.01, 0 0.01, 0.005 0.005, 0 0))");
    check(&g, &Never).unwrap();
    let lobes = karney(&[(0.0, 0.0), (0.01, 0.0), (0.005, 0.005), (0.0, 0.0)])
        + karney(&[(0.005, 0.005), (0.01, 0.01), (0.0, 0.01), (0.005, 0.005)]);
    let a = area(&g);
    assert!((a - lobes).abs() < 1e-6 * lobes, "{a} vs {lobes}");
    // ... and the containment of the distance code agrees: a point in
    // either lobe is at distance 0.
    let p = Prepared::new(&g);
    for inside in ["POINT(0.005 0.002)", "POINT(0.005 0.008)"] {
        let q = Prepared::new(&parse(inside));
        assert_eq!(distance(&p, &q), Some(0.0), "{inside}");
    }
    let beside = Prepared::new(&parse("POINT(0.002 0.005)"));
    assert!(distance(&p, &beside).unwrap() > 0.0);
    // ... and so does ambit_share: a feature reaching into the lower lobe
    // only covers the same part of it, of an area twice the lobe's (the
    // lobes are mirror images, equal in area to 1e-6 by Karney's values
    // above), so the share is half the lower lobe's own.
    let layer = ambit::proximity::Layer::new(vec![ambit::proximity::Feature {
        id: 1,
        reach: 100.0,
        geometry: Prepared::new(&parse("POINT(0.0025 0.0025)")),
    }]);
    let lower = Prepared::new(&parse("POLYGON((0 0, 0.01 0, 0.005 0.005, 0 0))"));
    let (both, one) = (
        layer.share(&p, &ambit::interrupt::Never).unwrap().unwrap(),
        layer
            .share(&lower, &ambit::interrupt::Never)
            .unwrap()
            .unwrap(),
    );
    assert!((2.0 * both - one).abs() < 1e-6 * one, "{both} vs {one}");

    // A ring that comes back to a vertex from inside: an inverted hole.
    let g = parse(
        "POLYGON((0 0, 0.01 0, 0.01 0.01, 0.005 0.01, 0.007 0.005, 0.003 0.005, 0.005 0.01, 0 0.01, 0 0))",
    );
    check(&g, &Never).unwrap();
    let want = karney(&sq(0.0, 0.0, 0.01))
        - karney(&[(0.005, 0.01), (0.007, 0.005), (0.003, 0.005), (0.005, 0.01)]);
    let a = area(&g);
    assert!((a - want).abs() < 1e-6 * want, "{a} vs {want}");
    let p = Prepared::new(&g);
    let in_hole = Prepared::new(&parse("POINT(0.005 0.007)"));
    assert!(
        distance(&p, &in_hole).unwrap() > 0.0,
        "the inverted hole is a hole"
    );

    // Holes touching the exterior at a vertex and at a point of an edge.
    for hole in [
        "(0 0, 0.005 0.002, 0.002 0.005, 0 0)",
        "(0.005 0, 0.007 0.005, 0.003 0.005, 0.005 0)",
    ] {
        let g = parse(&format!(
            "POLYGON((0 0, 0.01 0, 0.01 0.01, 0 0.01, 0 0),{hole})"
        ));
        check(&g, &Never).unwrap();
        let h: Vec<(f64, f64)> = hole
            .trim_matches(|c| c == '(' || c == ')')
            .split(',')
            .map(|v| {
                let xy: Vec<f64> = v.split_whitespace().map(|x| x.parse().unwrap()).collect();
                (xy[0], xy[1])
            })
            .collect();
        let want = karney(&sq(0.0, 0.0, 0.01)) - karney(&h);
        assert!((area(&g) - want).abs() < 1e-6 * want, "{hole}");
    }

    // Parts of a multipolygon touching at a vertex and along an edge.
    for text in [
        "MULTIPOLYGON(((0 0, 0.01 0, 0.01 0.01, 0 0.01, 0 0)),((0.01 0.01, 0.02 0.01, 0.02 0.02, 0.01 0.02, 0.01 0.01)))",
        "MULTIPOLYGON(((0 0, 0.01 0, 0.01 0.01, 0 0.01, 0 0)),((0.01 0, 0.02 0, 0.02 0.01, 0.01 0.01, 0.01 0)))",
    ] {
        let g = parse(text);
        check(&g, &Never).unwrap();
        let want = karney(&sq(0.0, 0.0, 0.01)) + karney(&sq(0.01, 0.0, 0.01)).min(karney(&sq(0.01, 0.01, 0.01))).max(0.0);
        let a = area(&g);
        // Both parts are 0.01-degree squares near the equator; each within
        // 1e-6 of the first square's area (latitude 0..0.02 changes the
        // area by far less than 1e-4; Karney's values).
        assert!((a - 2.0 * karney(&sq(0.0, 0.0, 0.01))).abs() < 1e-4 * a, "{text}: {a} vs ~{want}");
    }
}

/// Random small rings (4 to 7 vertices in a box of 0.01 to 2 degrees at
/// latitudes -70..70, some across the antimeridian): the check refuses
/// exactly those where two non-neighbouring edges meet by the exact
/// geodesic test (brute force over all pairs).
#[test]
fn random_rings_are_refused_exactly_when_their_edges_cross() {
    let mut rng = XorShift(0x7a11_d17e);
    let (mut simple, mut crossing) = (0, 0);
    for _ in 0..3000 {
        let n = 3 + rng.below(5) as usize;
        let size = [0.01, 0.1, 2.0][rng.below(3) as usize];
        let (lon0, lat0) = (
            if rng.below(5) == 0 {
                179.99
            } else {
                rng.uniform(-170.0, 170.0)
            },
            rng.uniform(-70.0, 70.0),
        );
        let mut ring: Vec<(f64, f64)> = (0..n)
            .map(|_| (lon0 + rng.uniform(0.0, size), lat0 + rng.uniform(0.0, size)))
            .collect();
        ring.push(ring[0]);
        let text = format!(
            "POLYGON(({}))",
            ring.iter()
                .map(|p| format!("{} {}", p.0, p.1))
                .collect::<Vec<_>>()
                .join(", ")
        );
        let mut meets = false;
        for i in 0..n {
            for j in i + 1..n {
                let neighbours = j == i + 1 || (i == 0 && j == n - 1);
                if !neighbours && segments_intersect(ring[i], ring[i + 1], ring[j], ring[j + 1]) {
                    meets = true;
                }
            }
        }
        let verdict = check(&parse(&text), &Never);
        assert_eq!(verdict.is_err(), meets, "{text}: {verdict:?}");
        if meets {
            crossing += 1;
        } else {
            simple += 1;
        }
    }
    println!("random rings: {simple} simple, {crossing} crossing");
    assert!(simple > 500 && crossing > 500, "{simple} {crossing}");
}

/// A 200,000-vertex polygon (tests/layer_bruteforce.rs's ragged forest)
/// is checked through the decode-and-validate path; the time is printed
/// (no assertion on wall time; it is well under a second here).
#[test]
fn a_200000_vertex_polygon_is_checked_quickly() {
    let n = 200_000;
    let (cx, cy) = (-131.0f64, 38.5f64);
    let k = 1.0 / cy.to_radians().cos();
    let mut flat: Vec<f64> = (0..n)
        .flat_map(|i| {
            let t = i as f64 / n as f64 * std::f64::consts::TAU;
            let r = 0.5 + if i % 2 == 0 { 0.002 } else { 0.0 };
            [cx + r * k * t.cos(), cy + r * t.sin()]
        })
        .collect();
    flat.extend_from_within(..2);
    let g = Geometry::new(
        ambit::geometry::Dimensions::Xy,
        ambit::geometry::Shape::Polygon(vec![flat.clone()]),
    );
    let t = Instant::now();
    validate::validate(&g, 4326, &Never).unwrap();
    // The saw-tooth is the hard case for box filters: each tooth (0.002
    // degrees long, 1.6e-5 degrees from the next) has boxes meeting about
    // 160 others. A smooth boundary of as many vertices is much quicker.
    println!(
        "200,000-vertex saw-tooth polygon validated in {:.3} s",
        t.elapsed().as_secs_f64()
    );
    let smooth: Vec<f64> = (0..=n)
        .flat_map(|i| {
            let t = (i % n) as f64 / n as f64 * std::f64::consts::TAU;
            [cx + 0.5 * k * t.cos(), cy + 0.5 * t.sin()]
        })
        .collect();
    let s = Geometry::new(
        ambit::geometry::Dimensions::Xy,
        ambit::geometry::Shape::Polygon(vec![smooth]),
    );
    let t = Instant::now();
    validate::validate(&s, 4326, &Never).unwrap();
    println!(
        "200,000-vertex smooth polygon validated in {:.3} s",
        t.elapsed().as_secs_f64()
    );
    // The same ring with one vertex moved across the far side: refused.
    let mut bad = flat;
    bad[2 * 1000] = cx - 0.6 * k;
    bad[2 * 1000 + 1] = cy;
    let g = Geometry::new(
        ambit::geometry::Dimensions::Xy,
        ambit::geometry::Shape::Polygon(vec![bad]),
    );
    let t = Instant::now();
    let e = validate::validate(&g, 4326, &Never).unwrap_err();
    println!(
        "... with a crossing refused in {:.3} s: {e}",
        t.elapsed().as_secs_f64()
    );
    assert!(e.to_string().contains("crosses the same ring"), "{e}");
}
