//! Coverage share: the part of a polygon's area that lies within reach of
//! a set of features (each with its own reach in metres).
//!
//! Method. The polygon `g` and every feature element that can matter are
//! carried into an azimuthal equidistant plane centred on `g`
//! ([`crate::geodesy::frame`]), where distances from the centre are exact
//! geodesic distances. In that plane the region within reach of a feature
//! is the union of a disc of radius `reach` around each of its isolated
//! points, a capsule (the set within `reach` of a segment) around each of
//! its edges, and its polygons' interiors. Each horizontal line y = c meets
//! `g` in intervals and each of those convex pieces in one interval, in
//! closed form (a disc's chord, a rectangle's and two discs' sections), and
//! a polygon interior in the intervals between its edge crossings; so the
//! covered length of `g` on the line is exact. The covered area is the
//! integral of that length over y, by adaptive Gauss–Kronrod quadrature
//! (the 7- and 15-point pair of Kronrod (1965) as tabulated in QUADPACK,
//! Piessens et al. 1983), with every vertex height of `g` and the top and
//! bottom of every disc that can bound the covered part as fixed break
//! points, and bisection of the pieces with the largest error
//! estimate until the estimates sum to at most 1e-8 of `g`'s area. No
//! buffer polygon is ever approximated by vertices.
//!
//! True areas. The plane's area element is not the surface's: in geodesic
//! polar coordinates around the centre the surface element is m12 ds dα
//! (m12 the reduced length, Karney 2013, eq. 3) and the plane's is s ds dα,
//! so lengths on each line are weighted by m12/s ≈ 1 − K(x² + y²)/6 (K the
//! Gaussian curvature at the centre), integrated in closed form per
//! interval. Geodesic edges of `g` longer than 5 km are given points along
//! the geodesic (Karney's direct problem) so that no chord bows from its
//! edge by more than millimetres.
//!
//! Large polygons. One plane serves a polygon whose bounding ball has a
//! radius of at most [`ONE_PLANE_RADIUS`] (25 km: every block, most
//! tracts). A larger polygon is cut into pieces by a grid of cells about
//! 33 km across ([`crate::proximity::pieces`]), each piece measured in its
//! own plane with the features that reach that piece; the covered areas are
//! summed and divided by `g`'s geodesic area (Karney's polygon area). So
//! the accuracy no longer degrades with size: polygons up to a hemisphere
//! and beyond, rings around a pole and along the equator.
//!
//! Why: measured in one plane, the share drifted with the polygon's size
//! (1e-4 at a degree, 5e-3 at 5 degrees, 0.04 at 60 degrees, against
//! tests/python/share_large_check.py): the plane's scale error grows as
//! ρ²/(3R²), `g`'s long geodesic edges were drawn as chords (a 111 km edge
//! 55 km from the centre bows by metres), and a ring around a pole or along
//! the equator has no sensible single plane at all.
//!
//! Guarantees. The share is in [0, 1]; exactly 0 when no feature is within
//! reach of `g` (decided by the exact test of [`mod@crate::proximity::distance`]),
//! exactly 1 when `g` lies within reach of one feature by the triangle
//! inequality on its bounding ball, or when no quadrature line (of any
//! piece) finds any part of `g` outside reach. Otherwise its error is at
//! most the quadrature tolerance (1e-8) plus the plane's scale error
//! [`AzimuthalFrame::scale_error`] at the distance ρ ≤ 25 km of the
//! farthest vertex used (3e-8 for a block 2 km across, 5e-6 at 25 km), plus
//! for cut polygons 1e-7 for the pieces' common edges: at most 1e-5 of
//! `g`'s area at any size. Measured against geographiclib (see above):
//! at most 3.4e-7, from a degree to a 170 x 119 degree box. Lines of `g`
//! through the plane are computed in f64 throughout; features are used
//! only where their elements' boxes meet `g`'s box grown by their reach.
//! Features' geodesic edges longer than 5 km in the plane are cut into at
//! most 64 parts along the geodesic, of which only those near `g` are
//! drawn.

use std::cmp::Ordering;
use std::collections::BinaryHeap;

use geographiclib_rs::DirectGeodesic;
use rstar::Envelope;

use crate::error::GeomError;
use crate::geodesy::area::ring_area_perimeter_until;
use crate::geodesy::ellipsoid::{A, E2};
use crate::geodesy::frame::AzimuthalFrame;
use crate::geodesy::inverse::{inverse, wgs84};
use crate::geometry::Geometry;
use crate::interrupt::{Interrupt, Pacer};
use crate::proximity::boxes::LonLatBox;
use crate::proximity::contain::point_in_prepared;
use crate::proximity::distance::{distance_within, within};
use crate::proximity::layer::Feature;
use crate::proximity::pieces::{for_each_piece, lonlat_rings};
use crate::proximity::prepared::{wrap_delta, Ball, Element, Prepared};

/// The largest bounding-ball radius of a polygon measured in one plane,
/// metres; larger polygons are cut into pieces ([`crate::proximity::pieces`]),
/// each measured in its own plane. At 25 km the plane's scale error
/// ρ²/(3R²) is 5e-6.
pub const ONE_PLANE_RADIUS: f64 = 25_000.0;

/// The longest edge of `g` drawn as a straight segment in a plane, metres;
/// longer geodesic edges get points along the geodesic. A geodesic at
/// distance p from the centre bows from its chord of length L by about
/// p L² / (12 R²): under 2 mm for L = 5 km within 25 km of the centre.
const CHORD_METRES: f64 = 5_000.0;

/// How many vertices or elements are handled between two questions to the
/// interrupt (each costs about a microsecond: an inverse geodesic).
const CHECK_EVERY: usize = 1024;

/// Target for the sum of quadrature error estimates, relative to `g`'s
/// area.
pub const TOLERANCE: f64 = 1e-8;

/// Above this estimated relative error after [`MAX_PIECES`] pieces the
/// share is refused rather than returned.
const GIVE_UP: f64 = 1e-6;

/// Most quadrature pieces spent on one polygon beyond its break points.
const MAX_PIECES: usize = 20_000;

/// Why a share could not be given.
#[derive(Clone, Debug, PartialEq)]
pub enum ShareError {
    /// The quadrature did not reach its tolerance; `estimate` is the
    /// estimated relative error it reached.
    NotConverged { estimate: f64 },
    /// The computation was stopped ([`GeomError::Interrupted`]).
    Geom(GeomError),
}

impl From<GeomError> for ShareError {
    fn from(e: GeomError) -> ShareError {
        ShareError::Geom(e)
    }
}

impl std::fmt::Display for ShareError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            ShareError::NotConverged { estimate } => write!(
                f,
                "the area integral did not converge (estimated relative error {estimate:.1e} after {MAX_PIECES} pieces); split the polygon into smaller parts"
            ),
            ShareError::Geom(e) => e.fmt(f),
        }
    }
}

/// The share (0..=1) of the area of the polygons of `g` that lies within
/// reach of some feature of `reaching` (the features already known to be
/// within reach of `g`; others cannot cover any of it). `None` when `g` has
/// no polygon of positive area. Points and lines of `g` are not areas and
/// are ignored (the SQL layer refuses them).
///
/// Asks `stop` every few milliseconds of work (per quadrature piece, per
/// thousand vertices projected, per piece of a large polygon) and returns
/// `ShareError::Geom(GeomError::Interrupted)` when it answers yes.
pub fn coverage_share(
    g: &Prepared,
    reaching: &[&Feature],
    stop: &dyn Interrupt,
) -> Result<Option<f64>, ShareError> {
    let Some(ball) = g.ball.filter(|_| !g.polygons().is_empty()) else {
        return Ok(None);
    };
    if reaching.is_empty() {
        return Ok(area_positive(g).then_some(0.0));
    }
    if wholly_within_one(&ball, reaching) {
        return Ok(area_positive(g).then_some(1.0));
    }
    if ball.radius.is_finite() && ball.radius <= ONE_PLANE_RADIUS {
        let plane = Plane::new(g, &ball, reaching, stop)?;
        if plane.area <= 0.0 {
            return Ok(None);
        }
        return Ok(Some(plane.integrate(stop)?.share(None)));
    }
    in_pieces(g, reaching, stop)
}

/// The share of a polygon too large for one plane: its pieces
/// ([`crate::proximity::pieces`]) measured each in its own plane, their
/// covered areas summed and divided by `g`'s geodesic area (Karney's,
/// [`ring_area_perimeter`](crate::geodesy::area::ring_area_perimeter)).
/// Pieces that no feature reaches are never
/// projected.
fn in_pieces(
    g: &Prepared,
    reaching: &[&Feature],
    stop: &dyn Interrupt,
) -> Result<Option<f64>, ShareError> {
    let area = geodesic_area(g, stop)?;
    if area.is_nan() || area <= 0.0 {
        return Ok(None);
    }
    let reach_boxes: Vec<Option<LonLatBox>> = reaching
        .iter()
        .map(|f| f.geometry.bbox().map(|b| b.grown(f.reach)))
        .collect();
    let rings = lonlat_rings(g, stop)?;
    let mut sums = Sums {
        total: 0.0,
        covered: 0.0,
        all: true,
        none: true,
    };
    for_each_piece(
        rings,
        stop,
        &mut |piece: Prepared| -> Result<(), ShareError> {
            let (Some(ball), Some(bbox)) = (piece.ball, piece.bbox()) else {
                return Ok(());
            };
            let near: Vec<&Feature> = reaching
                .iter()
                .zip(&reach_boxes)
                .filter(|(_, b)| b.is_some_and(|b| boxes_meet(&b, &bbox)))
                .map(|(f, _)| *f)
                .filter(|f| within(&piece, &f.geometry, f.reach))
                .collect();
            if near.is_empty() {
                sums.all = false;
                return Ok(());
            }
            let plane = Plane::new(&piece, &ball, &near, stop)?;
            if plane.area <= 0.0 {
                return Ok(());
            }
            let s = plane.integrate(stop)?;
            sums.covered += s.covered;
            sums.all &= s.all;
            sums.none &= s.none;
            Ok(())
        },
    )?;
    Ok(Some(sums.share(Some(area))))
}

/// True when two unwrapped boxes overlap somewhere on the circle.
fn boxes_meet(a: &LonLatBox, b: &LonLatBox) -> bool {
    let bs = b.normalised();
    a.normalised()
        .iter()
        .any(|x| bs.iter().any(|y| x.intersects(y)))
}

/// Geodesic area of `g`'s polygons (each exterior less its holes), square
/// metres; asks `stop` about every millisecond of work (Karney's area adds
/// an inverse per edge).
fn geodesic_area(g: &Prepared, stop: &dyn Interrupt) -> Result<f64, GeomError> {
    let mut pace = Pacer::new(stop);
    let mut total = 0.0;
    for rings in g.polygons() {
        for (i, ring) in rings.iter().enumerate() {
            let flat: Vec<f64> = ring.iter().flat_map(|p| [p.0, p.1]).collect();
            let a = ring_area_perimeter_until(&flat, 2, &mut pace)?.0.abs();
            total += if i == 0 { a } else { -a };
        }
    }
    Ok(total)
}

/// The integrals of one plane: area of `g` and covered area (square
/// metres, weighted by the plane's area scale), and whether every line was
/// wholly covered or none covered at all.
struct Sums {
    total: f64,
    covered: f64,
    all: bool,
    none: bool,
}

impl Sums {
    /// covered / total (or / `area` when given), exactly 0 or 1 when no
    /// line found coverage or every line was covered.
    fn share(&self, area: Option<f64>) -> f64 {
        let total = area.unwrap_or(self.total);
        if self.none || total <= 0.0 {
            0.0
        } else if self.all {
            1.0
        } else {
            (self.covered / total).clamp(0.0, 1.0)
        }
    }
}

/// True when some ring of `g` encloses a positive area (its shoelace sum in
/// longitude, unwrapped from its first vertex, and latitude is not 0): a
/// cheap test of degenerate polygons, none of whose rings spans any area.
fn area_positive(g: &Prepared) -> bool {
    g.polygons().iter().flatten().any(|ring| {
        let winding: f64 = ring.windows(2).map(|w| wrap_delta(w[0].0, w[1].0)).sum();
        if winding.abs() > 180.0 {
            // Around a pole: it encloses a cap.
            return true;
        }
        let lon0 = ring[0].0;
        let pts: Vec<(f64, f64)> = ring
            .iter()
            .map(|&(lon, lat)| (wrap_delta(lon0, lon), lat))
            .collect();
        shoelace(&pts) != 0.0
    })
}

/// True when every point of the ball lies within reach of one feature:
/// distance(centre, feature) + radius <= reach (triangle inequality).
fn wholly_within_one(ball: &Ball, reaching: &[&Feature]) -> bool {
    if !ball.radius.is_finite() {
        return false;
    }
    let centre = Prepared::new(&Geometry::point(ball.centre.0, ball.centre.1));
    reaching.iter().any(|f| {
        let slack = f.reach - ball.radius;
        slack >= 0.0
            && distance_within(&centre, &f.geometry, slack)
                .is_some_and(|d| d + ball.radius <= f.reach)
    })
}

/// Twice-signed area of a closed ring in the plane, halved (shoelace).
fn shoelace(ring: &[(f64, f64)]) -> f64 {
    let mut s = 0.0;
    for w in ring.windows(2) {
        s += w[0].0 * w[1].1 - w[1].0 * w[0].1;
    }
    s / 2.0
}

/// A segment in the plane.
#[derive(Clone, Copy, Debug)]
struct Seg {
    a: (f64, f64),
    b: (f64, f64),
}

impl Seg {
    /// x where the segment crosses the line y = c, if it does (half-open in
    /// y, so a vertex on the line counts once).
    fn crossing(&self, c: f64) -> Option<f64> {
        let (a, b) = (self.a, self.b);
        ((a.1 > c) != (b.1 > c)).then(|| a.0 + (c - a.1) * (b.0 - a.0) / (b.1 - a.1))
    }

    fn y_range(&self) -> (f64, f64) {
        (self.a.1.min(self.b.1), self.a.1.max(self.b.1))
    }
}

/// A convex piece of the region within reach: a disc or a capsule.
#[derive(Clone, Copy, Debug)]
enum Piece {
    Disc {
        c: (f64, f64),
        r: f64,
    },
    /// The points within `r` of segment a-b: the rectangle `corners`
    /// (a+rn, b+rn, b-rn, a-rn for the unit normal n) and discs at a and b.
    Capsule {
        a: (f64, f64),
        b: (f64, f64),
        r: f64,
        corners: [(f64, f64); 4],
    },
}

/// The chord of the disc (c, r) on the line y = y0.
fn disc_section(c: (f64, f64), r: f64, y0: f64) -> Option<(f64, f64)> {
    let dy = y0 - c.1;
    let h2 = r * r - dy * dy;
    (h2 > 0.0).then(|| {
        let h = h2.sqrt();
        (c.0 - h, c.0 + h)
    })
}

/// The section of a convex quadrilateral by the line y = y0.
fn quad_section(corners: &[(f64, f64); 4], y0: f64) -> Option<(f64, f64)> {
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    for k in 0..4 {
        let (p, q) = (corners[k], corners[(k + 1) % 4]);
        if (p.1 > y0) != (q.1 > y0) {
            let x = p.0 + (y0 - p.1) * (q.0 - p.0) / (q.1 - p.1);
            lo = lo.min(x);
            hi = hi.max(x);
        }
    }
    (lo < hi).then_some((lo, hi))
}

fn hull(a: Option<(f64, f64)>, b: Option<(f64, f64)>) -> Option<(f64, f64)> {
    match (a, b) {
        (Some(a), Some(b)) => Some((a.0.min(b.0), a.1.max(b.1))),
        (a, None) => a,
        (None, b) => b,
    }
}

impl Piece {
    fn disc(c: (f64, f64), r: f64) -> Piece {
        Piece::Disc { c, r }
    }

    fn capsule(a: (f64, f64), b: (f64, f64), r: f64) -> Piece {
        let (dx, dy) = (b.0 - a.0, b.1 - a.1);
        let len = dx.hypot(dy);
        if len == 0.0 {
            return Piece::disc(a, r);
        }
        let n = (-dy / len * r, dx / len * r);
        Piece::Capsule {
            a,
            b,
            r,
            corners: [
                (a.0 + n.0, a.1 + n.1),
                (b.0 + n.0, b.1 + n.1),
                (b.0 - n.0, b.1 - n.1),
                (a.0 - n.0, a.1 - n.1),
            ],
        }
    }

    fn y_range(&self) -> (f64, f64) {
        match *self {
            Piece::Disc { c, r } => (c.1 - r, c.1 + r),
            Piece::Capsule { a, b, r, .. } => (a.1.min(b.1) - r, a.1.max(b.1) + r),
        }
    }

    /// The points where the section's ends are not smooth in y: the tops
    /// and bottoms of the discs and the rectangle's corners.
    fn break_points(&self, out: &mut Vec<(f64, f64)>) {
        match *self {
            Piece::Disc { c, r } => out.extend([(c.0, c.1 - r), (c.0, c.1 + r)]),
            Piece::Capsule { a, b, r, corners } => {
                out.extend([
                    (a.0, a.1 - r),
                    (a.0, a.1 + r),
                    (b.0, b.1 - r),
                    (b.0, b.1 + r),
                ]);
                out.extend(corners);
            }
        }
    }

    /// True when (x, y) lies inside the piece by more than `margin`.
    fn holds_strictly(&self, (x, y): (f64, f64), margin: f64) -> bool {
        self.section(y)
            .is_some_and(|(lo, hi)| lo + margin < x && x < hi - margin)
    }

    /// The section of the piece by the line y = y0 (the piece is convex).
    fn section(&self, y0: f64) -> Option<(f64, f64)> {
        match *self {
            Piece::Disc { c, r } => disc_section(c, r, y0),
            Piece::Capsule { a, b, r, corners } => hull(
                hull(disc_section(a, r, y0), disc_section(b, r, y0)),
                quad_section(&corners, y0),
            ),
        }
    }
}

/// Items with a y range, bucketed by height so a line meets only a few
/// buckets' worth.
struct ByHeight {
    y0: f64,
    step: f64,
    buckets: Vec<Vec<u32>>,
}

impl ByHeight {
    fn new(ranges: &[(f64, f64)], lo: f64, hi: f64) -> ByHeight {
        let extent = hi - lo;
        let n = ranges.len();
        let mean_height = ranges.iter().map(|r| r.1 - r.0).sum::<f64>() / n.max(1) as f64;
        let wanted = if mean_height > 0.0 {
            (4.0 * extent / mean_height).floor()
        } else {
            n as f64
        };
        let most = 4096.0f64.min(n.max(1) as f64);
        let count = if wanted.is_finite() {
            wanted.clamp(1.0, most) as usize
        } else {
            1
        };
        let step = if extent > 0.0 && extent.is_finite() {
            extent / count as f64
        } else {
            1.0
        };
        let mut buckets = vec![Vec::new(); count];
        for (i, r) in ranges.iter().enumerate() {
            let first = Self::slot(lo, step, count, r.0);
            let last = Self::slot(lo, step, count, r.1);
            for b in &mut buckets[first..=last] {
                b.push(i as u32);
            }
        }
        ByHeight {
            y0: lo,
            step,
            buckets,
        }
    }

    fn slot(lo: f64, step: f64, count: usize, y: f64) -> usize {
        let k = ((y - lo) / step).floor();
        if k.is_nan() || k < 0.0 {
            0
        } else {
            (k as usize).min(count - 1)
        }
    }

    fn at(&self, y: f64) -> &[u32] {
        &self.buckets[Self::slot(self.y0, self.step, self.buckets.len(), y)]
    }
}

/// The interior of one feature's polygons, as seen on lines of the plane:
/// the parity of a reference point (decided by the geodesic point in
/// polygon test) and the edges that can cross the path from it.
struct Interior {
    edges: Vec<Seg>,
    index: ByHeight,
    /// x of the vertical line through the reference point.
    x_ref: f64,
    /// Heights, sorted, where edges cross the vertical line x = x_ref
    /// above the reference point.
    vertical: Vec<f64>,
    inside_at_ref: bool,
}

/// `g` and the reaching features in `g`'s plane.
struct Plane {
    area: f64,
    g_edges: Vec<Seg>,
    g_index: ByHeight,
    pieces: Vec<Piece>,
    piece_index: ByHeight,
    interiors: Vec<Interior>,
    breaks: Vec<f64>,
    /// K / 6 for the Gaussian curvature K at the centre: the true area of
    /// dx dy is (m12 / s) dx dy ≈ (1 - K (x² + y²) / 6) dx dy (geodesic
    /// polar coordinates; m12 the reduced length, Karney 2013, eq. 3).
    k6: f64,
}

/// The weighted length ∫ (1 - k6 (x² + c²)) dx over [a, b] on the line
/// y = c.
fn weighted(a: f64, b: f64, c: f64, k6: f64) -> f64 {
    (b - a) * (1.0 - k6 * (c * c + (a * a + a * b + b * b) / 3.0))
}

/// Reused per line: crossings and intervals.
#[derive(Default)]
struct Scratch {
    xs: Vec<f64>,
    covered: Vec<(f64, f64)>,
    inside: Vec<f64>,
}

impl Plane {
    fn new(
        g: &Prepared,
        ball: &Ball,
        reaching: &[&Feature],
        stop: &dyn Interrupt,
    ) -> Result<Plane, ShareError> {
        let frame = AzimuthalFrame::new(ball.centre);
        let sin = ball.centre.1.to_radians().sin();
        let w = 1.0 - E2 * sin * sin;
        let k6 = w * w / (A * A * (1.0 - E2)) / 6.0;
        let mut g_edges = Vec::new();
        let mut area = 0.0;
        let (mut x_lo, mut x_hi) = (f64::INFINITY, f64::NEG_INFINITY);
        let (mut y_lo, mut y_hi) = (f64::INFINITY, f64::NEG_INFINITY);
        let mut breaks = Vec::new();
        let mut kinks: Vec<(f64, f64)> = Vec::new();
        let mut since_check = 0;
        for ring in g.polygons().iter().flatten() {
            let mut pts: Vec<(f64, f64)> = Vec::with_capacity(ring.len());
            for (k, &p) in ring.iter().enumerate() {
                since_check += 1;
                if since_check >= CHECK_EVERY {
                    since_check = 0;
                    stop.check()?;
                }
                let xy = frame.forward(p);
                if let Some(&last) = pts.last() {
                    chord_points(&frame, ring[k - 1], p, last, xy, &mut pts);
                }
                pts.push(xy);
            }
            area += shoelace(&pts).abs();
            for w in pts.windows(2) {
                g_edges.push(Seg { a: w[0], b: w[1] });
            }
            for p in &pts {
                x_lo = x_lo.min(p.0);
                x_hi = x_hi.max(p.0);
                y_lo = y_lo.min(p.1);
                y_hi = y_hi.max(p.1);
                breaks.push(p.1);
            }
        }
        // Holes subtract: the even-odd sections below give the true area;
        // `area` (the sum of ring areas) only scales the tolerance.
        let g_ranges: Vec<(f64, f64)> = g_edges.iter().map(Seg::y_range).collect();
        let g_index = ByHeight::new(&g_ranges, y_lo, y_hi);

        // The reference point for interiors: just below and left of g.
        let extent = (x_hi - x_lo).max(y_hi - y_lo);
        let margin = 1.0 + 1e-6 * extent;
        let reference = (x_lo - margin, y_lo - margin);
        let rho = [x_lo - margin, x_hi]
            .iter()
            .flat_map(|&x| [y_lo - margin, y_hi].map(|y| f64::hypot(x, y)))
            .fold(0.0, f64::max);

        let mut pieces = Vec::new();
        let mut interiors = Vec::new();
        let bbox = g.bbox().expect("a geometry with a ball has a box");
        let plane_box = [x_lo, x_hi, y_lo, y_hi];
        for f in reaching {
            stop.check()?;
            let first = pieces.len();
            feature_in_plane(
                f,
                &frame,
                &bbox,
                (rho, plane_box),
                reference,
                (x_hi, y_hi),
                &mut pieces,
                &mut interiors,
                &mut kinks,
            );
            drop_covered_capsules(&mut pieces, first, stop)?;
        }
        let piece_ranges: Vec<(f64, f64)> = pieces.iter().map(Piece::y_range).collect();
        let piece_index = ByHeight::new(&piece_ranges, y_lo, y_hi);
        for p in &pieces {
            p.break_points(&mut kinks);
        }
        // A kink of one piece's section matters only where it can change
        // the covered length: inside g and not strictly inside another
        // piece (there, nearby sections lie within that piece too).
        let margin = 1e-9 * extent + 1e-6;
        let mut scratch = Vec::new();
        breaks.extend(
            kinks
                .into_iter()
                .filter(|&(_, y)| y > y_lo && y < y_hi)
                .filter(|&p| near_polygon(&g_edges, &g_index, p, margin, &mut scratch))
                .filter(|&p| {
                    !piece_index
                        .at(p.1)
                        .iter()
                        .any(|&i| pieces[i as usize].holds_strictly(p, margin))
                })
                .map(|p| p.1),
        );
        breaks.retain(|&y| y > y_lo && y < y_hi);
        breaks.push(y_lo);
        breaks.push(y_hi);
        breaks.sort_by(f64::total_cmp);
        let min_gap = 1e-9 * extent.max(1e-9);
        breaks.dedup_by(|b, a| *b - *a <= min_gap);
        if let Some(last) = breaks.last_mut() {
            *last = y_hi;
        }
        Ok(Plane {
            area,
            g_edges,
            g_index,
            pieces,
            piece_index,
            interiors,
            breaks,
            k6,
        })
    }

    /// The length of `g` on the line y = c and the part of it within reach.
    fn line(&self, c: f64, s: &mut Scratch) -> (f64, f64) {
        s.xs.clear();
        for &i in self.g_index.at(c) {
            if let Some(x) = self.g_edges[i as usize].crossing(c) {
                s.xs.push(x);
            }
        }
        if s.xs.len() < 2 {
            return (0.0, 0.0);
        }
        s.xs.sort_unstable_by(f64::total_cmp);
        let k6 = self.k6;
        let total: f64 =
            s.xs.chunks_exact(2)
                .map(|p| weighted(p[0], p[1], c, k6))
                .sum();
        if total <= 0.0 {
            return (0.0, 0.0);
        }
        let (lo, hi) = (s.xs[0], s.xs[s.xs.len() - 1]);
        s.covered.clear();
        // Returns true when the interval covers all of g on this line.
        let add = |iv: (f64, f64), covered: &mut Vec<(f64, f64)>| -> bool {
            if iv.1 <= lo || iv.0 >= hi {
                return false;
            }
            if iv.0 <= lo && iv.1 >= hi {
                return true;
            }
            covered.push(iv);
            false
        };
        for &i in self.piece_index.at(c) {
            let p = &self.pieces[i as usize];
            if let Some(iv) = p.section(c) {
                if add(iv, &mut s.covered) {
                    return (total, total);
                }
            }
        }
        for interior in &self.interiors {
            s.inside.clear();
            for &i in interior.index.at(c) {
                if let Some(x) = interior.edges[i as usize].crossing(c) {
                    if x > interior.x_ref {
                        s.inside.push(x);
                    }
                }
            }
            s.inside.sort_unstable_by(f64::total_cmp);
            let below = interior.vertical.partition_point(|&v| v < c);
            let mut inside = interior.inside_at_ref ^ (below % 2 == 1);
            let mut from = interior.x_ref;
            for &x in &s.inside {
                if inside && add((from, x), &mut s.covered) {
                    return (total, total);
                }
                inside = !inside;
                from = x;
            }
            if inside && add((from, f64::INFINITY), &mut s.covered) {
                return (total, total);
            }
        }
        if s.covered.is_empty() {
            return (total, 0.0);
        }
        s.covered.sort_unstable_by(|a, b| a.0.total_cmp(&b.0));
        // Merge, then measure the overlap with g's intervals.
        let mut merged: Vec<(f64, f64)> = Vec::with_capacity(s.covered.len());
        for &iv in &s.covered {
            match merged.last_mut() {
                Some(last) if iv.0 <= last.1 => last.1 = last.1.max(iv.1),
                _ => merged.push(iv),
            }
        }
        let mut covered = 0.0;
        let mut k = 0;
        for gi in s.xs.chunks_exact(2) {
            let (a, b) = (gi[0], gi[1]);
            while k < merged.len() && merged[k].1 <= a {
                k += 1;
            }
            let mut j = k;
            while j < merged.len() && merged[j].0 < b {
                covered += weighted(merged[j].0.max(a), merged[j].1.min(b), c, k6);
                j += 1;
            }
        }
        (total, covered.min(total))
    }

    /// Gauss–Kronrod 7/15 on [a, b]: (total length integral, covered
    /// integral, error estimate of the covered integral, all lines fully
    /// covered, no line covered at all).
    fn piece(&self, a: f64, b: f64, s: &mut Scratch) -> Piece15 {
        let half = (b - a) / 2.0;
        let mid = a + half;
        let mut out = Piece15 {
            a,
            b,
            total: 0.0,
            covered: 0.0,
            error: 0.0,
            all_covered: true,
            none_covered: true,
        };
        let mut gauss = 0.0;
        for (k, (&x, &wk)) in KRONROD_NODES.iter().zip(&KRONROD_WEIGHTS).enumerate() {
            let ys: &[f64] = if x == 0.0 {
                &[mid]
            } else {
                &[mid - half * x, mid + half * x]
            };
            for &y in ys {
                let (t, c) = self.line(y, s);
                out.total += wk * t;
                out.covered += wk * c;
                if k % 2 == 1 {
                    gauss += GAUSS_WEIGHTS[k / 2] * c;
                }
                out.all_covered &= c == t;
                out.none_covered &= c == 0.0;
            }
        }
        out.total *= half;
        out.covered *= half;
        out.error = (out.covered - gauss * half).abs();
        out
    }

    fn integrate(&self, stop: &dyn Interrupt) -> Result<Sums, ShareError> {
        let mut s = Scratch::default();
        let mut heap: BinaryHeap<Piece15> = BinaryHeap::new();
        for w in self.breaks.windows(2).filter(|w| w[1] > w[0]) {
            stop.check()?;
            heap.push(self.piece(w[0], w[1], &mut s));
        }
        let tolerance = TOLERANCE * self.area;
        let limit = heap.len() + MAX_PIECES;
        let mut error: f64 = heap.iter().map(|p| p.error).sum();
        while error > tolerance && heap.len() < limit {
            stop.check()?;
            let Some(worst) = heap.pop() else { break };
            let mid = worst.a + (worst.b - worst.a) / 2.0;
            if !(mid > worst.a && mid < worst.b) {
                // Cannot be split further in f64: keep it as it is.
                error -= worst.error;
                heap.push(Piece15 {
                    error: 0.0,
                    ..worst
                });
                continue;
            }
            let left = self.piece(worst.a, mid, &mut s);
            let right = self.piece(mid, worst.b, &mut s);
            error += left.error + right.error - worst.error;
            heap.push(left);
            heap.push(right);
        }
        // Recompute the sum: the running total drifts by rounding.
        let error: f64 = heap.iter().map(|p| p.error).sum();
        if error > GIVE_UP * self.area {
            return Err(ShareError::NotConverged {
                estimate: error / self.area,
            });
        }
        let (mut total, mut covered) = (0.0, 0.0);
        let (mut all, mut none) = (true, true);
        for p in heap.iter() {
            total += p.total;
            covered += p.covered;
            all &= p.all_covered;
            none &= p.none_covered;
        }
        Ok(Sums {
            total,
            covered,
            all,
            none,
        })
    }
}

/// Pushes onto `pts` the plane points of the geodesic from `a` to `b`
/// (strictly between them) when its chord from `pa` to `pb` is longer than
/// [`CHORD_METRES`], so that no chord bows measurably from its geodesic.
fn chord_points(
    frame: &AzimuthalFrame,
    a: (f64, f64),
    b: (f64, f64),
    pa: (f64, f64),
    pb: (f64, f64),
    pts: &mut Vec<(f64, f64)>,
) {
    let len = (pb.0 - pa.0).hypot(pb.1 - pa.1);
    if len.is_nan() || len <= CHORD_METRES {
        return;
    }
    let (s, azi, _) = inverse(a.0, a.1, b.0, b.1);
    let n = ((s / CHORD_METRES).ceil() as usize).clamp(1, 1 << 20);
    for k in 1..n {
        let (lat, lon): (f64, f64) = wgs84().direct(a.1, a.0, azi, s * k as f64 / n as f64);
        pts.push(frame.forward((lon, lat)));
    }
}

/// The parts of the geodesic a-b, cut at most 64 times (into parts of at
/// least [`CHORD_METRES`]), whose end points' box meets `near`: a part of
/// 1/64 of a 2,000 km edge bows from its chord by centimetres within 25 km
/// of a plane's centre. Parts elsewhere cannot reach the plane's polygon.
fn geodesic_parts(a: (f64, f64), b: (f64, f64), near: &LonLatBox) -> Vec<((f64, f64), (f64, f64))> {
    let (s, azi, _) = inverse(a.0, a.1, b.0, b.1);
    if s.is_nan() {
        return vec![(a, b)];
    }
    let n = (s / CHORD_METRES).ceil().clamp(1.0, 64.0) as usize;
    let mut pts = Vec::with_capacity(n + 1);
    pts.push(a);
    for k in 1..n {
        let (lat, lon): (f64, f64) = wgs84().direct(a.1, a.0, azi, s * k as f64 / n as f64);
        pts.push((lon, lat));
    }
    pts.push(b);
    pts.windows(2)
        .filter(|w| {
            let (p, q) = (w[0], w[1]);
            let q_lon = p.0 + wrap_delta(p.0, q.0);
            let part = LonLatBox {
                lon_lo: p.0.min(q_lon),
                lon_hi: p.0.max(q_lon),
                lat_lo: p.1.min(q.1),
                lat_hi: p.1.max(q.1),
            };
            boxes_meet(&part, near)
        })
        .map(|w| (w[0], w[1]))
        .collect()
}

/// Adds feature `f`'s pieces and interior to the plane: only elements whose
/// boxes meet `g`'s box grown by the reach (for pieces) or by `rho` (for
/// the interior's crossings, which must include every edge crossing the
/// rectangle from `reference` to `top_right`).
#[allow(clippy::too_many_arguments)]
fn feature_in_plane(
    f: &Feature,
    frame: &AzimuthalFrame,
    g_box: &LonLatBox,
    (rho, plane_box): (f64, [f64; 4]),
    reference: (f64, f64),
    top_right: (f64, f64),
    pieces: &mut Vec<Piece>,
    interiors: &mut Vec<Interior>,
    breaks: &mut Vec<(f64, f64)>,
) {
    let geometry = &f.geometry;
    let has_interior = !geometry.polygons().is_empty();
    // The reference point may move up to REFERENCE_SHIFT metres (below).
    let query = if has_interior && rho + REFERENCE_SHIFT > f.reach {
        match path_box(frame, reference, top_right) {
            Some(path) => g_box.grown(f.reach).union(&path),
            None => g_box.grown(rho + REFERENCE_SHIFT),
        }
    } else {
        g_box.grown(f.reach)
    };
    let mut near = geometry.elements_near(&query);
    near.sort_unstable();
    let mut ring_edges = Vec::new();
    let mut last: Option<((f64, f64), (f64, f64))> = None;
    let mut project = |p: (f64, f64)| -> (f64, f64) {
        match last {
            Some((q, xy)) if q == p => xy,
            _ => {
                let xy = frame.forward(p);
                last = Some((p, xy));
                xy
            }
        }
    };
    for k in near {
        match geometry.element(k) {
            Element::Point(p) => {
                if f.reach > 0.0 {
                    pieces.push(Piece::disc(project(p), f.reach));
                }
            }
            Element::Edge(a, b) => {
                let (pa, pb) = (project(a), project(b));
                let ring = geometry.owner(k).is_some();
                let mut add = |pa: (f64, f64), pb: (f64, f64)| {
                    // Elements fetched only for the interior's crossings
                    // (beyond reach of g's box in the plane) add no piece.
                    if capsule_meets_box(pa, pb, f.reach, &plane_box) {
                        if f.reach > 0.0 {
                            // The vertices lie strictly inside the covered
                            // part (within 0 < reach of the feature), so
                            // the interior's kinks there change nothing.
                            pieces.push(Piece::capsule(pa, pb, f.reach));
                        } else {
                            breaks.extend([pa, pb]);
                        }
                    }
                    if ring {
                        ring_edges.push(Seg { a: pa, b: pb });
                    }
                };
                if (pb.0 - pa.0).hypot(pb.1 - pa.1) > CHORD_METRES {
                    // A long geodesic edge: its parts near g, as chords of
                    // at most a 64th of it (or CHORD_METRES).
                    let near_g = query.grown(1_000.0);
                    for (qa, qb) in geodesic_parts(a, b, &near_g) {
                        add(frame.forward(qa), frame.forward(qb));
                    }
                } else {
                    add(pa, pb);
                }
            }
        }
    }
    if !has_interior {
        return;
    }
    // Move the reference point off any edge it lies too close to for the
    // plane and the geodesic test to agree.
    let mut reference = reference;
    let clearance = 1e-3;
    for attempt in 0..8 {
        if ring_edges
            .iter()
            .all(|e| planar_point_segment(reference, e) > clearance)
        {
            break;
        }
        let shift = 0.7 * (attempt + 1) as f64;
        reference = (reference.0 - shift, reference.1 - 0.37 * shift);
    }
    let inside_at_ref = point_in_prepared(frame.reverse(reference), geometry);
    let mut vertical: Vec<f64> = ring_edges
        .iter()
        .filter_map(|e| {
            let (a, b) = (e.a, e.b);
            ((a.0 > reference.0) != (b.0 > reference.0))
                .then(|| a.1 + (reference.0 - a.0) * (b.1 - a.1) / (b.0 - a.0))
        })
        .filter(|&y| y > reference.1 && y <= top_right.1 + 1.0)
        .collect();
    vertical.sort_by(f64::total_cmp);
    let ranges: Vec<(f64, f64)> = ring_edges.iter().map(Seg::y_range).collect();
    let index = ByHeight::new(&ranges, reference.1, top_right.1);
    interiors.push(Interior {
        edges: ring_edges,
        index,
        x_ref: reference.0,
        vertical,
        inside_at_ref,
    });
}

/// A longitude-latitude box holding the plane's rectangle from `reference`
/// (less [`REFERENCE_SHIFT`] metres) to `top_right`, where an interior's
/// parity paths run (up from the reference point, then along each line):
/// every edge that crosses those paths has a box meeting it. The
/// rectangle's sides are mapped back at 32 points each and the box grown
/// by 1 km, far more than an image of a side strays from its samples'
/// box between two samples (under 2 km apart within 25 km of the centre).
/// None near a pole (the rectangle may hold it), where the caller falls
/// back to `g`'s box grown by the rectangle's distance from the centre.
fn path_box(
    frame: &AzimuthalFrame,
    reference: (f64, f64),
    top_right: (f64, f64),
) -> Option<LonLatBox> {
    const SAMPLES: usize = 32;
    let (x0, y0) = (reference.0 - REFERENCE_SHIFT, reference.1 - REFERENCE_SHIFT);
    let (x1, y1) = top_right;
    let centre = frame.reverse((0.0, 0.0));
    let far = [x0, x1]
        .iter()
        .flat_map(|&x| [y0, y1].map(|y| f64::hypot(x, y)))
        .fold(0.0, f64::max);
    if !far.is_finite() || centre.1.abs() + far / 100_000.0 + 0.1 > 89.0 {
        return None;
    }
    let mut b: Option<LonLatBox> = None;
    for k in 0..=SAMPLES {
        let t = k as f64 / SAMPLES as f64;
        let (x, y) = (x0 + t * (x1 - x0), y0 + t * (y1 - y0));
        for xy in [(x, y0), (x, y1), (x0, y), (x1, y)] {
            let (lon, lat) = frame.reverse(xy);
            let lon = centre.0 + wrap_delta(centre.0, lon);
            if !(lon.is_finite() && lat.is_finite()) {
                return None;
            }
            b = Some(match b {
                None => LonLatBox {
                    lon_lo: lon,
                    lon_hi: lon,
                    lat_lo: lat,
                    lat_hi: lat,
                },
                Some(b) => LonLatBox {
                    lon_lo: b.lon_lo.min(lon),
                    lon_hi: b.lon_hi.max(lon),
                    lat_lo: b.lat_lo.min(lat),
                    lat_hi: b.lat_hi.max(lat),
                },
            });
        }
    }
    b.map(|b| b.grown(1_000.0))
}

/// True when the box of the capsule of radius `r` around a-b meets the box
/// `[x_lo, x_hi, y_lo, y_hi]` (`g`'s extent in the plane): a capsule whose
/// box does not cannot cover any of `g`.
fn capsule_meets_box(a: (f64, f64), b: (f64, f64), r: f64, bx: &[f64; 4]) -> bool {
    let r = r.max(0.0);
    a.0.min(b.0) - r <= bx[1]
        && a.0.max(b.0) + r >= bx[0]
        && a.1.min(b.1) - r <= bx[3]
        && a.1.max(b.1) + r >= bx[2]
}

/// How many capsules on each side of a capsule (in the order its feature
/// gave them, which follows its rings) may vouch for it in
/// [`drop_covered_capsules`].
const COVER_WINDOW: usize = 128;

/// Removes from `pieces[first..]` capsules that lie wholly inside the union
/// of discs of radius r around end points of capsules that are kept (all
/// capsules of one feature share one radius r), so lines section fewer
/// pieces without changing the covered set by a single point. Next to a
/// densely digitised park (thousands of edges a metre long within reach
/// of g) most capsules are of this kind.
///
/// The test, exact: a capsule around a-b with radius r lies within the
/// union of the discs of radius r around points u, each no farther than
/// r/2 from a and from b, when every unit direction d has a u with
/// d·(u−a) >= |u−a|²/(2r) and d·(u−b) >= |u−b|²/(2r). Proof: both sides
/// are linear and convex in the end point, so the inequality holds for
/// every q of a-b; a point w = q + s d (0 <= s <= r) of the capsule then
/// has |w−u|² = |q−u|² − 2s d·(u−q) + s² <= |q−u|² (1 − s/r) + s²
/// <= r² − rs + s² <= r². For one u the good directions form an arc of
/// half-width acos(|u−a|/(2r)) around u−a, met with its like for b; the
/// capsule goes when these arcs, each narrowed a little (1e-9 of a
/// quarter turn), cover the circle. The capsules whose end points were used are marked kept for
/// good (so nothing removed later takes away a disc that vouched for an
/// earlier removal), and a capsule used as such is never removed itself.
fn drop_covered_capsules(
    pieces: &mut Vec<Piece>,
    first: usize,
    stop: &dyn Interrupt,
) -> Result<(), ShareError> {
    let n = pieces.len() - first;
    if n < 3 {
        return Ok(());
    }
    const GONE: u8 = 1;
    const LOCKED: u8 = 2;
    let mut state = vec![0u8; n];
    let mut arcs: Vec<(f64, f64, usize)> = Vec::new();
    let mut chosen: Vec<usize> = Vec::new();
    for i in 0..n {
        if i % CHECK_EVERY == CHECK_EVERY - 1 {
            stop.check()?;
        }
        if state[i] != 0 {
            continue;
        }
        let Piece::Capsule { a, b, r, .. } = pieces[first + i] else {
            continue;
        };
        let (lo, hi) = (
            i.saturating_sub(COVER_WINDOW),
            (i + COVER_WINDOW + 1).min(n),
        );
        // The arcs of the window's end points, from capsules kept for good
        // first (so that fewer capsules are pinned and fewer arcs computed),
        // then from the others still present.
        let add_arcs = |arcs: &mut Vec<(f64, f64, usize)>, locked: bool| {
            for j in lo..hi {
                if j == i || state[j] & GONE != 0 || (state[j] & LOCKED != 0) != locked {
                    continue;
                }
                let Piece::Capsule {
                    a: ja,
                    b: jb,
                    r: jr,
                    ..
                } = pieces[first + j]
                else {
                    continue;
                };
                if jr != r {
                    continue;
                }
                for u in [ja, jb] {
                    if let Some((start, end)) = good_directions(a, b, u, r) {
                        arcs.push((start, end, j));
                    }
                }
            }
        };
        arcs.clear();
        add_arcs(&mut arcs, true);
        if covers_circle(&mut arcs, &mut chosen) {
            state[i] = GONE;
            continue;
        }
        add_arcs(&mut arcs, false);
        if covers_circle(&mut arcs, &mut chosen) {
            state[i] = GONE;
            for &j in &chosen {
                state[j] |= LOCKED;
            }
        }
    }
    let mut k = 0;
    pieces.retain(|_| {
        let keep = k < first || state[k - first] & GONE == 0;
        k += 1;
        keep
    });
    Ok(())
}

/// One turn in [`pseudo_angle`] units.
const TURN: f64 = 4.0;

/// A monotone stand-in for the angle of the direction (x, y) from the x
/// axis, in [0, 4): each quarter turn maps to one unit, and the opposite
/// direction lies exactly 2 further on (common practice, no source; no
/// trigonometry needed). (0, 0) is never asked.
fn pseudo_angle(x: f64, y: f64) -> f64 {
    if y >= 0.0 {
        if x >= 0.0 {
            y / (x + y)
        } else {
            1.0 - x / (y - x)
        }
    } else if x < 0.0 {
        2.0 - y / (-x - y)
    } else {
        3.0 + x / (x - y)
    }
}

/// The arc of unit directions d (in [`pseudo_angle`] units, start in
/// [0, 4), end > start) with d·(u−a) >= |u−a|²/(2r) and
/// d·(u−b) >= |u−b|²/(2r), narrowed by 1e-9 at each end; None when empty
/// or when u is not within r/2 of both a and b, or coincides with either.
/// For one end point p the good directions are those within
/// acos(|u−p|/(2r)) (less than a quarter turn) of u−p; their end
/// directions are u−p turned both ways by that angle.
fn good_directions(a: (f64, f64), b: (f64, f64), u: (f64, f64), r: f64) -> Option<(f64, f64)> {
    const NARROW: f64 = 1e-9;
    let arc = |p: (f64, f64)| -> Option<(f64, f64)> {
        let (dx, dy) = (u.0 - p.0, u.1 - p.1);
        let d = dx.hypot(dy);
        if !(d > 0.0 && d <= 0.5 * r) {
            return None;
        }
        let (cx, cy) = (dx / d, dy / d);
        let cos = d / (2.0 * r);
        let sin = (1.0 - cos * cos).sqrt();
        let start = pseudo_angle(cx * cos + cy * sin, cy * cos - cx * sin);
        let mut end = pseudo_angle(cx * cos - cy * sin, cy * cos + cx * sin);
        if end < start {
            end += TURN;
        }
        Some((start + NARROW, end - NARROW))
    };
    let (s1, e1) = arc(a)?;
    let (s2, e2) = arc(b)?;
    // Each arc is shorter than half a turn: they meet, if at all, with
    // their middles less than half a turn apart.
    let shift = (((s1 + e1) - (s2 + e2)) / 2.0 / TURN).round() * TURN;
    let lo = s1.max(s2 + shift);
    let hi = e1.min(e2 + shift);
    if lo.is_nan() || hi.is_nan() || lo >= hi {
        return None;
    }
    let start = lo.rem_euclid(TURN);
    Some((start, start + (hi - lo)))
}

/// True when the arcs (in [`pseudo_angle`] units: start in [0, 4), end >
/// start, each shorter than half a turn)
/// cover the whole circle; then `chosen` holds the tags of arcs that do
/// (picked greedily, each reaching farthest).
fn covers_circle(arcs: &mut [(f64, f64, usize)], chosen: &mut Vec<usize>) -> bool {
    chosen.clear();
    // The arc over angle 0 that reaches farthest past it.
    let Some(&(wrap_start, wrap_end, wrap_tag)) = arcs
        .iter()
        .filter(|a| a.1 > TURN)
        .max_by(|x, y| x.1.total_cmp(&y.1))
    else {
        return false;
    };
    let mut reach = wrap_end - TURN;
    chosen.push(wrap_tag);
    arcs.sort_unstable_by(|x, y| x.0.total_cmp(&y.0));
    let mut k = 0;
    // The farthest-reaching arc among those starting before `reach`.
    let mut best: Option<(f64, usize)> = None;
    while reach < wrap_start {
        while k < arcs.len() && arcs[k].0 < reach {
            if best.is_none_or(|(e, _)| arcs[k].1 > e) {
                best = Some((arcs[k].1, arcs[k].2));
            }
            k += 1;
        }
        match best {
            Some((end, tag)) if end > reach => {
                reach = end;
                chosen.push(tag);
            }
            _ => return false,
        }
    }
    true
}

/// True when (x, y) lies in one of `g`'s intervals on the line through it,
/// widened by `margin`.
fn near_polygon(
    edges: &[Seg],
    index: &ByHeight,
    (x, y): (f64, f64),
    margin: f64,
    xs: &mut Vec<f64>,
) -> bool {
    xs.clear();
    xs.extend(
        index
            .at(y)
            .iter()
            .filter_map(|&i| edges[i as usize].crossing(y)),
    );
    xs.sort_by(f64::total_cmp);
    xs.chunks_exact(2)
        .any(|iv| iv[0] - margin <= x && x <= iv[1] + margin)
}

/// How far the reference point of an interior may be moved off edges,
/// metres (the sum of the shifts tried).
const REFERENCE_SHIFT: f64 = 30.0;

/// Planar distance from `p` to the segment `e`.
fn planar_point_segment(p: (f64, f64), e: &Seg) -> f64 {
    let (dx, dy) = (e.b.0 - e.a.0, e.b.1 - e.a.1);
    let len2 = dx * dx + dy * dy;
    let t = if len2 > 0.0 {
        (((p.0 - e.a.0) * dx + (p.1 - e.a.1) * dy) / len2).clamp(0.0, 1.0)
    } else {
        0.0
    };
    (p.0 - (e.a.0 + t * dx)).hypot(p.1 - (e.a.1 + t * dy))
}

/// One quadrature piece and its results.
#[derive(Clone, Copy, Debug)]
struct Piece15 {
    a: f64,
    b: f64,
    total: f64,
    covered: f64,
    error: f64,
    all_covered: bool,
    none_covered: bool,
}

impl PartialEq for Piece15 {
    fn eq(&self, other: &Self) -> bool {
        self.error.total_cmp(&other.error) == Ordering::Equal
    }
}
impl Eq for Piece15 {}
impl PartialOrd for Piece15 {
    fn partial_cmp(&self, other: &Self) -> Option<Ordering> {
        Some(self.cmp(other))
    }
}
impl Ord for Piece15 {
    fn cmp(&self, other: &Self) -> Ordering {
        self.error.total_cmp(&other.error)
    }
}

/// Abscissae of the 15-point Kronrod rule on [-1, 1], largest first (the
/// odd positions are the 7-point Gauss–Legendre nodes). QUADPACK, routine
/// QK15 (Piessens, de Doncker-Kapenga, Überhuber, Kahaner, "QUADPACK",
/// Springer 1983), from memory; checked by the tests below against the
/// exact moments of x^k.
// The tabulated digits are kept whole, as published.
#[allow(clippy::excessive_precision)]
const KRONROD_NODES: [f64; 8] = [
    0.991_455_371_120_812_639_206_854_697_526_329,
    0.949_107_912_342_758_524_526_189_684_047_851,
    0.864_864_423_359_769_072_789_712_788_640_926,
    0.741_531_185_599_394_439_863_864_773_280_788,
    0.586_087_235_467_691_130_294_144_845_693_013,
    0.405_845_151_377_397_166_906_606_412_076_961,
    0.207_784_955_007_898_467_600_689_403_773_245,
    0.0,
];

/// Weights of the 15-point Kronrod rule, for [`KRONROD_NODES`].
// The tabulated digits are kept whole, as published.
#[allow(clippy::excessive_precision)]
const KRONROD_WEIGHTS: [f64; 8] = [
    0.022_935_322_010_529_224_963_732_008_058_970,
    0.063_092_092_629_978_553_290_700_663_189_204,
    0.104_790_010_322_250_183_839_876_322_541_518,
    0.140_653_259_715_525_918_745_189_590_510_238,
    0.169_004_726_639_267_902_826_583_426_598_550,
    0.190_350_578_064_785_409_913_256_402_421_014,
    0.204_432_940_075_298_892_414_161_999_234_649,
    0.209_482_141_084_727_828_012_999_174_891_714,
];

/// Weights of the 7-point Gauss–Legendre rule at KRONROD_NODES[1], [3],
/// [5], [7].
// The tabulated digits are kept whole, as published.
#[allow(clippy::excessive_precision)]
const GAUSS_WEIGHTS: [f64; 4] = [
    0.129_484_966_168_869_693_270_611_432_679_082,
    0.279_705_391_489_276_667_901_467_771_423_780,
    0.381_830_050_505_118_944_950_369_775_488_975,
    0.417_959_183_673_469_387_755_102_040_816_327,
];

#[cfg(test)]
mod tests {
    use super::*;

    /// Sum of w f(x) over the symmetric rule given by half its nodes.
    fn rule(nodes: &[f64], weights: &[f64], f: impl Fn(f64) -> f64) -> f64 {
        nodes
            .iter()
            .zip(weights)
            .map(|(&x, &w)| {
                if x == 0.0 {
                    w * f(0.0)
                } else {
                    w * (f(x) + f(-x))
                }
            })
            .sum()
    }

    /// The 15-point Kronrod rule integrates x^k exactly for k <= 22 and the
    /// 7-point Gauss rule for k <= 13 (exact moments 2 / (k + 1) for even
    /// k, 0 for odd k).
    #[test]
    fn the_rules_integrate_polynomials_exactly() {
        let gauss_nodes = [
            KRONROD_NODES[1],
            KRONROD_NODES[3],
            KRONROD_NODES[5],
            KRONROD_NODES[7],
        ];
        for k in 0..=22 {
            let exact = if k % 2 == 0 {
                2.0 / (k + 1) as f64
            } else {
                0.0
            };
            let kr = rule(&KRONROD_NODES, &KRONROD_WEIGHTS, |x| x.powi(k));
            assert!((kr - exact).abs() < 1e-15, "Kronrod x^{k}: {kr} vs {exact}");
            if k <= 13 {
                let g = rule(&gauss_nodes, &GAUSS_WEIGHTS, |x| x.powi(k));
                assert!((g - exact).abs() < 1e-15, "Gauss x^{k}: {g} vs {exact}");
            }
        }
        // And not beyond: x^24 is not exact for Kronrod, x^14 not for Gauss.
        let kr = rule(&KRONROD_NODES, &KRONROD_WEIGHTS, |x| x.powi(24));
        assert!((kr - 2.0 / 25.0).abs() > 1e-9);
    }

    /// Length of the union of the pieces' sections on the line y = c.
    fn union_length(pieces: &[Piece], c: f64) -> f64 {
        let mut ivs: Vec<(f64, f64)> = pieces.iter().filter_map(|p| p.section(c)).collect();
        ivs.sort_by(|a, b| a.0.total_cmp(&b.0));
        let (mut total, mut cur): (f64, Option<(f64, f64)>) = (0.0, None);
        for iv in ivs {
            cur = match cur {
                Some(c) if iv.0 <= c.1 => Some((c.0, c.1.max(iv.1))),
                Some(c) => {
                    total += c.1 - c.0;
                    Some(iv)
                }
                None => Some(iv),
            };
        }
        total + cur.map_or(0.0, |c| c.1 - c.0)
    }

    /// Dropping covered capsules leaves the union of a ragged chain's
    /// capsules unchanged on every line (brute force: the union of all
    /// sections, before and after, on 2,000 lines), and drops most of them
    /// (the chain wiggles by about a metre per metre; reach 50 m).
    #[test]
    fn dropping_covered_capsules_keeps_the_union() {
        // A fixed-seed ragged chain: a random walk northwards.
        let mut seed: u64 = 0x9e37_79b9_7f4a_7c15;
        let mut unit = || {
            seed ^= seed << 13;
            seed ^= seed >> 7;
            seed ^= seed << 17;
            (seed >> 11) as f64 / (1u64 << 53) as f64
        };
        let mut pts = vec![(0.0, 0.0)];
        for _ in 0..600 {
            let &(x, y) = pts.last().unwrap();
            pts.push((x + 2.0 * unit() - 1.0, y + 1.2 * unit() - 0.2));
        }
        let r = 50.0;
        let all: Vec<Piece> = pts
            .windows(2)
            .map(|w| Piece::capsule(w[0], w[1], r))
            .collect();
        let mut kept = all.clone();
        drop_covered_capsules(&mut kept, 0, &crate::interrupt::Never).unwrap();
        assert!(
            kept.len() * 3 < all.len(),
            "kept {} of {}",
            kept.len(),
            all.len()
        );
        let (y_lo, y_hi) = all
            .iter()
            .map(Piece::y_range)
            .fold((f64::INFINITY, f64::NEG_INFINITY), |a, b| {
                (a.0.min(b.0), a.1.max(b.1))
            });
        for k in 0..2000 {
            let c = y_lo + (y_hi - y_lo) * (k as f64 + 0.5) / 2000.0;
            let (want, got) = (union_length(&all, c), union_length(&kept, c));
            assert!(
                (want - got).abs() <= 1e-9 * want.max(1.0),
                "line {c}: {want} vs {got}"
            );
        }
    }

    /// Arcs over the circle: three arcs of 150 degrees cover it, two do not
    /// (common practice, no source).
    #[test]
    fn arcs_cover_the_circle_only_when_they_do() {
        let deg = |d: f64| d / 90.0;
        let mut chosen = Vec::new();
        let mut three = vec![
            (deg(0.0), deg(150.0), 0),
            (deg(120.0), deg(270.0), 1),
            (deg(250.0), deg(400.0), 2),
        ];
        assert!(covers_circle(&mut three, &mut chosen));
        chosen.sort_unstable();
        assert_eq!(chosen, vec![0, 1, 2]);
        let mut two = vec![(deg(0.0), deg(150.0), 0), (deg(200.0), deg(370.0), 1)];
        assert!(!covers_circle(&mut two, &mut chosen));
    }

    #[test]
    fn sections_of_discs_and_capsules() {
        assert_eq!(disc_section((0.0, 0.0), 5.0, 3.0), Some((-4.0, 4.0)));
        assert_eq!(disc_section((0.0, 0.0), 5.0, 5.0), None);
        // A horizontal capsule from (0,0) to (10,0), radius 2.
        let c = Piece::capsule((0.0, 0.0), (10.0, 0.0), 2.0);
        assert_eq!(c.section(0.0), Some((-2.0, 12.0)));
        let (lo, hi) = c.section(1.0).unwrap();
        assert!((lo + 3f64.sqrt()).abs() < 1e-12 && (hi - 10.0 - 3f64.sqrt()).abs() < 1e-12);
        assert_eq!(c.section(2.5), None);
        // A vertical capsule: the rectangle gives the width between the ends.
        let v = Piece::capsule((0.0, 0.0), (0.0, 10.0), 2.0);
        let (lo, hi) = v.section(5.0).unwrap();
        assert!((lo + 2.0).abs() < 1e-12 && (hi - 2.0).abs() < 1e-12);
        let (lo, hi) = v.section(11.0).unwrap();
        assert!((lo + 3f64.sqrt()).abs() < 1e-12 && (hi - 3f64.sqrt()).abs() < 1e-12);
    }
}

#[cfg(test)]
mod interrupt_tests {
    use super::*;
    use crate::interrupt::{AfterChecks, Never};

    fn square(lon: f64, lat: f64, h: f64) -> Prepared {
        Prepared::new(&crate::testing::square(lon, lat, h))
    }

    /// Stopped at each of its checks in turn, the share reports the
    /// interrupt, and once let run it gives the uninterrupted answer: one
    /// plane (a block) and pieces (a 1-degree box).
    #[test]
    fn an_interrupt_at_any_check_stops_the_share_cleanly() {
        let park = Feature {
            id: 1,
            reach: 804.672,
            geometry: Prepared::new(&Geometry::point(10.001, 45.0)),
        };
        let big = Feature {
            id: 2,
            reach: 30_000.0,
            geometry: Prepared::new(&Geometry::point(10.2, 45.1)),
        };
        for (g, f) in [
            (square(10.0, 45.0, 0.01), &park),
            (square(10.0, 45.0, 0.5), &big),
        ] {
            let want = coverage_share(&g, &[f], &Never).unwrap().unwrap();
            assert!(want > 0.0 && want < 1.0, "{want}");
            let mut stopped = 0;
            for n in 0.. {
                match coverage_share(&g, &[f], &AfterChecks::new(n)) {
                    Err(ShareError::Geom(GeomError::Interrupted)) => stopped += 1,
                    Ok(got) => {
                        assert_eq!(got, Some(want));
                        break;
                    }
                    Err(e) => panic!("{e}"),
                }
            }
            assert!(stopped > 0, "the share never asked");
        }
    }
}
