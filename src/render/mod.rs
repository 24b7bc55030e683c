//! Rendering results for people to look at: a GeoJSON FeatureCollection
//! for web maps ([`collection`]) and a self-contained SVG choropleth for
//! reports ([`svg`]). Pure Rust, no SQLite here: src/sql/render.rs reads
//! the rows and hands them over.

pub mod collection;
pub mod svg;
