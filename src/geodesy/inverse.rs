//! Point-to-point geodesic distance on WGS84 (the inverse geodesic problem).
//!
//! The solution is Karney's: C. F. F. Karney, "Algorithms for geodesics",
//! J. Geodesy 87:43–55 (2013), doi 10.1007/s00190-012-0578-z, as implemented
//! by the `geographiclib-rs` crate. Karney states that for the terrestrial
//! ellipsoids the error of the distance is below 15 nm (the paper's
//! abstract and section 9); ambit checks this against Karney's published
//! test set in `tests/geodesy_reference.rs` (maximum measured deviation is
//! printed there).
//!
//! The `Geodesic` object holds series coefficients computed once from a and
//! f; constructing it costs far more than copying a reference to it, so one
//! instance lives in a process-wide [`OnceLock`] and every call borrows it
//! (`tests/geodesy_speed.rs` prints both costs).

use super::ellipsoid;
use geographiclib_rs::{capability as caps, Geodesic};
use std::sync::OnceLock;

static WGS84: OnceLock<Geodesic> = OnceLock::new();

/// The shared WGS84 `Geodesic` of `geographiclib-rs`, built on first use.
///
/// Units: the ellipsoid is a = 6378137 m, 1/f = 298.257223563 (NIMA
/// TR8350.2, see [`super::ellipsoid`]).
///
/// Accuracy: that of Karney's algorithms, 15 nm for distances on WGS84
/// (Karney 2013).
///
/// NULL/NaN: not applicable (no inputs).
///
/// References: C. F. F. Karney, "Algorithms for geodesics", J. Geodesy
/// 87:43–55 (2013), doi 10.1007/s00190-012-0578-z.
pub fn wgs84() -> &'static Geodesic {
    WGS84.get_or_init(|| Geodesic::new(ellipsoid::A, ellipsoid::F))
}

/// True when (lon, lat) is a usable position: finite longitude (any value;
/// it is reduced modulo 360) and latitude in [−90, 90]. NaN fails.
#[inline]
pub(crate) fn valid(lon: f64, lat: f64) -> bool {
    lon.is_finite() && lat.abs() <= 90.0
}

/// Geodesic distance between two points on WGS84.
///
/// Units: arguments (lon1, lat1, lon2, lat2) in degrees; longitudes may be
/// any finite value (they are taken modulo 360, so pairs across the
/// antimeridian are handled). Result in metres: the length of the shortest
/// geodesic.
///
/// Accuracy: better than 15 nm (Karney 2013); measured against Karney's
/// test set GeodTest (10,000 lines) in `tests/geodesy_reference.rs`.
///
/// NULL/NaN: NaN or infinite coordinates, or a latitude outside [−90, 90],
/// give NaN. Never panics.
///
/// References: C. F. F. Karney, "Algorithms for geodesics", J. Geodesy
/// 87:43–55 (2013), doi 10.1007/s00190-012-0578-z.
#[inline]
pub fn distance(lon1: f64, lat1: f64, lon2: f64, lat2: f64) -> f64 {
    if !(valid(lon1, lat1) && valid(lon2, lat2)) {
        return f64::NAN;
    }
    let (_a12, s12, ..) = wgs84()._gen_inverse(lat1, lon1, lat2, lon2, caps::DISTANCE);
    s12
}

/// Geodesic distance and azimuths between two points on WGS84.
///
/// Units: arguments (lon1, lat1, lon2, lat2) in degrees (any finite
/// longitude). Returns `(s12, azi1, azi2)`: s12 the geodesic distance in
/// metres; azi1 the azimuth at point 1 and azi2 the forward azimuth at
/// point 2, in degrees clockwise from north in [−180, 180].
///
/// Accuracy: s12 better than 15 nm (Karney 2013); azimuths to round-off
/// except where they are ill-conditioned (coincident, nearly antipodal or
/// polar points), see Karney 2013 section 9.
///
/// NULL/NaN: NaN or infinite coordinates, or a latitude outside [−90, 90],
/// give (NaN, NaN, NaN). For coincident points s12 = 0 and the azimuths
/// are those of Karney's convention (finite). Never panics.
///
/// References: C. F. F. Karney, "Algorithms for geodesics", J. Geodesy
/// 87:43–55 (2013), doi 10.1007/s00190-012-0578-z.
pub fn inverse(lon1: f64, lat1: f64, lon2: f64, lat2: f64) -> (f64, f64, f64) {
    if !(valid(lon1, lat1) && valid(lon2, lat2)) {
        return (f64::NAN, f64::NAN, f64::NAN);
    }
    let (_a12, s12, azi1, azi2, ..) =
        wgs84()._gen_inverse_azi(lat1, lon1, lat2, lon2, caps::DISTANCE | caps::AZIMUTH);
    (s12, azi1, azi2)
}
