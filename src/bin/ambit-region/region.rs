//! One state, generated into one folder: its grid, its blocks and
//! features, then its counties, urban areas and libraries. The demo writes
//! the state straight into the output folder; the national country writes
//! each state into a folder of its own and merges them.

use crate::{
    generator::{Generator, Stats},
    grid::{calibrate, URBAN_LEVEL},
    layout::Layout,
    load_sql::TABLES,
    output::{Csv, Extent},
    shapes::{multipolygon, trace},
};
use ambit::blob::wkt;
use ambit::geometry::Shape;
use std::collections::HashMap;
use std::path::Path;

/// What one state's generation made.
pub struct Region {
    /// Rows per table, in the order of `TABLES`.
    pub counts: Vec<(&'static str, u64)>,
    pub stats: Stats,
    /// Parts of each county's MULTIPOLYGON (counties with blocks only).
    pub parts: Vec<usize>,
    pub extents: HashMap<&'static str, Extent>,
    /// The coarse grid.
    pub nx: i64,
    pub ny: i64,
}

/// Generates the state of layout `lay` with about `target` blocks into
/// `dir` (one CSV file per table, fids from 1). Counties without blocks
/// are left out.
pub fn generate(lay: &Layout, seed: u64, target: usize, dir: &Path) -> std::io::Result<Region> {
    let grid = calibrate(lay, seed, target);
    let lakes = lay
        .lakes
        .iter()
        .filter_map(|&(lon, lat)| {
            let fx = ((lon - lay.lon_west) / grid.dlon) as i64;
            let fy = ((lat - lay.lat_south) / grid.dlat) as i64;
            grid.leaf_at(fx, fy).filter(|l| l.level < URBAN_LEVEL)
        })
        .collect();
    let csv = |t: usize| Csv::create(dir, &format!("{}.csv", TABLES[t].name), TABLES[t].csv);
    let mut gen = Generator {
        g: &grid,
        seed,
        lakes,
        blocks: csv(1)?,
        parks: csv(2)?,
        rec: csv(3)?,
        fitness: csv(4)?,
        groceries: csv(6)?,
        clinics: csv(7)?,
        hazards: csv(8)?,
        libraries: Vec::new(),
        densest: vec![None; lay.counties.len()],
        county_sides: (0..lay.counties.len()).map(|_| Vec::new()).collect(),
        urban_sides: (0..lay.cores.len()).map(|_| Vec::new()).collect(),
        extents: HashMap::new(),
        stats: Stats::default(),
    };
    gen.run_blocks()?;
    gen.special_parks()?;

    let mut counties = csv(0)?;
    let mut parts = Vec::new();
    for (i, c) in lay.counties.iter().enumerate() {
        if gen.county_sides[i].is_empty() {
            continue;
        }
        let geom = multipolygon(trace(&gen.county_sides[i]));
        if let Shape::MultiPolygon(p) = &geom.shape {
            parts.push(p.len());
        }
        gen.extent("counties", &geom);
        counties.write(&[
            &(counties.rows + 1).to_string(),
            &format!("{}{}", lay.state, c.code),
            &c.name,
            &wkt::write(&geom),
        ])?;
    }
    // The boundaries are written: free them before the next state.
    gen.county_sides = Vec::new();
    let mut urban = csv(5)?;
    for (i, c) in lay.cores.iter().enumerate() {
        if gen.urban_sides[i].is_empty() {
            continue;
        }
        let geom = multipolygon(trace(&gen.urban_sides[i]));
        gen.extent("urban_areas", &geom);
        let fid = (urban.rows + 1).to_string();
        urban.write(&[&fid, &c.name, &wkt::write(&geom)])?;
    }
    let mut libraries = csv(9)?;
    gen.write_libraries(&mut libraries)?;
    let stats = std::mem::take(&mut gen.stats);
    let counts = vec![
        ("counties", counties.finish()?),
        ("blocks", gen.blocks.finish()?),
        ("parks", gen.parks.finish()?),
        ("rec_sites", gen.rec.finish()?),
        ("fitness_list", gen.fitness.finish()?),
        ("urban_areas", urban.finish()?),
        ("groceries", gen.groceries.finish()?),
        ("clinics", gen.clinics.finish()?),
        ("hazard_sites", gen.hazards.finish()?),
        ("libraries", libraries.finish()?),
    ];
    Ok(Region {
        counts,
        stats,
        parts,
        extents: gen.extents,
        nx: grid.nx,
        ny: grid.ny,
    })
}
