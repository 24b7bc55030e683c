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
-- and parks with a spatial index), and download_problems: every row that
-- could not be placed, with its file, row number and reason (nothing is
-- dropped silently; those rows are kept with a NULL geometry).

.bail on
-- ambit is found on the library search path (README, "Install").
.load libambit
-- The counts the building steps return go to a log in results/, not the
-- screen; the table of rows that could not be placed is printed.
.output results/from-downloads.log

-- 1. Read every file once; rows that cannot be placed are kept with the
-- reason (bad_rows: keep), and listed in download_problems below. --------
DROP TABLE IF EXISTS temp.downloaded;
CREATE TEMP TABLE downloaded (layer TEXT, file TEXT, row INTEGER, attributes TEXT, geom BLOB, problem TEXT);
INSERT INTO temp.downloaded SELECT 'counties', file, row, attributes, geom, problem
  FROM ambit_read('downloads/counties.zip', '{"bad_rows": "keep"}');
INSERT INTO temp.downloaded SELECT 'blocks', file, row, attributes, geom, problem
  FROM ambit_read('downloads/blocks_*.zip', '{"bad_rows": "keep"}');
INSERT INTO temp.downloaded SELECT 'urban_areas', file, row, attributes, geom, problem
  FROM ambit_read('downloads/urban_areas.zip', '{"bad_rows": "keep"}');
INSERT INTO temp.downloaded SELECT 'parks', file, row, attributes, geom, problem
  FROM ambit_read('downloads/parks/parks_utm9n.shp', '{"bad_rows": "keep"}');
INSERT INTO temp.downloaded SELECT 'rec_sites', file, row, attributes, geom, problem
  FROM ambit_read('downloads/rec_sites.geojson', '{"bad_rows": "keep"}');
INSERT INTO temp.downloaded SELECT 'fitness_list', file, row, attributes, geom, problem
  FROM ambit_read('downloads/fitness_list.csv', '{"bad_rows": "keep"}');

DROP TABLE IF EXISTS download_problems;
CREATE TABLE download_problems (layer TEXT, file TEXT, row INTEGER, problem TEXT);
INSERT INTO download_problems
  SELECT layer, file, row, problem FROM temp.downloaded WHERE problem IS NOT NULL ORDER BY rowid;

-- A shapefile polygon with one outer ring is read as a POLYGON; the county
-- and urban-area layers hold MULTIPOLYGONs, as in the demo database.
DROP VIEW IF EXISTS temp.as_multi;
CREATE TEMP VIEW as_multi AS
  SELECT rowid AS id,
         CASE WHEN ST_GeometryType(geom) = 'POLYGON'
              THEN ST_GeomFromText('MULTIPOLYGON (' || substr(ST_AsText(geom), 9) || ')')
              ELSE geom END AS geom
  FROM temp.downloaded;

-- 2. The input tables of the indicator scripts. ------------------------
DROP TABLE IF EXISTS counties;
CREATE TABLE counties (fid INTEGER PRIMARY KEY, geoid TEXT NOT NULL, name TEXT NOT NULL, geom MULTIPOLYGON);
INSERT INTO counties (geoid, name, geom)
  SELECT json_extract(d.attributes, '$.GEOID'), json_extract(d.attributes, '$.NAME'), m.geom
  FROM temp.downloaded AS d JOIN temp.as_multi AS m ON m.id = d.rowid
  WHERE d.layer = 'counties' ORDER BY d.rowid;

DROP TABLE IF EXISTS blocks;
CREATE TABLE blocks (fid INTEGER PRIMARY KEY, geoid TEXT NOT NULL UNIQUE,
  population INTEGER NOT NULL, water INTEGER NOT NULL, geom POLYGON);
INSERT INTO blocks (geoid, population, water, geom)
  SELECT json_extract(attributes, '$.GEOID'), json_extract(attributes, '$.POP'),
         json_extract(attributes, '$.WATER'), geom
  FROM temp.downloaded WHERE layer = 'blocks' ORDER BY rowid;

DROP TABLE IF EXISTS urban_areas;
CREATE TABLE urban_areas (fid INTEGER PRIMARY KEY, name TEXT NOT NULL, geom MULTIPOLYGON);
INSERT INTO urban_areas (name, geom)
  SELECT json_extract(d.attributes, '$.NAME'), m.geom
  FROM temp.downloaded AS d JOIN temp.as_multi AS m ON m.id = d.rowid
  WHERE d.layer = 'urban_areas' ORDER BY d.rowid;

DROP TABLE IF EXISTS parks;
CREATE TABLE parks (fid INTEGER PRIMARY KEY, park_id TEXT NOT NULL, name TEXT NOT NULL, geom GEOMETRY);
INSERT INTO parks (park_id, name, geom)
  SELECT json_extract(attributes, '$.PARK_ID'), json_extract(attributes, '$.NAME'), geom
  FROM temp.downloaded WHERE layer = 'parks' ORDER BY rowid;

DROP TABLE IF EXISTS rec_sites;
CREATE TABLE rec_sites (fid INTEGER PRIMARY KEY, site_code TEXT NOT NULL, site_name TEXT,
  activity TEXT, geom POINT);
INSERT INTO rec_sites (site_code, site_name, activity, geom)
  SELECT json_extract(attributes, '$.site_code'), json_extract(attributes, '$.site_name'),
         json_extract(attributes, '$.activity'), geom
  FROM temp.downloaded WHERE layer = 'rec_sites' ORDER BY rowid;

-- CSV values are text; lon and lat are read back from the geometry.
DROP TABLE IF EXISTS fitness_list;
CREATE TABLE fitness_list (fid INTEGER PRIMARY KEY, license_no TEXT NOT NULL, business TEXT,
  category TEXT, lon REAL, lat REAL, geom POINT);
INSERT INTO fitness_list (license_no, business, category, lon, lat, geom)
  SELECT json_extract(attributes, '$.license_no'), nullif(json_extract(attributes, '$.business'), ''),
         nullif(json_extract(attributes, '$.category'), ''), ST_X(geom), ST_Y(geom), geom
  FROM temp.downloaded WHERE layer = 'fitness_list' ORDER BY rowid;

DROP VIEW temp.as_multi;
DROP TABLE temp.downloaded;

-- 3. GeoPackage layers (the blocks and parks with a spatial index, so GIS
-- programs open them fast). ------------------------------------------------
SELECT ambit_gpkg_register('counties', 'geom', 'MULTIPOLYGON');
SELECT ambit_gpkg_register('blocks', 'geom', 'POLYGON', 1);
SELECT ambit_gpkg_register('urban_areas', 'geom', 'MULTIPOLYGON');
SELECT ambit_gpkg_register('parks', 'geom', 'GEOMETRY', 1);
SELECT ambit_gpkg_register('rec_sites', 'geom', 'POINT');
SELECT ambit_gpkg_register('fitness_list', 'geom', 'POINT');
SELECT ambit_gpkg_register('download_problems', NULL);

-- 4. What was read, and every row that could not be placed. -------------
.output stdout
.mode box
SELECT 'counties' AS layer, count(*) AS rows, sum(geom IS NULL) AS without_geometry FROM counties
UNION ALL SELECT 'blocks', count(*), sum(geom IS NULL) FROM blocks
UNION ALL SELECT 'urban_areas', count(*), sum(geom IS NULL) FROM urban_areas
UNION ALL SELECT 'parks', count(*), sum(geom IS NULL) FROM parks
UNION ALL SELECT 'rec_sites', count(*), sum(geom IS NULL) FROM rec_sites
UNION ALL SELECT 'fitness_list', count(*), sum(geom IS NULL) FROM fitness_list;
SELECT file, row, problem FROM download_problems ORDER BY rowid;
.mode list
