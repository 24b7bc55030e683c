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
//! ball (weaker pruning, never a wrong answer). About 7 bytes per element.
//!
//! Every ball encloses its run: a group's centre is the centre of its
//! middle child and its radius the largest `arc_upper(centre, child centre)
//! + child radius` (an upper bound on the geodesic distance from the centre
//! to any point of the child, by the triangle inequality; see
//! [`Ball::edge_from`] for `arc_upper`). Radii above
//! [`MAX_BALL_RADIUS`] are infinite (no pruning).
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
    arc_upper, chord_lower, Ball, BallCore, Prepared, MAX_BALL_RADIUS,
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
    /// `levels[k]` holds the balls of level `k + 1`.
    levels: Vec<Vec<Ball>>,
    elements: usize,
}

impl BallTree {
    /// The tree over the elements of `g` (empty for no elements). Asks
    /// `stop` every few thousand groups; arrays are allocated fallibly.
    pub fn build(g: &Prepared, stop: &dyn Interrupt) -> Result<BallTree, GeomError> {
        let count = g.element_count();
        let mut levels: Vec<Vec<Ball>> = Vec::new();
        if count <= 1 {
            // No groups: the root is the element itself (a point feature
            // keeps no copy of its ball).
            return Ok(BallTree {
                levels,
                elements: count,
            });
        }
        let mut below: Vec<Ball> = Vec::new();
        let mut first = true;
        loop {
            let children: &[Ball] = if first { &[] } else { &below };
            let n = if first { count } else { children.len() };
            let groups = n.div_ceil(FAN);
            let mut level: Vec<Ball> = memory::vec_with_capacity(groups)?;
            for at in 0..groups {
                if at % CHECK_EVERY == CHECK_EVERY - 1 {
                    stop.check()?;
                }
                let range = at * FAN..((at + 1) * FAN).min(n);
                level.push(if first {
                    let mut run = [Ball {
                        centre: (0.0, 0.0),
                        radius: 0.0,
                        xyz: [0.0; 3],
                    }; FAN];
                    let len = range.len();
                    for (slot, k) in run.iter_mut().zip(range) {
                        *slot = g.ball(k);
                    }
                    group(&run[..len])
                } else {
                    group(&children[range])
                });
            }
            first = false;
            if !below.is_empty() {
                levels.push(std::mem::take(&mut below));
            }
            if level.len() == 1 {
                levels.push(level);
                levels.shrink_to_fit();
                break;
            }
            below = level;
        }
        Ok(BallTree {
            levels,
            elements: count,
        })
    }

    /// The node holding everything (`None` for no elements; the element
    /// itself, at level 0, for one).
    pub fn root(&self) -> Option<Node> {
        (self.elements > 0).then_some(Node {
            level: self.levels.len() as u8,
            index: 0,
        })
    }

    /// The ball of `node`; `g` is the geometry the tree was built over.
    #[inline]
    pub fn ball(&self, node: Node, g: &Prepared) -> Ball {
        if node.level == 0 {
            g.ball(node.index as usize)
        } else {
            self.levels[node.level as usize - 1][node.index as usize]
        }
    }

    /// The centre's Earth-centred coordinates and the radius of `node`'s
    /// ball (what [`Ball::gap`] needs, without deriving an element's
    /// (lon, lat) centre).
    #[inline]
    pub fn core(&self, node: Node, g: &Prepared) -> BallCore {
        if node.level == 0 {
            g.balls[node.index as usize]
        } else {
            self.levels[node.level as usize - 1][node.index as usize].core()
        }
    }

    /// The children of a group node (nothing for an element).
    pub fn children(&self, node: Node) -> impl Iterator<Item = Node> {
        let (level, len) = match node.level {
            0 => (0, 0),
            1 => (0, self.elements),
            k => (k - 1, self.levels[k as usize - 2].len()),
        };
        let start = node.index as usize * FAN;
        let end = if node.level == 0 {
            start
        } else {
            (start + FAN).min(len)
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
        self.levels
            .iter()
            .map(|l| l.capacity() * std::mem::size_of::<Ball>())
            .sum::<usize>()
            + self.levels.capacity() * std::mem::size_of::<Vec<Ball>>()
            + std::mem::size_of::<BallTree>()
    }

    /// An estimate of [`BallTree::bytes`] for `n` elements, rounded up.
    pub fn estimated_bytes(n: usize) -> usize {
        (n / (FAN - 1) + 2).saturating_mul(std::mem::size_of::<Ball>())
    }
}

/// The ball around a run of balls (module doc).
fn group(children: &[Ball]) -> Ball {
    let mid = children[children.len() / 2];
    let mut radius = 0.0f64;
    for c in children {
        radius = radius.max(arc_upper(&mid.xyz, &c.xyz) + c.radius);
    }
    Ball {
        centre: mid.centre,
        radius: if radius > MAX_BALL_RADIUS || radius.is_nan() {
            f64::INFINITY
        } else {
            radius
        },
        xyz: mid.xyz,
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
/// ball centre grown by its radius (a chord never exceeds the geodesic),
/// rounded outward by 1 mm. A whole-Earth box when some radius is infinite;
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
        for k in 0..3 {
            b[k] = b[k].min(ball.xyz[k] - ball.radius);
            b[k + 3] = b[k + 3].max(ball.xyz[k] + ball.radius);
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
        assert_eq!(tree.ball(root, &p), Ball::point((-131.2, 38.9)));
        assert_eq!(tree.levels.len(), 0);
        let empty = Prepared::new(&wkt::parse("POINT EMPTY").unwrap());
        assert_eq!(BallTree::build(&empty, &Never).unwrap().root(), None);
    }

    /// Every element's ball lies inside each of its ancestors' balls
    /// (brute force over the tree, by the chord upper bound).
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
                    assert!(arc_upper(&a.xyz, &ball.xyz) + ball.radius <= a.radius * (1.0 + 1e-12));
                }
            }
            let mut next = ancestors.clone();
            next.push(ball);
            for c in tree.children(node) {
                stack.push((c, next.clone()));
            }
        }
        assert_eq!(seen, p.element_count());
    }
}
