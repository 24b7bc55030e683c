//! Geodesic minimum distance between two prepared geometries, and the
//! within-distance test with early exit.
//!
//! Semantics (design.md): edges are geodesics; polygons are areas, so a
//! geometry touching or inside a polygon is at distance 0, and one inside a
//! hole is at its distance to the hole's ring. The distance between two
//! geometries is the least distance between their elements (points and
//! edges) unless they overlap.
//!
//! Method: (1) if the two whole-geometry balls overlap, probe containment
//! (each isolated point and the first vertex of every line and ring of one
//! geometry, in the polygons of the other); (2) list element pairs whose
//! ball gap (a lower bound) is not above the best distance known or the
//! threshold asked about, sorted by that bound; (3) compute exact distances
//! in that order (Karney's inverse, the gnomonic point-to-segment method,
//! and for two edges 0 if they cross else the least of the four
//! end-to-edge distances; see [`crate::geodesy::segment`]) until the next
//! bound exceeds the best. For the within test, pairs of points are first
//! settled by the local metric and its error bound
//! ([`crate::geodesy::local`]) and an upper bound from vertex pairs settles
//! overlapping pairs; the answer is always the exact answer.
//!
//! Accuracy: that of the exact primitives, a few nanometres (see
//! tests/geodesy_bruteforce.rs), within the range where they are validated
//! (elements up to 1000 km apart).

use std::ops::ControlFlow;

use crate::error::GeomError;
use crate::geodesy::{inverse, local, segment};
use crate::interrupt::{cost, Interrupt, Never, Pacer};
use crate::proximity::balltree::{tight_gap, BallTree, Node, TIGHT_FROM};
use crate::proximity::boxes::LonLatBox;
use crate::proximity::contain::point_in_prepared;
use crate::proximity::prepared::{
    arc_upper_within, chord_lower, distance_upper, Ball, Element, LonLat, Prepared, CENTRE_SHIFT,
};

/// How a within test was decided, for measuring the fast path.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Work {
    /// Exact element distances computed.
    pub exact: u64,
    /// Containment probes run.
    pub probes: u64,
}

/// Point-to-edge distances already computed in one search. Neighbouring
/// element pairs share an end and an edge (near a vertex, the pairs of the
/// edges on either side of it each ask that vertex's distance to the same
/// edge), so without this about two in five point-to-edge distances of a
/// nearest search would be computed twice (counted on the 400,000-block
/// bench region). The same arguments give the same value, so the answer
/// does not change. Holds the first [`Memo::SIZE`] results, looked up
/// linearly (searches that compute more are rare: far from a large
/// feature, where each pair is new anyway).
struct Memo {
    len: usize,
    keys: [[u64; 6]; Memo::SIZE],
    values: [f64; Memo::SIZE],
}

impl Memo {
    const SIZE: usize = 24;

    fn new() -> Memo {
        Memo {
            len: 0,
            keys: [[0; 6]; Memo::SIZE],
            values: [0.0; Memo::SIZE],
        }
    }

    /// [`segment::point_segment_distance`], remembered.
    fn point_segment(&mut self, p: LonLat, s: LonLat, e: LonLat) -> f64 {
        let key = [p.0, p.1, s.0, s.1, e.0, e.1].map(f64::to_bits);
        if let Some(k) = self.keys[..self.len].iter().position(|k| *k == key) {
            return self.values[k];
        }
        let d = segment::point_segment_distance(p, s, e);
        if self.len < Memo::SIZE {
            self.keys[self.len] = key;
            self.values[self.len] = d;
            self.len += 1;
        }
        d
    }
}

/// The exact distance between two elements; `flat` as [`flat_bounds`]
/// gave it for them (the frame and its lower bound), which settles which
/// of the end-to-edge distances an edge pair needs.
fn exact(a: &Element, b: &Element, flat: &Flat, memo: &mut Memo) -> f64 {
    match (a, b) {
        (Element::Point(p), Element::Point(q)) => inverse::distance(p.0, p.1, q.0, q.1),
        (Element::Point(p), Element::Edge(s, e)) | (Element::Edge(s, e), Element::Point(p)) => {
            memo.point_segment(*p, *s, *e)
        }
        (Element::Edge(a1, a2), Element::Edge(b1, b2)) => edge_edge(*a1, *a2, *b1, *b2, flat, memo),
    }
}

/// Edge to edge: 0 if they cross, else the least of the four
/// end-to-edge distances (see [`segment::segment_segment_distance`]). When
/// the flat frame proves the edges apart (`flat.lower` > 0), the crossing
/// test is skipped, and only the end-to-edge distances whose flat lower
/// bound (from the same frame, see [`local::FlatFrame`]) can beat the
/// others' upper bounds are computed exactly; the result is the same.
fn edge_edge(a1: LonLat, a2: LonLat, b1: LonLat, b2: LonLat, flat: &Flat, memo: &mut Memo) -> f64 {
    let Some(frame) = flat.frame.filter(|_| flat.lower > 0.0) else {
        return segment::segment_segment_distance(a1, a2, b1, b2);
    };
    let ends = [(a1, b1, b2), (a2, b1, b2), (b1, a1, a2), (b2, a1, a2)];
    let mut bounds = ends.map(|(p, s, e)| {
        let (lo, up) = frame.bounds(p, p, s, e);
        (lo, up, p, s, e)
    });
    bounds.sort_unstable_by(|x, y| x.0.total_cmp(&y.0));
    let ceiling = bounds.iter().map(|b| b.1).fold(f64::INFINITY, f64::min);
    let mut best = f64::INFINITY;
    for (lo, _, p, s, e) in bounds {
        if lo > best.min(ceiling) {
            break;
        }
        best = best.min(memo.point_segment(p, s, e));
    }
    best
}

/// The flat frame of two elements' ends (`None` where it is not valid)
/// and the bounds it gives on their distance.
struct Flat {
    frame: Option<local::FlatFrame>,
    lower: f64,
    upper: f64,
}

/// The flat-frame bounds of [`local::edge_distance_bounds`] for two
/// elements (a point is an edge of length 0), with the frame.
fn flat_bounds(a: &Element, b: &Element) -> Flat {
    let ends = |e: &Element| match *e {
        Element::Point(p) => (p, p),
        Element::Edge(s, t) => (s, t),
    };
    let ((a1, a2), (b1, b2)) = (ends(a), ends(b));
    let frame = local::FlatFrame::around(a1, a2, b1, b2);
    let (lower, upper) = frame.map_or((0.0, f64::INFINITY), |f| f.bounds(a1, a2, b1, b2));
    Flat {
        frame,
        lower,
        upper,
    }
}

fn vertices(e: &Element) -> &[LonLat] {
    match e {
        Element::Point(p) => std::slice::from_ref(p),
        Element::Edge(a, _) => std::slice::from_ref(a),
    }
}

/// True when some part of `a` lies inside a polygon of `b`, judged from the
/// probes of `a`.
fn probes_inside(a: &Prepared, b: &Prepared, work: &mut Work) -> bool {
    if b.polygons().is_empty() {
        return false;
    }
    a.probes().any(|p| {
        work.probes += 1;
        point_in_prepared(p, b)
    })
}

/// The elements of `x` that may lie within `cap` of the geometry whose
/// ball is `other`: through `x`'s element index when it has one, then by
/// each element's ball.
fn elements_near(x: &Prepared, other: &Ball, cap: f64) -> Vec<usize> {
    let near = if x.indexed() && cap.is_finite() {
        x.elements_near(&LonLatBox::around(other, cap))
    } else {
        (0..x.element_count()).collect()
    };
    near.into_iter()
        .filter(|&i| x.balls[i].gap_to(other) <= cap)
        .collect()
}

/// Calls `visit` on the element pairs of `a` and `b` that may lie within
/// `cap` of each other (each element must be near the other geometry's
/// ball; a large geometry's index is asked per element of the other),
/// until `visit` breaks with a value, which is returned.
fn for_each_candidate(
    a: &Prepared,
    b: &Prepared,
    cap: f64,
    mut visit: impl FnMut(usize, usize) -> ControlFlow<f64>,
) -> Option<f64> {
    let (Some(ball_a), Some(ball_b)) = (a.ball, b.ball) else {
        return None;
    };
    let near_a = elements_near(a, &ball_b, cap);
    let near_b = elements_near(b, &ball_a, cap);
    let swapped = near_a.len() > near_b.len();
    let (small, small_geometry, large_near, large_geometry) = if swapped {
        (&near_b, b, &near_a, a)
    } else {
        (&near_a, a, &near_b, b)
    };
    let indexed = large_geometry.indexed() && cap.is_finite() && large_near.len() > 256;
    for &i in small {
        let found;
        let js: &[usize] = if indexed {
            let ball = small_geometry.ball(i);
            found = large_geometry.elements_near(&LonLatBox::around(&ball, cap));
            &found
        } else {
            large_near
        };
        for &j in js {
            let (x, y) = if swapped { (j, i) } else { (i, j) };
            if let ControlFlow::Break(v) = visit(x, y) {
                return Some(v);
            }
        }
    }
    None
}

/// A rigorous upper bound on the distance between `a` and `b`, close to it:
/// the element of `a` whose ball centre is nearest `b`'s centre, the
/// element of `b` nearest that one, and the distance between their balls'
/// far sides (any point of one ball is within d(c1, c2) + r1 + r2 of any
/// point of the other). Small geometries scan all elements; large ones
/// their first and every 16th.
fn quick_upper(a: &Prepared, b: &Prepared) -> f64 {
    let Some(ball_b) = b.ball else {
        return f64::INFINITY;
    };
    let nearest_to = |x: &Prepared, target: &[f64; 3]| -> Option<usize> {
        let step = if x.element_count() > 512 { 16 } else { 1 };
        (0..x.element_count()).step_by(step).min_by(|&i, &j| {
            let d = |k: usize| {
                let c = x.balls[k].centre();
                (c[0] - target[0]).powi(2) + (c[1] - target[1]).powi(2) + (c[2] - target[2]).powi(2)
            };
            d(i).total_cmp(&d(j))
        })
    };
    let Some(i) = nearest_to(a, &ball_b.xyz) else {
        return f64::INFINITY;
    };
    let ea = &a.balls[i];
    let Some(j) = nearest_to(b, &ea.centre()) else {
        return f64::INFINITY;
    };
    let eb = &b.balls[j];
    // Both stored centres are within CENTRE_SHIFT of the true ones.
    arc_upper_within(&ea.centre(), &eb.centre(), 2.0 * CENTRE_SHIFT)
        + f64::from(ea.radius)
        + f64::from(eb.radius)
}

/// The answers the two geometries' bounding balls give before any
/// element is looked at: infinity when either is empty, the gap between
/// the balls when it exceeds `cap` (a lower bound, as [`search`] allows),
/// and 0 when the balls meet and a probe point of one lies inside the other.
fn settled_by_balls(a: &Prepared, b: &Prepared, cap: f64, work: &mut Work) -> Option<f64> {
    let (Some(ball_a), Some(ball_b)) = (a.ball, b.ball) else {
        return Some(f64::INFINITY);
    };
    let gap = ball_a.gap(&ball_b);
    if gap > cap {
        return Some(gap);
    }
    if gap <= 0.0 && (probes_inside(a, b, work) || probes_inside(b, a, work)) {
        return Some(0.0);
    }
    None
}

/// The search behind [`distance`] and [`within`]. Returns the exact minimum
/// distance when it is at most `cap`; with `first_hit`, may instead return
/// any distance found that is at most `cap`. A result above `cap` means
/// the minimum is above `cap` (the value itself is then only a bound).
///
/// `stop` is asked after every millisecond or so of work ([`Pacer`]: the
/// candidate pairs, their flat bounds, and the exact element distances,
/// the costly part: near the antipode of a large geometry the bounds prune
/// little and every edge may need Karney's inverse).
fn search(
    a: &Prepared,
    b: &Prepared,
    cap: f64,
    first_hit: bool,
    work: &mut Work,
    stop: &dyn Interrupt,
) -> Result<f64, GeomError> {
    if let Some(settled) = settled_by_balls(a, b, cap, work) {
        return Ok(settled);
    }
    // Any pair of vertices bounds the minimum from above, which bounds the
    // pairs worth looking at.
    let mut best = quick_upper(a, b);
    if first_hit && best <= cap {
        return Ok(best);
    }
    let reach = cap.min(best);
    let mut pace = Pacer::new(stop);
    let mut stopped = Ok(());
    let mut pairs: Vec<(f64, usize, usize)> = Vec::new();
    let early = for_each_candidate(a, b, reach, |i, j| {
        if let Err(e) = pace.spend(cost::FLAT) {
            stopped = Err(e);
            return ControlFlow::Break(f64::NAN);
        }
        let (ba, bb) = (&a.balls[i], &b.balls[j]);
        let lower = ba.gap(bb).max(0.0);
        if lower > reach.min(best) {
            return ControlFlow::Continue(());
        }
        let (ea, eb) = (&a.element(i), &b.element(j));
        if let (Element::Point(p), Element::Point(q)) = (ea, eb) {
            if first_hit && local::within_fast(*p, *q, cap) == Some(true) {
                return ControlFlow::Break(distance_upper(*p, *q).min(cap));
            }
        }
        let upper = distance_upper(vertices(ea)[0], vertices(eb)[0]);
        if first_hit && upper <= cap {
            return ControlFlow::Break(upper);
        }
        best = best.min(upper);
        pairs.push((lower, i, j));
        ControlFlow::Continue(())
    });
    stopped?;
    if let Some(found) = early {
        return Ok(found);
    }
    pace.check()?;
    pairs.sort_unstable_by(|x, y| x.0.total_cmp(&y.0).then(x.1.cmp(&y.1)).then(x.2.cmp(&y.2)));
    pace.check()?;
    let mut best_exact = f64::INFINITY;
    let mut memo = Memo::new();
    for (lower, i, j) in pairs {
        // No later pair can beat the best exact distance found, nor the
        // vertex upper bound (the minimum's pair has a lower bound at most
        // the minimum, so it came before).
        if lower > best_exact.min(best) {
            break;
        }
        // The flat frame's bounds settle most pairs without the exact
        // computation: within reach for sure, or no better than known.
        pace.spend(cost::FLAT)?;
        let (ea, eb) = (&a.element(i), &b.element(j));
        let flat = flat_bounds(ea, eb);
        let (flat_lo, flat_up) = (flat.lower, flat.upper);
        if first_hit && flat_up <= cap {
            return Ok(flat_up);
        }
        best = best.min(flat_up);
        if flat_lo > best_exact.min(best).min(cap) {
            continue;
        }
        work.exact += 1;
        pace.spend(cost::EXACT)?;
        let d = exact(ea, eb, &flat, &mut memo);
        best_exact = best_exact.min(d);
        if first_hit && best_exact <= cap {
            return Ok(best_exact);
        }
        if best_exact == 0.0 {
            break;
        }
    }
    // No pair had a lower bound within `cap`: the minimum is above it.
    Ok(best_exact)
}

/// One pair of nodes waiting in [`nearest_between`]'s queue, keyed by a
/// lower bound on the distance between them (`tight` once
/// [`tight_gap`] has been asked).
#[derive(Clone, Copy, Debug)]
struct Pending {
    key: f64,
    tight: bool,
    a: Node,
    b: Node,
}

impl PartialEq for Pending {
    fn eq(&self, other: &Self) -> bool {
        self.key.total_cmp(&other.key).is_eq()
    }
}
impl Eq for Pending {}
impl PartialOrd for Pending {
    fn partial_cmp(&self, other: &Self) -> Option<std::cmp::Ordering> {
        Some(self.cmp(other))
    }
}
impl Ord for Pending {
    /// Reversed, so that `BinaryHeap` pops the least key first.
    fn cmp(&self, other: &Self) -> std::cmp::Ordering {
        other.key.total_cmp(&self.key)
    }
}

/// The minimum distance between `a` and `b` when it is at most `cap`, by a
/// best-first search over both geometries' ball trees
/// ([`crate::proximity::balltree`]; `ta` and `tb`, built over `a`'s and
/// `b`'s elements). A result above `cap` means the minimum is above `cap`
/// (the value itself is then only a bound). The same answer as
/// [`distance_within_interruptible`]: containment is probed the same way,
/// and the element pair that attains the minimum is always computed by the
/// same exact method, because a pair of nodes is dropped only when a
/// rigorous lower bound on its distance exceeds the best exact distance
/// found (or an upper bound on the minimum, or `cap`).
///
/// Cost: node pairs are taken in order of their lower bounds (Karney's
/// distance between ball centres more than 20 km apart, the chord closer),
/// so far from a large feature only the elements whose lower bound falls
/// within a few ball radii of the minimum are looked at: milliseconds for
/// a block 700 km from a polygon of 400,000 vertices. Near the antipode of
/// a feature every element is at nearly the same distance and most are
/// looked at, as in any search by distance bounds.
///
/// Asks `stop` after every millisecond or so of work ([`Pacer`]: a node
/// pair popped, a Karney inverse between centres, an exact element
/// distance, each charged its worst-case cost).
pub fn nearest_between(
    a: &Prepared,
    ta: &BallTree,
    b: &Prepared,
    tb: &BallTree,
    cap: f64,
    stop: &dyn Interrupt,
) -> Result<f64, GeomError> {
    let mut work = Work::default();
    if let Some(settled) = settled_by_balls(a, b, cap, &mut work) {
        return Ok(settled);
    }
    let (Some(root_a), Some(root_b)) = (ta.root(), tb.root()) else {
        return Ok(f64::INFINITY);
    };
    let mut queue = std::collections::BinaryHeap::new();
    let key = ta.core(root_a, a).gap(&tb.core(root_b, b));
    queue.push(Pending {
        key,
        tight: false,
        a: root_a,
        b: root_b,
    });
    let mut best_exact = f64::INFINITY;
    let mut upper = f64::INFINITY;
    let mut pace = Pacer::new(stop);
    let mut memo = Memo::new();
    while let Some(item) = queue.pop() {
        let bound = best_exact.min(upper).min(cap);
        if item.key > bound {
            break;
        }
        pace.spend(cost::FLAT)?;
        let (ba, bb) = (ta.core(item.a, a), tb.core(item.b, b));
        if !item.tight {
            // The (lon, lat) centres are derived only where tight_gap asks
            // Karney's inverse.
            let far = item.key.is_finite() && chord_lower(&ba.centre(), &bb.centre()) >= TIGHT_FROM;
            let key = if far {
                pace.spend(cost::INVERSE)?;
                tight_gap(&ta.ball(item.a, a), &tb.ball(item.b, b), item.key)
            } else {
                item.key
            };
            if key > bound {
                continue;
            }
            if queue.peek().is_some_and(|next| next.key < key) {
                queue.push(Pending {
                    key,
                    tight: true,
                    ..item
                });
                continue;
            }
        }
        if item.a.level == 0 && item.b.level == 0 {
            let (i, j) = (item.a.index as usize, item.b.index as usize);
            let (ea, eb) = (&a.element(i), &b.element(j));
            let flat = flat_bounds(ea, eb);
            let (flat_lo, flat_up) = (flat.lower, flat.upper);
            upper = upper.min(flat_up);
            if flat_lo > best_exact.min(upper).min(cap) {
                continue;
            }
            pace.spend(cost::EXACT)?;
            best_exact = best_exact.min(exact(ea, eb, &flat, &mut memo));
            if best_exact == 0.0 {
                break;
            }
            continue;
        }
        // Any point of one node is within these of any point of the other.
        // (Both centres may be stored ones, within CENTRE_SHIFT of the
        // true centres.)
        let centres = arc_upper_within(&ba.centre(), &bb.centre(), 2.0 * CENTRE_SHIFT);
        upper = upper.min(centres + f64::from(ba.radius) + f64::from(bb.radius));
        let split_b = item.a.level == 0 || (item.b.level != 0 && bb.radius >= ba.radius);
        let bound = best_exact.min(upper).min(cap);
        if split_b {
            for c in tb.children(item.b) {
                let key = ba.gap(&tb.core(c, b));
                if key <= bound {
                    queue.push(Pending {
                        key,
                        tight: false,
                        a: item.a,
                        b: c,
                    });
                }
            }
        } else {
            for c in ta.children(item.a) {
                let key = ta.core(c, a).gap(&bb);
                if key <= bound {
                    queue.push(Pending {
                        key,
                        tight: false,
                        a: c,
                        b: item.b,
                    });
                }
            }
        }
    }
    Ok(best_exact)
}

/// The geodesic minimum distance between two geometries in metres; `None`
/// when either is empty. 0 when they touch, cross or one contains the
/// other.
pub fn distance(a: &Prepared, b: &Prepared) -> Option<f64> {
    distance_interruptible(a, b, &Never).unwrap_or(None)
}

/// [`distance`], asking `stop` now and then whether to give up
/// (`Err(GeomError::Interrupted)`).
pub fn distance_interruptible(
    a: &Prepared,
    b: &Prepared,
    stop: &dyn Interrupt,
) -> Result<Option<f64>, GeomError> {
    if a.is_empty() || b.is_empty() {
        return Ok(None);
    }
    search(a, b, f64::INFINITY, false, &mut Work::default(), stop).map(Some)
}

/// The exact geodesic minimum distance between `a` and `b` when it is at
/// most `cap` metres, else `None` (also when either is empty). Cheaper
/// than [`distance`] for a small `cap`: elements farther apart are never
/// computed.
pub fn distance_within(a: &Prepared, b: &Prepared, cap: f64) -> Option<f64> {
    if a.is_empty() || b.is_empty() {
        return None;
    }
    let d = search(a, b, cap, false, &mut Work::default(), &Never).unwrap_or(f64::INFINITY);
    (d <= cap).then_some(d)
}

/// [`distance_within`], asking `stop` now and then whether to give up
/// (`Err(GeomError::Interrupted)`).
pub fn distance_within_interruptible(
    a: &Prepared,
    b: &Prepared,
    cap: f64,
    stop: &dyn Interrupt,
) -> Result<Option<f64>, GeomError> {
    if a.is_empty() || b.is_empty() {
        return Ok(None);
    }
    let d = search(a, b, cap, false, &mut Work::default(), stop)?;
    Ok((d <= cap).then_some(d))
}

/// True when the geodesic minimum distance between `a` and `b` is at most
/// `metres` (ties count as within); false when either is empty.
pub fn within(a: &Prepared, b: &Prepared, metres: f64) -> bool {
    within_counted(a, b, metres, &mut Work::default())
}

/// [`within`], asking `stop` now and then whether to give up
/// (`Err(GeomError::Interrupted)`).
pub fn within_interruptible(
    a: &Prepared,
    b: &Prepared,
    metres: f64,
    stop: &dyn Interrupt,
) -> Result<bool, GeomError> {
    if a.is_empty() || b.is_empty() {
        return Ok(false);
    }
    Ok(search(a, b, metres, true, &mut Work::default(), stop)? <= metres)
}

/// [`within`], adding the work it did to `work`.
pub fn within_counted(a: &Prepared, b: &Prepared, metres: f64, work: &mut Work) -> bool {
    if a.is_empty() || b.is_empty() {
        return false;
    }
    search(a, b, metres, true, work, &Never).is_ok_and(|d| d <= metres)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::blob::wkt;

    fn prep(text: &str) -> Prepared {
        Prepared::new(&wkt::parse(text).unwrap())
    }

    #[test]
    fn points_and_polygons_touching_inside_and_in_holes() {
        let park = prep(
            "POLYGON ((-131.6 38.3, -131.4 38.3, -131.4 38.5, -131.6 38.5, -131.6 38.3), \
             (-131.55 38.35, -131.5 38.35, -131.5 38.4, -131.55 38.4, -131.55 38.35))",
        );
        let inside = prep("POINT (-131.45 38.45)");
        assert_eq!(distance(&park, &inside), Some(0.0));
        let in_hole = prep("POINT (-131.525 38.375)");
        let d = distance(&park, &in_hole).unwrap();
        // Distance to the hole's nearest edge, about 0.025 degrees of
        // longitude at latitude 38.375 (~2180 m) or of latitude (~2776 m).
        let to_west_edge =
            segment::point_segment_distance((-131.525, 38.375), (-131.55, 38.4), (-131.55, 38.35));
        assert!((d - to_west_edge).abs() < 1e-6, "{d} vs {to_west_edge}");
        assert!(within(&park, &in_hole, d + 1e-3));
        assert!(!within(&park, &in_hole, d - 1e-3));
    }

    #[test]
    fn empty_geometries_have_no_distance() {
        let empty = prep("POLYGON EMPTY");
        let point = prep("POINT (1 2)");
        assert_eq!(distance(&empty, &point), None);
        assert!(!within(&empty, &point, 1e9));
    }

    #[test]
    fn crossing_lines_are_at_zero() {
        let a = prep("LINESTRING (-131.6 38.3, -131.4 38.5)");
        let b = prep("LINESTRING (-131.6 38.5, -131.4 38.3)");
        assert_eq!(distance(&a, &b), Some(0.0));
    }
}
