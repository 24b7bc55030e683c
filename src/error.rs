//! The errors of ambit's core, as values. The SQL layer prefixes each with
//! the function and the argument it came from; the text here says what was
//! wrong and, where there is one, what to do about it.

use std::fmt;

/// Everything that can be wrong with a geometry handed to ambit.
#[derive(Clone, Debug, PartialEq)]
pub enum GeomError {
    /// A zero-length blob.
    EmptyBlob,
    /// The first byte is neither GeoPackage magic nor a WKB byte order.
    UnknownBlob {
        first: u8,
    },
    /// The blob ended before a field of `needed` bytes at `offset`.
    Truncated {
        format: &'static str,
        what: &'static str,
        offset: usize,
        needed: usize,
        len: usize,
    },
    /// A WKB byte-order byte other than 0 or 1.
    BadByteOrder {
        byte: u8,
        offset: usize,
    },
    /// A WKB type code outside the ISO set (1-7 plus 1000/2000/3000).
    UnknownWkbType {
        code: u32,
        offset: usize,
    },
    /// A member of a multi-geometry of the wrong type.
    WrongMemberType {
        parent: &'static str,
        expected: &'static str,
        found: &'static str,
        offset: usize,
    },
    /// A member whose Z/M dimensions differ from its collection's.
    MixedDimensions {
        offset: usize,
    },
    /// Bytes left over after a complete geometry.
    TrailingBytes {
        format: &'static str,
        extra: usize,
    },
    /// A count that cannot fit in the rest of the blob.
    ImpossibleCount {
        what: &'static str,
        count: u32,
        offset: usize,
    },
    /// Collections nested deeper than [`crate::blob::MAX_NESTING`].
    TooDeep {
        limit: usize,
    },
    /// GeoPackage header problems.
    GpkgVersion {
        version: u8,
    },
    GpkgExtended,
    GpkgEnvelopeCode {
        code: u8,
    },
    GpkgReservedFlags {
        flags: u8,
    },
    /// The GeoPackage empty flag contradicts the WKB content.
    GpkgEmptyFlag {
        flag_says_empty: bool,
    },
    /// A spatial reference ambit does not measure in.
    UnsupportedSrs {
        srs_id: i64,
    },
    /// NaN or infinity in an x or y ordinate.
    NotFinite {
        vertex: usize,
    },
    /// Coordinates outside the longitude/latitude ranges.
    OutOfRange {
        x: f64,
        y: f64,
        vertex: usize,
    },
    /// A line string with one vertex.
    LineTooShort {
        points: usize,
    },
    /// A ring with fewer than 4 vertices.
    RingTooShort {
        ring: usize,
        points: usize,
    },
    /// A ring whose last vertex is not its first.
    RingNotClosed {
        ring: usize,
    },
    /// A polygon that does not mean one area (README, "Valid geometries"):
    /// `polygon` counts the polygons of the geometry from 1, `ring` its
    /// rings from 1 (1 the exterior), `vertex` the ring's vertices from 1.
    InvalidPolygon {
        polygon: usize,
        ring: usize,
        vertex: usize,
        problem: PolygonProblem,
    },
    /// Malformed WKT, with the character offset and what was expected there.
    Wkt {
        position: usize,
        message: String,
    },
    /// Malformed or unsupported GeoJSON.
    GeoJson {
        message: String,
    },
    /// A geometry of the wrong type for the operation (e.g. ST_X of a line).
    WrongType {
        expected: &'static str,
        found: &'static str,
    },
    /// A point or a line where an operation needs areas; `found` is its
    /// WKT keyword, `purpose` says why areas are needed.
    NotPolygonal {
        found: &'static str,
        purpose: &'static str,
    },
    /// Feature properties that are not a JSON object (RFC 7946, section
    /// 3.2); `found` says what they are instead.
    NotJsonObject {
        found: String,
    },
    /// The computation was interrupted (sqlite3_interrupt, Ctrl-C) before
    /// it finished; nothing it would have changed was changed.
    Interrupted,
    /// Memory for a geometry of `bytes` bytes could not be had (the host's
    /// memory limit); ambit reports it instead of aborting the process.
    TooLarge {
        what: &'static str,
        bytes: usize,
    },
    /// The allocator refused `bytes` bytes (a memory limit such as
    /// `ulimit -v`, or the machine's memory); nothing was changed.
    OutOfMemory {
        bytes: usize,
    },
    /// A layer would hold feature id `id` twice: `earlier` when the layer
    /// already held it before this call, otherwise the call gave it twice.
    DuplicateFeatureId {
        id: i64,
        earlier: bool,
    },
    /// A coordinate reference system definition (EPSG code, WKT or PROJ
    /// text; `definition` quotes its start) that ambit cannot read or
    /// does not support, and why.
    UnknownDefinition {
        definition: String,
        reason: String,
    },
    /// A vertex (counted from 1) that the projection of `definition`
    /// cannot convert: outside the projection's domain.
    OutsideProjection {
        vertex: usize,
        x: f64,
        y: f64,
        definition: String,
        reason: String,
    },
}

/// What is wrong with an invalid polygon (see [`GeomError::InvalidPolygon`]).
#[derive(Clone, Debug, PartialEq)]
pub enum PolygonProblem {
    /// Two edges cross (or the boundary passes through itself at a point it
    /// touches): `other_*` names the second edge's polygon, ring and vertex;
    /// (`lon`, `lat`) is a point of the crossing's neighbourhood (the
    /// touching point, or the start of the first edge).
    Crossing {
        other_polygon: usize,
        other_ring: usize,
        other_vertex: usize,
        lon: f64,
        lat: f64,
    },
    /// A hole (ring 2 or later) that is not inside the exterior ring.
    HoleOutside,
    /// A hole inside another hole (or an exterior lobe inside a hole).
    HoleInHole { other_ring: usize },
    /// A polygon of a multipolygon inside another.
    PartInside { other_polygon: usize },
}

impl fmt::Display for GeomError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        use GeomError::*;
        match self {
            EmptyBlob => write!(f, "empty blob (0 bytes); expected a GeoPackage geometry or WKB"),
            UnknownBlob { first } => write!(
                f,
                "not a geometry blob: first byte 0x{first:02x} is neither the GeoPackage magic 'GP' nor a WKB byte order (0 or 1)"
            ),
            Truncated { format, what, offset, needed, len } => write!(
                f,
                "truncated {format}: {what} needs {needed} bytes at byte {offset} but the blob has {len} bytes"
            ),
            BadByteOrder { byte, offset } => write!(
                f,
                "bad WKB byte-order byte 0x{byte:02x} at byte {offset} (must be 0 for big endian or 1 for little endian)"
            ),
            UnknownWkbType { code, offset } => {
                write!(
                    f,
                    "unknown WKB geometry type code {code} at byte {offset} (ISO WKB codes are 1-7, plus 1000 for Z, 2000 for M, 3000 for ZM)"
                )?;
                if *code >= 0x1000_0000 {
                    write!(f, "; this code has flag bits in its high byte, which ISO WKB does not use: write the data as ISO WKB")?;
                }
                Ok(())
            }
            WrongMemberType { parent, expected, found, offset } => write!(
                f,
                "a {parent} may hold only {expected} members, found a {found} at byte {offset}"
            ),
            MixedDimensions { offset } => write!(
                f,
                "the member at byte {offset} has other Z/M dimensions than its collection"
            ),
            TrailingBytes { format, extra } => write!(
                f,
                "{extra} unexpected bytes after the end of the {format} geometry"
            ),
            ImpossibleCount { what, count, offset } => write!(
                f,
                "corrupt WKB: {count} {what} announced at byte {offset} cannot fit in the blob"
            ),
            TooDeep { limit } => write!(
                f,
                "geometry collections nested deeper than {limit} levels"
            ),
            GpkgVersion { version } => write!(
                f,
                "GeoPackage geometry header version {version} is not supported (only 0, version 1)"
            ),
            GpkgExtended => write!(
                f,
                "ExtendedGeoPackageBinary geometry (flag X set) holds a user-defined type ambit cannot read; convert it to a standard geometry type"
            ),
            GpkgEnvelopeCode { code } => write!(
                f,
                "GeoPackage geometry header has invalid envelope contents code {code} (must be 0-4)"
            ),
            GpkgReservedFlags { flags } => write!(
                f,
                "GeoPackage geometry header flags 0x{flags:02x} set reserved bits 6-7"
            ),
            GpkgEmptyFlag { flag_says_empty } => write!(
                f,
                "GeoPackage header says the geometry is {} but its WKB {}",
                if *flag_says_empty { "empty" } else { "not empty" },
                if *flag_says_empty { "has vertices" } else { "is empty" }
            ),
            UnsupportedSrs { srs_id } => write!(
                f,
                "srs_id {srs_id} is not longitude/latitude; ambit measures on WGS84 (srs_id 4326, also 4269 and 0/-1 for undefined): convert it to longitude/latitude (EPSG:4326) first with ambit_to_lonlat(geom), which reads the system from gpkg_spatial_ref_sys or takes an EPSG code"
            ),
            NotFinite { vertex } => write!(
                f,
                "vertex {vertex} has a NaN or infinite coordinate; the data look corrupt"
            ),
            OutOfRange { x, y, vertex } => {
                if y.abs() > 90.0 && y.abs() <= 180.0 && x.abs() <= 90.0 {
                    write!(
                        f,
                        "vertex {vertex} ({x}, {y}) has latitude {y}, outside [-90, 90], but read the other way round ({y}, {x}) it is a valid longitude, latitude: are x and y swapped? ambit takes longitude first (x = longitude, y = latitude)"
                    )
                } else {
                    write!(
                        f,
                        "vertex {vertex} ({x}, {y}) is outside longitude [-540, 540] / latitude [-90, 90]: the coordinates look projected (convert them with ambit_to_lonlat(geom, source)) or corrupt"
                    )
                }
            }
            LineTooShort { points } => write!(
                f,
                "a line string needs at least 2 points, this one has {points}"
            ),
            RingTooShort { ring, points } => write!(
                f,
                "ring {ring} has {points} points; a polygon ring needs at least 4 (closed: last point equal to the first)"
            ),
            RingNotClosed { ring } => write!(
                f,
                "ring {ring} is not closed: its last point must equal its first"
            ),
            InvalidPolygon { polygon, ring, vertex, problem } => {
                use PolygonProblem::*;
                let here = format!("polygon {polygon}, ring {ring}");
                match problem {
                    Crossing { other_polygon, other_ring, other_vertex, lon, lat } => {
                        let there = if other_polygon == polygon && other_ring == ring {
                            "the same ring".to_string()
                        } else if other_polygon == polygon {
                            format!("ring {other_ring}")
                        } else {
                            format!("polygon {other_polygon}, ring {other_ring}")
                        };
                        let rule = if other_polygon != polygon {
                            "the polygons of a MULTIPOLYGON must not overlap (they may touch at points)"
                        } else if other_ring == ring {
                            "a ring must not cross itself (it may touch itself at a vertex): split the area into polygons or repair it"
                        } else {
                            "the rings of a polygon may touch at points but not cross"
                        };
                        write!(
                            f,
                            "invalid polygon: {here} crosses {there} near ({lon}, {lat}) (edges at vertex {vertex} and vertex {other_vertex}); {rule}"
                        )
                    }
                    HoleOutside => write!(
                        f,
                        "invalid polygon: {here} is a hole outside its exterior ring 1; a hole must lie inside its exterior (a separate area is another polygon of a MULTIPOLYGON)"
                    ),
                    HoleInHole { other_ring } => write!(
                        f,
                        "invalid polygon: {here} lies inside hole ring {other_ring}; holes must not nest (an island in a hole is another polygon of a MULTIPOLYGON)"
                    ),
                    PartInside { other_polygon } => write!(
                        f,
                        "invalid multipolygon: polygon {polygon} lies inside polygon {other_polygon}; the polygons of a MULTIPOLYGON must not overlap"
                    ),
                }
            }
            Wkt { position, message } => write!(f, "malformed WKT at character {position}: {message}"),
            GeoJson { message } => write!(f, "malformed GeoJSON: {message}"),
            WrongType { expected, found } => write!(f, "expected a {expected}, got a {found}"),
            NotPolygonal { found, purpose } => write!(
                f,
                "expects polygons (POLYGON or MULTIPOLYGON), got a {found}; {purpose}"
            ),
            NotJsonObject { found } => write!(
                f,
                "must be a JSON object such as json_object(...) returns (RFC 7946, section 3.2), got {found}"
            ),
            Interrupted => write!(f, "interrupted"),
            TooLarge { what, bytes } => write!(
                f,
                "geometry too large for available memory: could not allocate {bytes} bytes for {what}; split it into smaller geometries or raise the memory limit of the process"
            ),
            OutOfMemory { bytes } => write!(
                f,
                "the allocator refused {} (a memory limit such as ulimit -v, or the machine's memory)",
                crate::memory::describe_bytes(*bytes)
            ),
            DuplicateFeatureId { id, earlier: true } => {
                write!(f, "feature id {id} is already in the layer")
            }
            DuplicateFeatureId { id, earlier: false } => {
                write!(f, "feature id {id} is given twice")
            }
            UnknownDefinition { definition, reason } => write!(
                f,
                "spatial reference {definition} cannot be used: {reason}"
            ),
            OutsideProjection { vertex, x, y, definition, reason } => write!(
                f,
                "vertex {vertex} ({x}, {y}) is outside the domain of spatial reference {definition} ({reason}); check that the data are in that system"
            ),
        }
    }
}

impl std::error::Error for GeomError {}
