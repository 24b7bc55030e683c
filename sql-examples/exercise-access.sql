-- exercise-access.sql: access to exercise opportunities, by county.
--
-- The indicator: the share of each county's residents who live in a census
-- block whose boundary lies within reach of an exercise opportunity, where
-- reach is half a mile for a park and, for a recreation facility, one mile
-- when the facility lies in an urban area and three miles when it does not
-- (the thresholds in use in county health rankings; common practice, no
-- source cited here). Distances are exact geodesic distances on the WGS84
-- ellipsoid between the block's boundary and the park or facility
-- (ambit_info() in build_parameters records the method and tolerances).
--
-- Run it on a copy of the demo database (the README's first command):
--     cargo build --release && mkdir -p results \
--       && cp demo-db/demo-region.gpkg results/exercise-access.gpkg \
--       && LD_LIBRARY_PATH=$PWD/target/release sqlite3 results/exercise-access.gpkg < sql-examples/exercise-access.sql
--
-- Inputs (tables of the GeoPackage): blocks (geoid, population, geom),
-- parks (geom), rec_sites and fitness_list (two facility lists to merge),
-- urban_areas (geom). Outputs: build_parameters, facilities,
-- block_results (one row of ids and results per block, no geometry),
-- block_access (a view of block_results with the block polygons) and
-- county_access (all three layers registered in the GeoPackage, so any GIS
-- opens them), results/county-exercise-access.csv for joining with other
-- county measures by county_geoid, and results/exercise-access-map.svg.
--
-- Cautions, carried into the outputs: straight-line reach is not walking
-- access; barriers, entrances, fees and opening hours are not seen; the
-- facility lists are incomplete; results need local review before they
-- guide decisions about people's health.
--
-- The demo database is invented data (a fictional state over open ocean).

.bail on
-- ambit is found on the library search path (README, "Install").
.load libambit
-- The counts the building steps return go to a log in results/, not the
-- screen; the county table is printed.
.output results/exercise-access.log

-- 1. Parameters: every choice in one place, written into the results. ----
DROP TABLE IF EXISTS build_parameters;
CREATE TABLE build_parameters (build_year INTEGER, park_reach_m REAL,
  urban_facility_reach_m REAL, rural_facility_reach_m REAL,
  same_facility_within_m REAL, nearest_within_m REAL, blocks_table TEXT, parks_table TEXT,
  facility_tables TEXT, urban_table TEXT, ambit_version TEXT, ambit_info TEXT,
  sqlite_version TEXT);
INSERT INTO build_parameters SELECT
  2026                   AS build_year,
  ambit_miles(0.5)       AS park_reach_m,
  ambit_miles(1)         AS urban_facility_reach_m,
  ambit_miles(3)         AS rural_facility_reach_m,
  20.0                   AS same_facility_within_m,   -- entries of the two lists this close are one place
  ambit_miles(10)        AS nearest_within_m,         -- nearest_m is stored up to this, NULL beyond
  'blocks'               AS blocks_table,
  'parks'                AS parks_table,
  'rec_sites, fitness_list' AS facility_tables,
  'urban_areas'          AS urban_table,
  ambit_version()        AS ambit_version,
  ambit_info()           AS ambit_info,
  sqlite_version()       AS sqlite_version;

-- 2. Facilities: merge the two sources. ---------------------------------
-- The registry (rec_sites) is taken whole; a licensing-list entry within
-- same_facility_within_m of a registry site is the same place and is
-- dropped; entries with no coordinates cannot be placed and are counted in
-- facility_sources below.
DROP TABLE IF EXISTS facilities;
CREATE TABLE facilities (
  fid INTEGER PRIMARY KEY,
  source TEXT NOT NULL,
  source_id TEXT NOT NULL,
  name TEXT,
  urban INTEGER,
  reach_m REAL,
  geom POINT
);
INSERT INTO facilities (source, source_id, name, geom)
  SELECT 'rec_sites', site_code, site_name, geom FROM rec_sites WHERE geom IS NOT NULL;
SELECT ambit_layer_drop('registry_sites');
SELECT ambit_layer('registry_sites', geom, (SELECT same_facility_within_m FROM build_parameters))
  FROM rec_sites WHERE geom IS NOT NULL;
INSERT INTO facilities (source, source_id, name, geom)
  SELECT 'fitness_list', license_no, business, geom FROM fitness_list
  WHERE geom IS NOT NULL AND ambit_reached('registry_sites', geom) = 0;

DROP TABLE IF EXISTS facility_sources;
CREATE TABLE facility_sources (source TEXT, entries INTEGER,
  without_location INTEGER, kept INTEGER);
INSERT INTO facility_sources
  SELECT 'rec_sites' AS source, count(*) AS entries, sum(geom IS NULL) AS without_location,
         (SELECT count(*) FROM facilities WHERE source = 'rec_sites') AS kept
  FROM rec_sites
  UNION ALL
  SELECT 'fitness_list', count(*), sum(geom IS NULL),
         (SELECT count(*) FROM facilities WHERE source = 'fitness_list')
  FROM fitness_list;

-- 3. Urban or rural: a facility inside (or on the edge of) an urban area
-- gets the urban reach. -----------------------------------------------------
SELECT ambit_layer_drop('urban');
SELECT ambit_layer('urban', geom) FROM urban_areas;
UPDATE facilities SET
  urban = ambit_reached('urban', geom),
  reach_m = CASE WHEN ambit_reached('urban', geom)
                 THEN (SELECT urban_facility_reach_m FROM build_parameters)
                 ELSE (SELECT rural_facility_reach_m FROM build_parameters) END;

-- 4. One layer of exercise opportunities, each with its own reach. -------
-- Feature ids: parks keep their fid; facilities are 1000000 + fid.
SELECT ambit_layer_drop('exercise');
SELECT ambit_layer('exercise', geom, (SELECT park_reach_m FROM build_parameters), fid) FROM parks;
SELECT ambit_layer('exercise', geom, reach_m, 1000000 + fid) FROM facilities;

-- 5. Every block: within reach or not, and the distance to the nearest
-- opportunity when it is within nearest_within_m (NULL beyond: the search
-- stops there, which keeps remote blocks cheap; all cores; progress on
-- stderr in a terminal). Only ids and
-- results are stored: the block geometries stay in blocks, and the layer
-- block_access (step 7) is a view that joins them back for a GIS, so the
-- script's extra storage stays small even for a nation's 8 million blocks.
DROP VIEW IF EXISTS block_access;
DROP TABLE IF EXISTS block_results;
CREATE TABLE block_results (
  fid INTEGER PRIMARY KEY,
  geoid TEXT NOT NULL,
  county_geoid TEXT NOT NULL,
  population INTEGER NOT NULL,
  access INTEGER,
  nearest_m REAL
);
INSERT INTO block_results (fid, geoid, county_geoid, population, access, nearest_m)
  SELECT b.fid, b.geoid, substr(b.geoid, 1, 5), b.population, s.reached, s.nearest_m
  FROM ambit_sweep('exercise', 'SELECT fid, geom FROM blocks',
                   (SELECT nearest_within_m FROM build_parameters)) AS s
  JOIN blocks AS b ON b.fid = s.id;
CREATE VIEW block_access AS
  SELECT r.fid, r.geoid, r.county_geoid, r.population, r.access, r.nearest_m, b.geom
  FROM block_results AS r JOIN blocks AS b ON b.fid = r.fid;

-- 6. The county table: counties by the state+county part of the block id
-- (GEOID characters 1-5). The blocks are summed first and the county
-- polygons joined to the few summed rows, so no block carries a county
-- polygon through the grouping (which at national size fills the disk).
DROP TABLE IF EXISTS county_access;
CREATE TABLE county_access (
  fid INTEGER PRIMARY KEY,
  county_geoid TEXT NOT NULL UNIQUE,
  county_name TEXT,
  build_year INTEGER NOT NULL,
  blocks INTEGER NOT NULL,
  blocks_with_access INTEGER NOT NULL,
  population INTEGER NOT NULL,
  population_with_access INTEGER NOT NULL,
  pct_with_access REAL,
  geom MULTIPOLYGON
);
INSERT INTO county_access (county_geoid, county_name, build_year, blocks, blocks_with_access,
                           population, population_with_access, pct_with_access, geom)
  SELECT t.county_geoid, c.name, (SELECT build_year FROM build_parameters),
         t.blocks, t.blocks_with_access, t.population, t.population_with_access,
         round(100.0 * t.population_with_access / nullif(t.population, 0), 1),
         c.geom
  FROM (SELECT county_geoid, count(*) AS blocks, sum(access) AS blocks_with_access,
               sum(population) AS population,
               sum(CASE WHEN access = 1 THEN population ELSE 0 END) AS population_with_access
        FROM block_results GROUP BY county_geoid) AS t
  LEFT JOIN counties AS c ON c.geoid = t.county_geoid
  ORDER BY t.county_geoid;

-- 7. GeoPackage layers, with the cautions in their descriptions. ---------
SELECT ambit_gpkg_register('block_access', 'geom', 'POLYGON');
SELECT ambit_gpkg_register('county_access', 'geom', 'MULTIPOLYGON');
SELECT ambit_gpkg_register('facilities', 'geom', 'POINT');
-- Tables without geometry, registered as GeoPackage attributes tables so
-- GIS programs list them with their column types.
SELECT ambit_gpkg_register('build_parameters', NULL);
SELECT ambit_gpkg_register('facility_sources', NULL);
SELECT ambit_gpkg_register('block_results', NULL);
UPDATE gpkg_contents SET description =
  'Exercise access by census block: access = 1 when a park lies within 0.5 mile of the block boundary, '
  || 'or a recreation facility within 1 mile (urban) or 3 miles (rural); exact geodesic distances (ambit '
  || ambit_version() || '). Straight-line reach is not walking access; barriers, entrances, fees and opening '
  || 'hours are not seen; facility lists are incomplete; review locally before use in health decisions.'
  WHERE table_name = 'block_access';
UPDATE gpkg_contents SET description =
  'Share of county residents in blocks with exercise access (see block_access). Straight-line reach is not '
  || 'walking access; barriers, entrances, fees and opening hours are not seen; facility lists are '
  || 'incomplete; review locally before use in health decisions.'
  WHERE table_name = 'county_access';
UPDATE gpkg_contents SET description =
  'Recreation facilities merged from rec_sites and fitness_list, tagged urban or rural, with their reach.'
  WHERE table_name = 'facilities';

-- 8. A quick-look map of the county shares, for the report. -------------
SELECT writefile('results/exercise-access-map.svg',
  ambit_choropleth_svg(geom, pct_with_access,
    'Residents within reach of exercise opportunities (%), invented demo region'))
FROM (SELECT geom, pct_with_access FROM county_access ORDER BY county_geoid);

-- 9. The county table as CSV, for joining with other county measures. ----
.headers on
.mode csv
.once results/county-exercise-access.csv
SELECT county_geoid, county_name, build_year, blocks, blocks_with_access, population,
       population_with_access, pct_with_access FROM county_access ORDER BY county_geoid;

-- 10. Print it. ------------------------------------------------------------
.output stdout
.mode box
SELECT county_geoid AS county, county_name AS name, blocks, population,
       population_with_access AS with_access, pct_with_access AS pct
FROM county_access ORDER BY county_geoid;
.mode list
.headers off
SELECT 'Invented demo data. Straight-line reach is not walking access; barriers, entrances, fees and opening hours are not seen; facility lists are incomplete. Review with local knowledge before these figures guide decisions about people''s health.';
