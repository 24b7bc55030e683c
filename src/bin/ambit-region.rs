//! `ambit-region`: writes the invented region used for ambit's demo database
//! and for state-size benchmarks.
//!
//! Everything it writes is invented. The region is an imaginary state (state
//! code 99) placed over the open Pacific, centred near longitude -131.0,
//! latitude 38.5, so that no real place is described: a ragged coast on the
//! west, an offshore island, straight state lines on the north, east and
//! south, six counties, four urban cores, and these tables:
//!
//! - `counties`: census-style 5-character GEOIDs (state + county), invented
//!   names, MULTIPOLYGON, each exactly the union of its blocks;
//! - `blocks`: 15-character GEOIDs (state 2 + county 3 + tract 6 + block 4),
//!   population, a water flag, POLYGON of about 40 vertices. The blocks tile
//!   the land exactly: neighbours share their boundary vertex for vertex, and
//!   blocks are smaller in the urban cores;
//! - `parks`: POLYGON or MULTIPOLYGON, some with a pond (hole), one large
//!   coastal forest with tens of thousands of vertices, one across a county
//!   line and one just across the state line;
//! - `rec_sites` (a registry of recreation sites) and `fitness_list` (a
//!   licensing list, with other column names, coordinates to 1e-6 degree,
//!   about 5% of its entries repeating a registry site 3-18 m away under an
//!   upper-case name, and about 1% never geocoded: NULL lon, lat and geom),
//!   POINT; together about one facility per 100 blocks;
//! - `urban_areas`: MULTIPOLYGON per urban core, exactly unions of blocks
//!   (the urban blocks are those with 20-400 residents, or none);
//! - `groceries`: food stores (store_id, name, kind: supermarket,
//!   supercenter, large grocery store, or convenience store), POINT, about
//!   one per 3,600 urban and one per 1,000 rural residents, placed in
//!   blocks with a chance proportional to their population, so rural
//!   stretches may have none;
//! - `clinics`: primary-care clinics (clinic_id, name, providers: full-time
//!   equivalent providers 0.5-20, skewed low, about 3% NULL for unknown),
//!   POINT, one per 10,000 residents plus a few in blocks on county lines;
//! - `hazard_sites`: pollution sources (site_id, name, kind: chemical
//!   storage, fuel terminal, wastewater plant, landfill, rail yard), POINT,
//!   or POLYGON footprints for most landfills and rail yards in large
//!   enough blocks;
//! - `libraries`: (library_id, name, branch_type: central, branch or
//!   bookmobile stop), POINT: one central library per county (in its
//!   densest block), branches by population, bookmobile stops in rural
//!   blocks.
//!
//! Every point of the last four tables lies in the inner part of a land
//! block (never a lake), and every footprint inside it, so all of them are
//! on land within the counties. Their random choices use hash tags of
//! their own: the other tables are the same with or without them.
//!
//! How the blocks are made: a grid of coarse (rural) cells over the box,
//! each cell of land split as a quadtree where the density of the urban
//! cores asks for it (down to 1/256 of a rural block). Every side between
//! two lattice corners is a polyline of 10 segments: the corners are
//! jittered, the side meanders a little, and a side whose neighbour is
//! split is made of its two halves' polylines. Both blocks along a side
//! compute the same polyline, so the tiling has no gaps and no overlaps.
//! Counties (nearest of six seed points on a warped plane, per coarse cell)
//! and urban areas are traced from the block sides along their edges.
//!
//! Usage:
//!
//! ```text
//! cargo build --release
//! target/release/ambit-region --blocks 30000 --seed 1 --out /tmp/region
//! sqlite3 region.gpkg '.load target/release/libambit' '.read /tmp/region/load.sql'
//! ```
//!
//! `demo-db/build-region 30000 1 region.gpkg` does both steps. `--blocks` is
//! the target number of blocks, 1000 to 1,000,000 (the result lands within
//! about 1%; default 30000; below a few thousand the shapes get coarse and
//! the island may merge with the coast), `--seed` any unsigned 64-bit
//! integer (default 1). 400,000 blocks take a few seconds and little memory:
//! rows are streamed to the files.
//!
//! The output directory receives one CSV file per table (header row, RFC 4180
//! quoting, CRLF line ends, geometry as WKT written by `ambit::blob::wkt`)
//! and `load.sql`, a script for the stock `sqlite3` shell with ambit loaded
//! that builds a GeoPackage (OGC 12-128) from them. Coordinates are quantized
//! to 1e-7 degree (about 1 cm) and written in their shortest round-trip form,
//! so the database holds exactly the numbers of the CSV files.
//!
//! Determinism: the same `--blocks`, `--seed` and build give byte-identical
//! CSV files. Every random choice is a hash of the seed and of the integer
//! position of what it decides (a lattice corner, a block), so shared block
//! boundaries are computed once per neighbour with identical results. The
//! layout (coast, counties, urban cores) is fixed; the seed moves every
//! detail. `load.sql` also names the output directory. Given the same
//! statements the sqlite3 shell writes the same database file, so
//! `demo-db/build-region` gives byte-identical GeoPackages too (checked by
//! tests/region.rs); `gpkg_contents.last_change` is fixed for that reason.

use ambit::blob::gpkg_tables;
use ambit::blob::wkt;
use ambit::geometry::{Dimensions, Geometry, Shape};
use std::collections::HashMap;
use std::fmt::Write as _;
use std::fs::File;
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::time::Instant;

// ----------------------------------------------------------------------
// The fixed layout (all invented)
// ----------------------------------------------------------------------

/// The state's bounding box, degrees. Its west part is ocean.
const LON_WEST: f64 = -132.5;
const LON_EAST: f64 = -129.5;
const LAT_SOUTH: f64 = 37.4;
const LAT_NORTH: f64 = 39.6;

/// The state code. 99 is assigned to no state or territory in the census
/// state codes (from memory), so the GEOIDs cannot be mistaken for a real
/// place's.
const STATE: &str = "99";

/// Kilometres per degree of latitude and of longitude at latitude 38.5,
/// spherical approximations used only to size and place invented features
/// (never to measure).
const KM_PER_DEG_LAT: f64 = 110.95;
const KM_PER_DEG_LON: f64 = 87.12;

struct CountyDef {
    /// Census-style county code: odd numbers, 3 digits.
    code: &'static str,
    name: &'static str,
    /// Seed point of the county's region (nearest seed wins).
    lon: f64,
    lat: f64,
}

const COUNTIES: [CountyDef; 6] = [
    CountyDef {
        code: "001",
        name: "Alder",
        lon: -131.75,
        lat: 39.15,
    },
    CountyDef {
        code: "003",
        name: "Brackwater",
        lon: -130.95,
        lat: 39.05,
    },
    CountyDef {
        code: "005",
        name: "Cinder Hill",
        lon: -130.05,
        lat: 39.05,
    },
    CountyDef {
        code: "007",
        name: "Dunmore",
        lon: -131.8,
        lat: 38.0,
    },
    CountyDef {
        code: "009",
        name: "Elkhorn",
        lon: -130.95,
        lat: 37.95,
    },
    CountyDef {
        code: "011",
        name: "Fallow",
        lon: -130.05,
        lat: 38.0,
    },
];

struct CoreDef {
    name: &'static str,
    lon: f64,
    lat: f64,
    /// Blocks per unit area at the centre, relative to the rural density.
    peak: f64,
    /// Gaussian radius of the density bump, km.
    sigma_km: f64,
}

const CORES: [CoreDef; 4] = [
    CoreDef {
        name: "Saltmere",
        lon: -131.9,
        lat: 38.95,
        peak: 256.0,
        sigma_km: 9.0,
    },
    CoreDef {
        name: "Tarrow Crossing",
        lon: -130.75,
        lat: 38.35,
        peak: 160.0,
        sigma_km: 8.0,
    },
    CoreDef {
        name: "Quillby",
        lon: -130.05,
        lat: 39.2,
        peak: 90.0,
        sigma_km: 6.0,
    },
    CoreDef {
        name: "Vellin Ford",
        lon: -131.25,
        lat: 37.85,
        peak: 70.0,
        sigma_km: 6.0,
    },
];

/// Points whose block is a lake (water-only block), in rural land.
const LAKES: [(f64, f64); 2] = [(-130.4, 38.75), (-131.45, 38.45)];

/// The offshore island: centre and semi-axes, degrees.
const ISLAND: (f64, f64, f64, f64) = (-132.36, 38.3, 0.11, 0.08);

/// The large coastal forest park runs along the coast between these
/// latitudes.
const FOREST_LATS: (f64, f64) = (37.5, 38.15);

/// Longitude of the invented coastline at latitude `lat` (land lies east):
/// smooth steps between knots plus a small ripple.
fn coast_lon(lat: f64) -> f64 {
    const KNOTS: [(f64, f64); 8] = [
        (37.4, -132.15),
        (37.7, -132.2),
        (38.0, -132.12),
        (38.3, -132.0),
        (38.6, -132.12),
        (38.9, -132.17),
        (39.2, -132.05),
        (39.6, -132.2),
    ];
    let ripple = 0.012 * ((lat - LAT_SOUTH) * 31.0).sin() + 0.02 * ((lat - LAT_SOUTH) * 9.0).sin();
    for w in KNOTS.windows(2) {
        let ((y0, x0), (y1, x1)) = (w[0], w[1]);
        if lat <= y1 {
            let t = ((lat - y0) / (y1 - y0)).clamp(0.0, 1.0);
            let s = t * t * (3.0 - 2.0 * t);
            return x0 + (x1 - x0) * s + ripple;
        }
    }
    KNOTS[KNOTS.len() - 1].1 + ripple
}

fn in_island(lon: f64, lat: f64) -> bool {
    let (cx, cy, a, b) = ISLAND;
    let (u, v) = ((lon - cx) / a, (lat - cy) / b);
    u * u + v * v <= 1.0
}

/// Relative block density: 1 in the country, up to `peak` + 1 in a core.
fn density(lon: f64, lat: f64) -> f64 {
    1.0 + CORES
        .iter()
        .map(|c| {
            let dx = (lon - c.lon) * KM_PER_DEG_LON;
            let dy = (lat - c.lat) * KM_PER_DEG_LAT;
            c.peak * (-(dx * dx + dy * dy) / (c.sigma_km * c.sigma_km)).exp()
        })
        .sum::<f64>()
}

fn nearest_core(lon: f64, lat: f64) -> usize {
    let mut best = (f64::INFINITY, 0);
    for (i, c) in CORES.iter().enumerate() {
        let dx = (lon - c.lon) * KM_PER_DEG_LON;
        let dy = (lat - c.lat) * KM_PER_DEG_LAT;
        let d = (dx * dx + dy * dy) / (c.sigma_km * c.sigma_km);
        if d < best.0 {
            best = (d, i);
        }
    }
    best.1
}

/// The county whose seed is nearest, measured on a gently warped plane so
/// that county lines wander.
fn nearest_county(lon: f64, lat: f64) -> usize {
    let wx = lon + 0.14 * (lat * 7.1 + 0.4).sin() + 0.04 * (lat * 23.3).sin();
    let wy = lat + 0.12 * (lon * 6.3 + 1.3).sin() + 0.035 * (lon * 19.9).sin();
    let mut best = (f64::INFINITY, 0);
    for (i, c) in COUNTIES.iter().enumerate() {
        let dx = (wx - c.lon) * KM_PER_DEG_LON;
        let dy = (wy - c.lat) * KM_PER_DEG_LAT;
        let d = dx * dx + dy * dy;
        if d < best.0 {
            best = (d, i);
        }
    }
    best.1
}

// ----------------------------------------------------------------------
// Deterministic randomness
// ----------------------------------------------------------------------

const GOLDEN: u64 = 0x9e37_79b9_7f4a_7c15;

/// The SplitMix64 finaliser (Steele, Lea and Flood 2014): a bijective mix
/// of 64 bits.
fn mix(mut z: u64) -> u64 {
    z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
    z ^ (z >> 31)
}

/// A hash of the seed, a purpose tag and three integers.
fn hash(seed: u64, tag: u64, a: i64, b: i64, c: i64) -> u64 {
    let mut h = mix(seed ^ GOLDEN.wrapping_mul(tag + 1));
    for v in [a, b, c] {
        h = mix(h.wrapping_add(GOLDEN) ^ v as u64);
    }
    h
}

/// Uniform in [0, 1).
fn unit(h: u64) -> f64 {
    (h >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
}

/// Uniform in [-1, 1).
fn signed(h: u64) -> f64 {
    2.0 * unit(h) - 1.0
}

/// A SplitMix64 stream, started from a hash.
struct Rng(u64);

impl Rng {
    fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(GOLDEN);
        mix(self.0)
    }
    fn unit(&mut self) -> f64 {
        unit(self.next())
    }
    fn range(&mut self, lo: f64, hi: f64) -> f64 {
        lo + (hi - lo) * self.unit()
    }
    fn below(&mut self, n: usize) -> usize {
        (self.next() % n as u64) as usize
    }
    fn pick<'a>(&mut self, words: &[&'a str]) -> &'a str {
        words[self.below(words.len())]
    }
}

// Purpose tags of the hashes.
const TAG_CORNER: u64 = 1;
const TAG_SIDE: u64 = 2;
const TAG_POP: u64 = 3;
const TAG_PARK: u64 = 4;
const TAG_SITE: u64 = 5;
const TAG_SPECIAL: u64 = 6;
// Tags of the amenity tables (added later; the tables above never use
// them, so their rows do not depend on whether these tables are made).
const TAG_GROCERY: u64 = 7;
const TAG_CLINIC: u64 = 8;
const TAG_HAZARD: u64 = 9;
const TAG_LIBRARY: u64 = 10;

/// Degrees rounded to 1e-7 (about 1 cm): short text, exact round trip.
fn q7(v: f64) -> f64 {
    (v * 1e7).round() / 1e7
}

/// Degrees rounded to 1e-6, the precision of the licensing list.
fn q6(v: f64) -> f64 {
    (v * 1e6).round() / 1e6
}

// ----------------------------------------------------------------------
// Invented names
// ----------------------------------------------------------------------

const WORDS_A: [&str; 40] = [
    "Alder",
    "Aspen",
    "Birch",
    "Bramble",
    "Cedar",
    "Clover",
    "Copper",
    "Driftwood",
    "Elm",
    "Fern",
    "Flint",
    "Foxglove",
    "Garnet",
    "Hazel",
    "Heron",
    "Ivy",
    "Juniper",
    "Kestrel",
    "Larch",
    "Linden",
    "Maple",
    "Marsh",
    "Moss",
    "Nettle",
    "Oak",
    "Osprey",
    "Pine",
    "Quarry",
    "Reed",
    "Rowan",
    "Sage",
    "Sorrel",
    "Spruce",
    "Tamarack",
    "Thistle",
    "Umber",
    "Vale",
    "Willow",
    "Wren",
    "Yarrow",
];
const WORDS_B: [&str; 20] = [
    "Bend", "Brook", "Commons", "Creek", "Crossing", "Field", "Ford", "Glen", "Grove", "Hill",
    "Hollow", "Knoll", "Landing", "Meadow", "Point", "Ridge", "Run", "Terrace", "Valley", "Wood",
];
const PARK_KINDS: [&str; 6] = ["Park", "Park", "Green", "Playfield", "Commons", "Preserve"];
/// Registry activities and the word the site's name ends with.
const ACTIVITIES: [(&str, &str, &str); 8] = [
    ("swimming pool", "Pool", "aquatic center"),
    (
        "recreation center",
        "Recreation Center",
        "recreation center",
    ),
    ("sports fields", "Sports Fields", "sports club"),
    ("tennis courts", "Tennis Courts", "racquet club"),
    ("trailhead", "Trailhead", "outdoor recreation"),
    ("skate park", "Skate Park", "recreation center"),
    ("boat launch", "Boat Launch", "outdoor recreation"),
    ("community gym", "Community Gym", "fitness center"),
];
/// Licensing categories and the word the business name ends with.
const CATEGORIES: [(&str, &str); 8] = [
    ("fitness center", "Fitness"),
    ("yoga studio", "Yoga"),
    ("martial arts", "Martial Arts"),
    ("climbing gym", "Climbing"),
    ("dance studio", "Dance Studio"),
    ("boxing gym", "Boxing Club"),
    ("pilates studio", "Pilates"),
    ("aquatic club", "Swim Club"),
];

/// Food store kinds with the word the store's name ends with, and their
/// shares in urban and in rural blocks. The first three are the kinds the
/// food-access definitions count; convenience stores are listed too, as
/// store lists do, so that analyses have to filter them out.
const STORE_KINDS: [(&str, &str, f64, f64); 4] = [
    ("supermarket", "Market", 0.42, 0.40),
    ("supercenter", "Supercenter", 0.06, 0.08),
    ("large grocery store", "Grocery", 0.20, 0.22),
    ("convenience store", "Corner Store", 0.32, 0.30),
];
/// One food store per this many residents, in urban and in rural blocks
/// (rural stores serve more people each).
const URBAN_RESIDENTS_PER_STORE: f64 = 3600.0;
const RURAL_RESIDENTS_PER_STORE: f64 = 1000.0;
/// Clinic name endings.
const CLINIC_ENDINGS: [&str; 4] = [
    "Health Center",
    "Family Clinic",
    "Primary Care",
    "Medical Group",
];
/// One primary-care clinic per this many residents; a block on a county
/// line gets an extra chance of one, so that catchments cross counties.
const RESIDENTS_PER_CLINIC: f64 = 10_000.0;
const COUNTY_LINE_CLINIC: f64 = 0.03;
/// Hazard site kinds, the word their names end with, their shares in
/// rural and in urban blocks, and the chance that the site is drawn as its
/// footprint (POLYGON) when the block is large enough.
const HAZARD_KINDS: [(&str, &str, f64, f64, f64); 5] = [
    ("chemical storage", "Chemical Storage", 0.20, 0.32, 0.0),
    ("fuel terminal", "Fuel Terminal", 0.15, 0.28, 0.0),
    ("wastewater plant", "Wastewater Plant", 0.15, 0.25, 0.0),
    ("landfill", "Landfill", 0.30, 0.03, 0.75),
    ("rail yard", "Rail Yard", 0.20, 0.12, 0.70),
];
/// One library branch per this many residents; a populated rural block
/// is a bookmobile stop with this chance.
const RESIDENTS_PER_BRANCH: f64 = 40_000.0;
const BOOKMOBILE_STOP: f64 = 0.0015;

// ----------------------------------------------------------------------
// The block lattice
// ----------------------------------------------------------------------

/// Levels of refinement below a coarse (rural) cell: an urban block can be
/// 1/4^LMAX of a rural one.
const LMAX: u32 = 4;
/// Finest lattice units per coarse cell side.
const FINE: i64 = 1 << LMAX;
/// Blocks at this level or finer are urban.
const URBAN_LEVEL: u32 = 2;
/// Segments per atomic side: four sides give 40 vertices per block.
const SIDE_SEGMENTS: usize = 10;
/// Corner jitter, fraction of the smallest adjacent block side.
const CORNER_JITTER: f64 = 0.15;
/// Side meander, fraction of the side length.
const SIDE_MEANDER: f64 = 0.06;

/// One block: a leaf of the quadtree under a coarse cell. `x`, `y` are its
/// south-west corner in finest lattice units; its side is `FINE >> level`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
struct Leaf {
    level: u32,
    x: i64,
    y: i64,
}

impl Leaf {
    fn size(self) -> i64 {
        FINE >> self.level
    }
}

/// A lattice point, finest units.
type Pt = (i64, i64);

/// Bit offset of level `l` in a refinement mask: (4^l - 1) / 3.
fn level_offset(l: u32) -> u32 {
    ((1u32 << (2 * l)) - 1) / 3
}

/// Coarse cells over the box: which county each belongs to (0 = sea) and
/// how each is refined into blocks.
struct Grid {
    seed: u64,
    nx: i64,
    ny: i64,
    w: i64,
    h: i64,
    dlon: f64,
    dlat: f64,
    county: Vec<u8>,
    /// Bit `level_offset(l) + ly * 2^l + lx` set: the level-`l` node at
    /// (lx, ly) in the coarse cell is split into four.
    refine: Vec<u128>,
}

impl Grid {
    fn new(seed: u64, nx: i64, ny: i64) -> Grid {
        let (w, h) = (nx * FINE, ny * FINE);
        let mut g = Grid {
            seed,
            nx,
            ny,
            w,
            h,
            dlon: (LON_EAST - LON_WEST) / w as f64,
            dlat: (LAT_NORTH - LAT_SOUTH) / h as f64,
            county: vec![0; (nx * ny) as usize],
            refine: vec![0; (nx * ny) as usize],
        };
        for cy in 0..ny {
            for cx in 0..nx {
                let (lon, lat) = g.lonlat((cx * FINE) as f64 + 8.0, (cy * FINE) as f64 + 8.0);
                let land = cx >= 1 && (lon > coast_lon(lat) || in_island(lon, lat));
                if !land {
                    continue;
                }
                let i = (cy * nx + cx) as usize;
                g.county[i] = 1 + nearest_county(lon, lat) as u8;
                g.refine[i] = g.mask(cx, cy, 0, 0, 0);
            }
        }
        g
    }

    /// Refinement bits of the subtree of node (lx, ly) at `level` in coarse
    /// cell (cx, cy): a node splits when the density at its centre exceeds
    /// 2 * 4^level, i.e. when log4(density) > level + 1/2.
    fn mask(&self, cx: i64, cy: i64, level: u32, lx: i64, ly: i64) -> u128 {
        if level >= LMAX {
            return 0;
        }
        let size = FINE >> level;
        let half = size as f64 / 2.0;
        let (lon, lat) = self.lonlat(
            (cx * FINE + lx * size) as f64 + half,
            (cy * FINE + ly * size) as f64 + half,
        );
        if density(lon, lat) <= 2.0 * 4f64.powi(level as i32) {
            return 0;
        }
        let bit = level_offset(level) + (ly as u32) * (1 << level) + lx as u32;
        let mut m = 1u128 << bit;
        for (i, j) in [(0, 0), (1, 0), (0, 1), (1, 1)] {
            m |= self.mask(cx, cy, level + 1, 2 * lx + i, 2 * ly + j);
        }
        m
    }

    /// Longitude and latitude of a point in (fractional) lattice units.
    fn lonlat(&self, fx: f64, fy: f64) -> (f64, f64) {
        (LON_WEST + fx * self.dlon, LAT_SOUTH + fy * self.dlat)
    }

    fn cell_index(&self, fx: i64, fy: i64) -> Option<usize> {
        if fx < 0 || fy < 0 || fx >= self.w || fy >= self.h {
            return None;
        }
        let i = ((fy >> LMAX) * self.nx + (fx >> LMAX)) as usize;
        (self.county[i] != 0).then_some(i)
    }

    fn refined(&self, cell: usize, level: u32, fx: i64, fy: i64) -> bool {
        let s = LMAX - level;
        let (lx, ly) = ((fx & (FINE - 1)) >> s, (fy & (FINE - 1)) >> s);
        let bit = level_offset(level) + (ly as u32) * (1 << level) + lx as u32;
        self.refine[cell] >> bit & 1 == 1
    }

    /// The block holding the finest cell (fx, fy), if it is land.
    fn leaf_at(&self, fx: i64, fy: i64) -> Option<Leaf> {
        let cell = self.cell_index(fx, fy)?;
        let mut level = 0;
        while level < LMAX && self.refined(cell, level, fx, fy) {
            level += 1;
        }
        let size = FINE >> level;
        Some(Leaf {
            level,
            x: fx & !(size - 1),
            y: fy & !(size - 1),
        })
    }

    /// 1-based county of a land position, 0 for sea or outside.
    fn county_at(&self, fx: i64, fy: i64) -> u8 {
        self.cell_index(fx, fy).map_or(0, |i| self.county[i])
    }

    /// Whether the aligned level-`level` cell with south-west corner (x, y)
    /// is split into smaller blocks.
    fn subdivided(&self, level: u32, x: i64, y: i64) -> bool {
        self.leaf_at(x, y).is_some_and(|l| l.level > level)
    }

    fn leaf_center(&self, leaf: Leaf) -> (f64, f64) {
        let half = leaf.size() as f64 / 2.0;
        self.lonlat(leaf.x as f64 + half, leaf.y as f64 + half)
    }

    fn urban_core(&self, leaf: Leaf) -> Option<usize> {
        (leaf.level >= URBAN_LEVEL).then(|| {
            let (lon, lat) = self.leaf_center(leaf);
            nearest_core(lon, lat)
        })
    }

    /// A lattice corner moved by a random fraction of the smallest block
    /// touching it, in lattice units. Corners on the box stay on it, so the
    /// state lines are straight.
    fn corner(&self, p: Pt) -> (f64, f64) {
        let (x, y) = p;
        let mut level = 0;
        for (dx, dy) in [(-1, -1), (0, -1), (-1, 0), (0, 0)] {
            if let Some(l) = self.leaf_at(x + dx, y + dy) {
                level = level.max(l.level);
            }
        }
        let amp = CORNER_JITTER * (FINE >> level) as f64;
        let r = hash(self.seed, TAG_CORNER, x, y, 0);
        let jx = if x == 0 || x == self.w {
            0.0
        } else {
            amp * signed(r)
        };
        let jy = if y == 0 || y == self.h {
            0.0
        } else {
            amp * signed(mix(r))
        };
        (x as f64 + jx, y as f64 + jy)
    }

    /// Quantized longitude and latitude of lattice coordinates.
    fn vertex(&self, fx: f64, fy: f64) -> [f64; 2] {
        let (lon, lat) = self.lonlat(fx, fy);
        [q7(lon), q7(lat)]
    }

    /// The vertices of the atomic side from `p` to `q` (both lattice
    /// corners), ends included, in the direction p -> q. The polyline is
    /// computed in one canonical direction and reversed when needed, so the
    /// two blocks along a side get exactly the same vertices.
    fn side_vertices(&self, p: Pt, q: Pt) -> Vec<[f64; 2]> {
        let (a, b) = if p <= q { (p, q) } else { (q, p) };
        let horizontal = a.1 == b.1;
        let on_box = if horizontal {
            a.1 == 0 || a.1 == self.h
        } else {
            a.0 == 0 || a.0 == self.w
        };
        let (ax, ay) = self.corner(a);
        let (bx, by) = self.corner(b);
        let len = (b.0 - a.0) + (b.1 - a.1);
        let r = hash(self.seed, TAG_SIDE, a.0 * 2 + horizontal as i64, a.1, len);
        let c = [signed(r), signed(mix(r)), signed(mix(mix(r)))];
        let mut out = Vec::with_capacity(SIDE_SEGMENTS + 1);
        out.push(self.vertex(ax, ay));
        for k in 1..SIDE_SEGMENTS {
            let t = k as f64 / SIDE_SEGMENTS as f64;
            let u = 2.0 * t - 1.0;
            // A smooth bump, zero at both ends, at most 1 in size.
            let f = if on_box {
                0.0
            } else {
                4.0 * t * (1.0 - t) * (c[0] + c[1] * u + c[2] * (u * u - 1.0 / 3.0)) / (8.0 / 3.0)
            };
            let (dx, dy) = (bx - ax, by - ay);
            let off = SIDE_MEANDER * f;
            out.push(self.vertex(ax + t * dx - off * dy, ay + t * dy + off * dx));
        }
        out.push(self.vertex(bx, by));
        if (a, b) != (p, q) {
            out.reverse();
        }
        out
    }

    /// The atomic sides of the side from `p` to `q` at `level`: a side is
    /// split in two when the block on either side of it is split.
    fn split_side(&self, level: u32, p: Pt, q: Pt, out: &mut Vec<(Pt, Pt)>) {
        let s = FINE >> level;
        let (x0, y0) = (p.0.min(q.0), p.1.min(q.1));
        let split = level < LMAX
            && if p.1 == q.1 {
                self.subdivided(level, x0, y0 - s) || self.subdivided(level, x0, y0)
            } else {
                self.subdivided(level, x0 - s, y0) || self.subdivided(level, x0, y0)
            };
        if split {
            let m = ((p.0 + q.0) / 2, (p.1 + q.1) / 2);
            self.split_side(level + 1, p, m, out);
            self.split_side(level + 1, m, q, out);
        } else {
            out.push((p, q));
        }
    }

    /// The atomic sides of a block, counter-clockwise from its south-west
    /// corner.
    fn block_sides(&self, leaf: Leaf) -> Vec<(Pt, Pt)> {
        let s = leaf.size();
        let (x, y) = (leaf.x, leaf.y);
        let corners = [(x, y), (x + s, y), (x + s, y + s), (x, y + s)];
        let mut out = Vec::with_capacity(8);
        for i in 0..4 {
            self.split_side(leaf.level, corners[i], corners[(i + 1) % 4], &mut out);
        }
        out
    }

    /// A finest cell just to the right of the side p -> q (outside a block
    /// that runs counter-clockwise).
    fn right_of(p: Pt, q: Pt) -> Pt {
        let (x0, y0) = (p.0.min(q.0), p.1.min(q.1));
        match (q.0 - p.0).signum() + 2 * (q.1 - p.1).signum() {
            1 => (x0, y0 - 1),  // eastwards: below
            -1 => (x0, y0),     // westwards: above
            2 => (p.0, y0),     // northwards: east
            _ => (p.0 - 1, y0), // southwards: west
        }
    }

    fn count_leaves(&self) -> usize {
        fn rec(m: u128, level: u32, lx: u32, ly: u32) -> usize {
            if level >= LMAX {
                return 1;
            }
            let bit = level_offset(level) + ly * (1 << level) + lx;
            if m >> bit & 1 == 0 {
                return 1;
            }
            [(0, 0), (1, 0), (0, 1), (1, 1)]
                .iter()
                .map(|&(i, j)| rec(m, level + 1, 2 * lx + i, 2 * ly + j))
                .sum()
        }
        self.county
            .iter()
            .zip(&self.refine)
            .filter(|(c, _)| **c != 0)
            .map(|(_, &m)| rec(m, 0, 0, 0))
            .sum()
    }
}

/// The grid whose block count is nearest `target`: the coarse cell size is
/// scaled by the square root of the miss a few times.
fn calibrate(seed: u64, target: usize) -> Grid {
    let width_km = (LON_EAST - LON_WEST) * KM_PER_DEG_LON;
    let height_km = (LAT_NORTH - LAT_SOUTH) * KM_PER_DEG_LAT;
    // First guess: about 3 blocks per coarse cell over 55,000 km^2 of land.
    let mut cell_km = (165_000.0 / target as f64).sqrt();
    let mut best: Option<(usize, Grid)> = None;
    for _ in 0..5 {
        let nx = ((width_km / cell_km).round() as i64).max(8);
        let ny = ((height_km / cell_km).round() as i64).max(8);
        let g = Grid::new(seed, nx, ny);
        let n = g.count_leaves();
        let miss = n.abs_diff(target);
        cell_km *= (n as f64 / target as f64).sqrt();
        if best.as_ref().is_none_or(|(m, _)| miss < *m) {
            best = Some((miss, g));
        }
        if miss * 200 < target {
            break;
        }
    }
    best.expect("at least one grid").1
}

// ----------------------------------------------------------------------
// Tracts: nodes of the lattice above and below the coarse cells
// ----------------------------------------------------------------------

/// A node of the lattice hierarchy: level < 0 groups 2^-level x 2^-level
/// coarse cells, level 0 is a coarse cell, level > 0 a quadtree node in one.
#[derive(Clone, Copy)]
struct Node {
    level: i32,
    x: i64,
    y: i64,
}

/// Tracts start as 8 x 8 coarse cells.
const TRACT_TOP: i32 = -3;
/// A tract splits above this population or block count.
const TRACT_MAX_POP: u64 = 8000;
const TRACT_MAX_BLOCKS: usize = 900;

impl Node {
    fn size(self) -> i64 {
        if self.level >= 0 {
            FINE >> self.level
        } else {
            FINE << -self.level
        }
    }

    fn children(self) -> [Node; 4] {
        let h = self.size() / 2;
        [(0, 0), (1, 0), (0, 1), (1, 1)].map(|(i, j)| Node {
            level: self.level + 1,
            x: self.x + i * h,
            y: self.y + j * h,
        })
    }
}

impl Grid {
    /// Whether the node is split in the block quadtree (always above the
    /// coarse cells).
    fn node_split(&self, n: Node) -> bool {
        if n.level < 0 {
            return true;
        }
        let level = n.level as u32;
        level < LMAX
            && self
                .cell_index(n.x, n.y)
                .is_some_and(|c| self.refined(c, level, n.x, n.y))
    }

    /// The blocks of `county` (1-based) under node `n`, in Z order.
    fn leaves(&self, n: Node, county: u8, out: &mut Vec<Leaf>) {
        if n.x >= self.w || n.y >= self.h {
            return;
        }
        if n.level >= 0 && self.county_at(n.x, n.y) != county {
            return;
        }
        if self.node_split(n) {
            for c in n.children() {
                self.leaves(c, county, out);
            }
        } else {
            out.push(Leaf {
                level: n.level as u32,
                x: n.x,
                y: n.y,
            });
        }
    }
}

// ----------------------------------------------------------------------
// Output
// ----------------------------------------------------------------------

/// A CSV file (RFC 4180: CRLF line ends, fields with commas, quotes or line
/// breaks in double quotes, quotes doubled).
struct Csv {
    out: BufWriter<File>,
    rows: u64,
}

impl Csv {
    fn create(dir: &Path, name: &str, header: &[&str]) -> std::io::Result<Csv> {
        let path = dir.join(name);
        let mut csv = Csv {
            out: BufWriter::with_capacity(1 << 20, File::create(path)?),
            rows: 0,
        };
        csv.write(header)?;
        csv.rows = 0;
        Ok(csv)
    }

    fn write(&mut self, fields: &[&str]) -> std::io::Result<()> {
        for (i, f) in fields.iter().enumerate() {
            if i > 0 {
                self.out.write_all(b",")?;
            }
            if f.contains([',', '"', '\r', '\n']) {
                self.out.write_all(b"\"")?;
                self.out.write_all(f.replace('"', "\"\"").as_bytes())?;
                self.out.write_all(b"\"")?;
            } else {
                self.out.write_all(f.as_bytes())?;
            }
        }
        self.out.write_all(b"\r\n")?;
        self.rows += 1;
        Ok(())
    }

    fn finish(mut self) -> std::io::Result<u64> {
        self.out.flush()?;
        Ok(self.rows)
    }
}

/// The XY extent of a table.
#[derive(Clone, Copy)]
struct Extent {
    min_x: f64,
    min_y: f64,
    max_x: f64,
    max_y: f64,
}

impl Extent {
    const EMPTY: Extent = Extent {
        min_x: f64::INFINITY,
        min_y: f64::INFINITY,
        max_x: f64::NEG_INFINITY,
        max_y: f64::NEG_INFINITY,
    };

    fn add(&mut self, g: &Geometry) {
        g.for_each_xy(&mut |x, y| {
            self.min_x = self.min_x.min(x);
            self.min_y = self.min_y.min(y);
            self.max_x = self.max_x.max(x);
            self.max_y = self.max_y.max(y);
        });
    }
}

fn polygon(rings: Vec<Vec<f64>>) -> Geometry {
    Geometry::new(Dimensions::Xy, Shape::Polygon(rings))
}

fn flatten(points: &[[f64; 2]]) -> Vec<f64> {
    points.iter().flatten().copied().collect()
}

/// A boundary side of a county or urban area, with the region on its left.
struct BoundarySide {
    from: Pt,
    to: Pt,
    /// Vertices from `from`, excluding `to`.
    points: Vec<[f64; 2]>,
    /// The 1-based county on the right (0: none); for urban areas unused.
    other: u8,
}

/// Chains boundary sides into closed rings (interleaved lon, lat). Where a
/// region touches itself at a corner, the ring turns left (keeps the region
/// close on its left), so rings touch there but never cross.
fn trace(sides: &[BoundarySide]) -> Vec<Vec<f64>> {
    let mut starts: HashMap<Pt, Vec<usize>> = HashMap::new();
    for (i, s) in sides.iter().enumerate() {
        starts.entry(s.from).or_default().push(i);
    }
    let dir = |s: &BoundarySide| ((s.to.0 - s.from.0).signum(), (s.to.1 - s.from.1).signum());
    let mut used = vec![false; sides.len()];
    let mut rings = Vec::new();
    for first in 0..sides.len() {
        if used[first] {
            continue;
        }
        let mut ring: Vec<f64> = Vec::new();
        let mut cur = first;
        loop {
            used[cur] = true;
            ring.extend(sides[cur].points.iter().flatten());
            let (dx, dy) = dir(&sides[cur]);
            let at = sides[cur].to;
            let candidates = &starts[&at];
            // Left, straight, right.
            let mut next = None;
            'turns: for want in [(-dy, dx), (dx, dy), (dy, -dx)] {
                for &c in candidates {
                    if (c == first || !used[c]) && dir(&sides[c]) == want {
                        next = Some(c);
                        break 'turns;
                    }
                }
            }
            match next {
                Some(n) if n == first => break,
                Some(n) => cur = n,
                None => unreachable!("a boundary is always closed"),
            }
        }
        close(&mut ring);
        rings.push(ring);
    }
    rings
}

/// Twice the signed planar area of a closed ring (counter-clockwise > 0).
fn shoelace(ring: &[f64]) -> f64 {
    ring.chunks_exact(2)
        .zip(ring.chunks_exact(2).skip(1))
        .map(|(a, b)| (a[0] - b[0]) * (a[1] + b[1]))
        .sum::<f64>()
}

fn ring_contains(ring: &[f64], x: f64, y: f64) -> bool {
    let mut inside = false;
    for (a, b) in ring.chunks_exact(2).zip(ring.chunks_exact(2).skip(1)) {
        if (a[1] > y) != (b[1] > y) && x < a[0] + (y - a[1]) / (b[1] - a[1]) * (b[0] - a[0]) {
            inside = !inside;
        }
    }
    inside
}

/// Rings of one region as a MULTIPOLYGON: counter-clockwise rings are
/// exteriors, clockwise ones holes of the smallest exterior around them.
fn multipolygon(rings: Vec<Vec<f64>>) -> Geometry {
    let (mut outer, mut holes): (Vec<_>, Vec<_>) =
        rings.into_iter().partition(|r| shoelace(r) > 0.0);
    outer.sort_by(|a, b| (a[1], a[0]).partial_cmp(&(b[1], b[0])).expect("finite"));
    holes.sort_by(|a, b| (a[1], a[0]).partial_cmp(&(b[1], b[0])).expect("finite"));
    let mut polys: Vec<Vec<Vec<f64>>> = outer.into_iter().map(|r| vec![r]).collect();
    for hole in holes {
        // The middle of the hole's first edge is on no other ring.
        let (x, y) = ((hole[0] + hole[2]) / 2.0, (hole[1] + hole[3]) / 2.0);
        let owner = (0..polys.len())
            .filter(|&i| ring_contains(&polys[i][0], x, y))
            .min_by(|&i, &j| {
                shoelace(&polys[i][0])
                    .partial_cmp(&shoelace(&polys[j][0]))
                    .expect("finite")
            });
        if let Some(i) = owner {
            polys[i].push(hole);
        }
    }
    Geometry::new(Dimensions::Xy, Shape::MultiPolygon(polys))
}

// ----------------------------------------------------------------------
// The generator
// ----------------------------------------------------------------------

#[derive(Default)]
struct Stats {
    blocks: u64,
    urban_blocks: u64,
    zero_pop: u64,
    water: u64,
    population: u64,
    tracts: u64,
    max_block_vertices: usize,
    parks_with_holes: u64,
    multi_parks: u64,
    duplicates: u64,
    no_coordinates: u64,
    convenience: u64,
    unknown_capacity: u64,
    county_line_clinics: u64,
    footprints: u64,
}

/// A library waiting to be written: the central libraries are known only
/// when every block has been seen, and are written first.
struct LibraryRow {
    name: String,
    branch_type: &'static str,
    lon: f64,
    lat: f64,
}

struct Generator<'a> {
    g: &'a Grid,
    seed: u64,
    lakes: Vec<Leaf>,
    blocks: Csv,
    parks: Csv,
    rec: Csv,
    fitness: Csv,
    groceries: Csv,
    clinics: Csv,
    hazards: Csv,
    libraries: Vec<LibraryRow>,
    /// Per county, its densest land block (density at the block centre,
    /// the block), where the central library goes.
    densest: Vec<Option<(f64, Leaf)>>,
    county_sides: Vec<Vec<BoundarySide>>,
    urban_sides: Vec<Vec<BoundarySide>>,
    extents: HashMap<&'static str, Extent>,
    stats: Stats,
}

impl Generator<'_> {
    fn extent(&mut self, table: &'static str, g: &Geometry) {
        self.extents.entry(table).or_insert(Extent::EMPTY).add(g);
    }

    /// Writes every block, county by county, tract by tract.
    fn run_blocks(&mut self) -> std::io::Result<()> {
        let top = FINE << -TRACT_TOP;
        let mut leaves = Vec::new();
        for county in 1..=COUNTIES.len() as u8 {
            let mut tract_no = 0u32;
            for y in (0..self.g.h).step_by(top as usize) {
                for x in (0..self.g.w).step_by(top as usize) {
                    let node = Node {
                        level: TRACT_TOP,
                        x,
                        y,
                    };
                    self.tracts(node, county, &mut tract_no, &mut leaves)?;
                }
            }
        }
        Ok(())
    }

    /// The blocks of `county` under `node` and whether they are too many
    /// (or too populous) for one tract and can be split.
    fn too_big(&self, node: Node, county: u8, leaves: &mut Vec<Leaf>) -> bool {
        leaves.clear();
        self.g.leaves(node, county, leaves);
        let pop: u64 = leaves.iter().map(|&l| self.population(l) as u64).sum();
        (pop > TRACT_MAX_POP || leaves.len() > TRACT_MAX_BLOCKS) && self.g.node_split(node)
    }

    /// Tracts under `node`, numbered as census practice does: a tract that
    /// was split keeps its basic number and its parts get suffixes .01 to
    /// .04; an unsplit tract has suffix .00 (codes NNNNSS).
    fn tracts(
        &mut self,
        node: Node,
        county: u8,
        tract_no: &mut u32,
        leaves: &mut Vec<Leaf>,
    ) -> std::io::Result<()> {
        if !self.too_big(node, county, leaves) {
            if !leaves.is_empty() {
                let list = std::mem::take(leaves);
                self.tract(&list, county, tract_no, 0)?;
                *leaves = list;
            }
            return Ok(());
        }
        let children = node.children();
        if children.iter().any(|&c| self.too_big(c, county, leaves)) {
            for c in children {
                self.tracts(c, county, tract_no, leaves)?;
            }
            return Ok(());
        }
        let mut suffix = 0;
        for c in children {
            leaves.clear();
            self.g.leaves(c, county, leaves);
            if !leaves.is_empty() {
                suffix += 1;
                let list = std::mem::take(leaves);
                self.tract(&list, county, tract_no, suffix)?;
                *leaves = list;
            }
        }
        Ok(())
    }

    /// Writes the blocks of one tract: a new basic number for suffix 0 or
    /// 1, the current one for later suffixes.
    fn tract(
        &mut self,
        blocks: &[Leaf],
        county: u8,
        tract_no: &mut u32,
        suffix: u32,
    ) -> std::io::Result<()> {
        if suffix <= 1 {
            *tract_no += 1;
        }
        if *tract_no > 9999 {
            return Err(std::io::Error::other(
                "more than 9999 tracts in a county: ask for fewer blocks",
            ));
        }
        self.stats.tracts += 1;
        let prefix = format!(
            "{STATE}{}{:04}{suffix:02}",
            COUNTIES[county as usize - 1].code,
            *tract_no
        );
        // Block numbers: the block group digit, then 000-099.
        for (i, &leaf) in blocks.iter().enumerate() {
            let geoid = format!("{prefix}{:04}", 1000 * (1 + i / 100) + i % 100);
            self.block(leaf, county, &geoid)?;
        }
        Ok(())
    }

    /// The population of a block: urban 20-400 (8% empty), rural 1-60 (25%
    /// empty), lakes 0.
    fn population(&self, leaf: Leaf) -> u32 {
        if self.lakes.contains(&leaf) {
            return 0;
        }
        let mut r = Rng(hash(self.seed, TAG_POP, leaf.level as i64, leaf.x, leaf.y));
        if leaf.level >= URBAN_LEVEL {
            if r.unit() < 0.08 {
                0
            } else {
                let u = r.unit();
                20 + (380.0 * u * u).round() as u32
            }
        } else if r.unit() < 0.25 {
            0
        } else {
            let u = r.unit();
            1 + (59.0 * u * u).round() as u32
        }
    }

    fn block(&mut self, leaf: Leaf, county: u8, geoid: &str) -> std::io::Result<()> {
        let g = self.g;
        let sides = g.block_sides(leaf);
        let core = g.urban_core(leaf);
        let mut ring: Vec<[f64; 2]> = Vec::with_capacity(4 * SIDE_SEGMENTS + 1);
        let mut on_county_line = false;
        for &(p, q) in &sides {
            let v = g.side_vertices(p, q);
            let n = v.len() - 1;
            // Boundaries of the county and of the urban area.
            let (rx, ry) = Grid::right_of(p, q);
            let other = g.county_at(rx, ry);
            on_county_line |= other != county && other != 0;
            if other != county {
                self.county_sides[county as usize - 1].push(BoundarySide {
                    from: p,
                    to: q,
                    points: v[..n].to_vec(),
                    other,
                });
            }
            if let Some(c) = core {
                let across = g.leaf_at(rx, ry).and_then(|l| g.urban_core(l));
                if across != Some(c) {
                    self.urban_sides[c].push(BoundarySide {
                        from: p,
                        to: q,
                        points: v[..n].to_vec(),
                        other: 0,
                    });
                }
            }
            ring.extend_from_slice(&v[..n]);
        }
        ring.push(ring[0]);
        let water = self.lakes.contains(&leaf);
        let pop = self.population(leaf);
        let geom = polygon(vec![flatten(&ring)]);
        self.extent("blocks", &geom);
        self.stats.blocks += 1;
        self.stats.urban_blocks += core.is_some() as u64;
        self.stats.zero_pop += (pop == 0) as u64;
        self.stats.water += water as u64;
        self.stats.population += pop as u64;
        self.stats.max_block_vertices = self.stats.max_block_vertices.max(ring.len());
        let fid = (self.blocks.rows + 1).to_string();
        self.blocks.write(&[
            &fid,
            geoid,
            &pop.to_string(),
            if water { "1" } else { "0" },
            &wkt::write(&geom),
        ])?;
        if !water {
            self.spawn(leaf, core.is_some())?;
            self.amenities(leaf, county, pop, core.is_some(), on_county_line)?;
        }
        Ok(())
    }

    /// A point in the inner part of a block (the middle 40% of its lattice
    /// square, which its jittered, meandering boundary never reaches), as
    /// quantized longitude and latitude.
    fn inner_point(&self, r: &mut Rng, leaf: Leaf) -> (f64, f64) {
        let s = leaf.size() as f64;
        let (lon, lat) = self.g.lonlat(
            leaf.x as f64 + s * r.range(0.3, 0.7),
            leaf.y as f64 + s * r.range(0.3, 0.7),
        );
        (q7(lon), q7(lat))
    }

    /// Food stores, clinics, hazard sites and libraries placed in a land
    /// block, each from a hash of its own tag and the block.
    fn amenities(
        &mut self,
        leaf: Leaf,
        county: u8,
        pop: u32,
        urban: bool,
        on_county_line: bool,
    ) -> std::io::Result<()> {
        let key = (leaf.level as i64, leaf.x, leaf.y);
        let (lon, lat) = self.g.leaf_center(leaf);
        let d = density(lon, lat);
        let best = &mut self.densest[county as usize - 1];
        if best.is_none_or(|(b, _)| d > b) {
            *best = Some((d, leaf));
        }

        let mut r = Rng(hash(self.seed, TAG_GROCERY, key.0, key.1, key.2));
        let per_store = if urban {
            URBAN_RESIDENTS_PER_STORE
        } else {
            RURAL_RESIDENTS_PER_STORE
        };
        if r.unit() < pop as f64 / per_store {
            let mut u = r.unit();
            let mut pick = STORE_KINDS[STORE_KINDS.len() - 1];
            for k in STORE_KINDS {
                let share = if urban { k.2 } else { k.3 };
                if u < share {
                    pick = k;
                    break;
                }
                u -= share;
            }
            let (kind, ending, _, _) = pick;
            let name = format!("{} {} {ending}", r.pick(&WORDS_A), r.pick(&WORDS_B));
            let (x, y) = self.inner_point(&mut r, leaf);
            let geom = Geometry::point(x, y);
            self.extent("groceries", &geom);
            self.stats.convenience += (kind == "convenience store") as u64;
            let fid = self.groceries.rows + 1;
            self.groceries.write(&[
                &fid.to_string(),
                &format!("GR{fid:05}"),
                &name,
                kind,
                &wkt::write(&geom),
            ])?;
        }

        let mut r = Rng(hash(self.seed, TAG_CLINIC, key.0, key.1, key.2));
        let by_population = r.unit() < pop as f64 / RESIDENTS_PER_CLINIC;
        let by_line = on_county_line && r.unit() < COUNTY_LINE_CLINIC;
        if by_population || by_line {
            let name = format!(
                "{} {} {}",
                r.pick(&WORDS_A),
                r.pick(&WORDS_B),
                r.pick(&CLINIC_ENDINGS)
            );
            // Full-time-equivalent providers: skewed towards small
            // practices, larger in the cities; about 3% unknown.
            let u = r.unit();
            let providers = if r.unit() < 0.03 {
                String::new()
            } else if urban {
                format!("{:.1}", 0.5 + 19.5 * u * u * u)
            } else {
                format!("{:.1}", 0.5 + 5.5 * u * u)
            };
            let (x, y) = self.inner_point(&mut r, leaf);
            let geom = Geometry::point(x, y);
            self.extent("clinics", &geom);
            self.stats.unknown_capacity += providers.is_empty() as u64;
            self.stats.county_line_clinics += (by_line && !by_population) as u64;
            let fid = self.clinics.rows + 1;
            self.clinics.write(&[
                &fid.to_string(),
                &format!("CL{fid:05}"),
                &name,
                &providers,
                &wkt::write(&geom),
            ])?;
        }

        let mut r = Rng(hash(self.seed, TAG_HAZARD, key.0, key.1, key.2));
        // Industry sits at the edge of the cities more than in their
        // centres, and thinly in the country.
        let chance = match leaf.level {
            0 | 1 => 0.006,
            2 => 0.008,
            3 => 0.004,
            _ => 0.0015,
        };
        if r.unit() < chance {
            self.hazard_site(&mut r, leaf, urban)?;
        }

        let mut r = Rng(hash(self.seed, TAG_LIBRARY, key.0, key.1, key.2));
        let branch = r.unit() < pop as f64 / RESIDENTS_PER_BRANCH;
        let stop = !urban && pop > 0 && r.unit() < BOOKMOBILE_STOP;
        if branch || stop {
            let (branch_type, ending) = if branch {
                ("branch", "Branch Library")
            } else {
                ("bookmobile stop", "Bookmobile Stop")
            };
            let name = format!("{} {} {ending}", r.pick(&WORDS_A), r.pick(&WORDS_B));
            let (lon, lat) = self.inner_point(&mut r, leaf);
            self.libraries.push(LibraryRow {
                name,
                branch_type,
                lon,
                lat,
            });
        }
        Ok(())
    }

    /// One hazard site in a block: a point, or for a landfill or a rail
    /// yard in a block large enough, its footprint within the block's
    /// inner part (at most 0.16 of the block's side from a centre at most
    /// 0.04 from the block's middle).
    fn hazard_site(&mut self, r: &mut Rng, leaf: Leaf, urban: bool) -> std::io::Result<()> {
        let g = self.g;
        let s = leaf.size() as f64;
        let side_m = 1000.0 * s * (g.dlat * KM_PER_DEG_LAT).min(g.dlon * KM_PER_DEG_LON);
        let mut u = r.unit();
        let mut pick = HAZARD_KINDS[HAZARD_KINDS.len() - 1];
        for k in HAZARD_KINDS {
            let share = if urban { k.3 } else { k.2 };
            if u < share {
                pick = k;
                break;
            }
            u -= share;
        }
        let (kind, ending, _, _, footprint) = pick;
        let name = format!("{} {} {ending}", r.pick(&WORDS_A), r.pick(&WORDS_B));
        let limit = 0.16 * side_m;
        let drawn = r.unit() < footprint;
        let geom = if drawn && kind == "landfill" && limit >= 120.0 {
            let (lon, lat) = g.lonlat(
                leaf.x as f64 + s * r.range(0.46, 0.54),
                leaf.y as f64 + s * r.range(0.46, 0.54),
            );
            let radius = r.range(150.0, 450.0).min(limit);
            let n = 14 + r.below(7);
            polygon(vec![star(r, lon, lat, radius, n)])
        } else if drawn && kind == "rail yard" && limit >= 110.0 {
            let (lon, lat) = g.lonlat(
                leaf.x as f64 + s * r.range(0.46, 0.54),
                leaf.y as f64 + s * r.range(0.46, 0.54),
            );
            // A long rectangle: half-length up to 800 m, half-width a
            // fifth of it or less, turned by a random angle; corners
            // counter-clockwise, within `limit` of the centre.
            let half_len = r.range(300.0, 800.0).min(0.98 * limit);
            let half_wid = r.range(0.08, 0.2) * half_len;
            let a = r.range(0.0, std::f64::consts::PI);
            let (c, sn) = (a.cos(), a.sin());
            let mut ring = Vec::with_capacity(10);
            for (x, y) in [(-1.0, -1.0), (1.0, -1.0), (1.0, 1.0), (-1.0, 1.0)] {
                let (dx, dy) = (x * half_len, y * half_wid);
                let (plon, plat) = offset(lon, lat, dx * c - dy * sn, dx * sn + dy * c);
                ring.extend([q7(plon), q7(plat)]);
            }
            close(&mut ring);
            polygon(vec![ring])
        } else {
            let (x, y) = self.inner_point(r, leaf);
            Geometry::point(x, y)
        };
        self.stats.footprints += matches!(geom.shape, Shape::Polygon(_)) as u64;
        self.extent("hazard_sites", &geom);
        let fid = self.hazards.rows + 1;
        self.hazards.write(&[
            &fid.to_string(),
            &format!("HZ{fid:05}"),
            &name,
            kind,
            &wkt::write(&geom),
        ])
    }

    /// The libraries: one central library per county in its densest block
    /// (county order), then the branches and bookmobile stops in block
    /// order.
    fn write_libraries(&mut self, out: &mut Csv) -> std::io::Result<()> {
        let mut rows = Vec::new();
        for (i, best) in self.densest.iter().enumerate() {
            if let Some((_, leaf)) = *best {
                let mut r = Rng(hash(self.seed, TAG_LIBRARY, -1, i as i64, 0));
                let (lon, lat) = self.inner_point(&mut r, leaf);
                rows.push(LibraryRow {
                    name: format!("{} Central Library", COUNTIES[i].name),
                    branch_type: "central",
                    lon,
                    lat,
                });
            }
        }
        rows.append(&mut self.libraries);
        for row in rows {
            let geom = Geometry::point(row.lon, row.lat);
            self.extent("libraries", &geom);
            let fid = out.rows + 1;
            out.write(&[
                &fid.to_string(),
                &format!("LB{fid:05}"),
                &row.name,
                row.branch_type,
                &wkt::write(&geom),
            ])?;
        }
        Ok(())
    }

    /// Parks (about 1 per 65 blocks) and facilities (about 1 per 100 blocks)
    /// placed in a block.
    fn spawn(&mut self, leaf: Leaf, urban: bool) -> std::io::Result<()> {
        let g = self.g;
        let s = leaf.size() as f64;
        let block_m = s * g.dlat * KM_PER_DEG_LAT * 1000.0;
        let mut r = Rng(hash(self.seed, TAG_PARK, leaf.level as i64, leaf.x, leaf.y));
        if r.unit() < 1.0 / 65.0 {
            let (cx, cy) = (
                leaf.x as f64 + s * r.range(0.3, 0.7),
                leaf.y as f64 + s * r.range(0.3, 0.7),
            );
            let (lon, lat) = g.lonlat(cx, cy);
            let radius = block_m
                * if urban {
                    r.range(0.3, 1.0)
                } else {
                    r.range(0.15, 0.5)
                };
            let name = format!(
                "{} {} {}",
                r.pick(&WORDS_A),
                r.pick(&WORDS_B),
                r.pick(&PARK_KINDS)
            );
            let geom = self.park_shape(&mut r, lon, lat, radius);
            self.write_park(&name, geom)?;
        }
        let mut r = Rng(hash(self.seed, TAG_SITE, leaf.level as i64, leaf.x, leaf.y));
        if r.unit() < 0.01 {
            let (fx, fy) = (
                leaf.x as f64 + s * r.range(0.3, 0.7),
                leaf.y as f64 + s * r.range(0.3, 0.7),
            );
            let (lon, lat) = g.lonlat(fx, fy);
            if r.unit() < 0.55 {
                self.rec_site(&mut r, lon, lat)?;
            } else {
                self.fitness_entry(&mut r, lon, lat)?;
            }
        }
        Ok(())
    }

    /// A star-shaped park of 24-36 vertices around (lon, lat) with radius
    /// `radius` metres; 12% with a pond, 4% in two pieces.
    fn park_shape(&mut self, r: &mut Rng, lon: f64, lat: f64, radius: f64) -> Geometry {
        let n = 24 + r.below(13);
        let outer = star(r, lon, lat, radius, n);
        let mut first = vec![outer];
        if r.unit() < 0.12 {
            let a = r.range(0.0, std::f64::consts::TAU);
            let d = radius * r.range(0.0, 0.1);
            let (plon, plat) = offset(lon, lat, d * a.cos(), d * a.sin());
            let (pr, n) = (radius * r.range(0.15, 0.3), 12 + r.below(9));
            let mut pond = star(r, plon, plat, pr, n);
            reverse_ring(&mut pond);
            first.push(pond);
            self.stats.parks_with_holes += 1;
        }
        if r.unit() < 0.04 {
            let a = r.range(0.0, std::f64::consts::TAU);
            let d = 1.7 * radius;
            let (olon, olat) = offset(lon, lat, d * a.cos(), d * a.sin());
            let (sr, n) = (radius * r.range(0.3, 0.45), 16 + r.below(9));
            let second = star(r, olon, olat, sr, n);
            self.stats.multi_parks += 1;
            Geometry::new(
                Dimensions::Xy,
                Shape::MultiPolygon(vec![first, vec![second]]),
            )
        } else {
            polygon(first)
        }
    }

    fn write_park(&mut self, name: &str, geom: Geometry) -> std::io::Result<()> {
        self.extent("parks", &geom);
        let fid = self.parks.rows + 1;
        self.parks.write(&[
            &fid.to_string(),
            &format!("PK{fid:05}"),
            name,
            &wkt::write(&geom),
        ])
    }

    fn rec_site(&mut self, r: &mut Rng, lon: f64, lat: f64) -> std::io::Result<()> {
        let (activity, ending, category) = ACTIVITIES[r.below(ACTIVITIES.len())];
        let base = format!("{} {}", r.pick(&WORDS_A), r.pick(&WORDS_B));
        let name = format!("{base} {ending}");
        let geom = Geometry::point(q7(lon), q7(lat));
        self.extent("rec_sites", &geom);
        let fid = self.rec.rows + 1;
        let no_name = r.unit() < 0.02;
        let no_activity = r.unit() < 0.03;
        self.rec.write(&[
            &fid.to_string(),
            &format!("RS{fid:05}"),
            if no_name { "" } else { &name },
            if no_activity { "" } else { activity },
            &wkt::write(&geom),
        ])?;
        // The same place, listed again by the licensing office 3-18 m away:
        // one registry site in 23 (evenly spread, the first among the first
        // three), which makes about 5% of the licensing list.
        let k = (fid - 1) as f64;
        if ((k + 1.0) / 23.0 + 0.9).floor() > (k / 23.0 + 0.9).floor() {
            let a = r.range(0.0, std::f64::consts::TAU);
            let d = r.range(3.0, 18.0);
            let (dlon, dlat) = offset(lon, lat, d * a.cos(), d * a.sin());
            let business = format!("{} LLC", name.to_uppercase());
            self.stats.duplicates += 1;
            self.write_fitness(Some(&business), Some(category), Some((dlon, dlat)))?;
        }
        Ok(())
    }

    fn fitness_entry(&mut self, r: &mut Rng, lon: f64, lat: f64) -> std::io::Result<()> {
        let (category, ending) = CATEGORIES[r.below(CATEGORIES.len())];
        let business = format!("{} {} {}", r.pick(&WORDS_A), r.pick(&WORDS_B), ending);
        let no_business = r.unit() < 0.01;
        let no_category = r.unit() < 0.02;
        // About 1% of licences were never geocoded.
        let place = (r.unit() >= 0.01).then_some((lon, lat));
        self.stats.no_coordinates += place.is_none() as u64;
        self.write_fitness(
            (!no_business).then_some(&business),
            (!no_category).then_some(category),
            place,
        )
    }

    fn write_fitness(
        &mut self,
        business: Option<&str>,
        category: Option<&str>,
        place: Option<(f64, f64)>,
    ) -> std::io::Result<()> {
        let fid = self.fitness.rows + 1;
        // Odd multiplier: a bijection of 0..10^6, so licence numbers are
        // unique and look unordered.
        let licence = format!("FL-{:06}", (fid * 7919 + 104_729) % 1_000_000);
        let (lon, lat, text) = match place {
            Some((lon, lat)) => {
                let geom = Geometry::point(q6(lon), q6(lat));
                self.extent("fitness_list", &geom);
                (q6(lon).to_string(), q6(lat).to_string(), wkt::write(&geom))
            }
            None => (String::new(), String::new(), String::new()),
        };
        self.fitness.write(&[
            &fid.to_string(),
            &licence,
            business.unwrap_or(""),
            category.unwrap_or(""),
            &lon,
            &lat,
            &text,
        ])
    }

    /// The three parks every analysis should meet: a long coastal forest
    /// with tens of thousands of vertices, one across a county line and one
    /// just across the state line.
    fn special_parks(&mut self) -> std::io::Result<()> {
        let g = self.g;
        let mut r = Rng(hash(self.seed, TAG_SPECIAL, 0, 0, 0));
        // The forest: between two ragged lines that follow the coast 1.5
        // coarse cells inland; both are graphs over latitude, one always west
        // of the other, so the ring is simple.
        let cell_lon = FINE as f64 * g.dlon;
        let k = 1 << 14;
        let west = ragged(&mut r, k, 0.0, 0.025);
        let east = ragged(&mut r, k, -0.025, 0.025);
        let (lat_a, lat_b) = FOREST_LATS;
        let mut ring = Vec::with_capacity(4 * (k + 2));
        let inland = |lat: f64| coast_lon(lat) + 1.5 * cell_lon + 0.01;
        for (j, e) in east.iter().enumerate() {
            let lat = lat_a + (lat_b - lat_a) * j as f64 / k as f64;
            ring.extend([q7(inland(lat) + 0.06 + e), q7(lat)]);
        }
        for (j, w) in west.iter().enumerate().rev() {
            let lat = lat_a + (lat_b - lat_a) * j as f64 / k as f64;
            ring.extend([q7(inland(lat) + w), q7(lat)]);
        }
        close(&mut ring);
        let name = format!("{} Coast Forest", r.pick(&WORDS_A));
        self.write_park(&name, polygon(vec![ring]))?;

        // Across a county line: centred on the county boundary corner
        // nearest the middle of the state.
        let mid = (-130.95, 38.5);
        let mut best: Option<(f64, [f64; 2])> = None;
        for side in self.county_sides.iter().flatten() {
            if side.other == 0 {
                continue;
            }
            let p = side.points[0];
            let d = (p[0] - mid.0).powi(2) + (p[1] - mid.1).powi(2);
            if best.is_none_or(|(b, _)| d < b) {
                best = Some((d, p));
            }
        }
        if let Some((_, p)) = best {
            let name = format!("{} {} Regional Park", r.pick(&WORDS_A), r.pick(&WORDS_B));
            let geom = polygon(vec![star(&mut r, p[0], p[1], 900.0, 32)]);
            self.write_park(&name, geom)?;
        }

        // Just across the state line, outside every county.
        let (lon, lat) = offset(LON_EAST, 38.6, 1500.0, 0.0);
        let name = format!("{} {} Park", r.pick(&WORDS_A), r.pick(&WORDS_B));
        let geom = polygon(vec![star(&mut r, lon, lat, 700.0, 28)]);
        self.write_park(&name, geom)
    }
}

/// The point `dx` metres east and `dy` metres north of (lon, lat), on a
/// local flat approximation (for placing invented features only).
fn offset(lon: f64, lat: f64, dx: f64, dy: f64) -> (f64, f64) {
    let m_lon = KM_PER_DEG_LAT * 1000.0 * lat.to_radians().cos();
    (lon + dx / m_lon, lat + dy / (KM_PER_DEG_LAT * 1000.0))
}

/// A closed counter-clockwise star-shaped ring of `n` vertices around
/// (lon, lat): increasing angles, radii between 0.5 and 1 times `radius`
/// metres, so the ring is simple.
fn star(r: &mut Rng, lon: f64, lat: f64, radius: f64, n: usize) -> Vec<f64> {
    let (p1, p2) = (r.range(0.0, 6.3), r.range(0.0, 6.3));
    let (a1, a2) = (r.range(0.3, 1.0), r.range(0.0, 0.6));
    let mut ring = Vec::with_capacity(2 * n + 2);
    for k in 0..n {
        let t = (k as f64 + 0.3 * (2.0 * r.unit() - 1.0)) / n as f64 * std::f64::consts::TAU;
        let wobble = (a1 * (t + p1).cos() + a2 * (2.0 * t + p2).cos()) / 1.6;
        let noise = 0.4 * r.unit() - 0.2;
        let rho = radius * (0.75 + 0.25 * (0.8 * wobble + noise).clamp(-1.0, 1.0));
        let (x, y) = offset(lon, lat, rho * t.cos(), rho * t.sin());
        ring.extend([q7(x), q7(y)]);
    }
    close(&mut ring);
    ring
}

/// Repeats the first vertex at the end.
fn close(ring: &mut Vec<f64>) {
    let first = [ring[0], ring[1]];
    ring.extend(first);
}

fn reverse_ring(ring: &mut [f64]) {
    let n = ring.len() / 2;
    for i in 0..n / 2 {
        ring.swap(2 * i, 2 * (n - 1 - i));
        ring.swap(2 * i + 1, 2 * (n - 1 - i) + 1);
    }
}

/// `k + 1` values of a ragged line by midpoint displacement, clamped to
/// [lo, hi] degrees.
fn ragged(r: &mut Rng, k: usize, lo: f64, hi: f64) -> Vec<f64> {
    let mid = (lo + hi) / 2.0;
    let mut v = vec![mid; k + 1];
    v[0] = r.range(lo, hi);
    v[k] = r.range(lo, hi);
    let mut step = k;
    let mut amp = (hi - lo) / 2.0;
    while step > 1 {
        let half = step / 2;
        for i in (half..k).step_by(step) {
            let m = (v[i - half] + v[i + half]) / 2.0 + amp * (2.0 * r.unit() - 1.0);
            v[i] = m.clamp(lo, hi);
        }
        step = half;
        amp *= 0.62;
    }
    v
}

// ----------------------------------------------------------------------
// load.sql
// ----------------------------------------------------------------------

/// One feature table: its columns as created (the geometry column declared
/// with its `geometry_type_name`, as OGC 12-128 asks of feature tables, from
/// memory; SQLite stores the blobs unchanged whatever the declared type), the columns of its staging
/// table and CSV file, and the SELECT list that fills it from the staging
/// table.
struct Table {
    name: &'static str,
    identifier: &'static str,
    about: &'static str,
    geometry_type: &'static str,
    columns: &'static str,
    csv: &'static [&'static str],
    staging: &'static str,
    select: &'static str,
}

const TABLES: [Table; 10] = [
    Table {
        name: "counties",
        identifier: "Invented counties",
        about: "counties, each exactly the union of its blocks",
        geometry_type: "MULTIPOLYGON",
        columns: "fid INTEGER PRIMARY KEY, geoid TEXT NOT NULL, name TEXT NOT NULL, geom MULTIPOLYGON",
        csv: &["fid", "geoid", "name", "wkt"],
        staging: "fid INTEGER, geoid TEXT, name TEXT, wkt TEXT",
        select: "fid, geoid, name, ST_GeomFromText(wkt, 4326)",
    },
    Table {
        name: "blocks",
        identifier: "Invented census blocks",
        about: "census-style blocks tiling the land exactly, with population",
        geometry_type: "POLYGON",
        columns: "fid INTEGER PRIMARY KEY, geoid TEXT NOT NULL UNIQUE, population INTEGER NOT NULL, water INTEGER NOT NULL, geom POLYGON",
        csv: &["fid", "geoid", "population", "water", "wkt"],
        staging: "fid INTEGER, geoid TEXT, population INTEGER, water INTEGER, wkt TEXT",
        select: "fid, geoid, population, water, ST_GeomFromText(wkt, 4326)",
    },
    Table {
        name: "parks",
        identifier: "Invented parks",
        about: "parks (polygons and multipolygons, some with ponds)",
        geometry_type: "GEOMETRY",
        columns: "fid INTEGER PRIMARY KEY, park_id TEXT NOT NULL, name TEXT NOT NULL, geom GEOMETRY",
        csv: &["fid", "park_id", "name", "wkt"],
        staging: "fid INTEGER, park_id TEXT, name TEXT, wkt TEXT",
        select: "fid, park_id, name, ST_GeomFromText(wkt, 4326)",
    },
    Table {
        name: "rec_sites",
        identifier: "Invented recreation site registry",
        about: "recreation sites from a registry",
        geometry_type: "POINT",
        columns: "fid INTEGER PRIMARY KEY, site_code TEXT NOT NULL, site_name TEXT, activity TEXT, geom POINT",
        csv: &["fid", "site_code", "site_name", "activity", "wkt"],
        staging: "fid INTEGER, site_code TEXT, site_name TEXT, activity TEXT, wkt TEXT",
        select: "fid, site_code, NULLIF(site_name, ''), NULLIF(activity, ''), ST_GeomFromText(wkt, 4326)",
    },
    Table {
        name: "fitness_list",
        identifier: "Invented fitness licensing list",
        about: "fitness businesses from a licensing list; about 5% repeat a rec_sites \
                location within 20 m, about 1% have no coordinates",
        geometry_type: "POINT",
        columns: "fid INTEGER PRIMARY KEY, license_no TEXT NOT NULL, business TEXT, category TEXT, lon REAL, lat REAL, geom POINT",
        csv: &["fid", "license_no", "business", "category", "lon", "lat", "wkt"],
        staging: "fid INTEGER, license_no TEXT, business TEXT, category TEXT, lon TEXT, lat TEXT, wkt TEXT",
        // lon and lat are read back from the parsed geometry, so they equal
        // its coordinates exactly.
        select: "fid, license_no, NULLIF(business, ''), NULLIF(category, ''), \
                 ST_X(ST_GeomFromText(NULLIF(wkt, ''), 4326)), ST_Y(ST_GeomFromText(NULLIF(wkt, ''), 4326)), \
                 ST_GeomFromText(NULLIF(wkt, ''), 4326)",
    },
    Table {
        name: "urban_areas",
        identifier: "Invented urban areas",
        about: "urban areas, each exactly a union of blocks",
        geometry_type: "MULTIPOLYGON",
        columns: "fid INTEGER PRIMARY KEY, name TEXT NOT NULL, geom MULTIPOLYGON",
        csv: &["fid", "name", "wkt"],
        staging: "fid INTEGER, name TEXT, wkt TEXT",
        select: "fid, name, ST_GeomFromText(wkt, 4326)",
    },
    Table {
        name: "groceries",
        identifier: "Invented food stores",
        about: "food stores: supermarkets, supercenters, large grocery stores, and convenience \
                stores (which food-access definitions leave out), denser where people live",
        geometry_type: "POINT",
        columns: "fid INTEGER PRIMARY KEY, store_id TEXT NOT NULL, name TEXT NOT NULL, kind TEXT NOT NULL, geom POINT",
        csv: &["fid", "store_id", "name", "kind", "wkt"],
        staging: "fid INTEGER, store_id TEXT, name TEXT, kind TEXT, wkt TEXT",
        select: "fid, store_id, name, kind, ST_GeomFromText(wkt, 4326)",
    },
    Table {
        name: "clinics",
        identifier: "Invented primary-care clinics",
        about: "primary-care clinics with their capacity in full-time-equivalent providers \
                (NULL: unknown)",
        geometry_type: "POINT",
        columns: "fid INTEGER PRIMARY KEY, clinic_id TEXT NOT NULL, name TEXT NOT NULL, providers REAL, geom POINT",
        csv: &["fid", "clinic_id", "name", "providers", "wkt"],
        staging: "fid INTEGER, clinic_id TEXT, name TEXT, providers TEXT, wkt TEXT",
        select: "fid, clinic_id, name, CAST(NULLIF(providers, '') AS REAL), ST_GeomFromText(wkt, 4326)",
    },
    Table {
        name: "hazard_sites",
        identifier: "Invented pollution sources",
        about: "pollution sources (chemical storage, fuel terminals, wastewater plants, \
                landfills, rail yards): points, and footprints (polygons) for most landfills \
                and rail yards",
        geometry_type: "GEOMETRY",
        columns: "fid INTEGER PRIMARY KEY, site_id TEXT NOT NULL, name TEXT NOT NULL, kind TEXT NOT NULL, geom GEOMETRY",
        csv: &["fid", "site_id", "name", "kind", "wkt"],
        staging: "fid INTEGER, site_id TEXT, name TEXT, kind TEXT, wkt TEXT",
        select: "fid, site_id, name, kind, ST_GeomFromText(wkt, 4326)",
    },
    Table {
        name: "libraries",
        identifier: "Invented public libraries",
        about: "public libraries: a central library per county, branches, and bookmobile stops",
        geometry_type: "POINT",
        columns: "fid INTEGER PRIMARY KEY, library_id TEXT NOT NULL, name TEXT NOT NULL, branch_type TEXT NOT NULL, geom POINT",
        csv: &["fid", "library_id", "name", "branch_type", "wkt"],
        staging: "fid INTEGER, library_id TEXT, name TEXT, branch_type TEXT, wkt TEXT",
        select: "fid, library_id, name, branch_type, ST_GeomFromText(wkt, 4326)",
    },
];

/// A path as a double-quoted argument of a shell dot-command.
fn dot_quote(path: &Path) -> String {
    let s = path.to_string_lossy();
    format!("\"{}\"", s.replace('\\', "\\\\").replace('"', "\\\""))
}

fn sql_text(s: &str) -> String {
    format!("'{}'", s.replace('\'', "''"))
}

/// Degrees rounded outward to the micro-degree, one step beyond, so the
/// extent contains the data however the shell reads the literal.
fn outward(v: f64, down: bool) -> String {
    let s = if down {
        (v * 1e6).floor() - 1.0
    } else {
        (v * 1e6).ceil() + 1.0
    };
    format!("{}", s / 1e6)
}

fn load_sql(
    dir: &Path,
    args: &Args,
    extents: &HashMap<&'static str, Extent>,
) -> Result<String, String> {
    let dir_text = dir.to_string_lossy();
    if dir_text.contains(['\n', '\r']) {
        return Err("the output directory's path contains a line break".into());
    }
    let mut s = String::new();
    let w = &mut s;
    let _ = writeln!(
        w,
        "-- Builds a GeoPackage (OGC 12-128) of the invented region made by ambit-region\n\
         -- (--blocks {} --seed {}). Run in the sqlite3 shell with ambit loaded:\n\
         --   sqlite3 OUT.gpkg '.load target/release/libambit' '.read {}'\n\
         -- All data are invented; no real place is described.\n",
        args.blocks,
        args.seed,
        dir.join("load.sql").display()
    );
    let _ = writeln!(w, ".bail on");
    let _ = writeln!(
        w,
        "PRAGMA application_id = {}; -- 'GPKG'",
        gpkg_tables::APPLICATION_ID
    );
    let _ = writeln!(
        w,
        "PRAGMA user_version = {}; -- GeoPackage 1.3.0",
        gpkg_tables::USER_VERSION
    );
    let _ = writeln!(w, "PRAGMA synchronous = OFF;");
    // The container tables and the three spatial reference rows every
    // GeoPackage must hold, as ambit writes them (crate::blob::gpkg_tables).
    let _ = writeln!(w, "{}", gpkg_tables::CREATE_TABLES.trim());
    for r in gpkg_tables::SPATIAL_REFS
        .iter()
        .filter(|r| [-1, 0, 4326].contains(&r.srs_id))
    {
        let _ = writeln!(
            w,
            "INSERT INTO gpkg_spatial_ref_sys VALUES ({}, {}, {}, {}, {}, {});",
            sql_text(r.srs_name),
            r.srs_id,
            sql_text(r.organization),
            r.organization_coordsys_id,
            sql_text(r.definition),
            sql_text(r.description)
        );
    }
    let _ = writeln!(w);
    for t in &TABLES {
        let _ = writeln!(w, "CREATE TABLE {} ({});", t.name, t.columns);
        let _ = writeln!(w, "CREATE TABLE staging_{} ({});", t.name, t.staging);
        let _ = writeln!(
            w,
            ".import --csv --skip 1 {} staging_{}",
            dot_quote(&dir.join(format!("{}.csv", t.name))),
            t.name
        );
    }
    let _ = writeln!(w, "\nBEGIN;");
    for t in &TABLES {
        let _ = writeln!(
            w,
            "INSERT INTO {} SELECT {} FROM staging_{} ORDER BY fid;",
            t.name, t.select, t.name
        );
    }
    // last_change is fixed, so the same seed gives the same file.
    for t in &TABLES {
        let e = extents.get(t.name).copied().unwrap_or(Extent {
            min_x: LON_WEST,
            min_y: LAT_SOUTH,
            max_x: LON_EAST,
            max_y: LAT_NORTH,
        });
        let description = format!(
            "Invented data, not a real place: {}. An imaginary state (code 99) over the \
             open Pacific, made by ambit-region --blocks {} --seed {}.",
            t.about, args.blocks, args.seed
        );
        let _ = writeln!(
            w,
            "INSERT INTO gpkg_contents VALUES ({}, 'features', {}, {}, '2000-01-01T00:00:00.000Z', {}, {}, {}, {}, 4326);",
            sql_text(t.name),
            sql_text(t.identifier),
            sql_text(&description),
            outward(e.min_x, true),
            outward(e.min_y, true),
            outward(e.max_x, false),
            outward(e.max_y, false)
        );
        let _ = writeln!(
            w,
            "INSERT INTO gpkg_geometry_columns VALUES ({}, 'geom', '{}', 4326, 0, 0);",
            sql_text(t.name),
            t.geometry_type
        );
    }
    let _ = writeln!(w, "COMMIT;\n");
    for t in &TABLES {
        let _ = writeln!(w, "DROP TABLE staging_{};", t.name);
    }
    let _ = writeln!(w, "VACUUM;");
    Ok(s)
}

// ----------------------------------------------------------------------
// Command line
// ----------------------------------------------------------------------

struct Args {
    blocks: usize,
    seed: u64,
    out: PathBuf,
}

const USAGE: &str = concat!(
    "usage: ambit-region [--blocks N] [--seed S] --out DIR\n",
    "  Writes an invented region (CSV files and load.sql) into DIR.\n",
    "  --blocks N  target number of census blocks, 1000 to 1000000 (default 30000)\n",
    "  --seed S    unsigned 64-bit seed (default 1)\n",
    "  --out DIR   output directory (created if missing)"
);

fn parse_args() -> Result<Args, String> {
    let mut args = Args {
        blocks: 30_000,
        seed: 1,
        out: PathBuf::new(),
    };
    let mut it = std::env::args().skip(1);
    while let Some(a) = it.next() {
        let mut value = |name: &str| it.next().ok_or(format!("{name} needs a value"));
        match a.as_str() {
            "--blocks" => {
                let v = value("--blocks")?;
                args.blocks = v
                    .parse()
                    .map_err(|_| format!("--blocks: '{v}' is not a whole number"))?;
            }
            "--seed" => {
                let v = value("--seed")?;
                args.seed = v
                    .parse()
                    .map_err(|_| format!("--seed: '{v}' is not an unsigned 64-bit integer"))?;
            }
            "--out" => args.out = PathBuf::from(value("--out")?),
            "-h" | "--help" => return Err(String::new()),
            other => return Err(format!("unknown argument '{other}'")),
        }
    }
    if args.out.as_os_str().is_empty() {
        return Err("--out DIR is required".into());
    }
    if !(1000..=1_000_000).contains(&args.blocks) {
        return Err(format!(
            "--blocks {} is out of range: 1000 to 1000000",
            args.blocks
        ));
    }
    Ok(args)
}

fn run(args: &Args) -> Result<(), String> {
    let started = Instant::now();
    let io = |e: std::io::Error| e.to_string();
    std::fs::create_dir_all(&args.out)
        .map_err(|e| format!("cannot create {}: {e}", args.out.display()))?;
    let dir = args
        .out
        .canonicalize()
        .map_err(|e| format!("{}: {e}", args.out.display()))?;
    let grid = calibrate(args.seed, args.blocks);
    let lakes = LAKES
        .iter()
        .filter_map(|&(lon, lat)| {
            let fx = ((lon - LON_WEST) / grid.dlon) as i64;
            let fy = ((lat - LAT_SOUTH) / grid.dlat) as i64;
            grid.leaf_at(fx, fy).filter(|l| l.level < URBAN_LEVEL)
        })
        .collect();
    let csv = |t: usize| Csv::create(&dir, &format!("{}.csv", TABLES[t].name), TABLES[t].csv);
    let mut gen = Generator {
        g: &grid,
        seed: args.seed,
        lakes,
        blocks: csv(1).map_err(io)?,
        parks: csv(2).map_err(io)?,
        rec: csv(3).map_err(io)?,
        fitness: csv(4).map_err(io)?,
        groceries: csv(6).map_err(io)?,
        clinics: csv(7).map_err(io)?,
        hazards: csv(8).map_err(io)?,
        libraries: Vec::new(),
        densest: vec![None; COUNTIES.len()],
        county_sides: (0..COUNTIES.len()).map(|_| Vec::new()).collect(),
        urban_sides: (0..CORES.len()).map(|_| Vec::new()).collect(),
        extents: HashMap::new(),
        stats: Stats::default(),
    };
    gen.run_blocks().map_err(io)?;
    gen.special_parks().map_err(io)?;

    let mut counties = csv(0).map_err(io)?;
    let mut parts = Vec::new();
    for (i, c) in COUNTIES.iter().enumerate() {
        let geom = multipolygon(trace(&gen.county_sides[i]));
        if let Shape::MultiPolygon(p) = &geom.shape {
            parts.push(p.len());
        }
        gen.extent("counties", &geom);
        counties
            .write(&[
                &(i + 1).to_string(),
                &format!("{STATE}{}", c.code),
                c.name,
                &wkt::write(&geom),
            ])
            .map_err(io)?;
    }
    let mut urban = csv(5).map_err(io)?;
    for (i, c) in CORES.iter().enumerate() {
        if gen.urban_sides[i].is_empty() {
            continue;
        }
        let geom = multipolygon(trace(&gen.urban_sides[i]));
        gen.extent("urban_areas", &geom);
        let fid = (urban.rows + 1).to_string();
        urban
            .write(&[&fid, c.name, &wkt::write(&geom)])
            .map_err(io)?;
    }
    let mut libraries = csv(9).map_err(io)?;
    gen.write_libraries(&mut libraries).map_err(io)?;
    let st = std::mem::take(&mut gen.stats);
    let counts = [
        ("counties", counties.finish().map_err(io)?),
        ("blocks", gen.blocks.finish().map_err(io)?),
        ("parks", gen.parks.finish().map_err(io)?),
        ("rec_sites", gen.rec.finish().map_err(io)?),
        ("fitness_list", gen.fitness.finish().map_err(io)?),
        ("urban_areas", urban.finish().map_err(io)?),
        ("groceries", gen.groceries.finish().map_err(io)?),
        ("clinics", gen.clinics.finish().map_err(io)?),
        ("hazard_sites", gen.hazards.finish().map_err(io)?),
        ("libraries", libraries.finish().map_err(io)?),
    ];
    let sql = load_sql(&dir, args, &gen.extents)?;
    std::fs::write(dir.join("load.sql"), sql).map_err(io)?;

    // The summary is informative: a closed stdout is no error.
    let mut out = std::io::stdout().lock();
    let list: Vec<String> = counts.iter().map(|(t, n)| format!("{t} {n}")).collect();
    let _ = writeln!(
        out,
        "ambit-region: {} into {} in {:.2} s",
        list.join(", "),
        dir.display(),
        started.elapsed().as_secs_f64()
    );
    let _ = writeln!(
        out,
        "  blocks: {} urban, {} with no residents, {} water, population {}, {} tracts, \
         at most {} points per ring; county parts {:?}",
        st.urban_blocks,
        st.zero_pop,
        st.water,
        st.population,
        st.tracts,
        st.max_block_vertices,
        parts
    );
    let _ = writeln!(
        out,
        "  parks: {} with a pond, {} in two pieces; fitness_list: {} repeat a rec_sites location, \
         {} without coordinates; coarse grid {} x {}",
        st.parks_with_holes, st.multi_parks, st.duplicates, st.no_coordinates, grid.nx, grid.ny
    );
    let _ = writeln!(
        out,
        "  groceries: {} convenience stores; clinics: {} of unknown capacity, {} added on county \
         lines; hazard_sites: {} footprints",
        st.convenience, st.unknown_capacity, st.county_line_clinics, st.footprints
    );
    Ok(())
}

fn main() -> ExitCode {
    let args = match parse_args() {
        Ok(a) => a,
        Err(e) => {
            if e.is_empty() {
                println!("{USAGE}");
                return ExitCode::SUCCESS;
            }
            eprintln!("ambit-region: {e}\n{USAGE}");
            return ExitCode::from(2);
        }
    };
    match run(&args) {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("ambit-region: {e}");
            ExitCode::FAILURE
        }
    }
}
