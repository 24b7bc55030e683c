-- land-coverage.sql: the share of each county's land within half a mile
-- of a park.
--
-- The measure: of the land of a county (its census blocks that are not
-- water-only), the part whose points lie within 0.5 mile of a park (common
-- practice for park reach, no source cited here), as a percentage. It
-- describes land, not people: a county can have most residents near a park
-- and little of its land, or the reverse. Distances are exact geodesic
-- distances on the WGS84 ellipsoid from each point of the land to the
-- nearest park boundary (or 0 inside a park); ambit_share computes each
-- block's covered area in the block's azimuthal equidistant plane (Karney,
-- "Algorithms for geodesics", J. Geodesy 87 (2013), section 8) with exact
-- line sections and adaptive Gauss-Kronrod quadrature (QUADPACK, Piessens
-- et al. 1983); block areas are geodesic (Karney 2013, section 6). The
-- whole-county share of the county polygon (water included; ambit_share
-- through ambit_sweep) is printed beside it as a cross-check.
--
-- Run it on a copy of the demo database:
--     cargo build --release && mkdir -p results \
--       && cp demo-db/demo-region.gpkg results/land-coverage.gpkg \
--       && LD_LIBRARY_PATH=$PWD/target/release sqlite3 results/land-coverage.gpkg < sql-examples/land-coverage.sql
--
-- Inputs: blocks (geoid, water, geom), parks (geom), counties (geoid, name,
-- geom). Outputs: coverage_parameters, block_land_coverage, county_land_coverage
-- (a GeoPackage layer) and results/county-land-coverage.csv.
--
-- Cautions: land within straight-line reach of a park is not land with
-- walking access (barriers, entrances and fees are not seen); the park list
-- is incomplete; results need local review before they guide decisions.
--
-- The demo database is invented data (a fictional state over open ocean).

.bail on
-- ambit is found on the library search path (README, "Install").
.load libambit
.output results/land-coverage.log

-- 1. Parameters. ------------------------------------------------------------
DROP TABLE IF EXISTS coverage_parameters;
CREATE TABLE coverage_parameters (build_year INTEGER, park_reach_m REAL, land TEXT,
  parks_table TEXT, ambit_version TEXT, ambit_info TEXT, sqlite_version TEXT);
INSERT INTO coverage_parameters SELECT
  2026                   AS build_year,
  ambit_miles(0.5)       AS park_reach_m,
  'blocks (water = 0)'   AS land,
  'parks'                AS parks_table,
  ambit_version()        AS ambit_version,
  ambit_info()           AS ambit_info,
  sqlite_version()       AS sqlite_version;

-- 2. The parks, each reaching half a mile. ------------------------------------
SELECT ambit_layer_drop('parks_reach');
SELECT ambit_layer('parks_reach', geom, (SELECT park_reach_m FROM coverage_parameters), fid)
FROM parks;

-- 3. Every land block: its geodesic area and the share of it within reach
-- (all cores). ---------------------------------------------------------------
DROP TABLE IF EXISTS block_land_coverage;
CREATE TABLE block_land_coverage (
  fid INTEGER PRIMARY KEY,
  geoid TEXT NOT NULL,
  county_geoid TEXT NOT NULL,
  area_m2 REAL NOT NULL,
  share REAL NOT NULL
);
INSERT INTO block_land_coverage (fid, geoid, county_geoid, area_m2, share)
  SELECT b.fid, b.geoid, substr(b.geoid, 1, 5), ambit_area(b.geom), s.share
  FROM ambit_sweep('parks_reach', 'SELECT fid, geom FROM blocks WHERE water = 0') AS s
  JOIN blocks AS b ON b.fid = s.id;

-- 4. Counties: land, land within reach, and the whole-county cross-check. --
DROP TABLE IF EXISTS county_land_coverage;
CREATE TABLE county_land_coverage (
  fid INTEGER PRIMARY KEY,
  county_geoid TEXT NOT NULL UNIQUE,
  county_name TEXT,
  build_year INTEGER NOT NULL,
  land_blocks INTEGER NOT NULL,
  land_km2 REAL NOT NULL,
  land_within_reach_km2 REAL NOT NULL,
  pct_land_within_reach REAL,
  pct_county_within_reach REAL,
  geom MULTIPOLYGON
);
-- The whole-county cross-check on all cores: ambit_sweep's share, the same
-- numbers as ambit_share called county by county (which took 16 of a
-- nation's 27 minutes on one core).
DROP TABLE IF EXISTS temp.county_share;
CREATE TEMP TABLE county_share (geoid TEXT PRIMARY KEY, share REAL);
INSERT INTO temp.county_share
  SELECT id, share FROM ambit_sweep('parks_reach', 'SELECT geoid, geom FROM counties WHERE geom IS NOT NULL');
INSERT INTO county_land_coverage (county_geoid, county_name, build_year, land_blocks, land_km2,
                                  land_within_reach_km2, pct_land_within_reach,
                                  pct_county_within_reach, geom)
  SELECT l.county_geoid, c.name, (SELECT build_year FROM coverage_parameters), l.blocks,
         l.area_m2 / 1e6, l.covered_m2 / 1e6, 100.0 * l.covered_m2 / l.area_m2,
         100.0 * s.share, c.geom
  FROM (SELECT county_geoid, count(*) AS blocks, sum(area_m2) AS area_m2,
               sum(area_m2 * share) AS covered_m2
        FROM block_land_coverage GROUP BY county_geoid) AS l
  LEFT JOIN counties AS c ON c.geoid = l.county_geoid
  LEFT JOIN temp.county_share AS s ON s.geoid = l.county_geoid
  ORDER BY l.county_geoid;
DROP TABLE temp.county_share;

SELECT ambit_gpkg_register('county_land_coverage', 'geom', 'MULTIPOLYGON');
-- Tables without geometry, registered as GeoPackage attributes tables so
-- GIS programs list them with their column types.
SELECT ambit_gpkg_register('coverage_parameters', NULL);
SELECT ambit_gpkg_register('block_land_coverage', NULL);
UPDATE gpkg_contents SET description =
  'Share of county land (blocks that are not water-only) within 0.5 mile of a park, exact geodesic '
  || 'distances and areas (ambit ' || ambit_version() || '). Straight-line reach is not walking access; '
  || 'barriers, entrances and fees are not seen; the park list is incomplete; review locally before use.'
  WHERE table_name = 'county_land_coverage';

-- 5. The county table as CSV. ---------------------------------------------
.headers on
.mode csv
.once results/county-land-coverage.csv
SELECT county_geoid, county_name, build_year, land_blocks, land_km2, land_within_reach_km2,
       pct_land_within_reach, pct_county_within_reach
FROM county_land_coverage ORDER BY county_geoid;

-- 6. Print it. ----------------------------------------------------------------
.output stdout
.mode box
SELECT county_geoid AS county, county_name AS name, land_blocks AS blocks,
       round(land_km2, 1) AS land_km2, round(land_within_reach_km2, 1) AS within_km2,
       round(pct_land_within_reach, 2) AS pct_land, round(pct_county_within_reach, 2) AS pct_county
FROM county_land_coverage ORDER BY county_geoid;
.mode list
.headers off
SELECT 'Invented demo data. Land within straight-line reach of a park is not land with walking access; barriers, entrances and fees are not seen; the park list is incomplete. Review with local knowledge before these figures guide decisions.';
