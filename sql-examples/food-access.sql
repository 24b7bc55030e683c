-- food-access.sql: low access to food stores, by county and by urban or
-- rural blocks.
--
-- The definition: residents have low access when the nearest supermarket,
-- supercenter or large grocery store is more than 1 mile away in urban
-- areas, or more than 10 miles away in rural areas. Thresholds and store
-- kinds are those of the USDA Economic Research Service, Food Access
-- Research Atlas, documentation (its low-access measure at 1 and 10
-- miles). Convenience stores are not counted; the kinds that count are
-- listed in food_access_store_kinds.
--
-- Urban or rural: a block is urban when it lies within an urban area of
-- the urban_areas layer, that is when its geodesic distance to an urban
-- area is 0 (inside it, or touching its edge); every other block is rural.
--
-- How this differs from the Atlas: the Atlas measures from
-- points inside small areas (per its documentation, the centres of
-- half-kilometre grid cells that carry the census population; we have not
-- re-derived every detail) and reports census tracts, which it classifies
-- as urban or rural as a whole (by the tract's population-weighted
-- centroid, from memory). This script measures from each census block's
-- boundary, the nearest point of the block, and classifies each block by
-- itself, so it counts fewer residents as far from a store than a
-- centroid-based measure would, and its figures are not the Atlas's. Nor
-- does it look at income or vehicle access, which the Atlas's low-income
-- and vehicle measures add. Distances are exact geodesic distances on the
-- WGS84 ellipsoid (ambit_info() in food_access_parameters records the
-- method).
--
-- Run it on a copy of the demo database:
--     cargo build --release && mkdir -p results \
--       && cp demo-db/demo-region.gpkg results/food-access.gpkg \
--       && LD_LIBRARY_PATH=$PWD/target/release sqlite3 results/food-access.gpkg < sql-examples/food-access.sql
--
-- Inputs (tables of the GeoPackage): blocks (fid, geoid, population,
-- geom), groceries (kind, geom), urban_areas (geom), counties (geoid,
-- name, geom). Outputs: food_access_parameters, food_access_store_kinds,
-- food_stores (the stores counted, a GeoPackage layer), food_store_counts,
-- block_food_results (one row of ids and results per block, no geometry),
-- block_food_access (a view of block_food_results with the block polygons)
-- and county_food_access (layers registered in the GeoPackage, so any GIS
-- opens them), and results/county-food-access.csv for joining with other
-- county measures by county_geoid.
--
-- Cautions, carried into the outputs: straight-line distance is not travel
-- distance (roads, rivers and rail lines are not seen); prices, quality,
-- opening hours and what a store stocks are not seen; store lists are
-- incomplete and age quickly; results need review by people who know the
-- place before they guide decisions about people's health.
--
-- The demo database is invented data (a fictional state over open ocean).

.bail on
-- ambit is found on the library search path (README, "Install").
.load libambit
-- The counts the building steps return go to a log in results/, not the
-- screen; the tables are printed.
.output results/food-access.log

-- 1. Parameters: every choice in one place, written into the results. ----
DROP TABLE IF EXISTS food_access_parameters;
CREATE TABLE food_access_parameters (build_year INTEGER, urban_low_access_m REAL,
  rural_low_access_m REAL, definition_source TEXT, urban_rule TEXT,
  distance_rule TEXT, blocks_table TEXT, stores_table TEXT, urban_table TEXT,
  ambit_version TEXT, ambit_info TEXT, sqlite_version TEXT);
INSERT INTO food_access_parameters SELECT
  2026                   AS build_year,
  ambit_miles(1)         AS urban_low_access_m,   -- beyond this, urban low access
  ambit_miles(10)        AS rural_low_access_m,   -- beyond this, rural low access
  'USDA Economic Research Service, Food Access Research Atlas, documentation' AS definition_source,
  'a block is urban when its distance to an urban area is 0 (inside or touching)' AS urban_rule,
  'distance from the block boundary to the nearest counted store' AS distance_rule,
  'blocks'               AS blocks_table,
  'groceries'            AS stores_table,
  'urban_areas'          AS urban_table,
  ambit_version()        AS ambit_version,
  ambit_info()           AS ambit_info,
  sqlite_version()       AS sqlite_version;

DROP TABLE IF EXISTS food_access_store_kinds;
CREATE TABLE food_access_store_kinds (kind TEXT PRIMARY KEY);
INSERT INTO food_access_store_kinds VALUES
  ('supermarket'), ('supercenter'), ('large grocery store');

-- 2. The stores that count; the rest are listed in food_store_counts. ----
DROP TABLE IF EXISTS food_stores;
CREATE TABLE food_stores (
  fid INTEGER PRIMARY KEY,
  store_id TEXT NOT NULL,
  name TEXT,
  kind TEXT NOT NULL,
  geom POINT
);
INSERT INTO food_stores (fid, store_id, name, kind, geom)
  SELECT fid, store_id, name, kind, geom FROM groceries
  WHERE kind IN (SELECT kind FROM food_access_store_kinds) AND geom IS NOT NULL;

DROP TABLE IF EXISTS food_store_counts;
CREATE TABLE food_store_counts (kind TEXT, listed INTEGER, counted INTEGER,
  without_location INTEGER);
INSERT INTO food_store_counts
  SELECT kind, count(*) AS listed,
         kind IN (SELECT kind FROM food_access_store_kinds) AS counted,
         sum(geom IS NULL) AS without_location
  FROM groceries GROUP BY kind ORDER BY kind;

-- 3. Layers: urban areas (reach 0: inside or touching) and the stores
-- (feature ids are the groceries fids). -------------------------------------
SELECT ambit_layer_drop('urban');
SELECT ambit_layer('urban', geom) FROM urban_areas;
SELECT ambit_layer_drop('food_stores');
SELECT ambit_layer('food_stores', geom, 0, fid) FROM food_stores;

-- 4. Every block: urban or rural (one sweep), the distance to the nearest
-- counted store (a second sweep, joined to the first), and low access
-- beyond its threshold. Only ids and results are stored: the block
-- geometries stay in blocks, and the layer block_food_access is a view that
-- joins them back for a GIS, so the script's extra storage stays small even
-- for a nation's 8 million blocks. ------------------------------------------
DROP TABLE IF EXISTS temp.block_urban;
CREATE TEMP TABLE block_urban (fid INTEGER PRIMARY KEY, urban INTEGER NOT NULL);
INSERT INTO temp.block_urban
  SELECT id, reached FROM ambit_sweep('urban', 'SELECT fid, geom FROM blocks');

DROP VIEW IF EXISTS block_food_access;
DROP TABLE IF EXISTS block_food_results;
CREATE TABLE block_food_results (
  fid INTEGER PRIMARY KEY,
  geoid TEXT NOT NULL,
  county_geoid TEXT NOT NULL,
  population INTEGER NOT NULL,
  urban INTEGER NOT NULL,
  threshold_m REAL NOT NULL,
  nearest_store_m REAL,          -- NULL only when no store is counted at all
  low_access INTEGER NOT NULL
);
INSERT INTO block_food_results (fid, geoid, county_geoid, population, urban, threshold_m,
                                nearest_store_m, low_access)
  SELECT fid, geoid, county_geoid, population, urban, threshold_m,
         nearest_m, nearest_m IS NULL OR nearest_m > threshold_m
  FROM (SELECT b.fid, b.geoid, substr(b.geoid, 1, 5) AS county_geoid, b.population, u.urban,
               CASE WHEN u.urban = 1 THEN p.urban_low_access_m ELSE p.rural_low_access_m END
                 AS threshold_m,
               s.nearest_m
        FROM ambit_sweep('food_stores', 'SELECT fid, geom FROM blocks') AS s
        JOIN blocks AS b ON b.fid = s.id
        JOIN temp.block_urban AS u ON u.fid = s.id
        CROSS JOIN food_access_parameters AS p);
DROP TABLE temp.block_urban;
CREATE VIEW block_food_access AS
  SELECT r.fid, r.geoid, r.county_geoid, r.population, r.urban, r.threshold_m,
         r.nearest_store_m, r.low_access, b.geom
  FROM block_food_results AS r JOIN blocks AS b ON b.fid = r.fid;

-- 5. The county table (counties by GEOID characters 1-5): the blocks are
-- summed first and the county polygons joined to the few summed rows. -----
DROP TABLE IF EXISTS county_food_access;
CREATE TABLE county_food_access (
  fid INTEGER PRIMARY KEY,
  county_geoid TEXT NOT NULL UNIQUE,
  county_name TEXT,
  build_year INTEGER NOT NULL,
  population INTEGER NOT NULL,
  low_access_population INTEGER NOT NULL,
  pct_low_access REAL,
  urban_population INTEGER NOT NULL,
  urban_low_access_population INTEGER NOT NULL,
  urban_pct_low_access REAL,
  rural_population INTEGER NOT NULL,
  rural_low_access_population INTEGER NOT NULL,
  rural_pct_low_access REAL,
  geom MULTIPOLYGON
);
INSERT INTO county_food_access (county_geoid, county_name, build_year, population,
    low_access_population, pct_low_access, urban_population, urban_low_access_population,
    urban_pct_low_access, rural_population, rural_low_access_population,
    rural_pct_low_access, geom)
  SELECT county_geoid, c.name, (SELECT build_year FROM food_access_parameters),
         pop, low, round(100.0 * low / nullif(pop, 0), 1),
         upop, ulow, round(100.0 * ulow / nullif(upop, 0), 1),
         rpop, rlow, round(100.0 * rlow / nullif(rpop, 0), 1),
         c.geom
  FROM (SELECT county_geoid,
               sum(population) AS pop,
               sum(population * low_access) AS low,
               sum(population * urban) AS upop,
               sum(population * urban * low_access) AS ulow,
               sum(population * (1 - urban)) AS rpop,
               sum(population * (1 - urban) * low_access) AS rlow
        FROM block_food_results GROUP BY county_geoid) AS a
  LEFT JOIN counties AS c ON c.geoid = a.county_geoid
  ORDER BY county_geoid;

-- 6. GeoPackage layers, with the cautions in their descriptions. ---------
SELECT ambit_gpkg_register('food_stores', 'geom', 'POINT');
SELECT ambit_gpkg_register('block_food_access', 'geom', 'POLYGON');
SELECT ambit_gpkg_register('county_food_access', 'geom', 'MULTIPOLYGON');
-- Tables without geometry, registered as GeoPackage attributes tables so
-- GIS programs list them with their column types.
SELECT ambit_gpkg_register('food_access_parameters', NULL);
SELECT ambit_gpkg_register('food_access_store_kinds', NULL);
SELECT ambit_gpkg_register('food_store_counts', NULL);
SELECT ambit_gpkg_register('block_food_results', NULL);
UPDATE gpkg_contents SET description =
  'Food stores counted for food access: supermarkets, supercenters and large grocery stores '
  || '(convenience stores left out), from groceries.'
  WHERE table_name = 'food_stores';
UPDATE gpkg_contents SET description =
  'Low food access by census block: low_access = 1 when the nearest counted store is more than '
  || '1 mile (urban block: within an urban area) or 10 miles (rural block) from the block boundary, '
  || 'thresholds of the USDA ERS Food Access Research Atlas; exact geodesic distances (ambit '
  || ambit_version() || '). Measured from block boundaries, not from the Atlas''s points, so not '
  || 'the Atlas''s figures. Straight-line distance is not travel distance; prices, hours and stock '
  || 'are not seen; store lists are incomplete; review locally before use in health decisions.'
  WHERE table_name = 'block_food_access';
UPDATE gpkg_contents SET description =
  'Share of county residents with low food access (see block_food_access), all and by urban and '
  || 'rural blocks. Straight-line distance is not travel distance; store lists are incomplete; '
  || 'review locally before use in health decisions.'
  WHERE table_name = 'county_food_access';

-- 7. The county table as CSV, for joining with other county measures. ----
.headers on
.mode csv
.once results/county-food-access.csv
SELECT county_geoid, county_name, build_year, population, low_access_population,
       pct_low_access, urban_population, urban_low_access_population, urban_pct_low_access,
       rural_population, rural_low_access_population, rural_pct_low_access
FROM county_food_access ORDER BY county_geoid;

-- 8. Print it, with the whole region as the last row. ---------------------
.output stdout
.mode box
SELECT county, name, population, low_access, pct, urban_pop, urban_low, urban_pct,
       rural_pop, rural_low, rural_pct
FROM (
  SELECT 0 AS k, county_geoid AS county, county_name AS name, population,
         low_access_population AS low_access, pct_low_access AS pct,
         urban_population AS urban_pop, urban_low_access_population AS urban_low,
         urban_pct_low_access AS urban_pct, rural_population AS rural_pop,
         rural_low_access_population AS rural_low, rural_pct_low_access AS rural_pct
  FROM county_food_access
  UNION ALL
  SELECT 1, '99', 'all counties', sum(population), sum(low_access_population),
         round(100.0 * sum(low_access_population) / nullif(sum(population), 0), 1),
         sum(urban_population), sum(urban_low_access_population),
         round(100.0 * sum(urban_low_access_population) / nullif(sum(urban_population), 0), 1),
         sum(rural_population), sum(rural_low_access_population),
         round(100.0 * sum(rural_low_access_population) / nullif(sum(rural_population), 0), 1)
  FROM county_food_access)
ORDER BY k, county;
.mode list
.headers off
SELECT printf('Stores counted: %d of %d listed (%s); convenience stores are not counted.',
              sum(listed * counted), sum(listed),
              (SELECT group_concat(kind, ', ') FROM food_access_store_kinds))
FROM food_store_counts;
SELECT 'Low access: nearest counted store more than 1 mile away (urban block) or 10 miles away (rural block), measured from the block boundary; a block is urban when it lies within or touches an urban area.';
SELECT 'Invented demo data. Straight-line distance is not travel distance; prices, opening hours and what stores stock are not seen; store lists are incomplete. Measured from block boundaries, so these are not the Food Access Research Atlas''s figures. Review with local knowledge before these figures guide decisions about people''s health.';
