-- sensitivity.sql: how the share of residents near a park depends on the
-- distance chosen, by county.
--
-- The question: an indicator such as "residents within half a mile of a
-- park" turns on its threshold. This script computes, from ONE pass of
-- nearest distances, the share of each county's residents who live in a
-- census block whose boundary lies within each of several distances of a
-- park: 0.25, 0.5, 0.75 and 1 mile (half a mile is the distance in use for
-- parks in county health rankings; the others bracket it; common practice,
-- no source cited here). The distances are rows of park_thresholds: change
-- them there and every table follows, the printed one included. Each
-- block's distance to its nearest park is computed once (ambit_sweep's
-- nearest_m, exact geodesic distance on the WGS84 ellipsoid); every share
-- then comes from comparing those stored distances with the thresholds, so
-- the shares cannot fall as the threshold grows. The comparison is made
-- once per block: each block's residents go to the smallest threshold that
-- holds it, and a county's residents within a threshold are the sum of its
-- bands up to that threshold (so the grouping sorts one row per block, not
-- one per block and threshold).
--
-- Run it on a copy of the demo database:
--     cargo build --release && mkdir -p results \
--       && cp demo-db/demo-region.gpkg results/sensitivity.gpkg \
--       && LD_LIBRARY_PATH=$PWD/target/release sqlite3 results/sensitivity.gpkg < sql-examples/sensitivity.sql
--
-- Inputs (tables of the GeoPackage): blocks (fid, geoid, population,
-- geom), parks (fid, geom), counties (geoid, name). Outputs:
-- park_sensitivity_parameters, park_thresholds, block_park_distance (ids
-- and distances, no geometry), county_park_sensitivity (one row per county
-- and threshold),
-- results/county-park-sensitivity.csv, and results/park-sensitivity-table.sql
-- (the statement that prints the wide table, written from park_thresholds).
--
-- Cautions, carried into the outputs: straight-line reach is not walking
-- access; park entrances, barriers, fees, opening hours and what a park
-- offers are not seen; the park list is incomplete; a block counts whole
-- when any part of its boundary is within the distance. The spread across
-- thresholds shows how much a single figure depends on a choice; local
-- practice and qualified review should decide which distance fits.
--
-- The demo database is invented data (a fictional state over open ocean).

.bail on
-- ambit is found on the library search path (README, "Install").
.load libambit
-- The counts the building steps return go to a log in results/, not the
-- screen; the tables are printed.
.output results/sensitivity.log

-- 1. Parameters: every choice in one place, written into the results. ----
DROP TABLE IF EXISTS park_thresholds;
CREATE TABLE park_thresholds (
  miles REAL PRIMARY KEY,
  metres REAL NOT NULL
);
INSERT INTO park_thresholds (miles, metres)
  SELECT column1, ambit_miles(column1) FROM (VALUES (0.25), (0.5), (0.75), (1.0));

DROP TABLE IF EXISTS park_sensitivity_parameters;
CREATE TABLE park_sensitivity_parameters (build_year INTEGER, thresholds_miles TEXT,
  distance_rule TEXT, blocks_table TEXT, parks_table TEXT, ambit_version TEXT,
  ambit_info TEXT, sqlite_version TEXT);
INSERT INTO park_sensitivity_parameters SELECT
  2026                   AS build_year,
  (SELECT group_concat(miles, ', ') FROM (SELECT miles FROM park_thresholds ORDER BY miles))
                         AS thresholds_miles,
  'distance from the block boundary to the nearest park, computed once per block' AS distance_rule,
  'blocks'               AS blocks_table,
  'parks'                AS parks_table,
  ambit_version()        AS ambit_version,
  ambit_info()           AS ambit_info,
  sqlite_version()       AS sqlite_version;

-- 2. The parks layer; its reach is the largest threshold, so `reached`
-- says whether a block is within any of them. ------------------------------
SELECT ambit_layer_drop('parks');
SELECT ambit_layer('parks', geom, (SELECT max(metres) FROM park_thresholds), fid)
  FROM parks WHERE geom IS NOT NULL;

-- 3. One pass: every block's distance to its nearest park. ---------------
DROP TABLE IF EXISTS block_park_distance;
CREATE TABLE block_park_distance (
  fid INTEGER PRIMARY KEY,
  geoid TEXT NOT NULL,
  county_geoid TEXT NOT NULL,
  population INTEGER NOT NULL,
  nearest_park_m REAL            -- NULL only when there is no park at all
);
INSERT INTO block_park_distance (fid, geoid, county_geoid, population, nearest_park_m)
  SELECT b.fid, b.geoid, substr(b.geoid, 1, 5), b.population, s.nearest_m
  FROM ambit_sweep('parks', 'SELECT fid, geom FROM blocks') AS s
  JOIN blocks AS b ON b.fid = s.id;

-- 4. Shares per county and threshold, from the stored distances (ties
-- count as within). Each block's band is the smallest threshold whose
-- distance holds it (NULL when none does); residents are summed by county
-- and band, and then, for each threshold, over the bands up to it. --------
DROP TABLE IF EXISTS temp.county_park_bands;
CREATE TEMP TABLE county_park_bands AS
  SELECT county_geoid, band_m, sum(population) AS population
  FROM (SELECT county_geoid, population,
               (SELECT min(metres) FROM park_thresholds WHERE d.nearest_park_m <= metres) AS band_m
        FROM block_park_distance AS d)
  GROUP BY county_geoid, band_m;

DROP TABLE IF EXISTS county_park_sensitivity;
CREATE TABLE county_park_sensitivity (
  county_geoid TEXT NOT NULL,
  county_name TEXT,
  miles REAL NOT NULL,
  metres REAL NOT NULL,
  population INTEGER NOT NULL,
  population_within INTEGER NOT NULL,
  pct_within REAL,
  PRIMARY KEY (county_geoid, miles)
);
INSERT INTO county_park_sensitivity
  SELECT s.county_geoid, c.name, s.miles, s.metres, s.population, s.population_within,
         round(100.0 * s.population_within / nullif(s.population, 0), 1)
  FROM (SELECT b.county_geoid, t.miles, t.metres, sum(b.population) AS population,
               sum(CASE WHEN b.band_m <= t.metres THEN b.population ELSE 0 END)
                 AS population_within
        FROM temp.county_park_bands AS b CROSS JOIN park_thresholds AS t
        GROUP BY b.county_geoid, t.miles) AS s
  LEFT JOIN counties AS c ON c.geoid = s.county_geoid
  ORDER BY s.county_geoid, s.miles;
-- The whole region, as county '99'.
INSERT INTO county_park_sensitivity
  SELECT '99', 'all counties', t.miles, t.metres, sum(b.population),
         sum(CASE WHEN b.band_m <= t.metres THEN b.population ELSE 0 END),
         round(100.0 * sum(CASE WHEN b.band_m <= t.metres THEN b.population ELSE 0 END)
               / nullif(sum(b.population), 0), 1)
  FROM temp.county_park_bands AS b CROSS JOIN park_thresholds AS t
  GROUP BY t.miles ORDER BY t.miles;
DROP TABLE temp.county_park_bands;
-- Tables without geometry, registered as GeoPackage attributes tables so
-- GIS programs list them with their column types.
SELECT ambit_gpkg_register('park_thresholds', NULL);
SELECT ambit_gpkg_register('park_sensitivity_parameters', NULL);
SELECT ambit_gpkg_register('block_park_distance', NULL);
SELECT ambit_gpkg_register('county_park_sensitivity', NULL);

-- 5. The long table as CSV, for joining with other county measures. ------
.headers on
.mode csv
.once results/county-park-sensitivity.csv
SELECT county_geoid, county_name, miles, population, population_within, pct_within
FROM county_park_sensitivity ORDER BY county_geoid, miles;

-- 6. The wide table (county x threshold): its statement is written from
-- park_thresholds, one column per threshold, and then run. -----------------
.headers off
.mode list
.once results/park-sensitivity-table.sql
SELECT 'SELECT county_geoid AS county, county_name AS name, max(population) AS population'
       || group_concat(printf(', max(CASE WHEN miles = %!.15g THEN pct_within END) AS "%s mi"',
                              miles, miles), '')
       || ' FROM county_park_sensitivity GROUP BY county_geoid'
       || ' ORDER BY county_geoid = ''99'', county_geoid;'
FROM (SELECT miles FROM park_thresholds ORDER BY miles);
.output stdout
.mode box
.read results/park-sensitivity-table.sql
.mode list
.headers off
SELECT 'Percent of residents in blocks whose boundary lies within each distance of a park (from one pass of nearest distances).';
SELECT 'Invented demo data. Straight-line reach is not walking access; park entrances, barriers, fees and opening hours are not seen; the park list is incomplete. Which distance fits is a choice for local practice and qualified review; read the spread, not one column, before these figures guide decisions about people''s health.';
