//! Layouts of invented states: the fixed demo state (its box, counties,
//! urban cores, lakes, island and coast, as constants) and [`Layout`], the
//! same description as data, which the national country builds per state.

/// The state's bounding box, degrees. Its west part is ocean.
pub const LON_WEST: f64 = -132.5;
pub const LON_EAST: f64 = -129.5;
pub const LAT_SOUTH: f64 = 37.4;
pub const LAT_NORTH: f64 = 39.6;

/// The state code. 99 is assigned to no state or territory in the census
/// state codes (from memory), so the GEOIDs cannot be mistaken for a real
/// place's.
pub const STATE: &str = "99";

/// Kilometres per degree of latitude and of longitude at latitude 38.5,
/// spherical approximations used only to size and place invented features
/// (never to measure).
pub const KM_PER_DEG_LAT: f64 = 110.95;
pub const KM_PER_DEG_LON: f64 = 87.12;

pub struct CountyDef {
    /// Census-style county code: odd numbers, 3 digits.
    pub code: &'static str,
    pub name: &'static str,
    /// Seed point of the county's region (nearest seed wins).
    pub lon: f64,
    pub lat: f64,
}

pub const COUNTIES: [CountyDef; 6] = [
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

pub struct CoreDef {
    pub name: &'static str,
    pub lon: f64,
    pub lat: f64,
    /// Blocks per unit area at the centre, relative to the rural density.
    pub peak: f64,
    /// Gaussian radius of the density bump, km.
    pub sigma_km: f64,
}

pub const CORES: [CoreDef; 4] = [
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
pub const LAKES: [(f64, f64); 2] = [(-130.4, 38.75), (-131.45, 38.45)];

/// The offshore island: centre and semi-axes, degrees.
pub const ISLAND: (f64, f64, f64, f64) = (-132.36, 38.3, 0.11, 0.08);

/// The large coastal forest park runs along the coast between these
/// latitudes.
pub const FOREST_LATS: (f64, f64) = (37.5, 38.15);

/// The knots of the demo state's coastline: (latitude, longitude).
const DEMO_COAST: [(f64, f64); 8] = [
    (37.4, -132.15),
    (37.7, -132.2),
    (38.0, -132.12),
    (38.3, -132.0),
    (38.6, -132.12),
    (38.9, -132.17),
    (39.2, -132.05),
    (39.6, -132.2),
];

/// A county of a layout: code, name and the seed point of its region.
#[derive(Clone, Debug)]
pub struct County {
    /// Census-style county code: odd numbers, 3 digits.
    pub code: String,
    pub name: String,
    pub lon: f64,
    pub lat: f64,
}

/// An urban core: a Gaussian bump of block density.
#[derive(Clone, Debug)]
pub struct Core {
    pub name: String,
    pub lon: f64,
    pub lat: f64,
    /// Blocks per unit area at the centre, relative to the rural density.
    pub peak: f64,
    /// Gaussian radius of the density bump, km.
    pub sigma_km: f64,
}

/// Which side of the coastline is land.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Land {
    /// Land east of the coastline (a west coast).
    EastOfCoast,
    /// Land west of the coastline (an east coast).
    WestOfCoast,
    /// The whole box is land (no coast).
    Everywhere,
    /// Only the island is land.
    IslandOnly,
}

/// Everything that places one invented state: its box, code, counties,
/// urban cores, lakes, island, coast and special features. The demo state
/// is [`Layout::demo`]; the national country makes one per state.
#[derive(Clone, Debug)]
pub struct Layout {
    /// The two-digit state code.
    pub state: String,
    pub lon_west: f64,
    pub lon_east: f64,
    pub lat_south: f64,
    pub lat_north: f64,
    /// Kilometres per degree of latitude and of longitude in the state
    /// (spherical, for sizing invented features only).
    pub km_lat: f64,
    pub km_lon: f64,
    /// Land area of the state, km^2, for the first guess of the cell size.
    pub land_km2: f64,
    pub counties: Vec<County>,
    pub cores: Vec<Core>,
    pub lakes: Vec<(f64, f64)>,
    /// Centre and semi-axes, degrees.
    pub island: Option<(f64, f64, f64, f64)>,
    pub land: Land,
    /// Coastline knots: (latitude, longitude), south to north.
    pub coast: Vec<(f64, f64)>,
    /// The large forest park: its latitudes and its points per side (the
    /// ring has about twice as many vertices).
    pub forest: Option<((f64, f64), usize)>,
    /// The parks across a county line (near the first point) and across
    /// the state line (1.5 km east of the second).
    pub special_parks: Option<((f64, f64), (f64, f64))>,
    /// No parks and no recreation facilities (a remote island: every block
    /// is far from any such feature).
    pub remote: bool,
    /// Chance that a full coarse side is drawn with 512-2048 segments
    /// (a boundary along a river or a ridge): rural blocks of thousands of
    /// vertices. 0 in the demo.
    pub heavy_sides: f64,
    /// Prefix of the text identifiers (park_id, site_code, ...) so that
    /// they stay unique across states; empty in the demo.
    pub id_prefix: String,
}

impl Layout {
    /// The demo state: the constants above.
    pub fn demo() -> Layout {
        Layout {
            state: STATE.to_string(),
            lon_west: LON_WEST,
            lon_east: LON_EAST,
            lat_south: LAT_SOUTH,
            lat_north: LAT_NORTH,
            km_lat: KM_PER_DEG_LAT,
            km_lon: KM_PER_DEG_LON,
            land_km2: 55_000.0,
            counties: COUNTIES
                .iter()
                .map(|c| County {
                    code: c.code.to_string(),
                    name: c.name.to_string(),
                    lon: c.lon,
                    lat: c.lat,
                })
                .collect(),
            cores: CORES
                .iter()
                .map(|c| Core {
                    name: c.name.to_string(),
                    lon: c.lon,
                    lat: c.lat,
                    peak: c.peak,
                    sigma_km: c.sigma_km,
                })
                .collect(),
            lakes: LAKES.to_vec(),
            island: Some(ISLAND),
            land: Land::EastOfCoast,
            coast: DEMO_COAST.to_vec(),
            forest: Some((FOREST_LATS, 1 << 14)),
            special_parks: Some(((-130.95, 38.5), (LON_EAST, 38.6))),
            remote: false,
            heavy_sides: 0.0,
            id_prefix: String::new(),
        }
    }

    /// Longitude of the coastline at latitude `lat`: smooth steps between
    /// knots plus a small ripple.
    pub fn coast_lon(&self, lat: f64) -> f64 {
        let knots = &self.coast;
        let south = self.lat_south;
        let ripple = 0.012 * ((lat - south) * 31.0).sin() + 0.02 * ((lat - south) * 9.0).sin();
        for w in knots.windows(2) {
            let ((y0, x0), (y1, x1)) = (w[0], w[1]);
            if lat <= y1 {
                let t = ((lat - y0) / (y1 - y0)).clamp(0.0, 1.0);
                let s = t * t * (3.0 - 2.0 * t);
                return x0 + (x1 - x0) * s + ripple;
            }
        }
        knots[knots.len() - 1].1 + ripple
    }

    pub fn in_island(&self, lon: f64, lat: f64) -> bool {
        self.island.is_some_and(|(cx, cy, a, b)| {
            let (u, v) = ((lon - cx) / a, (lat - cy) / b);
            u * u + v * v <= 1.0
        })
    }

    /// Whether (lon, lat) is land (the caller keeps the first column of
    /// coarse cells as sea).
    pub fn is_land(&self, lon: f64, lat: f64) -> bool {
        let main = match self.land {
            Land::EastOfCoast => lon > self.coast_lon(lat),
            Land::WestOfCoast => lon < self.coast_lon(lat),
            Land::Everywhere => true,
            Land::IslandOnly => false,
        };
        main || self.in_island(lon, lat)
    }

    /// Relative block density: 1 in the country, up to `peak` + 1 in a core.
    pub fn density(&self, lon: f64, lat: f64) -> f64 {
        1.0 + self
            .cores
            .iter()
            .map(|c| {
                let dx = (lon - c.lon) * self.km_lon;
                let dy = (lat - c.lat) * self.km_lat;
                c.peak * (-(dx * dx + dy * dy) / (c.sigma_km * c.sigma_km)).exp()
            })
            .sum::<f64>()
    }

    pub fn nearest_core(&self, lon: f64, lat: f64) -> usize {
        let mut best = (f64::INFINITY, 0);
        for (i, c) in self.cores.iter().enumerate() {
            let dx = (lon - c.lon) * self.km_lon;
            let dy = (lat - c.lat) * self.km_lat;
            let d = (dx * dx + dy * dy) / (c.sigma_km * c.sigma_km);
            if d < best.0 {
                best = (d, i);
            }
        }
        best.1
    }

    /// The county whose seed is nearest, measured on a gently warped plane
    /// so that county lines wander.
    pub fn nearest_county(&self, lon: f64, lat: f64) -> usize {
        let wx = lon + 0.14 * (lat * 7.1 + 0.4).sin() + 0.04 * (lat * 23.3).sin();
        let wy = lat + 0.12 * (lon * 6.3 + 1.3).sin() + 0.035 * (lon * 19.9).sin();
        let mut best = (f64::INFINITY, 0);
        for (i, c) in self.counties.iter().enumerate() {
            let dx = (wx - c.lon) * self.km_lon;
            let dy = (wy - c.lat) * self.km_lat;
            let d = dx * dx + dy * dy;
            if d < best.0 {
                best = (d, i);
            }
        }
        best.1
    }
}
