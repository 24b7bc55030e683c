//! ISO Well-Known Binary (ISO 13249-3; OGC 06-103r4, clause 8): reading
//! into the [`Geometry`] model and writing it back.
//!
//! Reading accepts the seven Simple Features types with the ISO type codes
//! (1-7, plus 1000 for Z, 2000 for M, 3000 for ZM), either byte order, and
//! mixed byte orders inside multi-geometries and collections (every nested
//! geometry carries its own byte-order byte, 06-103r4 clause 8.2.3). Counts
//! are checked against the bytes left before anything is allocated (each
//! member needs at least the bytes of its smallest encoding), so a corrupt
//! count cannot make ambit allocate gigabytes; what a count does allow is
//! reserved fallibly (see [`crate::blob::memory`]), so a geometry too large
//! for the memory the host may use is an error, not an abort. A Point whose x and y
//! are both NaN is POINT EMPTY (OGC 12-128, note under Requirement 19).
//! Collections may nest at most [`MAX_NESTING`] levels.
//!
//! Writing produces little-endian ISO WKB; POINT EMPTY is written with
//! quiet-NaN ordinates (bytes `00 00 00 00 00 00 f8 7f`), as 12-128 asks.
//!
//! Why not the `wkb` crate: ambit decodes every blob straight into its flat
//! coordinate arrays in one pass, refuses type codes outside ISO WKB, and
//! reports the byte offset of each problem. The crate is used in the tests
//! as an independent reader of what this module writes.

use crate::blob::memory;
use crate::error::GeomError;
use crate::geometry::{Dimensions, Geometry, GeometryType, Part, Shape};

/// How deep geometry collections may nest.
pub const MAX_NESTING: usize = 64;

const FORMAT: &str = "WKB";

/// Reads a blob that holds exactly one WKB geometry; trailing bytes are an
/// error.
pub fn read_exact(buf: &[u8]) -> Result<Geometry, GeomError> {
    read_exact_from(buf, 0)
}

/// Reads the one WKB geometry that fills `buf` from byte `start` on (the
/// bytes before it are a container's header). Offsets in errors count from
/// the start of `buf`.
pub fn read_exact_from(buf: &[u8], start: usize) -> Result<Geometry, GeomError> {
    let mut cursor = Cursor {
        buf,
        pos: start,
        big_endian: false,
    };
    let geometry = cursor.geometry(0)?;
    if cursor.pos != buf.len() {
        return Err(GeomError::TrailingBytes {
            format: FORMAT,
            extra: buf.len() - cursor.pos,
        });
    }
    Ok(geometry)
}

/// The geometry type and dimensions from the WKB header at byte `start`
/// (5 bytes), without reading the rest.
pub fn peek_type_at(buf: &[u8], start: usize) -> Result<(GeometryType, Dimensions), GeomError> {
    let mut cursor = Cursor {
        buf,
        pos: start,
        big_endian: false,
    };
    cursor.header()
}

struct Cursor<'a> {
    buf: &'a [u8],
    pos: usize,
    big_endian: bool,
}

impl Cursor<'_> {
    fn take(&mut self, n: usize, what: &'static str) -> Result<&[u8], GeomError> {
        let end = self.pos.checked_add(n).filter(|&e| e <= self.buf.len());
        match end {
            Some(end) => {
                let bytes = &self.buf[self.pos..end];
                self.pos = end;
                Ok(bytes)
            }
            None => Err(GeomError::Truncated {
                format: FORMAT,
                what,
                offset: self.pos,
                needed: n,
                len: self.buf.len(),
            }),
        }
    }

    fn u32(&mut self, what: &'static str) -> Result<u32, GeomError> {
        let big = self.big_endian;
        let b: [u8; 4] = self.take(4, what)?.try_into().expect("4 bytes");
        Ok(if big {
            u32::from_be_bytes(b)
        } else {
            u32::from_le_bytes(b)
        })
    }

    /// Reads the byte order and type code; leaves `big_endian` set for the
    /// body that follows.
    fn header(&mut self) -> Result<(GeometryType, Dimensions), GeomError> {
        let offset = self.pos;
        let order = self.take(1, "the byte-order byte")?[0];
        self.big_endian = match order {
            0 => true,
            1 => false,
            byte => return Err(GeomError::BadByteOrder { byte, offset }),
        };
        let type_offset = self.pos;
        let code = self.u32("the geometry type code")?;
        let unknown = GeomError::UnknownWkbType {
            code,
            offset: type_offset,
        };
        let dims = match code / 1000 {
            0 => Dimensions::Xy,
            1 => Dimensions::Xyz,
            2 => Dimensions::Xym,
            3 => Dimensions::Xyzm,
            _ => return Err(unknown),
        };
        let kind = GeometryType::from_wkb_code(code % 1000).ok_or(unknown)?;
        Ok((kind, dims))
    }

    /// Reads a count and checks that `count` items of at least `min_size`
    /// bytes each fit in what is left of the blob.
    fn count(&mut self, what: &'static str, min_size: usize) -> Result<usize, GeomError> {
        let offset = self.pos;
        let count = self.u32(what)?;
        let left = self.buf.len() - self.pos;
        if (count as usize).saturating_mul(min_size) > left {
            return Err(GeomError::ImpossibleCount {
                what,
                count,
                offset,
            });
        }
        Ok(count as usize)
    }

    fn coords(&mut self, n: usize, width: usize, what: &'static str) -> Result<Part, GeomError> {
        let big = self.big_endian;
        let len = n.saturating_mul(width * 8);
        let bytes = self.take(len, what)?;
        let mut part = memory::vec_with_capacity(len / 8, what)?;
        part.extend(bytes.chunks_exact(8).map(|c| {
            let b: [u8; 8] = c.try_into().expect("8 bytes");
            if big {
                f64::from_be_bytes(b)
            } else {
                f64::from_le_bytes(b)
            }
        }));
        Ok(part)
    }

    fn point_body(&mut self, width: usize) -> Result<Part, GeomError> {
        let p = self.coords(1, width, "a point's coordinates")?;
        Ok(if p[0].is_nan() && p[1].is_nan() {
            Vec::new()
        } else {
            p
        })
    }

    fn line_body(&mut self, width: usize) -> Result<Part, GeomError> {
        let n = self.count("points", width * 8)?;
        self.coords(n, width, "a line string's points")
    }

    fn polygon_body(&mut self, width: usize) -> Result<Vec<Part>, GeomError> {
        let n = self.count("rings", 4)?;
        let mut rings = memory::vec_with_capacity(n, "a polygon's rings")?;
        for _ in 0..n {
            let points = self.count("ring points", width * 8)?;
            rings.push(self.coords(points, width, "a ring's points")?);
        }
        Ok(rings)
    }

    /// Reads a nested member, which must be of type `expected` and have the
    /// parent's dimensions.
    fn member(
        &mut self,
        parent: GeometryType,
        expected: GeometryType,
        dims: Dimensions,
    ) -> Result<(), GeomError> {
        let offset = self.pos;
        let (kind, member_dims) = self.header()?;
        if kind != expected {
            return Err(GeomError::WrongMemberType {
                parent: parent.wkt_keyword(),
                expected: expected.wkt_keyword(),
                found: kind.wkt_keyword(),
                offset,
            });
        }
        if member_dims != dims {
            return Err(GeomError::MixedDimensions { offset });
        }
        Ok(())
    }

    fn geometry(&mut self, depth: usize) -> Result<Geometry, GeomError> {
        if depth > MAX_NESTING {
            return Err(GeomError::TooDeep { limit: MAX_NESTING });
        }
        let (kind, dims) = self.header()?;
        let width = dims.width();
        let shape = match kind {
            GeometryType::Point => Shape::Point(self.point_body(width)?),
            GeometryType::LineString => Shape::LineString(self.line_body(width)?),
            GeometryType::Polygon => Shape::Polygon(self.polygon_body(width)?),
            GeometryType::MultiPoint => {
                let n = self.count("points", 5 + width * 8)?;
                let mut members = memory::vec_with_capacity(n, "a multipoint's points")?;
                for _ in 0..n {
                    self.member(kind, GeometryType::Point, dims)?;
                    members.push(self.point_body(width)?);
                }
                Shape::MultiPoint(members)
            }
            GeometryType::MultiLineString => {
                let n = self.count("line strings", 9)?;
                let mut members = memory::vec_with_capacity(n, "a multilinestring's members")?;
                for _ in 0..n {
                    self.member(kind, GeometryType::LineString, dims)?;
                    members.push(self.line_body(width)?);
                }
                Shape::MultiLineString(members)
            }
            GeometryType::MultiPolygon => {
                let n = self.count("polygons", 9)?;
                let mut members = memory::vec_with_capacity(n, "a multipolygon's members")?;
                for _ in 0..n {
                    self.member(kind, GeometryType::Polygon, dims)?;
                    members.push(self.polygon_body(width)?);
                }
                Shape::MultiPolygon(members)
            }
            GeometryType::GeometryCollection => {
                // The smallest member is an empty collection, multi-geometry,
                // line string or polygon: a header and a zero count.
                let n = self.count("geometries", 9)?;
                let mut members = memory::vec_with_capacity(n, "a collection's members")?;
                for _ in 0..n {
                    let offset = self.pos;
                    let member = self.geometry(depth + 1)?;
                    if member.dims != dims {
                        return Err(GeomError::MixedDimensions { offset });
                    }
                    members.push(member);
                }
                Shape::GeometryCollection(members)
            }
        };
        Ok(Geometry::new(dims, shape))
    }
}

/// Little-endian ISO WKB for `g`. Aborts like any Rust allocation when
/// memory runs out: the SQL functions use [`try_write`].
pub fn write(g: &Geometry) -> Vec<u8> {
    let mut out = Vec::with_capacity(encoded_len(g));
    write_into(g, &mut out);
    out
}

/// Little-endian ISO WKB for `g`, or [`GeomError::TooLarge`] when its
/// [`encoded_len`] bytes cannot be allocated.
pub fn try_write(g: &Geometry) -> Result<Vec<u8>, GeomError> {
    let mut out = memory::vec_with_capacity(encoded_len(g), "its WKB")?;
    write_into(g, &mut out);
    Ok(out)
}

/// Appends little-endian ISO WKB for `g` to `out`.
pub fn write_into(g: &Geometry, out: &mut Vec<u8>) {
    let width = g.dims.width();
    let header = |kind: GeometryType, out: &mut Vec<u8>| {
        out.push(1);
        out.extend_from_slice(&(kind.wkb_code() + g.dims.wkb_offset()).to_le_bytes());
    };
    let count = |n: usize, out: &mut Vec<u8>| {
        // Geometries come from blobs or text no larger than SQLite's 2 GB
        // limit, so every count fits in 32 bits.
        out.extend_from_slice(&(n as u32).to_le_bytes());
    };
    let values = |part: &[f64], out: &mut Vec<u8>| {
        for v in part {
            out.extend_from_slice(&v.to_le_bytes());
        }
    };
    let point = |part: &[f64], out: &mut Vec<u8>| {
        if part.is_empty() {
            for _ in 0..width {
                out.extend_from_slice(&f64::NAN.to_le_bytes());
            }
        } else {
            values(part, out);
        }
    };
    let line = |part: &[f64], out: &mut Vec<u8>| {
        count(part.len() / width, out);
        values(part, out);
    };
    let polygon = |rings: &[Part], out: &mut Vec<u8>| {
        count(rings.len(), out);
        for r in rings {
            line(r, out);
        }
    };
    let kind = g.geometry_type();
    header(kind, out);
    match &g.shape {
        Shape::Point(p) => point(p, out),
        Shape::LineString(p) => line(p, out),
        Shape::Polygon(rings) => polygon(rings, out),
        Shape::MultiPoint(points) => {
            count(points.len(), out);
            for p in points {
                header(GeometryType::Point, out);
                point(p, out);
            }
        }
        Shape::MultiLineString(lines) => {
            count(lines.len(), out);
            for p in lines {
                header(GeometryType::LineString, out);
                line(p, out);
            }
        }
        Shape::MultiPolygon(polygons) => {
            count(polygons.len(), out);
            for rings in polygons {
                header(GeometryType::Polygon, out);
                polygon(rings, out);
            }
        }
        Shape::GeometryCollection(members) => {
            count(members.len(), out);
            for m in members {
                write_into(m, out);
            }
        }
    }
}

/// The exact length of [`fn@write`]'s output.
pub fn encoded_len(g: &Geometry) -> usize {
    let width = g.dims.width();
    let line = |p: &Part| 4 + p.len() * 8;
    let polygon = |rings: &Vec<Part>| 4 + rings.iter().map(line).sum::<usize>();
    5 + match &g.shape {
        Shape::Point(_) => width * 8,
        Shape::LineString(p) => line(p),
        Shape::Polygon(rings) => polygon(rings),
        Shape::MultiPoint(points) => 4 + points.len() * (5 + width * 8),
        Shape::MultiLineString(lines) => 4 + lines.iter().map(|p| 5 + line(p)).sum::<usize>(),
        Shape::MultiPolygon(polys) => 4 + polys.iter().map(|r| 5 + polygon(r)).sum::<usize>(),
        Shape::GeometryCollection(members) => 4 + members.iter().map(encoded_len).sum::<usize>(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn hex(s: &str) -> Vec<u8> {
        let s: String = s.chars().filter(|c| !c.is_whitespace()).collect();
        (0..s.len())
            .step_by(2)
            .map(|i| u8::from_str_radix(&s[i..i + 2], 16).unwrap())
            .collect()
    }

    // OGC 06-103r4, clause 8.2.5 (example): the WKB of POINT (1 1) in both
    // byte orders; from memory of the worked example, checked here by the
    // field layout of clause 8.2.4 (byte order, uint32 type, two doubles).
    #[test]
    fn reads_the_point_example_in_both_byte_orders() {
        let ndr = hex("01 01000000 000000000000F03F 000000000000F03F");
        let xdr = hex("00 00000001 3FF0000000000000 3FF0000000000000");
        for buf in [ndr.clone(), xdr] {
            let g = read_exact(&buf).unwrap();
            assert_eq!(g, Geometry::point(1.0, 1.0));
        }
        assert_eq!(write(&Geometry::point(1.0, 1.0)), ndr);
    }

    #[test]
    fn reads_mixed_byte_orders_inside_a_multipoint() {
        // MULTIPOINT ((1 2), (3 4)): the outer header little endian, the
        // first member big endian, the second little endian.
        let buf = hex("01 04000000 02000000
             00 00000001 3FF0000000000000 4000000000000000
             01 01000000 0000000000000840 0000000000001040");
        let g = read_exact(&buf).unwrap();
        assert_eq!(
            g.shape,
            Shape::MultiPoint(vec![vec![1.0, 2.0], vec![3.0, 4.0]])
        );
    }

    #[test]
    fn reads_z_m_and_zm_type_codes() {
        for (dims, code) in [
            (Dimensions::Xyz, 1001u32),
            (Dimensions::Xym, 2001),
            (Dimensions::Xyzm, 3001),
        ] {
            let mut buf = vec![1];
            buf.extend_from_slice(&code.to_le_bytes());
            for i in 0..dims.width() {
                buf.extend_from_slice(&(i as f64 + 1.0).to_le_bytes());
            }
            let g = read_exact(&buf).unwrap();
            assert_eq!(g.dims, dims);
            assert_eq!(write(&g), buf);
        }
    }

    #[test]
    fn nan_point_is_empty_and_written_with_quiet_nan() {
        // OGC 12-128, note under Requirement 19: little endian quiet NaN is
        // 00 00 00 00 00 00 f8 7f.
        let buf = hex("01 01000000 000000000000F87F 000000000000F87F");
        let g = read_exact(&buf).unwrap();
        assert!(g.is_empty());
        assert_eq!(write(&g), buf);
    }

    #[test]
    fn reports_each_kind_of_corruption_with_its_offset() {
        assert!(matches!(
            read_exact(&[]),
            Err(GeomError::Truncated { offset: 0, .. })
        ));
        assert_eq!(
            read_exact(&hex("02 01000000")),
            Err(GeomError::BadByteOrder { byte: 2, offset: 0 })
        );
        assert_eq!(
            read_exact(&hex("01 63000000")),
            Err(GeomError::UnknownWkbType {
                code: 99,
                offset: 1
            })
        );
        // A type code with flag bits in the high byte is not ISO WKB.
        assert!(matches!(
            read_exact(&hex("01 01000020 000000000000F03F 000000000000F03F")),
            Err(GeomError::UnknownWkbType { .. })
        ));
        assert!(matches!(
            read_exact(&hex("01 01000000 000000000000F03F 0000")),
            Err(GeomError::Truncated {
                offset: 5,
                needed: 16,
                ..
            })
        ));
        assert!(matches!(
            read_exact(&hex("01 02000000 FFFFFF7F")),
            Err(GeomError::ImpossibleCount {
                count: 0x7fff_ffff,
                ..
            })
        ));
        assert!(matches!(
            read_exact(&hex(
                "01 04000000 01000000 01 02000000 00000000 000000000000000000000000"
            )),
            Err(GeomError::WrongMemberType { offset: 9, .. })
        ));
        assert!(matches!(
            read_exact(&hex("01 01000000 000000000000F03F 000000000000F03F 00")),
            Err(GeomError::TrailingBytes { extra: 1, .. })
        ));
    }

    /// A header announcing 30 M members in a 100-byte blob, for every type
    /// with a count.
    fn forged(code: u32) -> Vec<u8> {
        let mut buf = vec![1];
        buf.extend_from_slice(&code.to_le_bytes());
        buf.extend_from_slice(&30_000_000u32.to_le_bytes());
        buf.resize(100, 0);
        buf
    }

    #[test]
    fn forged_counts_fail_before_any_allocation() {
        // Issue 13 (2026-12-02): 30 M members in a 100-byte blob are refused
        // by the count check, whatever the type and dimensions.
        for dims in [0u32, 1000, 2000, 3000] {
            for base in 2..=7u32 {
                assert!(
                    matches!(
                        read_exact(&forged(base + dims)),
                        Err(GeomError::ImpossibleCount {
                            count: 30_000_000,
                            offset: 5,
                            ..
                        })
                    ),
                    "type code {}",
                    base + dims
                );
            }
        }
    }

    #[test]
    fn collection_members_need_nine_bytes_each() {
        // Regression, issue 13 (2026-12-02): a 150 MB collection announcing
        // 30 M members passed a 5-bytes-per-member check and reserved 30 M
        // geometries (1.2 GB) before reading any, aborting the host under a
        // memory limit. The smallest member (an empty collection, line
        // string or polygon: byte order, type, zero count) has 9 bytes, so
        // n members need 9 n bytes; counted here at a small scale.
        let mut buf = hex("01 07000000 04000000");
        buf.resize(9 + 4 * 9 - 1, 0);
        assert!(matches!(
            read_exact(&buf),
            Err(GeomError::ImpossibleCount { count: 4, .. })
        ));
        let mut ok = hex("01 07000000 04000000");
        for _ in 0..4 {
            ok.extend_from_slice(&hex("01 07000000 00000000"));
        }
        assert_eq!(read_exact(&ok).unwrap().shape, {
            let empty = Geometry::new(Dimensions::Xy, Shape::GeometryCollection(vec![]));
            Shape::GeometryCollection(vec![empty; 4])
        });
    }

    #[test]
    fn try_write_matches_write() {
        let g = Geometry::new(
            Dimensions::Xyz,
            Shape::MultiPoint(vec![vec![1.0, 2.0, 3.0], vec![]]),
        );
        assert_eq!(try_write(&g).unwrap(), write(&g));
    }

    #[test]
    fn deep_nesting_is_refused_without_recursing_forever() {
        let mut buf = Vec::new();
        for _ in 0..100_000 {
            buf.extend_from_slice(&hex("01 07000000 01000000"));
        }
        assert_eq!(
            read_exact(&buf),
            Err(GeomError::TooDeep { limit: MAX_NESTING })
        );
    }

    #[test]
    fn write_then_read_is_identity_for_every_type() {
        let ring = vec![0.0, 0.0, 1.0, 0.0, 1.0, 1.0, 0.0, 0.0];
        let shapes = vec![
            Shape::Point(vec![1.5, -2.5]),
            Shape::Point(vec![]),
            Shape::LineString(vec![0.0, 0.0, 1.0, 1.0]),
            Shape::LineString(vec![]),
            Shape::Polygon(vec![ring.clone(), ring.clone()]),
            Shape::Polygon(vec![]),
            Shape::MultiPoint(vec![vec![1.0, 2.0], vec![]]),
            Shape::MultiLineString(vec![vec![0.0, 0.0, 1.0, 1.0], vec![]]),
            Shape::MultiPolygon(vec![vec![ring.clone()], vec![]]),
            Shape::GeometryCollection(vec![
                Geometry::point(3.0, 4.0),
                Geometry::new(Dimensions::Xy, Shape::GeometryCollection(vec![])),
            ]),
        ];
        for shape in shapes {
            let g = Geometry::new(Dimensions::Xy, shape);
            let bytes = write(&g);
            assert_eq!(bytes.len(), encoded_len(&g));
            assert_eq!(read_exact(&bytes).unwrap(), g);
        }
    }
}
