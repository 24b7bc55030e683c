//! Well-Known Text (OGC 06-103r4, clause 7): reading into the [`Geometry`]
//! model and writing it back.
//!
//! Reading follows the BNF of 06-103r4 clause 7.2 for the seven Simple
//! Features types, with these choices:
//!
//! - keywords and `EMPTY` are case-insensitive; spaces, tabs and line
//!   breaks may appear between any two tokens and are required only
//!   between two numbers and between two words;
//! - `EMPTY` is accepted wherever the BNF allows it: a whole geometry, a
//!   point of a MULTIPOINT, a line string of a MULTILINESTRING, a ring of a
//!   POLYGON (read as a ring with no vertices), a polygon of a MULTIPOLYGON;
//! - a dimension tag `Z`, `M` or `ZM` follows the keyword after a space
//!   (`POINT Z (1 2 3)`); the run-together form `POINTZ` is refused with a
//!   hint. Without a tag, the first vertex decides: 2 numbers are `x y`, 3
//!   are `x y z`, 4 are `x y z m` (M without Z always needs the tag);
//! - every vertex of a geometry must have as many numbers as its dimensions
//!   say, members of a GEOMETRYCOLLECTION included: a member may repeat the
//!   collection's tag (the 06-103r4 BNF form, and what [`write()`] produces)
//!   or omit it, but a member whose tag or vertices differ from the
//!   collection's is an error;
//! - MULTIPOINT members may be parenthesised, `MULTIPOINT ((1 2), (3 4))`
//!   (06-103r4), or bare, `MULTIPOINT (1 2, 3 4)` (widely written); the two
//!   forms may even be mixed within one list;
//! - numbers are the BNF's signed numeric literals: optional sign, digits
//!   with an optional decimal point (`1`, `1.`, `.5`, `1.5`), optional
//!   exponent (`1e-3`, `2E+5`). `nan`, `inf` and `infinity` are refused, as
//!   are literals too large for a 64-bit float (`1e999`);
//! - collections may nest at most [`MAX_NESTING`] levels below the top,
//!   as in WKB;
//! - nothing but whitespace may follow the geometry.
//!
//! Coordinates are not checked here (ranges, ring closure, point counts):
//! that is [`crate::geometry::validate`]'s job. Errors are
//! [`GeomError::Wkt`] with the 0-based character offset of the problem and
//! a message saying what was expected and what was found.
//!
//! Writing gives canonical text: the upper-case keyword, ` Z`/` M`/` ZM`
//! when the geometry has those ordinates, ` EMPTY` or the coordinates with
//! single spaces between numbers and `, ` between vertices and parts, and
//! numbers in Rust's shortest round-trip form (`1`, `0.1`, `-2.5`), so that
//! `parse(&write(g)) == Ok(g)` for every geometry with finite coordinates.
//! Members of a collection repeat the tag: `GEOMETRYCOLLECTION Z (POINT Z
//! (1 2 3))`.

use crate::blob::{memory, MAX_NESTING};
use crate::error::GeomError;
use crate::geometry::{Dimensions, Geometry, GeometryType, Part, Shape};
use std::fmt::Write as _;

/// Reads one WKT geometry (06-103r4, clause 7.2) that fills `text`, up to
/// surrounding whitespace.
///
/// Runs in time linear in the length of `text` and never panics; every
/// failure is a [`GeomError::Wkt`] whose `position` is the 0-based
/// character offset of the offending token. See the module documentation
/// for the accepted forms.
pub fn parse(text: &str) -> Result<Geometry, GeomError> {
    let mut p = Parser {
        text,
        bytes: text.as_bytes(),
        pos: 0,
        dims: None,
        vertex: 0,
    };
    let mut g = p.geometry(0)?;
    p.skip_ws();
    if p.pos < p.bytes.len() {
        return Err(p.error(format!(
            "expected the end of the text after a complete geometry, found {}",
            p.found()
        )));
    }
    let dims = p.dims.map_or(Dimensions::Xy, |(d, _)| d);
    set_dims(&mut g, dims);
    Ok(g)
}

/// Writes `g` as canonical WKT (06-103r4, clause 7.2; see the module
/// documentation for the exact form).
///
/// For finite coordinates `parse(&write(g))` gives back `g` exactly. NaN
/// and infinities are written as `NaN`, `inf` and `-inf`, which [`parse()`]
/// refuses. Collections are written without recursion, however deep.
///
/// Aborts like any Rust allocation when memory runs out: the SQL functions
/// use [`try_write`].
pub fn write(g: &Geometry) -> String {
    try_write(g).unwrap_or_else(|e| memory::abort(&e))
}

/// Room for the punctuation, keyword and tag written between two checks
/// (`GEOMETRYCOLLECTION ZM (` is 23 bytes).
const SLACK: usize = 64;
/// The longest `{}` form of an f64 (no exponent: 5e-324 is written with
/// 323 zeros, f64::MAX with 309 digits), plus a separator.
const MAX_NUMBER: usize = 330;
const WHAT: &str = "its WKT text";

/// [`fn@write`], or [`GeomError::TooLarge`] when the text cannot be
/// allocated. The text grows only through fallible reservations.
pub fn try_write(g: &Geometry) -> Result<String, GeomError> {
    enum Item<'a> {
        Geom(&'a Geometry),
        Text(&'static str),
    }
    let mut out = String::new();
    let mut stack = vec![Item::Geom(g)];
    while let Some(item) = stack.pop() {
        memory::reserve_text(&mut out, SLACK, WHAT)?;
        let g = match item {
            Item::Text(s) => {
                out.push_str(s);
                continue;
            }
            Item::Geom(g) => g,
        };
        out.push_str(g.geometry_type().wkt_keyword());
        out.push_str(tag(g.dims));
        let width = g.dims.width();
        match &g.shape {
            Shape::Point(p) => {
                if p.is_empty() {
                    out.push_str(" EMPTY");
                } else {
                    out.push(' ');
                    write_line(&mut out, p, width)?;
                }
            }
            Shape::LineString(p) => {
                out.push(' ');
                write_line(&mut out, p, width)?;
            }
            Shape::Polygon(rings) => {
                out.push(' ');
                write_list(&mut out, rings, |out, r| write_line(out, r, width))?;
            }
            Shape::MultiPoint(points) | Shape::MultiLineString(points) => {
                out.push(' ');
                write_list(&mut out, points, |out, p| write_line(out, p, width))?;
            }
            Shape::MultiPolygon(polygons) => {
                out.push(' ');
                write_list(&mut out, polygons, |out, rings| {
                    write_list(out, rings, |out, r| write_line(out, r, width))
                })?;
            }
            Shape::GeometryCollection(members) => {
                if members.is_empty() {
                    out.push_str(" EMPTY");
                } else {
                    out.push_str(" (");
                    memory::grow(&mut stack, WHAT)?;
                    stack.push(Item::Text(")"));
                    for (i, m) in members.iter().enumerate().rev() {
                        memory::grow(&mut stack, WHAT)?;
                        stack.push(Item::Geom(m));
                        if i > 0 {
                            memory::grow(&mut stack, WHAT)?;
                            stack.push(Item::Text(", "));
                        }
                    }
                }
            }
        }
    }
    Ok(out)
}

/// The tag written after a keyword, with its leading space.
fn tag(dims: Dimensions) -> &'static str {
    match dims {
        Dimensions::Xy => "",
        Dimensions::Xyz => " Z",
        Dimensions::Xym => " M",
        Dimensions::Xyzm => " ZM",
    }
}

/// `EMPTY` or `(a, b, ...)` with `item` writing each element.
fn write_list<T>(
    out: &mut String,
    items: &[T],
    mut item: impl FnMut(&mut String, &T) -> Result<(), GeomError>,
) -> Result<(), GeomError> {
    memory::reserve_text(out, SLACK, WHAT)?;
    if items.is_empty() {
        out.push_str("EMPTY");
        return Ok(());
    }
    out.push('(');
    for (i, x) in items.iter().enumerate() {
        memory::reserve_text(out, SLACK, WHAT)?;
        if i > 0 {
            out.push_str(", ");
        }
        item(out, x)?;
    }
    memory::reserve_text(out, SLACK, WHAT)?;
    out.push(')');
    Ok(())
}

/// `EMPTY` or `(x y, x y, ...)`.
fn write_line(out: &mut String, part: &[f64], width: usize) -> Result<(), GeomError> {
    memory::reserve_text(out, SLACK, WHAT)?;
    if part.is_empty() {
        out.push_str("EMPTY");
        return Ok(());
    }
    out.push('(');
    for (i, v) in part.chunks(width).enumerate() {
        memory::reserve_text(out, SLACK + width * MAX_NUMBER, WHAT)?;
        if i > 0 {
            out.push_str(", ");
        }
        for (j, x) in v.iter().enumerate() {
            if j > 0 {
                out.push(' ');
            }
            // Writing into a String cannot fail.
            let _ = write!(out, "{x}");
        }
    }
    memory::reserve_text(out, SLACK, WHAT)?;
    out.push(')');
    Ok(())
}

/// Gives every geometry of the tree the dimensions settled by the parse
/// (members read before the first vertex or tag got a placeholder). The
/// parser has bounded the depth to [`MAX_NESTING`].
fn set_dims(g: &mut Geometry, dims: Dimensions) {
    g.dims = dims;
    if let Shape::GeometryCollection(members) = &mut g.shape {
        members.iter_mut().for_each(|m| set_dims(m, dims));
    }
}

/// What opens a body, for the message when neither `(` nor `EMPTY` does.
#[derive(Clone, Copy)]
enum Start {
    /// The body of a tagged text: its keyword and tag.
    Keyword(GeometryType, Option<&'static str>),
    /// A part inside a body: "a ring", "a polygon", ...
    Part(&'static str),
}

/// How the dimensions of the geometry being read were settled, for messages.
#[derive(Clone, Copy)]
enum Settled {
    /// By a `Z`, `M` or `ZM` tag.
    Tag,
    /// By the number count of this vertex (1-based).
    Vertex(usize),
}

/// The recursive-descent reader: a cursor over the text plus the
/// dimensions settled so far (shared by all members of a collection).
struct Parser<'a> {
    text: &'a str,
    bytes: &'a [u8],
    /// Byte offset; always on a character boundary, since only ASCII is
    /// ever stepped over.
    pos: usize,
    dims: Option<(Dimensions, Settled)>,
    /// Vertices read so far.
    vertex: usize,
}

impl Parser<'_> {
    // ----- cursor -----

    fn peek(&self) -> Option<u8> {
        self.bytes.get(self.pos).copied()
    }

    /// Skips whitespace; true if there was any.
    fn skip_ws(&mut self) -> bool {
        let start = self.pos;
        while self.peek().is_some_and(|b| b.is_ascii_whitespace()) {
            self.pos += 1;
        }
        self.pos > start
    }

    /// The run of ASCII letters at `from`, as a byte range end.
    fn word_end(&self, from: usize) -> usize {
        let mut end = from;
        while self.bytes.get(end).is_some_and(|b| b.is_ascii_alphabetic()) {
            end += 1;
        }
        end
    }

    /// The word (ASCII letters) at the cursor, possibly empty; not consumed.
    fn peek_word(&self) -> &str {
        self.text
            .get(self.pos..self.word_end(self.pos))
            .unwrap_or("")
    }

    /// Consumes the word at the cursor if it is `word`, ignoring case.
    fn eat_word(&mut self, word: &str) -> bool {
        if self.peek_word().eq_ignore_ascii_case(word) {
            self.pos += word.len();
            true
        } else {
            false
        }
    }

    /// Consumes `b` if it is the next byte.
    fn eat(&mut self, b: u8) -> bool {
        if self.peek() == Some(b) {
            self.pos += 1;
            true
        } else {
            false
        }
    }

    /// What is at the cursor, for messages: a quoted word or character, or
    /// "end of input".
    fn found(&self) -> String {
        let rest = self.text.get(self.pos..).unwrap_or("");
        match rest.chars().next() {
            None => "end of input".to_string(),
            Some(c) if c.is_ascii_alphanumeric() => {
                let end = rest
                    .find(|c: char| !c.is_ascii_alphanumeric())
                    .unwrap_or(rest.len());
                format!("'{}'", clip(rest.get(..end).unwrap_or("")))
            }
            Some(c) => format!("'{c}'"),
        }
    }

    fn error_at(&self, byte: usize, message: String) -> GeomError {
        let position = self
            .text
            .get(..byte)
            .map_or(byte, |before| before.chars().count());
        GeomError::Wkt { position, message }
    }

    fn error(&self, message: String) -> GeomError {
        self.error_at(self.pos, message)
    }

    // ----- grammar -----

    /// `<geometry tagged text>`: keyword, optional tag, body. `depth` is the
    /// number of collections around it.
    fn geometry(&mut self, depth: usize) -> Result<Geometry, GeomError> {
        self.skip_ws();
        let word = self.peek_word();
        let kind = keyword(word).ok_or_else(|| self.bad_keyword(word))?;
        if depth > MAX_NESTING {
            return Err(self.error(format!(
                "geometry collections nested deeper than {MAX_NESTING} levels"
            )));
        }
        self.pos += word.len();
        self.skip_ws();
        let tag_at = self.pos;
        let tagged = [("ZM", true, true), ("Z", true, false), ("M", false, true)]
            .into_iter()
            .find(|(t, _, _)| self.eat_word(t));
        if let Some((t, z, m)) = tagged {
            self.settle_by_tag(Dimensions::from_zm(z, m), t, tag_at)?;
        }
        let start = Start::Keyword(kind, tagged.map(|(t, _, _)| t));
        let shape = match kind {
            GeometryType::Point => Shape::Point(self.point_text(start)?),
            GeometryType::LineString => Shape::LineString(self.line_text(start)?),
            GeometryType::Polygon => Shape::Polygon(self.polygon_text(start)?),
            GeometryType::MultiPoint => {
                Shape::MultiPoint(self.list(start, "a point", Self::multipoint_member)?)
            }
            GeometryType::MultiLineString => {
                Shape::MultiLineString(self.list(start, "a line string", |p| {
                    p.line_text(Start::Part("a line string"))
                })?)
            }
            GeometryType::MultiPolygon => {
                Shape::MultiPolygon(self.list(start, "a polygon", |p| {
                    p.polygon_text(Start::Part("a polygon"))
                })?)
            }
            GeometryType::GeometryCollection => {
                Shape::GeometryCollection(
                    self.list(start, "a member geometry", |p| p.geometry(depth + 1))?,
                )
            }
        };
        // Placeholder dimensions; `parse` gives every geometry of the tree
        // the settled ones at the end.
        Ok(Geometry::new(Dimensions::Xy, shape))
    }

    /// The error for a word that is not a geometry keyword.
    fn bad_keyword(&self, word: &str) -> GeomError {
        let upper = word.to_ascii_uppercase();
        let word = clip(word);
        let run_together = ["ZM", "Z", "M"].into_iter().find_map(|t| {
            let base = upper.strip_suffix(t)?;
            keyword(base).map(|k| (k.wkt_keyword(), t))
        });
        let message = match run_together {
            Some((k, t)) => format!(
                "unknown geometry type '{word}'; write the dimension tag after a space: '{k} {t}'"
            ),
            None if word.is_empty() => format!(
                "expected a geometry type (POINT, LINESTRING, POLYGON, MULTIPOINT, \
                 MULTILINESTRING, MULTIPOLYGON or GEOMETRYCOLLECTION), found {}",
                self.found()
            ),
            None => format!(
                "unknown geometry type '{word}'; expected POINT, LINESTRING, POLYGON, \
                 MULTIPOINT, MULTILINESTRING, MULTIPOLYGON or GEOMETRYCOLLECTION"
            ),
        };
        self.error(message)
    }

    /// Applies a dimension tag read at byte `at`.
    fn settle_by_tag(&mut self, dims: Dimensions, tag: &str, at: usize) -> Result<(), GeomError> {
        match self.dims {
            None => {
                self.dims = Some((dims, Settled::Tag));
                Ok(())
            }
            Some((d, _)) if d == dims => Ok(()),
            Some((d, how)) => Err(self.error_at(
                at,
                format!(
                    "mixed dimensions: tag {tag} here, but the geometry is {} as {}; every \
                     member of a GEOMETRYCOLLECTION must have the collection's dimensions",
                    dims_name(d),
                    settled_text(how)
                ),
            )),
        }
    }

    /// `EMPTY` (false) or `(` (true).
    fn open(&mut self, start: Start) -> Result<bool, GeomError> {
        self.skip_ws();
        if self.eat_word("EMPTY") {
            return Ok(false);
        }
        if self.eat(b'(') {
            return Ok(true);
        }
        let found = self.found();
        Err(self.error(match start {
            Start::Keyword(kind, None) => format!(
                "expected '(', EMPTY or a dimension tag (Z, M, ZM) after {}, found {found}",
                kind.wkt_keyword()
            ),
            Start::Keyword(kind, Some(tag)) => format!(
                "expected '(' or EMPTY after {} {tag}, found {found}",
                kind.wkt_keyword()
            ),
            Start::Part(name) => format!("expected '(' or EMPTY to start {name}, found {found}"),
        }))
    }

    /// After an element of a list: `,` (true, more follow) or `)` (false).
    fn next(&mut self, element: &str) -> Result<bool, GeomError> {
        self.skip_ws();
        if self.eat(b',') {
            Ok(true)
        } else if self.eat(b')') {
            Ok(false)
        } else {
            Err(self.error(format!(
                "expected ',' or ')' after {element}, found {}",
                self.found()
            )))
        }
    }

    /// `EMPTY | ( element {, element} )`.
    fn list<T>(
        &mut self,
        start: Start,
        element: &str,
        mut read: impl FnMut(&mut Self) -> Result<T, GeomError>,
    ) -> Result<Vec<T>, GeomError> {
        let mut items = Vec::new();
        if self.open(start)? {
            loop {
                let next = read(self)?;
                memory::grow(&mut items, "the parsed WKT")?;
                items.push(next);
                if !self.next(element)? {
                    break;
                }
            }
        }
        Ok(items)
    }

    /// `<point text>`: `EMPTY | ( vertex )`.
    fn point_text(&mut self, start: Start) -> Result<Part, GeomError> {
        let mut part = Vec::new();
        if self.open(start)? {
            self.vertex(&mut part)?;
            self.skip_ws();
            if !self.eat(b')') {
                return Err(self.error(format!(
                    "expected ')' after a point's coordinates, found {}",
                    self.found()
                )));
            }
        }
        Ok(part)
    }

    /// `<linestring text>`: `EMPTY | ( vertex {, vertex} )`; also a ring.
    fn line_text(&mut self, start: Start) -> Result<Part, GeomError> {
        let mut part = Vec::new();
        if self.open(start)? {
            loop {
                self.vertex(&mut part)?;
                if !self.next("a coordinate")? {
                    break;
                }
            }
        }
        Ok(part)
    }

    /// `<polygon text>`: `EMPTY | ( ring {, ring} )`.
    fn polygon_text(&mut self, start: Start) -> Result<Vec<Part>, GeomError> {
        self.list(start, "a ring", |p| p.line_text(Start::Part("a ring")))
    }

    /// A MULTIPOINT member: `EMPTY`, `( vertex )` or a bare vertex.
    fn multipoint_member(&mut self) -> Result<Part, GeomError> {
        self.skip_ws();
        if self.peek() == Some(b'(') || self.peek_word().eq_ignore_ascii_case("EMPTY") {
            self.point_text(Start::Part("a point"))
        } else {
            let mut part = Vec::new();
            self.vertex(&mut part)?;
            Ok(part)
        }
    }

    /// One vertex: 2 to 4 numbers separated by whitespace, appended to
    /// `part`; settles the dimensions if nothing did yet.
    fn vertex(&mut self, part: &mut Part) -> Result<(), GeomError> {
        self.vertex += 1;
        let vertex = self.vertex;
        let limit = self.dims.map_or(4, |(d, _)| d.width());
        let mut values = [0.0; 4];
        let mut count = 0;
        let mut first_extra = None;
        loop {
            let spaced = self.skip_ws();
            if count > 0 && !self.at_number() {
                break;
            }
            if count > 0 && !spaced {
                return Err(self.error(format!(
                    "expected a space between two numbers, found {}",
                    self.found()
                )));
            }
            let at = self.pos;
            let x = self.number()?;
            if let Some(slot) = values.get_mut(count).filter(|_| count < limit) {
                *slot = x;
            } else if first_extra.is_none() {
                first_extra = Some(at);
            }
            count += 1;
        }
        let plural = if count == 1 { "number" } else { "numbers" };
        // Too many numbers: the position is the first extra one. Too few:
        // it is what stands where the next number should.
        let found = match first_extra {
            Some(_) => String::new(),
            None => format!("; found {}", self.found()),
        };
        let (dims, how) = match self.dims {
            Some(settled) => settled,
            None => {
                let dims = match count {
                    2 => Dimensions::Xy,
                    3 => Dimensions::Xyz,
                    4 => Dimensions::Xyzm,
                    _ => {
                        return Err(self.error_at(
                            first_extra.unwrap_or(self.pos),
                            format!(
                                "vertex {vertex} has {count} {plural}, expected 2 (x y), \
                                 3 (x y z) or 4 (x y z m){found}"
                            ),
                        ))
                    }
                };
                self.dims = Some((dims, Settled::Vertex(vertex)));
                (dims, Settled::Vertex(vertex))
            }
        };
        if count != dims.width() {
            return Err(self.error_at(
                first_extra.unwrap_or(self.pos),
                format!(
                    "vertex {vertex} has {count} {plural}, expected {} ({}) as {}{found}",
                    dims.width(),
                    ordinates(dims),
                    settled_text(how)
                ),
            ));
        }
        for &x in values.get(..count).unwrap_or(&[]) {
            memory::grow(part, "the parsed WKT")?;
            part.push(x);
        }
        Ok(())
    }

    /// True if a number (or a refused `nan`/`inf`) starts at the cursor.
    fn at_number(&self) -> bool {
        match self.peek() {
            Some(b'0'..=b'9' | b'+' | b'-' | b'.') => true,
            Some(_) => self.non_finite_end().is_some(),
            None => false,
        }
    }

    /// The end of a `nan`, `inf` or `infinity` word (with an optional
    /// sign) at the cursor.
    fn non_finite_end(&self) -> Option<usize> {
        let from = match self.peek() {
            Some(b'+' | b'-') => self.pos + 1,
            _ => self.pos,
        };
        let end = self.word_end(from);
        let word = self.text.get(from..end)?;
        ["nan", "inf", "infinity"]
            .iter()
            .any(|w| word.eq_ignore_ascii_case(w))
            .then_some(end)
    }

    /// `<signed numeric literal>` (06-103r4 clause 7.2.1, after SQL):
    /// `[sign] (digits [. [digits]] | . digits) [(e|E) [sign] digits]`.
    fn number(&mut self) -> Result<f64, GeomError> {
        let start = self.pos;
        if let Some(end) = self.non_finite_end() {
            let word = self.text.get(start..end).unwrap_or("");
            return Err(self.error(format!(
                "expected a number, found '{word}': NaN and infinity are not valid coordinates"
            )));
        }
        let digits = |p: &mut Self| {
            let from = p.pos;
            while p.peek().is_some_and(|b| b.is_ascii_digit()) {
                p.pos += 1;
            }
            p.pos > from
        };
        let _ = self.eat(b'+') || self.eat(b'-');
        let mut mantissa = digits(self);
        if self.eat(b'.') {
            mantissa |= digits(self);
        }
        if !mantissa {
            self.pos = start;
            return Err(self.error(format!("expected a number, found {}", self.found())));
        }
        if self.peek().is_some_and(|b| b == b'e' || b == b'E') {
            let e = self.pos;
            self.pos += 1;
            let _ = self.eat(b'+') || self.eat(b'-');
            if !digits(self) {
                return Err(self.error_at(
                    e,
                    format!(
                        "expected the exponent's digits after '{}', found {}",
                        clip(self.text.get(start..self.pos).unwrap_or("")),
                        self.found()
                    ),
                ));
            }
        }
        let literal = self.text.get(start..self.pos).unwrap_or("");
        match literal.parse::<f64>() {
            Ok(x) if x.is_finite() => Ok(x),
            _ => Err(self.error_at(
                start,
                format!("number '{}' is too large for a 64-bit float", clip(literal)),
            )),
        }
    }
}

/// At most 32 characters of `s`, for messages.
fn clip(s: &str) -> String {
    match s.char_indices().nth(32) {
        Some((end, _)) => format!("{}...", s.get(..end).unwrap_or("")),
        None => s.to_string(),
    }
}

/// The type for a keyword, ignoring case.
fn keyword(word: &str) -> Option<GeometryType> {
    (1..=7)
        .filter_map(GeometryType::from_wkb_code)
        .find(|t| t.wkt_keyword().eq_ignore_ascii_case(word))
}

fn dims_name(d: Dimensions) -> &'static str {
    match d {
        Dimensions::Xy => "XY",
        Dimensions::Xyz => "Z",
        Dimensions::Xym => "M",
        Dimensions::Xyzm => "ZM",
    }
}

fn ordinates(d: Dimensions) -> &'static str {
    match d {
        Dimensions::Xy => "x y",
        Dimensions::Xyz => "x y z",
        Dimensions::Xym => "x y m",
        Dimensions::Xyzm => "x y z m",
    }
}

fn settled_text(how: Settled) -> String {
    match how {
        Settled::Tag => "set by the dimension tag".to_string(),
        Settled::Vertex(n) => format!("set by vertex {n}"),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::testing::{random_geometry, XorShift};

    fn ok(text: &str) -> Geometry {
        match parse(text) {
            Ok(g) => g,
            Err(e) => panic!("{text:?} should parse: {e}"),
        }
    }

    /// Parses `text` and checks that writing gives `canonical`, and that
    /// `canonical` itself reads and writes back byte-identical.
    fn canonical(text: &str, canonical: &str) {
        assert_eq!(write(&ok(text)), canonical, "from {text:?}");
        assert_eq!(write(&ok(canonical)), canonical);
        assert_eq!(ok(canonical), ok(text));
    }

    fn xy(shape: Shape) -> Geometry {
        Geometry::new(Dimensions::Xy, shape)
    }

    #[test]
    fn standard_examples_round_trip() {
        // OGC 06-103r4, clause 7.2.1, Table 7 "Example Well-known Text
        // Representation of Spatial Objects", quoted from memory with the
        // spacing and mixed case of the table; the second column is the
        // canonical form `write` gives, which reads back byte-identical.
        // The table's Polyhedralsurface, Tin and Triangle rows are types
        // outside the seven (refused in `errors_say_where_and_what`).
        let table = [
            ("Point (10 10)", "POINT (10 10)"),
            (
                "LineString ( 10 10, 20 20, 30 40)",
                "LINESTRING (10 10, 20 20, 30 40)",
            ),
            (
                "Polygon ((10 10, 10 20, 20 20, 20 15, 10 10))",
                "POLYGON ((10 10, 10 20, 20 20, 20 15, 10 10))",
            ),
            (
                "MultiPoint ((10 10), (20 20))",
                "MULTIPOINT ((10 10), (20 20))",
            ),
            (
                "MultiLineString ( (10 10, 20 20), (15 15, 30 15) )",
                "MULTILINESTRING ((10 10, 20 20), (15 15, 30 15))",
            ),
            (
                "MultiPolygon ( ((10 10, 10 20, 20 20, 20 15, 10 10)), \
                 ((60 60, 70 60, 80 60, 60 60 )) )",
                "MULTIPOLYGON (((10 10, 10 20, 20 20, 20 15, 10 10)), \
                 ((60 60, 70 60, 80 60, 60 60)))",
            ),
            (
                "GeometryCollection ( POINT (10 10), POINT (30 30), LINESTRING (15 15, 20 20))",
                "GEOMETRYCOLLECTION (POINT (10 10), POINT (30 30), LINESTRING (15 15, 20 20))",
            ),
            ("Point Z (10 10 5)", "POINT Z (10 10 5)"),
            ("Point ZM (10 10 5 40)", "POINT ZM (10 10 5 40)"),
            ("Point M (10 10 40)", "POINT M (10 10 40)"),
        ];
        for (text, canon) in table {
            canonical(text, canon);
        }
        // The model behind two of them.
        assert_eq!(ok("Point M (10 10 40)").dims, Dimensions::Xym);
        assert_eq!(
            ok("MultiPoint ((10 10), (20 20))"),
            xy(Shape::MultiPoint(vec![vec![10.0, 10.0], vec![20.0, 20.0]]))
        );
    }

    #[test]
    fn empty_at_every_level() {
        // 06-103r4 clause 7.2.2 BNF: <empty set> may replace any <... text>.
        let tops = [
            "POINT",
            "LINESTRING",
            "POLYGON",
            "MULTIPOINT",
            "MULTILINESTRING",
            "MULTIPOLYGON",
            "GEOMETRYCOLLECTION",
        ];
        for kw in tops {
            for tag in ["", " Z", " M", " ZM"] {
                let text = format!("{kw}{tag} EMPTY");
                let g = ok(&text);
                assert!(g.is_empty(), "{text}");
                assert_eq!(g.dims.width(), 2 + tag.trim().len(), "{text}");
                assert_eq!(write(&g), text);
                assert_eq!(ok(&text.to_lowercase()), g);
            }
        }
        assert_eq!(ok("POINT EMPTY"), xy(Shape::Point(vec![])));
        assert_eq!(ok("POLYGON EMPTY"), xy(Shape::Polygon(vec![])));
        assert_eq!(
            ok("GEOMETRYCOLLECTION EMPTY"),
            xy(Shape::GeometryCollection(vec![]))
        );
        // Empty members and parts.
        for text in [
            "MULTIPOINT (EMPTY, (1 2))",
            "POLYGON (EMPTY)",
            "MULTILINESTRING (EMPTY, (0 0, 1 1))",
            "MULTIPOLYGON (EMPTY, ((0 0, 1 0, 1 1, 0 0), EMPTY))",
            "GEOMETRYCOLLECTION (POINT EMPTY, LINESTRING EMPTY)",
            "GEOMETRYCOLLECTION (GEOMETRYCOLLECTION EMPTY)",
        ] {
            canonical(text, text);
        }
        assert_eq!(
            ok("MULTIPOINT (EMPTY, (1 2))"),
            xy(Shape::MultiPoint(vec![vec![], vec![1.0, 2.0]]))
        );
        assert_eq!(ok("POLYGON (EMPTY)"), xy(Shape::Polygon(vec![vec![]])));
    }

    #[test]
    fn dimension_tags_and_untagged_counts() {
        let g = ok("POINT Z (1 2 3)");
        assert_eq!(
            g,
            Geometry::new(Dimensions::Xyz, Shape::Point(vec![1.0, 2.0, 3.0]))
        );
        assert_eq!(ok("POINT M (1 2 3)").dims, Dimensions::Xym);
        assert_eq!(ok("point zm(1 2 3 4)").dims, Dimensions::Xyzm);
        // Without a tag, 3 numbers are x y z and 4 are x y z m.
        canonical("POINT (1 2 3)", "POINT Z (1 2 3)");
        canonical("POINT (1 2 3 4)", "POINT ZM (1 2 3 4)");
        canonical("LINESTRING M (0 0 5, 1 1 6)", "LINESTRING M (0 0 5, 1 1 6)");
        canonical(
            "MULTIPOLYGON ZM (((0 0 1 2, 1 0 1 2, 1 1 1 2, 0 0 1 2)))",
            "MULTIPOLYGON ZM (((0 0 1 2, 1 0 1 2, 1 1 1 2, 0 0 1 2)))",
        );
    }

    #[test]
    fn both_multipoint_forms() {
        let expected = xy(Shape::MultiPoint(vec![vec![1.0, 2.0], vec![3.0, 4.0]]));
        assert_eq!(ok("MULTIPOINT ((1 2), (3 4))"), expected);
        // The bare form, common in practice; `write` gives the 06-103r4 one.
        canonical("MULTIPOINT (1 2, 3 4)", "MULTIPOINT ((1 2), (3 4))");
        canonical("MULTIPOINT Z (1 2 3)", "MULTIPOINT Z ((1 2 3))");
        // The forms may be mixed, with EMPTY members.
        canonical(
            "MULTIPOINT((1 2),3 4,EMPTY)",
            "MULTIPOINT ((1 2), (3 4), EMPTY)",
        );
    }

    #[test]
    fn collections_nest_and_share_dimensions() {
        canonical(
            "GEOMETRYCOLLECTION (POINT (1 2), GEOMETRYCOLLECTION (LINESTRING (0 0, 1 1), \
             GEOMETRYCOLLECTION EMPTY), MULTIPOINT EMPTY)",
            "GEOMETRYCOLLECTION (POINT (1 2), GEOMETRYCOLLECTION (LINESTRING (0 0, 1 1), \
             GEOMETRYCOLLECTION EMPTY), MULTIPOINT EMPTY)",
        );
        // Members may omit the collection's tag; `write` repeats it, as the
        // 06-103r4 BNF does.
        canonical(
            "GEOMETRYCOLLECTION Z (POINT (1 2 3), LINESTRING Z (0 0 0, 1 1 1))",
            "GEOMETRYCOLLECTION Z (POINT Z (1 2 3), LINESTRING Z (0 0 0, 1 1 1))",
        );
        // An untagged collection takes its members' dimensions, also for
        // members read before them.
        canonical(
            "GEOMETRYCOLLECTION (POINT EMPTY, POINT M (1 2 3))",
            "GEOMETRYCOLLECTION M (POINT M EMPTY, POINT M (1 2 3))",
        );
        let g = ok("GEOMETRYCOLLECTION (GEOMETRYCOLLECTION (POINT (1 2 3)))");
        let inner = Geometry::new(Dimensions::Xyz, Shape::Point(vec![1.0, 2.0, 3.0]));
        let middle = Geometry::new(Dimensions::Xyz, Shape::GeometryCollection(vec![inner]));
        assert_eq!(
            g,
            Geometry::new(Dimensions::Xyz, Shape::GeometryCollection(vec![middle]))
        );
        // 64 levels below the top are allowed (as for WKB).
        let deep = format!(
            "{}POINT (1 2){}",
            "GEOMETRYCOLLECTION (".repeat(64),
            ")".repeat(64)
        );
        assert_eq!(write(&ok(&deep)), deep);
    }

    #[test]
    fn whitespace_case_and_number_forms() {
        assert_eq!(
            ok("\n\tpoint(  -1.5e+2\t.5 )  \r\n"),
            Geometry::point(-150.0, 0.5)
        );
        // 06-103r4 clause 7.2.1 numeric literals: sign, point, exponent.
        assert_eq!(ok("POINT (+3 1.)"), Geometry::point(3.0, 1.0));
        assert_eq!(ok("POINT (1E-3 -2e2)"), Geometry::point(0.001, -200.0));
        assert_eq!(ok("PoInT(0.1 -0)"), Geometry::point(0.1, 0.0));
        assert_eq!(ok("LINESTRING(0 0,1 1)"), ok("LINESTRING (0 0, 1 1)"));
        // Shortest round-trip output, never an exponent.
        assert_eq!(write(&Geometry::point(1.0, 0.1)), "POINT (1 0.1)");
        assert_eq!(write(&Geometry::point(-0.0, 1e-7)), "POINT (-0 0.0000001)");
        assert_eq!(
            write(&Geometry::point(1e21, -179.99999999999997)),
            "POINT (1000000000000000000000 -179.99999999999997)"
        );
        for x in [f64::MAX, f64::MIN_POSITIVE, 5e-324, 0.1 + 0.2, -1.0 / 3.0] {
            let g = Geometry::point(x, x);
            assert_eq!(ok(&write(&g)), g);
        }
    }

    #[test]
    fn errors_say_where_and_what() {
        let deep65 = format!(
            "{}POINT (1 2){}",
            "GEOMETRYCOLLECTION (".repeat(65),
            ")".repeat(65)
        );
        // Messages quote at most 32 characters of what they found.
        let long_word = "A".repeat(100_000);
        let long_number = format!("POINT ({} 1)", "9".repeat(400));
        // (input, 0-based character position, part of the message)
        let cases: &[(&str, usize, &str)] = &[
            ("", 0, "expected a geometry type (POINT, LINESTRING"),
            ("   ", 3, "found end of input"),
            ("PIONT (1 2)", 0, "unknown geometry type 'PIONT'"),
            ("POINTZ (1 2 3)", 0, "write the dimension tag after a space: 'POINT Z'"),
            ("MULTIPOINTZM EMPTY", 0, "'MULTIPOINT ZM'"),
            // 06-103r4 Table 7 (from memory) has TIN, outside the seven types.
            ("Tin Z (((0 0 0, 0 0 1, 0 1 0, 0 0 0)))", 0, "unknown geometry type 'Tin'"),
            ("POINT 1 2", 6, "expected '(', EMPTY or a dimension tag (Z, M, ZM) after POINT, found '1'"),
            ("POINT Z 1 2 3", 8, "expected '(' or EMPTY after POINT Z, found '1'"),
            ("POINT (1 2", 10, "expected ')' after a point's coordinates, found end of input"),
            ("POINT (1 2, 3 4)", 10, "expected ')' after a point's coordinates, found ','"),
            ("LINESTRING (1 2, 3 4", 20, "expected ',' or ')' after a coordinate, found end of input"),
            ("LINESTRING (1 2 x)", 16, "expected ',' or ')' after a coordinate, found 'x'"),
            ("LINESTRING (1 2, )", 17, "expected a number, found ')'"),
            ("LINESTRING (1 2, 3 y)", 19, "vertex 2 has 1 number, expected 2 (x y) as set by vertex 1; found 'y'"),
            ("POINT ((1 2))", 7, "expected a number, found '('"),
            ("POINT (1)", 8, "vertex 1 has 1 number, expected 2 (x y), 3 (x y z) or 4 (x y z m); found ')'"),
            ("POINT (1 2 3 4 5)", 15, "vertex 1 has 5 numbers, expected 2 (x y), 3 (x y z) or 4 (x y z m)"),
            ("POINT Z (1 2)", 12, "vertex 1 has 2 numbers, expected 3 (x y z) as set by the dimension tag; found ')'"),
            ("POINT M (1 2 3 4)", 15, "vertex 1 has 4 numbers, expected 3 (x y m)"),
            ("LINESTRING (1 2, 3 4 5)", 21, "vertex 2 has 3 numbers, expected 2 (x y) as set by vertex 1"),
            ("POLYGON ((0 0 0, 1 0 0, 1 1, 0 0 0))", 27, "vertex 3 has 2 numbers, expected 3 (x y z)"),
            ("POLYGON (0 0, 1 0, 1 1, 0 0)", 9, "expected '(' or EMPTY to start a ring, found '0'"),
            ("MULTIPOLYGON ((0 0, 1 0, 1 1, 0 0))", 15, "expected '(' or EMPTY to start a ring, found '0'"),
            ("MULTILINESTRING (0 0, 1 1)", 17, "expected '(' or EMPTY to start a line string, found '0'"),
            ("POINT (1 2) x", 12, "expected the end of the text after a complete geometry, found 'x'"),
            ("POINT EMPTY EMPTY", 12, "found 'EMPTY'"),
            ("POINT (nan 1)", 7, "found 'nan': NaN and infinity are not valid coordinates"),
            ("POINT (1 -Infinity)", 9, "found '-Infinity': NaN and infinity"),
            ("POINT (1 2 inf)", 11, "found 'inf'"),
            ("POINT (1e999 1)", 7, "number '1e999' is too large for a 64-bit float"),
            ("POINT (1-2)", 8, "expected a space between two numbers, found '-'"),
            ("POINT (1.2.3 4)", 10, "expected a space between two numbers, found '.'"),
            ("POINT (1e 2)", 8, "expected the exponent's digits after '1e', found ' '"),
            ("POINT (. 2)", 7, "expected a number, found '.'"),
            ("GEOMETRYCOLLECTION Z (POINT M (1 2 3))", 28, "mixed dimensions: tag M here, but the geometry is Z as set by the dimension tag; every member"),
            ("GEOMETRYCOLLECTION (POINT (1 2), POINT Z (1 2 3))", 39, "mixed dimensions: tag Z here, but the geometry is XY as set by vertex 1"),
            ("GEOMETRYCOLLECTION (POINT (1 2), POINT (1 2 3))", 44, "vertex 2 has 3 numbers, expected 2 (x y) as set by vertex 1"),
            ("GEOMETRYCOLLECTION (POINT (1 2) POINT (3 4))", 32, "expected ',' or ')' after a member geometry, found 'POINT'"),
            ("MULTIPOINT ((1 2), (3 4)", 24, "expected ',' or ')' after a point, found end of input"),
            ("POINT (1 2) é", 12, "found 'é'"),
            ("é", 0, "found 'é'"),
            (&long_word, 0, "unknown geometry type 'AAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAA...'"),
            (&long_number, 7, "is too large for a 64-bit float"),
            (&deep65, 65 * 20, "geometry collections nested deeper than 64 levels"),
        ];
        for &(text, position, fragment) in cases {
            match parse(text) {
                Err(GeomError::Wkt {
                    position: p,
                    message,
                }) => {
                    assert_eq!(p, position, "position for {text:?}: {message}");
                    assert!(
                        message.contains(fragment),
                        "message for {text:?}: {message:?} lacks {fragment:?}"
                    );
                }
                other => panic!("{text:?} should fail, gave {other:?}"),
            }
        }
        // The parser steps over ASCII only, so the character position of
        // an error is also its byte offset.
        // No stack overflow, however deep.
        let huge = "GEOMETRYCOLLECTION (".repeat(100_000);
        assert!(matches!(
            parse(&huge),
            Err(GeomError::Wkt { position: 1300, .. })
        ));
    }

    #[test]
    fn long_line_strings_parse() {
        // Linear time: 200,000 vertices (no time is asserted).
        let n = 200_000;
        let mut text = String::from("LINESTRING (");
        for i in 0..n {
            if i > 0 {
                text.push_str(", ");
            }
            text.push_str(&format!(
                "{} {}",
                i as f64 * 1e-3 - 100.0,
                (i % 90) as f64 * 0.5
            ));
        }
        text.push(')');
        let g = ok(&text);
        assert_eq!(g.vertex_count(), n);
        assert_eq!(write(&g), text);
    }

    #[test]
    fn write_then_parse_is_identity_for_random_geometries() {
        let mut rng = XorShift(0x9E37_79B9_7F4A_7C15);
        let mut coord = |rng: &mut XorShift| -> f64 {
            match rng.below(5) {
                0 => rng.below(401) as f64 - 200.0,
                1 => (rng.below(2_000_000_001) as f64 - 1e9) / 1e7,
                2 => -0.0,
                // Any finite double: subnormals, huge values, long digits.
                _ => loop {
                    let x = f64::from_bits(rng.next_u64());
                    if x.is_finite() {
                        break x;
                    }
                },
            }
        };
        let all = [
            Dimensions::Xy,
            Dimensions::Xyz,
            Dimensions::Xym,
            Dimensions::Xyzm,
        ];
        for case in 0..2000 {
            let dims = all[case % 4];
            let g = random_geometry(&mut rng, dims, 3, &mut coord);
            let text = write(&g);
            assert_eq!(parse(&text).as_ref(), Ok(&g), "case {case}: {text}");
            assert_eq!(try_write(&g).as_ref(), Ok(&text));
        }
    }

    #[test]
    fn the_longest_numbers_fit_the_reservation() {
        // Rust's `{}` for f64 never uses an exponent (std::fmt docs), so the
        // extremes are the longest: -f64::MAX (309 digits) and the smallest
        // subnormal (323 zeros after the point). Brute force over them.
        for x in [f64::MAX, -f64::MAX, 5e-324, -5e-324, f64::MIN_POSITIVE] {
            assert!(format!("{x}").len() < MAX_NUMBER, "{x}");
        }
        let g = Geometry::new(
            Dimensions::Xyzm,
            Shape::LineString(vec![-5e-324, -f64::MAX, -5e-324, -f64::MAX]),
        );
        let text = try_write(&g).unwrap();
        assert_eq!(parse(&text), Ok(g));
    }
}
