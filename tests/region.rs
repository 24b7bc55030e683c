//! The invented region of `ambit-region` (src/bin/ambit-region/) and
//! `demo-db/build-region`: the generator is deterministic, its blocks tile
//! the land exactly (same vertices on both sides of every shared edge,
//! areas that add up to the counties'), its GEOIDs follow the census-style
//! layout, the amenity tables (groceries, clinics, hazard_sites,
//! libraries) are plausible and lie on land inside the counties, and the
//! GeoPackage it builds in the stock shell carries the tables and metadata
//! OGC 12-128 asks for.

mod common;

use ambit::blob::wkt;
use ambit::geometry::validate::validate;
use ambit::geometry::{Dimensions, Geometry, Shape};
use ambit::interrupt::Never;
use ambit::proximity::validity::area as geometry_area;
use ambit::proximity::{distance, Prepared};
use std::collections::{HashMap, HashSet};
use std::path::{Path, PathBuf};
use std::process::Command;

const GENERATOR: &str = env!("CARGO_BIN_EXE_ambit-region");
const TABLES: [&str; 10] = [
    "counties",
    "blocks",
    "parks",
    "rec_sites",
    "fitness_list",
    "urban_areas",
    "groceries",
    "clinics",
    "hazard_sites",
    "libraries",
];
/// The committed demo database (demo-db/README.md).
const DEMO: &str = "demo-db/demo-region.gpkg";
const GROCERY_KINDS: [&str; 4] = [
    "supermarket",
    "supercenter",
    "large grocery store",
    "convenience store",
];
const HAZARD_KINDS: [&str; 5] = [
    "chemical storage",
    "fuel terminal",
    "wastewater plant",
    "landfill",
    "rail yard",
];
const BRANCH_TYPES: [&str; 3] = ["central", "branch", "bookmobile stop"];

/// A fresh folder under the system temp dir, removed when dropped.
struct TempDir(PathBuf);

impl TempDir {
    fn new(name: &str) -> TempDir {
        let dir = std::env::temp_dir().join(format!("ambit-region-{}-{name}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(&dir).unwrap();
        TempDir(dir)
    }
}

impl Drop for TempDir {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.0);
    }
}

fn generate(blocks: usize, seed: u64, name: &str) -> TempDir {
    run_generator(&[], blocks, seed, name, None)
}

/// Runs the generator with `extra` arguments, optionally on `threads`
/// worker threads (RAYON_NUM_THREADS).
fn run_generator(
    extra: &[&str],
    blocks: usize,
    seed: u64,
    name: &str,
    threads: Option<usize>,
) -> TempDir {
    let dir = TempDir::new(name);
    let mut cmd = Command::new(GENERATOR);
    if let Some(n) = threads {
        cmd.env("RAYON_NUM_THREADS", n.to_string());
    }
    let out = cmd
        .args(extra)
        .args(["--blocks", &blocks.to_string(), "--seed", &seed.to_string()])
        .arg("--out")
        .arg(&dir.0)
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "ambit-region failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    dir
}

/// Reads an RFC 4180 file: CRLF rows, quoted fields with doubled quotes.
fn read_csv(path: &Path) -> Vec<Vec<String>> {
    let text = std::fs::read_to_string(path).unwrap();
    let mut rows = Vec::new();
    let mut row = Vec::new();
    let mut field = String::new();
    let mut chars = text.chars().peekable();
    let mut quoted = false;
    while let Some(c) = chars.next() {
        if quoted {
            match c {
                '"' if chars.peek() == Some(&'"') => {
                    chars.next();
                    field.push('"');
                }
                '"' => quoted = false,
                _ => field.push(c),
            }
            continue;
        }
        match c {
            '"' => quoted = true,
            ',' => row.push(std::mem::take(&mut field)),
            '\r' => assert_eq!(chars.next(), Some('\n'), "{}: bare CR", path.display()),
            '\n' => panic!("{}: row ended by LF alone, not CRLF", path.display()),
            _ => field.push(c),
        }
        if c == '\r' {
            row.push(std::mem::take(&mut field));
            rows.push(std::mem::take(&mut row));
        }
    }
    assert!(
        !quoted && row.is_empty() && field.is_empty(),
        "unterminated row"
    );
    rows
}

/// The rows of a table without the header, checked against the header.
fn table(dir: &Path, name: &str, header: &[&str]) -> Vec<Vec<String>> {
    let mut rows = read_csv(&dir.join(format!("{name}.csv")));
    assert_eq!(rows.remove(0), header, "{name}.csv header");
    for r in &rows {
        assert_eq!(r.len(), header.len(), "{name}.csv row {r:?}");
    }
    rows
}

fn rings(g: &Geometry) -> Vec<&Vec<f64>> {
    match &g.shape {
        Shape::Polygon(r) => r.iter().collect(),
        Shape::MultiPolygon(p) => p.iter().flatten().collect(),
        other => panic!("not a surface: {other:?}"),
    }
}

type Edge = [u64; 4];

fn edges(ring: &[f64]) -> impl Iterator<Item = Edge> + '_ {
    ring.chunks_exact(2)
        .zip(ring.chunks_exact(2).skip(1))
        .map(|(a, b)| {
            [
                a[0].to_bits(),
                a[1].to_bits(),
                b[0].to_bits(),
                b[1].to_bits(),
            ]
        })
}

fn reversed(e: Edge) -> Edge {
    [e[2], e[3], e[0], e[1]]
}

/// Whether segments ab and cd share a point (collinear overlaps included).
fn segments_meet(a: [f64; 2], b: [f64; 2], c: [f64; 2], d: [f64; 2]) -> bool {
    let orient = |p: [f64; 2], q: [f64; 2], r: [f64; 2]| {
        let v = (q[0] - p[0]) * (r[1] - p[1]) - (q[1] - p[1]) * (r[0] - p[0]);
        (v > 0.0) as i8 - (v < 0.0) as i8
    };
    let within = |p: [f64; 2], q: [f64; 2], r: [f64; 2]| {
        r[0] >= p[0].min(q[0])
            && r[0] <= p[0].max(q[0])
            && r[1] >= p[1].min(q[1])
            && r[1] <= p[1].max(q[1])
    };
    let (o1, o2, o3, o4) = (
        orient(a, b, c),
        orient(a, b, d),
        orient(c, d, a),
        orient(c, d, b),
    );
    if o1 != o2 && o3 != o4 && o1 * o2 <= 0 && o3 * o4 <= 0 && (o1 != 0 || o2 != 0) {
        return true;
    }
    (o1 == 0 && within(a, b, c))
        || (o2 == 0 && within(a, b, d))
        || (o3 == 0 && within(c, d, a))
        || (o4 == 0 && within(c, d, b))
}

/// A closed ring is simple: no two edges meet except neighbours at their
/// shared vertex. Edges are swept by latitude, so long rings stay cheap.
fn ring_is_simple(ring: &[f64]) -> bool {
    let v: Vec<[f64; 2]> = ring.chunks_exact(2).map(|p| [p[0], p[1]]).collect();
    let n = v.len() - 1;
    let lo = |i: usize| v[i][1].min(v[i + 1][1]);
    let hi = |i: usize| v[i][1].max(v[i + 1][1]);
    let mut order: Vec<usize> = (0..n).collect();
    order.sort_by(|&a, &b| lo(a).total_cmp(&lo(b)));
    for (k, &i) in order.iter().enumerate() {
        for &j in &order[k + 1..] {
            if lo(j) > hi(i) {
                break;
            }
            let (a, b) = (i.min(j), i.max(j));
            if b == a + 1 || (a == 0 && b == n - 1) {
                continue;
            }
            if segments_meet(v[a], v[a + 1], v[b], v[b + 1]) {
                return false;
            }
        }
    }
    true
}

fn signed_area(ring: &[f64]) -> f64 {
    ring.chunks_exact(2)
        .zip(ring.chunks_exact(2).skip(1))
        .map(|(a, b)| a[0] * b[1] - b[0] * a[1])
        .sum::<f64>()
        / 2.0
}

#[test]
fn same_seed_same_bytes_other_seed_other_region() {
    let a = generate(3000, 7, "det-a");
    let b = generate(3000, 7, "det-b");
    let c = generate(3000, 8, "det-c");
    for t in TABLES {
        let file = format!("{t}.csv");
        let x = std::fs::read(a.0.join(&file)).unwrap();
        let y = std::fs::read(b.0.join(&file)).unwrap();
        assert!(x == y, "{file} differs between two runs with seed 7");
    }
    let x = std::fs::read(a.0.join("blocks.csv")).unwrap();
    let z = std::fs::read(c.0.join("blocks.csv")).unwrap();
    assert!(x != z, "seeds 7 and 8 gave the same blocks");
    for t in ["parks", "groceries", "clinics", "hazard_sites", "libraries"] {
        let x = std::fs::read(a.0.join(format!("{t}.csv"))).unwrap();
        let z = std::fs::read(c.0.join(format!("{t}.csv"))).unwrap();
        assert!(x != z, "seeds 7 and 8 gave the same {t}");
    }
}

#[test]
fn blocks_tile_the_counties_exactly() {
    let dir = generate(3000, 3, "tiling");
    let counties = table(&dir.0, "counties", &["fid", "geoid", "name", "wkt"]);
    let blocks = table(
        &dir.0,
        "blocks",
        &["fid", "geoid", "population", "water", "wkt"],
    );
    assert_eq!(counties.len(), 6);
    assert!(
        (2500..=3500).contains(&blocks.len()),
        "{} blocks for a target of 3000",
        blocks.len()
    );

    assert_eq!(
        check_tiling(&counties, &blocks, 41..=81),
        1,
        "one county has an island"
    );
}

/// Checks that the blocks tile their counties exactly: every county and
/// block ring is valid and simple, every block ring closed and
/// counter-clockwise with a vertex count in `points`; block areas add up to
/// their county's (relative 1e-9: the same surface cut in pieces, areas by
/// ambit's geodesic area); every block edge off the county boundaries is
/// shared once each way, and every county edge is a block edge. Returns the
/// number of counties in more than one part.
fn check_tiling(
    counties: &[Vec<String>],
    blocks: &[Vec<String>],
    points: std::ops::RangeInclusive<usize>,
) -> usize {
    // County areas and outer-boundary edges.
    let mut county_area: HashMap<String, f64> = HashMap::new();
    let mut boundary: HashSet<Edge> = HashSet::new();
    let mut multi = 0;
    for c in counties {
        let g = wkt::parse(&c[3]).unwrap();
        validate(&g, 4326, &Never).unwrap();
        let Shape::MultiPolygon(parts) = &g.shape else {
            panic!("county {} is not a MULTIPOLYGON", c[1]);
        };
        multi += (parts.len() > 1) as usize;
        for ring in rings(&g) {
            assert!(
                ring_is_simple(ring),
                "county {} has a self-crossing ring",
                c[1]
            );
            for e in edges(ring) {
                assert!(boundary.insert(e), "county edge {e:?} repeated");
            }
        }
        county_area.insert(c[1].clone(), geometry_area(&g));
    }

    // (a) every block ring is closed, has >= 4 points, is valid, simple and
    // counter-clockwise, with about 40 vertices.
    let mut block_area: HashMap<String, f64> = HashMap::new();
    let mut count: HashMap<Edge, u32> = HashMap::new();
    for b in blocks {
        let g = wkt::parse(&b[4]).unwrap();
        validate(&g, 4326, &Never).unwrap_or_else(|e| panic!("block {}: {e}", b[1]));
        let Shape::Polygon(r) = &g.shape else {
            panic!("block {} is not a POLYGON", b[1]);
        };
        assert_eq!(r.len(), 1, "block {} has holes", b[1]);
        let ring = &r[0];
        let n = ring.len() / 2;
        assert!(points.contains(&n), "block {} has {n} points", b[1]);
        assert_eq!(
            ring[..2],
            ring[ring.len() - 2..],
            "block {} not closed",
            b[1]
        );
        assert!(signed_area(ring) > 0.0, "block {} is clockwise", b[1]);
        assert!(ring_is_simple(ring), "block {} crosses itself", b[1]);
        for e in edges(ring) {
            *count.entry(e).or_default() += 1;
        }
        *block_area.entry(b[1][..5].to_string()).or_default() += geometry_area(&g);
    }

    // (b) block areas add up to their county's area.
    let total_blocks: f64 = block_area.values().sum();
    let total_counties: f64 = county_area.values().sum();
    assert!(
        ((total_blocks - total_counties) / total_counties).abs() < 1e-9,
        "blocks {total_blocks} m2, counties {total_counties} m2"
    );
    for (geoid, area) in &county_area {
        let b = block_area[geoid];
        assert!(
            ((b - area) / area).abs() < 1e-9,
            "county {geoid}: blocks {b} m2, county {area} m2"
        );
    }

    // (c) every block edge off the county boundaries is shared: once each
    // way; every county edge is a block edge in the same direction.
    for (&e, &n) in &count {
        assert_eq!(n, 1, "block edge {e:?} used {n} times");
        if boundary.contains(&e) {
            // On a county line both counties have it, one each way.
            if count.contains_key(&reversed(e)) {
                assert!(boundary.contains(&reversed(e)), "county edge {e:?} inside");
            }
        } else {
            assert_eq!(
                count.get(&reversed(e)),
                Some(&1),
                "block edge {e:?} has no twin and is on no county boundary"
            );
        }
    }
    for e in &boundary {
        assert!(count.contains_key(e), "county edge {e:?} is on no block");
    }
    multi
}

#[test]
fn geoids_follow_state_county_tract_block() {
    let dir = generate(3000, 11, "geoids");
    let counties = table(&dir.0, "counties", &["fid", "geoid", "name", "wkt"]);
    let blocks = table(
        &dir.0,
        "blocks",
        &["fid", "geoid", "population", "water", "wkt"],
    );
    let county_ids: HashSet<&str> = counties.iter().map(|c| c[1].as_str()).collect();
    for c in &county_ids {
        assert!(c.len() == 5 && c.starts_with("99"), "county geoid {c}");
        let code: u32 = c[2..].parse().unwrap();
        assert!(code % 2 == 1, "county code {c} is not odd");
    }
    let mut seen = HashSet::new();
    let (mut water, mut empty) = (0, 0);
    for (i, b) in blocks.iter().enumerate() {
        let geoid = &b[1];
        assert_eq!(geoid.len(), 15, "{geoid}");
        assert!(geoid.bytes().all(|c| c.is_ascii_digit()), "{geoid}");
        assert!(county_ids.contains(&geoid[..5]), "{geoid}: no such county");
        assert!(seen.insert(geoid.clone()), "{geoid} repeated");
        // Tract: 4-digit basic number, 2-digit suffix (00, or 01-04 for the
        // parts of a split tract); block: block group digit 1-9 first.
        let basic: u32 = geoid[5..9].parse().unwrap();
        let suffix: u32 = geoid[9..11].parse().unwrap();
        assert!(basic >= 1 && suffix <= 4, "{geoid}: tract");
        assert!(geoid.as_bytes()[11] != b'0', "{geoid}: block group 0");
        assert_eq!(b[0], (i + 1).to_string(), "fids count from 1");
        let pop: u32 = b[2].parse().unwrap();
        assert!(pop <= 400, "{geoid}: {pop} residents");
        water += (b[3] == "1") as u32;
        empty += (pop == 0) as u32;
        if b[3] == "1" {
            assert_eq!(pop, 0, "water block {geoid} has residents");
        }
    }
    assert!((1..=2).contains(&water), "{water} water blocks");
    assert!(empty > 0, "no block without residents");
}

#[test]
fn features_are_plausible() {
    let dir = generate(3000, 5, "features");
    let blocks = read_csv(&dir.0.join("blocks.csv")).len() - 1;
    let parks = table(&dir.0, "parks", &["fid", "park_id", "name", "wkt"]);
    let rec = table(
        &dir.0,
        "rec_sites",
        &["fid", "site_code", "site_name", "activity", "wkt"],
    );
    let fit = table(
        &dir.0,
        "fitness_list",
        &[
            "fid",
            "license_no",
            "business",
            "category",
            "lon",
            "lat",
            "wkt",
        ],
    );
    let urban = table(&dir.0, "urban_areas", &["fid", "name", "wkt"]);
    // About 1 park per 65 blocks, plus the three special ones.
    assert!(
        parks.len() * 65 > blocks / 2 && parks.len() * 65 < blocks * 2,
        "{} parks for {blocks} blocks",
        parks.len()
    );
    let mut most = 0;
    for p in &parks {
        let g = wkt::parse(&p[3]).unwrap();
        validate(&g, 4326, &Never).unwrap();
        for r in rings(&g) {
            assert!(ring_is_simple(r), "park {} crosses itself", p[1]);
        }
        most = most.max(g.vertex_count());
    }
    assert!(most > 20_000, "the largest park has {most} vertices");
    // About 2 facilities per 200 blocks; few enough at this size to allow
    // a wide margin.
    let facilities = rec.len() + fit.len();
    assert!(
        facilities * 100 > blocks / 3 && facilities * 100 < blocks * 3,
        "{facilities} facilities for {blocks} blocks"
    );
    for f in &fit {
        if f[6].is_empty() {
            assert!(f[4].is_empty() && f[5].is_empty());
            continue;
        }
        assert_eq!(f[6], format!("POINT ({} {})", f[4], f[5]));
    }
    let names: Vec<&str> = urban.iter().map(|u| u[1].as_str()).collect();
    assert!((3..=4).contains(&names.len()), "urban areas {names:?}");
}

/// Whether a distance from ambit::proximity::distance is 0: the point lies
/// inside (or on) the polygon.
fn inside(area: &Prepared, g: &Prepared) -> bool {
    distance(area, g) == Some(0.0)
}

fn prepared_point(x: f64, y: f64) -> Prepared {
    Prepared::new(&Geometry::point(x, y))
}

/// The rings of a surface as one MULTILINESTRING: its boundary.
fn boundary_of(g: &Geometry) -> Geometry {
    Geometry::new(
        Dimensions::Xy,
        Shape::MultiLineString(rings(g).into_iter().cloned().collect()),
    )
}

/// Values of a column are unique and all follow `prefix` + 5 digits.
fn check_ids(rows: &[Vec<String>], column: usize, prefix: &str, table: &str) {
    let mut seen = HashSet::new();
    for (i, r) in rows.iter().enumerate() {
        assert_eq!(r[0], (i + 1).to_string(), "{table}: fids count from 1");
        let id = &r[column];
        assert!(
            id.len() == prefix.len() + 5
                && id.starts_with(prefix)
                && id[prefix.len()..].bytes().all(|c| c.is_ascii_digit()),
            "{table}: id {id}"
        );
        assert!(seen.insert(id.clone()), "{table}: id {id} repeated");
        assert!(!r[2].trim().is_empty(), "{table} {id} has no name");
    }
}

#[test]
fn amenity_tables_are_plausible_and_on_land() {
    let dir = generate(3000, 9, "amenities");
    let counties = table(&dir.0, "counties", &["fid", "geoid", "name", "wkt"]);
    let blocks = table(
        &dir.0,
        "blocks",
        &["fid", "geoid", "population", "water", "wkt"],
    );
    let groceries = table(
        &dir.0,
        "groceries",
        &["fid", "store_id", "name", "kind", "wkt"],
    );
    let clinics = table(
        &dir.0,
        "clinics",
        &["fid", "clinic_id", "name", "providers", "wkt"],
    );
    let hazards = table(
        &dir.0,
        "hazard_sites",
        &["fid", "site_id", "name", "kind", "wkt"],
    );
    let libraries = table(
        &dir.0,
        "libraries",
        &["fid", "library_id", "name", "branch_type", "wkt"],
    );
    let population: f64 = blocks.iter().map(|b| b[2].parse::<f64>().unwrap()).sum();

    // Counts in ranges around the generator's rates (one store per
    // 1,000-3,600 residents, one clinic per 10,000 plus county-line ones,
    // hazard sites 0.15-0.6% of blocks, a central library per county and a
    // branch per 40,000), wide enough for chance at this size.
    let n = |rows: &[Vec<String>]| rows.len() as f64;
    assert!(
        (population / 5000.0..population / 1500.0).contains(&n(&groceries)),
        "{} groceries for {population} residents",
        groceries.len()
    );
    assert!(
        (population / 25_000.0..population / 4000.0).contains(&n(&clinics)),
        "{} clinics for {population} residents",
        clinics.len()
    );
    assert!(
        (3..=40).contains(&hazards.len()),
        "{} hazard sites for {} blocks",
        hazards.len(),
        blocks.len()
    );
    assert!(
        (7.0..6.0 + population / 15_000.0).contains(&n(&libraries)),
        "{} libraries for {population} residents",
        libraries.len()
    );

    // Ids unique, kinds from the documented lists.
    check_ids(&groceries, 1, "GR", "groceries");
    check_ids(&clinics, 1, "CL", "clinics");
    check_ids(&hazards, 1, "HZ", "hazard_sites");
    check_ids(&libraries, 1, "LB", "libraries");
    for (rows, kinds, t) in [
        (&groceries, &GROCERY_KINDS[..], "groceries"),
        (&hazards, &HAZARD_KINDS[..], "hazard_sites"),
        (&libraries, &BRANCH_TYPES[..], "libraries"),
    ] {
        for r in rows.iter() {
            assert!(
                kinds.contains(&r[3].as_str()),
                "{t} {}: kind {}",
                r[1],
                r[3]
            );
        }
    }
    let of_kind = |k: &str| groceries.iter().filter(|g| g[3] == k).count();
    for k in GROCERY_KINDS {
        assert!(of_kind(k) > 0, "no {k}");
    }
    let convenience = of_kind("convenience store");
    assert!(
        convenience * 10 > groceries.len() && convenience * 2 < groceries.len(),
        "{convenience} convenience stores of {}",
        groceries.len()
    );
    // Providers: full-time equivalents 0.5 to 20, or empty (unknown).
    for c in &clinics {
        if c[3].is_empty() {
            continue;
        }
        let v: f64 = c[3].parse().unwrap();
        assert!((0.5..=20.0).contains(&v), "clinic {}: {v} providers", c[1]);
    }
    // One central library per county, named after it.
    let central: Vec<&str> = libraries
        .iter()
        .filter(|l| l[3] == "central")
        .map(|l| l[2].as_str())
        .collect();
    let expected: Vec<String> = counties
        .iter()
        .map(|c| format!("{} Central Library", c[2]))
        .collect();
    assert_eq!(central, expected);

    // On land: every point inside exactly one county's polygon and in no
    // lake (water block); every footprint valid, simple, counter-clockwise,
    // with all vertices in one county and no edge meeting that county's
    // boundary. Distances are ambit's exact geodesic ones (0 inside).
    let county_geoms: Vec<Geometry> = counties
        .iter()
        .map(|c| wkt::parse(&c[3]).unwrap())
        .collect();
    let county_areas: Vec<Prepared> = county_geoms.iter().map(Prepared::new).collect();
    let lakes: Vec<Prepared> = blocks
        .iter()
        .filter(|b| b[3] == "1")
        .map(|b| Prepared::new(&wkt::parse(&b[4]).unwrap()))
        .collect();
    assert!(!lakes.is_empty(), "the region has lakes");
    let county_of = |x: f64, y: f64, what: &str| -> usize {
        let p = prepared_point(x, y);
        let holding: Vec<usize> = (0..county_areas.len())
            .filter(|&i| inside(&county_areas[i], &p))
            .collect();
        assert_eq!(
            holding.len(),
            1,
            "{what} ({x} {y}) lies in counties {holding:?}"
        );
        for lake in &lakes {
            assert!(!inside(lake, &p), "{what} ({x} {y}) lies in a lake");
        }
        holding[0]
    };
    let mut footprints = 0;
    let mut near_line = 0;
    for (rows, t) in [
        (&groceries, "groceries"),
        (&clinics, "clinics"),
        (&hazards, "hazard_sites"),
        (&libraries, "libraries"),
    ] {
        for r in rows.iter() {
            let what = format!("{t} {}", r[1]);
            let g = wkt::parse(&r[4]).unwrap();
            validate(&g, 4326, &Never).unwrap_or_else(|e| panic!("{what}: {e}"));
            match &g.shape {
                Shape::Point(v) => {
                    let c = county_of(v[0], v[1], &what);
                    // A clinic within 3 km of another county serves both.
                    if t == "clinics" {
                        let p = prepared_point(v[0], v[1]);
                        near_line += (0..county_areas.len()).any(|i| {
                            i != c && distance(&county_areas[i], &p).is_some_and(|d| d <= 3000.0)
                        }) as usize;
                    }
                }
                Shape::Polygon(r) if t == "hazard_sites" => {
                    assert_eq!(r.len(), 1, "{what} has holes");
                    let ring = &r[0];
                    assert!(ring_is_simple(ring), "{what} crosses itself");
                    assert!(signed_area(ring) > 0.0, "{what} is clockwise");
                    let homes: HashSet<usize> = ring
                        .chunks_exact(2)
                        .map(|v| county_of(v[0], v[1], &what))
                        .collect();
                    assert_eq!(homes.len(), 1, "{what} spans counties {homes:?}");
                    let home = *homes.iter().next().unwrap();
                    let edge = Prepared::new(&Geometry::new(
                        Dimensions::Xy,
                        Shape::LineString(ring.clone()),
                    ));
                    let line = Prepared::new(&boundary_of(&county_geoms[home]));
                    assert!(
                        distance(&edge, &line).is_some_and(|d| d > 0.0),
                        "{what} meets its county's boundary"
                    );
                    footprints += 1;
                }
                other => panic!("{what}: unexpected geometry {other:?}"),
            }
        }
    }
    assert!(footprints >= 1, "no hazard footprint");
    assert!(
        footprints * 2 < hazards.len(),
        "{footprints} of {} hazard sites are footprints: mostly points expected",
        hazards.len()
    );
    assert!(
        near_line >= 2,
        "{near_line} clinics within 3 km of another county"
    );
}

/// The committed demo database holds the amenity tables in the sizes
/// demo-db/README.md describes (invented region of about 2.06 million
/// residents).
#[test]
fn demo_database_amenities_have_the_documented_sizes() {
    let db = Path::new(env!("CARGO_MANIFEST_DIR")).join(DEMO);
    let q = |sql: &str| gpkg_query(&db, sql);
    let num = |sql: &str| -> f64 { q(sql).parse().unwrap() };
    let residents = num("SELECT sum(population) FROM blocks;");
    let stores = num("SELECT count(*) FROM groceries;");
    assert!(
        (2500.0..=4500.0).contains(&(residents / stores)),
        "{stores} stores for {residents} residents"
    );
    assert!(
        (1.0..stores / 2.0).contains(&num(
            "SELECT count(*) FROM groceries WHERE kind = 'convenience store';"
        )),
        "convenience stores"
    );
    let clinics = num("SELECT count(*) FROM clinics;");
    assert!((150.0..=250.0).contains(&clinics), "{clinics} clinics");
    let unknown = num("SELECT count(*) FROM clinics WHERE providers IS NULL;");
    assert!(
        unknown >= 1.0 && unknown * 10.0 < clinics,
        "{unknown} clinics of unknown capacity"
    );
    assert_eq!(
        q("SELECT count(*) FROM clinics WHERE providers IS NOT NULL            AND NOT (typeof(providers) = 'real' AND providers BETWEEN 0.5 AND 20);"),
        "0",
        "providers positive or NULL"
    );
    // Skewed: the median practice is smaller than the mean.
    let mean = num("SELECT avg(providers) FROM clinics;");
    let median = num(
        "SELECT providers FROM clinics WHERE providers IS NOT NULL ORDER BY providers          LIMIT 1 OFFSET (SELECT count(providers) / 2 FROM clinics);",
    );
    assert!(median < mean, "median {median}, mean {mean}");
    let hazards = num("SELECT count(*) FROM hazard_sites;");
    assert!((60.0..=120.0).contains(&hazards), "{hazards} hazard sites");
    let polygons =
        num("SELECT count(*) FROM hazard_sites WHERE ST_GeometryType(geom) = 'POLYGON';");
    assert!(
        polygons >= 2.0 && polygons * 2.0 < hazards,
        "{polygons} footprints of {hazards}"
    );
    assert_eq!(
        q("SELECT count(*) FROM hazard_sites WHERE ST_GeometryType(geom) = 'POLYGON'            AND kind NOT IN ('landfill', 'rail yard');"),
        "0"
    );
    let libraries = num("SELECT count(*) FROM libraries;");
    assert!((50.0..=90.0).contains(&libraries), "{libraries} libraries");
    assert_eq!(
        q("SELECT group_concat(branch_type || ' ' || n, ', ') FROM            (SELECT branch_type, count(*) > 0 AS n FROM libraries GROUP BY 1 ORDER BY 1);"),
        "bookmobile stop 1, branch 1, central 1"
    );
    assert_eq!(
        q("SELECT count(*) FROM libraries WHERE branch_type = 'central';"),
        "6"
    );
    // Every table's ids are unique.
    for (t, id) in [
        ("groceries", "store_id"),
        ("clinics", "clinic_id"),
        ("hazard_sites", "site_id"),
        ("libraries", "library_id"),
    ] {
        assert_eq!(
            q(&format!("SELECT count(DISTINCT {id}) = count(*) FROM {t};")),
            "1",
            "{t}.{id} unique"
        );
    }
}

/// Builds the GeoPackage with demo-db/build-region and this test run's
/// library.
fn build_gpkg(blocks: usize, seed: u64, out: &Path) {
    let script = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-db/build-region");
    let run = Command::new(script)
        .args([&blocks.to_string(), &seed.to_string()])
        .arg(out)
        .env("AMBIT_LIB", common::library().with_extension(""))
        .env("AMBIT_REGION_BIN", GENERATOR)
        .env("SQLITE3", common::SHELL)
        .output()
        .unwrap();
    assert!(
        run.status.success(),
        "build-region failed:\n{}\n{}",
        String::from_utf8_lossy(&run.stdout),
        String::from_utf8_lossy(&run.stderr)
    );
}

fn gpkg_query(db: &Path, sql: &str) -> String {
    let run = common::shell_with(&[db.to_str().unwrap()], sql);
    assert!(
        run.status == 0 && run.stderr.is_empty(),
        "{sql}\n{}",
        run.stderr
    );
    run.stdout.trim_end().to_string()
}

#[test]
fn build_region_makes_a_geopackage() {
    let dir = TempDir::new("gpkg");
    let db = dir.0.join("region.gpkg");
    build_gpkg(3000, 2, &db);
    let q = |sql: &str| gpkg_query(&db, sql);

    assert_eq!(q("PRAGMA application_id;"), "1196444487");
    assert_eq!(q("PRAGMA user_version;"), "10300");
    assert_eq!(q("PRAGMA integrity_check;"), "ok");
    assert_eq!(q("PRAGMA foreign_key_check;"), "");
    assert_eq!(
        q(
            "SELECT srs_id, organization, organization_coordsys_id, definition = 'undefined' \
           FROM gpkg_spatial_ref_sys ORDER BY srs_id;"
        ),
        "-1|NONE|-1|1\n0|NONE|0|1\n4326|EPSG|4326|0"
    );
    assert!(
        q("SELECT definition FROM gpkg_spatial_ref_sys WHERE srs_id = 4326;")
            .starts_with("GEOGCS[\"WGS 84\"")
    );
    // No staging tables left behind.
    assert_eq!(
        q(
            "SELECT group_concat(name, ' ') FROM (SELECT name FROM sqlite_master \
           WHERE type = 'table' ORDER BY name);"
        ),
        "blocks clinics counties fitness_list gpkg_contents gpkg_geometry_columns \
         gpkg_spatial_ref_sys groceries hazard_sites libraries parks rec_sites urban_areas"
    );

    let types = [
        ("counties", "MULTIPOLYGON"),
        ("blocks", "POLYGON"),
        ("parks", "GEOMETRY"),
        ("rec_sites", "POINT"),
        ("fitness_list", "POINT"),
        ("urban_areas", "MULTIPOLYGON"),
        ("groceries", "POINT"),
        ("clinics", "POINT"),
        ("hazard_sites", "GEOMETRY"),
        ("libraries", "POINT"),
    ];
    let csv = TempDir::new("gpkg-csv");
    let out = Command::new(GENERATOR)
        .args(["--blocks", "3000", "--seed", "2", "--out"])
        .arg(&csv.0)
        .output()
        .unwrap();
    assert!(out.status.success());
    for (t, kind) in types {
        assert_eq!(
            q(&format!(
                "SELECT data_type, srs_id, description LIKE 'Invented data%', \
                 min_x < max_x AND min_y < max_y FROM gpkg_contents WHERE table_name = '{t}';"
            )),
            "features|4326|1|1",
            "gpkg_contents row of {t}"
        );
        assert_eq!(
            q(&format!(
                "SELECT column_name, geometry_type_name, srs_id, z, m \
                 FROM gpkg_geometry_columns WHERE table_name = '{t}';"
            )),
            format!("geom|{kind}|4326|0|0"),
            "gpkg_geometry_columns row of {t}"
        );
        let rows = read_csv(&csv.0.join(format!("{t}.csv"))).len() - 1;
        assert_eq!(
            q(&format!("SELECT count(*) FROM {t};")),
            rows.to_string(),
            "rows of {t}"
        );
        assert_eq!(
            q(&format!(
                "SELECT count(*) FROM {t} WHERE geom IS NOT NULL AND ST_SRID(geom) != 4326;"
            )),
            "0",
            "srs of {t}"
        );
        // The extent in gpkg_contents holds every geometry's first vertex.
        assert_eq!(
            q(&format!(
                "SELECT count(*) FROM {t}, gpkg_contents c WHERE c.table_name = '{t}' \
                 AND ST_GeometryType(geom) = 'POINT' \
                 AND NOT (ST_X(geom) BETWEEN c.min_x AND c.max_x \
                          AND ST_Y(geom) BETWEEN c.min_y AND c.max_y);"
            )),
            "0",
            "extent of {t}"
        );
    }
    assert_eq!(q("SELECT count(*) FROM gpkg_contents;"), "10");
    assert_eq!(q("SELECT count(*) FROM gpkg_geometry_columns;"), "10");
    // Providers are stored as REAL, unknown capacity as NULL.
    assert_eq!(
        q("SELECT count(*) FROM clinics WHERE NOT (providers IS NULL            OR (typeof(providers) = 'real' AND providers > 0));"),
        "0"
    );
    assert_eq!(
        q("SELECT count(*) FROM hazard_sites WHERE ST_GeometryType(geom) NOT IN ('POINT', 'POLYGON');"),
        "0"
    );
    assert_eq!(
        q("SELECT count(*) FROM blocks WHERE ST_SRID(geom) != 4326;"),
        "0"
    );
    assert_eq!(
        q(
            "SELECT count(*) FROM blocks WHERE typeof(population) != 'integer' \
           OR typeof(water) != 'integer' OR length(geoid) != 15;"
        ),
        "0"
    );
    // lon and lat of the licensing list are its points' coordinates.
    assert_eq!(
        q("SELECT count(*) FROM fitness_list WHERE lon IS NOT ST_X(geom) OR lat IS NOT ST_Y(geom);"),
        "0"
    );
    // The last three parks: the coastal forest, the one across a county
    // line, the one across the state line.
    let reach = |offset: u32| {
        q(&format!(
            "SELECT (SELECT count(*) FROM counties c WHERE ambit_within(c.geom, p.geom, 0)) \
             FROM parks p ORDER BY fid DESC LIMIT 1 OFFSET {offset};"
        ))
    };
    assert_eq!(reach(0), "0", "the park across the state line");
    assert_eq!(reach(1), "2", "the park across a county line");
    assert_ne!(reach(2), "0", "the coastal forest");
    // Some licences repeat a registry site within 20 m.
    let dups: u32 = q("SELECT count(*) FROM fitness_list f WHERE EXISTS \
                       (SELECT 1 FROM rec_sites r WHERE ambit_within(f.geom, r.geom, 20));")
    .parse()
    .unwrap();
    let fitness: u32 = q("SELECT count(*) FROM fitness_list;").parse().unwrap();
    assert!(
        dups >= 1 && dups * 4 < fitness,
        "{dups} of {fitness} repeat a site"
    );

    // The same statements give the same file.
    let again = dir.0.join("again.gpkg");
    build_gpkg(3000, 2, &again);
    assert!(
        std::fs::read(&db).unwrap() == std::fs::read(&again).unwrap(),
        "two builds with the same seed differ"
    );
}

#[test]
fn build_region_explains_a_missing_library() {
    let dir = TempDir::new("nolib");
    let script = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-db/build-region");
    let run = Command::new(script)
        .args(["3000", "1"])
        .arg(dir.0.join("x.gpkg"))
        .env("AMBIT_LIB", dir.0.join("libambit"))
        .env("AMBIT_REGION_BIN", GENERATOR)
        .output()
        .unwrap();
    assert!(!run.status.success());
    let err = String::from_utf8_lossy(&run.stderr);
    assert!(err.contains("cargo build --release"), "{err}");
    assert!(!dir.0.join("x.gpkg").exists());
}

// ----------------------------------------------------------------------
// The national country (--national)
// ----------------------------------------------------------------------

const BLOCK_HEADER: [&str; 5] = ["fid", "geoid", "population", "water", "wkt"];

/// The extreme latitudes of a geometry.
fn lat_range(g: &Geometry) -> (f64, f64) {
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    g.for_each_xy(&mut |_, y| {
        lo = lo.min(y);
        hi = hi.max(y);
    });
    (lo, hi)
}

#[test]
fn national_country_has_valid_states_counties_geoids_and_heavy_shapes() {
    let dir = run_generator(&["--national"], 60_000, 2, "national", None);
    let counties = table(&dir.0, "counties", &["fid", "geoid", "name", "wkt"]);
    let blocks = table(&dir.0, "blocks", &BLOCK_HEADER);
    let parks = table(&dir.0, "parks", &["fid", "park_id", "name", "wkt"]);
    let rec = table(
        &dir.0,
        "rec_sites",
        &["fid", "site_code", "site_name", "activity", "wkt"],
    );
    let fit = table(
        &dir.0,
        "fitness_list",
        &[
            "fid",
            "license_no",
            "business",
            "category",
            "lon",
            "lat",
            "wkt",
        ],
    );
    assert!(
        (54_000..=66_000).contains(&blocks.len()),
        "{} blocks for a target of 60000",
        blocks.len()
    );

    // States and counties: >= 50 states, about 3,100 counties (fewer at
    // this size: a small state's county may get no block), GEOIDs
    // state 2 + county 3 (odd), unique, fids from 1.
    let mut county_ids = HashSet::new();
    for (i, c) in counties.iter().enumerate() {
        let id = &c[1];
        assert!(
            id.len() == 5 && id.bytes().all(|b| b.is_ascii_digit()),
            "{id}"
        );
        assert!(id[2..].parse::<u32>().unwrap() % 2 == 1, "county code {id}");
        assert!(county_ids.insert(id.clone()), "county {id} repeated");
        assert_eq!(c[0], (i + 1).to_string(), "county fids count from 1");
    }
    let states: HashSet<&str> = county_ids.iter().map(|c| &c[..2]).collect();
    assert!(states.len() >= 50, "{} states", states.len());
    assert!(
        (2500..=3300).contains(&counties.len()),
        "{} counties",
        counties.len()
    );

    // Block GEOIDs: 15 digits, unique, in a known county, tract
    // NNNNSS with suffix 00-04, block group 1-9; fids from 1.
    let mut seen = HashSet::new();
    for (i, b) in blocks.iter().enumerate() {
        let g = &b[1];
        assert!(
            g.len() == 15 && g.bytes().all(|c| c.is_ascii_digit()),
            "{g}"
        );
        assert!(county_ids.contains(&g[..5]), "{g}: no such county");
        assert!(seen.insert(g.clone()), "{g} repeated");
        let basic: u32 = g[5..9].parse().unwrap();
        let suffix: u32 = g[9..11].parse().unwrap();
        assert!(basic >= 1 && suffix <= 4, "{g}: tract");
        assert!(g.as_bytes()[11] != b'0', "{g}: block group 0");
        assert_eq!(b[0], (i + 1).to_string(), "block fids count from 1");
    }

    // Every state tiles exactly (the states are apart, so the whole
    // country is checked at once); rural blocks may have thousands of
    // vertices.
    check_tiling(&counties, &blocks, 41..=9000);
    let most = blocks
        .iter()
        .map(|b| wkt::parse(&b[4]).unwrap().vertex_count())
        .max()
        .unwrap();
    assert!(most >= 1000, "the largest block has {most} vertices");

    // Parks of 100,000-400,000 vertices, valid and simple.
    let mut heavy = 0;
    for p in &parks {
        let g = wkt::parse(&p[3]).unwrap();
        let n = g.vertex_count();
        assert!(n <= 400_000, "park {} has {n} vertices", p[1]);
        if n >= 100_000 {
            validate(&g, 4326, &Never).unwrap();
            for r in rings(&g) {
                assert!(ring_is_simple(r), "park {} crosses itself", p[1]);
            }
            heavy += 1;
        }
    }
    assert!(heavy >= 3, "{heavy} parks of 100,000 vertices or more");

    // Ids unique across states.
    for (rows, col, t) in [
        (&parks, 1, "parks"),
        (&rec, 1, "rec_sites"),
        (&fit, 1, "fitness_list"),
    ] {
        let mut ids = HashSet::new();
        for (i, r) in rows.iter().enumerate() {
            assert!(ids.insert(r[col].clone()), "{t}: {} repeated", r[col]);
            assert_eq!(r[0], (i + 1).to_string(), "{t}: fids count from 1");
        }
    }

    // Remote islands: every block of the states south of latitude 27 is
    // more than 500 km from every park and facility. Any path between two
    // parallels is at least as long as the meridian arc between them
    // (common geometry, from memory), computed here with geographiclib-rs.
    let mut remote_states = HashSet::new();
    let mut remote_north = f64::NEG_INFINITY;
    for b in &blocks {
        let (_, hi) = lat_range(&wkt::parse(&b[4]).unwrap());
        if hi < 27.0 {
            remote_states.insert(b[1][..2].to_string());
            remote_north = remote_north.max(hi);
        }
    }
    assert!(remote_states.len() >= 3, "remote states {remote_states:?}");
    let mut feature_south = f64::INFINITY;
    for (rows, col) in [(&parks, 3), (&rec, 4), (&fit, 6)] {
        for r in rows.iter().filter(|r| !r[col].is_empty()) {
            feature_south = feature_south.min(lat_range(&wkt::parse(&r[col]).unwrap()).0);
        }
    }
    let arc = geographiclib_rs::Geodesic::wgs84();
    let gap: f64 = geographiclib_rs::InverseGeodesic::inverse(
        &arc,
        remote_north,
        -140.0,
        feature_south,
        -140.0,
    );
    assert!(
        gap > 500_000.0,
        "remote blocks reach {remote_north}, features {feature_south}: {gap} m"
    );

    // Block (and so facility) density varies by more than two orders of
    // magnitude between counties: blocks per km^2 of county.
    let mut per_county: HashMap<&str, usize> = HashMap::new();
    for b in &blocks {
        *per_county.entry(&b[1][..5]).or_default() += 1;
    }
    let densities: Vec<f64> = counties
        .iter()
        .map(|c| per_county[c[1].as_str()] as f64 / geometry_area(&wkt::parse(&c[3]).unwrap()))
        .collect();
    let (lo, hi) = densities
        .iter()
        .fold((f64::INFINITY, 0f64), |(l, h), &d| (l.min(d), h.max(d)));
    assert!(
        hi / lo > 100.0,
        "county block densities {lo} to {hi} per m2"
    );
}

#[test]
fn national_country_is_the_same_on_one_or_two_threads() {
    let one = run_generator(&["--national"], 12_000, 4, "nat-one", Some(1));
    let two = run_generator(&["--national"], 12_000, 4, "nat-two", Some(2));
    let other = run_generator(
        &["--blocks", "national", "--national"],
        12_000,
        5,
        "nat-other",
        Some(2),
    );
    for t in TABLES {
        let file = format!("{t}.csv");
        let x = std::fs::read(one.0.join(&file)).unwrap();
        let y = std::fs::read(two.0.join(&file)).unwrap();
        assert!(x == y, "{file} differs between one and two threads");
    }
    let x = std::fs::read(one.0.join("blocks.csv")).unwrap();
    let z = std::fs::read(other.0.join("blocks.csv")).unwrap();
    assert!(x != z, "seeds 4 and 5 gave the same national blocks");
}
