//! The nearest distance far from every feature, and what a layer holds per
//! vertex: the cases of issue 10 on invented shapes.
//!
//! Run: `cargo bench --bench nearest` (add `antipode` to also time one
//! block at the antipode of a 1,000,000-vertex polygon, which can take
//! minutes).
//!
//! Printed, per case, milliseconds per ambit_nearest-equivalent call
//! (`Layer::nearest`, one thread, no cap), with the distance found:
//! - a block (40 vertices, 300 m across) about 700 km from a polygon of
//!   400,000 vertices (a wiggly coastline ring about 600 km across, edges
//!   of about 5 m);
//! - a block 600-900 km from a layer of 3,000 small parks (29 vertices);
//! - the same with a cap of 10 miles (NULL expected);
//! - blocks just outside the 400,000-vertex polygon: the reach test at
//!   half a mile and the nearest distance;
//! - a block 600-900 km from a layer of 100,000 points;
//! - the layer's bytes per vertex and per feature (`Layer::bytes`, as
//!   ambit_layers reports) for the parks, the points and a
//!   1,000,000-vertex polygon, with where they go (coordinates, element
//!   balls, ball trees, per-feature parts, the layer's index), and the
//!   growth of resident memory while the latter was built.

use std::time::Instant;

use ambit::blob::wkt;
use ambit::interrupt::Never;
use ambit::proximity::{Feature, Layer, Prepared};

fn ring(centre: (f64, f64), n: usize, radius_deg: f64, wiggle: f64) -> String {
    let pts: Vec<String> = (0..=n)
        .map(|k| {
            let t = std::f64::consts::TAU * (k % n) as f64 / n as f64;
            let r =
                radius_deg * (1.0 + wiggle * (37.0 * t).sin() + 0.3 * wiggle * (411.0 * t).cos());
            format!(
                "{} {}",
                centre.0 + r * t.cos() / centre.1.to_radians().cos(),
                centre.1 + r * t.sin()
            )
        })
        .collect();
    format!("POLYGON (({}))", pts.join(", "))
}

fn feature(id: i64, text: &str) -> Feature {
    Feature::build(id, 804.672, &wkt::parse(text).unwrap(), &Never).unwrap()
}

fn block(centre: (f64, f64)) -> Prepared {
    // 300 m across: 0.00135 degrees of latitude is about 150 m.
    Prepared::new(&wkt::parse(&ring(centre, 40, 0.00135, 0.0)).unwrap())
}

fn time_nearest(name: &str, layer: &Layer, blocks: &[Prepared], cap: Option<f64>) {
    let start = Instant::now();
    let mut found = Vec::new();
    for b in blocks {
        found.push(layer.nearest(b, cap));
    }
    let ms = start.elapsed().as_secs_f64() * 1000.0 / blocks.len() as f64;
    let shown: Vec<String> = found
        .iter()
        .take(3)
        .map(|d| d.map_or("NULL".to_string(), |d| format!("{:.1} km", d / 1000.0)))
        .collect();
    println!(
        "  {name}: {ms:.3} ms per block ({} blocks; first distances {})",
        blocks.len(),
        shown.join(", ")
    );
}

fn per_vertex(name: &str, layer: &Layer) {
    let (vertices, features) = (layer.vertices() as f64, layer.features().len() as f64);
    println!(
        "  {name}: {} vertices, {} bytes, {:.1} bytes per vertex, {:.0} bytes per feature",
        layer.vertices(),
        layer.bytes(),
        layer.bytes() as f64 / vertices,
        layer.bytes() as f64 / features,
    );
    // Where the bytes go, per vertex: (lon, lat) pairs, element balls, ball
    // trees, each feature's fixed part (its value, the boxes and headers of
    // its arrays, starts of lines and rings), and the layer's index.
    let (mut coords, mut balls, mut trees, mut features_total) = (0, 0, 0, 0);
    for f in layer.features() {
        let g = &f.geometry;
        coords += (g.points.len() + g.chains().map(<[_]>::len).sum::<usize>()) * 16;
        balls += std::mem::size_of_val(&*g.balls);
        trees += g.tree().map_or(0, |t| t.bytes());
        features_total += f.bytes();
    }
    let fixed = features_total - coords - balls - trees;
    let index = layer.bytes() - features_total;
    let per = |b: usize| b as f64 / vertices;
    println!(
        "    per vertex: coordinates {:.1}, element balls {:.1}, ball trees {:.1}, per-feature parts {:.1}, layer index and ids {:.1}",
        per(coords),
        per(balls),
        per(trees),
        per(fixed),
        per(index)
    );
}

/// Resident memory of this process, bytes (Linux /proc/self/statm, pages
/// of 4096 bytes; 0 elsewhere).
fn resident_bytes() -> usize {
    std::fs::read_to_string("/proc/self/statm")
        .ok()
        .and_then(|s| s.split_whitespace().nth(1)?.parse::<usize>().ok())
        .map_or(0, |pages| pages * 4096)
}

fn main() {
    let antipode = std::env::args().any(|a| a == "antipode");
    println!("ambit nearest benchmark (one thread, invented shapes)");

    // A 400,000-vertex coastline ring about 3 degrees in radius.
    let t = Instant::now();
    let big = Layer::new(vec![feature(1, &ring((-100.0, 40.0), 400_000, 3.0, 0.01))]);
    println!(
        "  layer of one 400,000-vertex polygon built in {:.2} s",
        t.elapsed().as_secs_f64()
    );
    per_vertex("400,000-vertex polygon", &big);
    // About 6.3 degrees of latitude (700 km) north of its northern edge.
    let blocks: Vec<Prepared> = (0..20)
        .map(|k| block((-100.0 + 0.05 * k as f64, 49.3)))
        .collect();
    time_nearest(
        "block ~700 km from the 400,000-vertex polygon",
        &big,
        &blocks,
        None,
    );

    // Blocks just outside its northern edge (about 3.03 degrees north of
    // the centre, up to a few km off): the reach test and nearest nearby.
    let close: Vec<Prepared> = (0..200)
        .map(|k| block((-100.0 + 0.001 * k as f64, 43.035 + 0.0001 * (k % 20) as f64)))
        .collect();
    let start = Instant::now();
    let reached = close.iter().filter(|b| big.reached(b)).count();
    println!(
        "  block near the 400,000-vertex polygon, reached at 0.5 mile: {:.3} ms per block ({reached} of {} reached)",
        start.elapsed().as_secs_f64() * 1000.0 / close.len() as f64,
        close.len()
    );
    time_nearest("block near the 400,000-vertex polygon", &big, &close, None);

    // 3,000 small parks over 10 x 5 degrees; blocks 7-10 degrees north.
    let parks: Vec<Feature> = (0..3000)
        .map(|k| {
            let (x, y) = ((k % 60) as f64, (k / 60) as f64);
            feature(
                k as i64,
                &ring((-100.0 + x / 6.0, 30.0 + y / 10.0), 28, 0.004, 0.0),
            )
        })
        .collect();
    let parks = Layer::new(parks);
    per_vertex("3,000 parks of 29 vertices", &parks);
    let far: Vec<Prepared> = (0..100)
        .map(|k| block((-99.0 + 0.07 * k as f64, 40.5 + 0.03 * k as f64)))
        .collect();
    time_nearest("block 600-900 km from small parks", &parks, &far, None);
    time_nearest(
        "same, capped at 10 miles (ambit_nearest(..., ambit_miles(10)))",
        &parks,
        &far,
        Some(16_093.44),
    );

    // 100,000 facility points over 10 x 4 degrees, the blocks 600-900 km
    // north as for the parks.
    let points: Vec<Feature> = (0..100_000)
        .map(|k| {
            let (x, y) = ((k % 400) as f64, (k / 400) as f64);
            feature(
                k as i64,
                &format!("POINT ({} {})", -100.0 + x / 40.0, 30.0 + y / 62.5),
            )
        })
        .collect();
    let points = Layer::new(points);
    per_vertex("100,000 facility points", &points);
    time_nearest("block 600-900 km from 100,000 points", &points, &far, None);

    let t = Instant::now();
    let before = resident_bytes();
    let million = Layer::new(vec![feature(1, &ring((20.0, 10.0), 1_000_000, 2.0, 0.01))]);
    let grown = resident_bytes().saturating_sub(before);
    println!(
        "  layer of one 1,000,000-vertex polygon built in {:.2} s",
        t.elapsed().as_secs_f64()
    );
    per_vertex("1,000,000-vertex polygon", &million);
    println!(
        "  resident memory grew by {:.1} bytes per vertex while it was built (its text and parsed form freed)",
        grown as f64 / million.vertices() as f64
    );
    if antipode {
        // The antipode of the ring's centre (20 E, 10 N) is (160 W, 10 S).
        let b = [block((-160.0, -10.0))];
        time_nearest(
            "block at the antipode of the 1,000,000-vertex polygon",
            &million,
            &b,
            None,
        );
    }
}
