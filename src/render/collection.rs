//! GeoJSON FeatureCollections (RFC 7946, section 3.3), built one Feature
//! (section 3.2) at a time.
//!
//! The collection is written as it grows, so memory is the output text and
//! nothing more. Members come in a fixed order: the collection is
//! `{"type":"FeatureCollection","features":[...]}`, each Feature
//! `{"type":"Feature","geometry":...,"properties":...}`. A geometry is
//! written by [`crate::blob::geojson::write`] with
//! [`crate::blob::geojson::DEFAULT_DECIMALS`] decimal places, exactly as
//! stored: longitudes outside [-180, 180] and rings across the antimeridian
//! are not cut (section 3.1.9 says they SHOULD be), and ring orientation is
//! not changed (section 3.1.6 says parsers SHOULD NOT reject either
//! winding). A missing geometry is `"geometry": null` (an unlocated
//! feature, section 3.2) and missing properties are `"properties": null`.
//! No `"bbox"` and no `"id"` are written.

use serde_json::Value;

use crate::blob::{geojson, memory};
use crate::error::GeomError;
use crate::geometry::Geometry;

/// The text of a collection with no features.
pub const EMPTY: &str = r#"{"type":"FeatureCollection","features":[]}"#;

/// A FeatureCollection being written.
#[derive(Debug)]
pub struct FeatureCollection {
    out: String,
    features: usize,
}

impl Default for FeatureCollection {
    fn default() -> Self {
        FeatureCollection::new()
    }
}

impl FeatureCollection {
    /// An empty collection.
    pub fn new() -> Self {
        FeatureCollection {
            out: String::from(r#"{"type":"FeatureCollection","features":["#),
            features: 0,
        }
    }

    /// Appends one Feature. `properties` must be a JSON object
    /// ([`GeomError::NotJsonObject`] otherwise, and nothing is appended);
    /// its members keep their order. `None` gives null.
    pub fn push(
        &mut self,
        geometry: Option<&Geometry>,
        properties: Option<Value>,
    ) -> Result<(), GeomError> {
        if let Some(p) = &properties {
            if !p.is_object() {
                return Err(GeomError::NotJsonObject {
                    found: json_kind(p).to_string(),
                });
            }
        }
        // Both texts first, then room for them (fallibly: a collection too
        // large for memory is GeomError::TooLarge, not an abort), then
        // nothing can fail once appending starts.
        let geometry = match geometry {
            Some(g) => geojson::try_write(g, geojson::DEFAULT_DECIMALS)?,
            None => "null".to_string(),
        };
        // Serialising a serde_json::Value cannot fail: its keys are strings
        // and its numbers finite.
        let properties = properties.map_or_else(|| "null".to_string(), |p| p.to_string());
        let room = geometry.len() + properties.len() + 64;
        memory::reserve_text(&mut self.out, room, "the FeatureCollection")?;
        if self.features > 0 {
            self.out.push(',');
        }
        self.out.push_str(r#"{"type":"Feature","geometry":"#);
        self.out.push_str(&geometry);
        self.out.push_str(r#","properties":"#);
        self.out.push_str(&properties);
        self.out.push('}');
        self.features += 1;
        Ok(())
    }

    /// How many features were pushed.
    pub fn len(&self) -> usize {
        self.features
    }

    /// True when no feature was pushed.
    pub fn is_empty(&self) -> bool {
        self.features == 0
    }

    /// The collection's text.
    pub fn finish(mut self) -> String {
        self.out.push_str("]}");
        self.out
    }
}

/// Reads feature properties from JSON text, such as SQLite's
/// `json_object(...)` returns: the text must be a JSON object.
pub fn properties_from_text(text: &str) -> Result<Value, GeomError> {
    match serde_json::from_str::<Value>(text) {
        Ok(v) if v.is_object() => Ok(v),
        Ok(v) => Err(GeomError::NotJsonObject {
            found: json_kind(&v).to_string(),
        }),
        Err(e) => Err(GeomError::NotJsonObject {
            found: format!("text that is not JSON ({e})"),
        }),
    }
}

/// What a JSON value is, for error messages.
fn json_kind(v: &Value) -> &'static str {
    match v {
        Value::Null => "JSON null",
        Value::Bool(_) => "a JSON boolean",
        Value::Number(_) => "a JSON number",
        Value::String(_) => "a JSON string",
        Value::Array(_) => "a JSON array",
        Value::Object(_) => "a JSON object",
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::blob::wkt;

    #[test]
    fn no_features_is_the_empty_collection() {
        assert_eq!(FeatureCollection::new().finish(), EMPTY);
        let v: Value = serde_json::from_str(EMPTY).unwrap();
        assert_eq!(v["type"], "FeatureCollection");
        assert_eq!(v["features"].as_array().unwrap().len(), 0);
    }

    #[test]
    fn features_keep_their_order_geometry_and_properties() {
        let mut fc = FeatureCollection::new();
        let g = wkt::parse("POLYGON ((-131 38, -130.9 38, -130.9 38.1, -131 38))").unwrap();
        fc.push(
            Some(&g),
            Some(serde_json::json!({"name": "Tamsin", "a": 1})),
        )
        .unwrap();
        fc.push(None, None).unwrap();
        assert_eq!(fc.len(), 2);
        let text = fc.finish();
        assert_eq!(
            text,
            concat!(
                r#"{"type":"FeatureCollection","features":["#,
                r#"{"type":"Feature","geometry":{"type":"Polygon","coordinates":"#,
                r#"[[[-131,38],[-130.9,38],[-130.9,38.1],[-131,38]]]},"#,
                r#""properties":{"name":"Tamsin","a":1}},"#,
                r#"{"type":"Feature","geometry":null,"properties":null}]}"#
            )
        );
        // RFC 7946 section 3.3: "features" is an array of Feature objects.
        let v: Value = serde_json::from_str(&text).unwrap();
        assert_eq!(v["features"][1]["geometry"], Value::Null);
    }

    #[test]
    fn properties_must_be_an_object() {
        let mut fc = FeatureCollection::new();
        for bad in [
            serde_json::json!([1, 2]),
            Value::Null,
            serde_json::json!("x"),
        ] {
            let e = fc.push(None, Some(bad)).unwrap_err();
            assert!(matches!(e, GeomError::NotJsonObject { .. }), "{e}");
        }
        assert!(fc.is_empty());
        assert_eq!(
            properties_from_text("[1,2]").unwrap_err().to_string(),
            "must be a JSON object such as json_object(...) returns (RFC 7946, section 3.2), got a JSON array"
        );
        assert!(properties_from_text("{oops")
            .unwrap_err()
            .to_string()
            .contains("got text that is not JSON (key must be a string at line 1 column 2)"));
        assert_eq!(
            properties_from_text(r#"{"b":2,"a":[1]}"#)
                .unwrap()
                .to_string(),
            r#"{"b":2,"a":[1]}"#
        );
    }
}
