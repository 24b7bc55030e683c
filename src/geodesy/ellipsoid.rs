//! WGS84 ellipsoid constants and its principal radii of curvature.
//!
//! The defining parameters are those of NIMA TR8350.2, "Department of
//! Defense World Geodetic System 1984, Its Definition and Relationships
//! with Local Geodetic Systems", 3rd edition (2000), Table 3.1: semi-major
//! axis a = 6378137 m and inverse flattening 1/f = 298.257223563. Every
//! other constant here is derived from those two in f64 arithmetic.
//!
//! The radii of curvature are the classical closed forms found in any
//! geodesy text (for example W. Torge and J. Müller, "Geodesy", 4th ed.,
//! de Gruyter 2012, section 4.1; cited from memory):
//!
//! * meridian radius  M(φ) = a (1 − e²) / (1 − e² sin² φ)^(3/2)
//! * prime-vertical radius  N(φ) = a / (1 − e² sin² φ)^(1/2)
//!
//! so that an element of length on the ellipsoid is
//! ds² = M² dφ² + N² cos² φ dλ².

/// Semi-major (equatorial) axis of WGS84.
///
/// Units: metres. Accuracy: exact (a defining parameter). NULL/NaN: not
/// applicable (constant). References: NIMA TR8350.2, 3rd ed. (2000),
/// Table 3.1.
pub const A: f64 = 6_378_137.0;

/// Inverse flattening 1/f of WGS84.
///
/// Units: dimensionless. Accuracy: exact (a defining parameter).
/// NULL/NaN: not applicable (constant). References: NIMA TR8350.2, 3rd ed.
/// (2000), Table 3.1.
pub const INV_F: f64 = 298.257_223_563;

/// Flattening f = 1 / 298.257223563 of WGS84.
///
/// Units: dimensionless. Accuracy: the correctly rounded f64 of 1/[`INV_F`]
/// (the same value geographiclib-rs uses). NULL/NaN: not applicable
/// (constant). References: NIMA TR8350.2, 3rd ed. (2000), Table 3.1.
pub const F: f64 = 1.0 / INV_F;

/// Semi-minor (polar) axis b = a (1 − f), about 6356752.314245 m.
///
/// Units: metres. Accuracy: f64 round-off of the derivation (TR8350.2
/// Table 3.3 prints 6356752.3142 m; checked in
/// `tests/geodesy_reference.rs`). NULL/NaN: not applicable (constant).
/// References: NIMA TR8350.2, 3rd ed. (2000), Tables 3.1 and 3.3.
pub const B: f64 = A * (1.0 - F);

/// First eccentricity squared e² = f (2 − f), about 0.00669437999014.
///
/// Units: dimensionless. Accuracy: f64 round-off of the derivation
/// (TR8350.2 Table 3.3 prints 0.00669437999014; checked in
/// `tests/geodesy_reference.rs`). NULL/NaN: not applicable (constant).
/// References: NIMA TR8350.2, 3rd ed. (2000), Tables 3.1 and 3.3.
pub const E2: f64 = F * (2.0 - F);

/// Second eccentricity squared e′² = e² / (1 − e²), about 0.00673949674228.
///
/// Units: dimensionless. Accuracy: f64 round-off of the derivation.
/// NULL/NaN: not applicable (constant). References: NIMA TR8350.2, 3rd ed.
/// (2000), Tables 3.1 and 3.3.
pub const EP2: f64 = E2 / (1.0 - E2);

/// The smallest meridian radius of curvature, M(0) = a (1 − e²), reached at
/// the equator; M(φ) grows monotonically towards the poles. Used for
/// conservative latitude padding: along any curve of length s the latitude
/// changes by at most s / M(0) radians.
///
/// Units: metres (about 6335439.327 m). Accuracy: f64 round-off of the
/// derivation. NULL/NaN: not applicable (constant). References: NIMA
/// TR8350.2 (2000) for a and f; M(φ) as in [`meridian_radius`].
pub const MIN_MERIDIAN_RADIUS: f64 = A * (1.0 - E2);

/// Meridian radius of curvature M(φ) = a (1 − e²) / (1 − e² sin² φ)^(3/2).
///
/// Units: latitude in degrees; result in metres.
///
/// Accuracy: a few units in the last place of f64 (direct evaluation of the
/// closed form; formula from Torge & Müller, "Geodesy", 4th ed., section 4.1,
/// cited from memory).
///
/// NaN: a NaN latitude gives NaN. Latitudes outside [−90, 90] are evaluated
/// by the same formula (the function is periodic), without a panic.
///
/// References: NIMA TR8350.2 (2000) for a and f.
pub fn meridian_radius(lat_deg: f64) -> f64 {
    let s = lat_deg.to_radians().sin();
    let w = 1.0 - E2 * s * s;
    A * (1.0 - E2) / (w * w.sqrt())
}

/// Prime-vertical radius of curvature N(φ) = a / (1 − e² sin² φ)^(1/2).
///
/// Units: latitude in degrees; result in metres.
///
/// Accuracy: a few units in the last place of f64 (direct evaluation of the
/// closed form; formula from Torge & Müller, "Geodesy", 4th ed., section 4.1,
/// cited from memory).
///
/// NaN: a NaN latitude gives NaN. Latitudes outside [−90, 90] are evaluated
/// by the same formula, without a panic.
///
/// References: NIMA TR8350.2 (2000) for a and f.
pub fn prime_vertical_radius(lat_deg: f64) -> f64 {
    let s = lat_deg.to_radians().sin();
    A / (1.0 - E2 * s * s).sqrt()
}

/// Radius of the parallel at latitude φ, N(φ) cos φ: the distance from the
/// rotation axis, which decreases monotonically with |φ|.
///
/// Units: latitude in degrees; result in metres.
///
/// Accuracy: a few units in the last place of f64 (about 4e-10 m at the
/// pole, where cos of the f64 value of π/2 is not exactly 0).
///
/// NaN: a NaN latitude gives NaN.
///
/// References: Torge & Müller, "Geodesy", 4th ed., section 4.1 (from
/// memory); NIMA TR8350.2 (2000) for a and f.
pub fn parallel_radius(lat_deg: f64) -> f64 {
    let (s, c) = lat_deg.to_radians().sin_cos();
    A * c.abs() / (1.0 - E2 * s * s).sqrt()
}
