//! A polygon cut into pieces small enough for one local plane each.
//!
//! ambit_share measures a polygon in an azimuthal equidistant plane, whose
//! scale error grows as ρ²/(3R²) with the distance ρ from its centre
//! ([`crate::geodesy::frame`]). A polygon larger than [`CELL_DEGREES`] is
//! cut here into pieces by a grid of cells in longitude and latitude:
//! rows [`CELL_DEGREES`] high, cut into columns about as wide in metres
//! (so every cell lies within about 25 km of its centre), each piece then
//! measured in its own plane.
//!
//! Method. Each ring's geodesic edges are first densified (points on the
//! geodesic, Karney's direct problem, at most [`DENSE_METRES`] apart) so
//! that a straight segment in longitude and latitude between neighbouring
//! points strays from the geodesic by centimetres. Longitudes are unwrapped
//! along each ring (so rings across the antimeridian stay whole); a ring
//! whose longitudes wind a full turn encloses a pole (the one
//! [`Prepared::rings`] says, else the south pole) and is closed
//! through that pole. Rings are then clipped by the grid lines, each ring
//! against each half-plane (Sutherland and Hodgman, "Reentrant polygon
//! clipping", CACM 17(1), 1974), which keeps the even-odd rule: a point of
//! a cell is inside the clipped rings exactly when it was inside the
//! polygon. The cuts are binary (half the grid lines at a time), so the
//! work grows as n log(cells). Neighbouring pieces share their cut points
//! bit for bit, so the pieces tile the densified polygon.

use geographiclib_rs::DirectGeodesic;

use crate::error::GeomError;
use crate::geodesy::inverse::{inverse, wgs84};
use crate::geometry::{Dimensions, Geometry, Shape};
use crate::interrupt::Interrupt;
use crate::proximity::prepared::{wrap_delta, LonLat, Prepared};

/// The height of a grid row, degrees of latitude (33 km); columns are as
/// wide in metres at the row's edge nearer a pole.
pub const CELL_DEGREES: f64 = 0.3;

/// The longest edge of a densified ring, metres.
pub const DENSE_METRES: f64 = 2_000.0;

/// The longest edge of a piece along a cut, degrees: cut lines are
/// meridians and parallels, and a piece's edges are later taken as
/// geodesics, which bow away from a parallel by about d² tan(lat) / (8 R)
/// (5 cm for 0.02 degrees of longitude at latitude 45); rows of different
/// column widths place these points differently on their common parallel,
/// so the bow is what keeps the pieces' areas from adding up exactly (the
/// unit test below holds their sum to 1e-7 of the whole).
const CUT_STEP_DEGREES: f64 = 0.02;

/// The rings of `g`'s polygons in unwrapped longitude and latitude,
/// densified, each closed (last point equal to the first), pole-enclosing
/// rings closed through their pole. All rings are unwrapped near the first
/// ring's first vertex.
pub fn lonlat_rings(g: &Prepared, stop: &dyn Interrupt) -> Result<Vec<Vec<LonLat>>, GeomError> {
    let mut out = Vec::new();
    let mut reference: Option<f64> = None;
    let mut since_check = 0usize;
    for (ring, north) in g.rings() {
        if ring.len() < 3 {
            continue;
        }
        let start = ring[0].0;
        let start = match reference {
            None => {
                reference = Some(start);
                start
            }
            Some(r) => r + wrap_delta(r, start),
        };
        let mut pts: Vec<LonLat> = vec![(start, ring[0].1)];
        let mut lon = start;
        for w in ring.windows(2) {
            since_check += 1;
            if since_check >= 4096 {
                since_check = 0;
                stop.check()?;
            }
            let (a, b) = (w[0], w[1]);
            for p in densified(a, b) {
                lon += wrap_delta(lon, p.0);
                pts.push((lon, p.1));
            }
        }
        let winding = lon - start;
        if winding.abs() > 180.0 {
            let pole = if north { 90.0 } else { -90.0 };
            pts.push((lon, pole));
            pts.push((start, pole));
            pts.push((start, ring[0].1));
        } else if let Some(last) = pts.last_mut() {
            *last = (start, ring[0].1);
        }
        out.push(pts);
    }
    Ok(out)
}

/// The points after `a` up to and including `b` on the geodesic a-b, at
/// most [`DENSE_METRES`] apart.
fn densified(a: LonLat, b: LonLat) -> Vec<LonLat> {
    // A quick lower estimate first: most edges of detailed polygons are
    // short and need no geodesic.
    let dlat = (b.1 - a.1).abs();
    let dlon = wrap_delta(a.0, b.0).abs() * a.1.abs().max(b.1.abs()).to_radians().cos();
    if 111_000.0 * dlat.hypot(dlon) < 0.5 * DENSE_METRES {
        return vec![b];
    }
    let (s, azi, _) = inverse(a.0, a.1, b.0, b.1);
    if s.is_nan() || s <= DENSE_METRES {
        return vec![b];
    }
    let n = (s / DENSE_METRES).ceil() as usize;
    let mut out = Vec::with_capacity(n);
    for k in 1..n {
        let (lat, lon): (f64, f64) = wgs84().direct(a.1, a.0, azi, s * k as f64 / n as f64);
        out.push((lon, lat));
    }
    out.push(b);
    out
}

/// Which side of a cut to keep.
#[derive(Clone, Copy)]
enum Keep {
    Below,
    Above,
}

/// Clips a closed ring to one side of the line `axis` = `at` (axis 0:
/// longitude, 1: latitude). The result is closed, or empty.
fn clip(ring: &[LonLat], axis: usize, at: f64, keep: Keep) -> Vec<LonLat> {
    let coord = |p: &LonLat| if axis == 0 { p.0 } else { p.1 };
    let inside = |p: &LonLat| match keep {
        Keep::Below => coord(p) <= at,
        Keep::Above => coord(p) >= at,
    };
    let mut out = Vec::with_capacity(ring.len() + 4);
    for w in ring.windows(2) {
        let (p, q) = (w[0], w[1]);
        let (pin, qin) = (inside(&p), inside(&q));
        if pin {
            out.push(p);
        }
        if pin != qin {
            let t = (at - coord(&p)) / (coord(&q) - coord(&p));
            let x = if axis == 0 {
                (at, p.1 + t * (q.1 - p.1))
            } else {
                (p.0 + t * (q.0 - p.0), at)
            };
            out.push(x);
        }
    }
    if out.len() < 3 {
        return Vec::new();
    }
    out.push(out[0]);
    out
}

/// Rings clipped to one side of a cut, dropping empty ones.
fn clip_all(rings: &[Vec<LonLat>], axis: usize, at: f64, keep: Keep) -> Vec<Vec<LonLat>> {
    rings
        .iter()
        .map(|r| clip(r, axis, at, keep))
        .filter(|r| !r.is_empty())
        .collect()
}

/// The extent (lon_lo, lon_hi, lat_lo, lat_hi) of rings.
fn extent(rings: &[Vec<LonLat>]) -> (f64, f64, f64, f64) {
    let mut e = (
        f64::INFINITY,
        f64::NEG_INFINITY,
        f64::INFINITY,
        f64::NEG_INFINITY,
    );
    for p in rings.iter().flatten() {
        e.0 = e.0.min(p.0);
        e.1 = e.1.max(p.0);
        e.2 = e.2.min(p.1);
        e.3 = e.3.max(p.1);
    }
    e
}

/// Cuts `rings` along `axis` at the lines `at(k)` for k in lo+1..hi and
/// hands each strip k (between at(k) and at(k+1)) to `emit`.
fn strips<E>(
    rings: Vec<Vec<LonLat>>,
    axis: usize,
    lo: i64,
    hi: i64,
    at: &dyn Fn(i64) -> f64,
    emit: &mut dyn FnMut(Vec<Vec<LonLat>>) -> Result<(), E>,
) -> Result<(), E> {
    if rings.is_empty() {
        return Ok(());
    }
    if hi - lo <= 1 {
        return emit(rings);
    }
    let mid = lo + (hi - lo) / 2;
    let below = clip_all(&rings, axis, at(mid), Keep::Below);
    let above = clip_all(&rings, axis, at(mid), Keep::Above);
    drop(rings);
    strips(below, axis, lo, mid, at, emit)?;
    strips(above, axis, mid, hi, at, emit)
}

/// Cuts the rings of `lonlat_rings` by the grid and hands every non-empty
/// piece, as a prepared polygon (longitudes wrapped to ±180, edges along
/// cuts densified), to `each`. Asks `stop` between pieces.
pub fn for_each_piece<E: From<GeomError>>(
    rings: Vec<Vec<LonLat>>,
    stop: &dyn Interrupt,
    each: &mut dyn FnMut(Prepared) -> Result<(), E>,
) -> Result<(), E> {
    let (_, _, lat_lo, lat_hi) = extent(&rings);
    if lat_lo.is_nan() || lat_hi.is_nan() || lat_lo > lat_hi {
        return Ok(());
    }
    let row_lo = (lat_lo / CELL_DEGREES).floor() as i64;
    let row_hi = ((lat_hi / CELL_DEGREES).ceil() as i64).max(row_lo + 1);
    let row_at = |k: i64| (k as f64 * CELL_DEGREES).clamp(-90.0, 90.0);
    strips(rings, 1, row_lo, row_hi, &row_at, &mut |row| {
        let (lon_lo, lon_hi, lat_lo, lat_hi) = extent(&row);
        let poleward = lat_lo.abs().max(lat_hi.abs()).min(90.0);
        let width = (CELL_DEGREES / poleward.to_radians().cos()).min(360.0);
        let col_lo = (lon_lo / width).floor() as i64;
        let col_hi = ((lon_hi / width).ceil() as i64).max(col_lo + 1);
        let col_at = |k: i64| k as f64 * width;
        strips(row, 0, col_lo, col_hi, &col_at, &mut |cell| {
            stop.check()?;
            if let Some(p) = piece(&cell) {
                each(p)?;
            }
            Ok(())
        })
    })
}

/// A cell's rings as a prepared polygon (one polygon, every ring a ring of
/// it, so the even-odd rule holds), or `None` when no ring spans an area.
fn piece(rings: &[Vec<LonLat>]) -> Option<Prepared> {
    let mut parts: Vec<Vec<f64>> = Vec::new();
    for ring in rings {
        let mut twice_area = 0.0;
        for w in ring.windows(2) {
            twice_area += w[0].0 * w[1].1 - w[1].0 * w[0].1;
        }
        if twice_area == 0.0 {
            continue;
        }
        let mut flat = Vec::with_capacity(2 * ring.len() + 16);
        for w in ring.windows(2) {
            let (a, b) = (w[0], w[1]);
            let cos = a.1.abs().max(b.1.abs()).to_radians().cos().max(1e-3);
            let span = (b.1 - a.1).abs().max((b.0 - a.0).abs() * cos);
            let n = ((span / CUT_STEP_DEGREES).ceil() as usize).clamp(1, 100_000);
            for k in 0..n {
                let t = k as f64 / n as f64;
                let lon = a.0 + t * (b.0 - a.0);
                flat.push(wrap_delta(0.0, lon));
                flat.push(a.1 + t * (b.1 - a.1));
            }
        }
        let first = (flat[0], flat[1]);
        flat.extend([first.0, first.1]);
        parts.push(flat);
    }
    (!parts.is_empty())
        .then(|| Prepared::new(&Geometry::new(Dimensions::Xy, Shape::Polygon(parts))))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::interrupt::Never;

    fn square(lon: f64, lat: f64, h: f64) -> Prepared {
        Prepared::new(&crate::testing::square(lon, lat, h))
    }

    /// The pieces' geodesic areas add up to the polygon's (Karney's area of
    /// the whole, geodesy::area), across the antimeridian too.
    #[test]
    fn pieces_tile_the_polygon() {
        for (lon, lat, h) in [(10.0, 45.0, 1.0), (179.5, -20.0, 0.7), (0.0, 0.0, 3.0)] {
            let g = square(lon, lat, h);
            let whole = crate::geodesy::area::ring_area_perimeter(
                &g.polygons()[0][0]
                    .iter()
                    .flat_map(|p| [p.0, p.1])
                    .collect::<Vec<_>>(),
                2,
            )
            .0
            .abs();
            let rings = lonlat_rings(&g, &Never).unwrap();
            let mut sum = 0.0;
            let mut count = 0;
            for_each_piece(rings, &Never, &mut |p| -> Result<(), GeomError> {
                let flat: Vec<f64> = p.polygons()[0][0].iter().flat_map(|q| [q.0, q.1]).collect();
                sum += crate::geodesy::area::ring_area_perimeter(&flat, 2).0.abs();
                count += 1;
                Ok(())
            })
            .unwrap();
            assert!(count > 4, "{count} pieces");
            assert!(
                ((sum - whole) / whole).abs() < 1e-7,
                "pieces {sum} vs whole {whole} at {lon},{lat}"
            );
        }
    }
}
