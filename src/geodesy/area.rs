//! Geodesic area and perimeter of a ring, and length of a line, on WGS84.
//!
//! Edges are geodesics. Areas use Karney's method (C. F. F. Karney,
//! "Algorithms for geodesics", J. Geodesy 87:43–55 (2013), section 6, doi
//! 10.1007/s00190-012-0578-z): the area between each edge and the equator
//! from the series for S12, summed with a count of crossings of the prime
//! meridian so that rings around a pole and rings across the antimeridian
//! come out right; implemented by `geographiclib-rs` `PolygonArea`.
//!
//! Coordinates are interleaved `f64` values, `width` values per vertex
//! (2: x y; 3: x y z or x y m; 4: x y z m), x = longitude, y = latitude in
//! degrees; only x and y are used.

use super::inverse::{distance, valid, wgs84};
use crate::error::GeomError;
use crate::interrupt::{cost, Never, Pacer};
use geographiclib_rs::{PolygonArea, Winding};

/// Signed geodesic area and perimeter of one ring.
///
/// Units: `coords` are interleaved (lon, lat, …) in degrees with `width`
/// values per vertex (2 ≤ width ≤ 4); returns `(area_m2, perimeter_m)` in
/// square metres and metres. The ring may be given closed (last vertex
/// equal to the first) or open; the closing edge is implied.
///
/// Sign convention: counter-clockwise positive, i.e. positive when the
/// enclosed region is on the left of the direction of travel (seen from
/// outside the ellipsoid). The value is the signed area reduced to
/// (−E/2, E/2], E = 510065621.7 km² the area of the ellipsoid: a
/// counter-clockwise ring enclosing more than half the earth is reported as
/// minus the area of its complement. A ring around a pole encloses the
/// pole on its left (positive when it runs eastwards around the north
/// pole).
///
/// Accuracy: round-off level of Karney's series (Karney 2013, section 6);
/// `tests/geodesy_reference.rs` checks a pole-enclosing and an
/// antimeridian-crossing ring against an independent Green's-theorem
/// quadrature to a relative 1e-9 (agreement printed there).
///
/// NULL/NaN: NaN or infinite coordinates or |lat| > 90 give (NaN, NaN);
/// a width outside 2..=4 or a length that is not a multiple of the width
/// gives (NaN, NaN). Fewer than 3 vertices give area 0 (and the
/// there-and-back perimeter). Never panics; no allocation.
///
/// References: C. F. F. Karney, "Algorithms for geodesics", J. Geodesy
/// 87:43–55 (2013), section 6, doi 10.1007/s00190-012-0578-z.
pub fn ring_area_perimeter(coords: &[f64], width: usize) -> (f64, f64) {
    ring_area_perimeter_until(coords, width, &mut Pacer::new(&Never))
        .unwrap_or((f64::NAN, f64::NAN))
}

/// [`ring_area_perimeter`], charging `pace` an inverse per vertex:
/// `Err(GeomError::Interrupted)` when it says stop (the only error).
pub fn ring_area_perimeter_until(
    coords: &[f64],
    width: usize,
    pace: &mut Pacer,
) -> Result<(f64, f64), GeomError> {
    if !(2..=4).contains(&width) || !coords.len().is_multiple_of(width) {
        return Ok((f64::NAN, f64::NAN));
    }
    let g = wgs84();
    let mut pa = PolygonArea::new(g, Winding::CounterClockwise);
    let n = coords.len() / width;
    for v in coords.chunks_exact(width) {
        pace.spend(cost::INVERSE)?;
        let (lon, lat) = (v[0], v[1]);
        if !valid(lon, lat) {
            return Ok((f64::NAN, f64::NAN));
        }
        pa.add_point(lat, lon);
    }
    if n == 0 {
        return Ok((0.0, 0.0));
    }
    let (perimeter, area, _count) = pa.compute(true);
    if n < 3 {
        return Ok((0.0, perimeter));
    }
    Ok((area, perimeter))
}

/// Geodesic length of a line (sum of the geodesic lengths of its edges).
///
/// Units: `coords` interleaved (lon, lat, …) in degrees, `width` values per
/// vertex (2 ≤ width ≤ 4); result in metres.
///
/// Accuracy: each edge better than 15 nm (Karney 2013); the sum is plain
/// f64 summation (relative round-off about n · 1e-16).
///
/// NULL/NaN: NaN for NaN/infinite coordinates, |lat| > 90, a width outside
/// 2..=4 or a length that is not a multiple of the width. Fewer than 2
/// vertices give 0. Never panics; no allocation.
///
/// References: C. F. F. Karney, "Algorithms for geodesics", J. Geodesy
/// 87:43–55 (2013), doi 10.1007/s00190-012-0578-z.
pub fn line_length(coords: &[f64], width: usize) -> f64 {
    line_length_until(coords, width, &mut Pacer::new(&Never)).unwrap_or(f64::NAN)
}

/// [`line_length`], charging `pace` an inverse per vertex:
/// `Err(GeomError::Interrupted)` when it says stop (the only error).
pub fn line_length_until(coords: &[f64], width: usize, pace: &mut Pacer) -> Result<f64, GeomError> {
    if !(2..=4).contains(&width) || !coords.len().is_multiple_of(width) {
        return Ok(f64::NAN);
    }
    let mut total = 0.0;
    let mut prev: Option<(f64, f64)> = None;
    for v in coords.chunks_exact(width) {
        pace.spend(cost::INVERSE)?;
        let (lon, lat) = (v[0], v[1]);
        if !valid(lon, lat) {
            return Ok(f64::NAN);
        }
        if let Some((plon, plat)) = prev {
            total += distance(plon, plat, lon, lat);
        }
        prev = Some((lon, lat));
    }
    Ok(total)
}

// The area of a whole geometry (its polygons under the even-odd rule,
// rings that touch themselves cut into loops) is
// `crate::proximity::validity::area`, next to the validity rules it
// relies on.

/// Geodesic length of a geometry in metres: the length of its line strings,
/// plus the perimeter (all rings, holes included) of its polygons; 0 for
/// points and for empty geometries.
///
/// Accuracy: Karney's inverse, 15 nm per edge (Karney 2013).
pub fn geometry_length(g: &crate::geometry::Geometry) -> f64 {
    geometry_length_until(g, &mut Pacer::new(&Never)).unwrap_or(f64::NAN)
}

/// [`geometry_length`], charging `pace` an inverse per vertex:
/// `Err(GeomError::Interrupted)` when it says stop (the only error).
pub fn geometry_length_until(
    g: &crate::geometry::Geometry,
    pace: &mut Pacer,
) -> Result<f64, GeomError> {
    use crate::geometry::Shape;
    let width = g.dims.width();
    let mut total = 0.0;
    match &g.shape {
        Shape::LineString(p) => total += line_length_until(p, width, pace)?,
        Shape::MultiLineString(parts) | Shape::Polygon(parts) => {
            for p in parts {
                total += line_length_until(p, width, pace)?;
            }
        }
        Shape::MultiPolygon(polygons) => {
            for p in polygons.iter().flatten() {
                total += line_length_until(p, width, pace)?;
            }
        }
        Shape::GeometryCollection(members) => {
            for m in members {
                total += geometry_length_until(m, pace)?;
            }
        }
        _ => {}
    }
    Ok(total)
}
