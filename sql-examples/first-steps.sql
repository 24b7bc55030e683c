-- first-steps.sql: a first session with ambit in the stock sqlite3 shell.
--
-- Run from the project folder after `cargo build --release`:
--     LD_LIBRARY_PATH=$PWD/target/release sqlite3 < sql-examples/first-steps.sql
--
-- It reads three park geometries of an invented town (from WKT and from
-- GeoJSON), stores them as GeoPackage blobs in an in-memory table, and shows
-- what ambit reads back, then the access thresholds of the trade in metres.
-- All places and names here are invented; the invented region lies over open
-- ocean so that no real place is described.

-- ambit is found on the library search path (README, "Install").
.load libambit
.mode box

CREATE TABLE parks (
  park_id INTEGER PRIMARY KEY,
  name    TEXT NOT NULL,
  geom    BLOB NOT NULL          -- GeoPackage geometry blob, srs_id 4326
);

INSERT INTO parks (name, geom) VALUES
  ('Alder Commons',
   ST_GeomFromText('POLYGON ((-131.512 38.421, -131.506 38.421, -131.506 38.426, -131.512 38.426, -131.512 38.421))')),
  ('Heron Marsh Preserve',
   ST_GeomFromText('POLYGON ((-131.530 38.400, -131.515 38.400, -131.515 38.412, -131.530 38.412, -131.530 38.400),
                             (-131.525 38.404, -131.520 38.404, -131.520 38.408, -131.525 38.408, -131.525 38.404))')),
  ('Quarry Lane Ballfield',
   ambit_from_geojson('{"type": "Feature", "properties": {"name": "Quarry Lane Ballfield"},
                        "geometry": {"type": "Point", "coordinates": [-131.4981, 38.4302]}}'));

SELECT park_id,
       name,
       ST_GeometryType(geom) AS type,
       ST_SRID(geom)         AS srs_id,
       length(geom)          AS blob_bytes
FROM parks;

-- The same geometries as GeoJSON, ready for a web map.
.mode list
SELECT name || ': ' || ambit_to_geojson(geom, 4) FROM parks;
.mode box

-- Thresholds of the trade (common practice): half a mile to a park, one
-- mile to a facility in an urban area, three miles in a rural one.
SELECT ambit_miles(0.5) AS park_m,
       ambit_miles(1)   AS urban_facility_m,
       ambit_miles(3)   AS rural_facility_m,
       ambit_version()  AS ambit;
