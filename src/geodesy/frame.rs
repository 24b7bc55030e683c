//! A local plane around a point: the ellipsoidal azimuthal equidistant
//! projection, in which the distance and azimuth of every point from the
//! centre are its exact geodesic distance and azimuth.
//!
//! Forward: solve the inverse geodesic problem from the centre to the point
//! for the distance s and the azimuth α at the centre; then x = s sin α
//! (east), y = s cos α (north), metres. Reverse: the direct problem from the
//! centre with azimuth atan2(x, y) and distance hypot(x, y). This is the
//! construction of Karney (2013), section 8 ("the azimuthal equidistant
//! projection ... is obtained by solving the inverse problem"), with the
//! geodesics of `geographiclib-rs`.
//!
//! Accuracy of distances between two points measured in the plane: exact
//! for pairs through the centre; for points within ρ of the centre the
//! planar distance differs from the geodesic one by a relative error of
//! about ρ² / (6 R²) (the transverse scale of the projection on a sphere of
//! radius R, (ρ/R) / sin(ρ/R)): 1.6e-8 at ρ = 2 km, 2.6e-5 at ρ = 80 km
//! (R = 6,371 km). Areas scale by the same factor.
//!
//! References: C. F. F. Karney, "Algorithms for geodesics", J. Geodesy
//! 87:43–55 (2013), doi 10.1007/s00190-012-0578-z; J. P. Snyder, "Map
//! Projections: A Working Manual", USGS Professional Paper 1395 (1987),
//! section 25.

use geographiclib_rs::DirectGeodesic;

use crate::geodesy::inverse::{inverse, wgs84};

/// The mean Earth radius used in stated error bounds, metres (IUGG mean
/// radius R1 of WGS84, rounded; from memory).
pub const MEAN_RADIUS: f64 = 6_371_009.0;

/// An azimuthal equidistant plane centred at a point.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct AzimuthalFrame {
    /// The centre (lon, lat), degrees.
    pub centre: (f64, f64),
}

impl AzimuthalFrame {
    /// The frame centred at `centre` (lon, lat), degrees.
    pub fn new(centre: (f64, f64)) -> AzimuthalFrame {
        AzimuthalFrame { centre }
    }

    /// Plane coordinates (east, north), metres, of the point (lon, lat).
    /// NaN for an invalid point. Exact up to the accuracy of the inverse
    /// geodesic (nanometres).
    pub fn forward(&self, p: (f64, f64)) -> (f64, f64) {
        let (s, azi, _) = inverse(self.centre.0, self.centre.1, p.0, p.1);
        let (sin, cos) = azi.to_radians().sin_cos();
        (s * sin, s * cos)
    }

    /// The point (lon, lat), degrees, at plane coordinates (x, y), metres.
    pub fn reverse(&self, xy: (f64, f64)) -> (f64, f64) {
        let s = xy.0.hypot(xy.1);
        let azi = xy.0.atan2(xy.1).to_degrees();
        let (lat, lon): (f64, f64) = wgs84().direct(self.centre.1, self.centre.0, azi, s);
        (lon, lat)
    }

    /// The relative error bound on planar distances and areas for points
    /// within `rho` metres of the centre (see the module documentation):
    /// twice the spherical transverse-scale excess ρ² / (6 R²), to allow
    /// for the ellipsoid's flattening.
    pub fn scale_error(rho: f64) -> f64 {
        rho * rho / (3.0 * MEAN_RADIUS * MEAN_RADIUS)
    }
}
