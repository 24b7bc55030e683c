//! Geodesy core of ambit: exact geodesic distances on the WGS84 ellipsoid.
//!
//! Coordinates everywhere are (lon, lat) in degrees on WGS84; distances are
//! metres, areas square metres. Every function is pure, allocates nothing
//! and never panics; NaN or infinite coordinates and latitudes outside
//! [−90, 90] give NaN (or `false` / `None` / an infinite bound where the
//! result is not a number; each function says which).
//!
//! * [`ellipsoid`]: WGS84 constants (NIMA TR8350.2) and radii of curvature.
//! * [`inverse`](mod@inverse): point-to-point distance and azimuths (Karney 2013, via
//!   `geographiclib-rs`).
//! * [`segment`]: point-to-segment and segment-to-segment minimum distance,
//!   segment crossing (ellipsoidal gnomonic projection, Karney 2013
//!   section 8; side-of-geodesic tests).
//! * [`local`]: the fast path, a flat-ellipsoid metric with a rigorous
//!   error bound, and conservative degree padding for envelopes.
//! * [`area`]: ring area and perimeter, line length (Karney 2013 section 6).
//!
//! References: C. F. F. Karney, "Algorithms for geodesics", J. Geodesy
//! 87:43–55 (2013), doi 10.1007/s00190-012-0578-z; NIMA TR8350.2, 3rd ed.
//! (2000).

pub mod area;
pub mod ellipsoid;
pub mod frame;
pub mod inverse;
pub mod local;
pub mod segment;

pub use area::{line_length, ring_area_perimeter};
pub use inverse::{distance, inverse};
pub use local::{degrees_padding, local_distance_with_bound, within_fast};
pub use segment::{
    point_segment_distance, segment_segment_distance, segments_intersect, GeodesicSegment,
};
