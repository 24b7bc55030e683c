//! Longitude/latitude boxes for the R*-trees, split at the antimeridian
//! and rounded outward, so that no candidate is ever lost.
//!
//! A box is built unwrapped (its longitudes may run past ±180 around a
//! centre) and then normalised into one or two boxes inside [-180, 180]:
//! a box crossing the antimeridian becomes its two halves, a box as wide as
//! the circle becomes the whole band. Two geometries can only be within a
//! distance of each other if some box of one, grown by that distance with
//! [`crate::geodesy::local::degrees_padding`], meets some box of the other.

use rstar::{Envelope as _, AABB};

use crate::geodesy::local::degrees_padding;
use crate::geometry::{Geometry, Shape};
use crate::proximity::prepared::{Ball, LonLat};

/// Degrees added on every side of every box, far above round-off.
const OUTWARD: f64 = 1e-9;

/// An unwrapped box: longitudes may exceed ±180 but `lon_hi >= lon_lo`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct LonLatBox {
    pub lon_lo: f64,
    pub lon_hi: f64,
    pub lat_lo: f64,
    pub lat_hi: f64,
}

impl LonLatBox {
    /// The box of a ball grown by `grow_m` metres.
    pub fn around(ball: &Ball, grow_m: f64) -> LonLatBox {
        let (dlon, dlat) = degrees_padding(ball.centre.1, ball.centre.1, ball.radius + grow_m);
        let (lon, lat) = ball.centre;
        LonLatBox {
            lon_lo: lon - dlon,
            lon_hi: lon + dlon,
            lat_lo: lat - dlat,
            lat_hi: lat + dlat,
        }
    }

    /// This box grown by `metres` on every side.
    pub fn grown(&self, metres: f64) -> LonLatBox {
        if metres <= 0.0 {
            return *self;
        }
        let (dlon, dlat) = degrees_padding(self.lat_lo, self.lat_hi, metres);
        LonLatBox {
            lon_lo: self.lon_lo - dlon,
            lon_hi: self.lon_hi + dlon,
            lat_lo: self.lat_lo - dlat,
            lat_hi: self.lat_hi + dlat,
        }
    }

    /// The smallest box holding both, with `other` unwrapped to lie as near
    /// to this box as the circle allows.
    pub fn union(&self, other: &LonLatBox) -> LonLatBox {
        let centre = (self.lon_lo + self.lon_hi) / 2.0;
        let other_centre = (other.lon_lo + other.lon_hi) / 2.0;
        let shift = other_centre - centre;
        let turns = (shift / 360.0).round() * 360.0;
        LonLatBox {
            lon_lo: self.lon_lo.min(other.lon_lo - turns),
            lon_hi: self.lon_hi.max(other.lon_hi - turns),
            lat_lo: self.lat_lo.min(other.lat_lo),
            lat_hi: self.lat_hi.max(other.lat_hi),
        }
    }

    /// True when one of [`LonLatBox::normalised`]'s boxes meets one of
    /// `queries` (without allocating).
    pub fn meets(&self, queries: &[AABB<[f64; 2]>]) -> bool {
        let (parts, n) = self.normalised_parts();
        parts[..n]
            .iter()
            .any(|b| queries.iter().any(|q| b.intersects(q)))
    }

    /// [`LonLatBox::normalised`] in an array: the boxes and how many.
    pub fn normalised_parts(&self) -> ([AABB<[f64; 2]>; 2], usize) {
        let v = self.normalised_inner();
        (v.0, v.1)
    }

    /// One or two boxes inside [-180, 180] x [-90, 90] covering this one,
    /// rounded outward.
    pub fn normalised(&self) -> Vec<AABB<[f64; 2]>> {
        let (parts, n) = self.normalised_inner();
        parts[..n].to_vec()
    }

    fn normalised_inner(&self) -> ([AABB<[f64; 2]>; 2], usize) {
        let none = AABB::from_corners([0.0, 0.0], [0.0, 0.0]);
        let lat_lo = (self.lat_lo - OUTWARD).max(-90.0);
        let lat_hi = (self.lat_hi + OUTWARD).min(90.0);
        let mut lo = self.lon_lo - OUTWARD;
        let mut hi = self.lon_hi + OUTWARD;
        if hi - lo >= 360.0 || (hi - lo).is_nan() {
            return (
                [AABB::from_corners([-180.0, lat_lo], [180.0, lat_hi]), none],
                1,
            );
        }
        let turns = ((lo + 180.0) / 360.0).floor() * 360.0;
        lo -= turns;
        hi -= turns;
        if hi <= 180.0 {
            ([AABB::from_corners([lo, lat_lo], [hi, lat_hi]), none], 1)
        } else {
            (
                [
                    AABB::from_corners([lo, lat_lo], [180.0, lat_hi]),
                    AABB::from_corners([-180.0, lat_lo], [hi - 360.0, lat_hi]),
                ],
                2,
            )
        }
    }
}

/// Longest meridian radius of curvature of WGS84, a / sqrt(1 - e^2)
/// (6,399,593.6 m, at the poles; NIMA TR8350.2), rounded up: a bound on
/// metres per radian along a meridian.
const MAX_RADIUS: f64 = 6_399_600.0;

/// What [`envelope`] gathers, vertex by vertex.
struct Envelope {
    first: Option<f64>,
    lon_lo: f64,
    lon_hi: f64,
    lat_lo: f64,
    lat_hi: f64,
    /// The largest |dlat| + |dlon| (degrees) of an edge.
    step: f64,
    /// A vertex too near a pole for the cheap box.
    polar: bool,
}

impl Envelope {
    fn chain(&mut self, part: &[f64], width: usize) {
        let mut prev: Option<(f64, f64)> = None;
        for v in part.chunks_exact(width) {
            let (lon, lat) = (v[0], v[1]);
            if lat.abs() > 80.0 || !lat.is_finite() || !lon.is_finite() {
                self.polar = true;
                return;
            }
            let x = match (prev, self.first) {
                (Some((px, plat)), _) => {
                    let d = crate::proximity::prepared::wrap_delta(px, lon);
                    self.step = self.step.max(d.abs() + (lat - plat).abs());
                    // Unwrapped along the chain, as geodesic edges go.
                    px + d
                }
                (None, Some(f)) => f + crate::proximity::prepared::wrap_delta(f, lon),
                (None, None) => {
                    self.first = Some(lon);
                    lon
                }
            };
            self.lon_lo = self.lon_lo.min(x);
            self.lon_hi = self.lon_hi.max(x);
            self.lat_lo = self.lat_lo.min(lat);
            self.lat_hi = self.lat_hi.max(lat);
            prev = Some((x, lat));
        }
    }

    fn geometry(&mut self, g: &Geometry) {
        let w = g.dims.width();
        match &g.shape {
            Shape::Point(v) | Shape::LineString(v) => self.chain(v, w),
            Shape::Polygon(rings) | Shape::MultiPoint(rings) | Shape::MultiLineString(rings) => {
                rings.iter().for_each(|r| self.chain(r, w))
            }
            Shape::MultiPolygon(polygons) => {
                polygons.iter().flatten().for_each(|r| self.chain(r, w))
            }
            Shape::GeometryCollection(members) => members.iter().for_each(|m| self.geometry(m)),
        }
    }
}

/// A box holding every point of `g` (its vertices, its geodesic edges and
/// the area of its polygons), from its coordinates alone: no trigonometry
/// per vertex and no allocation. The vertices' box, longitudes unwrapped
/// along each line and ring, grown by half the longest edge: every point of
/// a geodesic edge lies within half its length of one of its ends, and an
/// edge is no longer than the path along a meridian and then a parallel
/// (|dlat| M_max + |dlon| a, both at most [`MAX_RADIUS`] per radian). A
/// polygon's area lies inside the box of its boundary when no ring winds
/// around a pole, which the limits below exclude. `None` (use the prepared
/// geometry's box) for an empty geometry, a vertex above 80 degrees of
/// latitude, or a box wider than 90 degrees of longitude.
pub fn envelope(g: &Geometry) -> Option<LonLatBox> {
    let mut e = Envelope {
        first: None,
        lon_lo: f64::INFINITY,
        lon_hi: f64::NEG_INFINITY,
        lat_lo: f64::INFINITY,
        lat_hi: f64::NEG_INFINITY,
        step: 0.0,
        polar: false,
    };
    e.geometry(g);
    if e.polar || e.first.is_none() || e.lon_hi - e.lon_lo > 90.0 {
        return None;
    }
    let half_edge = e.step.to_radians() * MAX_RADIUS / 2.0 * (1.0 + 1e-12) + 1e-6;
    Some(
        LonLatBox {
            lon_lo: e.lon_lo,
            lon_hi: e.lon_hi,
            lat_lo: e.lat_lo,
            lat_hi: e.lat_hi,
        }
        .grown(half_edge),
    )
}

/// A ball holding every point of the box `b` (whose latitudes lie in
/// [-90, 90]), centred on a point `p` of the box (`p_xyz` its
/// Earth-centred coordinates, which the caller has already computed, so
/// no trigonometry here beyond one cosine). Its radius is the path along
/// `p`'s meridian and then along a parallel to any point of the box:
/// |dlat| M_max + |dlon| a cos(lat) / sqrt(1 - e^2), both at most
/// [`MAX_RADIUS`] per radian, cos(lat) at its largest in the box, and
/// |dlat|, |dlon| at most the box's whole extents; no geodesic is longer.
pub fn ball_around_vertex(b: &LonLatBox, p: LonLat, p_xyz: [f64; 3]) -> Ball {
    let nearest_equator = if b.lat_lo <= 0.0 && b.lat_hi >= 0.0 {
        0.0
    } else {
        b.lat_lo.abs().min(b.lat_hi.abs())
    };
    let lat = b.lat_hi - b.lat_lo;
    let lon = b.lon_hi - b.lon_lo;
    let path = (lat + lon * nearest_equator.to_radians().cos().min(1.0)).to_radians();
    Ball {
        centre: p,
        radius: path * MAX_RADIUS * (1.0 + 1e-12) + 1e-6,
        xyz: p_xyz,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn corners(b: &AABB<[f64; 2]>) -> [f64; 4] {
        let (l, u) = (b.lower(), b.upper());
        [l[0], l[1], u[0], u[1]]
    }

    #[test]
    fn boxes_across_the_antimeridian_split_in_two() {
        let b = LonLatBox {
            lon_lo: 179.5,
            lon_hi: 180.5,
            lat_lo: -16.0,
            lat_hi: -15.0,
        };
        let parts = b.normalised();
        assert_eq!(parts.len(), 2);
        let [a0, _, a2, _] = corners(&parts[0]);
        let [b0, _, b2, _] = corners(&parts[1]);
        assert!(a0 < 179.5 && a2 == 180.0 && b0 == -180.0 && b2 > -179.5);
    }

    #[test]
    fn boxes_far_past_the_range_come_back_into_it() {
        let b = LonLatBox {
            lon_lo: 400.0,
            lon_hi: 401.0,
            lat_lo: 1.0,
            lat_hi: 2.0,
        };
        let parts = b.normalised();
        assert_eq!(parts.len(), 1);
        let [lo, _, hi, _] = corners(&parts[0]);
        assert!((lo - 40.0).abs() < 1e-6 && (hi - 41.0).abs() < 1e-6);
    }

    #[test]
    fn union_unwraps_the_nearer_way() {
        let east = LonLatBox {
            lon_lo: 179.0,
            lon_hi: 179.5,
            lat_lo: 0.0,
            lat_hi: 1.0,
        };
        let west = LonLatBox {
            lon_lo: -179.5,
            lon_hi: -179.0,
            lat_lo: 0.0,
            lat_hi: 1.0,
        };
        let u = east.union(&west);
        assert_eq!((u.lon_lo, u.lon_hi), (179.0, 181.0));
    }

    fn inside(parts: &[AABB<[f64; 2]>], lon: f64, lat: f64) -> bool {
        let lon = lon - 360.0 * ((lon + 180.0) / 360.0).floor();
        parts.iter().any(|b| {
            let (l, u) = (b.lower(), b.upper());
            l[0] <= lon && lon <= u[0] && l[1] <= lat && lat <= u[1]
        })
    }

    /// Points along every geodesic edge (placed with geographiclib-rs's
    /// direct problem, an independent implementation of Karney 2013) lie in
    /// the envelope, and every point of the envelope lies in its ball
    /// (distances by Karney's inverse): brute force over fixed-seed random
    /// rings, some across the antimeridian, some with edges of 1000 km.
    #[test]
    fn the_envelope_holds_every_edge_and_its_ball_holds_the_envelope() {
        use crate::geodesy::inverse;
        use crate::testing::XorShift;
        use geographiclib_rs::{DirectGeodesic, InverseGeodesic};
        let geod = inverse::wgs84();
        let mut rng = XorShift(0x0e1e_7e10);
        for case in 0..200 {
            let c = (rng.uniform(-180.0, 180.0), rng.uniform(-75.0, 75.0));
            let size = [0.001, 0.05, 3.0][case % 3];
            let n = 3 + rng.below(8) as usize;
            let mut pts: Vec<(f64, f64)> = (0..n)
                .map(|_| {
                    (
                        c.0 + rng.uniform(-size, size),
                        (c.1 + rng.uniform(-size, size)).clamp(-79.9, 79.9),
                    )
                })
                .collect();
            pts.push(pts[0]);
            let text: Vec<String> = pts.iter().map(|p| format!("{} {}", p.0, p.1)).collect();
            let g = crate::blob::wkt::parse(&format!("LINESTRING ({})", text.join(", "))).unwrap();
            let b = envelope(&g).expect("a box for a small line");
            let parts = b.normalised();
            for w in pts.windows(2) {
                let (s12, azi1, _, _): (f64, f64, f64, f64) =
                    geod.inverse(w[0].1, w[0].0, w[1].1, w[1].0);
                for k in 0..=50 {
                    let (lat, lon): (f64, f64) =
                        geod.direct(w[0].1, w[0].0, azi1, s12 * k as f64 / 50.0);
                    assert!(
                        inside(&parts, lon, lat),
                        "case {case}: ({lon}, {lat}) outside {b:?}"
                    );
                }
            }
            // The ball around the first vertex (how proximity::quick uses
            // it) and around the last.
            for p in [pts[0], pts[pts.len() - 2]] {
                let ball = ball_around_vertex(&b, p, crate::proximity::prepared::ecef(p));
                for i in 0..=10 {
                    for j in 0..=10 {
                        let lon = b.lon_lo + (b.lon_hi - b.lon_lo) * i as f64 / 10.0;
                        let lat =
                            (b.lat_lo + (b.lat_hi - b.lat_lo) * j as f64 / 10.0).clamp(-90.0, 90.0);
                        let d = inverse::distance(ball.centre.0, ball.centre.1, lon, lat);
                        assert!(d <= ball.radius, "case {case}: {d} > {}", ball.radius);
                    }
                }
            }
        }
        // Near a pole, or wider than 90 degrees: no cheap box.
        let polar = crate::blob::wkt::parse("LINESTRING (0 80.5, 1 80.5)").unwrap();
        assert_eq!(envelope(&polar), None);
        let wide = crate::blob::wkt::parse("LINESTRING (0 1, 60 1, 120 1)").unwrap();
        assert_eq!(envelope(&wide), None);
    }
}
