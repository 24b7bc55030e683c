//! The codecs against an independent reader and against hostile input.
//!
//! - The `wkb` crate (georust, crates.io), a WKB reader written apart from
//!   ambit, reads every blob ambit writes to the same coordinates.
//! - Blobs ambit writes read back and re-encode byte-identical; WKT and
//!   GeoJSON text round-trips through blobs.
//! - Truncated, bit-flipped and random blobs and texts give errors, never a
//!   panic, and never allocate beyond what the input could hold.

use ambit::blob::{self, geojson, gpkg, wkb as ambit_wkb, wkt};
use ambit::geometry::{Dimensions, Geometry, Shape};
use ambit::testing::{random_geometry, XorShift};
use geo_traits::{
    CoordTrait, GeometryCollectionTrait, GeometryTrait, GeometryType, LineStringTrait,
    MultiLineStringTrait, MultiPointTrait, MultiPolygonTrait, PointTrait, PolygonTrait,
};

const ALL_DIMS: [Dimensions; 4] = [
    Dimensions::Xy,
    Dimensions::Xyz,
    Dimensions::Xym,
    Dimensions::Xyzm,
];

fn coord(rng: &mut XorShift) -> f64 {
    (rng.uniform(-180.0, 180.0) * 1e6).round() / 1e6
}

/// Flattens what the independent reader sees into ambit's model.
fn flatten_coords<C: CoordTrait<T = f64>>(c: C, out: &mut Vec<f64>) {
    for i in 0..c.dim().size() {
        out.push(c.nth_or_panic(i));
    }
}

fn line_values<L: LineStringTrait<T = f64>>(l: &L) -> Vec<f64> {
    let mut v = Vec::new();
    for c in l.coords() {
        flatten_coords(c, &mut v);
    }
    v
}

fn point_values<P: PointTrait<T = f64>>(p: &P) -> Vec<f64> {
    let mut v = Vec::new();
    if let Some(c) = p.coord() {
        flatten_coords(c, &mut v);
    }
    // The independent reader returns POINT EMPTY's NaN ordinates as a coord.
    if v.iter().all(|x| x.is_nan()) {
        v.clear();
    }
    v
}

fn polygon_rings<P: PolygonTrait<T = f64>>(p: &P) -> Vec<Vec<f64>> {
    let mut rings = Vec::new();
    if let Some(e) = p.exterior() {
        rings.push(line_values(&e));
    }
    for i in p.interiors() {
        rings.push(line_values(&i));
    }
    rings
}

fn dims_of<G: GeometryTrait<T = f64>>(g: &G) -> Dimensions {
    match g.dim() {
        geo_traits::Dimensions::Xy => Dimensions::Xy,
        geo_traits::Dimensions::Xyz => Dimensions::Xyz,
        geo_traits::Dimensions::Xym => Dimensions::Xym,
        geo_traits::Dimensions::Xyzm => Dimensions::Xyzm,
        geo_traits::Dimensions::Unknown(n) => panic!("unknown dimension {n}"),
    }
}

fn to_model<G: GeometryTrait<T = f64>>(g: &G) -> Geometry {
    let dims = dims_of(g);
    let shape = match g.as_type() {
        GeometryType::Point(p) => Shape::Point(point_values(p)),
        GeometryType::LineString(l) => Shape::LineString(line_values(l)),
        GeometryType::Polygon(p) => Shape::Polygon(polygon_rings(p)),
        GeometryType::MultiPoint(m) => {
            Shape::MultiPoint(m.points().map(|p| point_values(&p)).collect())
        }
        GeometryType::MultiLineString(m) => {
            Shape::MultiLineString(m.line_strings().map(|l| line_values(&l)).collect())
        }
        GeometryType::MultiPolygon(m) => {
            Shape::MultiPolygon(m.polygons().map(|p| polygon_rings(&p)).collect())
        }
        GeometryType::GeometryCollection(c) => {
            Shape::GeometryCollection(c.geometries().map(|m| to_model(&m)).collect())
        }
        _ => panic!("unexpected type from the independent reader"),
    };
    Geometry::new(dims, shape)
}

#[test]
fn an_independent_reader_sees_what_ambit_writes() {
    let mut rng = XorShift(0x1234_5678_9abc_def1);
    for case in 0..3000 {
        let g = random_geometry(&mut rng, ALL_DIMS[case % 4], 2, &mut coord);
        let bytes = ambit_wkb::write(&g);
        let theirs = wkb::reader::read_wkb(&bytes).expect("independent reader accepts it");
        let model = to_model(&theirs);
        assert_eq!(
            ambit_wkb::write(&model),
            bytes,
            "case {case}: {}",
            wkt::write(&g)
        );
    }
}

#[test]
fn blobs_read_back_and_re_encode_byte_identical() {
    let mut rng = XorShift(0xfeed_f00d);
    for case in 0..3000 {
        let g = random_geometry(&mut rng, ALL_DIMS[case % 4], 2, &mut coord);
        let blob = gpkg::write(&g, 4326);
        let decoded = blob::decode(&blob).unwrap();
        assert_eq!(decoded.geometry, g, "case {case}");
        assert_eq!(gpkg::write(&decoded.geometry, decoded.srs_id), blob);
        let wkb = ambit_wkb::write(&g);
        assert_eq!(ambit_wkb::write(&blob::decode(&wkb).unwrap().geometry), wkb);
    }
}

#[test]
fn text_round_trips_through_blobs() {
    let mut rng = XorShift(0xabad_1dea);
    for case in 0..2000 {
        let g = random_geometry(&mut rng, ALL_DIMS[case % 2], 2, &mut coord);
        // WKT -> blob -> WKT
        let text = wkt::write(&g);
        let blob = gpkg::write(&wkt::parse(&text).unwrap(), 4326);
        assert_eq!(wkt::write(&blob::decode(&blob).unwrap().geometry), text);
        // GeoJSON -> blob -> GeoJSON (coordinates have 6 decimals, so 9
        // decimals lose nothing).
        let json = geojson::write(&g, geojson::DEFAULT_DECIMALS);
        let parsed = geojson::parse(&json).unwrap().unwrap();
        let blob = gpkg::write(&parsed, 4326);
        let again = geojson::write(&blob::decode(&blob).unwrap().geometry, 9);
        assert_eq!(again, json, "case {case}");
    }
}

/// Every prefix, and many single-byte changes, of valid blobs decode to an
/// error or a geometry; nothing panics.
#[test]
fn hostile_blobs_never_panic() {
    let mut rng = XorShift(0xdead_beef);
    let mut errors = 0usize;
    for case in 0..400 {
        let g = random_geometry(&mut rng, ALL_DIMS[case % 4], 3, &mut coord);
        for blob in [gpkg::write(&g, 4326), ambit_wkb::write(&g)] {
            for cut in 0..blob.len() {
                if blob::decode(&blob[..cut]).is_err() {
                    errors += 1;
                }
                let _ = blob::decode_valid(&blob[..cut]);
                let _ = blob::summary(&blob[..cut]);
            }
            for _ in 0..64 {
                let mut bad = blob.clone();
                let i = rng.below(bad.len() as u64) as usize;
                bad[i] = rng.next_u64() as u8;
                let _ = blob::decode_valid(&bad);
            }
        }
    }
    // Truncation always breaks a blob.
    assert!(errors > 10_000, "{errors}");
    // Pure noise.
    for len in 0..2000 {
        let noise: Vec<u8> = (0..len).map(|_| rng.next_u64() as u8).collect();
        let _ = blob::decode_valid(&noise);
        let mut gp = b"GP\0\x01".to_vec();
        gp.extend_from_slice(&noise);
        let _ = blob::decode_valid(&gp);
    }
}

#[test]
fn hostile_text_never_panics() {
    let mut rng = XorShift(0x0bad_cafe);
    let alphabet = b"POINTLESMUYGCR ZE(),.-+e0123456789{}[]\":typecordinas";
    for _ in 0..20_000 {
        let len = rng.below(60) as usize;
        let text: String = (0..len)
            .map(|_| alphabet[rng.below(alphabet.len() as u64) as usize] as char)
            .collect();
        let _ = wkt::parse(&text);
        let _ = geojson::parse(&text);
    }
    for case in 0..300 {
        let g = random_geometry(&mut rng, ALL_DIMS[case % 4], 2, &mut coord);
        let text = wkt::write(&g);
        let json = geojson::write(&g, 6);
        for cut in 0..text.len() {
            let _ = wkt::parse(&text[..cut]);
        }
        for cut in 0..json.len() {
            let _ = geojson::parse(&json[..cut]);
        }
    }
}
