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
//! `--national` (or `--blocks national`) makes instead an invented country
//! of 54 states and about 3,100 counties, 8.1 million blocks by default
//! (`--blocks N` from 1000 to 100 million), with heavy rural blocks, forest
//! parks of 100,000-400,000 vertices and remote islands; see national.rs.
//! The states are generated in parallel and appended in order, so the
//! output is the same on any number of threads (RAYON_NUM_THREADS), and
//! memory stays bounded (one state per thread, never all blocks).
//! `demo-db/build-region national SEED OUT.gpkg` builds its GeoPackage.
//! The demo state (without `--national`) is unchanged by this mode.
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

mod args;
mod generator;
mod grid;
mod layout;
mod load_sql;
mod names;
mod national;
mod output;
mod random;
mod region;
mod shapes;

use args::{parse_args, Args, USAGE};
use layout::Layout;
use load_sql::load_sql;
use std::io::Write;
use std::process::ExitCode;
use std::time::Instant;

fn run(args: &Args) -> Result<(), String> {
    let started = Instant::now();
    let io = |e: std::io::Error| e.to_string();
    std::fs::create_dir_all(&args.out)
        .map_err(|e| format!("cannot create {}: {e}", args.out.display()))?;
    let dir = args
        .out
        .canonicalize()
        .map_err(|e| format!("{}: {e}", args.out.display()))?;
    if args.national {
        return national::run(args, &dir, started);
    }
    let lay = Layout::demo();
    let region = region::generate(&lay, args.seed, args.blocks, &dir).map_err(io)?;
    let (counts, st, parts) = (&region.counts, &region.stats, &region.parts);
    let sql = load_sql(&dir, args, &region.extents)?;
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
        st.parks_with_holes, st.multi_parks, st.duplicates, st.no_coordinates, region.nx, region.ny
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
