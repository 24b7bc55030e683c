//! A quick-look choropleth: polygons filled by the class of a value, as one
//! self-contained SVG 1.1 document for a report or a browser.
//!
//! What the map shows and how:
//!
//! - One `<path class="feature qN">` per polygon or multipolygon (`qN` its
//!   class, 1 the lowest; `nodata` for a missing value), all rings of the
//!   geometry in one path with `fill-rule="evenodd"`, so holes stay open,
//!   and a `<title>` tooltip with the value and its class. Points and lines
//!   are refused ([`GeomError::NotPolygonal`]); empty geometries draw
//!   nothing and their values do not count in the classes.
//! - Classes: 5 quantile classes ([`quantile_breaks`]): every value `v` goes
//!   in the class whose range holds it, ranges upper-inclusive. Tied values
//!   always share a class, so ties (or fewer than 5 distinct values) give
//!   fewer classes; the legend says how many. A missing value (`None`, or
//!   a NaN or infinity) is "no data", filled light grey [`NO_DATA`] and
//!   listed last in the legend with its count.
//! - Colours: viridis, the sequential colour map made for matplotlib by
//!   Stéfan van der Walt and Nathaniel Smith (2015), designed to be
//!   perceptually uniform and readable with the common forms of colour
//!   blindness and in greyscale. [`VIRIDIS_5`] is it sampled at 0, 0.25,
//!   0.5, 0.75 and 1 (entries 0, 64, 128, 192 and 255 of its published
//!   256-entry table, rounded to 8 bits). The map uses it reversed
//!   ([`PALETTE`]): **darker means higher**, lightest yellow the lowest
//!   class, darkest purple the highest. With fewer classes the colours are
//!   spread over the whole ramp ([`colours`]). The source is named in an
//!   XML comment in every document.
//! - Outlines: white, 0.6 px wide, thinner for more than 1000 shapes
//!   ([`stroke_width`]).
//! - Legend (right of the map): "Quantile classes", how many, then one
//!   swatch (`<rect class="swatch qN">`) per class, lowest first, labelled
//!   with the smallest and largest value in the class and how many shapes
//!   it holds. Values are rounded to 3 significant figures, or more where
//!   3 would make neighbouring labels equal ([`legend_labels`]).
//! - Projection: equirectangular, x = longitude × cos(φ0), y = latitude,
//!   north up, with φ0 the mean of the map's southern and northern edges,
//!   so shapes near φ0 keep their proportions. The map fits 640 pixels on
//!   its longer side.
//! - Antimeridian: longitudes are unwrapped, the first vertex of every
//!   ring to within 180° of the first geometry's first vertex and every
//!   other vertex to within 180° of the vertex before it (edges are the
//!   short way round, as everywhere in ambit), so a region across ±180°
//!   draws in one piece.
//! - Scale bar (below the map): one bar in kilometres and one in miles
//!   (1 mi = 1609.344 m), each of a round length ([`round_length`]: 1, 2
//!   or 5 times a power of ten) of at most 40% of the map's width, from
//!   the map's horizontal scale at φ0 measured on WGS84 with Karney's
//!   geodesic inverse ([`crate::geodesy::inverse::distance`]). It holds
//!   along φ0; elsewhere an equirectangular map's east-west scale changes
//!   by cos(φ)/cos(φ0).
//! - An optional title above the map, escaped for XML ([`escape`]), also
//!   the document's `<title>`.
//!
//! No rows to draw give a small document saying so.

use std::fmt::Write as _;

use crate::error::GeomError;
use crate::geodesy::inverse;
use crate::geometry::Geometry;
use crate::units::{METRES_PER_KILOMETRE, METRES_PER_MILE};

/// How many classes a map has at most.
pub const CLASSES: usize = 5;

/// viridis sampled at 0, 0.25, 0.5, 0.75 and 1, in the colour map's own
/// order (dark purple to yellow). Written from memory and checked against
/// entries 0, 64, 128, 192 and 255 of the published viridis table (see the
/// unit tests).
pub const VIRIDIS_5: [&str; CLASSES] = ["#440154", "#3b528b", "#21918c", "#5ec962", "#fde725"];

/// The fill of each class, lowest class first: [`VIRIDIS_5`] reversed, so
/// darker means a higher value.
pub const PALETTE: [&str; CLASSES] = [
    VIRIDIS_5[4],
    VIRIDIS_5[3],
    VIRIDIS_5[2],
    VIRIDIS_5[1],
    VIRIDIS_5[0],
];

/// The fill of a shape without a value.
pub const NO_DATA: &str = "#d9d9d9";

/// The longer side of the map, in pixels.
const MAP_SIZE: f64 = 640.0;
const MARGIN: f64 = 16.0;
const GAP: f64 = 28.0;
const TITLE_HEIGHT: f64 = 38.0;
const ROW: f64 = 22.0;
const LEGEND_FONT: f64 = 12.0;
/// The narrowest map column: room for the scale bar and the north arrow.
const MIN_MAP_COLUMN: f64 = 300.0;
const SCALE_HEIGHT: f64 = 64.0;
/// The scale bars are at most this share of the map's width.
const SCALE_SHARE: f64 = 0.4;

/// Checks that `g` is a polygon or a multipolygon, the shapes a choropleth
/// fills.
pub fn polygonal(g: &Geometry) -> Result<(), GeomError> {
    g.require_polygonal("a choropleth fills areas")
}

/// The upper bounds of every class but the last for `values` in at most
/// `classes` quantile classes; a value `v` is in class
/// [`class_of`]`(breaks, v)` (0-based), classes upper-inclusive.
///
/// With the `n` values sorted, break `k` (k = 1 .. classes-1) is the value
/// at position ceil(k n / classes) (1-based): the empirical quantile of
/// definition 1 of R. J. Hyndman and Y. Fan, "Sample quantiles in
/// statistical packages", The American Statistician 50(4), 1996. A break
/// equal to the one before or to the largest value is dropped, so ties share
/// a class and no class is empty: all-equal values give one class and no
/// breaks. Non-finite values are ignored; no values give no breaks.
pub fn quantile_breaks(values: &[f64], classes: usize) -> Vec<f64> {
    let mut v: Vec<f64> = values.iter().copied().filter(|x| x.is_finite()).collect();
    v.sort_by(f64::total_cmp);
    let mut breaks: Vec<f64> = Vec::new();
    let Some(&max) = v.last() else {
        return breaks;
    };
    let n = v.len();
    for k in 1..classes {
        let b = v[(k * n).div_ceil(classes) - 1];
        if b < max && breaks.last().is_none_or(|&last| b > last) {
            breaks.push(b);
        }
    }
    breaks
}

/// The class (0-based) of `v` for [`quantile_breaks`]: how many breaks lie
/// below it.
pub fn class_of(breaks: &[f64], v: f64) -> usize {
    breaks.partition_point(|&b| b < v)
}

/// The fills of `classes` classes, lowest first: all of [`PALETTE`] for 5,
/// and for fewer colours spread evenly from its lightest to its darkest
/// (one class gets the middle colour).
pub fn colours(classes: usize) -> Vec<&'static str> {
    match classes {
        0 => Vec::new(),
        1 => vec![PALETTE[CLASSES / 2]],
        n => (0..n.min(CLASSES))
            .map(|i| {
                let at = (i * (CLASSES - 1) + (n - 1) / 2) / (n - 1);
                PALETTE[at]
            })
            .collect(),
    }
}

/// The largest round length (1, 2 or 5 times a power of ten) not above
/// `max`; 0 when `max` is not a positive finite number.
pub fn round_length(max: f64) -> f64 {
    if !(max.is_finite() && max > 0.0) {
        return 0.0;
    }
    let mut p = 10f64.powf(max.log10().floor());
    // log10 may be off by one ulp either side of a power of ten.
    if p > max {
        p /= 10.0;
    }
    if p * 10.0 <= max {
        p *= 10.0;
    }
    [5.0, 2.0, 1.0]
        .into_iter()
        .map(|m| m * p)
        .find(|&l| l <= max)
        .unwrap_or(p)
}

/// `text` made safe for XML 1.0 character data and attribute values: the
/// five predefined entities, and control characters XML forbids dropped.
pub fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&apos;"),
            '\t' | '\n' | '\r' => out.push(c),
            c if (c as u32) < 0x20 || c == '\u{fffe}' || c == '\u{ffff}' => {}
            c => out.push(c),
        }
    }
    out
}

/// `x` with `decimals` decimal places, trailing zeros dropped, and the
/// integer part grouped by thousands with commas.
fn format_number(x: f64, decimals: usize) -> String {
    let text = format!("{x:.decimals$}");
    let (int, frac) = match text.split_once('.') {
        Some((i, f)) => (i, f.trim_end_matches('0')),
        None => (text.as_str(), ""),
    };
    let (sign, digits) = match int.strip_prefix('-') {
        Some(d) => ("-", d),
        None => ("", int),
    };
    let mut out = String::new();
    if !(digits.bytes().all(|b| b == b'0') && frac.is_empty()) {
        out.push_str(sign);
    }
    for (i, d) in digits.chars().enumerate() {
        if i > 0 && (digits.len() - i) % 3 == 0 {
            out.push(',');
        }
        out.push(d);
    }
    if !frac.is_empty() {
        out.push('.');
        out.push_str(frac);
    }
    out
}

/// `x` rounded to `sig` significant figures, and the decimal places needed
/// to write it.
fn round_sig(x: f64, sig: i32) -> (f64, usize) {
    if x == 0.0 || !x.is_finite() {
        return (0.0, 0);
    }
    let e = x.abs().log10().floor() as i32 - (sig - 1);
    if e >= 0 {
        let step = 10f64.powi(e);
        ((x / step).round() * step, 0)
    } else {
        let d = (-e).min(17) as usize;
        (format!("{x:.d$}").parse().unwrap_or(x), d)
    }
}

/// The legend labels of classes whose smallest and largest values are
/// `ranges` (lowest class first): "lo – hi", or one number when both round
/// alike. Numbers have 3 significant figures, or as many more as it takes
/// for every label to tell its class apart: a class's two ends differ when
/// its values do, and a class's lower end stays above the upper end of the
/// class below.
pub fn legend_labels(ranges: &[(f64, f64)]) -> Vec<String> {
    let mut sig = 3;
    let rounded = loop {
        let r: Vec<((f64, usize), (f64, usize))> = ranges
            .iter()
            .map(|&(lo, hi)| (round_sig(lo, sig), round_sig(hi, sig)))
            .collect();
        let distinct = r
            .iter()
            .zip(ranges)
            .enumerate()
            .all(|(i, (&(lo, hi), range))| {
                let inside = range.0 == range.1 || lo.0 < hi.0;
                let above = i == 0 || lo.0 > r[i - 1].1 .0;
                inside && above
            });
        if distinct || sig >= 17 {
            break r;
        }
        sig += 1;
    };
    rounded
        .into_iter()
        .map(|((lo, dl), (hi, dh))| {
            if lo == hi {
                format_number(lo, dl)
            } else {
                format!("{} – {}", format_number(lo, dl), format_number(hi, dh))
            }
        })
        .collect()
}

/// A scale bar: the round length (in the bar's unit) of at most `max_px`
/// pixels at `metres_per_px`, and its length in pixels; `None` when the
/// scale is unknown.
pub fn scale_bar(max_px: f64, metres_per_px: f64, metres_per_unit: f64) -> Option<(f64, f64)> {
    let length = round_length(max_px * metres_per_px / metres_per_unit);
    (length > 0.0 && metres_per_px > 0.0)
        .then(|| (length, length * metres_per_unit / metres_per_px))
}

/// The width in pixels of the white outlines: 0.6 up to 1000 shapes, then
/// thinner as shapes get smaller (0.6 sqrt(1000 / n), at least 0.1), so
/// outlines do not hide the fills of many small shapes.
pub fn stroke_width(shapes: usize) -> f64 {
    (0.6 * (1000.0 / shapes.max(1) as f64).sqrt()).clamp(0.1, 0.6)
}

/// `lon` moved by whole turns to within 180° of `reference`.
fn unwrap_near(lon: f64, reference: f64) -> f64 {
    lon + 360.0 * ((reference - lon) / 360.0).round()
}

/// The rings of a polygon or multipolygon as (lon, lat) vertices, unwrapped
/// (see the module documentation), without the closing vertex.
fn unwrapped_rings(g: &Geometry, reference: f64) -> Vec<Vec<(f64, f64)>> {
    let width = g.dims.width();
    let mut rings = Vec::new();
    g.for_each_part(&mut |part| {
        let mut ring: Vec<(f64, f64)> = Vec::with_capacity(part.len() / width);
        let mut previous = reference;
        for v in part.chunks_exact(width) {
            let lon = unwrap_near(v[0], previous);
            previous = lon;
            ring.push((lon, v[1]));
        }
        if ring.len() > 1 && ring.first() == ring.last() {
            ring.pop();
        }
        if !ring.is_empty() {
            rings.push(ring);
        }
    });
    rings
}

/// Writes a pixel coordinate: 2 decimal places, trailing zeros dropped.
fn push_px(out: &mut String, v: f64) {
    let text = format!("{v:.2}");
    let text = text.trim_end_matches('0').trim_end_matches('.');
    out.push_str(if text == "-0" { "0" } else { text });
}

/// One shape to draw.
struct Drawn {
    rings: Vec<Vec<(f64, f64)>>,
    value: Option<f64>,
}

/// Renders the choropleth of `features` (each a polygon or multipolygon
/// and its value, `None` for no data) with an optional `title`, as the
/// text of an SVG document. See the module documentation for what it
/// shows. Errors: [`GeomError::NotPolygonal`] for the first point, line or
/// collection.
pub fn choropleth(
    features: &[(Geometry, Option<f64>)],
    title: Option<&str>,
) -> Result<String, GeomError> {
    let mut shapes: Vec<Drawn> = Vec::new();
    let mut reference = None;
    for (g, value) in features {
        polygonal(g)?;
        if g.is_empty() {
            continue;
        }
        let r = *reference.get_or_insert_with(|| {
            let mut first = None;
            g.for_each_xy(&mut |x, _| {
                first.get_or_insert(x);
            });
            first.unwrap_or(0.0)
        });
        shapes.push(Drawn {
            rings: unwrapped_rings(g, r),
            value: value.filter(|v| v.is_finite()),
        });
    }
    let title = title.map(escape).filter(|t| !t.trim().is_empty());
    if shapes.is_empty() {
        return Ok(nothing_to_draw(title.as_deref()));
    }
    Ok(Map::new(shapes, title).write())
}

/// The document for a map without shapes.
fn nothing_to_draw(title: Option<&str>) -> String {
    let mut s = String::new();
    let (w, h) = (360.0, 96.0);
    let _ = write!(
        s,
        "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n<svg xmlns=\"http://www.w3.org/2000/svg\" version=\"1.1\" width=\"{w}\" height=\"{h}\" viewBox=\"0 0 {w} {h}\" font-family=\"sans-serif\">\n"
    );
    if let Some(t) = title {
        let _ = writeln!(s, "<title>{t}</title>");
    }
    let _ = writeln!(s, "<rect width=\"{w}\" height=\"{h}\" fill=\"#ffffff\"/>");
    if let Some(t) = title {
        let _ = writeln!(
            s,
            "<text class=\"title\" x=\"{MARGIN}\" y=\"36\" font-size=\"16\" font-weight=\"bold\">{t}</text>"
        );
    }
    let _ = writeln!(
        s,
        "<text class=\"empty\" x=\"{MARGIN}\" y=\"70\" font-size=\"13\">No polygons to draw: no row had a non-empty geometry.</text>\n</svg>"
    );
    s
}

/// A map being laid out.
struct Map {
    shapes: Vec<Drawn>,
    title: Option<String>,
    /// The map's edges, in unwrapped degrees.
    west: f64,
    east: f64,
    south: f64,
    north: f64,
    /// cos(φ0) and pixels per degree (of latitude, or of x).
    cos0: f64,
    k: f64,
    breaks: Vec<f64>,
}

impl Map {
    fn new(shapes: Vec<Drawn>, title: Option<String>) -> Self {
        let (mut west, mut east) = (f64::INFINITY, f64::NEG_INFINITY);
        let (mut south, mut north) = (f64::INFINITY, f64::NEG_INFINITY);
        for &(x, y) in shapes.iter().flat_map(|s| s.rings.iter().flatten()) {
            west = west.min(x);
            east = east.max(x);
            south = south.min(y);
            north = north.max(y);
        }
        let cos0 = ((south + north) / 2.0).to_radians().cos().max(1e-6);
        let span = ((east - west) * cos0).max(north - south);
        let k = if span > 0.0 { MAP_SIZE / span } else { 1.0 };
        let values: Vec<f64> = shapes.iter().filter_map(|s| s.value).collect();
        let breaks = quantile_breaks(&values, CLASSES);
        Map {
            shapes,
            title,
            west,
            east,
            south,
            north,
            cos0,
            k,
            breaks,
        }
    }

    fn lat0(&self) -> f64 {
        (self.south + self.north) / 2.0
    }

    fn write(&self) -> String {
        let values: Vec<f64> = self.shapes.iter().filter_map(|s| s.value).collect();
        let classes = if values.is_empty() {
            0
        } else {
            self.breaks.len() + 1
        };
        let fills = colours(classes);
        // Each class's smallest and largest value and count.
        let mut ranges = vec![(f64::INFINITY, f64::NEG_INFINITY, 0usize); classes];
        for &v in &values {
            let r = &mut ranges[class_of(&self.breaks, v)];
            r.0 = r.0.min(v);
            r.1 = r.1.max(v);
            r.2 += 1;
        }
        let no_data = self.shapes.len() - values.len();
        let labels = legend_labels(&ranges.iter().map(|r| (r.0, r.1)).collect::<Vec<_>>());

        // Layout.
        let map_w = self.width_deg() * self.cos0 * self.k;
        let map_h = (self.north - self.south) * self.k;
        let column = map_w.max(MIN_MAP_COLUMN);
        let title_h = if self.title.is_some() {
            TITLE_HEIGHT
        } else {
            0.0
        };
        let map_x = MARGIN + (column - map_w) / 2.0;
        let map_y = MARGIN + title_h;
        let mut legend_lines: Vec<String> = labels
            .iter()
            .zip(&ranges)
            .map(|(l, r)| format!("{l} ({})", r.2))
            .collect();
        if no_data > 0 {
            legend_lines.push(format!("no data ({no_data})"));
        }
        let mut sorted = values.clone();
        sorted.sort_by(f64::total_cmp);
        sorted.dedup();
        let distinct = sorted.len();
        let subtitle = match classes {
            0 => "no values".to_string(),
            CLASSES => format!("{CLASSES} classes of about equal count (n)"),
            1 => "1 class: all values equal (n)".to_string(),
            n if n == distinct => format!("{n} classes, one per value (n)"),
            n => format!("{n} classes: tied values share one (n)"),
        };
        let longest = legend_lines
            .iter()
            .chain([&subtitle])
            .map(|l| l.chars().count())
            .max()
            .unwrap_or(0) as f64;
        let legend_w = (24.0 + longest * 0.6 * LEGEND_FONT).max(160.0);
        let legend_x = MARGIN + column + GAP;
        let legend_h = 2.0 * ROW + 4.0 + legend_lines.len() as f64 * ROW;
        let body_h = map_h.max(legend_h).ceil();
        let scale_y = map_y + body_h + 20.0;
        let mut width = legend_x + legend_w + MARGIN;
        let height = scale_y + SCALE_HEIGHT + MARGIN;
        let mut title_size = 18.0;
        if let Some(t) = &self.title {
            let chars = t.chars().count().max(1) as f64;
            title_size = ((width - 2.0 * MARGIN) / (0.6 * chars)).clamp(11.0, 18.0);
            width = width.max(2.0 * MARGIN + 0.6 * title_size * chars);
        }
        let (width, height) = (width.ceil(), height.ceil());

        let mut s = String::new();
        let _ = writeln!(s, "<?xml version=\"1.0\" encoding=\"UTF-8\"?>");
        let _ = writeln!(
            s,
            "<svg xmlns=\"http://www.w3.org/2000/svg\" version=\"1.1\" width=\"{width}\" height=\"{height}\" viewBox=\"0 0 {width} {height}\" font-family=\"sans-serif\">"
        );
        let _ = writeln!(
            s,
            "<!-- Made by ambit {} (ambit_choropleth_svg). Colours: viridis, the sequential colour map of matplotlib by Stéfan van der Walt and Nathaniel Smith (2015), sampled at 0, 0.25, 0.5, 0.75 and 1 ({}), drawn in reverse: darker means a higher value; no data {NO_DATA}. Classes: quantiles (Hyndman and Fan 1996, definition 1), ties share a class. Projection: equirectangular, x = longitude × cos({:.4}°), y = latitude, north up. Scale bar: geodesic on WGS84 along latitude {:.4}°. -->",
            env!("CARGO_PKG_VERSION"),
            VIRIDIS_5.join(" "),
            self.lat0(),
            self.lat0(),
        );
        if let Some(t) = &self.title {
            let _ = writeln!(s, "<title>{t}</title>");
        }
        let _ = writeln!(
            s,
            "<rect class=\"background\" width=\"{width}\" height=\"{height}\" fill=\"#ffffff\"/>"
        );
        if let Some(t) = &self.title {
            let _ = writeln!(
                s,
                "<text class=\"title\" x=\"{MARGIN}\" y=\"{}\" font-size=\"{title_size:.1}\" font-weight=\"bold\">{t}</text>",
                MARGIN + 20.0
            );
        }

        // The shapes.
        let _ = writeln!(
            s,
            "<g class=\"features\" stroke=\"#ffffff\" stroke-width=\"{:.2}\" stroke-linejoin=\"round\">",
            stroke_width(self.shapes.len())
        );
        for shape in &self.shapes {
            let (class, fill, tip) = match shape.value {
                Some(v) => {
                    let c = class_of(&self.breaks, v);
                    (
                        format!("q{}", c + 1),
                        fills[c],
                        format!("{v} (class {} of {classes})", c + 1),
                    )
                }
                None => ("nodata".to_string(), NO_DATA, "no data".to_string()),
            };
            let _ = write!(
                s,
                "<path class=\"feature {class}\" fill=\"{fill}\" fill-rule=\"evenodd\" d=\""
            );
            self.path(&mut s, &shape.rings, map_x, map_y);
            let _ = writeln!(s, "\"><title>{tip}</title></path>");
        }
        let _ = writeln!(s, "</g>");

        // The legend.
        let _ = writeln!(
            s,
            "<g class=\"legend\" font-size=\"{LEGEND_FONT}\" fill=\"#222222\">"
        );
        let _ = writeln!(
            s,
            "<text x=\"{legend_x}\" y=\"{}\" font-weight=\"bold\" font-size=\"13\">Quantile classes</text>",
            map_y + 14.0
        );
        let _ = writeln!(
            s,
            "<text x=\"{legend_x}\" y=\"{}\">{}</text>",
            map_y + 14.0 + ROW,
            escape(&subtitle)
        );
        let swatch = |s: &mut String, row: usize, class: &str, fill: &str, label: &str| {
            let y = map_y + 2.0 * ROW + 4.0 + row as f64 * ROW;
            let _ = writeln!(
                s,
                "<rect class=\"swatch {class}\" x=\"{legend_x}\" y=\"{y}\" width=\"16\" height=\"16\" fill=\"{fill}\" stroke=\"#888888\" stroke-width=\"0.5\"/>"
            );
            let _ = writeln!(
                s,
                "<text x=\"{}\" y=\"{}\">{}</text>",
                legend_x + 24.0,
                y + 12.5,
                escape(label)
            );
        };
        for (i, line) in legend_lines.iter().take(classes).enumerate() {
            swatch(&mut s, i, &format!("q{}", i + 1), fills[i], line);
        }
        if no_data > 0 {
            swatch(&mut s, classes, "nodata", NO_DATA, &legend_lines[classes]);
        }
        let _ = writeln!(s, "</g>");

        self.scale_and_north(&mut s, map_x, map_w, scale_y, column);
        let _ = writeln!(s, "</svg>");
        s
    }

    fn width_deg(&self) -> f64 {
        self.east - self.west
    }

    /// The path data of one shape's rings.
    fn path(&self, s: &mut String, rings: &[Vec<(f64, f64)>], map_x: f64, map_y: f64) {
        let scale_x = self.cos0 * self.k;
        for ring in rings {
            let mut last: Option<(i64, i64)> = None;
            for (i, &(lon, lat)) in ring.iter().enumerate() {
                let x = map_x + (lon - self.west) * scale_x;
                let y = map_y + (self.north - lat) * self.k;
                // Skip vertices that land on the previous one's pixel
                // hundredth: they add bytes and nothing to see.
                let key = ((x * 100.0).round() as i64, (y * 100.0).round() as i64);
                if last == Some(key) {
                    continue;
                }
                last = Some(key);
                s.push(if i == 0 { 'M' } else { 'L' });
                push_px(s, x);
                s.push(' ');
                push_px(s, y);
            }
            s.push('Z');
        }
    }

    /// The scale bars in km and miles, and a north arrow.
    fn scale_and_north(&self, s: &mut String, map_x: f64, map_w: f64, y: f64, column: f64) {
        let lat0 = self.lat0();
        let lon_mid = self.west + self.width_deg() / 2.0;
        let step = 0.01;
        let metres = inverse::distance(lon_mid - step / 2.0, lat0, lon_mid + step / 2.0, lat0);
        let metres_per_px = metres / (step * self.cos0 * self.k);
        let max_px = (map_w * SCALE_SHARE).max(80.0).min(column - 90.0);
        let _ = writeln!(
            s,
            "<g class=\"scale-bar\" font-size=\"11\" fill=\"#222222\">"
        );
        let x0 = MARGIN;
        for (row, unit, per_unit) in [
            (0.0, "km", METRES_PER_KILOMETRE),
            (1.0, "mi", METRES_PER_MILE),
        ] {
            let Some((length, px)) = scale_bar(max_px, metres_per_px, per_unit) else {
                continue;
            };
            let by = y + 8.0 + row * 26.0;
            let _ = writeln!(
                s,
                "<rect x=\"{x0}\" y=\"{by}\" width=\"{:.2}\" height=\"5\" fill=\"#222222\"/>",
                px
            );
            let _ = writeln!(
                s,
                "<text class=\"scale-label\" x=\"{:.2}\" y=\"{:.1}\">{} {unit}</text>",
                x0 + px + 6.0,
                by + 6.0,
                format_number(length, 6)
            );
        }
        let _ = writeln!(s, "</g>");
        // North arrow at the right of the map column, level with the bars.
        let nx = (map_x + map_w).max(MARGIN + column) - 12.0;
        let ny = y + 6.0;
        let _ = writeln!(
            s,
            "<g class=\"north-arrow\" fill=\"#222222\"><path d=\"M{nx} {ny}L{} {}L{nx} {}L{} {}Z\"/><text x=\"{nx}\" y=\"{}\" font-size=\"12\" text-anchor=\"middle\">N</text></g>",
            nx + 7.0,
            ny + 22.0,
            ny + 17.0,
            nx - 7.0,
            ny + 22.0,
            ny + 38.0
        );
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::blob::wkt;

    /// The published viridis table (the CC0 "mpl-colormaps" release by
    /// van der Walt and Smith, also matplotlib's `_viridis_data`), entries
    /// 0, 64, 128, 192 and 255 of 256: where matplotlib's ListedColormap
    /// samples 0, 0.25, 0.5, 0.75 and 1.
    const VIRIDIS_TABLE: [[f64; 3]; 5] = [
        [0.267004, 0.004874, 0.329415],
        [0.229739, 0.322361, 0.545706],
        [0.127568, 0.566949, 0.550556],
        [0.369214, 0.788888, 0.382914],
        [0.993248, 0.906157, 0.143936],
    ];

    fn rgb(hex: &str) -> [u8; 3] {
        let v = u32::from_str_radix(hex.trim_start_matches('#'), 16).unwrap();
        [(v >> 16) as u8, (v >> 8) as u8, v as u8]
    }

    /// Relative luminance of WCAG 2.x (W3C, "Web Content Accessibility
    /// Guidelines 2.1", definition of relative luminance): linearise each
    /// sRGB channel (c/12.92 up to 0.03928, else ((c+0.055)/1.055)^2.4),
    /// then 0.2126 R + 0.7152 G + 0.0722 B.
    fn luminance(hex: &str) -> f64 {
        let lin = |c: u8| {
            let c = c as f64 / 255.0;
            if c <= 0.03928 {
                c / 12.92
            } else {
                ((c + 0.055) / 1.055).powf(2.4)
            }
        };
        let [r, g, b] = rgb(hex);
        0.2126 * lin(r) + 0.7152 * lin(g) + 0.0722 * lin(b)
    }

    #[test]
    fn the_palette_is_viridis_sampled_at_five_points() {
        for (hex, table) in VIRIDIS_5.iter().zip(VIRIDIS_TABLE) {
            let want = table.map(|c| (c * 255.0).round() as u8);
            assert_eq!(rgb(hex), want, "{hex}");
        }
    }

    #[test]
    fn the_palette_darkens_strictly_as_values_rise() {
        let l: Vec<f64> = PALETTE.iter().map(|c| luminance(c)).collect();
        for w in l.windows(2) {
            assert!(w[1] < w[0], "luminance {l:?} must fall class by class");
        }
        // So does every shorter palette.
        for n in 1..=CLASSES {
            let c = colours(n);
            assert_eq!(c.len(), n);
            let l: Vec<f64> = c.iter().map(|c| luminance(c)).collect();
            assert!(l.windows(2).all(|w| w[1] < w[0]), "{n}: {c:?}");
        }
        assert_eq!(colours(2), [PALETTE[0], PALETTE[4]]);
        assert_eq!(colours(3), [PALETTE[0], PALETTE[2], PALETTE[4]]);
        assert_eq!(colours(5), PALETTE);
        // No data is a light grey, lighter than the middle class.
        let [r, g, b] = rgb(NO_DATA);
        assert!(r == g && g == b && luminance(NO_DATA) > luminance(PALETTE[2]));
    }

    #[test]
    fn quantile_breaks_split_sorted_values_into_equal_counts() {
        // 10 values, 5 classes of 2: breaks at sorted positions 2, 4, 6, 8
        // (Hyndman and Fan, definition 1: position ceil(k n / 5)).
        let v = [9.0, 1.0, 7.0, 3.0, 5.0, 2.0, 8.0, 4.0, 10.0, 6.0];
        let b = quantile_breaks(&v, 5);
        assert_eq!(b, [2.0, 4.0, 6.0, 8.0]);
        let mut counts = [0; 5];
        for x in v {
            counts[class_of(&b, x)] += 1;
        }
        assert_eq!(counts, [2; 5]);
        // Upper-inclusive: a break value is in the class it closes.
        assert_eq!(class_of(&b, 2.0), 0);
        assert_eq!(class_of(&b, 2.5), 1);
        assert_eq!(class_of(&b, 10.0), 4);
        // 6 values: positions ceil(1.2) .. ceil(4.8) = 2, 3, 4, 5.
        assert_eq!(
            quantile_breaks(&[60.0, 10.0, 50.0, 20.0, 40.0, 30.0], 5),
            [20.0, 30.0, 40.0, 50.0]
        );
    }

    #[test]
    fn ties_share_a_class_and_all_equal_values_make_one() {
        // Positions 2, 4, 6, 8 hold 1, 1, 1, 2: the repeated 1 is dropped.
        let v = [1.0, 1.0, 1.0, 1.0, 1.0, 1.0, 2.0, 2.0, 3.0, 4.0];
        let b = quantile_breaks(&v, 5);
        assert_eq!(b, [1.0, 2.0]);
        assert!(v
            .iter()
            .filter(|&&x| x == 1.0)
            .all(|&x| class_of(&b, x) == 0));
        assert_eq!(class_of(&b, 3.0), 2);
        assert_eq!(class_of(&b, 4.0), 2);
        // The legend says why there are fewer classes.
        let square = wkt::parse("POLYGON ((-131 38, -130.9 38, -130.9 38.1, -131 38))").unwrap();
        let tied: Vec<_> = v.iter().map(|&x| (square.clone(), Some(x))).collect();
        let svg = choropleth(&tied, None).unwrap();
        assert!(svg.contains(">3 classes: tied values share one (n)</text>"));
        assert!(svg.contains(">1 (6)</text>") && svg.contains(">3 – 4 (2)</text>"));
        // All equal: one class.
        assert!(quantile_breaks(&[7.5; 12], 5).is_empty());
        // Fewer values than classes: each its own class.
        assert_eq!(quantile_breaks(&[3.0, 1.0, 2.0], 5), [1.0, 2.0]);
        // No values (NULLs are left out before; NaN is ignored here).
        assert!(quantile_breaks(&[], 5).is_empty());
        assert_eq!(quantile_breaks(&[f64::NAN, 1.0, 2.0], 5), [1.0]);
    }

    #[test]
    fn nulls_are_no_data_and_do_not_count_in_the_classes() {
        let square = |x: f64| {
            wkt::parse(&format!(
                "POLYGON (({x} 38, {} 38, {} 38.1, {x} 38.1, {x} 38))",
                x + 0.1,
                x + 0.1
            ))
            .unwrap()
        };
        let features: Vec<(Geometry, Option<f64>)> = vec![
            (square(-131.0), Some(1.0)),
            (square(-130.9), None),
            (square(-130.8), Some(2.0)),
        ];
        let svg = choropleth(&features, None).unwrap();
        assert_eq!(svg.matches("class=\"feature ").count(), 3);
        assert_eq!(svg.matches("class=\"feature nodata\"").count(), 1);
        assert!(svg.contains(&format!("fill=\"{NO_DATA}\" fill-rule")));
        assert!(svg.contains("<title>no data</title>"));
        assert!(svg.contains(">no data (1)</text>"));
        // Two values, two classes: the lightest and the darkest colour.
        assert!(svg.contains("2 classes, one per value (n)"));
        assert!(svg.contains(&format!("class=\"feature q1\" fill=\"{}\"", PALETTE[0])));
        assert!(svg.contains(&format!("class=\"feature q2\" fill=\"{}\"", PALETTE[4])));
        assert!(svg.contains("<title>2 (class 2 of 2)</title>"));
        // Only NULLs: everything grey, no classes.
        let all_null: Vec<_> = features.iter().map(|(g, _)| (g.clone(), None)).collect();
        let svg = choropleth(&all_null, None).unwrap();
        assert_eq!(svg.matches("class=\"feature nodata\"").count(), 3);
        assert!(svg.contains(">no values</text>"));
    }

    #[test]
    fn legend_labels_round_to_three_figures_or_more_when_needed() {
        assert_eq!(
            legend_labels(&[
                (33685.0, 45049.0),
                (68455.0, 68455.0),
                (1152738.0, 1152738.0)
            ]),
            ["33,700 – 45,000", "68,500", "1,150,000"]
        );
        // 0.1231 and 0.1234 both round to 0.123: four figures are needed.
        assert_eq!(
            legend_labels(&[(0.1, 0.1231), (0.1234, 0.2)]),
            ["0.1 – 0.1231", "0.1234 – 0.2"]
        );
        assert_eq!(
            legend_labels(&[(-2.5, 0.0), (1e-3, 7.0)]),
            ["-2.5 – 0", "0.001 – 7"]
        );
        assert_eq!(format_number(-0.0001, 2), "0");
        assert_eq!(format_number(1234567.0, 0), "1,234,567");
        assert_eq!(format_number(999.5, 1), "999.5");
    }

    #[test]
    fn scale_bars_have_round_lengths() {
        // 1, 2 or 5 times a power of ten, the largest not above the limit.
        for (max, want) in [
            (7.3, 5.0),
            (23.0, 20.0),
            (1.0, 1.0),
            (10.0, 10.0),
            (999.0, 500.0),
            (1000.0, 1000.0),
            (0.37, 0.2),
            (0.0999, 0.05),
            (1.99, 1.0),
        ] {
            assert_eq!(round_length(max), want, "{max}");
        }
        assert_eq!(round_length(0.0), 0.0);
        assert_eq!(round_length(f64::NAN), 0.0);
        // 200 px at 87.3 m/px is 17.46 km: a 10 km bar of 114.5 px; in
        // miles 10.85: a 10 mi bar (1 mi = 1609.344 m, NIST SP 811 B.8).
        let (km, px) = scale_bar(200.0, 87.3, 1000.0).unwrap();
        assert_eq!(km, 10.0);
        assert!((px - 10000.0 / 87.3).abs() < 1e-9);
        let (mi, _) = scale_bar(200.0, 87.3, METRES_PER_MILE).unwrap();
        assert_eq!(mi, 10.0);
        assert_eq!(scale_bar(200.0, 0.0, 1000.0), None);
    }

    #[test]
    fn the_scale_bar_matches_the_ground_at_the_mean_latitude() {
        // 0.5° of longitude by 0.4° of latitude at 38.5°N: the height is
        // the longer side, 640 px, so 1600 px per degree of latitude and
        // 1600 cos(38.5°) per degree of longitude. A degree of longitude
        // along 38.5° is pi/180 N cos(phi), N = a / sqrt(1 - e2 sin2(phi))
        // the prime vertical radius, a = 6378137 m, f = 1/298.257223563
        // (WGS84, NIMA TR8350.2): 87.23 km. The bars may take 40% of the
        // 626 px width, 17.4 km or 10.8 mi: 10 km and 10 mi.
        let g = wkt::parse(
            "POLYGON ((-131.25 38.3, -130.75 38.3, -130.75 38.7, -131.25 38.7, -131.25 38.3))",
        )
        .unwrap();
        let svg = choropleth(&[(g, Some(1.0))], None).unwrap();
        assert!(svg.contains(">10 km</text>"), "{svg}");
        assert!(svg.contains(">10 mi</text>"), "{svg}");
        let phi = 38.5f64.to_radians();
        let (a, f) = (6378137.0, 1.0 / 298.257223563);
        let e2 = f * (2.0 - f);
        let n = a / (1.0 - e2 * phi.sin().powi(2)).sqrt();
        let metres_per_degree = std::f64::consts::PI / 180.0 * n * phi.cos();
        let px_per_degree = 1600.0 * phi.cos();
        let widths: Vec<f64> = svg
            .split("<g class=\"scale-bar\"")
            .nth(1)
            .unwrap()
            .split("width=\"")
            .skip(1)
            .map(|w| w.split('"').next().unwrap().parse().unwrap())
            .collect();
        for (w, metres) in widths.iter().zip([10_000.0, 10.0 * METRES_PER_MILE]) {
            let expected = metres / metres_per_degree * px_per_degree;
            assert!((w - expected).abs() < 0.01, "{w} px, expected {expected}");
        }
        assert_eq!(widths.len(), 2);
    }

    #[test]
    fn titles_are_escaped_for_xml() {
        assert_eq!(
            escape("Tom & Jerry's <\"map\">"),
            "Tom &amp; Jerry&apos;s &lt;&quot;map&quot;&gt;"
        );
        assert_eq!(escape("a\u{1}b\u{7}c\td"), "abc\td");
        let g = wkt::parse("POLYGON ((-131 38, -130.9 38, -130.9 38.1, -131 38))").unwrap();
        let svg = choropleth(&[(g, Some(1.0))], Some("Rates <2026> & more")).unwrap();
        assert!(svg.contains("<title>Rates &lt;2026&gt; &amp; more</title>"));
        assert!(svg.contains(">Rates &lt;2026&gt; &amp; more</text>"));
        assert!(!svg.contains("<2026>"));
    }

    #[test]
    fn holes_are_drawn_with_evenodd_in_one_path() {
        let g = wkt::parse(
            "POLYGON ((-131 38, -130 38, -130 39, -131 39, -131 38), (-130.6 38.4, -130.4 38.4, -130.4 38.6, -130.6 38.4))",
        )
        .unwrap();
        let svg = choropleth(&[(g, Some(3.0))], None).unwrap();
        let path = svg
            .lines()
            .find(|l| l.starts_with("<path class=\"feature"))
            .unwrap();
        assert!(path.contains("fill-rule=\"evenodd\""), "{path}");
        // Two rings, each opened by M and closed by Z, closing vertex left out.
        let d = path
            .split(" d=\"")
            .nth(1)
            .unwrap()
            .split('"')
            .next()
            .unwrap();
        assert_eq!(d.matches('M').count(), 2, "{d}");
        assert_eq!(d.matches('Z').count(), 2, "{d}");
        assert_eq!(d.matches('L').count(), 3 + 2, "{d}");
        // A 1° square at 38.5° is cos(38.5°) as wide as high; its height
        // fills 640 px, below a 16 px margin: (-131 38) is at (16, 656).
        let east = 16.0 + 640.0 * 38.5f64.to_radians().cos();
        assert!(
            d.starts_with(&format!("M16 656L{east:.2} 656L{east:.2} 16L16 16Z")),
            "{d}"
        );
    }

    #[test]
    fn points_and_lines_are_refused() {
        for text in [
            "POINT (-131 38)",
            "LINESTRING (-131 38, -130 38)",
            "GEOMETRYCOLLECTION (POINT (1 2))",
        ] {
            let e = choropleth(&[(wkt::parse(text).unwrap(), Some(1.0))], None).unwrap_err();
            assert!(e.to_string().starts_with("expects polygons"), "{e}");
        }
    }

    #[test]
    fn shapes_across_the_antimeridian_draw_in_one_piece() {
        // Two squares either side of 180°, stored with longitudes in
        // [-180, 180]: unwrapped around 179.5 they make a 2° wide map, not a
        // 360° one.
        let east = wkt::parse("POLYGON ((179 -17, 180 -17, 180 -16, 179 -16, 179 -17))").unwrap();
        let west =
            wkt::parse("POLYGON ((-180 -17, -179 -17, -179 -16, -180 -16, -180 -17))").unwrap();
        let across =
            wkt::parse("POLYGON ((179.5 -18, -179.5 -18, -179.5 -17.5, 179.5 -17.5, 179.5 -18))")
                .unwrap();
        let svg = choropleth(
            &[(east, Some(1.0)), (west, Some(2.0)), (across, None)],
            None,
        )
        .unwrap();
        // 2° of longitude at cos(17°) is 1.91° against 2° of latitude: the
        // map is nearly square, 612 px wide and 640 px high.
        let xs: Vec<f64> = svg
            .lines()
            .filter(|l| l.starts_with("<path class=\"feature"))
            .flat_map(|l| {
                let d = l
                    .split(" d=\"")
                    .nth(1)
                    .unwrap()
                    .split('"')
                    .next()
                    .unwrap()
                    .to_string();
                d.split(['M', 'L', 'Z'])
                    .filter(|p| !p.is_empty())
                    .map(|p| p.split(' ').next().unwrap().parse::<f64>().unwrap())
                    .collect::<Vec<_>>()
            })
            .collect();
        let (lo, hi) = xs
            .iter()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &x| {
                (a.min(x), b.max(x))
            });
        let expected = 640.0 * 2.0 * 17.0f64.to_radians().cos() / 2.0;
        assert!((hi - lo - expected).abs() < 0.02, "{lo} {hi} {expected}");
    }

    #[test]
    fn no_shapes_give_a_document_saying_so() {
        let svg = choropleth(&[], Some("Empty")).unwrap();
        assert!(svg.contains("No polygons to draw"));
        assert!(svg.contains("<title>Empty</title>"));
        let empty = wkt::parse("POLYGON EMPTY").unwrap();
        assert!(choropleth(&[(empty, Some(1.0))], None)
            .unwrap()
            .contains("No polygons to draw"));
    }
}
