//! A geometry prepared for measuring: its vertices as (lon, lat) pairs,
//! split into isolated points, line strings and polygons, with a bounding
//! ball around every edge and around the whole geometry.
//!
//! A bounding ball is a centre and a radius in metres such that every point
//! of the element (a vertex, or every point of a geodesic edge) lies within
//! that geodesic distance of the centre. For an edge the centre is the
//! longitude/latitude midpoint of its ends and the radius the larger
//! distance from it to either end: geodesic balls of radius well below the
//! convexity radius of the ellipsoid (thousands of kilometres) contain the
//! geodesic between any two of their points. Radii are rounded up by the
//! local metric's error bound, so they never understate. Balls larger than
//! [`MAX_BALL_RADIUS`] are given an infinite radius (no pruning).
//!
//! Lower bounds on distances between elements come from their balls:
//! `d(c1, c2) - r1 - r2 <= d(x1, x2)` for any points of the two elements
//! (triangle inequality), so a pair whose lower bound exceeds the distance
//! asked about is skipped without an exact computation.

use crate::error::GeomError;
use crate::geodesy::{inverse, local};
use crate::geometry::{Geometry, Shape};
use crate::interrupt::{Interrupt, Never};
use crate::memory;
use crate::proximity::balltree::BallTree;
use crate::proximity::boxes::LonLatBox;

/// A (longitude, latitude) pair in degrees.
pub type LonLat = (f64, f64);

/// Balls larger than this (metres) are treated as unbounded.
pub const MAX_BALL_RADIUS: f64 = 2_000_000.0;

/// A centre and a radius (metres) enclosing an element, with the centre's
/// Earth-centred Cartesian coordinates (metres) for cheap lower bounds.
///
/// `xyz` lies within [`CENTRE_SHIFT`] of the Earth-centred point of
/// `centre` (exactly it, to f64 rounding, for a ball made here; rounded to
/// f32 for one read back from a [`BallCore`]), and `radius` bounds both the
/// geodesic distance from `centre` and the straight distance from `xyz` to
/// every point of the element.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Ball {
    pub centre: LonLat,
    pub radius: f64,
    pub xyz: [f64; 3],
}

/// How far (metres) an Earth-centred point of the ellipsoid moves when its
/// coordinates are rounded to f32: each coordinate's magnitude is below
/// the equatorial radius 6,378,137 m < 2^23, where consecutive f32 values
/// are at most 2^-1 m apart, so rounding to nearest moves each coordinate
/// by at most 0.25 m and the point by at most 0.25 * sqrt(3) = 0.43301 m
/// (rounded up here).
pub const CENTRE_SHIFT: f64 = 0.4331;

/// What [`Prepared`] and [`BallTree`] store of a ball (16 bytes instead of
/// 48): its centre's Earth-centred coordinates rounded to f32 and a
/// radius rounded outward to f32. The centre's (lon, lat) is derived from
/// the element's vertices by [`Prepared::ball`] (a group's from its middle
/// element), with the same arithmetic that made the ball.
///
/// Enclosure, for a ball of true centre C (on the ellipsoid; `xyz` in f64
/// is C up to nanometres, covered by the 1 µm of [`chord_lower`] and
/// [`arc_upper`]) and true radius r (every point x of the element has
/// d(C, x) <= r, d the geodesic distance): let X be `xyz` rounded to f32
/// and s = |C - X|, at most [`CENTRE_SHIFT`]. The stored radius is
/// R = next_up(f32(r + s)) >= r + s. Then for every point x of the element
/// (1) d(C, x) <= r <= R: the geodesic bounds from the (lon, lat) centre
/// ([`crate::proximity::balltree::tight_gap`], [`LonLatBox::around`]) stay
/// bounds; (2) |X - x| <= |X - C| + |C - x| <= s + d(C, x) <= R (a chord
/// never exceeds the geodesic): the straight distance from the stored
/// centre is bounded too. So for two stored balls and points x, y of
/// their elements, |X1 - X2| <= |X1 - x| + |x - y| + |y - X2|, i.e.
/// `|X1 - X2| - R1 - R2 <= |x - y| <= d(x, y)`: [`BallCore::gap`],
/// computed in f64 from the f32 values (exactly representable), is still a
/// lower bound, and upper bounds from stored centres add
/// 2 [`CENTRE_SHIFT`] to the chord ([`arc_upper_within`]). Every bound
/// only prunes: no answer depends on the rounding.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct BallCore {
    pub xyz: [f32; 3],
    pub radius: f32,
}

/// `x` rounded up to an f32 (infinity for NaN: no pruning).
#[inline]
pub fn f32_up(x: f64) -> f32 {
    if x.is_nan() {
        return f32::INFINITY;
    }
    // Rounding to nearest, then one step up, is at least x.
    (x as f32).next_up()
}

impl BallCore {
    /// The stored form of `ball` (whose `xyz` is its centre's Earth-centred
    /// point, to f64 rounding): the centre rounded to f32 and the radius
    /// grown by how far that moved it, rounded up (see the type's doc).
    pub fn enclosing(ball: &Ball) -> BallCore {
        let xyz = ball.xyz.map(|v| v as f32);
        // Each difference is exact (an f64 less its own f32 rounding).
        let s = (0..3)
            .map(|k| (ball.xyz[k] - f64::from(xyz[k])).powi(2))
            .sum::<f64>()
            .sqrt();
        BallCore {
            xyz,
            radius: if ball.radius.is_infinite() {
                f32::INFINITY
            } else {
                f32_up(ball.radius + s)
            },
        }
    }

    /// The centre's Earth-centred coordinates in f64 (exact).
    #[inline]
    pub fn centre(&self) -> [f64; 3] {
        self.xyz.map(f64::from)
    }

    /// A lower bound on the distance between any point of the element of
    /// `self` and any point of that of `other` (see the type's doc);
    /// negative infinity when either radius is infinite.
    #[inline]
    pub fn gap(&self, other: &BallCore) -> f64 {
        gap(
            &self.centre(),
            f64::from(self.radius),
            &other.centre(),
            f64::from(other.radius),
        )
    }

    /// [`BallCore::gap`] to a ball given whole.
    #[inline]
    pub fn gap_to(&self, other: &Ball) -> f64 {
        gap(
            &self.centre(),
            f64::from(self.radius),
            &other.xyz,
            other.radius,
        )
    }

    /// The whole ball, with `centre` as its (lon, lat) centre.
    #[inline]
    pub fn with_centre(&self, centre: LonLat) -> Ball {
        Ball {
            centre,
            radius: f64::from(self.radius),
            xyz: self.centre(),
        }
    }
}

/// `chord - r1 - r2`: a lower bound on the distance between any points of
/// two balls whose radii bound the straight distance from their centres.
#[inline]
fn gap(a: &[f64; 3], ra: f64, b: &[f64; 3], rb: f64) -> f64 {
    if ra.is_infinite() || rb.is_infinite() {
        return f64::NEG_INFINITY;
    }
    chord_lower(a, b) - ra - rb
}

/// The (lon, lat) centre of the ball of the edge a-b ([`Ball::edge_from`]):
/// the midpoint of the ends' longitudes (unwrapped) and latitudes.
#[inline]
pub fn edge_centre(a: LonLat, b: LonLat) -> LonLat {
    (a.0 + wrap_delta(a.0, b.0) / 2.0, (a.1 + b.1) / 2.0)
}

/// Earth-centred, Earth-fixed Cartesian coordinates (metres) of a point on
/// the WGS84 ellipsoid (height 0): x = N cos(lat) cos(lon),
/// y = N cos(lat) sin(lon), z = N (1 - e^2) sin(lat) (NIMA TR8350.2, eq.
/// 4-14, from memory).
pub fn ecef(p: LonLat) -> [f64; 3] {
    use crate::geodesy::ellipsoid::{A, E2};
    let (sin_lat, cos_lat) = p.1.to_radians().sin_cos();
    let (sin_lon, cos_lon) = p.0.to_radians().sin_cos();
    // The prime-vertical radius N = a / sqrt(1 - e^2 sin^2 lat), as
    // ellipsoid::prime_vertical_radius, from the sine at hand.
    let n = A / (1.0 - E2 * sin_lat * sin_lat).sqrt();
    [
        n * cos_lat * cos_lon,
        n * cos_lat * sin_lon,
        n * (1.0 - E2) * sin_lat,
    ]
}

/// An upper bound on the geodesic distance between two points from their
/// chord (see [`Ball::edge_from`]); infinite beyond a quarter circumference.
pub fn arc_upper(a: &[f64; 3], b: &[f64; 3]) -> f64 {
    arc_upper_within(a, b, 0.0)
}

/// [`arc_upper`] for points known only to within `slack` metres (the sum
/// of both points' shifts, e.g. 2 [`CENTRE_SHIFT`] for two stored
/// centres): the true chord is at most the chord between them plus
/// `slack`, and the bound grows with the chord.
pub fn arc_upper_within(a: &[f64; 3], b: &[f64; 3], slack: f64) -> f64 {
    use crate::geodesy::ellipsoid::MIN_MERIDIAN_RADIUS;
    let (dx, dy, dz) = (a[0] - b[0], a[1] - b[1], a[2] - b[2]);
    let chord = (dx * dx + dy * dy + dz * dz).sqrt() + slack;
    let x = chord / (2.0 * MIN_MERIDIAN_RADIUS);
    if x >= 0.7 {
        return f64::INFINITY;
    }
    2.0 * MIN_MERIDIAN_RADIUS * x.asin() * (1.0 + 1e-12) + 1e-6
}

/// A lower bound on the geodesic distance between two points: the straight
/// chord between them through the ellipsoid is never longer than any path
/// on its surface. Rounded down by 1 µm (far above the round-off of
/// coordinates of magnitude 6.4e6 m).
pub fn chord_lower(a: &[f64; 3], b: &[f64; 3]) -> f64 {
    let (dx, dy, dz) = (a[0] - b[0], a[1] - b[1], a[2] - b[2]);
    ((dx * dx + dy * dy + dz * dz).sqrt() - 1e-6).max(0.0)
}

/// Longitude difference `b - a` reduced to (-180, 180].
pub fn wrap_delta(a: f64, b: f64) -> f64 {
    let d = b - a;
    if -180.0 < d && d <= 180.0 {
        return d; // what the remainder below gives, without its cost
    }
    let d = d % 360.0;
    if d > 180.0 {
        d - 360.0
    } else if d <= -180.0 {
        d + 360.0
    } else {
        d
    }
}

/// An upper bound on the geodesic distance between two points (metres):
/// the local metric plus its error bound where that is finite, otherwise
/// the exact distance.
pub fn distance_upper(p: LonLat, q: LonLat) -> f64 {
    let (d, bound) = local::local_distance_with_bound(p, q);
    if bound.is_finite() {
        d + bound
    } else {
        inverse::distance(p.0, p.1, q.0, q.1)
    }
}

/// A lower bound on the geodesic distance between two points (metres).
pub fn distance_lower(p: LonLat, q: LonLat) -> f64 {
    let (d, bound) = local::local_distance_with_bound(p, q);
    if bound.is_finite() {
        (d - bound).max(0.0)
    } else {
        inverse::distance(p.0, p.1, q.0, q.1)
    }
}

impl Ball {
    /// The ball of one point.
    pub fn point(p: LonLat) -> Ball {
        Ball {
            centre: p,
            radius: 0.0,
            xyz: ecef(p),
        }
    }

    /// A ball around the geodesic edge a-b.
    pub fn edge(a: LonLat, b: LonLat) -> Ball {
        Ball::edge_from(a, b, &ecef(a), &ecef(b))
    }

    /// [`Ball::edge`] from the ends' Earth-centred coordinates. The radius
    /// bounds the geodesic distance from the centre to each end by the chord:
    /// a geodesic's curvature never exceeds the surface's largest normal
    /// curvature 1/M(0) (M(0) = a(1 - e^2), the smallest radius of
    /// curvature), so by Schur's comparison theorem a geodesic of length s
    /// spans a chord of at least 2 M(0) sin(s / (2 M(0))), i.e.
    /// s <= 2 M(0) asin(chord / (2 M(0))).
    pub fn edge_from(a: LonLat, b: LonLat, xa: &[f64; 3], xb: &[f64; 3]) -> Ball {
        let centre = edge_centre(a, b);
        let xyz = ecef(centre);
        let radius = arc_upper(&xyz, xa).max(arc_upper(&xyz, xb));
        Ball {
            centre,
            radius: if radius > MAX_BALL_RADIUS {
                f64::INFINITY
            } else {
                radius
            },
            xyz,
        }
    }

    /// A lower bound on the distance between any point of `self` and any
    /// point of `other` (may be negative when the balls overlap).
    pub fn gap(&self, other: &Ball) -> f64 {
        gap(&self.xyz, self.radius, &other.xyz, other.radius)
    }

    /// [`Ball::gap`] to a stored ball.
    #[inline]
    pub fn gap_to(&self, other: &BallCore) -> f64 {
        other.gap_to(self)
    }
}

/// One measurable element: an isolated point or a geodesic edge.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Element {
    Point(LonLat),
    Edge(LonLat, LonLat),
}

/// Geometries with more elements than this get an R*-tree of their
/// elements, so that a query near one part does not scan all its edges.
pub const ELEMENT_INDEX_MIN: usize = 128;

/// Which polygon and ring an edge belongs to.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct RingRef {
    pub polygon: u32,
    pub ring: u32,
}

/// Where a ring's edges begin among the elements, which ring it is, and
/// whether it encloses the north pole (see [`crate::proximity::contain`]).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct RingStart {
    pub start: u32,
    pub ring: RingRef,
    pub north: bool,
}

/// A line or a ring: (lon, lat) vertices.
pub type Chain = Box<[LonLat]>;

/// A polygon: its closed rings, the first the exterior.
pub type Rings = Box<[Chain]>;

/// A geometry ready for distance queries.
///
/// Stored compactly (a layer keeps one per feature): boxed slices rather
/// than growable arrays, 16-byte balls ([`BallCore`]), and everything a
/// single point does not need (lines, polygons, their element starts, the
/// box and the ball tree) in one optional box, [`Parts`]. A point costs
/// 96 bytes here plus its (lon, lat) and its ball.
#[derive(Clone, Debug, Default)]
pub struct Prepared {
    /// Isolated points (of points and multipoints).
    pub points: Box<[LonLat]>,
    /// The ball of every element (without its (lon, lat) centre:
    /// [`Prepared::ball`] gives the whole ball), in element order: the
    /// isolated points, then the edges of every line, then those of every
    /// ring. The elements themselves are not stored: [`Prepared::element`]
    /// reads them from the vertex arrays.
    pub balls: Box<[BallCore]>,
    /// Everything but isolated points; `None` for a single point or an
    /// empty geometry.
    parts: Option<Box<Parts>>,
    /// A ball around the whole geometry (`None` when empty).
    pub ball: Option<Ball>,
}

/// What [`Prepared`] holds beyond a single point.
#[derive(Clone, Debug)]
pub struct Parts {
    /// Line strings, each of 2 or more vertices.
    lines: Box<[Chain]>,
    /// Polygons, each a list of closed rings (the first is the exterior).
    polygons: Box<[Rings]>,
    /// Where each line's edges begin in `balls`, in order.
    line_starts: Box<[u32]>,
    /// Every ring, in order ([`Prepared::owner`] reads them).
    ring_starts: Box<[RingStart]>,
    /// A box around the whole geometry, unwrapped.
    bbox: LonLatBox,
    /// See [`Prepared::tree`].
    tree: Option<BallTree>,
}

/// The tree of a geometry of one element: no groups.
static ONE_ELEMENT: BallTree = BallTree::ONE_ELEMENT;

/// The (lon, lat) pairs of an interleaved part (a closed ring when
/// `ring`), in an array allocated fallibly, with vertices at a pole given
/// the meridian of their edge ([`meridians_at_poles`]).
fn lonlat(
    part: &[f64],
    width: usize,
    ring: bool,
    stop: &dyn Interrupt,
) -> Result<Vec<LonLat>, GeomError> {
    let mut chain = memory::vec_with_capacity(part.len() / width)?;
    for run in part.chunks(width * (CHECK_EVERY / 8)) {
        stop.check()?;
        chain.extend(run.chunks_exact(width).map(|v| (v[0], v[1])));
    }
    if chain.iter().any(|p| at_pole(*p)) {
        Ok(meridians_at_poles(&chain, ring))
    } else {
        Ok(chain)
    }
}

/// True for a vertex at a pole (latitude exactly +90 or -90), where its
/// longitude means nothing.
pub fn at_pole(p: LonLat) -> bool {
    p.1.abs() == 90.0
}

/// A chain of vertices (a line, or a closed ring when `ring`) with every
/// vertex at a pole given the longitude of the edge it ends: an edge from
/// a point to a pole is that point's meridian, whatever longitude the data
/// wrote at the pole (0, 360, 540, -180 all name the same point). Where the
/// two edges at a pole vertex then arrive at different longitudes, the
/// vertex becomes two, joined by an edge of length 0 along the pole: in the
/// (longitude, latitude) picture that edge is the segment of the line
/// latitude = ±90 between the two meridians, which is what the
/// point-in-polygon ray test and Karney's area (whose pole edge spans the
/// wedge between the meridians) need to see. An edge whose two ends are
/// both at poles is left as written. A ring stays closed.
pub fn meridians_at_poles(chain: &[LonLat], ring: bool) -> Vec<LonLat> {
    if chain.len() < 2 {
        return chain.to_vec();
    }
    let mut out: Vec<LonLat> = Vec::with_capacity(chain.len() + 4);
    for w in chain.windows(2) {
        let (mut a, mut b) = (w[0], w[1]);
        match (at_pole(a), at_pole(b)) {
            (true, false) => a.0 = b.0,
            (false, true) => b.0 = a.0,
            _ => {}
        }
        if out.last() != Some(&a) {
            out.push(a);
        }
        out.push(b);
    }
    if ring && out.first() != out.last() {
        out.push(out[0]);
    }
    out
}

/// How many elements of work pass between two interrupt checks.
const CHECK_EVERY: usize = 1 << 16;

/// Bytes an R*-tree of `n` entries of `entry` bytes takes while it is
/// bulk loaded and once built: the entries, the nodes above them (rstar
/// stores each entry in a node enum of about 64 bytes; parents add about
/// a tenth), and the slabs the bulk load sorts (a second copy of the
/// entries). An estimate for [`memory::probe`], rounded up.
pub fn tree_bytes(n: usize, entry: usize) -> usize {
    n.saturating_mul(2 * entry + 72)
}

/// The vertex arrays of a geometry being prepared.
#[derive(Default)]
struct Gathered {
    points: Vec<LonLat>,
    lines: Vec<Chain>,
    polygons: Vec<Rings>,
}

impl Gathered {
    fn add(&mut self, g: &Geometry, stop: &dyn Interrupt) -> Result<(), GeomError> {
        let width = g.dims.width();
        let chain = |v: &[f64], ring: bool| -> Result<Chain, GeomError> {
            Ok(lonlat(v, width, ring, stop)?.into_boxed_slice())
        };
        let add_polygon = |rings: &[Vec<f64>], this: &mut Gathered| -> Result<(), GeomError> {
            let mut out: Vec<Chain> = memory::vec_with_capacity(rings.len())?;
            for r in rings.iter().filter(|r| !r.is_empty()) {
                out.push(chain(r, true)?);
            }
            if !out.is_empty() {
                memory::reserve_one(&mut this.polygons)?;
                this.polygons.push(out.into_boxed_slice());
            }
            Ok(())
        };
        match &g.shape {
            Shape::Point(v) if !v.is_empty() => {
                memory::reserve_one(&mut self.points)?;
                self.points.push((v[0], v[1]));
            }
            Shape::Point(_) => {}
            Shape::LineString(v) => {
                if !v.is_empty() {
                    memory::reserve_one(&mut self.lines)?;
                    self.lines.push(chain(v, false)?);
                }
            }
            Shape::Polygon(rings) => add_polygon(rings, self)?,
            Shape::MultiPoint(points) => {
                memory::reserve(&mut self.points, points.len())?;
                for v in points.iter().filter(|v| !v.is_empty()) {
                    self.points.push((v[0], v[1]));
                }
            }
            Shape::MultiLineString(lines) => {
                memory::reserve(&mut self.lines, lines.len())?;
                for v in lines.iter().filter(|v| !v.is_empty()) {
                    self.lines.push(chain(v, false)?);
                }
            }
            Shape::MultiPolygon(polygons) => {
                for rings in polygons {
                    add_polygon(rings, self)?;
                }
            }
            Shape::GeometryCollection(members) => {
                for m in members {
                    self.add(m, stop)?;
                }
            }
        }
        Ok(())
    }
}

impl Prepared {
    /// Prepares a geometry that has passed [`crate::geometry::validate`].
    /// Empty parts are dropped.
    ///
    /// Panics (an SQL error under the SQL layer's guard, not an abort) when
    /// memory runs out; callers that can report errors use
    /// [`Prepared::build`].
    pub fn new(g: &Geometry) -> Prepared {
        Prepared::build(g, &Never).unwrap_or_else(|e| panic!("preparing a geometry: {e}"))
    }

    /// [`Prepared::new`], asking `stop` every [`CHECK_EVERY`] elements
    /// whether to give up (then `Err(GeomError::Interrupted)`), and with
    /// its big arrays allocated fallibly (`Err(GeomError::OutOfMemory)`
    /// instead of aborting the process). Nothing outside the value is
    /// changed either way.
    pub fn build(g: &Geometry, stop: &dyn Interrupt) -> Result<Prepared, GeomError> {
        let mut gathered = Gathered::default();
        gathered.add(g, stop)?;
        Prepared::index(gathered, stop)
    }

    /// An estimate, in bytes, of the memory [`Prepared::build`] needs for
    /// `g` while it works and afterwards (rounded up): per vertex its
    /// (lon, lat) pair, its element's ball, and (while its edges' balls
    /// are made) its Earth-centred coordinates; the ball tree; the value
    /// and its [`Parts`].
    pub fn estimated_bytes(g: &Geometry) -> usize {
        let n = g.vertex_count();
        let per_vertex = std::mem::size_of::<LonLat>()
            + std::mem::size_of::<BallCore>()
            + std::mem::size_of::<[f64; 3]>();
        std::mem::size_of::<Prepared>()
            + std::mem::size_of::<Parts>()
            + n.saturating_mul(per_vertex)
            + BallTree::estimated_bytes(n)
    }

    /// Builds [`Prepared::tree`] if it is missing (see
    /// [`BallTree::build`] for `stop` and the errors).
    pub fn add_ball_tree(&mut self, stop: &dyn Interrupt) -> Result<(), GeomError> {
        if self.tree().is_none() && self.parts.is_some() {
            let tree = BallTree::build(self, stop)?;
            if let Some(parts) = &mut self.parts {
                parts.tree = Some(tree);
            }
        }
        Ok(())
    }

    fn index(gathered: Gathered, stop: &dyn Interrupt) -> Result<Prepared, GeomError> {
        let Gathered {
            points,
            lines,
            polygons,
        } = gathered;
        let chains = lines
            .iter()
            .chain(polygons.iter().flat_map(|rings| rings.iter()))
            .map(|c| c.len().saturating_sub(1))
            .sum::<usize>();
        let total = points.len() + chains;
        let mut elements: Vec<BallCore> = memory::vec_with_capacity(total)?;
        for &p in &points {
            elements.push(BallCore::enclosing(&Ball::point(p)));
        }
        let mut ring_starts: Vec<RingStart> = Vec::new();
        let mut line_starts: Vec<u32> = Vec::new();
        let mut xyz: Vec<[f64; 3]> = Vec::new();
        let mut edges = |chain: &[LonLat], out: &mut Vec<BallCore>| -> Result<(), GeomError> {
            xyz.clear();
            memory::reserve(&mut xyz, chain.len())?;
            for run in chain.chunks(CHECK_EVERY / 8) {
                stop.check()?;
                xyz.extend(run.iter().map(|&p| ecef(p)));
            }
            for k in 0..chain.len().saturating_sub(1) {
                if k % CHECK_EVERY == CHECK_EVERY - 1 {
                    stop.check()?;
                }
                let (a, b) = (chain[k], chain[k + 1]);
                out.push(BallCore::enclosing(&Ball::edge_from(
                    a,
                    b,
                    &xyz[k],
                    &xyz[k + 1],
                )));
            }
            Ok(())
        };
        memory::reserve(&mut line_starts, lines.len())?;
        for line in &lines {
            line_starts.push(elements.len() as u32);
            edges(line, &mut elements)?;
        }
        memory::reserve(&mut ring_starts, polygons.iter().map(|r| r.len()).sum())?;
        for (pi, rings) in polygons.iter().enumerate() {
            for (ri, ring) in rings.iter().enumerate() {
                ring_starts.push(RingStart {
                    start: elements.len() as u32,
                    ring: RingRef {
                        polygon: pi as u32,
                        ring: ri as u32,
                    },
                    north: crate::proximity::contain::encloses_north_pole(ring),
                });
                edges(ring, &mut elements)?;
            }
        }
        drop(xyz);
        stop.check()?;
        let mut p = Prepared {
            points: points.into_boxed_slice(),
            balls: elements.into_boxed_slice(),
            parts: None,
            ball: None,
        };
        let whole = p.balls.len() > 1 || !lines.is_empty() || !polygons.is_empty();
        if whole {
            p.parts = Some(Box::new(Parts {
                lines: lines.into_boxed_slice(),
                polygons: polygons.into_boxed_slice(),
                line_starts: line_starts.into_boxed_slice(),
                ring_starts: ring_starts.into_boxed_slice(),
                bbox: LonLatBox {
                    lon_lo: 0.0,
                    lon_hi: 0.0,
                    lat_lo: 0.0,
                    lat_hi: 0.0,
                },
                tree: None,
            }));
            let bbox = bounding_box(&p).map(|b| p.with_enclosed_poles(b));
            if let (Some(parts), Some(bbox)) = (&mut p.parts, bbox) {
                parts.bbox = bbox;
            }
            stop.check()?;
        }
        p.ball = whole_ball(&p);
        stop.check()?;
        if p.balls.len() > ELEMENT_INDEX_MIN {
            p.add_ball_tree(stop)?;
        }
        Ok(p)
    }

    /// Line strings, each of 2 or more vertices.
    pub fn lines(&self) -> &[Chain] {
        self.parts.as_ref().map_or(&[], |p| &p.lines)
    }

    /// Polygons, each a list of closed rings (the first is the exterior).
    pub fn polygons(&self) -> &[Rings] {
        self.parts.as_ref().map_or(&[], |p| &p.polygons)
    }

    /// Every ring in order (polygon by polygon), with whether it encloses
    /// the north pole (see [`crate::proximity::contain`]).
    pub fn rings(&self) -> impl Iterator<Item = (&[LonLat], bool)> + '_ {
        let starts = self.parts.as_ref().map_or(&[][..], |p| &p.ring_starts);
        self.polygons()
            .iter()
            .flat_map(|rings| rings.iter())
            .zip(starts)
            .map(|(ring, start)| (&ring[..], start.north))
    }

    /// The lines and rings, in element order.
    pub fn chains(&self) -> impl Iterator<Item = &[LonLat]> + '_ {
        self.lines()
            .iter()
            .chain(self.polygons().iter().flat_map(|rings| rings.iter()))
            .map(|c| &c[..])
    }

    /// A box around the whole geometry, unwrapped (`None` when empty).
    pub fn bbox(&self) -> Option<LonLatBox> {
        match (&self.parts, self.points.first()) {
            (Some(parts), _) => Some(parts.bbox),
            (None, Some(&(lon, lat))) => Some(LonLatBox {
                lon_lo: lon,
                lon_hi: lon,
                lat_lo: lat,
                lat_hi: lat,
            }),
            (None, None) => None,
        }
    }

    /// The hierarchy of balls over the elements: the element index of a
    /// geometry of more than [`ELEMENT_INDEX_MIN`] elements, and for
    /// best-first nearest searches ([`Prepared::add_ball_tree`]; layer
    /// features always have one). A single point's is the point itself.
    pub fn tree(&self) -> Option<&BallTree> {
        match &self.parts {
            Some(parts) => parts.tree.as_ref(),
            None if self.balls.len() == 1 => Some(&ONE_ELEMENT),
            None => None,
        }
    }

    /// Bytes held by the value and what it owns (the capacities of its
    /// arrays; for memory reports).
    pub fn bytes(&self) -> usize {
        use std::mem::size_of;
        let mut n = size_of::<Prepared>()
            + self.points.len() * size_of::<LonLat>()
            + self.balls.len() * size_of::<BallCore>();
        if let Some(parts) = &self.parts {
            n += size_of::<Parts>()
                + parts.lines.len() * size_of::<Chain>()
                + parts.polygons.len() * size_of::<Rings>()
                + parts.polygons.iter().map(|r| r.len()).sum::<usize>() * size_of::<Chain>()
                + self.chains().map(|c| c.len()).sum::<usize>() * size_of::<LonLat>()
                + parts.line_starts.len() * size_of::<u32>()
                + parts.ring_starts.len() * size_of::<RingStart>()
                + parts.tree.as_ref().map_or(0, BallTree::bytes);
        }
        n
    }

    /// The (lon, lat) centres of the elements' balls, in element order
    /// (what [`Prepared::ball`] derives, without looking each element up).
    fn ball_centres(&self) -> impl Iterator<Item = LonLat> + '_ {
        self.points.iter().copied().chain(
            self.chains()
                .flat_map(|chain| chain.windows(2).map(|w| edge_centre(w[0], w[1]))),
        )
    }

    /// The ball of element `i` (below [`Prepared::element_count`]): its
    /// stored core with the centre's (lon, lat) derived from the element.
    #[inline]
    pub fn ball(&self, i: usize) -> Ball {
        self.balls[i].with_centre(self.ball_centre(i))
    }

    /// The (lon, lat) centre of element `i`'s ball.
    #[inline]
    pub fn ball_centre(&self, i: usize) -> LonLat {
        match self.element(i) {
            Element::Point(p) => p,
            Element::Edge(a, b) => edge_centre(a, b),
        }
    }

    /// Element `i` (below [`Prepared::element_count`]), read from the
    /// vertex arrays: an isolated point, or the edge from vertex `k` to
    /// vertex `k + 1` of its line or ring.
    #[inline]
    pub fn element(&self, i: usize) -> Element {
        if i < self.points.len() {
            return Element::Point(self.points[i]);
        }
        let Some(parts) = &self.parts else {
            panic!("element {i} of {}", self.balls.len());
        };
        let in_lines = parts
            .ring_starts
            .first()
            .is_none_or(|r| i < r.start as usize);
        let (chain, start) = if in_lines {
            let k = parts
                .line_starts
                .partition_point(|&start| start as usize <= i)
                - 1;
            (&parts.lines[k], parts.line_starts[k])
        } else {
            let k = parts.ring_starts.partition_point(|r| r.start as usize <= i) - 1;
            let RingStart { start, ring: r, .. } = parts.ring_starts[k];
            (&parts.polygons[r.polygon as usize][r.ring as usize], start)
        };
        let k = i - start as usize;
        Element::Edge(chain[k], chain[k + 1])
    }

    /// How many elements (isolated points and edges) the geometry has.
    pub fn element_count(&self) -> usize {
        self.balls.len()
    }

    /// Every element, in order (see [`Prepared::element`]).
    pub fn elements(&self) -> impl Iterator<Item = Element> + '_ {
        (0..self.balls.len()).map(|i| self.element(i))
    }

    /// The ring element `i` bounds (`None` for points and line edges).
    pub fn owner(&self, i: usize) -> Option<RingRef> {
        let starts = self.parts.as_ref().map_or(&[][..], |p| &p.ring_starts);
        let k = starts.partition_point(|r| r.start as usize <= i);
        (k > 0).then(|| starts[k - 1].ring)
    }

    /// Positions in `elements` of the elements whose boxes meet `query`
    /// (all of them when the geometry has no index). May repeat none.
    pub fn elements_near(&self, query: &LonLatBox) -> Vec<usize> {
        match self.tree() {
            Some(tree) if self.indexed() => {
                let (parts, n) = query.normalised_parts();
                let mut found = Vec::new();
                tree.elements_meeting(self, &parts[..n], &mut found);
                found
            }
            _ => (0..self.balls.len()).collect(),
        }
    }

    /// True when the geometry has more than [`ELEMENT_INDEX_MIN`]
    /// elements: its element index ([`Prepared::tree`]) is asked rather
    /// than every element scanned.
    pub fn indexed(&self) -> bool {
        self.balls.len() > ELEMENT_INDEX_MIN && self.tree().is_some()
    }

    /// True when the geometry has no vertex.
    pub fn is_empty(&self) -> bool {
        self.balls.is_empty()
    }

    /// The vertices from which containment is probed: every isolated point
    /// and the first vertex of every line and ring. If no probe of one
    /// geometry lies inside the other and no edges cross, neither contains
    /// any part of the other.
    pub fn probes(&self) -> impl Iterator<Item = LonLat> + '_ {
        self.points
            .iter()
            .copied()
            .chain(self.chains().map(|chain| chain[0]))
    }
}

/// A ball around all elements: centred on the middle of their centres'
/// longitude/latitude box (longitudes unwrapped around the first centre).
fn whole_ball(g: &Prepared) -> Option<Ball> {
    if g.is_empty() {
        return None;
    }
    let first = g.ball(0).centre;
    let (mut lo_x, mut hi_x, mut lo_y, mut hi_y) = (0.0f64, 0.0f64, first.1, first.1);
    for centre in g.ball_centres() {
        let x = wrap_delta(first.0, centre.0);
        lo_x = lo_x.min(x);
        hi_x = hi_x.max(x);
        lo_y = lo_y.min(centre.1);
        hi_y = hi_y.max(centre.1);
    }
    let centre = (first.0 + (lo_x + hi_x) / 2.0, (lo_y + hi_y) / 2.0);
    let xyz = ecef(centre);
    let mut radius = 0.0f64;
    // The element's stored centre is within CENTRE_SHIFT of its true one.
    for b in &g.balls {
        radius =
            radius.max(arc_upper_within(&xyz, &b.centre(), CENTRE_SHIFT) + f64::from(b.radius));
    }
    Some(Ball {
        centre,
        radius: if radius > MAX_BALL_RADIUS || radius.is_nan() {
            f64::INFINITY
        } else {
            radius
        },
        xyz,
    })
}

/// A box holding every element: the centres' box (longitudes unwrapped
/// around the first) grown by the largest element radius.
impl Prepared {
    /// `b` grown to hold the poles that polygons' exterior rings wind
    /// around: such a ring's area holds its pole, beyond its vertices, and
    /// a layer's index must find the feature for queries there.
    fn with_enclosed_poles(&self, mut b: LonLatBox) -> LonLatBox {
        let starts = self.parts.as_ref().map_or(&[][..], |p| &p.ring_starts);
        for start in starts.iter().filter(|r| r.ring.ring == 0) {
            let exterior = &self.polygons()[start.ring.polygon as usize][0];
            let north = start.north;
            if winds_around_a_pole(exterior) {
                if north {
                    b.lat_hi = 90.0;
                } else {
                    b.lat_lo = -90.0;
                }
                let centre = (b.lon_lo + b.lon_hi) / 2.0;
                b.lon_lo = b.lon_lo.min(centre - 180.0);
                b.lon_hi = b.lon_hi.max(centre + 180.0);
            }
        }
        b
    }
}

/// True when a closed ring's longitudes, followed edge by edge, turn
/// through a whole circle: the ring goes around a pole.
fn winds_around_a_pole(ring: &[LonLat]) -> bool {
    let turn: f64 = ring.windows(2).map(|w| wrap_delta(w[0].0, w[1].0)).sum();
    turn.abs() > 180.0
}

fn bounding_box(g: &Prepared) -> Option<LonLatBox> {
    if g.is_empty() {
        return None;
    }
    let first = g.ball(0).centre;
    let mut b = LonLatBox {
        lon_lo: first.0,
        lon_hi: first.0,
        lat_lo: first.1,
        lat_hi: first.1,
    };
    let mut radius = 0.0f64;
    for (centre, ball) in g.ball_centres().zip(&g.balls) {
        let x = first.0 + wrap_delta(first.0, centre.0);
        b.lon_lo = b.lon_lo.min(x);
        b.lon_hi = b.lon_hi.max(x);
        b.lat_lo = b.lat_lo.min(centre.1);
        b.lat_hi = b.lat_hi.max(centre.1);
        radius = radius.max(f64::from(ball.radius));
    }
    Some(b.grown(radius))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::blob::wkt;

    #[test]
    fn splits_a_collection_into_points_lines_and_polygons() {
        let g = wkt::parse(
            "GEOMETRYCOLLECTION (POINT (1 2), LINESTRING (0 0, 1 1, 2 1), \
             POLYGON ((0 0, 1 0, 1 1, 0 0)), POINT EMPTY)",
        )
        .unwrap();
        let p = Prepared::new(&g);
        assert_eq!(p.points.to_vec(), vec![(1.0, 2.0)]);
        assert_eq!(p.lines().len(), 1);
        assert_eq!(p.polygons().len(), 1);
        assert_eq!(p.element_count(), 1 + 2 + 3);
        assert_eq!(p.element(0), Element::Point((1.0, 2.0)));
        assert_eq!(p.element(2), Element::Edge((1.0, 1.0), (2.0, 1.0)));
        assert_eq!(p.element(5), Element::Edge((1.0, 1.0), (0.0, 0.0)));
        assert_eq!(p.probes().count(), 3);
    }

    #[test]
    fn edge_balls_contain_their_edges() {
        // Every sampled point of the geodesic edge lies inside the ball
        // (checked with the exact inverse).
        let g = inverse::wgs84();
        for (a, b) in [
            ((-131.5, 38.4), (-131.2, 38.9)),
            ((179.9, -16.0), (-179.8, -16.1)),
            ((10.0, 79.0), (12.0, 79.5)),
        ] {
            let ball = Ball::edge(a, b);
            let (s12, azi1, _, _): (f64, f64, f64, f64) =
                geographiclib_rs::InverseGeodesic::inverse(g, a.1, a.0, b.1, b.0);
            for i in 0..=100 {
                let (lat, lon): (f64, f64) = geographiclib_rs::DirectGeodesic::direct(
                    g,
                    a.1,
                    a.0,
                    azi1,
                    s12 * i as f64 / 100.0,
                );
                let d = inverse::distance(ball.centre.0, ball.centre.1, lon, lat);
                assert!(d <= ball.radius, "{d} > {}", ball.radius);
                // The stored ball: geodesic from the (lon, lat) centre and
                // straight from the f32 centre.
                let stored = BallCore::enclosing(&ball);
                assert!(d <= f64::from(stored.radius));
                let x = ecef((lon, lat));
                let c = stored.centre();
                let straight = (0..3).map(|k| (x[k] - c[k]).powi(2)).sum::<f64>().sqrt();
                assert!(straight <= f64::from(stored.radius), "{straight}");
            }
        }
    }

    /// The elements and balls derived from the vertex arrays are those
    /// built from the vertices directly, bit for bit (brute force over a
    /// collection with points, a line, a ring across the antimeridian and
    /// a hole).
    #[test]
    fn derived_elements_and_balls_equal_those_built_directly() {
        let g = wkt::parse(
            "GEOMETRYCOLLECTION (MULTIPOINT ((1 2), (3 4)),              LINESTRING (0 0, 1 1, 2 1), LINESTRING (5 5, 6 6),              POLYGON ((179 -16, -179 -16, -179 -15, 179 -16)),              POLYGON ((0 0, 4 0, 4 4, 0 0), (1 0.5, 3 0.5, 3 2.5, 1 0.5)))",
        )
        .unwrap();
        let p = Prepared::new(&g);
        let mut built = vec![Element::Point((1.0, 2.0)), Element::Point((3.0, 4.0))];
        for chain in p.chains() {
            built.extend(chain.windows(2).map(|w| Element::Edge(w[0], w[1])));
        }
        assert_eq!(p.elements().collect::<Vec<_>>(), built);
        for (i, e) in built.iter().enumerate() {
            let ball = match *e {
                Element::Point(q) => Ball::point(q),
                Element::Edge(a, b) => Ball::edge(a, b),
            };
            let stored = BallCore::enclosing(&ball);
            assert_eq!(p.ball(i), stored.with_centre(ball.centre), "element {i}");
            // The stored ball holds the one built: its centre moved by at
            // most CENTRE_SHIFT and its radius grew by at least that move.
            let c = stored.centre();
            let moved = (0..3)
                .map(|k| (ball.xyz[k] - c[k]).powi(2))
                .sum::<f64>()
                .sqrt();
            assert!(moved <= CENTRE_SHIFT);
            assert!(ball.radius + moved <= f64::from(stored.radius));
        }
        let centres: Vec<LonLat> = (0..built.len()).map(|i| p.ball(i).centre).collect();
        assert_eq!(p.ball_centres().collect::<Vec<_>>(), centres);
    }

    #[test]
    fn wrap_delta_reduces_to_a_half_open_range() {
        assert_eq!(wrap_delta(179.0, -179.0), 2.0);
        assert_eq!(wrap_delta(-179.0, 179.0), -2.0);
        assert_eq!(wrap_delta(0.0, 180.0), 180.0);
        assert_eq!(wrap_delta(0.0, -180.0), 180.0);
        assert_eq!(wrap_delta(10.0, 370.0), 0.0);
    }
}
