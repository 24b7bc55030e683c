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
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Ball {
    pub centre: LonLat,
    pub radius: f64,
    pub xyz: [f64; 3],
}

/// What [`Prepared`] stores of an element's [`Ball`]: its centre's
/// Earth-centred coordinates and its radius (32 bytes instead of 48).
/// The centre's (lon, lat) is derived from the element's vertices by
/// [`Prepared::ball`], with the same arithmetic that made the ball, so the
/// whole ball comes back bit for bit.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct BallCore {
    pub xyz: [f64; 3],
    pub radius: f64,
}

impl BallCore {
    /// [`Ball::gap`] between two balls given by their cores (the same
    /// arithmetic, so the same value).
    #[inline]
    pub fn gap(&self, other: &BallCore) -> f64 {
        if self.radius.is_infinite() || other.radius.is_infinite() {
            return f64::NEG_INFINITY;
        }
        chord_lower(&self.xyz, &other.xyz) - self.radius - other.radius
    }
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
    use crate::geodesy::ellipsoid::{prime_vertical_radius, E2};
    let (sin_lat, cos_lat) = p.1.to_radians().sin_cos();
    let (sin_lon, cos_lon) = p.0.to_radians().sin_cos();
    let n = prime_vertical_radius(p.1);
    [
        n * cos_lat * cos_lon,
        n * cos_lat * sin_lon,
        n * (1.0 - E2) * sin_lat,
    ]
}

/// An upper bound on the geodesic distance between two points from their
/// chord (see [`Ball::edge_from`]); infinite beyond a quarter circumference.
pub fn arc_upper(a: &[f64; 3], b: &[f64; 3]) -> f64 {
    use crate::geodesy::ellipsoid::MIN_MERIDIAN_RADIUS;
    let (dx, dy, dz) = (a[0] - b[0], a[1] - b[1], a[2] - b[2]);
    let chord = (dx * dx + dy * dy + dz * dz).sqrt();
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
        self.core().gap(&other.core())
    }

    /// The ball's Earth-centred centre and radius.
    #[inline]
    pub fn core(&self) -> BallCore {
        BallCore {
            xyz: self.xyz,
            radius: self.radius,
        }
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

/// A geometry ready for distance queries.
#[derive(Clone, Debug, Default)]
pub struct Prepared {
    /// Isolated points (of points and multipoints).
    pub points: Vec<LonLat>,
    /// Line strings, each of 2 or more vertices.
    pub lines: Vec<Vec<LonLat>>,
    /// Polygons, each a list of closed rings (the first is the exterior).
    pub polygons: Vec<Vec<Vec<LonLat>>>,
    /// For each polygon and ring: does the ring enclose the north pole
    /// (see [`crate::proximity::contain`]).
    pub north_pole_rings: Vec<Vec<bool>>,
    /// The ball of every element (without its (lon, lat) centre:
    /// [`Prepared::ball`] gives the whole ball), in element order: the
    /// isolated points, then the edges of every line, then those of every
    /// ring. The elements themselves are not stored: [`Prepared::element`]
    /// reads them from the vertex arrays above.
    pub balls: Vec<BallCore>,
    /// Where each line's edges begin in `balls`, in order.
    pub line_starts: Vec<u32>,
    /// Where each ring's edges begin in `balls`, in order, with the
    /// ring ([`Prepared::owner`] reads it).
    pub ring_starts: Vec<(u32, RingRef)>,
    /// A ball around the whole geometry (`None` when empty).
    pub ball: Option<Ball>,
    /// A box around the whole geometry, unwrapped (`None` when empty).
    pub bbox: Option<LonLatBox>,
    /// The hierarchy of balls over the elements: the element index of a
    /// geometry of more than [`ELEMENT_INDEX_MIN`] elements, and for
    /// best-first nearest searches ([`Prepared::add_ball_tree`]; layer
    /// features always have one).
    pub tree: Option<BallTree>,
}

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
        let mut p = Prepared::default();
        p.add(g, stop)?;
        p.index(stop)?;
        Ok(p)
    }

    /// An estimate, in bytes, of the memory [`Prepared::build`] needs for
    /// `g` while it works and afterwards (rounded up): per vertex its
    /// (lon, lat) pair, its element with ball, owner and Earth-centred
    /// coordinates, and for an indexed geometry the R*-tree.
    pub fn estimated_bytes(g: &Geometry) -> usize {
        let n = g.vertex_count();
        let per_vertex = std::mem::size_of::<LonLat>()
            + std::mem::size_of::<BallCore>()
            + std::mem::size_of::<[f64; 3]>();
        std::mem::size_of::<Prepared>()
            + n.saturating_mul(per_vertex)
            + BallTree::estimated_bytes(n)
    }

    /// Builds [`Prepared::tree`] if it is missing (see
    /// [`BallTree::build`] for `stop` and the errors).
    pub fn add_ball_tree(&mut self, stop: &dyn Interrupt) -> Result<(), GeomError> {
        if self.tree.is_none() {
            let tree = BallTree::build(self, stop)?;
            self.tree = Some(tree);
        }
        Ok(())
    }

    fn add(&mut self, g: &Geometry, stop: &dyn Interrupt) -> Result<(), GeomError> {
        let width = g.dims.width();
        let add_polygon = |rings: &[Vec<f64>], this: &mut Prepared| -> Result<(), GeomError> {
            let mut out: Vec<Vec<LonLat>> = memory::vec_with_capacity(rings.len())?;
            for r in rings.iter().filter(|r| !r.is_empty()) {
                out.push(lonlat(r, width, true, stop)?);
            }
            if !out.is_empty() {
                memory::reserve_one(&mut this.polygons)?;
                this.polygons.push(out);
            }
            Ok(())
        };
        match &g.shape {
            Shape::Point(v) if !v.is_empty() => self.points.push((v[0], v[1])),
            Shape::Point(_) => {}
            Shape::LineString(v) => {
                if !v.is_empty() {
                    self.lines.push(lonlat(v, width, false, stop)?);
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
                    self.lines.push(lonlat(v, width, false, stop)?);
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

    fn index(&mut self, stop: &dyn Interrupt) -> Result<(), GeomError> {
        let chains = self
            .lines
            .iter()
            .chain(self.polygons.iter().flatten())
            .map(|c| c.len().saturating_sub(1))
            .sum::<usize>();
        let total = self.points.len() + chains;
        let mut elements: Vec<BallCore> = memory::vec_with_capacity(total)?;
        for &p in &self.points {
            elements.push(Ball::point(p).core());
        }
        let mut ring_starts = Vec::new();
        let mut line_starts = Vec::new();
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
                out.push(Ball::edge_from(a, b, &xyz[k], &xyz[k + 1]).core());
            }
            Ok(())
        };
        for line in &self.lines {
            memory::reserve_one(&mut line_starts)?;
            line_starts.push(elements.len() as u32);
            edges(line, &mut elements)?;
        }
        for (pi, rings) in self.polygons.iter().enumerate() {
            let mut flags = Vec::with_capacity(rings.len());
            for (ri, ring) in rings.iter().enumerate() {
                flags.push(crate::proximity::contain::encloses_north_pole(ring));
                memory::reserve_one(&mut ring_starts)?;
                ring_starts.push((
                    elements.len() as u32,
                    RingRef {
                        polygon: pi as u32,
                        ring: ri as u32,
                    },
                ));
                edges(ring, &mut elements)?;
            }
            self.north_pole_rings.push(flags);
        }
        drop(xyz);
        stop.check()?;
        self.balls = elements;
        self.line_starts = line_starts;
        self.ring_starts = ring_starts;
        self.ball = whole_ball(self);
        stop.check()?;
        self.bbox = bounding_box(self).map(|b| self.with_enclosed_poles(b));
        stop.check()?;
        if self.balls.len() > ELEMENT_INDEX_MIN {
            let tree = BallTree::build(self, stop)?;
            self.tree = Some(tree);
        }
        Ok(())
    }

    /// Gives back the room that growth by pushes left in the small arrays
    /// (a single point's array holds four): for values kept long, such as
    /// a layer's features.
    pub fn shrink_to_fit(&mut self) {
        self.points.shrink_to_fit();
        self.lines.shrink_to_fit();
        self.polygons.shrink_to_fit();
        self.north_pole_rings.shrink_to_fit();
        self.line_starts.shrink_to_fit();
        self.ring_starts.shrink_to_fit();
    }

    /// The (lon, lat) centres of the elements' balls, in element order
    /// (what [`Prepared::ball`] derives, without looking each element up).
    fn ball_centres(&self) -> impl Iterator<Item = LonLat> + '_ {
        self.points.iter().copied().chain(
            self.lines
                .iter()
                .chain(self.polygons.iter().flatten())
                .flat_map(|chain| chain.windows(2).map(|w| edge_centre(w[0], w[1]))),
        )
    }

    /// The ball of element `i` (below [`Prepared::element_count`]): its
    /// stored core with the centre's (lon, lat) derived from the element.
    #[inline]
    pub fn ball(&self, i: usize) -> Ball {
        let centre = match self.element(i) {
            Element::Point(p) => p,
            Element::Edge(a, b) => edge_centre(a, b),
        };
        let core = &self.balls[i];
        Ball {
            centre,
            radius: core.radius,
            xyz: core.xyz,
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
        let in_lines = self
            .ring_starts
            .first()
            .is_none_or(|&(start, _)| i < start as usize);
        let (chain, start) = if in_lines {
            let k = self
                .line_starts
                .partition_point(|&start| start as usize <= i)
                - 1;
            (&self.lines[k], self.line_starts[k])
        } else {
            let k = self
                .ring_starts
                .partition_point(|&(start, _)| start as usize <= i)
                - 1;
            let (start, r) = self.ring_starts[k];
            (&self.polygons[r.polygon as usize][r.ring as usize], start)
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
        let k = self
            .ring_starts
            .partition_point(|&(start, _)| start as usize <= i);
        (k > 0).then(|| self.ring_starts[k - 1].1)
    }

    /// Positions in `elements` of the elements whose boxes meet `query`
    /// (all of them when the geometry has no index). May repeat none.
    pub fn elements_near(&self, query: &LonLatBox) -> Vec<usize> {
        match &self.tree {
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
        self.balls.len() > ELEMENT_INDEX_MIN && self.tree.is_some()
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
        self.points.iter().copied().chain(
            self.lines
                .iter()
                .chain(self.polygons.iter().flatten())
                .map(|chain| chain[0]),
        )
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
    for b in &g.balls {
        radius = radius.max(arc_upper(&xyz, &b.xyz) + b.radius);
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
        for (rings, flags) in self.polygons.iter().zip(&self.north_pole_rings) {
            let (Some(exterior), Some(&north)) = (rings.first(), flags.first()) else {
                continue;
            };
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
        radius = radius.max(ball.radius);
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
        assert_eq!(p.points, vec![(1.0, 2.0)]);
        assert_eq!(p.lines.len(), 1);
        assert_eq!(p.polygons.len(), 1);
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
        for chain in p.lines.iter().chain(p.polygons.iter().flatten()) {
            built.extend(chain.windows(2).map(|w| Element::Edge(w[0], w[1])));
        }
        assert_eq!(p.elements().collect::<Vec<_>>(), built);
        for (i, e) in built.iter().enumerate() {
            let ball = match *e {
                Element::Point(q) => Ball::point(q),
                Element::Edge(a, b) => Ball::edge(a, b),
            };
            assert_eq!(p.ball(i), ball, "element {i}");
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
