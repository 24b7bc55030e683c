//! What a polygon means, decided once (README, "Valid geometries"): the
//! checks that make every polygon one area, and the area that every
//! function then agrees with.
//!
//! # Rules
//!
//! A polygon's rings (and a multipolygon's polygons) are read as closed
//! curves of geodesic edges, and the area is what the even-odd rule makes
//! of them: a point is inside when a path from it to far away crosses the
//! boundary an odd number of times. That is the rule of the point-in-polygon
//! test of [`crate::proximity::contain`], so distance, within, the layers,
//! the share and the area all see one region. For the rule to give the area
//! the data meant, ambit refuses ([`GeomError::InvalidPolygon`]):
//!
//! - edges that cross: a ring crossing itself (a bow-tie whose edges cross),
//!   two rings of one polygon crossing, polygons of a multipolygon crossing;
//!   also a boundary that passes through itself at a point where it touches
//!   (the directions of the two passages interleave around the point);
//! - a hole (ring 2, 3, ...) outside its exterior ring;
//! - a hole inside another hole;
//! - a polygon of a multipolygon inside another.
//!
//! and accepts, with one meaning each:
//!
//! - repeated consecutive points (ignored);
//! - rings of zero area (all points on one geodesic, spikes that go out and
//!   back along an edge): they cover nothing;
//! - rings that touch themselves or each other at points without crossing
//!   (census boundaries do): two lobes meeting at a vertex cover both lobes;
//!   a ring that comes back to one of its vertices from inside makes a hole
//!   (an inverted hole); a hole touching its exterior at a point is a hole;
//! - polygons of a multipolygon touching at points or along edges;
//! - vertices at a pole (see [`crate::proximity::prepared::meridians_at_poles`]).
//!
//! # Method
//!
//! Candidate edge pairs come from a sort-and-sweep over longitude boxes of
//! the edges (geodesic longitude is monotonic along an edge, by Clairaut's
//! relation; latitude is grown by a bound on the edge's poleward bow, and
//! edges near a pole or longer than [`LONG_EDGE_DEG`] get the whole band).
//! Each candidate pair is first judged in a flat frame at the pair's
//! latitude: when every end lies farther from the other edge's line than a
//! margin covering the geodesics' bow in the frame, the frame's answer is
//! the answer; otherwise the exact geodesic test decides
//! ([`crate::geodesy::segment::GeodesicSegment::intersects`], with
//! end-to-edge distances within [`TOUCH_TOLERANCE`] counting as touching).
//! Where rings touch, the directions of the passages through the point
//! (geodesic azimuths, Karney's inverse) say whether they cross there. Rings
//! that touch themselves are cut into loops at the touching points; holes
//! are tested inside their exterior and outside each other with the
//! geodesic point-in-ring test, and the area is the sum of the loops' areas
//! (Karney 2013, section 6), each counted + or - by how many other loops
//! hold it (even-odd).
//!
//! Cost: a single ring that is star-shaped about the mean of its vertices
//! (almost every census block) is settled in one pass without allocation
//! ([`star_shaped`]); otherwise one pass over the vertices, a sort of the
//! edges by longitude (a grid above 256 edges), and exact tests only for
//! edges that nearly meet. Measured (tests/validity.rs prints them): a
//! smooth 200,000-vertex polygon in about 0.15 s, an adversarial saw-tooth
//! of as many vertices (each tooth's box meeting about 160 others) in about
//! 1 s; the reached-only sweep over the demo region's blocks (41 vertices
//! on average) costs 1-5 % more (DEVELOPERS.md). [`area`] repeats the
//! crossing pass to find the loops.
//!
//! References: C. F. F. Karney, "Algorithms for geodesics", J. Geodesy
//! 87:43–55 (2013), doi 10.1007/s00190-012-0578-z; the even-odd rule and
//! the sweep for segment intersection candidates are common practice (e.g.
//! M. de Berg et al., "Computational Geometry", 3rd ed., chapter 2, from
//! memory).

use geographiclib_rs::InverseGeodesic;

use crate::error::{GeomError, PolygonProblem};
use crate::geodesy::area::ring_area_perimeter_until;
use crate::geodesy::inverse;
use crate::geodesy::segment::{GeodesicSegment, TOUCH_TOLERANCE};
use crate::geometry::{Geometry, Shape};
use crate::interrupt::{cost, Interrupt, Never, Pacer};
use crate::memory::FreeLater;
use crate::proximity::contain::point_in_ring;
use crate::proximity::prepared::{at_pole, wrap_delta, LonLat};

/// Edges spanning more than this many degrees of longitude or latitude are
/// compared with every other edge (their boxes are the whole band).
pub const LONG_EDGE_DEG: f64 = 20.0;
/// Above this many edges, candidate pairs come from a grid, not a sweep.
const GRID_MIN_EDGES: usize = 256;
/// Beyond this latitude (degrees) an edge's box reaches the pole.
const POLAR_LAT: f64 = 80.0;
/// The flat frame judges only pairs of edges shorter than this (degrees).
const FLAT_MAX_DEG: f64 = 1.0;
/// Temporaries of at least this many items (vertices, edges, cells) are
/// freed in the background ([`FreeLater`]).
const FREE_LATER_MIN: usize = 1 << 16;
/// Vertices or cells handled in one go between two charges to the
/// [`Pacer`] in passes that cost nanoseconds a vertex.
const RUN: usize = 1024;
/// Directions closer than this (degrees) at a touching point are taken as
/// the same direction (passages along a shared edge do not cross).
const SAME_DIRECTION_DEG: f64 = 1e-9;

/// One vertex of a cleaned ring: its position and its number in the data
/// (from 1).
#[derive(Clone, Copy, Debug)]
struct Vertex {
    p: LonLat,
    number: usize,
}

/// A ring ready for the checks: polygon and ring numbers (from 1) and its
/// vertices, closed, without repeated consecutive points, with meridians
/// at the poles.
struct Ring {
    polygon: usize,
    ring: usize,
    v: Vec<Vertex>,
}

/// An edge: ring index in the list, edge index in the ring, and its box.
#[derive(Clone, Copy)]
struct Edge {
    ring: usize,
    k: usize,
    lon_lo: f64,
    lon_hi: f64,
    lat_lo: f64,
    lat_hi: f64,
}

/// How two edges meet.
enum Contact {
    None,
    /// Interiors cross at one point.
    Cross,
    /// They share points without crossing there: those points.
    Touch(Vec<LonLat>),
}

/// Checks every polygon of `g` (of a polygon, a multipolygon or a
/// collection): refuses crossings, holes outside their exterior, nested
/// holes and overlapping polygons with [`GeomError::InvalidPolygon`].
/// Expects coordinates that passed the range checks of
/// [`crate::geometry::validate`]. Asks `stop` after every millisecond or
/// so of work ([`Pacer`]; [`Never`] for callers that cannot be
/// interrupted) and returns `Err(GeomError::Interrupted)` when it says
/// stop.
pub fn check(g: &Geometry, stop: &dyn Interrupt) -> Result<(), GeomError> {
    let mut pace = Pacer::new(stop);
    if let Shape::Polygon(rings) = &g.shape {
        if rings.len() == 1 && star_shaped(&rings[0], g.dims.width()) {
            return Ok(());
        }
    }
    let mut polygons = Vec::new();
    collect_polygons(g, &mut polygons);
    if polygons.is_empty() {
        return Ok(());
    }
    let width = g.dims.width();
    let big = g.vertex_count() >= FREE_LATER_MIN;
    let mut rings = FreeLater::new(Vec::new(), big);
    for (pi, poly) in polygons.iter().enumerate() {
        for (ri, raw) in poly.iter().enumerate() {
            let v = clean(raw, width, &mut pace)?;
            if v.len() >= 2 {
                rings.push(Ring {
                    polygon: pi + 1,
                    ring: ri + 1,
                    v,
                });
            }
        }
    }
    let touches = crossings(&rings, &mut pace)?;
    if touches.points.is_empty() && rings.len() == 1 {
        return Ok(());
    }
    shared_edges(&rings, &mut pace)?;
    let loops = loops_of(&rings, &touches, &mut pace)?;
    nesting(&rings, &loops, &touches, &mut pace)?;
    Ok(())
}

/// Refuses two holes of one polygon, or the exteriors of two polygons, that
/// share an edge with their insides on the same side of it: they overlap
/// along it (a ring given twice, say), which the probes of [`nesting`]
/// may not see because every vertex of one lies on the other. Insides on
/// opposite sides (neighbours along an edge) are left to the other checks.
/// Rings around a pole or of no area have no orientation here and are
/// skipped.
fn shared_edges(rings: &[Ring], pace: &mut Pacer) -> Result<(), GeomError> {
    if rings.len() < 2 {
        return Ok(());
    }
    let key = |p: LonLat| -> (u64, u64) {
        let lon = if p.1.abs() == 90.0 {
            0.0
        } else {
            (p.0 + 180.0).rem_euclid(360.0) - 180.0
        };
        (lon.to_bits(), p.1.to_bits())
    };
    // An edge (its two ends' bits, smaller first) -> the first ring seen
    // with it, and whether that ring's inside is on the edge's left.
    type EdgeKey = ((u64, u64), (u64, u64));
    let mut seen: std::collections::HashMap<EdgeKey, (usize, bool)> =
        std::collections::HashMap::new();
    for (ri, r) in rings.iter().enumerate() {
        let Some(counter_clockwise) = orientation(r) else {
            continue;
        };
        for w in r.v.windows(2) {
            pace.spend(cost::FLAT)?;
            let (a, b) = (key(w[0].p), key(w[1].p));
            if a == b {
                continue;
            }
            let forward = a < b;
            let edge = if forward { (a, b) } else { (b, a) };
            // The inside is on the left of a counter-clockwise ring; seen
            // along the edge's stored direction, on the left when both or
            // neither hold.
            let inside_left = forward == counter_clockwise;
            match seen.entry(edge) {
                std::collections::hash_map::Entry::Vacant(e) => {
                    e.insert((ri, inside_left));
                }
                std::collections::hash_map::Entry::Occupied(e) => {
                    let (rj, other_left) = *e.get();
                    let (x, y) = (&rings[rj], r);
                    if other_left != inside_left || rj == ri {
                        continue;
                    }
                    let error = |problem| GeomError::InvalidPolygon {
                        polygon: y.polygon,
                        ring: y.ring,
                        vertex: w[0].number,
                        problem,
                    };
                    if x.polygon == y.polygon && x.ring > 1 && y.ring > 1 {
                        return Err(error(PolygonProblem::HoleInHole { other_ring: x.ring }));
                    }
                    if x.polygon != y.polygon && x.ring == 1 && y.ring == 1 {
                        return Err(error(PolygonProblem::PartInside {
                            other_polygon: x.polygon,
                        }));
                    }
                }
            }
        }
    }
    Ok(())
}

/// Whether a ring runs counter-clockwise in a local equirectangular
/// picture (longitudes unwrapped along it, scaled by the cosine of its mean
/// latitude); `None` for a ring around a pole or of no area.
fn orientation(r: &Ring) -> Option<bool> {
    let mean_lat = r.v.iter().map(|v| v.p.1).sum::<f64>() / r.v.len() as f64;
    let c = mean_lat.to_radians().cos();
    let mut x = r.v[0].p.0;
    let mut twice_area = 0.0;
    for w in r.v.windows(2) {
        let x1 = x + wrap_delta(w[0].p.0, w[1].p.0);
        twice_area += (x * w[1].p.1 - x1 * w[0].p.1) * c;
        x = x1;
    }
    if (x - r.v[0].p.0).abs() > 180.0 || twice_area == 0.0 || !twice_area.is_finite() {
        return None;
    }
    Some(twice_area > 0.0)
}

/// The area of `g` in square metres under the even-odd rule, for a
/// geometry that passed [`check`]: per polygon, the loops of its rings
/// (rings cut where they touch themselves) each add their geodesic area or
/// take it away by how many other loops of the polygon hold them; summed
/// over polygons and collection members; 0 for points, lines and empty
/// geometries.
///
/// Units: square metres. Accuracy: Karney's area series, round-off level
/// (Karney 2013, section 6, via [`ring_area_perimeter`](crate::geodesy::area::ring_area_perimeter)); for a polygon
/// without touching rings it is |exterior| minus the holes.
///
/// NULL/NaN: NaN for coordinates that fail the range checks. Never panics.
///
/// References: C. F. F. Karney, "Algorithms for geodesics", J. Geodesy
/// 87:43–55 (2013), section 6, doi 10.1007/s00190-012-0578-z.
pub fn area(g: &Geometry) -> f64 {
    area_until(g, &Never).unwrap_or(f64::NAN)
}

/// [`area`], asking `stop` after every millisecond or so of work:
/// `Err(GeomError::Interrupted)` when it says stop (the only error).
pub fn area_until(g: &Geometry, stop: &dyn Interrupt) -> Result<f64, GeomError> {
    let mut pace = Pacer::new(stop);
    let mut polygons = Vec::new();
    collect_polygons(g, &mut polygons);
    let width = g.dims.width();
    let mut total = 0.0;
    for (pi, poly) in polygons.iter().enumerate() {
        let mut rings: Vec<Ring> = Vec::with_capacity(poly.len());
        for (ri, raw) in poly.iter().enumerate() {
            let v = clean(raw, width, &mut pace)?;
            if v.len() >= 2 {
                rings.push(Ring {
                    polygon: pi + 1,
                    ring: ri + 1,
                    v,
                });
            }
        }
        if rings.is_empty() {
            continue;
        }
        let touches = match crossings(&rings, &mut pace) {
            Ok(t) => t,
            Err(GeomError::Interrupted) => return Err(GeomError::Interrupted),
            Err(_) => return Ok(f64::NAN),
        };
        let loops = loops_of(&rings, &touches, &mut pace)?;
        let depths = depths(&loops, &touches, &mut pace)?;
        for (l, depth) in loops.iter().zip(depths) {
            let flat: Vec<f64> = l.points.iter().flat_map(|p| [p.0, p.1]).collect();
            let a = ring_area_perimeter_until(&flat, 2, &mut pace)?.0.abs();
            total += if depth % 2 == 0 { a } else { -a };
        }
    }
    Ok(total)
}

/// The fast path for the common case, a small ring that is star-shaped
/// about the mean of its vertices: in the flat frame at its first vertex
/// (as in [`flat_contact`]), every edge's chord keeps the mean point on the
/// same side, farther than the margin for the ring's extent, and the ring
/// winds once around it. Then the direction from the mean point turns
/// steadily through one turn along the ring, so no two edges meet except
/// neighbours at their common vertex: the ring is simple. False (not
/// decided) for anything else. No allocation; a few operations per vertex.
pub fn star_shaped(raw: &[f64], width: usize) -> bool {
    let n = raw.len() / width;
    if n < 4 || width < 2 {
        return false;
    }
    let (lon0, lat0) = (raw[0], raw[1]);
    if lat0.abs() > POLAR_LAT - 1.0 {
        return false;
    }
    let (s0, c0) = lat0.to_radians().sin_cos();
    let open = &raw[..raw.len() - width];
    let (mut cx, mut cy, mut extent) = (0.0, 0.0, 0.0f64);
    for v in open.chunks_exact(width) {
        let (x, y) = ((v[0] - lon0) * c0, v[1] - lat0);
        cx += x;
        cy += y;
        extent = extent.max(x.abs()).max(y.abs());
    }
    // Within half a degree of the first vertex (so below POLAR_LAT - 0.5).
    if extent.is_nan() || extent > FLAT_MAX_DEG / 2.0 {
        return false;
    }
    cx /= (n - 1) as f64;
    cy /= (n - 1) as f64;
    // tan of the largest latitude, from tan(|lat0|) and tan(0.5 deg) by the
    // addition formula (rounded up).
    let (t0, th) = (s0.abs() / c0, 0.0087269);
    let tan_max = (t0 + th) / (1.0 - t0 * th);
    let e = 2.0 * extent;
    let margin = e * e * (1.0 + tan_max) * 1f64.to_radians() + 1e-12;
    let m2 = margin * margin;
    let (mut positive, mut negative, mut ray) = (0usize, 0usize, 0usize);
    let mut prev = ((raw[0] - lon0) * c0 - cx, raw[1] - lat0 - cy);
    for v in raw[width..].chunks_exact(width) {
        let (ax, ay) = prev;
        let (bx, by) = ((v[0] - lon0) * c0 - cx, v[1] - lat0 - cy);
        let cross = ax * by - ay * bx;
        // |cross| / |chord| > margin, without the square root.
        let len2 = (bx - ax) * (bx - ax) + (by - ay) * (by - ay);
        if cross * cross <= m2 * len2 {
            return false;
        }
        if cross > 0.0 {
            positive += 1;
        } else {
            negative += 1;
        }
        // Crossings of the ray from the mean point towards +x.
        if (ay < 0.0) != (by < 0.0) && ax + (bx - ax) * (-ay / (by - ay)) > 0.0 {
            ray += 1;
        }
        prev = (bx, by);
    }
    (positive == 0 || negative == 0) && ray == 1
}

fn collect_polygons<'a>(g: &'a Geometry, out: &mut Vec<&'a [Vec<f64>]>) {
    match &g.shape {
        Shape::Polygon(rings) if !rings.is_empty() => out.push(rings),
        Shape::MultiPolygon(polygons) => {
            out.extend(polygons.iter().filter(|r| !r.is_empty()).map(|r| &r[..]))
        }
        Shape::GeometryCollection(members) => {
            for m in members {
                collect_polygons(m, out);
            }
        }
        _ => {}
    }
}

/// The ring's vertices, numbered, without repeated consecutive points, with
/// the meridian of its edge given to each pole vertex (as
/// [`crate::proximity::prepared::meridians_at_poles`] does), closed.
fn clean(raw: &[f64], width: usize, pace: &mut Pacer) -> Result<Vec<Vertex>, GeomError> {
    let mut v: Vec<Vertex> = Vec::with_capacity(raw.len() / width);
    for (i, c) in raw.chunks_exact(width).enumerate() {
        pace.step()?;
        let p = (c[0], c[1]);
        if v.last().is_some_and(|l| l.p == p) {
            continue;
        }
        v.push(Vertex { p, number: i + 1 });
    }
    if !v.iter().any(|x| at_pole(x.p)) {
        return Ok(v);
    }
    let mut out: Vec<Vertex> = Vec::with_capacity(v.len() + 4);
    for w in v.windows(2) {
        let (mut a, mut b) = (w[0], w[1]);
        match (at_pole(a.p), at_pole(b.p)) {
            (true, false) => a.p.0 = b.p.0,
            (false, true) => b.p.0 = a.p.0,
            _ => {}
        }
        if out.last().map(|l| l.p) != Some(a.p) {
            out.push(a);
        }
        out.push(b);
    }
    if out.first().map(|f| f.p) != out.last().map(|l| l.p) {
        out.push(out[0]);
    }
    Ok(out)
}

/// The box of the geodesic edge a-b: longitudes exact (monotonic along a
/// geodesic), latitudes grown by a bound on the poleward bow: on the sphere
/// the bow over a longitude span h (radians) is at most h^2/8 |sin cos|
/// (see [`crate::proximity::contain`]), here taken as 4 times that with
/// |sin cos| <= 1/2, plus 1e-9 degrees. Near a pole, or for long edges, the
/// box is the whole band up to the pole.
fn edge_box(a: LonLat, b: LonLat, ring: usize, k: usize) -> Edge {
    let span = wrap_delta(a.0, b.0);
    let lon_a = if (-180.0..180.0).contains(&a.0) {
        a.0
    } else {
        a.0 - 360.0 * ((a.0 + 180.0) / 360.0).floor()
    };
    let (lo, hi) = if span >= 0.0 {
        (lon_a, lon_a + span)
    } else {
        (lon_a + span, lon_a)
    };
    let (mut lat_lo, mut lat_hi) = (a.1.min(b.1), a.1.max(b.1));
    let long = span.abs() > LONG_EDGE_DEG || (a.1 - b.1).abs() > LONG_EDGE_DEG;
    if long || lat_hi.abs() > POLAR_LAT || lat_lo.abs() > POLAR_LAT {
        return Edge {
            ring,
            k,
            lon_lo: -540.0,
            lon_hi: 540.0,
            lat_lo: if lat_lo < -POLAR_LAT || long {
                -90.0
            } else {
                lat_lo
            },
            lat_hi: if lat_hi > POLAR_LAT || long {
                90.0
            } else {
                lat_hi
            },
        };
    }
    let h = span.to_radians();
    let bow = (h * h / 4.0).to_degrees() + 1e-9;
    lat_lo -= bow;
    lat_hi += bow;
    Edge {
        ring,
        k,
        lon_lo: lo - 1e-9,
        lon_hi: hi + 1e-9,
        lat_lo,
        lat_hi,
    }
}

/// Finds every pair of edges that meet; refuses crossings; returns the
/// touching points (sorted, without repeats) and, for each, the edges
/// that pass through it away from their ends (ring, edge).
fn crossings(rings: &[Ring], pace: &mut Pacer) -> Result<Touches, GeomError> {
    let big = rings.iter().map(|r| r.v.len()).sum::<usize>() >= FREE_LATER_MIN;
    let mut edges: FreeLater<Vec<Edge>> = FreeLater::new(Vec::new(), big);
    for (ri, r) in rings.iter().enumerate() {
        for k in 0..r.v.len() - 1 {
            pace.spend(cost::FLAT)?;
            let (a, b) = (r.v[k].p, r.v[k + 1].p);
            if at_pole(a) && at_pole(b) && a.1 == b.1 {
                continue; // a step along the pole: a point
            }
            let e = edge_box(a, b, ri, k);
            // Boxes past the antimeridian are entered once more, shifted.
            if e.lon_lo > -540.0 && (e.lon_hi > 180.0 || e.lon_lo < -180.0) {
                let shift = if e.lon_hi > 180.0 { -360.0 } else { 360.0 };
                edges.push(Edge {
                    lon_lo: e.lon_lo + shift,
                    lon_hi: e.lon_hi + shift,
                    ..e
                });
            }
            edges.push(e);
        }
    }
    let mut touches = Touches::default();
    let frame = FreeLater::new(
        if edges.len() > 64 {
            frame(rings, pace)?
        } else {
            None
        },
        big,
    );
    let mut visit = |x: &Edge, e: &Edge, pace: &mut Pacer| -> Result<(), GeomError> {
        pace.step()?;
        if x.lat_hi < e.lat_lo || e.lat_hi < x.lat_lo || x.lon_hi < e.lon_lo || e.lon_hi < x.lon_lo
        {
            return Ok(());
        }
        if x.ring == e.ring && (x.k == e.k || adjacent(&rings[e.ring], x.k, e.k)) {
            return Ok(());
        }
        let (first, second) = if (x.ring, x.k) < (e.ring, e.k) {
            (x, e)
        } else {
            (e, x)
        };
        meet(rings, frame.as_ref(), first, second, &mut touches, pace)
    };
    if edges.len() > GRID_MIN_EDGES {
        grid_pairs(&edges, &mut visit, pace)?;
    } else {
        sweep_pairs(&edges, &mut visit, pace)?;
    }
    touches
        .points
        .sort_unstable_by(|p, q| p.0.total_cmp(&q.0).then(p.1.total_cmp(&q.1)));
    touches.points.dedup();
    passages_cross(rings, &touches, pace)?;
    Ok(touches)
}

/// Calls `visit` on every pair of edges whose longitude ranges overlap:
/// sort by the west end, sweep eastwards keeping the edges not yet passed.
fn sweep_pairs(
    edges: &[Edge],
    visit: &mut impl FnMut(&Edge, &Edge, &mut Pacer) -> Result<(), GeomError>,
    pace: &mut Pacer,
) -> Result<(), GeomError> {
    let mut order: Vec<(f64, u32)> = edges
        .iter()
        .enumerate()
        .map(|(i, e)| (e.lon_lo, i as u32))
        .collect();
    order.sort_unstable_by(|x, y| x.0.total_cmp(&y.0));
    let mut active: Vec<&Edge> = Vec::new();
    for e in order.iter().map(|&(_, i)| &edges[i as usize]) {
        pace.spend((active.len() as u32).saturating_add(1))?;
        active.retain(|x| x.lon_hi >= e.lon_lo);
        for x in &active {
            visit(x, e, pace)?;
        }
        active.push(e);
    }
    Ok(())
}

/// Calls `visit` on every pair of edges whose boxes share a cell of a
/// uniform grid over the edges' boxes (about one cell per edge), each pair
/// once (in the first cell they share); edges whose boxes cover many cells
/// (the whole band near a pole, long edges) are paired with every edge.
/// Linear in the number of edges for boundaries of short edges, where the
/// sweep of [`sweep_pairs`] can keep thousands of edges active.
fn grid_pairs(
    edges: &[Edge],
    visit: &mut impl FnMut(&Edge, &Edge, &mut Pacer) -> Result<(), GeomError>,
    pace: &mut Pacer,
) -> Result<(), GeomError> {
    let finite = |e: &Edge| e.lon_lo > -540.0;
    let (mut x0, mut x1, mut y0, mut y1) = (
        f64::INFINITY,
        f64::NEG_INFINITY,
        f64::INFINITY,
        f64::NEG_INFINITY,
    );
    for e in edges.iter().filter(|e| finite(e)) {
        pace.step()?;
        x0 = x0.min(e.lon_lo);
        x1 = x1.max(e.lon_hi);
        y0 = y0.min(e.lat_lo);
        y1 = y1.max(e.lat_hi);
    }
    let side = ((edges.len() as f64).sqrt().ceil() as usize).clamp(1, 4096);
    let (cw, ch) = (
        ((x1 - x0) / side as f64).max(1e-12),
        ((y1 - y0) / side as f64).max(1e-12),
    );
    let cell = |x: f64, lo: f64, w: f64| (((x - lo) / w) as usize).min(side - 1);
    let range = |e: &Edge| {
        (
            cell(e.lon_lo, x0, cw),
            cell(e.lon_hi, x0, cw),
            cell(e.lat_lo, y0, ch),
            cell(e.lat_hi, y0, ch),
        )
    };
    let mut wide: Vec<usize> = Vec::new();
    let big = edges.len() >= FREE_LATER_MIN;
    let mut count = FreeLater::new(vec![0u32; side * side + 1], big);
    let mut ranges = FreeLater::new(Vec::with_capacity(edges.len()), big);
    for (i, e) in edges.iter().enumerate() {
        pace.step()?;
        let r = range(e);
        if !finite(e) || (r.1 - r.0 + 1) * (r.3 - r.2 + 1) > 64 {
            wide.push(i);
            ranges.push(None);
            continue;
        }
        for cx in r.0..=r.1 {
            for cy in r.2..=r.3 {
                count[cx * side + cy + 1] += 1;
            }
        }
        ranges.push(Some(r));
    }
    for c in 1..count.len() {
        if c % RUN == 0 {
            pace.spend(cost::FLAT)?;
        }
        count[c] += count[c - 1];
    }
    let mut slots = FreeLater::new(vec![0u32; count[side * side] as usize], big);
    let mut fill = FreeLater::new(count.clone(), big);
    for (i, r) in ranges.iter().enumerate() {
        pace.step()?;
        if let Some(r) = r {
            for cx in r.0..=r.1 {
                for cy in r.2..=r.3 {
                    let c = cx * side + cy;
                    slots[fill[c] as usize] = i as u32;
                    fill[c] += 1;
                }
            }
        }
    }
    for cx in 0..side {
        for cy in 0..side {
            let c = cx * side + cy;
            let here = &slots[count[c] as usize..count[c + 1] as usize];
            pace.step()?;
            for (a, &i) in here.iter().enumerate() {
                let ei = &edges[i as usize];
                pace.spend((here.len() - a) as u32)?;
                for &j in &here[a + 1..] {
                    let ej = &edges[j as usize];
                    if ei.lat_hi < ej.lat_lo
                        || ej.lat_hi < ei.lat_lo
                        || ei.lon_hi < ej.lon_lo
                        || ej.lon_hi < ei.lon_lo
                    {
                        continue;
                    }
                    let (ri, rj) = (ranges[i as usize].unwrap(), ranges[j as usize].unwrap());
                    // Only in the first cell the two boxes share.
                    if ri.0.max(rj.0) == cx && ri.2.max(rj.2) == cy {
                        visit(ei, ej, pace)?;
                    }
                }
            }
        }
    }
    for (a, &i) in wide.iter().enumerate() {
        for (j, e) in edges.iter().enumerate() {
            pace.spend((a as u32).saturating_add(1))?;
            if j != i && !wide[..a].contains(&j) {
                visit(&edges[i], e, pace)?;
            }
        }
    }
    Ok(())
}

fn adjacent(r: &Ring, i: usize, j: usize) -> bool {
    let last = r.v.len() - 2;
    i.abs_diff(j) == 1 || (i.min(j) == 0 && i.max(j) == last)
}

/// Touching points, and for each edge interior that a touching point lies
/// on: (ring, edge, point).
#[derive(Default)]
struct Touches {
    points: Vec<LonLat>,
    on_edges: Vec<(usize, usize, LonLat)>,
}

fn crossing_error(rings: &[Ring], a: (usize, usize), b: (usize, usize), at: LonLat) -> GeomError {
    let (ra, rb) = (&rings[a.0], &rings[b.0]);
    GeomError::InvalidPolygon {
        polygon: ra.polygon,
        ring: ra.ring,
        vertex: ra.v[a.1].number,
        problem: PolygonProblem::Crossing {
            other_polygon: rb.polygon,
            other_ring: rb.ring,
            other_vertex: rb.v[b.1].number,
            lon: at.0,
            lat: at.1,
        },
    }
}

fn meet(
    rings: &[Ring],
    frame: Option<&Frame>,
    x: &Edge,
    y: &Edge,
    touches: &mut Touches,
    pace: &mut Pacer,
) -> Result<(), GeomError> {
    pace.spend(cost::FLAT)?;
    let (rx, ry) = (&rings[x.ring], &rings[y.ring]);
    let (a1, a2) = (rx.v[x.k].p, rx.v[x.k + 1].p);
    let (b1, b2) = (ry.v[y.k].p, ry.v[y.k + 1].p);
    let decided = frame.and_then(|f| {
        let (fx, fy) = (&f.xy[x.ring], &f.xy[y.ring]);
        flat_decide([fx[x.k], fx[x.k + 1], fy[y.k], fy[y.k + 1]], f.factor)
    });
    let found = match decided {
        Some(c) => c,
        None => {
            pace.spend(cost::EXACT)?;
            contact(a1, a2, b1, b2)
        }
    };
    match found {
        Contact::None => Ok(()),
        Contact::Cross => Err(crossing_error(
            rings,
            (x.ring, x.k),
            (y.ring, y.k),
            near_crossing(a1, a2, b1, b2),
        )),
        Contact::Touch(points) => {
            for p in points {
                touches.points.push(p);
                if p != a1 && p != a2 {
                    touches.on_edges.push((x.ring, x.k, p));
                }
                if p != b1 && p != b2 {
                    touches.on_edges.push((y.ring, y.k, p));
                }
            }
            Ok(())
        }
    }
}

/// Where the chords a1-a2 and b1-b2 cross in longitude/latitude (for
/// messages: within the bow of the edges of the geodesics' crossing),
/// rounded to 1e-7 degrees; a1 when the chords are parallel.
fn near_crossing(a1: LonLat, a2: LonLat, b1: LonLat, b2: LonLat) -> LonLat {
    let xy = |p: LonLat| (wrap_delta(a1.0, p.0), p.1 - a1.1);
    let ((ax, ay), (bx, by), (cx, cy)) = (xy(a2), xy(b1), xy(b2));
    let den = ax * (cy - by) - ay * (cx - bx);
    let t = (bx * (cy - by) - by * (cx - bx)) / den;
    if !t.is_finite() || !(0.0..=1.0).contains(&t) {
        return a1;
    }
    let round = |v: f64| (v * 1e7).round() / 1e7;
    (round(a1.0 + t * ax), round(a1.1 + t * ay))
}

/// How the geodesic edges a1-a2 and b1-b2 meet: the flat frame when it is
/// decisive, else the exact geodesic test.
fn contact(a1: LonLat, a2: LonLat, b1: LonLat, b2: LonLat) -> Contact {
    if let Some(decided) = flat_contact(a1, a2, b1, b2) {
        return decided;
    }

    let (sa, sb) = (GeodesicSegment::new(a1, a2), GeodesicSegment::new(b1, b2));
    if !sa.intersects(&sb) {
        return Contact::None;
    }
    let mut on = Vec::new();
    for p in [a1, a2] {
        if p == b1 || p == b2 || sb.distance_to(p) <= TOUCH_TOLERANCE {
            on.push(p);
        }
    }
    for p in [b1, b2] {
        if !on.contains(&p) && (p == a1 || p == a2 || sa.distance_to(p) <= TOUCH_TOLERANCE) {
            on.push(p);
        }
    }
    if on.is_empty() {
        Contact::Cross
    } else {
        Contact::Touch(on)
    }
}

/// The flat frame's answer for two short edges away from the poles, when
/// every end is farther from the other edge's line than the margin: the
/// frame is equirectangular at the pair's mean latitude (degrees of
/// latitude, degrees of longitude times its cosine); a geodesic of length
/// L (degrees) departs from its chord there by well under
/// L^2 (1 + |tan lat|) pi/180 / 8; the margin is 8 times that plus 1e-12
/// degrees. tests/validity.rs compares this with the exact test.
fn flat_contact(a1: LonLat, a2: LonLat, b1: LonLat, b2: LonLat) -> Option<Contact> {
    let lat_max = a1.1.abs().max(a2.1.abs()).max(b1.1.abs()).max(b2.1.abs());
    if lat_max > POLAR_LAT {
        return None;
    }
    let c = ((a1.1 + a2.1 + b1.1 + b2.1) / 4.0).to_radians().cos();
    let xy = |p: LonLat| (wrap_delta(a1.0, p.0) * c, p.1 - a1.1);
    let tan = lat_max.to_radians().tan();
    flat_decide([xy(a1), xy(a2), xy(b1), xy(b2)], 1.0 + tan)
}

/// The flat frame's decision for two edges given by their ends in a frame
/// (degrees), `factor` = (1 + tan of the largest latitude) times the
/// square of the largest ratio of the frame's scale to the local one.
fn flat_decide(p: [(f64, f64); 4], factor: f64) -> Option<Contact> {
    let [pa1, pa2, pb1, pb2] = p;
    let len = |p: (f64, f64), q: (f64, f64)| ((q.0 - p.0).powi(2) + (q.1 - p.1).powi(2)).sqrt();
    let (la, lb) = (len(pa1, pa2), len(pb1, pb2));
    if la > FLAT_MAX_DEG || lb > FLAT_MAX_DEG || la == 0.0 || lb == 0.0 {
        return None;
    }
    let l = la.max(lb);
    let margin = l * l * factor * 1f64.to_radians() + 1e-12;
    // Signed distance of r from the line p-q, times |p-q|.
    let side = |p: (f64, f64), q: (f64, f64), r: (f64, f64)| {
        (q.0 - p.0) * (r.1 - p.1) - (q.1 - p.1) * (r.0 - p.0)
    };
    let (d1, d2) = (side(pa1, pa2, pb1), side(pa1, pa2, pb2));
    let (d3, d4) = (side(pb1, pb2, pa1), side(pb1, pb2, pa2));
    let (ma, mb) = (margin * la, margin * lb);
    let same = |u: f64, v: f64, m: f64| u.abs() > m && v.abs() > m && (u > 0.0) == (v > 0.0);
    if same(d1, d2, ma) || same(d3, d4, mb) {
        return Some(Contact::None);
    }
    // Ends of b beyond the same end of a along a's line (collinear edges of
    // a straight street): apart by more than twice the margin.
    let along =
        |r: (f64, f64)| ((pa2.0 - pa1.0) * (r.0 - pa1.0) + (pa2.1 - pa1.1) * (r.1 - pa1.1)) / la;
    let (t1, t2) = (along(pb1), along(pb2));
    if t1.max(t2) < -2.0 * margin || t1.min(t2) > la + 2.0 * margin {
        return Some(Contact::None);
    }
    if d1.abs() > ma && d2.abs() > ma && d3.abs() > mb && d4.abs() > mb {
        // Both pairs of ends on opposite sides: the edges cross.
        return Some(Contact::Cross);
    }
    None
}

/// One flat frame for all rings, when they lie within 10 degrees of
/// latitude and of longitude and away from the poles: each vertex's
/// (longitude east of the first vertex times cos of the middle latitude,
/// latitude), computed once, so that pairs of edges are judged without
/// trigonometry. `factor` is as in [`flat_decide`].
struct Frame {
    xy: Vec<Vec<(f64, f64)>>,
    factor: f64,
}

fn frame(rings: &[Ring], pace: &mut Pacer) -> Result<Option<Frame>, GeomError> {
    let Some(first) = rings.first().and_then(|r| r.v.first()).map(|v| v.p) else {
        return Ok(None);
    };
    let (mut x0, mut x1, mut y0, mut y1) = (0.0f64, 0.0f64, first.1, first.1);
    for v in rings.iter().flat_map(|r| &r.v) {
        pace.step()?;
        let x = wrap_delta(first.0, v.p.0);
        x0 = x0.min(x);
        x1 = x1.max(x);
        y0 = y0.min(v.p.1);
        y1 = y1.max(v.p.1);
    }
    if x1 - x0 > 10.0 || y1 - y0 > 10.0 || y0 < -POLAR_LAT || y1 > POLAR_LAT {
        return Ok(None);
    }
    let c = (0.5 * (y0 + y1)).to_radians().cos();
    let lat_max = y0.abs().max(y1.abs());
    let lat_min = if y0 <= 0.0 && y1 >= 0.0 {
        0.0
    } else {
        y0.abs().min(y1.abs())
    };
    let (c_lo, c_hi) = (lat_max.to_radians().cos(), lat_min.to_radians().cos());
    let stretch = (c / c_lo).max(c_hi / c);
    let factor = (1.0 + lat_max.to_radians().tan()) * stretch * stretch;
    let mut xy = Vec::with_capacity(rings.len());
    for r in rings {
        let mut ring = Vec::with_capacity(r.v.len());
        for run in r.v.chunks(RUN) {
            pace.spend(cost::FLAT)?;
            ring.extend(run.iter().map(|v| (wrap_delta(first.0, v.p.0) * c, v.p.1)));
        }
        xy.push(ring);
    }
    Ok(Some(Frame { xy, factor }))
}

/// At every touching point, the passages of the boundary through it (a
/// vertex with its previous and next vertices, or an edge with its ends)
/// must not interleave: two passages whose directions alternate around the
/// point cross there.
fn passages_cross(rings: &[Ring], touches: &Touches, pace: &mut Pacer) -> Result<(), GeomError> {
    for &p in &touches.points {
        if at_pole(p) {
            continue; // directions at a pole are meridians; edges meet only there
        }
        // (ring, vertex index for the message, direction 1, direction 2)
        let mut passages: Vec<(usize, usize, f64, f64)> = Vec::new();
        for (ri, r) in rings.iter().enumerate() {
            let n = r.v.len() - 1;
            for i in 0..n {
                pace.step()?;
                if r.v[i].p == p {
                    pace.spend(2 * cost::INVERSE)?;
                    let prev = if i == 0 { r.v[n - 1].p } else { r.v[i - 1].p };
                    let next = r.v[i + 1].p;
                    passages.push((ri, i, azimuth(p, prev), azimuth(p, next)));
                }
            }
        }
        for &(ri, k, q) in &touches.on_edges {
            pace.step()?;
            if q == p {
                pace.spend(2 * cost::INVERSE)?;
                let r = &rings[ri];
                passages.push((ri, k, azimuth(p, r.v[k].p), azimuth(p, r.v[k + 1].p)));
            }
        }
        for i in 0..passages.len() {
            for j in i + 1..passages.len() {
                pace.step()?;
                let (x, y) = (passages[i], passages[j]);
                if interleave((x.2, x.3), (y.2, y.3)) {
                    return Err(crossing_error(rings, (x.0, x.1), (y.0, y.1), p));
                }
            }
        }
    }
    Ok(())
}

/// Azimuth (degrees) at `p` of the geodesic towards `q`.
fn azimuth(p: LonLat, q: LonLat) -> f64 {
    let (_s12, azi1, _azi2, _a12): (f64, f64, f64, f64) =
        inverse::wgs84().inverse(p.1, p.0, q.1, q.0);
    azi1
}

/// True when directions `y` separate the two directions of `x` (one on
/// each side); directions equal to one of `x` separate nothing.
fn interleave(x: (f64, f64), y: (f64, f64)) -> bool {
    let turn = |from: f64, to: f64| (to - from).rem_euclid(360.0);
    let span = turn(x.0, x.1);
    let mut sides = [0, 0];
    for d in [y.0, y.1] {
        let t = turn(x.0, d);
        let near = |u: f64| u < SAME_DIRECTION_DEG || 360.0 - u < SAME_DIRECTION_DEG;
        if near(t) || near((t - span).abs()) {
            return false;
        }
        sides[usize::from(t < span)] += 1;
    }
    sides == [1, 1]
}

/// A closed curve of one ring with no point visited twice, and where it
/// came from.
struct Loop {
    polygon: usize,
    ring: usize,
    /// Closed (last point equal to the first).
    points: Vec<LonLat>,
}

/// The rings cut into loops at the points where they touch themselves
/// (with touching points on edges made vertices first). Rings without
/// touching points are one loop each.
fn loops_of(rings: &[Ring], touches: &Touches, pace: &mut Pacer) -> Result<Vec<Loop>, GeomError> {
    let mut out = Vec::new();
    for (ri, r) in rings.iter().enumerate() {
        let mut chain: Vec<LonLat> = Vec::with_capacity(r.v.len());
        let touched = !touches.points.is_empty();
        for k in 0..r.v.len() - 1 {
            pace.step()?;
            chain.push(r.v[k].p);
            if touched {
                pace.spend(touches.on_edges.len().try_into().unwrap_or(u32::MAX))?;
                let a = r.v[k].p;
                let mut extra: Vec<LonLat> = touches
                    .on_edges
                    .iter()
                    .filter(|e| e.0 == ri && e.1 == k)
                    .map(|e| e.2)
                    .collect();
                extra.sort_by(|p, q| {
                    let d = |x: &LonLat| (wrap_delta(a.0, x.0)).hypot(x.1 - a.1);
                    d(p).total_cmp(&d(q))
                });
                extra.dedup();
                chain.extend(extra);
            }
        }
        let is_touch = |p: &LonLat| {
            touches
                .points
                .binary_search_by(|q| q.0.total_cmp(&p.0).then(q.1.total_cmp(&p.1)))
                .is_ok()
        };
        if !touched || !chain.iter().any(is_touch) {
            chain.push(chain[0]);
            out.push(Loop {
                polygon: r.polygon,
                ring: r.ring,
                points: chain,
            });
            continue;
        }
        // Cut at repeated touching points: a stack of the current path;
        // what is left at the end closes on the first point.
        let mut path: Vec<LonLat> = Vec::new();
        let mut emit = |mut points: Vec<LonLat>, close: LonLat| {
            points.push(close);
            if points.len() >= 4 {
                out.push(Loop {
                    polygon: r.polygon,
                    ring: r.ring,
                    points,
                });
            }
        };
        for &p in &chain {
            pace.step()?;
            if is_touch(&p) {
                if let Some(at) = path.iter().rposition(|q| *q == p) {
                    emit(path.split_off(at), p);
                }
            }
            path.push(p);
        }
        let first = chain[0];
        emit(path, first);
    }
    Ok(out)
}

/// A point of the loop's boundary that is on no other loop: a vertex that
/// is not a touching point; when every vertex touches another loop (a ring
/// given twice, say), a point just inside the loop beside the middle of its
/// longest edge, so that a loop lying on another's boundary is still seen
/// inside or outside it.
fn probe(l: &Loop, touches: &Touches) -> LonLat {
    let is_touch = |p: &LonLat| {
        touches
            .points
            .binary_search_by(|q| q.0.total_cmp(&p.0).then(q.1.total_cmp(&p.1)))
            .is_ok()
    };
    l.points
        .iter()
        .copied()
        .find(|p| !is_touch(p))
        .unwrap_or_else(|| inside_beside_an_edge(l))
}

/// A point a ten-thousandth of an edge's length inside the loop from the
/// middle of its longest edge, in a local equirectangular picture (the
/// side from the loop's orientation there; the midpoint itself for a loop
/// of no area); for a loop around a pole, a point between it and the pole.
fn inside_beside_an_edge(l: &Loop) -> LonLat {
    // Unwrapped longitudes, scaled by the cosine of the mean latitude.
    let mean_lat = l.points.iter().map(|p| p.1).sum::<f64>() / l.points.len() as f64;
    let c = mean_lat.to_radians().cos().max(1e-6);
    let mut x = l.points[0].0;
    let mut xs = Vec::with_capacity(l.points.len());
    xs.push(x);
    for w in l.points.windows(2) {
        x += wrap_delta(w[0].0, w[1].0);
        xs.push(x);
    }
    if (x - l.points[0].0).abs() > 180.0 {
        // The loop goes around a pole, which its area holds (the pole on
        // the side of its mean latitude, as the containment test reads
        // it): a point between the loop and that pole.
        let sign = if mean_lat >= 0.0 { 1.0 } else { -1.0 };
        let nearest = l.points.iter().map(|p| p.1 * sign).fold(f64::MIN, f64::max);
        return (l.points[0].0, sign * (nearest + 90.0) / 2.0);
    }
    let signed_area: f64 = (0..l.points.len() - 1)
        .map(|i| (xs[i] * l.points[i + 1].1 - xs[i + 1] * l.points[i].1) * c)
        .sum();
    let longest = (0..l.points.len() - 1)
        .max_by(|&i, &j| {
            let len = |k: usize| ((xs[k + 1] - xs[k]) * c).hypot(l.points[k + 1].1 - l.points[k].1);
            len(i).total_cmp(&len(j))
        })
        .unwrap_or(0);
    let (x0, y0) = (xs[longest], l.points[longest].1);
    let (x1, y1) = (xs[longest + 1], l.points[longest + 1].1);
    let (dx, dy) = ((x1 - x0) * c, y1 - y0);
    let mid = ((x0 + x1) / 2.0, (y0 + y1) / 2.0);
    if signed_area == 0.0 || dx.hypot(dy) == 0.0 {
        return mid;
    }
    // The interior is on the left of a counter-clockwise loop.
    let side = signed_area.signum() * 1e-4;
    (mid.0 - dy * side / c, mid.1 + dx * side)
}

/// A lon/lat box of a loop's vertices (longitudes unwrapped along it),
/// grown by one degree for the bow of its edges; `None` when the loop
/// winds around a pole or comes near one (no box then).
fn loop_box(l: &Loop) -> Option<(f64, f64, f64, f64)> {
    let mut x = l.points[0].0;
    let (mut b0, mut b1, mut b2, mut b3) = (x, x, l.points[0].1, l.points[0].1);
    for w in l.points.windows(2) {
        x += wrap_delta(w[0].0, w[1].0);
        b0 = b0.min(x);
        b1 = b1.max(x);
        b2 = b2.min(w[1].1);
        b3 = b3.max(w[1].1);
    }
    if (x - l.points[0].0).abs() > 1.0 || b2 < -POLAR_LAT || b3 > POLAR_LAT || b1 - b0 > 180.0 {
        return None;
    }
    Some((b0 - 1.0, b1 + 1.0, b2 - 1.0, b3 + 1.0))
}

fn box_holds(outer: Option<(f64, f64, f64, f64)>, p: LonLat) -> bool {
    match outer {
        None => true,
        Some((x0, x1, y0, y1)) => {
            let x = x0 + (p.0 - x0).rem_euclid(360.0);
            x <= x1 && p.1 >= y0 && p.1 <= y1
        }
    }
}

/// For each loop, which other loops of its polygon hold it.
fn holders(
    loops: &[Loop],
    touches: &Touches,
    pace: &mut Pacer,
) -> Result<Vec<Vec<usize>>, GeomError> {
    let mut boxes = Vec::with_capacity(loops.len());
    let mut probes: Vec<LonLat> = Vec::with_capacity(loops.len());
    for l in loops {
        pace.spend(ring_test_cost(l.points.len()))?;
        boxes.push(loop_box(l));
        probes.push(probe(l, touches));
    }
    let mut out = vec![Vec::new(); loops.len()];
    for i in 0..loops.len() {
        for j in 0..loops.len() {
            pace.step()?;
            if i == j || loops[i].polygon != loops[j].polygon {
                continue;
            }
            if box_holds(boxes[j], probes[i]) {
                pace.spend(ring_test_cost(loops[j].points.len()))?;
                if point_in_ring(probes[i], &loops[j].points) {
                    out[i].push(j);
                }
            }
        }
    }
    Ok(out)
}

/// The cost, in [`Pacer`] units, of a point-in-ring test or a pass over a
/// ring of `n` points: a flat step per edge.
fn ring_test_cost(n: usize) -> u32 {
    cost::FLAT.saturating_mul(n.try_into().unwrap_or(u32::MAX))
}

fn depths(loops: &[Loop], touches: &Touches, pace: &mut Pacer) -> Result<Vec<usize>, GeomError> {
    if loops.len() == 1 {
        return Ok(vec![0]);
    }
    Ok(holders(loops, touches, pace)?
        .iter()
        .map(Vec::len)
        .collect())
}

/// Holes inside their exterior and outside each other; polygons outside
/// each other.
fn nesting(
    rings: &[Ring],
    loops: &[Loop],
    touches: &Touches,
    pace: &mut Pacer,
) -> Result<(), GeomError> {
    if loops.len() < 2 {
        return Ok(());
    }
    let held = holders(loops, touches, pace)?;
    for (i, l) in loops.iter().enumerate() {
        let exterior = held[i].iter().filter(|&&j| loops[j].ring == 1).count();
        let hole = held[i].iter().find(|&&j| loops[j].ring > 1);
        let error = |problem| GeomError::InvalidPolygon {
            polygon: l.polygon,
            ring: l.ring,
            vertex: 1,
            problem,
        };
        if let Some(&j) = hole {
            return Err(error(PolygonProblem::HoleInHole {
                other_ring: loops[j].ring,
            }));
        }
        if l.ring > 1 && exterior % 2 == 0 {
            return Err(error(PolygonProblem::HoleOutside));
        }
    }
    // Polygons of a multipolygon: an exterior loop of one inside another
    // (odd parity over the other's loops).
    let polygons = rings.last().map_or(0, |r| r.polygon);
    if polygons > 1 {
        let boxes: Vec<_> = loops.iter().map(loop_box).collect();
        let mut parity = vec![false; polygons + 1];
        for l in loops.iter().filter(|l| l.ring == 1) {
            pace.spend(ring_test_cost(l.points.len()))?;
            let p = probe(l, touches);
            parity.iter_mut().for_each(|x| *x = false);
            for (j, m) in loops.iter().enumerate() {
                pace.step()?;
                if m.polygon != l.polygon && box_holds(boxes[j], p) {
                    pace.spend(ring_test_cost(m.points.len()))?;
                    if point_in_ring(p, &m.points) {
                        parity[m.polygon] = !parity[m.polygon];
                    }
                }
            }
            if let Some(other) = parity.iter().position(|&x| x) {
                return Err(GeomError::InvalidPolygon {
                    polygon: l.polygon,
                    ring: 1,
                    vertex: 1,
                    problem: PolygonProblem::PartInside {
                        other_polygon: other,
                    },
                });
            }
        }
    }
    Ok(())
}
