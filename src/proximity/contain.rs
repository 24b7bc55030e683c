//! Point in polygon on the ellipsoid, with geodesic edges.
//!
//! The test casts the meridian from the point northward to the pole and
//! counts the edges it crosses (Jordan curve parity). An edge crosses when
//! the point's longitude lies in the edge's longitude span (half open, with
//! longitudes unwrapped so edges across the antimeridian work) and the
//! edge's latitude at that longitude is north of the point.
//!
//! The edge's latitude at a longitude is first estimated by linear
//! interpolation in (longitude, latitude). A geodesic bows away from that
//! chord. On the sphere `u = tan(lat)` obeys `u'' = -u` along a great circle
//! as a function of longitude, so `lat'' = -sin(lat) cos(lat) - 2 tan(lat)
//! lat'^2`, and the chord's error over a longitude span `h` (radians) is at
//! most `h^2 / 8 * max |lat''|`. ambit bounds `|lat''|` with the largest
//! `|tan(lat)|` on the edge (latitude grown by half a degree) and 1.5 times
//! the chord's slope, then doubles the result for the ellipsoid; only when
//! the point lies within that bound of the chord is the exact latitude of the
//! geodesic at the point's longitude computed (Newton's method along the
//! geodesic, Karney 2013's direct problem via geographiclib-rs, to 1 µm along
//! the edge). Long edges (more than [`CHORD_MAX_SPAN`] degrees of
//! longitude), steep ones and edges beyond latitude 85 always take the exact
//! path. tests/proximity_bruteforce.rs compares the shortcut with the exact
//! test on points placed within 1e-9 to 1e-2 degrees of edges. The answer
//! is therefore the exact one except for points within about a micrometre
//! of the boundary, whose distance to the boundary is that small anyway.
//!
//! Rings that enclose the north pole are recognised by their longitudes
//! winding a full turn with vertices mostly north of the equator; for them
//! the parity is inverted (the northward meridian of an inside point reaches
//! the pole without leaving the ring).

use geographiclib_rs::{DirectGeodesic, InverseGeodesic};

use crate::geodesy::{ellipsoid, inverse};
use crate::proximity::boxes::LonLatBox;
use crate::proximity::prepared::{wrap_delta, Element, LonLat, Prepared};

/// Edges wider than this (degrees of longitude) skip the chord estimate.
pub const CHORD_MAX_SPAN: f64 = 2.0;
/// Edges steeper than this (latitude over longitude) skip the chord estimate.
const CHORD_MAX_SLOPE: f64 = 20.0;
/// Edges reaching beyond this latitude (degrees) skip the chord estimate.
const CHORD_MAX_LATITUDE: f64 = 85.0;

/// True when `p` lies inside the polygon given by its rings (the first the
/// exterior, the rest holes); a point in a hole is outside.
pub fn point_in_polygon(p: LonLat, rings: &[impl AsRef<[LonLat]>]) -> bool {
    let mut inside = false;
    for ring in rings {
        if point_in_ring(p, ring.as_ref()) {
            inside = !inside;
        }
    }
    inside
}

/// Parity of crossings of the northward meridian through `p` with a closed
/// ring.
pub fn point_in_ring(p: LonLat, ring: &[LonLat]) -> bool {
    let crossings = ring
        .windows(2)
        .filter(|w| meridian_crosses(p, w[0], w[1]))
        .count();
    (crossings % 2 == 1) != encloses_north_pole(ring)
}

/// True when the ring's longitudes wind a full turn and its vertices lie
/// on average north of the equator: it encloses the north pole.
pub fn encloses_north_pole(ring: &[LonLat]) -> bool {
    let mut winding = 0.0;
    let mut lat_sum = 0.0;
    for w in ring.windows(2) {
        winding += wrap_delta(w[0].0, w[1].0);
        lat_sum += w[0].1;
    }
    winding.abs() > 180.0 && lat_sum > 0.0
}

/// True when the northward meridian from `p` crosses the geodesic edge a-b
/// (half-open in longitude, so a vertex on the meridian counts once).
pub fn meridian_crosses(p: LonLat, a: LonLat, b: LonLat) -> bool {
    let span = wrap_delta(a.0, b.0);
    // Longitudes of a and b relative to p, unwrapped along the edge.
    let da = wrap_delta(p.0, a.0);
    let db = da + span;
    let straddles = (da <= 0.0 && 0.0 < db) || (db <= 0.0 && 0.0 < da);
    straddles && edge_latitude_is_north(p, a, b, da, span)
}

/// True when `p` lies inside some polygon of the prepared geometry `g`
/// (only the edges whose boxes meet the northward meridian from `p` are
/// tested when `g` has an element index).
pub fn point_in_prepared(p: LonLat, g: &Prepared) -> bool {
    if g.polygons().is_empty() {
        return false;
    }
    // The rings in order with their pole flags, polygon by polygon.
    let mut rings = g.rings();
    if !g.indexed() {
        // Small geometries: walk the rings directly, allocating nothing.
        return g.polygons().iter().any(|polygon| {
            rings
                .by_ref()
                .take(polygon.len())
                .fold(false, |inside, (ring, pole)| {
                    let crossings = ring
                        .windows(2)
                        .filter(|w| meridian_crosses(p, w[0], w[1]))
                        .count();
                    inside != ((crossings % 2 == 1) != pole)
                })
        });
    }
    let mut parity: Vec<Vec<bool>> = g
        .polygons()
        .iter()
        .map(|polygon| rings.by_ref().take(polygon.len()).map(|r| r.1).collect())
        .collect();
    let ray = LonLatBox {
        lon_lo: p.0,
        lon_hi: p.0,
        lat_lo: p.1,
        lat_hi: 90.0,
    };
    for i in g.elements_near(&ray) {
        if let (Some(owner), Element::Edge(a, b)) = (g.owner(i), g.element(i)) {
            if meridian_crosses(p, a, b) {
                let flag = &mut parity[owner.polygon as usize][owner.ring as usize];
                *flag = !*flag;
            }
        }
    }
    parity
        .iter()
        .any(|rings| rings.iter().fold(false, |inside, &r| inside != r))
}

/// True when the geodesic a-b, at the longitude of `p`, is north of `p`.
/// `da` is a's longitude relative to p, `span` the edge's longitude span.
fn edge_latitude_is_north(p: LonLat, a: LonLat, b: LonLat, da: f64, span: f64) -> bool {
    let t = -da / span;
    let chord = a.1 + t * (b.1 - a.1);
    let h = span.abs().to_radians();
    let slope = (b.1 - a.1).abs() / span.abs();
    let max_lat = a.1.abs().max(b.1.abs());
    if span.abs() <= CHORD_MAX_SPAN && slope <= CHORD_MAX_SLOPE && max_lat <= CHORD_MAX_LATITUDE {
        // Twice h^2/8 * (|sin cos| + 2 |tan| s^2) with |sin cos| <= 1/2, the
        // largest |tan| on the edge and 1.5 times the chord's slope; in
        // degrees, plus round-off.
        let tan_max = (max_lat + 0.5).to_radians().tan();
        let s = 1.5 * slope;
        let bound = (h * h / 4.0 * (0.5 + 2.0 * tan_max * s * s)).to_degrees() + 1e-12;
        if p.1 > chord + bound {
            return false;
        }
        if p.1 < chord - bound {
            return true;
        }
    }
    exact_edge_latitude(a, b, p.0) > p.1
}

/// The latitude of the geodesic from a to b where it meets longitude `lon`
/// (which must lie within the edge's longitude span).
pub fn exact_edge_latitude(a: LonLat, b: LonLat, lon: f64) -> f64 {
    let g = inverse::wgs84();
    let (s12, azi1, _, _): (f64, f64, f64, f64) = g.inverse(a.1, a.0, b.1, b.0);
    let span = wrap_delta(a.0, b.0);
    let target = wrap_delta(a.0, lon);
    let mut s = s12 * (target / span).clamp(0.0, 1.0);
    let mut lat = a.1;
    for _ in 0..30 {
        let (lat_s, lon_s, azi_s): (f64, f64, f64) = g.direct(a.1, a.0, azi1, s);
        lat = lat_s;
        let miss = wrap_delta(lon, lon_s); // degrees east of the target
                                           // d(lon)/ds = sin(azi) / (N cos lat), radians per metre.
        let rate = azi_s.to_radians().sin() / ellipsoid::parallel_radius(lat_s);
        if rate.abs() < 1e-18 {
            break;
        }
        let step = miss.to_radians() / rate;
        s = (s - step).clamp(0.0, s12);
        if step.abs() < 1e-6 {
            break;
        }
    }
    lat
}

#[cfg(test)]
mod tests {
    use super::*;

    fn square(lon0: f64, lat0: f64, size: f64) -> Vec<LonLat> {
        vec![
            (lon0, lat0),
            (lon0 + size, lat0),
            (lon0 + size, lat0 + size),
            (lon0, lat0 + size),
            (lon0, lat0),
        ]
    }

    #[test]
    fn inside_outside_and_holes() {
        let outer = square(-131.6, 38.3, 0.2);
        let hole = square(-131.55, 38.35, 0.05);
        let rings = vec![outer, hole];
        assert!(point_in_polygon((-131.45, 38.45), &rings));
        assert!(!point_in_polygon((-131.52, 38.37), &rings), "in the hole");
        assert!(!point_in_polygon((-131.3, 38.45), &rings), "east of it");
        assert!(!point_in_polygon((-131.45, 38.6), &rings), "north of it");
    }

    #[test]
    fn polygons_across_the_antimeridian() {
        let ring = vec![
            (179.8, -16.2),
            (-179.8, -16.2),
            (-179.8, -15.8),
            (179.8, -15.8),
            (179.8, -16.2),
        ];
        assert!(point_in_ring((179.95, -16.0), &ring));
        assert!(point_in_ring((-179.95, -16.0), &ring));
        assert!(point_in_ring((180.0, -16.0), &ring));
        assert!(!point_in_ring((179.7, -16.0), &ring));
        assert!(!point_in_ring((-179.7, -16.0), &ring));
    }

    #[test]
    fn geodesic_edges_bow_poleward_of_the_chord() {
        // A long east-west edge at latitude 60: the geodesic between its ends
        // runs north of the parallel. A point just north of the parallel at
        // mid-span is south of the geodesic edge, hence inside the polygon
        // below it; the planar chord would say outside.
        let ring = vec![
            (0.0, 50.0),
            (10.0, 50.0),
            (10.0, 60.0),
            (0.0, 60.0),
            (0.0, 50.0),
        ];
        let north_edge_mid = exact_edge_latitude((10.0, 60.0), (0.0, 60.0), 5.0);
        // On the sphere the bow is about (10 deg)^2 / 8 * sin 60 cos 60 = 0.0944 deg.
        assert!((north_edge_mid - 60.0944).abs() < 0.002, "{north_edge_mid}");
        assert!(point_in_ring((5.0, 60.05), &ring));
        assert!(!point_in_ring((5.0, north_edge_mid + 1e-6), &ring));
        assert!(point_in_ring((5.0, north_edge_mid - 1e-6), &ring));
    }

    #[test]
    fn rings_around_the_north_pole() {
        let ring: Vec<LonLat> = (0..=8).map(|i| (-180.0 + 45.0 * i as f64, 80.0)).collect();
        assert!(point_in_ring((10.0, 89.0), &ring));
        assert!(!point_in_ring((10.0, 70.0), &ring));
    }
}
