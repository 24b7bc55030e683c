//! Support for ambit's own tests and benchmarks: a fixed-seed random
//! generator and random geometries of every type. Not part of the API.

use crate::geometry::{Dimensions, Geometry, Part, Shape};

/// xorshift64 (Marsaglia 2003): a tiny fixed-seed generator for the
/// property tests of both text codecs.
pub struct XorShift(pub u64);

impl XorShift {
    pub fn next_u64(&mut self) -> u64 {
        let mut x = self.0;
        x ^= x << 13;
        x ^= x >> 7;
        x ^= x << 17;
        self.0 = x;
        x
    }

    /// Uniform in 0..n (n > 0).
    pub fn below(&mut self, n: u64) -> u64 {
        self.next_u64() % n
    }
}

/// A random geometry of any of the seven types with `dims`; collections
/// nest up to `depth` more levels. `coord` makes each value. About one
/// part in six is empty.
pub fn random_geometry(
    rng: &mut XorShift,
    dims: Dimensions,
    depth: usize,
    coord: &mut dyn FnMut(&mut XorShift) -> f64,
) -> Geometry {
    let width = dims.width();
    let mut part = |rng: &mut XorShift, min: u64| -> Part {
        if rng.below(6) == 0 {
            return Vec::new();
        }
        let n = min + rng.below(5);
        (0..n as usize * width).map(|_| coord(rng)).collect()
    };
    let kinds = if depth == 0 { 6 } else { 7 };
    let shape = match rng.below(kinds) {
        0 => Shape::Point(part(rng, 1).into_iter().take(width).collect()),
        1 => Shape::LineString(part(rng, 2)),
        2 => Shape::Polygon((0..rng.below(3)).map(|_| part(rng, 4)).collect()),
        3 => Shape::MultiPoint(
            (0..rng.below(4))
                .map(|_| part(rng, 1).into_iter().take(width).collect())
                .collect(),
        ),
        4 => Shape::MultiLineString((0..rng.below(4)).map(|_| part(rng, 2)).collect()),
        5 => Shape::MultiPolygon(
            (0..rng.below(3))
                .map(|_| (0..rng.below(3)).map(|_| part(rng, 4)).collect())
                .collect(),
        ),
        _ => Shape::GeometryCollection(
            (0..rng.below(4))
                .map(|_| random_geometry(rng, dims, depth - 1, coord))
                .collect(),
        ),
    };
    Geometry::new(dims, shape)
}

impl XorShift {
    /// Uniform in [0, 1).
    pub fn unit(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 / (1u64 << 53) as f64
    }

    /// Uniform in [lo, hi).
    pub fn uniform(&mut self, lo: f64, hi: f64) -> f64 {
        lo + (hi - lo) * self.unit()
    }
}

/// The lon/lat box polygon of half-side `h` degrees around (`lon`, `lat`),
/// counter-clockwise.
pub fn square(lon: f64, lat: f64, h: f64) -> Geometry {
    let ring = vec![
        lon - h,
        lat - h,
        lon + h,
        lat - h,
        lon + h,
        lat + h,
        lon - h,
        lat + h,
        lon - h,
        lat - h,
    ];
    Geometry::new(Dimensions::Xy, Shape::Polygon(vec![ring]))
}
