//! The checks every geometry passes before ambit uses it (design.md,
//! "Semantics"):
//!
//! - the spatial reference is longitude/latitude: srs_id 4326 (WGS84), 4269
//!   (NAD83, within about a metre of WGS84, far below any access
//!   threshold), or 0 / -1 (undefined, read as longitude/latitude after the
//!   range check); anything else must be reprojected first;
//! - x and y are finite, longitude in [-540, 540] and latitude in [-90, 90]
//!   (numbers like 500000, 4500000 are projected metres, not degrees);
//! - line strings have 0 or at least 2 points; polygon rings have at least 4
//!   points and are closed (last x, y equal to the first);
//! - polygons mean one area: the rules of [`crate::proximity::validity`]
//!   (README, "Valid geometries"), which needs geodesic edge crossings and
//!   the point-in-polygon test and so lives with them.
//!
//! Z and M values are carried, not checked: ambit never measures with them.
//! Vertices and rings are numbered from 1 in messages, ring 1 being a
//! polygon's exterior.

use crate::error::GeomError;
use crate::geometry::{Geometry, Shape};
use crate::interrupt::Interrupt;

/// The spatial reference identifiers ambit reads as WGS84 longitude/latitude.
pub const ACCEPTED_SRS: [i64; 4] = [4326, 4269, 0, -1];

/// Latitude bound, degrees.
pub const MAX_ABS_LATITUDE: f64 = 90.0;
/// Longitude bound, degrees: one and a half turns, so data that wraps past
/// the antimeridian (e.g. 181 for -179) is accepted.
pub const MAX_ABS_LONGITUDE: f64 = 540.0;

/// Refuses a spatial reference that is not longitude/latitude.
pub fn check_srs(srs_id: i64) -> Result<(), GeomError> {
    if ACCEPTED_SRS.contains(&srs_id) {
        Ok(())
    } else {
        Err(GeomError::UnsupportedSrs { srs_id })
    }
}

/// Checks the spatial reference, every vertex and every ring, then that
/// every polygon means one area ([`crate::proximity::validity::check`]:
/// no crossing edges, holes inside their exterior and not nested,
/// polygons of a multipolygon apart). The polygon checks ask `stop`
/// after every millisecond or so of work (about 2 µs a vertex for a
/// polygon that is not a small star-shaped ring) and return
/// `Err(GeomError::Interrupted)` when it says stop; the vertex checks
/// before them take nanoseconds a vertex.
pub fn validate(geometry: &Geometry, srs_id: i64, stop: &dyn Interrupt) -> Result<(), GeomError> {
    check_srs(srs_id)?;
    let mut vertex = 0usize;
    check_shape(geometry, &mut vertex)?;
    crate::proximity::validity::check(geometry, stop)
}

fn check_shape(g: &Geometry, vertex: &mut usize) -> Result<(), GeomError> {
    let width = g.dims.width();
    let line = |part: &[f64], vertex: &mut usize| -> Result<(), GeomError> {
        check_vertices(part, width, vertex)?;
        let points = part.len() / width;
        if points == 1 {
            return Err(GeomError::LineTooShort { points });
        }
        Ok(())
    };
    match &g.shape {
        Shape::Point(p) => check_vertices(p, width, vertex),
        Shape::LineString(p) => line(p, vertex),
        Shape::MultiPoint(points) => points
            .iter()
            .try_for_each(|p| check_vertices(p, width, vertex)),
        Shape::MultiLineString(lines) => lines.iter().try_for_each(|p| line(p, vertex)),
        Shape::Polygon(rings) => check_rings(rings, width, vertex),
        Shape::MultiPolygon(polygons) => polygons
            .iter()
            .try_for_each(|rings| check_rings(rings, width, vertex)),
        Shape::GeometryCollection(members) => {
            members.iter().try_for_each(|m| check_shape(m, vertex))
        }
    }
}

fn check_rings(rings: &[Vec<f64>], width: usize, vertex: &mut usize) -> Result<(), GeomError> {
    for (i, ring) in rings.iter().enumerate() {
        check_vertices(ring, width, vertex)?;
        let points = ring.len() / width;
        if points < 4 {
            return Err(GeomError::RingTooShort {
                ring: i + 1,
                points,
            });
        }
        let last = &ring[ring.len() - width..];
        if ring[0] != last[0] || ring[1] != last[1] {
            return Err(GeomError::RingNotClosed { ring: i + 1 });
        }
    }
    Ok(())
}

fn check_vertices(part: &[f64], width: usize, vertex: &mut usize) -> Result<(), GeomError> {
    for v in part.chunks_exact(width) {
        *vertex += 1;
        let (x, y) = (v[0], v[1]);
        if !x.is_finite() || !y.is_finite() {
            return Err(GeomError::NotFinite { vertex: *vertex });
        }
        if y.abs() > MAX_ABS_LATITUDE || x.abs() > MAX_ABS_LONGITUDE {
            return Err(GeomError::OutOfRange {
                x,
                y,
                vertex: *vertex,
            });
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geometry::Dimensions;
    use crate::interrupt::Never;

    fn polygon(ring: Vec<f64>) -> Geometry {
        Geometry::new(Dimensions::Xy, Shape::Polygon(vec![ring]))
    }

    #[test]
    fn accepts_longitude_latitude_references_only() {
        let g = Geometry::point(-100.0, 40.0);
        for srs in ACCEPTED_SRS {
            assert_eq!(validate(&g, srs, &Never), Ok(()));
        }
        for srs in [3857, 5070, 32614, 4267] {
            assert_eq!(
                validate(&g, srs, &Never),
                Err(GeomError::UnsupportedSrs { srs_id: srs })
            );
        }
    }

    #[test]
    fn refuses_projected_and_corrupt_coordinates() {
        let projected = Geometry::point(500000.0, 4500000.0);
        assert!(matches!(
            validate(&projected, 4326, &Never),
            Err(GeomError::OutOfRange { vertex: 1, .. })
        ));
        let lat95 = Geometry::point(10.0, 95.0);
        assert!(matches!(
            validate(&lat95, 4326, &Never),
            Err(GeomError::OutOfRange { .. })
        ));
        let nan = Geometry::point(f64::NAN, 1.0);
        assert_eq!(
            validate(&nan, 4326, &Never),
            Err(GeomError::NotFinite { vertex: 1 })
        );
        let inf = Geometry::point(1.0, f64::INFINITY);
        assert_eq!(
            validate(&inf, 4326, &Never),
            Err(GeomError::NotFinite { vertex: 1 })
        );
        // Boundaries are inside.
        assert_eq!(validate(&Geometry::point(540.0, -90.0), 0, &Never), Ok(()));
        assert_eq!(validate(&Geometry::point(-540.0, 90.0), -1, &Never), Ok(()));
    }

    #[test]
    fn refuses_short_and_open_rings_and_one_point_lines() {
        let short = polygon(vec![0.0, 0.0, 1.0, 0.0, 0.0, 0.0]);
        assert_eq!(
            validate(&short, 4326, &Never),
            Err(GeomError::RingTooShort { ring: 1, points: 3 })
        );
        let open = polygon(vec![0.0, 0.0, 1.0, 0.0, 1.0, 1.0, 0.0, 1.0]);
        assert_eq!(
            validate(&open, 4326, &Never),
            Err(GeomError::RingNotClosed { ring: 1 })
        );
        let ok = polygon(vec![0.0, 0.0, 1.0, 0.0, 1.0, 1.0, 0.0, 0.0]);
        assert_eq!(validate(&ok, 4326, &Never), Ok(()));
        let line = Geometry::new(Dimensions::Xy, Shape::LineString(vec![1.0, 1.0]));
        assert_eq!(
            validate(&line, 4326, &Never),
            Err(GeomError::LineTooShort { points: 1 })
        );
        let empty_line = Geometry::new(Dimensions::Xy, Shape::LineString(vec![]));
        assert_eq!(validate(&empty_line, 4326, &Never), Ok(()));
    }

    #[test]
    fn numbers_vertices_across_parts() {
        let g = Geometry::new(
            Dimensions::Xy,
            Shape::MultiPoint(vec![vec![1.0, 1.0], vec![], vec![2.0, 91.0]]),
        );
        assert!(matches!(
            validate(&g, 4326, &Never),
            Err(GeomError::OutOfRange { vertex: 2, .. })
        ));
    }
}
