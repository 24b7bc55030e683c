//! GeoPackage geometry blobs (OGC 12-128, GeoPackage Encoding Standard,
//! clause "Geometry Encoding", Requirement 19: StandardGeoPackageBinary).
//!
//! Layout: magic `GP`, version byte (0 = version 1), flags byte, int32
//! srs_id, an optional envelope of 0, 4, 6 or 8 doubles, then ISO WKB. The
//! flags byte is `R R X Y E E E B`: B is the byte order of srs_id and the
//! envelope (1 little endian), EEE the envelope contents code (0 none, 1 xy,
//! 2 xyz, 3 xym, 4 xyzm; 5-7 invalid), Y the empty flag, X set for the
//! ExtendedGeoPackageBinary of user-defined types (refused here), R reserved.
//!
//! ambit writes little-endian headers with an XY envelope (code 1); an empty
//! geometry gets the empty flag and no envelope (code 0), which Requirement
//! 149 allows.

use crate::blob::{memory, wkb};
use crate::error::GeomError;
use crate::geometry::{Envelope, Geometry};

const FORMAT: &str = "GeoPackage geometry";
/// The two magic bytes, 'G' 'P'.
pub const MAGIC: [u8; 2] = *b"GP";
const HEADER_LEN: usize = 8;
const FLAG_LITTLE_ENDIAN: u8 = 0b0000_0001;
const FLAG_EMPTY: u8 = 0b0001_0000;
const FLAG_EXTENDED: u8 = 0b0010_0000;
const FLAG_RESERVED: u8 = 0b1100_0000;

/// What the fixed part of a GeoPackage geometry header says.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Header {
    pub srs_id: i32,
    /// The empty-geometry flag (Y).
    pub empty: bool,
    /// The XY part of the envelope, `[min_x, max_x, min_y, max_y]`, when
    /// the header carries one.
    pub envelope: Option<[f64; 4]>,
    /// Where the WKB starts.
    pub wkb_offset: usize,
}

fn truncated(what: &'static str, offset: usize, needed: usize, len: usize) -> GeomError {
    GeomError::Truncated {
        format: FORMAT,
        what,
        offset,
        needed,
        len,
    }
}

/// Reads and checks the header of a GeoPackage geometry blob without
/// touching its WKB.
pub fn read_header(buf: &[u8]) -> Result<Header, GeomError> {
    if buf.len() < HEADER_LEN {
        return Err(truncated("the header", 0, HEADER_LEN, buf.len()));
    }
    if buf[..2] != MAGIC {
        return Err(GeomError::UnknownBlob { first: buf[0] });
    }
    let version = buf[2];
    if version != 0 {
        return Err(GeomError::GpkgVersion { version });
    }
    let flags = buf[3];
    if flags & FLAG_EXTENDED != 0 {
        return Err(GeomError::GpkgExtended);
    }
    if flags & FLAG_RESERVED != 0 {
        return Err(GeomError::GpkgReservedFlags { flags });
    }
    let little = flags & FLAG_LITTLE_ENDIAN != 0;
    let code = (flags >> 1) & 0b111;
    let doubles = match code {
        0 => 0,
        1 => 4,
        2 | 3 => 6,
        4 => 8,
        _ => return Err(GeomError::GpkgEnvelopeCode { code }),
    };
    let srs_bytes: [u8; 4] = buf[4..8].try_into().expect("4 bytes");
    let srs_id = if little {
        i32::from_le_bytes(srs_bytes)
    } else {
        i32::from_be_bytes(srs_bytes)
    };
    let wkb_offset = HEADER_LEN + doubles * 8;
    if buf.len() < wkb_offset {
        return Err(truncated(
            "the envelope",
            HEADER_LEN,
            doubles * 8,
            buf.len(),
        ));
    }
    let envelope = (doubles > 0).then(|| {
        let mut xy = [0.0; 4];
        for (i, v) in xy.iter_mut().enumerate() {
            let b: [u8; 8] = buf[HEADER_LEN + i * 8..HEADER_LEN + i * 8 + 8]
                .try_into()
                .expect("8 bytes");
            *v = if little {
                f64::from_le_bytes(b)
            } else {
                f64::from_be_bytes(b)
            };
        }
        xy
    });
    Ok(Header {
        srs_id,
        empty: flags & FLAG_EMPTY != 0,
        envelope,
        wkb_offset,
    })
}

/// Reads a whole GeoPackage geometry blob: its header and its WKB, which
/// must fill the rest of the blob exactly.
pub fn read(buf: &[u8]) -> Result<(Geometry, Header), GeomError> {
    let header = read_header(buf)?;
    let geometry = wkb::read_exact_from(buf, header.wkb_offset)?;
    if header.empty && !geometry.is_empty() {
        return Err(GeomError::GpkgEmptyFlag {
            flag_says_empty: true,
        });
    }
    Ok((geometry, header))
}

/// A GeoPackage geometry blob for `g`: little-endian header, version 1,
/// `srs_id`, an XY envelope (none, with the empty flag, for an empty
/// geometry), then little-endian ISO WKB.
///
/// Aborts like any Rust allocation when memory runs out: the SQL functions
/// use [`try_write`].
pub fn write(g: &Geometry, srs_id: i32) -> Vec<u8> {
    let envelope = g.envelope();
    let mut out = Vec::with_capacity(encoded_len(g, envelope.is_some()));
    write_into(g, srs_id, envelope, &mut out);
    out
}

/// [`fn@write`], or [`GeomError::TooLarge`] when the blob's bytes cannot be
/// allocated.
pub fn try_write(g: &Geometry, srs_id: i32) -> Result<Vec<u8>, GeomError> {
    let envelope = g.envelope();
    let len = encoded_len(g, envelope.is_some());
    let mut out = memory::vec_with_capacity(len, "its GeoPackage blob")?;
    write_into(g, srs_id, envelope, &mut out);
    Ok(out)
}

/// The exact length of the blob, with or without an XY envelope.
fn encoded_len(g: &Geometry, with_envelope: bool) -> usize {
    HEADER_LEN + if with_envelope { 32 } else { 0 } + wkb::encoded_len(g)
}

fn write_into(g: &Geometry, srs_id: i32, envelope: Option<Envelope>, out: &mut Vec<u8>) {
    out.extend_from_slice(&MAGIC);
    out.push(0);
    // The empty flag says what the WKB holds. A geometry whose vertices
    // are all NaN is not empty but has no envelope (code 0).
    let mut flags = FLAG_LITTLE_ENDIAN;
    if envelope.is_some() {
        flags |= 1 << 1;
    }
    if g.is_empty() {
        flags |= FLAG_EMPTY;
    }
    out.push(flags);
    out.extend_from_slice(&srs_id.to_le_bytes());
    if let Some(e) = envelope {
        for v in [e.min_x, e.max_x, e.min_y, e.max_y] {
            out.extend_from_slice(&v.to_le_bytes());
        }
    }
    wkb::write_into(g, out);
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geometry::{Dimensions, Shape};

    #[test]
    fn header_layout_follows_requirement_19() {
        let blob = write(&Geometry::point(-100.5, 40.25), 4326);
        assert_eq!(&blob[..2], b"GP");
        assert_eq!(blob[2], 0, "version byte 0 = version 1");
        assert_eq!(blob[3], 0b0000_0011, "little endian, envelope code 1");
        assert_eq!(i32::from_le_bytes(blob[4..8].try_into().unwrap()), 4326);
        let h = read_header(&blob).unwrap();
        assert_eq!(h.envelope, Some([-100.5, -100.5, 40.25, 40.25]));
        assert_eq!(h.wkb_offset, 40);
        assert_eq!(blob.len(), 40 + 21);
    }

    #[test]
    fn empty_geometries_get_the_flag_and_no_envelope() {
        // OGC 12-128 Requirement 149: no envelope (code 0) for an empty one.
        let g = Geometry::new(Dimensions::Xy, Shape::Polygon(vec![]));
        let blob = write(&g, 4326);
        assert_eq!(blob[3], 0b0001_0001);
        let (back, h) = read(&blob).unwrap();
        assert!(h.empty && h.envelope.is_none());
        assert_eq!(back, g);
    }

    #[test]
    fn all_nan_vertices_are_not_flagged_empty() {
        // Regression, issue 13 (2026-12-02), found reviewing the writer for
        // the round-trip fuzz target: a line whose vertices are all NaN has
        // no envelope, and the writer took "no envelope" for "empty", set
        // the empty flag, and then refused its own blob (GpkgEmptyFlag).
        // Such blobs decode (only decode_valid refuses NaN), so
        // ST_IsEmpty-style description must see them as written.
        let g = Geometry::new(
            Dimensions::Xy,
            Shape::LineString(vec![f64::NAN, f64::NAN, f64::NAN, f64::NAN]),
        );
        let blob = write(&g, 4326);
        assert_eq!(
            blob[3], 0b0000_0001,
            "little endian, no envelope, not empty"
        );
        let (back, h) = read(&blob).unwrap();
        assert!(!h.empty && h.envelope.is_none());
        assert_eq!(wkb::write(&back), wkb::write(&g));
        assert_eq!(try_write(&g, 4326).unwrap(), blob);
    }

    #[test]
    fn big_endian_headers_and_every_envelope_code_are_read() {
        let wkb = wkb::write(&Geometry::point(1.0, 2.0));
        for (code, doubles) in [(0u8, 0usize), (1, 4), (2, 6), (3, 6), (4, 8)] {
            let mut blob = b"GP".to_vec();
            blob.push(0);
            blob.push(code << 1); // big endian header
            blob.extend_from_slice(&4269i32.to_be_bytes());
            for i in 0..doubles {
                blob.extend_from_slice(&(i as f64).to_be_bytes());
            }
            blob.extend_from_slice(&wkb);
            let (g, h) = read(&blob).unwrap();
            assert_eq!(h.srs_id, 4269);
            assert_eq!(g, Geometry::point(1.0, 2.0));
            assert_eq!(h.envelope.is_some(), doubles > 0);
        }
    }

    #[test]
    fn refuses_bad_headers() {
        let good = write(&Geometry::point(1.0, 2.0), 4326);
        let with = |i: usize, b: u8| {
            let mut v = good.clone();
            v[i] = b;
            v
        };
        assert_eq!(
            read(&with(2, 1)),
            Err(GeomError::GpkgVersion { version: 1 })
        );
        assert_eq!(read(&with(3, 0b0010_0011)), Err(GeomError::GpkgExtended));
        assert_eq!(
            read(&with(3, 0b0000_1011)),
            Err(GeomError::GpkgEnvelopeCode { code: 5 })
        );
        assert!(matches!(
            read(&good[..6]),
            Err(GeomError::Truncated { needed: 8, .. })
        ));
        assert!(matches!(
            read(&good[..20]),
            Err(GeomError::Truncated {
                offset: 8,
                needed: 32,
                ..
            })
        ));
        assert!(matches!(
            read(&good[..50]),
            Err(GeomError::Truncated {
                offset: 45,
                len: 50,
                ..
            })
        ));
        assert_eq!(
            read(&with(3, 0b0001_0011)),
            Err(GeomError::GpkgEmptyFlag {
                flag_says_empty: true
            })
        );
    }
}
