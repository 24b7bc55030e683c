//! Longitude/latitude boxes for the R*-trees, split at the antimeridian
//! and rounded outward, so that no candidate is ever lost.
//!
//! A box is built unwrapped (its longitudes may run past ±180 around a
//! centre) and then normalised into one or two boxes inside [-180, 180]:
//! a box crossing the antimeridian becomes its two halves, a box as wide as
//! the circle becomes the whole band. Two geometries can only be within a
//! distance of each other if some box of one, grown by that distance with
//! [`crate::geodesy::local::degrees_padding`], meets some box of the other.

use rstar::AABB;

use crate::geodesy::local::degrees_padding;
use crate::proximity::prepared::Ball;

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

    /// One or two boxes inside [-180, 180] x [-90, 90] covering this one,
    /// rounded outward.
    pub fn normalised(&self) -> Vec<AABB<[f64; 2]>> {
        let lat_lo = (self.lat_lo - OUTWARD).max(-90.0);
        let lat_hi = (self.lat_hi + OUTWARD).min(90.0);
        let mut lo = self.lon_lo - OUTWARD;
        let mut hi = self.lon_hi + OUTWARD;
        if hi - lo >= 360.0 || (hi - lo).is_nan() {
            return vec![AABB::from_corners([-180.0, lat_lo], [180.0, lat_hi])];
        }
        let turns = ((lo + 180.0) / 360.0).floor() * 360.0;
        lo -= turns;
        hi -= turns;
        if hi <= 180.0 {
            vec![AABB::from_corners([lo, lat_lo], [hi, lat_hi])]
        } else {
            vec![
                AABB::from_corners([lo, lat_lo], [180.0, lat_hi]),
                AABB::from_corners([-180.0, lat_lo], [hi - 360.0, lat_hi]),
            ]
        }
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
}
