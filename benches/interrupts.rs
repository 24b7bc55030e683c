//! How promptly each long path of ambit can be stopped, measured in the
//! core (no host): every computation is run with a [`GapMeter`] as its
//! interrupt, which records the longest stretch of work between two
//! questions, and which answers "stop" after a set time so that how long
//! the computation went on after that answer is measured too. ambit
//! promises to honour an interrupt within 0.2 s (DEVELOPERS.md,
//! "Interrupts"); the SQL layer's own polling adds at most 20 ms
//! (`sql::interrupt::POLL_INTERVAL`). Shapes are invented.
//!
//! Run: `cargo bench --bench interrupts` (about a minute; the machine's
//! load shows in every figure, so say how loaded it was).
//!
//! Printed, per path: the uninterrupted time (or "stopped at" for paths
//! that take minutes), the questions asked, the longest gap between two,
//! and the time it went on after being told to stop.

use std::time::{Duration, Instant};

use ambit::blob::{self, gpkg};
use ambit::geometry::{Dimensions, Geometry, Shape};
use ambit::interrupt::{GapMeter, Never};
use ambit::proximity::{self, validity, Feature, Layer, Prepared};

/// A closed ring of `n` vertices around `centre` (degrees), `radius_deg`
/// degrees of latitude across, wobbling by `wiggle` of its radius.
fn ring(centre: (f64, f64), n: usize, radius_deg: f64, wiggle: f64) -> Vec<f64> {
    let mut out = Vec::with_capacity(2 * n + 2);
    for k in 0..=n {
        let t = std::f64::consts::TAU * (k % n) as f64 / n as f64;
        let r = radius_deg * (1.0 + wiggle * (37.0 * t).sin() + 0.3 * wiggle * (411.0 * t).cos());
        out.push(centre.0 + r * t.cos() / centre.1.to_radians().cos());
        out.push(centre.1 + r * t.sin());
    }
    out
}

fn polygon(ring: Vec<f64>) -> Geometry {
    Geometry::new(Dimensions::Xy, Shape::Polygon(vec![ring]))
}

/// Runs `work` with a meter that says stop after `stop_after` (never for
/// `None`) and prints one line.
fn measure<T>(name: &str, stop_after: Option<Duration>, work: impl FnOnce(&GapMeter) -> T) -> T {
    let meter = GapMeter::stopping_after(stop_after);
    let start = Instant::now();
    let out = work(&meter);
    let took = start.elapsed();
    let longest = meter.longest_gap();
    let after = meter.stopped_for();
    let ms = |d: Duration| d.as_secs_f64() * 1000.0;
    match after {
        None => println!(
            "{name:<58} {:>9.0} ms  {:>8} checks  longest gap {:>7.2} ms",
            ms(took),
            meter.checks(),
            ms(longest)
        ),
        Some(after) => println!(
            "{name:<58} stopped at {:>6.0} ms  {:>8} checks  longest gap {:>7.2} ms  went on {:>6.2} ms",
            ms(took - after),
            meter.checks(),
            ms(longest),
            ms(after)
        ),
    }
    out
}

fn main() {
    let half = Some(Duration::from_millis(500));

    // A 3,000,000-vertex ring about 440 km across around (-100, 40): the
    // polygon checks take seconds.
    let big = polygon(ring((-100.0, 40.0), 3_000_000, 2.0, 0.01));
    let blob = gpkg::write(&big, 4326);
    println!("decode and check a GeoPackage blob of a 3,000,000-vertex polygon:");
    measure("  blob::decode_valid", None, |m| {
        blob::decode_valid(&blob, m).unwrap()
    });
    measure(
        "  blob::decode_valid, told to stop after 0.5 s",
        half,
        |m| assert!(blob::decode_valid(&blob, m).is_err()),
    );
    measure("  validity::area_until (ambit_area)", None, |m| {
        validity::area_until(&big, m).unwrap()
    });
    measure(
        "  Prepared::build (ambit_distance, ambit_near)",
        None,
        |m| Prepared::build(&big, m).unwrap(),
    );
    measure(
        "  Feature::build (a layer's feature, with its ball tree)",
        None,
        |m| Feature::build(1, 0.0, &big, m).unwrap(),
    );
    drop(blob);
    drop(big);

    // A 200,000-vertex ring about 340 km across around (-100, 40), and
    // places near its antipode, where the bounds prune little.
    let ring200 = polygon(ring((-100.0, 40.0), 200_000, 1.5, 0.001));
    let far_point = Prepared::new(&Geometry::point(80.0, -40.0));
    let prepared = Prepared::new(&ring200);
    println!("a 200,000-vertex ring and places near its antipode:");
    let two = Some(Duration::from_secs(2));
    measure(
        "  distance from a point, told to stop after 2 s",
        two,
        |m| assert!(proximity::distance_interruptible(&prepared, &far_point, m).is_err()),
    );
    let layer = Layer::new(vec![Feature::build(1, 804.672, &ring200, &Never).unwrap()]);
    let square = Prepared::new(&ambit::testing::square(80.0, -40.0, 1.0));
    measure(
        "  nearest from a 2-degree square, told to stop after 2 s",
        two,
        |m| assert!(layer.nearest_until(&square, None, m).is_err()),
    );
    measure("  nearest from a point (uninterrupted)", None, |m| {
        layer.nearest_until(&far_point, None, m).unwrap()
    });
    drop(layer);

    // ambit_share: a 150,000-vertex polygon about 80 km across among
    // 3,000 points reaching half a mile.
    let mut rng = ambit::testing::XorShift(13);
    let parks: Vec<Feature> = (0..3000)
        .map(|i| {
            let p = Geometry::point(
                -131.0 + rng.uniform(-0.5, 0.5),
                38.5 + rng.uniform(-0.4, 0.4),
            );
            Feature::build(i, 804.672, &p, &Never).unwrap()
        })
        .collect();
    let parks = Layer::new(parks);
    let block = Prepared::new(&polygon(ring((-131.0, 38.5), 150_000, 0.36, 0.05)));
    println!("ambit_share of a 150,000-vertex polygon among 3,000 points:");
    let whole = measure("  Layer::share", None, |m| parks.share(&block, m).unwrap());
    println!("    (share {whole:?})");
    measure("  Layer::share, told to stop after 0.5 s", half, |m| {
        assert!(parks.share(&block, m).is_err())
    });

    // A layer build: 300,000 small squares prepared on one thread.
    let rows: Vec<(i64, f64, Geometry)> = (0..300_000)
        .map(|n| {
            let (x, y) = ((n % 997) as f64, (n / 997) as f64);
            let g = ambit::testing::square(-131.3 + x * 0.0005, 38.2 + y * 0.0004, 0.00015);
            (n as i64, 100.0, g)
        })
        .collect();
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(1)
        .build()
        .unwrap();
    println!("a layer of 300,000 small squares, prepared on one thread:");
    let again = rows.clone();
    let started = Instant::now();
    pool.install(|| {
        measure("  Layer::prepare", None, |m| {
            Layer::prepare(rows, m, &|_| {}).unwrap()
        })
    });
    // Told to stop half way through (a fixed 0.5 s can come after the end
    // on a fast machine, when nothing is left to stop).
    let midway = started.elapsed() / 2;
    pool.install(|| {
        measure(
            &format!(
                "  Layer::prepare, told to stop after {} ms",
                midway.as_millis()
            ),
            Some(midway),
            |m| assert!(Layer::prepare(again, m, &|_| {}).is_err()),
        )
    });
}
