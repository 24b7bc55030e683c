//! A hierarchy of bounding balls over a prepared geometry's elements, for
//! best-first searches (the nearest distance far from a feature).
//!
//! Level 1 holds one ball per run of [`FAN`] consecutive elements, level
//! `k + 1` one ball per run of [`FAN`] balls of level `k`, and the top level
//! a single ball (a geometry of one element has no groups: its root is
//! the element); level 0 stands for the elements themselves (their balls
//! are in [`Prepared::balls`]). Consecutive edges of a line or ring lie
//! next to each other, so runs make small balls; a run that spans two
//! rings, or isolated points in no particular order, only makes a larger
//! ball (weaker pruning, never a wrong answer).
//!
//! Every ball encloses its run: a group's centre is the centre of its
//! middle child (so, down the levels, that of one element, whose (lon, lat)
//! is derived from its vertices) and its stored radius bounds the geodesic
//! distance from that centre, and the straight distance from the stored
//! (f32) centre, to every point of its elements ([`BallCore`]'s two
//! enclosures). With C the true centre and X the stored one
//! (|C - X| <= [`CENTRE_SHIFT`]), each child's true centre within
//! [`CENTRE_SHIFT`] of its stored one, and every child enclosing its
//! points both ways: the geodesic radius
//! `r = max(arc_upper(X, child X, slack 2 CENTRE_SHIFT) + child radius)`
//! bounds d(C, x) for every point x (triangle inequality; `arc_upper`
//! bounds the geodesic by the chord, see [`Ball::edge_from`]), and
//! |X - x| <= |X - C| + d(C, x) <= r + [`CENTRE_SHIFT`], which rounded up
//! to f32 is the stored radius. Radii above [`MAX_BALL_RADIUS`] are
//! infinite (no pruning). Groups are stored as [`BallCore`]s, 16 bytes
//! per run of 8 (about 2.3 bytes per element).
//!
//! Lower bounds between two balls: the chord gap ([`Ball::gap`]) is cheap
//! but falls short of the geodesic distance by about `c^3 / (24 R^2)` (0.13 m
//! at 50 km, 360 m at 700 km), which at long range lets through nearly
//! every pair; [`tight_gap`] replaces it by Karney's exact distance between
//! the centres minus the radii (the triangle inequality on the surface)
//! where the centres are more than [`TIGHT_FROM`] apart.

use crate::error::GeomError;
use crate::geodesy::ellipsoid::A;
use crate::geodesy::inverse;
use crate::interrupt::Interrupt;
use crate::memory;
use crate::proximity::boxes::LonLatBox;
use crate::proximity::prepared::{
    arc_upper_within, chord_lower, f32_up, Ball, BallCore, Prepared, CENTRE_SHIFT, MAX_BALL_RADIUS,
};

/// Children per group.
pub const FAN: usize = 8;

/// Chord (metres) between centres beyond which [`tight_gap`] asks Karney's
/// inverse: below it the chord falls short of the geodesic by under 1.3 cm
/// (c^3 / (24 R^2) on a sphere of radius R = 6,371 km; common practice, no
/// source), far less than the radii of the balls compared.
pub const TIGHT_FROM: f64 = 20_000.0;

/// Groups built between two interrupt checks.
const CHECK_EVERY: usize = 1 << 10;

/// One node: `level` 0 is the element `index`, level `k >= 1` the group
/// `index` of that level.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Node {
    pub level: u8,
    pub index: u32,
}

/// The hierarchy (see the module doc).
#[derive(Clone, Debug, Default)]
pub struct BallTree {
    /// The groups' balls: level 1, then level 2, ..., the root last.
    groups: Vec<BallCore>,
    /// Elements below (level 0).
    elements: u32,
    /// The root's level (0 for one element or none).
    height: u8,
}

impl BallTree {
    /// The tree of a geometry of one element (no groups: the root is the
    /// element).
    pub const ONE_ELEMENT: BallTree = BallTree {
        groups: Vec::new(),
        elements: 1,
        height: 0,
    };

    /// The tree over the elements of `g` (empty for no elements). Asks
    /// `stop` every few thousand groups; its array is allocated fallibly.
    pub fn build(g: &Prepared, stop: &dyn Interrupt) -> Result<BallTree, GeomError> {
        let count = g.element_count();
        // Over 4 billion elements (64 GB of balls) are not indexed.
        let elements = u32::try_from(count).map_err(|_| GeomError::OutOfMemory {
            bytes: count.saturating_mul(std::mem::size_of::<BallCore>()),
        })?;
        let (mut total, mut n, mut height) = (0usize, count, 0u8);
        while n > 1 {
            n = n.div_ceil(FAN);
            total += n;
            height += 1;
        }
        // No groups for one element: the root is the element itself (a
        // point feature keeps no copy of its ball).
        let mut groups: Vec<BallCore> = memory::vec_with_capacity(total)?;
        let (mut below_start, mut below_len) = (0usize, count);
        for level in 1..=height {
            let n = below_len.div_ceil(FAN);
            let start = groups.len();
            for at in 0..n {
                if at % CHECK_EVERY == CHECK_EVERY - 1 {
                    stop.check()?;
                }
                let range = at * FAN..((at + 1) * FAN).min(below_len);
                let mut run = [BallCore {
                    xyz: [0.0; 3],
                    radius: 0.0,
                }; FAN];
                let len = range.len();
                for (slot, k) in run.iter_mut().zip(range) {
                    *slot = if level == 1 {
                        g.balls[k]
                    } else {
                        groups[below_start + k]
                    };
                }
                groups.push(group(&run[..len]));
            }
            below_start = start;
            below_len = n;
        }
        Ok(BallTree {
            groups,
            elements,
            height,
        })
    }

    /// The node holding everything (`None` for no elements; the element
    /// itself, at level 0, for one).
    pub fn root(&self) -> Option<Node> {
        (self.elements > 0).then_some(Node {
            level: self.height,
            index: 0,
        })
    }

    /// How many nodes level `level` has.
    #[inline]
    fn level_len(&self, level: u8) -> usize {
        let mut n = self.elements as usize;
        for _ in 0..level {
            n = n.div_ceil(FAN);
        }
        n
    }

    /// Where level `level` (1 or more) begins in `groups`.
    #[inline]
    fn level_start(&self, level: u8) -> usize {
        let (mut n, mut start) = (self.elements as usize, 0);
        for _ in 1..level {
            n = n.div_ceil(FAN);
            start += n;
        }
        start
    }

    /// The element whose centre is `node`'s centre (the middle child's,
    /// level by level down).
    fn centre_element(&self, node: Node) -> usize {
        let mut index = node.index as usize;
        for level in (0..node.level).rev() {
            let start = index * FAN;
            let end = (start + FAN).min(self.level_len(level));
            index = start + (end - start) / 2;
        }
        index
    }

    /// The ball of `node`; `g` is the geometry the tree was built over.
    #[inline]
    pub fn ball(&self, node: Node, g: &Prepared) -> Ball {
        if node.level == 0 {
            g.ball(node.index as usize)
        } else {
            let core = self.core(node, g);
            core.with_centre(g.ball_centre(self.centre_element(node)))
        }
    }

    /// The stored centre and radius of `node`'s ball (what
    /// [`BallCore::gap`] needs, without deriving a (lon, lat) centre).
    #[inline]
    pub fn core(&self, node: Node, g: &Prepared) -> BallCore {
        if node.level == 0 {
            g.balls[node.index as usize]
        } else {
            self.groups[self.level_start(node.level) + node.index as usize]
        }
    }

    /// The children of a group node (nothing for an element).
    pub fn children(&self, node: Node) -> impl Iterator<Item = Node> {
        let level = node.level.saturating_sub(1);
        let start = node.index as usize * FAN;
        let end = if node.level == 0 {
            start
        } else {
            (start + FAN).min(self.level_len(level))
        };
        (start..end).map(move |k| Node {
            level,
            index: k as u32,
        })
    }

    /// Pushes onto `out`, in increasing order, the elements whose ball's
    /// box ([`LonLatBox::around`], as the element index of a geometry
    /// always had) meets one of `queries`. Groups whose ball's box meets
    /// none are skipped: a group's ball holds every point of its elements,
    /// so an element with a point in a query box is never lost (a caller
    /// needs no more: the boxes only narrow which elements are decided
    /// exactly).
    pub fn elements_meeting(
        &self,
        g: &Prepared,
        queries: &[rstar::AABB<[f64; 2]>],
        out: &mut Vec<usize>,
    ) {
        let Some(root) = self.root() else { return };
        let mut stack = vec![root];
        while let Some(node) = stack.pop() {
            if !LonLatBox::around(&self.ball(node, g), 0.0).meets(queries) {
                continue;
            }
            if node.level == 0 {
                out.push(node.index as usize);
            } else {
                // Reversed, so that elements come out in increasing order.
                let first = stack.len();
                stack.extend(self.children(node));
                stack[first..].reverse();
            }
        }
    }

    /// Bytes held (for memory reports).
    pub fn bytes(&self) -> usize {
        self.groups.capacity() * std::mem::size_of::<BallCore>()
    }

    /// An estimate of [`BallTree::bytes`] for `n` elements, rounded up.
    pub fn estimated_bytes(n: usize) -> usize {
        (n / (FAN - 1) + 2).saturating_mul(std::mem::size_of::<BallCore>())
    }
}

/// The stored ball around a run of stored balls (module doc): centred on
/// the middle one.
fn group(children: &[BallCore]) -> BallCore {
    let mid = children[children.len() / 2];
    let centre = mid.centre();
    let mut radius = 0.0f64;
    for c in children {
        radius = radius
            .max(arc_upper_within(&centre, &c.centre(), 2.0 * CENTRE_SHIFT) + f64::from(c.radius));
    }
    BallCore {
        xyz: mid.xyz,
        radius: if radius > MAX_BALL_RADIUS || radius.is_nan() {
            f32::INFINITY
        } else {
            f32_up(radius + CENTRE_SHIFT)
        },
    }
}

/// A lower bound on the geodesic distance between any point of `a` and
/// any point of `b`, at least `chord_gap` (their [`Ball::gap`], passed in
/// because callers have it): where the centres lie more than
/// [`TIGHT_FROM`] apart, Karney's distance between the centres (error
/// under 15 nm, Karney 2013; taken down by 1e-12 of itself and 1 µm) minus
/// both radii.
pub fn tight_gap(a: &Ball, b: &Ball, chord_gap: f64) -> f64 {
    if !chord_gap.is_finite() || chord_lower(&a.xyz, &b.xyz) < TIGHT_FROM {
        return chord_gap;
    }
    let d = inverse::distance(a.centre.0, a.centre.1, b.centre.0, b.centre.1);
    if !d.is_finite() {
        return chord_gap;
    }
    chord_gap.max(d * (1.0 - 1e-12) - 1e-6 - a.radius - b.radius)
}

/// An axis-aligned box in Earth-centred coordinates (metres: min x, y, z,
/// then max x, y, z) holding every point of the elements: each element's
/// stored centre grown by its radius (which bounds the straight distance
/// from that centre, see [`BallCore`]), rounded outward by 1 mm. A whole-Earth box when some radius is infinite;
/// `None` for no elements.
pub fn space_box(elements: &[BallCore]) -> Option<[f64; 6]> {
    if elements.is_empty() {
        return None;
    }
    let whole = A * 1.01;
    let mut b = [
        f64::INFINITY,
        f64::INFINITY,
        f64::INFINITY,
        f64::NEG_INFINITY,
        f64::NEG_INFINITY,
        f64::NEG_INFINITY,
    ];
    for ball in elements {
        if !ball.radius.is_finite() {
            return Some([-whole, -whole, -whole, whole, whole, whole]);
        }
        let (xyz, radius) = (ball.centre(), f64::from(ball.radius));
        for k in 0..3 {
            b[k] = b[k].min(xyz[k] - radius);
            b[k + 3] = b[k + 3].max(xyz[k] + radius);
        }
    }
    for k in 0..3 {
        b[k] -= 1e-3;
        b[k + 3] += 1e-3;
    }
    Some(b)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::blob::wkt;
    use crate::interrupt::Never;
    use crate::proximity::prepared::Prepared;

    /// A geometry of one element has no groups: its root is the element,
    /// whose ball is the one [`Prepared::ball`] gives (no copy kept).
    #[test]
    fn one_element_is_its_own_root() {
        let p = Prepared::new(&wkt::parse("POINT (-131.2 38.9)").unwrap());
        let tree = BallTree::build(&p, &Never).unwrap();
        let root = tree.root().unwrap();
        assert_eq!(root, Node { level: 0, index: 0 });
        assert_eq!(tree.children(root).count(), 0);
        let point = Ball::point((-131.2, 38.9));
        assert_eq!(
            tree.ball(root, &p),
            BallCore::enclosing(&point).with_centre(point.centre)
        );
        assert!(tree.groups.is_empty());
        let empty = Prepared::new(&wkt::parse("POINT EMPTY").unwrap());
        assert_eq!(BallTree::build(&empty, &Never).unwrap().root(), None);
    }

    /// Every element's ball lies inside each of its ancestors' balls
    /// (brute force over the tree, by the chord upper bound with both
    /// stored centres' shifts), and every ball's (lon, lat) centre is its
    /// stored centre to within the shift.
    #[test]
    fn every_group_encloses_its_elements() {
        let ring: Vec<String> = (0..=1000)
            .map(|k| {
                let t = std::f64::consts::TAU * (k % 1000) as f64 / 1000.0;
                format!("{} {}", -131.0 + 2.0 * t.cos(), 38.4 + 1.5 * t.sin())
            })
            .collect();
        let p = Prepared::new(&wkt::parse(&format!("POLYGON (({}))", ring.join(", "))).unwrap());
        let tree = BallTree::build(&p, &Never).unwrap();
        let root = tree.root().unwrap();
        let mut stack = vec![(root, Vec::<Ball>::new())];
        let mut seen = 0;
        while let Some((node, ancestors)) = stack.pop() {
            let ball = tree.ball(node, &p);
            if node.level == 0 {
                seen += 1;
                for a in &ancestors {
                    let reach = arc_upper_within(&a.xyz, &ball.xyz, 2.0 * CENTRE_SHIFT);
                    assert!(reach + ball.radius <= a.radius * (1.0 + 1e-12));
                }
            }
            let on_surface = crate::proximity::prepared::ecef(ball.centre);
            assert!(chord_lower(&on_surface, &ball.xyz) <= CENTRE_SHIFT);
            let mut next = ancestors.clone();
            next.push(ball);
            for c in tree.children(node) {
                stack.push((c, next.clone()));
            }
        }
        assert_eq!(seen, p.element_count());
    }
}
