//! Planar shape helpers: rings traced from boundary sides, multipolygons,
//! stars and ragged lines for invented features.

use crate::{
    grid::Pt,
    layout::KM_PER_DEG_LAT,
    random::{q7, Rng},
};
use ambit::geometry::{Dimensions, Geometry, Shape};
use std::collections::HashMap;

pub fn polygon(rings: Vec<Vec<f64>>) -> Geometry {
    Geometry::new(Dimensions::Xy, Shape::Polygon(rings))
}

pub fn flatten(points: &[[f64; 2]]) -> Vec<f64> {
    points.iter().flatten().copied().collect()
}

/// A boundary side of a county or urban area, with the region on its left.
pub struct BoundarySide {
    pub from: Pt,
    pub to: Pt,
    /// Vertices from `from`, excluding `to`.
    pub points: Vec<[f64; 2]>,
    /// The 1-based county on the right (0: none); for urban areas unused.
    pub other: u8,
}

/// Chains boundary sides into closed rings (interleaved lon, lat). Where a
/// region touches itself at a corner, the ring turns left (keeps the region
/// close on its left), so rings touch there but never cross.
pub fn trace(sides: &[BoundarySide]) -> Vec<Vec<f64>> {
    let mut starts: HashMap<Pt, Vec<usize>> = HashMap::new();
    for (i, s) in sides.iter().enumerate() {
        starts.entry(s.from).or_default().push(i);
    }
    let dir = |s: &BoundarySide| ((s.to.0 - s.from.0).signum(), (s.to.1 - s.from.1).signum());
    let mut used = vec![false; sides.len()];
    let mut rings = Vec::new();
    for first in 0..sides.len() {
        if used[first] {
            continue;
        }
        let mut ring: Vec<f64> = Vec::new();
        let mut cur = first;
        loop {
            used[cur] = true;
            ring.extend(sides[cur].points.iter().flatten());
            let (dx, dy) = dir(&sides[cur]);
            let at = sides[cur].to;
            let candidates = &starts[&at];
            // Left, straight, right.
            let mut next = None;
            'turns: for want in [(-dy, dx), (dx, dy), (dy, -dx)] {
                for &c in candidates {
                    if (c == first || !used[c]) && dir(&sides[c]) == want {
                        next = Some(c);
                        break 'turns;
                    }
                }
            }
            match next {
                Some(n) if n == first => break,
                Some(n) => cur = n,
                None => unreachable!("a boundary is always closed"),
            }
        }
        close(&mut ring);
        rings.push(ring);
    }
    rings
}

/// Twice the signed planar area of a closed ring (counter-clockwise > 0).
pub fn shoelace(ring: &[f64]) -> f64 {
    ring.chunks_exact(2)
        .zip(ring.chunks_exact(2).skip(1))
        .map(|(a, b)| (a[0] - b[0]) * (a[1] + b[1]))
        .sum::<f64>()
}

pub fn ring_contains(ring: &[f64], x: f64, y: f64) -> bool {
    let mut inside = false;
    for (a, b) in ring.chunks_exact(2).zip(ring.chunks_exact(2).skip(1)) {
        if (a[1] > y) != (b[1] > y) && x < a[0] + (y - a[1]) / (b[1] - a[1]) * (b[0] - a[0]) {
            inside = !inside;
        }
    }
    inside
}

/// Rings of one region as a MULTIPOLYGON: counter-clockwise rings are
/// exteriors, clockwise ones holes of the smallest exterior around them.
pub fn multipolygon(rings: Vec<Vec<f64>>) -> Geometry {
    let (mut outer, mut holes): (Vec<_>, Vec<_>) =
        rings.into_iter().partition(|r| shoelace(r) > 0.0);
    outer.sort_by(|a, b| (a[1], a[0]).partial_cmp(&(b[1], b[0])).expect("finite"));
    holes.sort_by(|a, b| (a[1], a[0]).partial_cmp(&(b[1], b[0])).expect("finite"));
    let mut polys: Vec<Vec<Vec<f64>>> = outer.into_iter().map(|r| vec![r]).collect();
    for hole in holes {
        // The middle of the hole's first edge is on no other ring.
        let (x, y) = ((hole[0] + hole[2]) / 2.0, (hole[1] + hole[3]) / 2.0);
        let owner = (0..polys.len())
            .filter(|&i| ring_contains(&polys[i][0], x, y))
            .min_by(|&i, &j| {
                shoelace(&polys[i][0])
                    .partial_cmp(&shoelace(&polys[j][0]))
                    .expect("finite")
            });
        if let Some(i) = owner {
            polys[i].push(hole);
        }
    }
    Geometry::new(Dimensions::Xy, Shape::MultiPolygon(polys))
}

/// The point `dx` metres east and `dy` metres north of (lon, lat), on a
/// local flat approximation (for placing invented features only).
pub fn offset(lon: f64, lat: f64, dx: f64, dy: f64) -> (f64, f64) {
    let m_lon = KM_PER_DEG_LAT * 1000.0 * lat.to_radians().cos();
    (lon + dx / m_lon, lat + dy / (KM_PER_DEG_LAT * 1000.0))
}

/// A closed counter-clockwise star-shaped ring of `n` vertices around
/// (lon, lat): increasing angles, radii between 0.5 and 1 times `radius`
/// metres, so the ring is simple.
pub fn star(r: &mut Rng, lon: f64, lat: f64, radius: f64, n: usize) -> Vec<f64> {
    let (p1, p2) = (r.range(0.0, 6.3), r.range(0.0, 6.3));
    let (a1, a2) = (r.range(0.3, 1.0), r.range(0.0, 0.6));
    let mut ring = Vec::with_capacity(2 * n + 2);
    for k in 0..n {
        let t = (k as f64 + 0.3 * (2.0 * r.unit() - 1.0)) / n as f64 * std::f64::consts::TAU;
        let wobble = (a1 * (t + p1).cos() + a2 * (2.0 * t + p2).cos()) / 1.6;
        let noise = 0.4 * r.unit() - 0.2;
        let rho = radius * (0.75 + 0.25 * (0.8 * wobble + noise).clamp(-1.0, 1.0));
        let (x, y) = offset(lon, lat, rho * t.cos(), rho * t.sin());
        ring.extend([q7(x), q7(y)]);
    }
    close(&mut ring);
    ring
}

/// Repeats the first vertex at the end.
pub fn close(ring: &mut Vec<f64>) {
    let first = [ring[0], ring[1]];
    ring.extend(first);
}

pub fn reverse_ring(ring: &mut [f64]) {
    let n = ring.len() / 2;
    for i in 0..n / 2 {
        ring.swap(2 * i, 2 * (n - 1 - i));
        ring.swap(2 * i + 1, 2 * (n - 1 - i) + 1);
    }
}

/// `k + 1` values of a ragged line by midpoint displacement, clamped to
/// [lo, hi] degrees.
pub fn ragged(r: &mut Rng, k: usize, lo: f64, hi: f64) -> Vec<f64> {
    let mid = (lo + hi) / 2.0;
    let mut v = vec![mid; k + 1];
    v[0] = r.range(lo, hi);
    v[k] = r.range(lo, hi);
    let mut step = k;
    let mut amp = (hi - lo) / 2.0;
    while step > 1 {
        let half = step / 2;
        for i in (half..k).step_by(step) {
            let m = (v[i - half] + v[i + half]) / 2.0 + amp * (2.0 * r.unit() - 1.0);
            v[i] = m.clamp(lo, hi);
        }
        step = half;
        amp *= 0.62;
    }
    v
}
