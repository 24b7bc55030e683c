-- join-measures.sql: the exercise-access indicator joined with other county
-- measures, standardised within the state, mapped and exported.
--
-- It runs after exercise-access.sql, on the same file (the README's first
-- command makes results/exercise-access.gpkg), from the project folder:
--     LD_LIBRARY_PATH=$PWD/target/release sqlite3 results/exercise-access.gpkg < sql-examples/join-measures.sql
-- and refuses with a message when county_access is missing.
--
-- Inputs: county_access (made by exercise-access.sql) and
-- demo-db/county-measures.csv (an invented table of county measures:
-- county_geoid, county_name, measure_year, adult_physical_inactivity_pct,
-- adult_obesity_pct, median_household_income; an empty cell is a missing
-- value). The two are joined by county_geoid, the 5-digit state + county
-- GEOID (common practice, no source).
--
-- Standardising: for each measure x, z = (x - mean) / s over the counties of
-- the same state (GEOID characters 1-2), s the sample standard deviation
-- (stddev_samp, which ambit registers; SQL standard). A missing value gets
-- no z-score and is left out of its measure's mean and s. With six counties
-- a z-score says where a county stands among its neighbours, nothing more.
--
-- Outputs: measures_parameters, county_measures (the typed CSV),
-- county_measures_joined (registered as a GeoPackage layer),
-- results/county-measures.csv, results/county-measures.geojson (a GeoJSON
-- FeatureCollection of the counties with their figures, RFC 7946) and two
-- quick-look maps, results/county-measures-access-map.svg and
-- results/county-measures-inactivity-map.svg.
--
-- Cautions, carried into the outputs: the access figures are straight-line
-- reach, not walking access (see exercise-access.sql); two measures that
-- move together across six counties do not show that one causes the other;
-- review with local knowledge before the figures guide decisions about
-- people's health.
--
-- All the data are invented (a fictional state over open ocean).

.bail on
-- ambit is found on the library search path (README, "Install").
.load libambit
.output results/join-measures.log

-- 0. The indicator must be there: run exercise-access.sql first. --------
DROP TABLE IF EXISTS temp.input_check;
CREATE TEMP TABLE input_check (missing TEXT);
CREATE TEMP TRIGGER input_check_refuses BEFORE INSERT ON input_check
BEGIN
  SELECT RAISE(ABORT, 'join-measures.sql: this file has no county_access table; run sql-examples/exercise-access.sql on it first (the README''s first command makes results/exercise-access.gpkg)');
END;
INSERT INTO input_check
  SELECT 'county_access' WHERE NOT EXISTS
    (SELECT 1 FROM sqlite_master WHERE type = 'table' AND name = 'county_access');

-- 1. Parameters: what was joined, written into the results. -------------
DROP TABLE IF EXISTS measures_parameters;
CREATE TABLE measures_parameters (measures_file TEXT, access_table TEXT,
  join_key TEXT, standardising TEXT, ambit_version TEXT, ambit_info TEXT,
  sqlite_version TEXT);
INSERT INTO measures_parameters SELECT
  'demo-db/county-measures.csv' AS measures_file,
  'county_access'        AS access_table,
  'county_geoid'         AS join_key,
  'z = (x - avg(x)) / stddev_samp(x) over the counties of the state' AS standardising,
  ambit_version()        AS ambit_version,
  ambit_info()           AS ambit_info,
  sqlite_version()       AS sqlite_version;

-- 2. The measures, imported as text and typed (an empty cell is NULL). --
DROP TABLE IF EXISTS county_measures_csv;
.import --csv demo-db/county-measures.csv county_measures_csv
DROP TABLE IF EXISTS county_measures;
CREATE TABLE county_measures (
  county_geoid TEXT PRIMARY KEY,
  county_name TEXT,
  measure_year INTEGER,
  adult_physical_inactivity_pct REAL,
  adult_obesity_pct REAL,
  median_household_income INTEGER
);
INSERT INTO county_measures
  SELECT trim(county_geoid), county_name,
         CAST(nullif(trim(measure_year), '') AS INTEGER),
         CAST(nullif(trim(adult_physical_inactivity_pct), '') AS REAL),
         CAST(nullif(trim(adult_obesity_pct), '') AS REAL),
         CAST(nullif(trim(median_household_income), '') AS INTEGER)
  FROM county_measures_csv;
DROP TABLE county_measures_csv;

-- 3. The join and the z-scores within each state. -----------------------
DROP TABLE IF EXISTS county_measures_joined;
CREATE TABLE county_measures_joined (
  fid INTEGER PRIMARY KEY,
  county_geoid TEXT NOT NULL UNIQUE,
  county_name TEXT,
  population INTEGER,
  pct_with_access REAL,
  measure_year INTEGER,
  adult_physical_inactivity_pct REAL,
  adult_obesity_pct REAL,
  median_household_income INTEGER,
  z_pct_with_access REAL,
  z_physical_inactivity REAL,
  z_obesity REAL,
  z_household_income REAL,
  geom MULTIPOLYGON
);
WITH joined AS (
  SELECT a.county_geoid, a.county_name, a.population, a.pct_with_access,
         m.measure_year, m.adult_physical_inactivity_pct, m.adult_obesity_pct,
         m.median_household_income, a.geom, substr(a.county_geoid, 1, 2) AS state
  FROM county_access AS a LEFT JOIN county_measures AS m ON m.county_geoid = a.county_geoid
), state AS (
  SELECT state,
         avg(pct_with_access) AS m_access, stddev_samp(pct_with_access) AS s_access,
         avg(adult_physical_inactivity_pct) AS m_inactive,
         stddev_samp(adult_physical_inactivity_pct) AS s_inactive,
         avg(adult_obesity_pct) AS m_obese, stddev_samp(adult_obesity_pct) AS s_obese,
         avg(median_household_income) AS m_income,
         stddev_samp(median_household_income) AS s_income
  FROM joined GROUP BY state
)
INSERT INTO county_measures_joined (county_geoid, county_name, population, pct_with_access,
  measure_year, adult_physical_inactivity_pct, adult_obesity_pct, median_household_income,
  z_pct_with_access, z_physical_inactivity, z_obesity, z_household_income, geom)
  SELECT j.county_geoid, j.county_name, j.population, j.pct_with_access,
         j.measure_year, j.adult_physical_inactivity_pct, j.adult_obesity_pct,
         j.median_household_income,
         (j.pct_with_access - s.m_access) / nullif(s.s_access, 0),
         (j.adult_physical_inactivity_pct - s.m_inactive) / nullif(s.s_inactive, 0),
         (j.adult_obesity_pct - s.m_obese) / nullif(s.s_obese, 0),
         (j.median_household_income - s.m_income) / nullif(s.s_income, 0),
         j.geom
  FROM joined AS j JOIN state AS s ON s.state = j.state
  ORDER BY j.county_geoid;

-- Rows of the CSV that match no county are counted, not silently lost.
DROP TABLE IF EXISTS measures_unmatched;
CREATE TABLE measures_unmatched (county_geoid TEXT);
INSERT INTO measures_unmatched
  SELECT county_geoid FROM county_measures
  WHERE county_geoid NOT IN (SELECT county_geoid FROM county_access);

SELECT ambit_gpkg_register('county_measures_joined', 'geom', 'MULTIPOLYGON');
-- Tables without geometry, registered as GeoPackage attributes tables so
-- GIS programs list them with their column types.
SELECT ambit_gpkg_register('measures_parameters', NULL);
SELECT ambit_gpkg_register('county_measures', NULL);
SELECT ambit_gpkg_register('measures_unmatched', NULL);
UPDATE gpkg_contents SET description =
  'Exercise access (county_access) joined with invented county measures by county_geoid, with z-scores '
  || 'within the state (sample standard deviation). Straight-line reach is not walking access; measures '
  || 'that move together do not show cause; review locally before use in health decisions.'
  WHERE table_name = 'county_measures_joined';

-- 4. The joined table as CSV, and as a GeoJSON FeatureCollection. -------
.headers on
.mode csv
.once results/county-measures.csv
SELECT county_geoid, county_name, population, pct_with_access, measure_year,
       adult_physical_inactivity_pct, adult_obesity_pct, median_household_income,
       round(z_pct_with_access, 4) AS z_pct_with_access,
       round(z_physical_inactivity, 4) AS z_physical_inactivity,
       round(z_obesity, 4) AS z_obesity,
       round(z_household_income, 4) AS z_household_income
FROM county_measures_joined ORDER BY county_geoid;
-- The sizes of the files written go to a second log.
.output results/join-measures-files.log
.headers off
.mode list

SELECT writefile('results/county-measures.geojson',
  ambit_feature_collection(geom, json_object(
    'county_geoid', county_geoid, 'county_name', county_name, 'population', population,
    'pct_with_access', pct_with_access, 'measure_year', measure_year,
    'adult_physical_inactivity_pct', adult_physical_inactivity_pct,
    'adult_obesity_pct', adult_obesity_pct,
    'median_household_income', median_household_income,
    'z_pct_with_access', z_pct_with_access, 'z_physical_inactivity', z_physical_inactivity,
    'z_obesity', z_obesity, 'z_household_income', z_household_income)))
FROM (SELECT * FROM county_measures_joined ORDER BY county_geoid);

-- 5. Two quick-look maps, side by side in a report. ---------------------
SELECT writefile('results/county-measures-access-map.svg',
  ambit_choropleth_svg(geom, pct_with_access,
    'Residents within reach of exercise opportunities (%), invented demo region'))
FROM (SELECT geom, pct_with_access FROM county_measures_joined ORDER BY county_geoid);
SELECT writefile('results/county-measures-inactivity-map.svg',
  ambit_choropleth_svg(geom, adult_physical_inactivity_pct,
    'Adults physically inactive (%), invented measures, invented demo region'))
FROM (SELECT geom, adult_physical_inactivity_pct FROM county_measures_joined ORDER BY county_geoid);

-- 6. Print it. -------------------------------------------------------------
.output stdout
.headers on
.mode box
SELECT county_geoid AS county, county_name AS name, pct_with_access AS access_pct,
       adult_physical_inactivity_pct AS inactive_pct, adult_obesity_pct AS obese_pct,
       median_household_income AS income,
       printf('%.2f', z_pct_with_access) AS z_access,
       printf('%.2f', z_physical_inactivity) AS z_inactive,
       printf('%.2f', z_obesity) AS z_obese,
       CASE WHEN z_household_income IS NOT NULL THEN printf('%.2f', z_household_income) END AS z_income
FROM county_measures_joined ORDER BY county_geoid;
.mode list
.headers off
SELECT printf('Measures: %d rows read from demo-db/county-measures.csv, %d joined, %d matching no county; %d counties without measures.',
              (SELECT count(*) FROM county_measures),
              (SELECT count(*) FROM county_measures_joined WHERE measure_year IS NOT NULL),
              (SELECT count(*) FROM measures_unmatched),
              (SELECT count(*) FROM county_measures_joined WHERE measure_year IS NULL));
SELECT 'Invented demo data and invented measures. z-scores compare these counties with each other only (sample standard deviation); measures that move together do not show that one causes the other. Straight-line reach is not walking access. Review with local knowledge before these figures guide decisions about people''s health.';
