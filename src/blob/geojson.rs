//! GeoJSON (RFC 7946): reading a geometry or a feature into the
//! [`Geometry`] model and writing a geometry back.
//!
//! Reading parses the text with `serde_json` and converts the value:
//!
//! - a Geometry object of one of the seven types (RFC 7946 section 3.1), or
//!   a Feature (section 3.2), whose `"geometry"` is returned; a Feature with
//!   `"geometry": null` (an unlocated feature) gives `None`. A
//!   FeatureCollection is refused with a hint to split it one feature per
//!   row in SQL;
//! - positions (section 3.1.1) have 2 numbers (`x y`) or 3 (`x y z`, read
//!   as [`Dimensions::Xyz`]); section 3.1.1 says positions SHOULD NOT have
//!   more, and ambit refuses them, as it refuses 0 or 1 number. All the
//!   positions of one geometry, members of a GeometryCollection included,
//!   must have the same count;
//! - an empty `"coordinates"` (or `"geometries"`) array is an empty
//!   geometry (section 3.1 allows it): `{"type":"Point","coordinates":[]}`
//!   is POINT EMPTY. Inside a MultiPoint, `[]` is an empty point, so that
//!   every geometry [`write()`] produces reads back;
//! - members other than `"type"`, `"coordinates"`, `"geometries"` and a
//!   Feature's `"geometry"` (`"bbox"`, `"id"`, `"properties"`, `"crs"`,
//!   foreign members) are ignored; `"type"` values are case-sensitive, as
//!   in section 1.4;
//! - GeometryCollections may nest at most [`MAX_NESTING`] levels below the
//!   top. The JSON reader itself stops at 128 nested arrays and objects,
//!   which a text reaches at about 63 levels of GeometryCollections; both
//!   limits are reported as errors.
//!
//! Coordinates are not checked here (ranges, ring closure, winding order):
//! that is [`crate::geometry::validate`]'s job. Errors are
//! [`GeomError::GeoJson`]; their messages name the member at fault and the
//! JSON type found, and for invalid JSON give `serde_json`'s message with
//! its line and column.
//!
//! Writing gives compact JSON with the members in the order `"type"`,
//! `"coordinates"` (or `"geometries"`), positions `[x, y]` or `[x, y, z]`,
//! numbers rounded to a number of decimal places. RFC 7946 has no place
//! for M values (section 3.1.1), so they are dropped. The dimensions of a
//! geometry without any position (an empty one) cannot be told in
//! GeoJSON: it reads back as XY.

use crate::blob::{memory, MAX_NESTING};
use crate::error::GeomError;
use crate::geometry::{Dimensions, Geometry, GeometryType, Part, Shape};
use serde_json::{Map, Value};
use std::fmt::Write as _;

/// The decimal places ambit writes by default: 9, about 0.1 mm in degrees
/// of latitude, far below any distance ambit reports.
pub const DEFAULT_DECIMALS: usize = 9;

/// The most decimal places [`write()`] gives; larger requests are clamped.
/// 15 decimal places keep every coordinate of at most 6 decimals exact.
pub const MAX_DECIMALS: usize = 15;

/// Reads a GeoJSON Geometry object or Feature (RFC 7946 sections 3.1 and
/// 3.2); `Ok(None)` for a Feature whose `"geometry"` is null.
///
/// Never panics; every failure is a [`GeomError::GeoJson`]. See the module
/// documentation for what is accepted.
pub fn parse(text: &str) -> Result<Option<Geometry>, GeomError> {
    check_room(text)?;
    let value: Value = serde_json::from_str(text).map_err(|e| {
        let hint = if e.to_string().starts_with("recursion limit exceeded") {
            " (arrays and objects nested 128 deep; GeometryCollections may nest at most \
             64 levels, and fewer in JSON text)"
        } else {
            ""
        };
        error(format!("invalid JSON: {e}{hint}"))
    })?;
    from_value(&value)
}

/// Checks, before `serde_json` builds its tree (whose allocations abort
/// the process when they fail), that memory for the tree `text` can give
/// is to be had: one [`Value`] per value (at most one per `[`, `{` and `,`,
/// plus one), an object entry per `:`, the text's bytes for strings, and
/// half as much again for vectors growing by doubling. The reservation is
/// released at once; failing it is [`GeomError::TooLarge`].
fn check_room(text: &str) -> Result<(), GeomError> {
    memory::vec_with_capacity::<u8>(room_needed(text), "the parsed GeoJSON").map(drop)
}

/// The bytes [`check_room`] asks for `text`.
fn room_needed(text: &str) -> usize {
    let mut values = 1usize;
    let mut entries = 0usize;
    for &b in text.as_bytes() {
        match b {
            b'[' | b'{' | b',' => values += 1,
            b':' => entries += 1,
            _ => {}
        }
    }
    let value = std::mem::size_of::<Value>();
    let entry = value + std::mem::size_of::<String>() + 2 * std::mem::size_of::<usize>();
    let tree = values
        .saturating_mul(value)
        .saturating_add(entries.saturating_mul(entry));
    tree.saturating_add(tree / 2).saturating_add(text.len())
}

/// Writes `g` as a compact GeoJSON Geometry object (RFC 7946 section 3.1)
/// with each number rounded to `decimals` decimal places (clamped to
/// [`MAX_DECIMALS`]).
///
/// A number is written in Rust's shortest round-trip form when that has
/// at most `decimals` decimal places, and otherwise rounded to `decimals`
/// places from its exact binary value (halfway cases to even); the two
/// differ only below the double's own precision, so no digit is written
/// that the double does not hold. Numbers have no trailing zeros, no
/// trailing `.`, no minus sign on zero and no exponent: `1.5`, `2`, `0`,
/// `0.000001`. NaN and infinities,
/// which JSON cannot hold, are written as `null`. M values are dropped.
/// Collections are written without recursion, however deep.
///
/// Aborts like any Rust allocation when memory runs out: the SQL functions
/// use [`try_write`].
pub fn write(g: &Geometry, decimals: usize) -> String {
    try_write(g, decimals).unwrap_or_else(|e| memory::abort(&e))
}

/// Room for the punctuation and type name written between two checks.
const SLACK: usize = 64;
/// The longest `{}` or `{:.15}` form of an f64 (no exponent: 5e-324 is
/// written with 323 zeros, f64::MAX with 309 digits), plus a separator.
const MAX_NUMBER: usize = 330;
const WHAT: &str = "its GeoJSON text";

/// [`fn@write`], or [`GeomError::TooLarge`] when the text cannot be
/// allocated. The text grows only through fallible reservations.
pub fn try_write(g: &Geometry, decimals: usize) -> Result<String, GeomError> {
    enum Item<'a> {
        Geom(&'a Geometry),
        Text(&'static str),
    }
    let mut w = Writer {
        out: String::new(),
        buf: String::new(),
        decimals: decimals.min(MAX_DECIMALS),
        keep: 2,
        width: 2,
    };
    let mut stack = vec![Item::Geom(g)];
    while let Some(item) = stack.pop() {
        memory::reserve_text(&mut w.out, SLACK, WHAT)?;
        let g = match item {
            Item::Text(s) => {
                w.out.push_str(s);
                continue;
            }
            Item::Geom(g) => g,
        };
        w.width = g.dims.width();
        w.keep = if g.dims.has_z() { 3 } else { 2 };
        w.out.push_str("{\"type\":\"");
        w.out.push_str(g.geometry_type().geojson_name());
        if let Shape::GeometryCollection(members) = &g.shape {
            w.out.push_str("\",\"geometries\":[");
            memory::grow(&mut stack, WHAT)?;
            stack.push(Item::Text("]}"));
            for (i, m) in members.iter().enumerate().rev() {
                memory::grow(&mut stack, WHAT)?;
                stack.push(Item::Geom(m));
                if i > 0 {
                    memory::grow(&mut stack, WHAT)?;
                    stack.push(Item::Text(","));
                }
            }
            continue;
        }
        w.out.push_str("\",\"coordinates\":");
        match &g.shape {
            Shape::Point(p) => w.position(p)?,
            Shape::LineString(p) => w.line(p)?,
            Shape::Polygon(rings) | Shape::MultiLineString(rings) => {
                w.list(rings, |w, r| w.line(r))?
            }
            Shape::MultiPoint(points) => w.list(points, |w, p| w.position(p))?,
            Shape::MultiPolygon(polygons) => {
                w.list(polygons, |w, rings| w.list(rings, |w, r| w.line(r)))?
            }
            Shape::GeometryCollection(_) => {}
        }
        memory::reserve_text(&mut w.out, SLACK, WHAT)?;
        w.out.push('}');
    }
    Ok(w.out)
}

/// The output and the settings of the geometry being written.
struct Writer {
    out: String,
    /// Scratch space for one number.
    buf: String,
    decimals: usize,
    /// Values written per position: 2, or 3 with Z.
    keep: usize,
    /// Values stored per vertex.
    width: usize,
}

impl Writer {
    /// `[a,b,...]` with `item` writing each element.
    fn list<T>(
        &mut self,
        items: &[T],
        mut item: impl FnMut(&mut Self, &T) -> Result<(), GeomError>,
    ) -> Result<(), GeomError> {
        memory::reserve_text(&mut self.out, SLACK, WHAT)?;
        self.out.push('[');
        for (i, x) in items.iter().enumerate() {
            memory::reserve_text(&mut self.out, SLACK, WHAT)?;
            if i > 0 {
                self.out.push(',');
            }
            item(self, x)?;
        }
        memory::reserve_text(&mut self.out, SLACK, WHAT)?;
        self.out.push(']');
        Ok(())
    }

    /// The positions of a line string or ring.
    fn line(&mut self, part: &[f64]) -> Result<(), GeomError> {
        memory::reserve_text(&mut self.out, SLACK, WHAT)?;
        self.out.push('[');
        for (i, v) in part.chunks(self.width).enumerate() {
            memory::reserve_text(&mut self.out, SLACK, WHAT)?;
            if i > 0 {
                self.out.push(',');
            }
            self.position(v)?;
        }
        memory::reserve_text(&mut self.out, SLACK, WHAT)?;
        self.out.push(']');
        Ok(())
    }

    /// One position, `[]` for an empty point.
    fn position(&mut self, v: &[f64]) -> Result<(), GeomError> {
        memory::reserve_text(&mut self.out, SLACK + 3 * MAX_NUMBER, WHAT)?;
        self.out.push('[');
        for (i, &x) in v.iter().take(self.keep).enumerate() {
            if i > 0 {
                self.out.push(',');
            }
            self.number(x);
        }
        self.out.push(']');
        Ok(())
    }

    /// One number: Rust's shortest round-trip form when it has at most
    /// `decimals` decimal places, else rounded to `decimals` places and
    /// trimmed. So no more digits are written than the double holds.
    fn number(&mut self, x: f64) {
        if !x.is_finite() {
            self.out.push_str("null");
            return;
        }
        // Writing into a String cannot fail. `{}` never uses an exponent.
        self.buf.clear();
        let _ = write!(self.buf, "{x}");
        let places = self.buf.find('.').map_or(0, |dot| self.buf.len() - dot - 1);
        if places > self.decimals {
            self.buf.clear();
            let _ = write!(self.buf, "{:.*}", self.decimals, x);
        }
        let mut s = self.buf.as_str();
        if s.contains('.') {
            s = s.trim_end_matches('0').trim_end_matches('.');
        }
        self.out.push_str(if s == "-0" { "0" } else { s });
    }
}

/// `read` applied to each of `items`, into a vector reserved fallibly.
fn each<T>(
    items: &[Value],
    mut read: impl FnMut(&Value) -> Result<T, GeomError>,
) -> Result<Vec<T>, GeomError> {
    let mut out = memory::vec_with_capacity(items.len(), "the parsed GeoJSON")?;
    for v in items {
        out.push(read(v)?);
    }
    Ok(out)
}

fn error(message: String) -> GeomError {
    GeomError::GeoJson { message }
}

/// The JSON type of a value, with its article, for messages.
fn kind(v: &Value) -> &'static str {
    match v {
        Value::Null => "null",
        Value::Bool(_) => "a boolean",
        Value::Number(_) => "a number",
        Value::String(_) => "a string",
        Value::Array(_) => "an array",
        Value::Object(_) => "an object",
    }
}

const TYPES: &str = "Point, LineString, Polygon, MultiPoint, MultiLineString, MultiPolygon, \
                     GeometryCollection or Feature";

/// The `"type"` member of an object.
fn type_of(obj: &Map<String, Value>) -> Result<&str, GeomError> {
    match obj.get("type") {
        Some(Value::String(s)) => Ok(s),
        None => Err(error(format!(
            "a GeoJSON object needs a \"type\" member: {TYPES}"
        ))),
        Some(v) => Err(error(format!(
            "the \"type\" member must be a string, found {}",
            kind(v)
        ))),
    }
}

/// Converts a parsed JSON value (see [`parse()`]).
fn from_value(value: &Value) -> Result<Option<Geometry>, GeomError> {
    let Some(obj) = value.as_object() else {
        return Err(error(format!(
            "expected a GeoJSON object, found {}",
            kind(value)
        )));
    };
    let mut reader = Reader {
        width: None,
        positions: 0,
    };
    let mut g = match type_of(obj)? {
        "FeatureCollection" => {
            return Err(error(
                "a FeatureCollection holds many geometries; pass one feature per row: \
                 SELECT ambit_from_geojson(value) FROM json_each(:fc, '$.features')"
                    .to_string(),
            ))
        }
        "Feature" => match obj.get("geometry") {
            None => {
                return Err(error(
                    "a Feature needs a \"geometry\" member: a geometry object, or null for \
                     an unlocated feature"
                        .to_string(),
                ))
            }
            Some(Value::Null) => return Ok(None),
            Some(g) => reader.geometry(g, "a Feature's \"geometry\"", 0)?,
        },
        _ => reader.geometry(value, "a GeoJSON text", 0)?,
    };
    let dims = match reader.width {
        Some((3, _)) => Dimensions::Xyz,
        _ => Dimensions::Xy,
    };
    set_dims(&mut g, dims);
    Ok(Some(g))
}

/// Gives every geometry of the tree the dimensions its positions settled;
/// the reader has bounded the depth to [`MAX_NESTING`].
fn set_dims(g: &mut Geometry, dims: Dimensions) {
    g.dims = dims;
    if let Shape::GeometryCollection(members) = &mut g.shape {
        members.iter_mut().for_each(|m| set_dims(m, dims));
    }
}

/// Whose array is being read, for messages.
#[derive(Clone, Copy)]
enum Whose {
    /// The `"coordinates"` member itself.
    Coordinates,
    /// An element inside it: "position", "ring", "line string", "polygon".
    Element(&'static str),
}

/// `v` as an array, or the error "`whose` of a `ty` must be `expected`".
fn array<'v>(
    v: &'v Value,
    ty: &str,
    whose: Whose,
    expected: &str,
) -> Result<&'v [Value], GeomError> {
    match v {
        Value::Array(a) => Ok(a),
        _ => Err(error(match whose {
            Whose::Coordinates => format!(
                "a {ty}'s \"coordinates\" must be {expected}, found {}",
                kind(v)
            ),
            Whose::Element(name) => format!(
                "each {name} of a {ty} must be {expected}, found {}",
                kind(v)
            ),
        })),
    }
}

/// The converter: the position count settled so far (and by which
/// position), shared by all members of a collection.
struct Reader {
    width: Option<(usize, usize)>,
    /// Positions read so far.
    positions: usize,
}

impl Reader {
    /// A Geometry object; `what` names the value for messages, `depth` is
    /// the number of collections around it.
    fn geometry(&mut self, v: &Value, what: &str, depth: usize) -> Result<Geometry, GeomError> {
        let Some(obj) = v.as_object() else {
            return Err(error(format!(
                "{what} must be a geometry object, found {}",
                kind(v)
            )));
        };
        let name = type_of(obj)?;
        let Some(ty) = (1..=7)
            .filter_map(GeometryType::from_wkb_code)
            .find(|t| t.geojson_name() == name)
        else {
            return Err(error(unknown_type(name, what)));
        };
        let ty_name = ty.geojson_name();
        if ty == GeometryType::GeometryCollection {
            if depth > MAX_NESTING {
                return Err(error(format!(
                    "GeometryCollections nested deeper than {MAX_NESTING} levels"
                )));
            }
            let members = match obj.get("geometries") {
                Some(Value::Array(a)) => a,
                None => {
                    return Err(error(
                        "a GeometryCollection needs a \"geometries\" member, an array of \
                         geometry objects"
                            .to_string(),
                    ))
                }
                Some(other) => {
                    return Err(error(format!(
                        "a GeometryCollection's \"geometries\" must be an array of geometry \
                         objects, found {}",
                        kind(other)
                    )))
                }
            };
            let members = each(members, |m| {
                self.geometry(m, "each member of a GeometryCollection", depth + 1)
            })?;
            return Ok(Geometry::new(
                Dimensions::Xy,
                Shape::GeometryCollection(members),
            ));
        }
        let Some(c) = obj.get("coordinates") else {
            return Err(error(format!("a {ty_name} needs a \"coordinates\" member")));
        };
        let whole = Whose::Coordinates;
        let shape = match ty {
            GeometryType::Point => Shape::Point(self.point(c, ty_name, whole)?),
            GeometryType::LineString => Shape::LineString(self.line(c, ty_name, whole)?),
            GeometryType::Polygon => Shape::Polygon(self.rings(c, ty_name, whole)?),
            GeometryType::MultiPoint => Shape::MultiPoint(each(
                array(c, ty_name, whole, "an array of positions")?,
                |p| self.point(p, ty_name, Whose::Element("position")),
            )?),
            GeometryType::MultiLineString => Shape::MultiLineString(each(
                array(c, ty_name, whole, "an array of line strings")?,
                |l| self.line(l, ty_name, Whose::Element("line string")),
            )?),
            GeometryType::MultiPolygon => Shape::MultiPolygon(each(
                array(c, ty_name, whole, "an array of polygons")?,
                |p| self.rings(p, ty_name, Whose::Element("polygon")),
            )?),
            GeometryType::GeometryCollection => Shape::GeometryCollection(Vec::new()),
        };
        // Placeholder dimensions; `from_value` sets the settled ones.
        Ok(Geometry::new(Dimensions::Xy, shape))
    }

    /// A point's position, or `[]` for an empty point.
    fn point(&mut self, v: &Value, ty: &'static str, whose: Whose) -> Result<Part, GeomError> {
        let expected = match whose {
            Whose::Coordinates => "a position (an array of 2 or 3 numbers, or [] if empty)",
            Whose::Element(_) => "an array of 2 or 3 numbers (or [] for an empty point)",
        };
        let numbers = array(v, ty, whose, expected)?;
        let mut part = memory::vec_with_capacity(numbers.len().min(3), "the parsed GeoJSON")?;
        if !numbers.is_empty() {
            self.position(numbers, ty, &mut part)?;
        }
        Ok(part)
    }

    /// The positions of a line string or ring.
    fn line(&mut self, v: &Value, ty: &'static str, whose: Whose) -> Result<Part, GeomError> {
        let positions = array(v, ty, whose, "an array of positions")?;
        let mut part =
            memory::vec_with_capacity(positions.len().saturating_mul(3), "the parsed GeoJSON")?;
        for p in positions {
            let numbers = array(
                p,
                ty,
                Whose::Element("position"),
                "an array of 2 or 3 numbers",
            )?;
            self.position(numbers, ty, &mut part)?;
        }
        Ok(part)
    }

    /// A polygon's rings.
    fn rings(&mut self, v: &Value, ty: &'static str, whose: Whose) -> Result<Vec<Part>, GeomError> {
        each(array(v, ty, whose, "an array of rings")?, |r| {
            self.line(r, ty, Whose::Element("ring"))
        })
    }

    /// One position (RFC 7946 section 3.1.1), appended to `part`.
    fn position(&mut self, numbers: &[Value], ty: &str, part: &mut Part) -> Result<(), GeomError> {
        self.positions += 1;
        let n = self.positions;
        let len = numbers.len();
        if !(2..=3).contains(&len) {
            let plural = if len == 1 { "number" } else { "numbers" };
            return Err(error(format!(
                "position {n} of a {ty} has {len} {plural}; RFC 7946 positions have 2 \
                 (longitude, latitude) or 3 (longitude, latitude, altitude)"
            )));
        }
        for x in numbers {
            match x.as_f64() {
                Some(x) => part.push(x),
                None => {
                    return Err(error(format!(
                        "position {n} of a {ty} holds {}; positions hold numbers only",
                        kind(x)
                    )))
                }
            }
        }
        match self.width {
            None => self.width = Some((len, n)),
            Some((w, first)) if w != len => {
                return Err(error(format!(
                    "position {n} of a {ty} has {len} numbers but position {first} has {w}; \
                     all positions of one geometry must have the same count"
                )))
            }
            Some(_) => {}
        }
        Ok(())
    }
}

/// The message for a `"type"` that is not a geometry type.
fn unknown_type(name: &str, what: &str) -> String {
    let name = match name.char_indices().nth(32) {
        Some((end, _)) => format!("{}...", name.get(..end).unwrap_or("")),
        None => name.to_string(),
    };
    if name == "Feature" || name == "FeatureCollection" {
        return format!("{what} must be a geometry object, found a {name}");
    }
    let near = (1..=7)
        .filter_map(GeometryType::from_wkb_code)
        .map(GeometryType::geojson_name)
        .chain(["Feature"])
        .find(|t| t.eq_ignore_ascii_case(&name));
    match near {
        Some(t) => {
            format!("unknown GeoJSON type \"{name}\"; type names are case-sensitive: \"{t}\"")
        }
        None => format!("unknown GeoJSON type \"{name}\"; expected {TYPES}"),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::blob::wkt;
    use crate::testing::{random_geometry, XorShift};

    fn ok(text: &str) -> Geometry {
        match parse(text) {
            Ok(Some(g)) => g,
            other => panic!("{text:?} should give a geometry, gave {other:?}"),
        }
    }

    fn fails(text: &str) -> String {
        match parse(text) {
            Err(GeomError::GeoJson { message }) => message,
            other => panic!("{text:?} should fail, gave {other:?}"),
        }
    }

    /// The JSON value with every number as an f64, so that `100.0` and
    /// `100` compare equal.
    fn normalized(v: Value) -> Value {
        match v {
            Value::Number(n) => n.as_f64().map_or(Value::Null, Value::from),
            Value::Array(a) => Value::Array(a.into_iter().map(normalized).collect()),
            Value::Object(o) => {
                Value::Object(o.into_iter().map(|(k, v)| (k, normalized(v))).collect())
            }
            other => other,
        }
    }

    fn json(text: &str) -> Value {
        normalized(serde_json::from_str(text).expect("test JSON is valid"))
    }

    #[test]
    fn rfc_7946_appendix_a_examples_round_trip() {
        // RFC 7946 Appendix A, "Geometry Examples", A.1-A.7, quoted from
        // memory (A.3 has both the no-holes and the with-holes polygon).
        let examples = [
            r#"{"type": "Point", "coordinates": [100.0, 0.0]}"#,
            r#"{"type": "LineString", "coordinates": [[100.0, 0.0], [101.0, 1.0]]}"#,
            r#"{"type": "Polygon", "coordinates": [
                [[100.0, 0.0], [101.0, 0.0], [101.0, 1.0], [100.0, 1.0], [100.0, 0.0]]]}"#,
            r#"{"type": "Polygon", "coordinates": [
                [[100.0, 0.0], [101.0, 0.0], [101.0, 1.0], [100.0, 1.0], [100.0, 0.0]],
                [[100.8, 0.8], [100.8, 0.2], [100.2, 0.2], [100.2, 0.8], [100.8, 0.8]]]}"#,
            r#"{"type": "MultiPoint", "coordinates": [[100.0, 0.0], [101.0, 1.0]]}"#,
            r#"{"type": "MultiLineString", "coordinates": [
                [[100.0, 0.0], [101.0, 1.0]], [[102.0, 2.0], [103.0, 3.0]]]}"#,
            r#"{"type": "MultiPolygon", "coordinates": [
                [[[102.0, 2.0], [103.0, 2.0], [103.0, 3.0], [102.0, 3.0], [102.0, 2.0]]],
                [[[100.0, 0.0], [101.0, 0.0], [101.0, 1.0], [100.0, 1.0], [100.0, 0.0]],
                 [[100.2, 0.2], [100.2, 0.8], [100.8, 0.8], [100.8, 0.2], [100.2, 0.2]]]]}"#,
            r#"{"type": "GeometryCollection", "geometries": [
                {"type": "Point", "coordinates": [100.0, 0.0]},
                {"type": "LineString", "coordinates": [[101.0, 0.0], [102.0, 1.0]]}]}"#,
        ];
        for text in examples {
            let g = ok(text);
            assert_eq!(g.dims, Dimensions::Xy);
            let out = write(&g, DEFAULT_DECIMALS);
            assert_eq!(json(&out), json(text), "{out}");
        }
        // Exact compact output and the model behind A.1 and A.7.
        assert_eq!(
            write(&ok(examples[0]), DEFAULT_DECIMALS),
            r#"{"type":"Point","coordinates":[100,0]}"#
        );
        assert_eq!(ok(examples[0]), Geometry::point(100.0, 0.0));
        assert_eq!(
            write(&ok(examples[7]), DEFAULT_DECIMALS),
            r#"{"type":"GeometryCollection","geometries":[{"type":"Point","coordinates":[100,0]},{"type":"LineString","coordinates":[[101,0],[102,1]]}]}"#
        );
        assert_eq!(
            wkt::write(&ok(examples[3])),
            "POLYGON ((100 0, 101 0, 101 1, 100 1, 100 0), \
             (100.8 0.8, 100.8 0.2, 100.2 0.2, 100.2 0.8, 100.8 0.8))"
        );
    }

    #[test]
    fn features_give_their_geometry() {
        // RFC 7946 section 3.2; the feature is the first of the section 1.5
        // example (from memory), with an id and a bbox (section 5) added.
        let feature = r#"{"type": "Feature", "id": 7, "bbox": [102.0, 0.5, 102.0, 0.5],
            "geometry": {"type": "Point", "coordinates": [102.0, 0.5]},
            "properties": {"prop0": "value0"}}"#;
        assert_eq!(ok(feature), Geometry::point(102.0, 0.5));
        // An unlocated feature (section 3.2: "geometry" may be null).
        let unlocated = r#"{"type": "Feature", "geometry": null, "properties": null}"#;
        assert_eq!(parse(unlocated), Ok(None));
        // Members ambit does not use are ignored, including the crs of
        // the 2008 specification.
        let crs = r#"{"type": "Point", "coordinates": [1, 2], "bbox": [1, 2, 1, 2],
            "crs": {"type": "name", "properties": {"name": "EPSG:4326"}}, "title": "x"}"#;
        assert_eq!(ok(crs), Geometry::point(1.0, 2.0));
        assert!(fails(r#"{"type": "Feature", "properties": {}}"#)
            .contains("a Feature needs a \"geometry\" member"));
        assert!(fails(r#"{"type": "Feature", "geometry": [1, 2]}"#)
            .contains("a Feature's \"geometry\" must be a geometry object, found an array"));
        assert!(
            fails(r#"{"type": "Feature", "geometry": {"type": "Feature"}}"#)
                .contains("a Feature's \"geometry\" must be a geometry object, found a Feature")
        );
    }

    #[test]
    fn feature_collections_are_refused_with_a_hint() {
        // RFC 7946 section 1.5 example, shortened (from memory).
        let fc = r#"{"type": "FeatureCollection", "features": [
            {"type": "Feature", "geometry": {"type": "Point", "coordinates": [102.0, 0.5]},
             "properties": {"prop0": "value0"}}]}"#;
        assert_eq!(
            fails(fc),
            "a FeatureCollection holds many geometries; pass one feature per row: \
             SELECT ambit_from_geojson(value) FROM json_each(:fc, '$.features')"
        );
    }

    #[test]
    fn dimensions_and_empty_geometries() {
        // RFC 7946 section 3.1.1: the third number is the altitude.
        let g = ok(r#"{"type":"LineString","coordinates":[[1,2,3],[4,5,6]]}"#);
        assert_eq!(
            g,
            Geometry::new(
                Dimensions::Xyz,
                Shape::LineString(vec![1.0, 2.0, 3.0, 4.0, 5.0, 6.0])
            )
        );
        assert_eq!(
            write(&g, 9),
            r#"{"type":"LineString","coordinates":[[1,2,3],[4,5,6]]}"#
        );
        // M has no place in RFC 7946 and is dropped.
        let zm = wkt::parse("POINT ZM (1 2 3 4)").expect("valid WKT");
        assert_eq!(write(&zm, 9), r#"{"type":"Point","coordinates":[1,2,3]}"#);
        let m = wkt::parse("MULTIPOINT M ((1 2 3))").expect("valid WKT");
        assert_eq!(
            write(&m, 9),
            r#"{"type":"MultiPoint","coordinates":[[1,2]]}"#
        );
        // The dimensions of a collection come from all its members.
        let gc = ok(r#"{"type":"GeometryCollection","geometries":[
            {"type":"Point","coordinates":[]},{"type":"Point","coordinates":[1,2,3]}]}"#);
        assert_eq!(
            wkt::write(&gc),
            "GEOMETRYCOLLECTION Z (POINT Z EMPTY, POINT Z (1 2 3))"
        );
        // Empty coordinates arrays are empty geometries (section 3.1).
        let empties = [
            ("POINT EMPTY", r#"{"type":"Point","coordinates":[]}"#),
            (
                "LINESTRING EMPTY",
                r#"{"type":"LineString","coordinates":[]}"#,
            ),
            ("POLYGON EMPTY", r#"{"type":"Polygon","coordinates":[]}"#),
            (
                "MULTIPOINT EMPTY",
                r#"{"type":"MultiPoint","coordinates":[]}"#,
            ),
            (
                "MULTILINESTRING EMPTY",
                r#"{"type":"MultiLineString","coordinates":[]}"#,
            ),
            (
                "MULTIPOLYGON EMPTY",
                r#"{"type":"MultiPolygon","coordinates":[]}"#,
            ),
            (
                "GEOMETRYCOLLECTION EMPTY",
                r#"{"type":"GeometryCollection","geometries":[]}"#,
            ),
            (
                "MULTIPOINT (EMPTY, (1 2))",
                r#"{"type":"MultiPoint","coordinates":[[],[1,2]]}"#,
            ),
            (
                "POLYGON (EMPTY)",
                r#"{"type":"Polygon","coordinates":[[]]}"#,
            ),
            (
                "MULTIPOLYGON (EMPTY)",
                r#"{"type":"MultiPolygon","coordinates":[[]]}"#,
            ),
            (
                "MULTILINESTRING (EMPTY)",
                r#"{"type":"MultiLineString","coordinates":[[]]}"#,
            ),
        ];
        for (text, geojson) in empties {
            let g = wkt::parse(text).expect("valid WKT");
            assert_eq!(write(&g, 9), geojson);
            assert_eq!(ok(geojson), g, "{geojson}");
        }
        // An empty geometry has no position to tell its dimensions by.
        let z_empty = wkt::parse("POINT Z EMPTY").expect("valid WKT");
        assert_eq!(ok(&write(&z_empty, 9)).dims, Dimensions::Xy);
    }

    #[test]
    fn writer_reservations_hold_the_longest_numbers() {
        // `{}` and `{:.15}` never use an exponent (std::fmt docs): the
        // extremes are the longest forms. Brute force over them.
        for x in [f64::MAX, -f64::MAX, 5e-324, -5e-324] {
            assert!(format!("{x}").len() < MAX_NUMBER, "{x}");
            assert!(format!("{x:.15}").len() < MAX_NUMBER, "{x}");
        }
        let g = Geometry::new(
            Dimensions::Xyz,
            Shape::MultiPoint(vec![vec![-f64::MAX, -5e-324, -f64::MAX], vec![]]),
        );
        let text = try_write(&g, MAX_DECIMALS).unwrap();
        assert_eq!(text, write(&g, MAX_DECIMALS));
        assert!(parse(&text).unwrap().is_some());
    }

    #[test]
    fn the_room_check_counts_every_value() {
        // A MultiPoint of n empty positions is a tree of at least n + 4
        // JSON values and 2 object entries (brute-force count of the text
        // below); the check asks for at least their bytes, and for
        // the text's own bytes.
        let value = std::mem::size_of::<Value>();
        for n in [0usize, 1, 10, 1000] {
            let text = format!(
                r#"{{"type":"MultiPoint","coordinates":[{}]}}"#,
                vec!["[]"; n].join(",")
            );
            let needed = room_needed(&text);
            assert!(needed >= (n + 4) * value + text.len(), "n = {n}");
            assert!(needed <= 3 * (2 * n + 4) * (value + 48) + text.len());
            assert!(check_room(&text).is_ok());
        }
    }

    #[test]
    fn bad_inputs_are_explained() {
        let deep = |n: usize| {
            format!(
                "{}{{\"type\":\"Point\",\"coordinates\":[1,2]}}{}",
                r#"{"type":"GeometryCollection","geometries":["#.repeat(n),
                "]}".repeat(n)
            )
        };
        let cases: Vec<(String, &str)> = vec![
            (r#"{"type":"Point","coordinates":[1]}"#.into(),
             "position 1 of a Point has 1 number; RFC 7946 positions have 2 (longitude, latitude) or 3"),
            (r#"{"type":"LineString","coordinates":[[1,2],[1,2,3,4]]}"#.into(),
             "position 2 of a LineString has 4 numbers; RFC 7946 positions have 2"),
            (r#"{"type":"LineString","coordinates":[[1,2],[3,4,5]]}"#.into(),
             "position 2 of a LineString has 3 numbers but position 1 has 2; all positions of one geometry must have the same count"),
            (r#"{"type":"GeometryCollection","geometries":[{"type":"Point","coordinates":[1,2,3]},{"type":"Point","coordinates":[1,2]}]}"#.into(),
             "position 2 of a Point has 2 numbers but position 1 has 3"),
            (r#"{"type":"LineString","coordinates":[[1,2],[]]}"#.into(),
             "position 2 of a LineString has 0 numbers"),
            (r#"{"type":"Point","coordinates":["1","2"]}"#.into(),
             "position 1 of a Point holds a string; positions hold numbers only"),
            (r#"{"type":"Point","coordinates":"1 2"}"#.into(),
             "a Point's \"coordinates\" must be a position (an array of 2 or 3 numbers, or [] if empty), found a string"),
            (r#"{"type":"Polygon","coordinates":7}"#.into(),
             "a Polygon's \"coordinates\" must be an array of rings, found a number"),
            (r#"{"type":"Polygon","coordinates":[[1,2]]}"#.into(),
             "each position of a Polygon must be an array of 2 or 3 numbers, found a number"),
            (r#"{"type":"Polygon","coordinates":[{"a":1}]}"#.into(),
             "each ring of a Polygon must be an array of positions, found an object"),
            (r#"{"type":"MultiPolygon","coordinates":[[[1,2]]]}"#.into(),
             "each position of a MultiPolygon must be an array of 2 or 3 numbers, found a number"),
            (r#"{"type":"MultiPolygon","coordinates":[true]}"#.into(),
             "each polygon of a MultiPolygon must be an array of rings, found a boolean"),
            (r#"{"type":"MultiLineString","coordinates":[null]}"#.into(),
             "each line string of a MultiLineString must be an array of positions, found null"),
            (r#"{"type":"MultiPoint","coordinates":[1,2]}"#.into(),
             "each position of a MultiPoint must be an array of 2 or 3 numbers (or [] for an empty point), found a number"),
            (r#"{"type":"LineString"}"#.into(), "a LineString needs a \"coordinates\" member"),
            (r#"{"type":"LineString","coordinates":null}"#.into(),
             "a LineString's \"coordinates\" must be an array of positions, found null"),
            (r#"{"type":"GeometryCollection"}"#.into(),
             "a GeometryCollection needs a \"geometries\" member"),
            (r#"{"type":"GeometryCollection","geometries":{}}"#.into(),
             "a GeometryCollection's \"geometries\" must be an array of geometry objects, found an object"),
            (r#"{"type":"GeometryCollection","geometries":[3]}"#.into(),
             "each member of a GeometryCollection must be a geometry object, found a number"),
            (r#"{"type":"GeometryCollection","geometries":[{"type":"Feature","geometry":null}]}"#.into(),
             "each member of a GeometryCollection must be a geometry object, found a Feature"),
            (r#"{"type":"Polyline","coordinates":[]}"#.into(),
             "unknown GeoJSON type \"Polyline\"; expected Point, LineString, Polygon, MultiPoint, MultiLineString, MultiPolygon, GeometryCollection or Feature"),
            (r#"{"type":"point","coordinates":[1,2]}"#.into(),
             "unknown GeoJSON type \"point\"; type names are case-sensitive: \"Point\""),
            (r#"{"coordinates":[1,2]}"#.into(), "a GeoJSON object needs a \"type\" member"),
            (r#"{"type":1}"#.into(), "the \"type\" member must be a string, found a number"),
            ("[1, 2]".into(), "expected a GeoJSON object, found an array"),
            ("".into(), "invalid JSON: EOF while parsing a value at line 1 column 0"),
            ("{\"type\": \"Point\",\n \"coordinates\": [1, 2,]}".into(),
             "invalid JSON: trailing comma at line 2 column 23"),
            (r#"{"type":"Point","coordinates":[1e999,0]}"#.into(), "invalid JSON: number out of range"),
            (r#"{"type":"Point","coordinates":[1,2]} x"#.into(), "invalid JSON: trailing characters at line 1 column 38"),
            // Deeper than the JSON reader goes (RFC 8259 section 9 lets a
            // parser limit nesting).
            (deep(63), "invalid JSON: recursion limit exceeded at line 1 column"),
            (deep(100_000), "GeometryCollections may nest at most 64 levels"),
        ];
        for (text, fragment) in &cases {
            let message = fails(text);
            assert!(
                message.contains(fragment),
                "message for {text:.80}: {message:?} lacks {fragment:?}"
            );
        }
        // What the JSON reader can hold is accepted.
        assert_eq!(ok(&deep(62)).vertex_count(), 1);
    }

    #[test]
    fn collections_nest_at_most_64_levels() {
        // The text reader stops earlier (see above), so the converter's own
        // limit is checked on values built directly.
        let nested = |levels: usize| {
            let mut v = serde_json::json!({"type": "Point", "coordinates": [1, 2]});
            for _ in 0..levels {
                v = serde_json::json!({"type": "GeometryCollection", "geometries": [v]});
            }
            v
        };
        let g = from_value(&nested(64)).expect("64 levels are allowed");
        assert_eq!(g.map(|g| g.vertex_count()), Some(1));
        assert_eq!(
            from_value(&nested(66)),
            Err(GeomError::GeoJson {
                message: "GeometryCollections nested deeper than 64 levels".into()
            })
        );
    }

    #[test]
    fn numbers_are_rounded_and_trimmed() {
        let point = |x: f64, y: f64, decimals: usize| write(&Geometry::point(x, y), decimals);
        let c = |s: &str| format!(r#"{{"type":"Point","coordinates":[{s}]}}"#);
        assert_eq!(point(1.5, 2.0, 5), c("1.5,2"));
        assert_eq!(point(-0.0, 0.0, 9), c("0,0"));
        assert_eq!(point(1e-10, -1e-10, 9), c("0,0"));
        assert_eq!(point(179.99999999999, -89.9999999999, 9), c("180,-90"));
        assert_eq!(point(12.3456789, -0.0004, 3), c("12.346,0"));
        assert_eq!(point(12.3456789, -0.4, 0), c("12,0"));
        // Exact halfway cases (representable in binary) go to even.
        assert_eq!(point(2.5, 3.5, 0), c("2,4"));
        assert_eq!(point(0.125, 0.375, 2), c("0.12,0.38"));
        assert_eq!(point(0.1, 1.0 / 3.0, 15), c("0.1,0.333333333333333"));
        assert_eq!(point(1e-7, 123456.0, 9), c("0.0000001,123456"));
        // Never an exponent, even for huge values.
        assert_eq!(point(1e21, 5e-324, 9), c("1000000000000000000000,0"));
        // Decimals are clamped to 15.
        assert_eq!(point(1.0 / 3.0, 0.5, 40), point(1.0 / 3.0, 0.5, 15));
        // JSON has no NaN or infinity.
        assert_eq!(point(f64::NAN, f64::INFINITY, 9), c("null,null"));
        // 9 decimals is the default (about 0.1 mm).
        assert_eq!(DEFAULT_DECIMALS, 9);
        assert_eq!(
            point(-93.123456789123, 44.9, DEFAULT_DECIMALS),
            c("-93.123456789,44.9")
        );
    }

    #[test]
    fn long_line_strings_parse() {
        // Linear time: 200,000 positions (no time is asserted).
        let n = 200_000;
        let mut text = String::from(r#"{"type":"LineString","coordinates":["#);
        for i in 0..n {
            if i > 0 {
                text.push(',');
            }
            let x = (i as f64 - 100_000.0) / 1000.0;
            text.push_str(&format!("[{x},{}]", (i % 90) as f64 * 0.5));
        }
        text.push_str("]}");
        let g = ok(&text);
        assert_eq!(g.vertex_count(), n);
        assert_eq!(write(&g, 15), text);
    }

    #[test]
    fn long_numbers_are_read_to_within_one_unit_in_the_last_place() {
        // serde_json without its `float_roundtrip` feature reads numbers of
        // 17 significant digits to within one unit in the last place (about
        // 1e-14 degrees), not always to the nearest double; see the report.
        let g = ok(r#"{"type":"Point","coordinates":[-44.123419500425996,0]}"#);
        let x = g.point_values().and_then(|v| v.first().copied());
        let exact: f64 = "-44.123419500425996".parse().expect("a number");
        assert!(x.is_some_and(|x| (x - exact).abs() <= exact.abs() * f64::EPSILON));
    }

    #[test]
    fn write_then_parse_is_identity_for_random_geometries() {
        let mut rng = XorShift(0x2545_F491_4F6C_DD1D);
        // At most 6 decimals: k / 10^6 is the double nearest the decimal,
        // which 15 decimal places always write back exactly.
        let mut coord = |rng: &mut XorShift| -> f64 {
            match rng.below(3) {
                0 => rng.below(361) as f64 - 180.0,
                1 => (rng.below(360_000_001) as f64 - 180e6) / 1e6,
                _ => (rng.below(2_000_000_000_001) as f64 - 1e12) / 1e6,
            }
        };
        for case in 0..2000 {
            let dims = if case % 2 == 0 {
                Dimensions::Xy
            } else {
                Dimensions::Xyz
            };
            let mut g = random_geometry(&mut rng, dims, 3, &mut coord);
            if g.is_empty() {
                // GeoJSON cannot tell the dimensions of a geometry without
                // positions.
                let text = wkt::write(&g).replace(" Z", "");
                g = wkt::parse(&text).expect("valid WKT");
            }
            let text = write(&g, 15);
            assert_eq!(parse(&text), Ok(Some(g.clone())), "case {case}: {text}");
        }
    }
}
