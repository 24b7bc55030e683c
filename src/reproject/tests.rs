//! Unit checks of the reprojection. The comparison with PROJ itself on
//! 10,000 points per system is tests/host_reproject.rs (pyproj).

use super::*;
use crate::geometry::Dimensions;

fn point(r: &Reprojection, x: f64, y: f64) -> (f64, f64) {
    let mut g = Geometry::point(x, y);
    r.to_lonlat(&mut g).unwrap();
    let p = g.point_values().unwrap();
    (p[0], p[1])
}

/// ESRI WKT of UTM zone 17N on WGS84, as GIS programs write it to .prj
/// files (parameter names of the ESRI dialect: False_Easting,
/// Central_Meridian, Scale_Factor; values from the EPSG 32617 definition).
const ESRI_UTM17: &str = r#"PROJCS["WGS_1984_UTM_Zone_17N",GEOGCS["GCS_WGS_1984",DATUM["D_WGS_1984",SPHEROID["WGS_1984",6378137.0,298.257223563]],PRIMEM["Greenwich",0.0],UNIT["Degree",0.0174532925199433]],PROJECTION["Transverse_Mercator"],PARAMETER["False_Easting",500000.0],PARAMETER["False_Northing",0.0],PARAMETER["Central_Meridian",-81.0],PARAMETER["Scale_Factor",0.9996],PARAMETER["Latitude_Of_Origin",0.0],UNIT["Meter",1.0]]"#;

/// WKT2 (ISO 19162:2019) of NAD83 / Conus Albers (EPSG 5070), parameter
/// values from the EPSG definition.
pub const WKT2_ALBERS: &str = r#"PROJCRS["NAD83 / Conus Albers",BASEGEOGCRS["NAD83",DATUM["North American Datum 1983",ELLIPSOID["GRS 1980",6378137,298.257222101,LENGTHUNIT["metre",1]]],PRIMEM["Greenwich",0,ANGLEUNIT["degree",0.0174532925199433]]],CONVERSION["Conus Albers",METHOD["Albers Equal Area",ID["EPSG",9822]],PARAMETER["Latitude of false origin",23,ANGLEUNIT["degree",0.0174532925199433]],PARAMETER["Longitude of false origin",-96,ANGLEUNIT["degree",0.0174532925199433]],PARAMETER["Latitude of 1st standard parallel",29.5,ANGLEUNIT["degree",0.0174532925199433]],PARAMETER["Latitude of 2nd standard parallel",45.5,ANGLEUNIT["degree",0.0174532925199433]],PARAMETER["Easting at false origin",0,LENGTHUNIT["metre",1]],PARAMETER["Northing at false origin",0,LENGTHUNIT["metre",1]]],CS[Cartesian,2],AXIS["easting (X)",east,ORDER[1],LENGTHUNIT["metre",1]],AXIS["northing (Y)",north,ORDER[2],LENGTHUNIT["metre",1]],ID["EPSG",5070]]"#;

#[test]
fn false_origins_map_to_the_natural_origins() {
    // Source: the definitions themselves (EPSG dataset, as carried by
    // crs-definitions): the false easting/northing is the image of the
    // natural origin. UTM 17N: (500000, 0) m is (-81, 0).
    let (lon, lat) = point(&Reprojection::from_epsg(32617).unwrap(), 500_000.0, 0.0);
    assert!(
        (lon + 81.0).abs() < 1e-12 && lat.abs() < 1e-12,
        "{lon} {lat}"
    );
    // EPSG 2229 (California zone 5, US survey feet): false origin
    // (6561666.667, 1640416.667) ftUS is (-118, 33.5), so the feet are
    // read as US survey feet (1200/3937 m); international feet (0.3048 m,
    // 2 ppm shorter) would miss the origin by about 4 m here.
    let (lon, lat) = point(
        &Reprojection::from_epsg(2229).unwrap(),
        6_561_666.667,
        1_640_416.667,
    );
    assert!(
        (lon + 118.0).abs() < 1e-8 && (lat - 33.5).abs() < 1e-8,
        "{lon} {lat}"
    );
    // EPSG 3857: x = R * lon with R = 6378137 (EPSG Guidance Note 7-2,
    // Popular Visualisation Pseudo-Mercator), so x = pi R is 180 degrees.
    let (lon, lat) = point(
        &Reprojection::from_epsg(3857).unwrap(),
        PI * 6_378_137.0 / 2.0,
        0.0,
    );
    assert!(
        (lon - 90.0).abs() < 1e-12 && lat.abs() < 1e-12,
        "{lon} {lat}"
    );
}

#[test]
fn the_forms_of_one_system_agree() {
    // Source: the same system given four ways must give the same numbers
    // (brute force over a grid of points; common practice, no source).
    let forms = [
        Reprojection::from_definition("EPSG:32617").unwrap(),
        Reprojection::from_definition(" epsg: 32617 ").unwrap(),
        Reprojection::from_definition(ESRI_UTM17).unwrap(),
        Reprojection::from_definition("+proj=utm +zone=17 +datum=WGS84 +units=m +no_defs").unwrap(),
    ];
    for i in 0..20 {
        let x = 200_000.0 + 30_000.0 * i as f64;
        let y = 1_000_000.0 + 250_000.0 * i as f64;
        let first = point(&forms[0], x, y);
        for form in &forms[1..] {
            let other = point(form, x, y);
            assert!((first.0 - other.0).abs() < 1e-11 && (first.1 - other.1).abs() < 1e-11);
        }
    }
    let albers = Reprojection::from_definition(WKT2_ALBERS).unwrap();
    let epsg = Reprojection::from_epsg(5070).unwrap();
    let (a, b) = (
        point(&albers, 1_500_000.0, 2_000_000.0),
        point(&epsg, 1_500_000.0, 2_000_000.0),
    );
    assert!(
        (a.0 - b.0).abs() < 1e-11 && (a.1 - b.1).abs() < 1e-11,
        "{a:?} {b:?}"
    );
}

#[test]
fn nad83_is_taken_as_wgs84() {
    // The design (NAD83 stays equal to WGS84): NAD83 longitude/latitude
    // comes out unchanged but for the GRS 80 / WGS84 ellipsoid conversion,
    // far below a micro-degree (common practice, no source).
    let nad83 = Reprojection::from_epsg(4269).unwrap();
    assert!(nad83.is_lonlat());
    let (lon, lat) = point(&nad83, -77.25, 38.5);
    assert!(
        (lon + 77.25).abs() < 1e-9 && (lat - 38.5).abs() < 1e-9,
        "{lon} {lat}"
    );
    assert!(!Reprojection::from_epsg(26918).unwrap().is_lonlat());
}

#[test]
fn round_trips_and_z_m_are_kept() {
    // Source: forward then inverse must return the input (brute force).
    let r = Reprojection::from_epsg(5070).unwrap();
    let ring = vec![
        -96.5, 40.0, 12.0, 1.0, //
        -96.0, 40.0, 13.0, 2.0, //
        -96.0, 40.5, 14.0, 3.0, //
        -96.5, 40.0, 12.0, 1.0,
    ];
    let original = Geometry::new(Dimensions::Xyzm, Shape::Polygon(vec![ring]));
    let mut g = original.clone();
    r.from_lonlat(&mut g).unwrap();
    assert_ne!(g, original);
    r.to_lonlat(&mut g).unwrap();
    let (Shape::Polygon(a), Shape::Polygon(b)) = (&g.shape, &original.shape) else {
        unreachable!()
    };
    for (v, w) in a[0].chunks_exact(4).zip(b[0].chunks_exact(4)) {
        assert!((v[0] - w[0]).abs() < 1e-10 && (v[1] - w[1]).abs() < 1e-10);
        assert_eq!((v[2], v[3]), (w[2], w[3]), "Z and M untouched");
    }
}

#[test]
fn unknown_definitions_are_named() {
    for (text, needle) in [
        ("EPSG:999999", "'EPSG:999999'"),
        ("EPSG:abc", "whole number"),
        ("not a system", "'not a system'"),
        ("", "empty"),
        (
            "+proj=nosuchprojection +ellps=WGS84",
            "+proj=nosuchprojection",
        ),
        ("PROJCS[\"broken\"", "WKT"),
    ] {
        let err = Reprojection::from_definition(text).unwrap_err().to_string();
        assert!(err.contains(needle), "{text}: {err}");
        assert!(err.starts_with("spatial reference"), "{err}");
    }
    // NAD27 needs a grid shift file in the EPSG dataset (+nadgrids).
    let err = Reprojection::from_epsg(26717).unwrap_err().to_string();
    assert!(err.contains("grid file"), "{err}");
    // A long WKT is quoted by its start only.
    let err = Reprojection::from_definition(&format!("GEOGCS[{}", "x".repeat(500)))
        .unwrap_err()
        .to_string();
    assert!(err.len() < 400, "{err}");
}

#[test]
fn vertices_outside_the_domain_are_named() {
    let mercator = Reprojection::from_epsg(3395).unwrap();
    // Mercator cannot show a pole (y = infinity; EPSG Guidance Note 7-2).
    let mut line = Geometry::new(
        Dimensions::Xy,
        Shape::LineString(vec![0.0, 10.0, 5.0, 90.0]),
    );
    let err = mercator.from_lonlat(&mut line).unwrap_err();
    assert!(
        matches!(err, GeomError::OutsideProjection { vertex: 2, .. }),
        "{err:?}"
    );
    assert!(err.to_string().contains("vertex 2 (5, 90)"), "{err}");
    let mut bad = Geometry::new(
        Dimensions::Xy,
        Shape::MultiPoint(vec![vec![1.0, 2.0], vec![f64::NAN, 2.0]]),
    );
    let err = mercator.to_lonlat(&mut bad).unwrap_err();
    assert_eq!(err, GeomError::NotFinite { vertex: 2 });
}
