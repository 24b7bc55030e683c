-- hazard-proximity.sql: residents living near pollution sources, by county,
-- and the blocks near the most sources.
--
-- The indicator: the population of census blocks whose boundary lies
-- within 1 mile of any hazard site (a point, or a footprint polygon such as
-- a landfill or a rail yard), by county. One mile is a distance in use in
-- environmental-justice screening (common practice, no source cited here).
-- For each populated block near at least one site, ambit_count gives how
-- many sites lie within that mile; the blocks near the most sites are
-- listed with the kinds of those sites (ambit_near, nearest first).
-- Distances are exact geodesic minimum distances on the WGS84 ellipsoid
-- between the block's boundary and the site's point or footprint
-- (ambit_info() in hazard_parameters records the method).
--
-- Run it on a copy of the demo database:
--     cargo build --release && mkdir -p results \
--       && cp demo-db/demo-region.gpkg results/hazard-proximity.gpkg \
--       && LD_LIBRARY_PATH=$PWD/target/release sqlite3 results/hazard-proximity.gpkg < sql-examples/hazard-proximity.sql
--
-- Inputs (tables of the GeoPackage): blocks (fid, geoid, population,
-- geom), hazard_sites (fid, site_id, kind, geom), counties (geoid, name,
-- geom). Outputs: hazard_parameters, block_hazard_results (one row of ids
-- and results per block, no geometry), block_hazard_proximity (a view of
-- block_hazard_results with the block polygons) and county_hazard_proximity
-- (both layers registered in the GeoPackage, so any GIS opens them),
-- most_exposed_blocks, and results/county-hazard-proximity.csv for joining
-- with other county measures by county_geoid.
--
-- Cautions, carried into the outputs: living near a site is not exposure:
-- what a site emits, how much, wind, water flow, terrain and whether the
-- site still operates are not seen; the site list is incomplete; a block
-- counts whole when any part of it is within the mile. This is a
-- screening measure: results need review by people who know the place and
-- by qualified environmental-health staff before they guide decisions.
--
-- The demo database is invented data (a fictional state over open ocean).

.bail on
-- ambit is found on the library search path (README, "Install").
.load libambit
-- The counts the building steps return go to a log in results/, not the
-- screen; the tables are printed.
.output results/hazard-proximity.log

-- 1. Parameters: every choice in one place, written into the results. ----
DROP TABLE IF EXISTS hazard_parameters;
CREATE TABLE hazard_parameters (build_year INTEGER, hazard_reach_m REAL,
  most_exposed_listed INTEGER, blocks_table TEXT, sites_table TEXT,
  ambit_version TEXT, ambit_info TEXT, sqlite_version TEXT);
INSERT INTO hazard_parameters SELECT
  2026                   AS build_year,
  ambit_miles(1)         AS hazard_reach_m,     -- common practice, no source
  10                     AS most_exposed_listed, -- how many blocks to list
  'blocks'               AS blocks_table,
  'hazard_sites'         AS sites_table,
  ambit_version()        AS ambit_version,
  ambit_info()           AS ambit_info,
  sqlite_version()       AS sqlite_version;

-- 2. One layer of hazard sites, each with the reach; feature ids are the
-- hazard_sites fids. -------------------------------------------------------
SELECT ambit_layer_drop('hazards');
SELECT ambit_layer('hazards', geom, (SELECT hazard_reach_m FROM hazard_parameters), fid)
  FROM hazard_sites WHERE geom IS NOT NULL;

-- 3. Every block: near a site or not and the distance to the nearest site
-- (one sweep, all cores), and the number of sites within reach, counted
-- (ambit_count) only for the blocks the sweep found near one: the others
-- have none. Only ids and results are stored: the block geometries stay in
-- blocks, and the layer block_hazard_proximity is a view that joins them
-- back for a GIS, so the script's extra storage stays small even for a
-- nation's 8 million blocks. -------------------------------------------------
DROP VIEW IF EXISTS block_hazard_proximity;
DROP TABLE IF EXISTS block_hazard_results;
CREATE TABLE block_hazard_results (
  fid INTEGER PRIMARY KEY,
  geoid TEXT NOT NULL,
  county_geoid TEXT NOT NULL,
  population INTEGER NOT NULL,
  near_hazard INTEGER NOT NULL,
  sites_within INTEGER NOT NULL,
  nearest_site_m REAL
);
INSERT INTO block_hazard_results (fid, geoid, county_geoid, population, near_hazard,
                                  sites_within, nearest_site_m)
  SELECT b.fid, b.geoid, substr(b.geoid, 1, 5), b.population, s.reached,
         CASE WHEN s.reached = 1 THEN ambit_count('hazards', b.geom) ELSE 0 END, s.nearest_m
  FROM ambit_sweep('hazards', 'SELECT fid, geom FROM blocks') AS s
  JOIN blocks AS b ON b.fid = s.id;
CREATE VIEW block_hazard_proximity AS
  SELECT r.fid, r.geoid, r.county_geoid, r.population, r.near_hazard, r.sites_within,
         r.nearest_site_m, b.geom
  FROM block_hazard_results AS r JOIN blocks AS b ON b.fid = r.fid;

-- 4. The county table (counties by GEOID characters 1-5): the blocks are
-- summed first and the county polygons joined to the few summed rows. -----
DROP TABLE IF EXISTS county_hazard_proximity;
CREATE TABLE county_hazard_proximity (
  fid INTEGER PRIMARY KEY,
  county_geoid TEXT NOT NULL UNIQUE,
  county_name TEXT,
  build_year INTEGER NOT NULL,
  blocks INTEGER NOT NULL,
  blocks_near_hazard INTEGER NOT NULL,
  population INTEGER NOT NULL,
  population_near_hazard INTEGER NOT NULL,
  pct_near_hazard REAL,
  most_sites_near_a_block INTEGER NOT NULL,
  geom MULTIPOLYGON
);
INSERT INTO county_hazard_proximity (county_geoid, county_name, build_year, blocks,
    blocks_near_hazard, population, population_near_hazard, pct_near_hazard,
    most_sites_near_a_block, geom)
  SELECT t.county_geoid, c.name, (SELECT build_year FROM hazard_parameters),
         t.blocks, t.blocks_near_hazard, t.population, t.population_near_hazard,
         round(100.0 * t.population_near_hazard / nullif(t.population, 0), 1),
         t.most_sites, c.geom
  FROM (SELECT county_geoid, count(*) AS blocks, sum(near_hazard) AS blocks_near_hazard,
               sum(population) AS population,
               sum(population * near_hazard) AS population_near_hazard,
               max(CASE WHEN population > 0 THEN sites_within ELSE 0 END) AS most_sites
        FROM block_hazard_results GROUP BY county_geoid) AS t
  LEFT JOIN counties AS c ON c.geoid = t.county_geoid
  ORDER BY t.county_geoid;

-- 5. The populated blocks near the most sites (ties: more residents first,
-- then GEOID), with the kinds of the sites in reach, nearest first. The
-- few listed are chosen from the results alone; only their polygons are
-- read back for ambit_near. ------------------------------------------------
DROP TABLE IF EXISTS most_exposed_blocks;
CREATE TABLE most_exposed_blocks (rank INTEGER, geoid TEXT, county_geoid TEXT,
  population INTEGER, sites_within INTEGER, nearest_site_m REAL, site_kinds TEXT);
INSERT INTO most_exposed_blocks
  SELECT row_number() OVER (ORDER BY e.sites_within DESC, e.population DESC, e.geoid) AS rank,
         e.geoid, e.county_geoid, e.population, e.sites_within,
         round(e.nearest_site_m, 1) AS nearest_site_m,
         (SELECT group_concat(kind, ', ') FROM (
            SELECT h.kind FROM ambit_near('hazards', b.geom) AS n
            JOIN hazard_sites AS h ON h.fid = n.feature_id
            ORDER BY n.distance_m, h.fid)) AS site_kinds
  FROM (SELECT fid, geoid, county_geoid, population, sites_within, nearest_site_m
        FROM block_hazard_results
        WHERE population > 0 AND sites_within > 0
        ORDER BY sites_within DESC, population DESC, geoid
        LIMIT (SELECT most_exposed_listed FROM hazard_parameters)) AS e
  JOIN blocks AS b ON b.fid = e.fid
  ORDER BY rank;

-- 6. GeoPackage layers, with the cautions in their descriptions. ---------
SELECT ambit_gpkg_register('block_hazard_proximity', 'geom', 'POLYGON');
SELECT ambit_gpkg_register('county_hazard_proximity', 'geom', 'MULTIPOLYGON');
-- Tables without geometry, registered as GeoPackage attributes tables so
-- GIS programs list them with their column types.
SELECT ambit_gpkg_register('hazard_parameters', NULL);
SELECT ambit_gpkg_register('block_hazard_results', NULL);
SELECT ambit_gpkg_register('most_exposed_blocks', NULL);
UPDATE gpkg_contents SET description =
  'Hazard proximity by census block: near_hazard = 1 when a hazard site (point or footprint) lies '
  || 'within 1 mile of the block boundary (a screening distance, common practice); sites_within counts '
  || 'them; exact geodesic distances (ambit ' || ambit_version() || '). Proximity is not exposure: '
  || 'emissions, wind, water and operating status are not seen; the site list is incomplete; review '
  || 'with qualified staff before use in health decisions.'
  WHERE table_name = 'block_hazard_proximity';
UPDATE gpkg_contents SET description =
  'Share of county residents in blocks within 1 mile of a hazard site (see block_hazard_proximity). '
  || 'Proximity is not exposure; the site list is incomplete; review with qualified staff before use.'
  WHERE table_name = 'county_hazard_proximity';

-- 7. The county table as CSV, for joining with other county measures. ----
.headers on
.mode csv
.once results/county-hazard-proximity.csv
SELECT county_geoid, county_name, build_year, blocks, blocks_near_hazard, population,
       population_near_hazard, pct_near_hazard, most_sites_near_a_block
FROM county_hazard_proximity ORDER BY county_geoid;

-- 8. Print both tables. ----------------------------------------------------
.output stdout
.mode box
SELECT county, name, blocks, blocks_near, population, population_near, pct, most_sites
FROM (
  SELECT 0 AS k, county_geoid AS county, county_name AS name, blocks,
         blocks_near_hazard AS blocks_near, population, population_near_hazard AS population_near,
         pct_near_hazard AS pct, most_sites_near_a_block AS most_sites
  FROM county_hazard_proximity
  UNION ALL
  SELECT 1, '99', 'all counties', sum(blocks), sum(blocks_near_hazard), sum(population),
         sum(population_near_hazard),
         round(100.0 * sum(population_near_hazard) / nullif(sum(population), 0), 1),
         max(most_sites_near_a_block)
  FROM county_hazard_proximity)
ORDER BY k, county;
.mode box --wrap 0
SELECT rank, geoid AS block, population, sites_within AS sites, nearest_site_m AS nearest_m,
       site_kinds
FROM most_exposed_blocks ORDER BY rank;
.mode list
.headers off
SELECT printf('Hazard sites: %d (%d footprints); reach 1 mile from the block boundary.',
              count(*), sum(ST_GeometryType(geom) = 'POLYGON'))
FROM hazard_sites WHERE geom IS NOT NULL;
SELECT 'Invented demo data. Living near a site is not exposure: emissions, wind, water flow and whether a site operates are not seen; the site list is incomplete; a block counts whole when any part is within the mile. A screening measure: review with local knowledge and qualified environmental-health staff before these figures guide decisions about people''s health.';
