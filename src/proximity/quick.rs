//! The reach question decided before a geometry is prepared, when the
//! layer's boxes and balls alone settle it: the cheap path of the sweep and
//! of ambit_reached, taken by most census blocks.
//!
//! Preparing a geometry ([`Prepared::build`]) costs a few trigonometric
//! calls per vertex (its Earth-centred coordinates and an edge ball for
//! every edge). Most blocks do not need it:
//! - **not reached**: no feature's reach-grown box meets the block's
//!   envelope, or every such feature's ball lies farther than its reach
//!   from a ball around that envelope (centred on the first probe vertex) ([`Ball::gap`] is a lower bound on
//!   the distance between any point of one and any point of the other);
//! - **reached**: one of a few probe vertices of the block lies within
//!   reach of every point of some feature: the chord's upper bound on the
//!   geodesic ([`arc_upper`]) from the vertex to the feature's ball centre
//!   plus the ball's radius is at most the reach. The distance from the
//!   block to the feature is at most the distance from that vertex, so the
//!   block is reached. The upper bound carries a margin of a micrometre
//!   and a relative 1e-12 (see [`arc_upper`]), far above the round-off of
//!   the exact test (nanometres), so this never says "reached" where the
//!   exact test of [`crate::proximity::distance`] would not.
//!
//! Everything else is left to the exact test on the prepared geometry, so
//! the answer is the same either way; only the work differs.

use crate::error::GeomError;
use crate::geometry::Geometry;
use crate::interrupt::Interrupt;
use crate::proximity::boxes::{ball_around_vertex, envelope};
use crate::proximity::layer::Layer;
use crate::proximity::prepared::{arc_upper, ecef, LonLat, Prepared};

/// What the boxes and balls alone say (see the module doc).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Verdict {
    Reached,
    NotReached,
    /// Only the exact test can tell.
    Undecided,
}

/// At most this many vertices of a geometry are tried as probes.
const PROBES: usize = 3;

/// At most this many candidates are tried with the probes after the first.
const KEEP: usize = 16;

/// The probe vertices of `g`: the first vertex of its first part and two
/// more spread along that part (fewer for short parts), as (lon, lat).
fn probes(g: &Geometry) -> ([LonLat; PROBES], usize) {
    let width = g.dims.width();
    let mut out = [(0.0, 0.0); PROBES];
    let mut n = 0;
    let mut first = true;
    g.for_each_part(&mut |part| {
        if !first || part.len() < width {
            return;
        }
        first = false;
        let vertices = part.len() / width;
        // A ring repeats its first vertex last: spread over the others.
        let step = (vertices / PROBES).max(1);
        let mut k = 0;
        while k < vertices && n < PROBES {
            out[n] = (part[k * width], part[k * width + 1]);
            n += 1;
            k += step;
        }
    });
    (out, n)
}

/// Decides whether some feature of `layer` lies within its reach of `g`
/// from `g`'s envelope and probe vertices alone (see the module doc).
/// Geometries without an envelope (empty ones, those around a pole or
/// wider than 90 degrees of longitude) are left undecided.
pub fn reached_verdict(layer: &Layer, g: &Geometry) -> Verdict {
    let Some(b) = envelope(g) else {
        return Verdict::Undecided;
    };
    let (probes, n) = probes(g);
    if n == 0 {
        return Verdict::Undecided;
    }
    // A ball around the envelope centred on the first probe, whose
    // coordinates serve both: it is tried against every candidate as it
    // comes from the index (most reached blocks stop at the first); the
    // other probes, whose coordinates cost trigonometry, only against the
    // candidates kept here.
    let first = ecef(probes[0]);
    let around = ball_around_vertex(&b, probes[0], first);
    let mut kept = [0usize; KEEP];
    let mut kept_len = 0;
    let mut maybe = false;
    for i in layer.candidates_in(&b) {
        let f = &layer.features()[i];
        let Some(ball) = f.geometry.ball else {
            continue;
        };
        if around.gap(&ball) > f.reach {
            continue;
        }
        maybe = true;
        if ball.radius > f.reach {
            continue;
        }
        if arc_upper(&first, &ball.xyz) + ball.radius <= f.reach {
            return Verdict::Reached;
        }
        if kept_len < KEEP {
            kept[kept_len] = i;
            kept_len += 1;
        }
    }
    for p in &probes[1..n] {
        if kept_len == 0 {
            break;
        }
        let x = ecef(*p);
        for &i in &kept[..kept_len] {
            let f = &layer.features()[i];
            let ball = f.geometry.ball.expect("kept features have a ball");
            if arc_upper(&x, &ball.xyz) + ball.radius <= f.reach {
                return Verdict::Reached;
            }
        }
    }
    if maybe {
        Verdict::Undecided
    } else {
        Verdict::NotReached
    }
}

/// Whether some feature of `layer` lies within its reach of `g` (a
/// geometry that passed validation): [`reached_verdict`] first, and the
/// exact test of [`Layer::reached_until`] on the prepared geometry only
/// when that leaves it undecided. The same answer as preparing `g` and
/// asking [`Layer::reached_until`]; `stop` as there and in
/// [`Prepared::build`].
pub fn reached(layer: &Layer, g: &Geometry, stop: &dyn Interrupt) -> Result<bool, GeomError> {
    match reached_verdict(layer, g) {
        Verdict::Reached => Ok(true),
        Verdict::NotReached => Ok(false),
        Verdict::Undecided => {
            let p = Prepared::build(g, stop)?;
            layer.reached_until(&p, stop)
        }
    }
}
