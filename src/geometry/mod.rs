//! The in-memory geometry model shared by every codec and by the measuring
//! code: OGC Simple Features types (06-103r4, clause 6.1) with their
//! coordinates kept as flat `f64` arrays.
//!
//! A part (a point, a line string, a ring) is one `Vec<f64>` holding its
//! vertices interleaved, [`Dimensions::width`] values per vertex: `x y`,
//! `x y z`, `x y m` or `x y z m`. There is no allocation per vertex. In
//! ambit `x` is longitude and `y` latitude, in degrees; Z and M are carried
//! through the codecs unchanged and never used for measuring.
//!
//! An empty point is a part with no values. Validation (coordinate ranges,
//! rings, spatial reference) lives in [`validate`].

pub mod validate;

use crate::error::GeomError;

/// Which ordinates each vertex carries, as in the WKB type codes of ISO
/// 13249-3 / OGC 06-103r4 (base code + 0, 1000, 2000, 3000).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Dimensions {
    /// `x y`
    Xy,
    /// `x y z`
    Xyz,
    /// `x y m`
    Xym,
    /// `x y z m`
    Xyzm,
}

impl Dimensions {
    /// Values per vertex: 2, 3, 3 or 4.
    pub fn width(self) -> usize {
        match self {
            Dimensions::Xy => 2,
            Dimensions::Xyz | Dimensions::Xym => 3,
            Dimensions::Xyzm => 4,
        }
    }

    /// The dimensions with the given optional ordinates.
    pub fn from_zm(has_z: bool, has_m: bool) -> Self {
        match (has_z, has_m) {
            (false, false) => Dimensions::Xy,
            (true, false) => Dimensions::Xyz,
            (false, true) => Dimensions::Xym,
            (true, true) => Dimensions::Xyzm,
        }
    }

    /// True when vertices carry a Z value.
    pub fn has_z(self) -> bool {
        matches!(self, Dimensions::Xyz | Dimensions::Xyzm)
    }

    /// True when vertices carry an M value.
    pub fn has_m(self) -> bool {
        matches!(self, Dimensions::Xym | Dimensions::Xyzm)
    }

    /// The ISO WKB type-code offset: 0, 1000, 2000 or 3000.
    pub fn wkb_offset(self) -> u32 {
        match self {
            Dimensions::Xy => 0,
            Dimensions::Xyz => 1000,
            Dimensions::Xym => 2000,
            Dimensions::Xyzm => 3000,
        }
    }
}

/// The seven Simple Features geometry types.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum GeometryType {
    Point,
    LineString,
    Polygon,
    MultiPoint,
    MultiLineString,
    MultiPolygon,
    GeometryCollection,
}

impl GeometryType {
    /// The ISO WKB base type code (1..=7).
    pub fn wkb_code(self) -> u32 {
        match self {
            GeometryType::Point => 1,
            GeometryType::LineString => 2,
            GeometryType::Polygon => 3,
            GeometryType::MultiPoint => 4,
            GeometryType::MultiLineString => 5,
            GeometryType::MultiPolygon => 6,
            GeometryType::GeometryCollection => 7,
        }
    }

    /// The type for an ISO WKB base code, if it is one of the seven.
    pub fn from_wkb_code(code: u32) -> Option<Self> {
        Some(match code {
            1 => GeometryType::Point,
            2 => GeometryType::LineString,
            3 => GeometryType::Polygon,
            4 => GeometryType::MultiPoint,
            5 => GeometryType::MultiLineString,
            6 => GeometryType::MultiPolygon,
            7 => GeometryType::GeometryCollection,
            _ => return None,
        })
    }

    /// The keyword of the WKT grammar (06-103r4, clause 7.2), upper case.
    pub fn wkt_keyword(self) -> &'static str {
        match self {
            GeometryType::Point => "POINT",
            GeometryType::LineString => "LINESTRING",
            GeometryType::Polygon => "POLYGON",
            GeometryType::MultiPoint => "MULTIPOINT",
            GeometryType::MultiLineString => "MULTILINESTRING",
            GeometryType::MultiPolygon => "MULTIPOLYGON",
            GeometryType::GeometryCollection => "GEOMETRYCOLLECTION",
        }
    }

    /// The geometry type name of the GeoPackage standard (OGC 12-128,
    /// Annex "Geometry Types", required upper case by Requirement 25), as
    /// written in `gpkg_geometry_columns.geometry_type_name`.
    pub fn gpkg_name(self) -> &'static str {
        match self {
            GeometryType::GeometryCollection => "GEOMCOLLECTION",
            other => other.wkt_keyword(),
        }
    }

    /// The `type` member of RFC 7946 (GeoJSON), section 1.4.
    pub fn geojson_name(self) -> &'static str {
        match self {
            GeometryType::Point => "Point",
            GeometryType::LineString => "LineString",
            GeometryType::Polygon => "Polygon",
            GeometryType::MultiPoint => "MultiPoint",
            GeometryType::MultiLineString => "MultiLineString",
            GeometryType::MultiPolygon => "MultiPolygon",
            GeometryType::GeometryCollection => "GeometryCollection",
        }
    }
}

/// One part: interleaved vertex values, `dims.width()` per vertex.
pub type Part = Vec<f64>;

/// The shape of a geometry; every coordinate array uses the width of the
/// enclosing [`Geometry::dims`].
#[derive(Clone, Debug, PartialEq)]
pub enum Shape {
    /// Zero values (POINT EMPTY) or exactly one vertex.
    Point(Part),
    /// Zero vertices (empty) or two or more.
    LineString(Part),
    /// Rings; the first is the exterior, the rest are holes. No rings: empty.
    Polygon(Vec<Part>),
    /// Each member is a point part (possibly empty).
    MultiPoint(Vec<Part>),
    /// Each member is a line string part.
    MultiLineString(Vec<Part>),
    /// Each member is a polygon's rings.
    MultiPolygon(Vec<Vec<Part>>),
    /// Members of any type; each carries its own dimensions, which must
    /// equal the collection's.
    GeometryCollection(Vec<Geometry>),
}

/// A geometry: its dimensions and its shape.
#[derive(Clone, Debug, PartialEq)]
pub struct Geometry {
    pub dims: Dimensions,
    pub shape: Shape,
}

/// The XY bounding box of a geometry in its own coordinates (no wrapping
/// at the antimeridian: this is the box the GeoPackage envelope stores).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Envelope {
    pub min_x: f64,
    pub max_x: f64,
    pub min_y: f64,
    pub max_y: f64,
}

impl Envelope {
    fn empty() -> Self {
        Envelope {
            min_x: f64::INFINITY,
            max_x: f64::NEG_INFINITY,
            min_y: f64::INFINITY,
            max_y: f64::NEG_INFINITY,
        }
    }

    fn add(&mut self, x: f64, y: f64) {
        self.min_x = self.min_x.min(x);
        self.max_x = self.max_x.max(x);
        self.min_y = self.min_y.min(y);
        self.max_y = self.max_y.max(y);
    }
}

impl Geometry {
    /// A geometry of the given dimensions and shape.
    pub fn new(dims: Dimensions, shape: Shape) -> Self {
        Geometry { dims, shape }
    }

    /// A two-dimensional point.
    pub fn point(x: f64, y: f64) -> Self {
        Geometry::new(Dimensions::Xy, Shape::Point(vec![x, y]))
    }

    /// Its Simple Features type.
    /// `Ok` for a polygon or a multipolygon (empty or not); else
    /// [`GeomError::NotPolygonal`] with `purpose` saying why areas are
    /// needed.
    pub fn require_polygonal(&self, purpose: &'static str) -> Result<(), GeomError> {
        match self.shape {
            Shape::Polygon(_) | Shape::MultiPolygon(_) => Ok(()),
            _ => Err(GeomError::NotPolygonal {
                found: self.geometry_type().wkt_keyword(),
                purpose,
            }),
        }
    }

    pub fn geometry_type(&self) -> GeometryType {
        match &self.shape {
            Shape::Point(_) => GeometryType::Point,
            Shape::LineString(_) => GeometryType::LineString,
            Shape::Polygon(_) => GeometryType::Polygon,
            Shape::MultiPoint(_) => GeometryType::MultiPoint,
            Shape::MultiLineString(_) => GeometryType::MultiLineString,
            Shape::MultiPolygon(_) => GeometryType::MultiPolygon,
            Shape::GeometryCollection(_) => GeometryType::GeometryCollection,
        }
    }

    /// True when the geometry has no vertex at all (OGC IsEmpty). A
    /// collection whose members are all empty is empty.
    pub fn is_empty(&self) -> bool {
        self.vertex_count() == 0
    }

    /// The number of vertices in all parts.
    pub fn vertex_count(&self) -> usize {
        let mut n = 0;
        self.for_each_part(&mut |part| n += part.len());
        n / self.dims.width()
    }

    /// Calls `f` on every coordinate array (point, line string or ring) of
    /// the geometry, members of collections included.
    pub fn for_each_part(&self, f: &mut dyn FnMut(&[f64])) {
        match &self.shape {
            Shape::Point(p) | Shape::LineString(p) => f(p),
            Shape::Polygon(rings) | Shape::MultiPoint(rings) | Shape::MultiLineString(rings) => {
                rings.iter().for_each(|r| f(r))
            }
            Shape::MultiPolygon(polys) => polys.iter().flatten().for_each(|r| f(r)),
            Shape::GeometryCollection(members) => members.iter().for_each(|m| m.for_each_part(f)),
        }
    }

    /// Calls `f` on every vertex as `(x, y)`.
    pub fn for_each_xy(&self, f: &mut dyn FnMut(f64, f64)) {
        let width = self.dims.width();
        self.for_each_part(&mut |part| {
            for v in part.chunks_exact(width) {
                f(v[0], v[1]);
            }
        });
    }

    /// The XY envelope, or `None` for an empty geometry.
    pub fn envelope(&self) -> Option<Envelope> {
        let mut env = Envelope::empty();
        self.for_each_xy(&mut |x, y| env.add(x, y));
        (env.min_x <= env.max_x).then_some(env)
    }

    /// The point's coordinate values, if this is a non-empty point.
    pub fn point_values(&self) -> Option<&[f64]> {
        match &self.shape {
            Shape::Point(p) if !p.is_empty() => Some(p),
            _ => None,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn envelope_and_counts_cover_every_part() {
        let g = Geometry::new(
            Dimensions::Xyz,
            Shape::GeometryCollection(vec![
                Geometry::new(Dimensions::Xyz, Shape::Point(vec![1.0, 2.0, 9.0])),
                Geometry::new(
                    Dimensions::Xyz,
                    Shape::LineString(vec![-3.0, 5.0, 0.0, 4.0, -1.0, 0.0]),
                ),
            ]),
        );
        assert_eq!(g.vertex_count(), 3);
        assert_eq!(
            g.envelope(),
            Some(Envelope {
                min_x: -3.0,
                max_x: 4.0,
                min_y: -1.0,
                max_y: 5.0
            })
        );
        assert!(!g.is_empty());
    }

    #[test]
    fn collections_of_empty_members_are_empty() {
        let g = Geometry::new(Dimensions::Xy, Shape::MultiPoint(vec![vec![], vec![]]));
        assert!(g.is_empty());
        assert_eq!(g.envelope(), None);
    }

    #[test]
    fn wkb_codes_round_trip() {
        for code in 1..=7 {
            assert_eq!(GeometryType::from_wkb_code(code).unwrap().wkb_code(), code);
        }
        assert_eq!(GeometryType::from_wkb_code(0), None);
        assert_eq!(GeometryType::from_wkb_code(8), None);
    }
}
