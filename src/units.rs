//! Units of length, with their exact definitions.
//!
//! The international mile and foot are defined exactly in metres (NIST
//! Special Publication 811, 2008 edition, appendix B.8: 1 mi = 1609.344 m,
//! 1 ft = 0.3048 m); the kilometre is 1000 m by the SI prefix.

/// Metres in one international mile (NIST SP 811, B.8), exact.
///
/// ```
/// // Half a mile, the park threshold of the trade (common practice).
/// assert_eq!(0.5 * ambit::units::METRES_PER_MILE, 804.672);
/// ```
pub const METRES_PER_MILE: f64 = 1609.344;
/// Metres in one international foot (NIST SP 811, B.8), exact.
pub const METRES_PER_FOOT: f64 = 0.3048;
/// Metres in one kilometre (SI), exact.
pub const METRES_PER_KILOMETRE: f64 = 1000.0;
