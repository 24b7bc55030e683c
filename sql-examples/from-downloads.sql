-- from-downloads.sql: the indicator's input tables built from the files an
-- analyst downloads, in the stock sqlite3 shell with ambit loaded.
--
-- The downloads (all invented; demo-db/build-region writes them with
-- --downloads DIR, from the same region as demo-db/demo-region.gpkg):
-- census-style blocks as one zipped shapefile per county (NAD83
-- longitude/latitude, GEOID text with its leading zeros, population),
-- counties and urban areas as zipped shapefiles, parks as a shapefile in
-- NAD83 / UTM zone 9N (converted to longitude/latitude from its .prj), the
-- recreation registry as GeoJSON and a fitness licensing list as CSV with
-- latitude/longitude columns and a few rows that cannot be placed.
--
-- Run it in a folder that holds the downloads in downloads/ (ambit found on
-- the library search path, README "Install"):
--     mkdir -p results
--     demo-db/build-region 21000 20261201 results/region.gpkg --downloads downloads
--     LD_LIBRARY_PATH=$PWD/target/release sqlite3 results/from-downloads.gpkg < sql-examples/from-downloads.sql
--     LD_LIBRARY_PATH=$PWD/target/release sqlite3 results/from-downloads.gpkg < sql-examples/exercise-access.sql
-- The last command prints the same county table as the README's first
-- command on demo-db/demo-region.gpkg (tests/from_downloads.rs checks it).
--
-- Outputs: the tables counties, blocks, parks, rec_sites, fitness_list and
-- urban_areas as in the demo database (registered GeoPackage layers; blocks
-- and parks with a spatial index), each with three more columns:
-- source_file and source_row (the file each row came from, as ambit_read
-- names it, and the row's number in it, from 1) and problem (NULL, or why
-- the row could not be placed; such rows are kept with a NULL geometry,
-- nothing is dropped silently). download_problems lists those rows: their
-- layer, file, row number and reason.
--
-- National size: every file is read once and its rows go straight into
-- their table, with no staging copy (8.1 million blocks are some 8 GB; a
-- copy of them in a temporary table needed as much again in SQLite's temp
-- folder). For the same reason nothing here routes the rows through a
-- trigger: SQLite stores all rows of an INSERT ... SELECT in a temporary
-- table first when the target has row triggers. The rows that could not be
-- placed are found again through a small partial index on problem
-- (<table>_problems), not by scanning the tables.

.bail on
-- ambit is found on the library search path (README, "Install").
.load libambit
-- The counts the building steps return go to a log in results/, not the
-- screen; what was read and the rows that could not be placed are printed.
.output results/from-downloads.log

-- 1. Each file read once, straight into its table; rows that cannot be
-- placed are kept with the reason (bad_rows: keep). -------------------------
-- A shapefile polygon with one outer ring is read as a POLYGON; the county
-- and urban-area layers hold MULTIPOLYGONs, as in the demo database.
DROP TABLE IF EXISTS counties;
CREATE TABLE counties (fid INTEGER PRIMARY KEY, geoid TEXT NOT NULL, name TEXT NOT NULL,
  source_file TEXT NOT NULL, source_row INTEGER NOT NULL, problem TEXT, geom MULTIPOLYGON);
CREATE INDEX counties_problems ON counties (fid) WHERE problem IS NOT NULL;
INSERT INTO counties (geoid, name, source_file, source_row, problem, geom)
  SELECT json_extract(attributes, '$.GEOID'), json_extract(attributes, '$.NAME'), file, row, problem,
         CASE WHEN ST_GeometryType(geom) = 'POLYGON'
              THEN ST_GeomFromText('MULTIPOLYGON (' || substr(ST_AsText(geom), 9) || ')')
              ELSE geom END
  FROM ambit_read('downloads/counties.zip', '{"bad_rows": "keep"}');

-- Columns that are not the geometry come first, so that reading them does
-- not walk the pages of a long polygon.
DROP TABLE IF EXISTS blocks;
CREATE TABLE blocks (fid INTEGER PRIMARY KEY, geoid TEXT NOT NULL UNIQUE,
  population INTEGER NOT NULL, water INTEGER NOT NULL,
  source_file TEXT NOT NULL, source_row INTEGER NOT NULL, problem TEXT, geom POLYGON);
CREATE INDEX blocks_problems ON blocks (fid) WHERE problem IS NOT NULL;
INSERT INTO blocks (geoid, population, water, source_file, source_row, problem, geom)
  SELECT json_extract(attributes, '$.GEOID'), json_extract(attributes, '$.POP'),
         json_extract(attributes, '$.WATER'), file, row, problem, geom
  FROM ambit_read('downloads/blocks_*.zip', '{"bad_rows": "keep"}');

DROP TABLE IF EXISTS urban_areas;
CREATE TABLE urban_areas (fid INTEGER PRIMARY KEY, name TEXT NOT NULL,
  source_file TEXT NOT NULL, source_row INTEGER NOT NULL, problem TEXT, geom MULTIPOLYGON);
CREATE INDEX urban_areas_problems ON urban_areas (fid) WHERE problem IS NOT NULL;
INSERT INTO urban_areas (name, source_file, source_row, problem, geom)
  SELECT json_extract(attributes, '$.NAME'), file, row, problem,
         CASE WHEN ST_GeometryType(geom) = 'POLYGON'
              THEN ST_GeomFromText('MULTIPOLYGON (' || substr(ST_AsText(geom), 9) || ')')
              ELSE geom END
  FROM ambit_read('downloads/urban_areas.zip', '{"bad_rows": "keep"}');

DROP TABLE IF EXISTS parks;
CREATE TABLE parks (fid INTEGER PRIMARY KEY, park_id TEXT NOT NULL, name TEXT NOT NULL,
  source_file TEXT NOT NULL, source_row INTEGER NOT NULL, problem TEXT, geom GEOMETRY);
CREATE INDEX parks_problems ON parks (fid) WHERE problem IS NOT NULL;
INSERT INTO parks (park_id, name, source_file, source_row, problem, geom)
  SELECT json_extract(attributes, '$.PARK_ID'), json_extract(attributes, '$.NAME'),
         file, row, problem, geom
  FROM ambit_read('downloads/parks/parks_utm9n.shp', '{"bad_rows": "keep"}');

DROP TABLE IF EXISTS rec_sites;
CREATE TABLE rec_sites (fid INTEGER PRIMARY KEY, site_code TEXT NOT NULL, site_name TEXT,
  activity TEXT, source_file TEXT NOT NULL, source_row INTEGER NOT NULL, problem TEXT, geom POINT);
CREATE INDEX rec_sites_problems ON rec_sites (fid) WHERE problem IS NOT NULL;
INSERT INTO rec_sites (site_code, site_name, activity, source_file, source_row, problem, geom)
  SELECT json_extract(attributes, '$.site_code'), json_extract(attributes, '$.site_name'),
         json_extract(attributes, '$.activity'), file, row, problem, geom
  FROM ambit_read('downloads/rec_sites.geojson', '{"bad_rows": "keep"}');

-- CSV values are text; lon and lat are read back from the geometry.
DROP TABLE IF EXISTS fitness_list;
CREATE TABLE fitness_list (fid INTEGER PRIMARY KEY, license_no TEXT NOT NULL, business TEXT,
  category TEXT, lon REAL, lat REAL, source_file TEXT NOT NULL, source_row INTEGER NOT NULL,
  problem TEXT, geom POINT);
CREATE INDEX fitness_list_problems ON fitness_list (fid) WHERE problem IS NOT NULL;
INSERT INTO fitness_list (license_no, business, category, lon, lat, source_file, source_row,
                          problem, geom)
  SELECT json_extract(attributes, '$.license_no'), nullif(json_extract(attributes, '$.business'), ''),
         nullif(json_extract(attributes, '$.category'), ''), ST_X(geom), ST_Y(geom),
         file, row, problem, geom
  FROM ambit_read('downloads/fitness_list.csv', '{"bad_rows": "keep"}');

-- 2. Every row that could not be placed, layer by layer in reading order
-- (INDEXED BY: through the partial indexes, an error rather than a scan of
-- every block if SQLite could not use them). --------------------------------
DROP TABLE IF EXISTS download_problems;
CREATE TABLE download_problems (layer TEXT, file TEXT, row INTEGER, problem TEXT);
INSERT INTO download_problems
  SELECT 'counties', source_file, source_row, problem
  FROM counties INDEXED BY counties_problems WHERE problem IS NOT NULL ORDER BY fid;
INSERT INTO download_problems
  SELECT 'blocks', source_file, source_row, problem
  FROM blocks INDEXED BY blocks_problems WHERE problem IS NOT NULL ORDER BY fid;
INSERT INTO download_problems
  SELECT 'urban_areas', source_file, source_row, problem
  FROM urban_areas INDEXED BY urban_areas_problems WHERE problem IS NOT NULL ORDER BY fid;
INSERT INTO download_problems
  SELECT 'parks', source_file, source_row, problem
  FROM parks INDEXED BY parks_problems WHERE problem IS NOT NULL ORDER BY fid;
INSERT INTO download_problems
  SELECT 'rec_sites', source_file, source_row, problem
  FROM rec_sites INDEXED BY rec_sites_problems WHERE problem IS NOT NULL ORDER BY fid;
INSERT INTO download_problems
  SELECT 'fitness_list', source_file, source_row, problem
  FROM fitness_list INDEXED BY fitness_list_problems WHERE problem IS NOT NULL ORDER BY fid;

-- 3. GeoPackage layers (the blocks and parks with a spatial index, so GIS
-- programs open them fast). ------------------------------------------------
SELECT ambit_gpkg_register('counties', 'geom', 'MULTIPOLYGON');
SELECT ambit_gpkg_register('blocks', 'geom', 'POLYGON', 1);
SELECT ambit_gpkg_register('urban_areas', 'geom', 'MULTIPOLYGON');
SELECT ambit_gpkg_register('parks', 'geom', 'GEOMETRY', 1);
SELECT ambit_gpkg_register('rec_sites', 'geom', 'POINT');
SELECT ambit_gpkg_register('fitness_list', 'geom', 'POINT');
SELECT ambit_gpkg_register('download_problems', NULL);

-- 4. What was read, and the rows that could not be placed: by file and
-- reason, with the first row of each (a nation's lists hold hundreds; every
-- one is in download_problems). -------------------------------------------
.output stdout
.mode box
SELECT 'counties' AS layer, count(*) AS rows, sum(geom IS NULL) AS without_geometry FROM counties
UNION ALL SELECT 'blocks', count(*), sum(geom IS NULL) FROM blocks
UNION ALL SELECT 'urban_areas', count(*), sum(geom IS NULL) FROM urban_areas
UNION ALL SELECT 'parks', count(*), sum(geom IS NULL) FROM parks
UNION ALL SELECT 'rec_sites', count(*), sum(geom IS NULL) FROM rec_sites
UNION ALL SELECT 'fitness_list', count(*), sum(geom IS NULL) FROM fitness_list;
SELECT file, problem, count(*) AS rows, min(row) AS first_row
FROM download_problems GROUP BY file, problem ORDER BY min(rowid);
.mode list
