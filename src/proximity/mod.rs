//! Proximity between geometries on the WGS84 ellipsoid: prepared geometry
//! with bounding balls ([`prepared`]), point in polygon with geodesic edges
//! ([`contain`]), and minimum distance / within-distance ([`distance`]).

pub mod contain;
pub mod distance;
pub mod prepared;

pub use distance::{distance, within, within_counted, Work};
pub use prepared::Prepared;
