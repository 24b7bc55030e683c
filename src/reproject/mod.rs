//! Reprojection to WGS84 longitude/latitude, in pure Rust.
//!
//! A [`Reprojection`] is read once from a definition of a coordinate
//! reference system and then converts geometries in place. It accepts:
//!
//! - `EPSG:n` (or [`Reprojection::from_epsg`]): the definitions of the EPSG
//!   dataset as carried by the `crs-definitions` crate (PROJ strings);
//! - WKT: OGC WKT1 (`PROJCS[...]`, `GEOGCS[...]`, as in GeoPackage
//!   `gpkg_spatial_ref_sys.definition`), the ESRI WKT of shapefile `.prj`
//!   files, and WKT2 (ISO 19162, `PROJCRS[...]`, `GEOGCRS[...]`), read by the
//!   `proj4wkt` crate;
//! - PROJ strings (`+proj=utm +zone=18 +datum=NAD83 +units=m`), read by
//!   `proj4rs`, a Rust port of PROJ's projections (PROJ.4 pipeline: inverse
//!   projection to geodetic coordinates, then a datum shift, then degrees).
//!
//! # Datums
//! NAD83 is taken as equal to WGS84, as everywhere in ambit: no datum
//! shift is applied between them (they differ by about a metre, far below
//! any access threshold). Converting between the GRS 80 and WGS84
//! ellipsoids themselves (flattening differs in the 11th digit) changes a
//! position by less than 0.1 mm. A datum shift is applied only when the
//! definition states one (`+towgs84=` or WKT `TOWGS84[...]`, seven Helmert
//! parameters as in PROJ.4); a datum that needs a grid file (`+nadgrids`,
//! e.g. NAD27 in the EPSG dataset) is refused with an error naming the
//! definition, and a WKT datum without TOWGS84 is used without a shift.
//!
//! # Accuracy
//! Checked against pyproj (PROJ) on 10,000 points per system (EPSG 3857,
//! 5070, 2229, 26918, 32617, 3395 and a WKT2 definition): the geodesic
//! distance on WGS84 between ambit's and PROJ's longitude/latitude is under
//! 1 mm, and forward-then-inverse round trips return the input
//! (tests/host_reproject.rs prints the maximum error per system).
//!
//! # Axis order
//! Coordinates are taken x = easting or longitude, y = northing or
//! latitude, as GeoPackage (12-128, clause 2.1.3.1.1) and shapefiles store
//! them, whatever axis order a definition declares.

use std::f64::consts::PI;

use proj4rs::transform::{transform, Transform, TransformClosure};
use proj4rs::Proj;

use crate::error::GeomError;
use crate::geometry::{Geometry, Shape};

/// The PROJ string of the target: geodetic longitude/latitude on WGS84.
const WGS84_LONLAT: &str = "+proj=longlat +datum=WGS84 +no_defs";

/// How many characters of a definition an error message quotes.
const QUOTED_CHARS: usize = 80;

/// A conversion from one coordinate reference system to WGS84
/// longitude/latitude in degrees (and back, with [`Self::from_lonlat`]).
#[derive(Clone)]
pub struct Reprojection {
    source: Proj,
    target: Proj,
    /// The definition as given, for error messages.
    definition: String,
    lonlat: bool,
}

impl std::fmt::Debug for Reprojection {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Reprojection")
            .field("definition", &self.definition)
            .field("lonlat", &self.lonlat)
            .finish()
    }
}

/// The first characters of a definition, for error messages.
pub fn quote(definition: &str) -> String {
    let one_line: String = definition.split_whitespace().collect::<Vec<_>>().join(" ");
    if one_line.chars().count() > QUOTED_CHARS {
        let head: String = one_line.chars().take(QUOTED_CHARS).collect();
        format!("'{head}...'")
    } else {
        format!("'{one_line}'")
    }
}

fn unknown(definition: &str, reason: impl std::fmt::Display) -> GeomError {
    GeomError::UnknownDefinition {
        definition: quote(definition),
        reason: reason.to_string(),
    }
}

/// True when `text` starts like a WKT coordinate reference system.
fn looks_like_wkt(text: &str) -> bool {
    const KEYWORDS: [&str; 12] = [
        "PROJCS",
        "GEOGCS",
        "GEOCCS",
        "COMPD_CS",
        "PROJCRS",
        "GEOGCRS",
        "GEODCRS",
        "GEOGRAPHICCRS",
        "PROJECTEDCRS",
        "GEODETICCRS",
        "COMPOUNDCRS",
        "BOUNDCRS",
    ];
    let head: String = text
        .chars()
        .take_while(|c| c.is_ascii_alphabetic() || *c == '_')
        .collect::<String>()
        .to_ascii_uppercase();
    KEYWORDS.contains(&head.as_str())
}

impl Reprojection {
    /// Reads a definition: `EPSG:n`, WKT1, ESRI `.prj` WKT, WKT2 or a PROJ
    /// string (see the module documentation). An unknown or unsupported
    /// definition is [`GeomError::UnknownDefinition`], which quotes it.
    ///
    /// # Example
    /// ```
    /// use ambit::reproject::Reprojection;
    /// use ambit::geometry::Geometry;
    /// let utm = Reprojection::from_definition("EPSG:32617").unwrap();
    /// let mut g = Geometry::point(500000.0, 0.0);
    /// utm.to_lonlat(&mut g).unwrap();
    /// // The central meridian of UTM zone 17 is 81 degrees west.
    /// let p = g.point_values().unwrap();
    /// assert!((p[0] + 81.0).abs() < 1e-12 && p[1].abs() < 1e-12);
    /// ```
    pub fn from_definition(text: &str) -> Result<Reprojection, GeomError> {
        let trimmed = text.trim();
        if trimmed.is_empty() {
            return Err(unknown(text, "the definition is empty"));
        }
        if let Some((authority, code)) = trimmed.split_once(':') {
            if authority.trim().eq_ignore_ascii_case("EPSG") {
                let code: u32 = code.trim().parse().map_err(|_| {
                    unknown(
                        text,
                        "an EPSG code must be a whole number, as in 'EPSG:32617'",
                    )
                })?;
                return Self::epsg(code, text);
            }
        }
        if trimmed.starts_with('+') {
            return Self::from_proj_string(trimmed, text);
        }
        if looks_like_wkt(trimmed) {
            let proj = proj4wkt::wkt_to_projstring(trimmed)
                .map_err(|e| unknown(text, format!("this WKT cannot be read ({e})")))?;
            return Self::from_proj_string(&proj, text);
        }
        Err(unknown(
            text,
            "not an EPSG code ('EPSG:n'), a WKT definition (PROJCS[...], GEOGCS[...], PROJCRS[...], GEOGCRS[...]) or a PROJ string (+proj=...)",
        ))
    }

    /// The EPSG definition of `code` (as carried by crs-definitions 0.6).
    ///
    /// # Example
    /// ```
    /// use ambit::reproject::Reprojection;
    /// assert!(Reprojection::from_epsg(4326).unwrap().is_lonlat());
    /// assert!(Reprojection::from_epsg(1).is_err());
    /// ```
    pub fn from_epsg(code: u32) -> Result<Reprojection, GeomError> {
        Self::epsg(code, &format!("EPSG:{code}"))
    }

    fn epsg(code: u32, text: &str) -> Result<Reprojection, GeomError> {
        let def = u16::try_from(code)
            .ok()
            .and_then(crs_definitions::from_code)
            .ok_or_else(|| {
                unknown(
                    text,
                    format!("EPSG code {code} is not in ambit's table of EPSG definitions; give the system's WKT or PROJ text instead"),
                )
            })?;
        Self::from_proj_string(def.proj4, text)
    }

    fn from_proj_string(proj: &str, text: &str) -> Result<Reprojection, GeomError> {
        // "+nadgrids=@null" (as in EPSG 3857) means no shift; any other grid
        // is a file ambit does not carry.
        let grid = proj
            .split_whitespace()
            .any(|p| p.starts_with("+nadgrids=") && p != "+nadgrids=@null");
        let source = match Proj::from_proj_string(proj) {
            Ok(source) if !grid => source,
            Err(proj4rs::errors::Error::NadGridNotAvailable) | Ok(_) => {
                return Err(unknown(
                    text,
                    format!("its datum shift needs a grid file, which ambit does not carry (PROJ form: {proj}); convert the data to NAD83 or WGS84 first"),
                ))
            }
            Err(e) => {
                return Err(unknown(text, format!("unsupported ({e}); PROJ form: {proj}")))
            }
        };
        if source.is_geocent() {
            return Err(unknown(
                text,
                "a geocentric (x, y, z) system; ambit reads projected or longitude/latitude systems",
            ));
        }
        if !source.has_inverse() || !source.has_forward() {
            return Err(unknown(
                text,
                format!("its projection '{}' cannot be inverted", source.projname()),
            ));
        }
        let target = Proj::from_proj_string(WGS84_LONLAT).map_err(|e| unknown(WGS84_LONLAT, e))?;
        Ok(Reprojection {
            lonlat: source.is_latlong(),
            source,
            target,
            definition: text.to_string(),
        })
    }

    /// True when the system is longitude/latitude itself (geographic), so
    /// its coordinates are already degrees.
    pub fn is_lonlat(&self) -> bool {
        self.lonlat
    }

    /// The definition this was read from.
    pub fn definition(&self) -> &str {
        &self.definition
    }

    /// Converts every vertex of `g` from this system to WGS84 longitude,
    /// latitude in degrees, x and y in place; Z and M are left as they are.
    ///
    /// Errors: [`GeomError::NotFinite`] for a NaN or infinite input vertex;
    /// [`GeomError::OutsideProjection`] for a vertex the projection cannot
    /// invert (outside its domain), naming the vertex (counted from 1 over
    /// the whole geometry, as in ambit's other errors). On error `g` may be
    /// partly converted: discard it.
    pub fn to_lonlat(&self, g: &mut Geometry) -> Result<(), GeomError> {
        self.run(g, Direction::ToLonLat)
    }

    /// The inverse of [`Self::to_lonlat`]: WGS84 longitude/latitude in
    /// degrees to this system's x, y (for writing files in a projected
    /// system, and for round-trip tests).
    pub fn from_lonlat(&self, g: &mut Geometry) -> Result<(), GeomError> {
        self.run(g, Direction::FromLonLat)
    }

    fn run(&self, g: &mut Geometry, direction: Direction) -> Result<(), GeomError> {
        let width = g.dims.width();
        let mut vertex = 0usize;
        let mut result = Ok(());
        for_each_part_mut(g, &mut |part| {
            if result.is_ok() {
                result = self.convert_part(part, width, &mut vertex, &direction);
            }
        });
        result
    }

    fn convert_part(
        &self,
        part: &mut [f64],
        width: usize,
        vertex: &mut usize,
        direction: &Direction,
    ) -> Result<(), GeomError> {
        let first = *vertex + 1;
        for (i, v) in part.chunks_exact(width).enumerate() {
            if !v[0].is_finite() || !v[1].is_finite() {
                return Err(GeomError::NotFinite { vertex: first + i });
            }
        }
        let (from, to, from_degrees, to_degrees) = match direction {
            Direction::ToLonLat => (&self.source, &self.target, self.lonlat, true),
            Direction::FromLonLat => (&self.target, &self.source, true, self.lonlat),
        };
        if from_degrees {
            part.chunks_exact_mut(width).for_each(|v| {
                v[0] = v[0].to_radians();
                v[1] = v[1].to_radians();
            });
        }
        let original: Vec<f64> = part.to_vec();
        let mut points = Vertices {
            values: part,
            width,
            failed: None,
        };
        let outcome = transform(from, to, &mut points);
        let failed = points.failed;
        if let Err(e) = outcome {
            let i = failed.unwrap_or(0);
            return Err(self.outside(&original, width, i, first, from_degrees, &e.to_string()));
        }
        for (i, v) in part.chunks_exact_mut(width).enumerate() {
            if to_degrees {
                v[0] = v[0].to_degrees();
                v[1] = v[1].to_degrees();
            }
            let bad =
                !v[0].is_finite() || !v[1].is_finite() || (to_degrees && v[1].abs() > 90.0 + 1e-9);
            if bad {
                return Err(self.outside(
                    &original,
                    width,
                    i,
                    first,
                    from_degrees,
                    "the result is not a finite position",
                ));
            }
        }
        *vertex += part.len() / width;
        Ok(())
    }

    fn outside(
        &self,
        original: &[f64],
        width: usize,
        i: usize,
        first: usize,
        radians: bool,
        reason: &str,
    ) -> GeomError {
        let (mut x, mut y) = (original[i * width], original[i * width + 1]);
        if radians {
            x *= 180.0 / PI;
            y *= 180.0 / PI;
        }
        GeomError::OutsideProjection {
            vertex: first + i,
            x,
            y,
            definition: quote(&self.definition),
            reason: reason.to_string(),
        }
    }
}

enum Direction {
    ToLonLat,
    FromLonLat,
}

/// The vertices of one coordinate array, as proj4rs transforms them; the
/// index of the first vertex that failed is kept for the error message.
struct Vertices<'a> {
    values: &'a mut [f64],
    width: usize,
    failed: Option<usize>,
}

impl Transform for Vertices<'_> {
    fn transform_coordinates<F: TransformClosure>(
        &mut self,
        f: &mut F,
    ) -> proj4rs::errors::Result<()> {
        for (i, v) in self.values.chunks_exact_mut(self.width).enumerate() {
            match f(v[0], v[1], 0.0) {
                Ok((x, y, _)) => {
                    v[0] = x;
                    v[1] = y;
                }
                Err(e) => {
                    self.failed = Some(i);
                    return Err(e);
                }
            }
        }
        Ok(())
    }
}

/// Calls `f` on every coordinate array of `g`, members of collections
/// included, in the order [`Geometry::for_each_part`] visits them.
fn for_each_part_mut(g: &mut Geometry, f: &mut dyn FnMut(&mut [f64])) {
    match &mut g.shape {
        Shape::Point(p) | Shape::LineString(p) => f(p),
        Shape::Polygon(rings) | Shape::MultiPoint(rings) | Shape::MultiLineString(rings) => {
            rings.iter_mut().for_each(|r| f(r))
        }
        Shape::MultiPolygon(polys) => polys.iter_mut().flatten().for_each(|r| f(r)),
        Shape::GeometryCollection(members) => {
            members.iter_mut().for_each(|m| for_each_part_mut(m, f))
        }
    }
}

#[cfg(test)]
mod tests;
