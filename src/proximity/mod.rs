//! Proximity between geometries on the WGS84 ellipsoid: prepared geometry
//! with bounding balls ([`prepared`]), point in polygon with geodesic edges
//! ([`contain`]), and minimum distance / within-distance ([`mod@distance`]).

pub mod balltree;
pub mod boxes;
pub mod contain;
pub mod distance;
pub mod layer;
pub mod pieces;
pub mod prepared;
pub mod quick;
pub mod share;
pub mod validity;

pub use distance::{
    distance, distance_interruptible, distance_within, distance_within_interruptible, within,
    within_counted, within_interruptible, Work,
};
pub use layer::{Feature, Layer};
pub use prepared::Prepared;
