//! Blob and text codecs: GeoPackage geometry blobs and ISO WKB in, GeoPackage
//! blobs out; WKT and GeoJSON text in and out. Pure Rust, no SQLite here.
//!
//! Every SQL function that takes a geometry accepts a GeoPackage blob and a
//! plain WKB blob alike; the first byte tells them apart (`G` of the magic
//! `GP`, or a WKB byte order 0 or 1). Plain WKB carries no spatial
//! reference and is read as srs_id 0 (undefined, taken as
//! longitude/latitude after the range check).

pub mod geojson;
pub mod gpkg;
pub mod gpkg_tables;
pub mod memory;
pub mod wkb;
pub mod wkt;

use crate::error::GeomError;
use crate::geometry::{validate, Dimensions, Geometry, GeometryType};
use crate::interrupt::Interrupt;

pub use wkb::MAX_NESTING;

/// The srs_id given to plain WKB, which carries none.
pub const WKB_SRS_ID: i32 = 0;

/// The two blob encodings ambit reads.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Encoding {
    GeoPackage,
    Wkb,
}

/// Which encoding `buf` is in, from its first byte.
pub fn encoding(buf: &[u8]) -> Result<Encoding, GeomError> {
    match buf.first() {
        None => Err(GeomError::EmptyBlob),
        Some(b'G') => Ok(Encoding::GeoPackage),
        Some(0 | 1) => Ok(Encoding::Wkb),
        Some(&first) => Err(GeomError::UnknownBlob { first }),
    }
}

/// A decoded blob: the geometry and the srs_id it was stored with.
#[derive(Clone, Debug, PartialEq)]
pub struct Decoded {
    pub geometry: Geometry,
    pub srs_id: i32,
}

/// Decodes a GeoPackage or WKB blob without checking coordinates; for
/// functions that only describe a blob.
///
/// # Example
/// ```
/// use ambit::blob::{decode, gpkg, wkt};
/// let g = wkt::parse("LINESTRING (-131.5 38.4, -131.49 38.41)").unwrap();
/// let blob = gpkg::write(&g, 4326);
/// let back = decode(&blob).unwrap();
/// assert_eq!(back.srs_id, 4326);
/// assert_eq!(wkt::write(&back.geometry), "LINESTRING (-131.5 38.4, -131.49 38.41)");
/// ```
pub fn decode(buf: &[u8]) -> Result<Decoded, GeomError> {
    match encoding(buf)? {
        Encoding::GeoPackage => {
            let (geometry, header) = gpkg::read(buf)?;
            Ok(Decoded {
                geometry,
                srs_id: header.srs_id,
            })
        }
        Encoding::Wkb => Ok(Decoded {
            geometry: wkb::read_exact(buf)?,
            srs_id: WKB_SRS_ID,
        }),
    }
}

/// Decodes a blob and checks it as ambit requires before using it: a
/// longitude/latitude srs_id, finite coordinates in range, closed rings of
/// at least 4 points (see [`crate::geometry::validate`]). The polygon
/// checks, the long part for a big polygon (about 2 µs a vertex), ask
/// `stop` after every millisecond or so of work and return
/// `Err(GeomError::Interrupted)` when it says stop; pass
/// [`Never`](crate::interrupt::Never) when nothing can interrupt.
///
/// # Example
/// ```
/// use ambit::blob::{decode_valid, gpkg};
/// use ambit::geometry::Geometry;
/// use ambit::interrupt::Never;
/// // Projected metres, not degrees: refused with a message saying so.
/// let blob = gpkg::write(&Geometry::point(500000.0, 4500000.0), 4326);
/// let err = decode_valid(&blob, &Never).unwrap_err().to_string();
/// assert!(err.contains("look projected"));
/// ```
pub fn decode_valid(buf: &[u8], stop: &dyn Interrupt) -> Result<Decoded, GeomError> {
    let decoded = decode(buf)?;
    validate::validate(&decoded.geometry, decoded.srs_id.into(), stop)?;
    Ok(decoded)
}

/// What a blob's header says, read without decoding its coordinates.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Summary {
    pub geometry_type: GeometryType,
    pub dims: Dimensions,
    pub srs_id: i32,
}

/// The type, dimensions and srs_id of a blob from its headers alone.
pub fn summary(buf: &[u8]) -> Result<Summary, GeomError> {
    let (srs_id, wkb_offset) = match encoding(buf)? {
        Encoding::GeoPackage => {
            let h = gpkg::read_header(buf)?;
            (h.srs_id, h.wkb_offset)
        }
        Encoding::Wkb => (WKB_SRS_ID, 0),
    };
    let (geometry_type, dims) = wkb::peek_type_at(buf, wkb_offset)?;
    Ok(Summary {
        geometry_type,
        dims,
        srs_id,
    })
}

/// A GeoPackage blob for a geometry after checking it for `srs_id`
/// (asking `stop` as [`decode_valid`] does); [`GeomError::TooLarge`] when
/// its bytes cannot be allocated.
pub fn encode_valid(
    geometry: &Geometry,
    srs_id: i32,
    stop: &dyn Interrupt,
) -> Result<Vec<u8>, GeomError> {
    validate::validate(geometry, srs_id.into(), stop)?;
    gpkg::try_write(geometry, srs_id)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn tells_the_encodings_apart() {
        let g = Geometry::point(-93.0, 45.0);
        let gp = gpkg::write(&g, 4326);
        let wk = wkb::write(&g);
        assert_eq!(
            decode(&gp).unwrap(),
            Decoded {
                geometry: g.clone(),
                srs_id: 4326
            }
        );
        assert_eq!(
            decode(&wk).unwrap(),
            Decoded {
                geometry: g,
                srs_id: 0
            }
        );
        assert_eq!(decode(&[]), Err(GeomError::EmptyBlob));
        assert_eq!(
            decode(b"hello"),
            Err(GeomError::UnknownBlob { first: b'h' })
        );
        assert_eq!(
            summary(&gp).unwrap(),
            Summary {
                geometry_type: GeometryType::Point,
                dims: Dimensions::Xy,
                srs_id: 4326
            }
        );
    }

    #[test]
    fn decode_valid_applies_the_semantics_checks() {
        let projected = gpkg::write(&Geometry::point(500000.0, 4500000.0), 4326);
        assert!(matches!(
            decode_valid(&projected, &crate::interrupt::Never),
            Err(GeomError::OutOfRange { .. })
        ));
        let web = gpkg::write(&Geometry::point(1.0, 1.0), 3857);
        assert_eq!(
            decode_valid(&web, &crate::interrupt::Never),
            Err(GeomError::UnsupportedSrs { srs_id: 3857 })
        );
        // Describing a blob still works whatever its reference system.
        assert_eq!(summary(&web).unwrap().srs_id, 3857);
    }
}
