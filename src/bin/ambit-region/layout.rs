//! The fixed layout of the demo state (all invented): its box, counties,
//! urban cores, lakes, island and coast.

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

/// Longitude of the invented coastline at latitude `lat` (land lies east):
/// smooth steps between knots plus a small ripple.
pub fn coast_lon(lat: f64) -> f64 {
    pub const KNOTS: [(f64, f64); 8] = [
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

pub fn in_island(lon: f64, lat: f64) -> bool {
    let (cx, cy, a, b) = ISLAND;
    let (u, v) = ((lon - cx) / a, (lat - cy) / b);
    u * u + v * v <= 1.0
}

/// Relative block density: 1 in the country, up to `peak` + 1 in a core.
pub fn density(lon: f64, lat: f64) -> f64 {
    1.0 + CORES
        .iter()
        .map(|c| {
            let dx = (lon - c.lon) * KM_PER_DEG_LON;
            let dy = (lat - c.lat) * KM_PER_DEG_LAT;
            c.peak * (-(dx * dx + dy * dy) / (c.sigma_km * c.sigma_km)).exp()
        })
        .sum::<f64>()
}

pub fn nearest_core(lon: f64, lat: f64) -> usize {
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
pub fn nearest_county(lon: f64, lat: f64) -> usize {
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
