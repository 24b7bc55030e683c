-- care-access-2sfca.sql: spatial access to primary care, by county, with the
-- two-step floating catchment area method and its enhanced form.
--
-- Methods (the formulas below are theirs; the choices of distances are ours):
--   2SFCA: Luo W, Wang F (2003), "Measures of spatial accessibility to
--     health care in a GIS environment: synthesis and a case study in the
--     Chicago region", Environment and Planning B 30(6):865-884.
--   E2SFCA: Luo W, Qi Y (2009), "An enhanced two-step floating catchment
--     area (E2SFCA) method for measuring spatial accessibility to primary
--     care physicians", Health & Place 15(4):1100-1107.
--
-- Step 1, for every clinic j with a known supply S_j (full-time-equivalent
-- primary-care providers): the provider-to-population ratio of its
-- catchment,
--     R_j = S_j / sum of P_k over the blocks k with d_kj <= d0.
-- Step 2, for every block i: the sum of the ratios of the clinics whose
-- catchment holds it,
--     A_i = sum of R_j over the clinics j with d_ij <= d0,
-- in providers per resident. E2SFCA splits the catchment into zones r with
-- weights W_r and uses them in both steps:
--     R_j = S_j / sum_r sum_{k in zone r of j} P_k W_r,
--     A_i = sum_r sum_{j in zone r of i} R_j W_r.
-- Luo & Qi (2009) used travel-time zones of 0-10, 10-20 and 20-30 minutes
-- with weights 1.00, 0.68 and 0.22 (zones and weights quoted from memory of
-- the paper, not re-checked against it). Here straight-line distance replaces
-- travel time, and the zones are the thirds of the catchment: 0 to d0/3,
-- d0/3 to 2 d0/3, 2 d0/3 to d0 (each upper limit inside its zone). Both are
-- choices of this script, not part of the published method.
--
-- The catchment d0 is 10 miles, a choice for this demonstration (not a
-- standard); set it, the zones and their weights in care_parameters below.
--
-- Population points: census blocks with their population. d_ij is the
-- exact geodesic distance on the WGS84 ellipsoid from block i's boundary to
-- clinic j (0 when the clinic lies inside the block), as ambit measures
-- it, so every resident of a block is placed at its nearest edge. The
-- usual practice in the literature places a zone's residents at its
-- population-weighted centroid; for small blocks the two differ little,
-- for large rural blocks the boundary is more generous. Blocks with no
-- clinic within d0 get A_i = 0.
--
-- The county figure is the population-weighted mean of A_i, in providers
-- per 100,000 residents: 100000 * sum(A_i P_i) / sum(P_i) over the
-- county's blocks. Clinics of unknown capacity (providers NULL) or without
-- a location are left out and counted in clinic_sources; a clinic whose
-- catchment holds no resident has no ratio and adds nothing (also counted).
-- A property of 2SFCA (and E2SFCA) the tests check: sum_i A_i P_i equals
-- sum_j S_j over the clinics whose catchment holds anyone.
--
-- Run it on a copy of the demo database:
--     cargo build --release && mkdir -p results \
--       && cp demo-db/demo-region.gpkg results/care-access.gpkg \
--       && LD_LIBRARY_PATH=$PWD/target/release sqlite3 results/care-access.gpkg < sql-examples/care-access-2sfca.sql
--
-- Inputs (tables of the GeoPackage): blocks (fid, geoid, population, geom),
-- clinics (fid, clinic_id, name, providers, geom), counties (geoid, name,
-- geom). Outputs: care_parameters, clinic_sources, clinic_ratio (R_j, with
-- each clinic's catchment population), block_care_results (A_i and the
-- clinics in reach, one row of ids and numbers per block, no geometry),
-- block_care (a view of block_care_results with the block polygons) and
-- county_care (both layers registered in the GeoPackage), and
-- results/county-care-access.csv for joining with other county measures by
-- county_geoid.
--
-- Size and time: the block-clinic pairs within the catchment are not
-- stored. There are many: 1.1 million for the demo's 21,000 blocks (63 MB
-- as a table with its two indexes), so at that density a nation's 8
-- million blocks would give some 430 million pairs, about 24 GB. Instead each step asks ambit_near again and sums as it goes:
-- step 1 adds each pair into its clinic's row (clinic_catchment, a working
-- table of one row per clinic), step 2 sums each block's clinics as the
-- block is read. That is two passes of ambit_near over the blocks (on one
-- core) and storage for ids and numbers only. The passes take their time
-- where clinics are dense: an invented region of a million blocks with
-- 9,578 clinics has 2,257 clinics within 10 miles of a block on average
-- (a sample of 200 blocks), 2.3 billion pairs, at about 5 microseconds a
-- pair some 3 hours a pass; stored, those pairs would take some 126 GB.
-- A smaller catchment cuts both. To see the pairs of a few blocks, run the
-- join of step 3 on them:
--     SELECT b.geoid, n.feature_id, n.distance_m FROM blocks AS b,
--       ambit_near('care_clinics', b.geom, 16093.44) AS n WHERE b.geoid LIKE '99007%';
--
-- Cautions, carried into the outputs: straight-line distance is not travel
-- time or walking access; barriers, entrances, opening hours, fees,
-- accepted insurance and languages are not seen; clinic lists and provider
-- counts are incomplete; clinics outside the region (across the state
-- line) are not in the list, so figures near it read low; the method
-- assumes residents use every clinic in reach alike. These are ratios for
-- comparison, not a shortage designation: review them with local
-- knowledge and qualified people before they guide decisions about
-- people's health.
--
-- The demo database is invented data (a fictional state over open ocean).

.bail on
-- ambit is found on the library search path (README, "Install").
.load libambit
-- The counts the building steps return go to a log in results/, not the
-- screen; the county table is printed.
.output results/care-access-2sfca.log

-- 1. Parameters: every choice in one place, written into the results. ----
DROP TABLE IF EXISTS care_parameters;
CREATE TABLE care_parameters (build_year INTEGER, catchment_m REAL, zone1_limit_m REAL,
  zone2_limit_m REAL, zone1_weight REAL, zone2_weight REAL, zone3_weight REAL,
  per_residents INTEGER, blocks_table TEXT, clinics_table TEXT, counties_table TEXT,
  method TEXT, ambit_version TEXT, ambit_info TEXT, sqlite_version TEXT);
INSERT INTO care_parameters SELECT
  2026                   AS build_year,
  ambit_miles(10)        AS catchment_m,      -- d0 (a choice, not a standard)
  ambit_miles(10) / 3    AS zone1_limit_m,    -- E2SFCA zones: thirds of d0
  ambit_miles(10) * 2 / 3 AS zone2_limit_m,
  1.00                   AS zone1_weight,     -- Luo & Qi (2009) weights
  0.68                   AS zone2_weight,
  0.22                   AS zone3_weight,
  100000                 AS per_residents,
  'blocks'               AS blocks_table,
  'clinics'              AS clinics_table,
  'counties'             AS counties_table,
  'Luo & Wang 2003 (2SFCA); Luo & Qi 2009 (E2SFCA); distance from the block boundary'
                         AS method,
  ambit_version()        AS ambit_version,
  ambit_info()           AS ambit_info,
  sqlite_version()       AS sqlite_version;

-- 2. Clinics: those with a location and a known supply take part (the
-- others are counted in clinic_sources, step 4). -------------------------
SELECT ambit_layer_drop('care_clinics');
SELECT ambit_layer('care_clinics', geom, 0, fid) FROM clinics
  WHERE providers IS NOT NULL AND geom IS NOT NULL;

-- 3. Block-clinic pairs within the catchment, with the E2SFCA weight of
-- each (ties count as within, as ambit_near returns them), summed into
-- their clinic's row as they come: the blocks and residents in each
-- clinic's catchment, and the residents weighted by zone. -----------------
DROP TABLE IF EXISTS clinic_catchment;
CREATE TABLE clinic_catchment (
  clinic_fid INTEGER PRIMARY KEY,
  blocks INTEGER NOT NULL,
  population INTEGER NOT NULL,
  weighted_population REAL NOT NULL
);
INSERT INTO clinic_catchment (clinic_fid, blocks, population, weighted_population)
  SELECT n.feature_id, 1, b.population,
         b.population * CASE WHEN n.distance_m <= p.zone1_limit_m THEN p.zone1_weight
                             WHEN n.distance_m <= p.zone2_limit_m THEN p.zone2_weight
                             ELSE p.zone3_weight END
  FROM care_parameters AS p, blocks AS b,
       ambit_near('care_clinics', b.geom, p.catchment_m) AS n
  WHERE b.geom IS NOT NULL
  ON CONFLICT (clinic_fid) DO UPDATE SET
    blocks = blocks + 1,
    population = population + excluded.population,
    weighted_population = weighted_population + excluded.weighted_population;

-- 4. Step 1: each clinic's ratio R_j (providers per resident of its
-- catchment); NULL when its catchment holds no resident. -----------------
DROP TABLE IF EXISTS clinic_ratio;
CREATE TABLE clinic_ratio (
  clinic_fid INTEGER PRIMARY KEY,
  clinic_id TEXT,
  name TEXT,
  providers REAL NOT NULL,
  blocks_in_catchment INTEGER NOT NULL,
  catchment_population INTEGER NOT NULL,
  weighted_population REAL NOT NULL,
  ratio_2sfca REAL,
  ratio_e2sfca REAL
);
INSERT INTO clinic_ratio
  SELECT c.fid, c.clinic_id, c.name, c.providers,
         coalesce(k.blocks, 0),
         coalesce(k.population, 0),
         coalesce(k.weighted_population, 0.0),
         c.providers / nullif(1.0 * coalesce(k.population, 0), 0),
         c.providers / nullif(coalesce(k.weighted_population, 0.0), 0)
  FROM clinics AS c
  LEFT JOIN clinic_catchment AS k ON k.clinic_fid = c.fid
  WHERE c.providers IS NOT NULL AND c.geom IS NOT NULL
  ORDER BY c.fid;
DROP TABLE clinic_catchment;

-- What the clinic list held, and what was left out.
DROP TABLE IF EXISTS clinic_sources;
CREATE TABLE clinic_sources (listed INTEGER, unknown_capacity INTEGER,
  without_location INTEGER, used INTEGER, providers_used REAL,
  without_residents INTEGER, providers_reaching_residents REAL);
INSERT INTO clinic_sources
  SELECT count(*) AS listed,
         coalesce(sum(providers IS NULL), 0) AS unknown_capacity,
         coalesce(sum(geom IS NULL), 0) AS without_location,
         coalesce(sum(providers IS NOT NULL AND geom IS NOT NULL), 0) AS used,
         coalesce(sum(CASE WHEN providers IS NOT NULL AND geom IS NOT NULL THEN providers END), 0.0)
           AS providers_used,
         (SELECT count(*) FROM clinic_ratio WHERE catchment_population = 0) AS without_residents,
         (SELECT coalesce(sum(providers), 0.0) FROM clinic_ratio WHERE catchment_population > 0)
           AS providers_reaching_residents
  FROM clinics;

-- 5. Step 2: each block's accessibility A_i (providers per resident),
-- from a second ambit_near pass: the ratios of the clinics in reach, each
-- with its zone's weight for E2SFCA. Only ids and results are stored; the
-- layer block_care is a view that joins the block polygons back. ----------
DROP VIEW IF EXISTS block_care;
DROP TABLE IF EXISTS block_care_results;
CREATE TABLE block_care_results (
  fid INTEGER PRIMARY KEY,
  geoid TEXT NOT NULL,
  county_geoid TEXT NOT NULL,
  population INTEGER NOT NULL,
  clinics_in_catchment INTEGER NOT NULL,
  nearest_clinic_m REAL,
  access_2sfca REAL NOT NULL,
  access_e2sfca REAL NOT NULL
);
INSERT INTO block_care_results (fid, geoid, county_geoid, population, clinics_in_catchment,
                                nearest_clinic_m, access_2sfca, access_e2sfca)
  SELECT b.fid, b.geoid, substr(b.geoid, 1, 5), b.population, count(n.feature_id),
         min(n.distance_m),
         coalesce(sum(r.ratio_2sfca), 0.0),
         coalesce(sum(r.ratio_e2sfca
                      * CASE WHEN n.distance_m <= p.zone1_limit_m THEN p.zone1_weight
                             WHEN n.distance_m <= p.zone2_limit_m THEN p.zone2_weight
                             ELSE p.zone3_weight END), 0.0)
  FROM care_parameters AS p
  CROSS JOIN blocks AS b
  LEFT JOIN ambit_near('care_clinics', b.geom, p.catchment_m) AS n
  LEFT JOIN clinic_ratio AS r ON r.clinic_fid = n.feature_id
  WHERE b.geom IS NOT NULL
  GROUP BY b.fid;
CREATE VIEW block_care AS
  SELECT r.fid, r.geoid, r.county_geoid, r.population, r.clinics_in_catchment,
         r.nearest_clinic_m, r.access_2sfca, r.access_e2sfca, b.geom
  FROM block_care_results AS r JOIN blocks AS b ON b.fid = r.fid;

-- 6. The county table: population-weighted means of A_i, per 100,000
-- residents; counties by GEOID characters 1-5 of the block. The blocks are
-- summed first and the county polygons joined to the few summed rows. -----
DROP TABLE IF EXISTS county_care;
CREATE TABLE county_care (
  fid INTEGER PRIMARY KEY,
  county_geoid TEXT NOT NULL UNIQUE,
  county_name TEXT,
  build_year INTEGER NOT NULL,
  blocks INTEGER NOT NULL,
  population INTEGER NOT NULL,
  population_with_clinic INTEGER NOT NULL,
  pct_with_clinic REAL,
  providers_per_100k_2sfca REAL,
  providers_per_100k_e2sfca REAL,
  geom MULTIPOLYGON
);
INSERT INTO county_care (county_geoid, county_name, build_year, blocks, population,
                         population_with_clinic, pct_with_clinic,
                         providers_per_100k_2sfca, providers_per_100k_e2sfca, geom)
  SELECT t.county_geoid, c.name, (SELECT build_year FROM care_parameters),
         t.blocks, t.population, t.population_with_clinic,
         round(100.0 * t.population_with_clinic / nullif(t.population, 0), 1),
         (SELECT per_residents FROM care_parameters) * t.access_2sfca_pop
           / nullif(t.population, 0),
         (SELECT per_residents FROM care_parameters) * t.access_e2sfca_pop
           / nullif(t.population, 0),
         c.geom
  FROM (SELECT county_geoid, count(*) AS blocks, sum(population) AS population,
               sum(CASE WHEN clinics_in_catchment > 0 THEN population ELSE 0 END)
                 AS population_with_clinic,
               sum(access_2sfca * population) AS access_2sfca_pop,
               sum(access_e2sfca * population) AS access_e2sfca_pop
        FROM block_care_results GROUP BY county_geoid) AS t
  LEFT JOIN counties AS c ON c.geoid = t.county_geoid
  ORDER BY t.county_geoid;

-- 7. GeoPackage layers, with the cautions in their descriptions. ---------
SELECT ambit_gpkg_register('block_care', 'geom', 'POLYGON');
SELECT ambit_gpkg_register('county_care', 'geom', 'MULTIPOLYGON');
-- Tables without geometry, registered as GeoPackage attributes tables so
-- GIS programs list them with their column types.
SELECT ambit_gpkg_register('care_parameters', NULL);
SELECT ambit_gpkg_register('clinic_ratio', NULL);
SELECT ambit_gpkg_register('clinic_sources', NULL);
SELECT ambit_gpkg_register('block_care_results', NULL);
UPDATE gpkg_contents SET description =
  'Spatial access to primary care by census block: access_2sfca (Luo & Wang 2003) and access_e2sfca '
  || '(Luo & Qi 2009, weights 1, 0.68, 0.22 on thirds of the catchment) in providers per resident, '
  || 'catchment ' || (SELECT round(catchment_m / 1609.344, 2) FROM care_parameters)
  || ' miles of exact geodesic distance from the block boundary (ambit ' || ambit_version() || '). '
  || 'Straight-line distance is not travel time; barriers, opening hours, fees and insurance are not '
  || 'seen; clinic lists and provider counts are incomplete; review locally before use in health decisions.'
  WHERE table_name = 'block_care';
UPDATE gpkg_contents SET description =
  'Providers per 100,000 residents by county, population-weighted means of block_care. Not a shortage '
  || 'designation. Straight-line distance is not travel time; clinic lists and provider counts are '
  || 'incomplete; clinics across the state line are not seen; review locally before use in health decisions.'
  WHERE table_name = 'county_care';

-- 8. The county table as CSV, for joining with other county measures. ----
.headers on
.mode csv
.once results/county-care-access.csv
SELECT county_geoid, county_name, build_year, blocks, population, population_with_clinic,
       pct_with_clinic, round(providers_per_100k_2sfca, 2) AS providers_per_100k_2sfca,
       round(providers_per_100k_e2sfca, 2) AS providers_per_100k_e2sfca
FROM county_care ORDER BY county_geoid;

-- 9. Print it. -------------------------------------------------------------
.output stdout
.mode box
SELECT county_geoid AS county, county_name AS name, population,
       pct_with_clinic AS pct_in_reach,
       printf('%.1f', providers_per_100k_2sfca) AS per_100k_2sfca,
       printf('%.1f', providers_per_100k_e2sfca) AS per_100k_e2sfca
FROM county_care ORDER BY county_geoid;
.mode list
.headers off
SELECT printf('Clinics: %d listed, %d used (%s providers), %d of unknown capacity and %d without a location left out, %d with no resident within %s miles.',
              listed, used, printf('%.1f', providers_used), unknown_capacity,
              without_location, without_residents,
              (SELECT round(catchment_m / 1609.344, 2) FROM care_parameters))
FROM clinic_sources;
SELECT 'Invented demo data. Straight-line distance from the block boundary stands in for travel time; barriers, opening hours, fees and accepted insurance are not seen; clinic lists and provider counts are incomplete, and clinics across the state line are missing. Not a shortage designation: review with local knowledge and qualified people before these figures guide decisions about people''s health.';
