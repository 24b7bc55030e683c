"""GeoPackages of other programs, and what ambit_gpkg_register writes, checked
with an independent reader and writer: GDAL through pyogrio 0.13 (PyPI).

    a. A GeoPackage written by GDAL with its R-tree spatial index (OGC
       12-128, Annex F.3: the rtree_<t>_<c> table and the triggers of version 1.4 that
       call ST_IsEmpty, ST_MinX, ST_MaxX, ST_MinY, ST_MaxY) cannot be edited in
       the stock sqlite3 shell without those functions ("no such
       function"); with ambit loaded, INSERT, UPDATE (geometry, NULL,
       empty, primary key) and DELETE succeed, in a projected system (UTM)
       and in longitude/latitude.
    b. After the edits every rtree row is the envelope of its row's
       geometry (computed here with shapely from the blob), rounded outward
       to 32-bit floats as SQLite's R*Tree stores it, and there is no row
       for a NULL or empty geometry; GDAL's spatial filter, which reads the
       index, returns the same features as a brute-force envelope test.
    c. ambit_gpkg_register(table, column, NULL, 1) builds the same index for
       its tables: GDAL reports a fast spatial filter, the triggers keep the
       index right under edits.
    d. ambit_gpkg_register(table, NULL) registers a table without geometry
       as attributes: GDAL lists and reads it with its declared types and
       no warning; untyped columns, views and tables without an integer
       primary key get errors that say what to do.

Test data is invented (squares near the demo region and in UTM zone 17).

Usage: python3 gpkg_tools_check.py path/to/libambit.so
"""

import os
import random
import struct
import subprocess
import sys
import tempfile
import warnings

import numpy
import pyogrio
import pyogrio.raw
from shapely import wkb as shapely_wkb
from shapely.geometry import Point, Polygon, box

SHELL = "/usr/bin/sqlite3"
from checks import Checks

check = Checks()


def shell(path, sql, library=None):
    """Runs sql in the stock shell on path (ambit loaded when library is
    given); returns (returncode, stdout, stderr)."""
    script = (f".load {os.path.splitext(library)[0]}\n" if library else "") + ".bail on\n" + sql + "\n"
    run = subprocess.run([SHELL, path], input=script, capture_output=True, text=True)
    return run.returncode, run.stdout, run.stderr


def ok(path, sql, library=None):
    code, out, err = shell(path, sql, library)
    check(code == 0 and not err, f"shell failed: {sql}\n{err}")
    return out


def gp_blob(geom, srs_id, empty=False):
    """A GeoPackage geometry blob as GDAL writes points: little endian, no
    envelope (OGC 12-128, clause 2.1.3.1.1); the empty flag (bit 4) for an
    empty geometry."""
    flags = 0x01 | (0x10 if empty else 0)
    return b"GP\x00" + bytes([flags]) + struct.pack("<i", srs_id) + shapely_wkb.dumps(geom)


def read_blob(blob):
    """The geometry of a GeoPackage blob, with shapely: skip the header
    (8 bytes and the envelope the flags announce)."""
    flags = blob[3]
    envelope = {0: 0, 1: 32, 2: 48, 3: 48, 4: 64}[(flags >> 1) & 0x07]
    return shapely_wkb.loads(bytes(blob[8 + envelope:]))


def check_rtree(path, table, column, key="fid"):
    """Every rtree row is its geometry's envelope, rounded outward to 32-bit
    floats; rows exist exactly for non-NULL, non-empty geometries."""
    rows = ok(path, f"SELECT {key}, hex({column}) FROM {table};")
    expected = {}
    for line in rows.splitlines():
        fid, hexblob = line.split("|")
        if not hexblob:
            continue
        g = read_blob(bytes.fromhex(hexblob))
        if g.is_empty:
            continue
        expected[int(fid)] = g.bounds  # (minx, miny, maxx, maxy)
    stored = {}
    for line in ok(path, f"SELECT id, minx, maxx, miny, maxy FROM rtree_{table}_{column};").splitlines():
        i, minx, maxx, miny, maxy = line.split("|")
        stored[int(i)] = (float(minx), float(miny), float(maxx), float(maxy))
    check(set(stored) == set(expected), f"{table}: rtree ids {sorted(set(stored) ^ set(expected))[:10]} differ")
    for i, (minx, miny, maxx, maxy) in expected.items():
        s = stored[i]
        for got, true, low in ((s[0], minx, True), (s[1], miny, True), (s[2], maxx, False), (s[3], maxy, False)):
            # SQLite's R*Tree keeps 32-bit floats rounded outward (sqlite.org
            # rtree.html, section 4.1): at most one float32 step away.
            step = abs(float(numpy.spacing(numpy.float32(true)))) * 2
            check((got <= true if low else got >= true) and abs(got - true) <= step,
                  f"{table} id {i}: stored {got} for {true}")
    return expected


def check_gdal_filter(path, layer, expected, query):
    """GDAL's spatial filter (which reads the R-tree) returns the features
    whose envelope meets the query box, as a brute-force test does."""
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        _, fids, _, _ = pyogrio.raw.read(path, layer=layer, bbox=query, return_fids=True)
    qminx, qminy, qmaxx, qmaxy = query
    brute = {i for i, (a, b, c, d) in expected.items() if a <= qmaxx and c >= qminx and b <= qmaxy and d >= qminy}
    # GDAL refines by the geometry's own envelope: the same set.
    check(set(int(f) for f in fids) == brute, f"{layer}: GDAL filter {sorted(fids)[:5]} vs {sorted(brute)[:5]}")


def squares(rng, n, x0, y0, spread, size):
    out = []
    for _ in range(n):
        x, y = x0 + rng.uniform(0, spread), y0 + rng.uniform(0, spread)
        s = rng.uniform(size / 4, size)
        out.append(box(x, y, x + s, y + s))
    return out


def gdal_files(library, tmp):
    rng = random.Random(11)
    path = os.path.join(tmp, "other_program.gpkg")
    parks = squares(rng, 200, 300000, 3500000, 200000, 2000)
    pyogrio.raw.write(
        path, numpy.array([shapely_wkb.dumps(p) for p in parks], dtype=object),
        [numpy.arange(1, len(parks) + 1, dtype=numpy.int64)], ["park_id"],
        layer="parks", driver="GPKG", geometry_type="Polygon", crs="EPSG:32617",
    )
    sites = [Point(-131.5 + rng.uniform(0, 1), 38 + rng.uniform(0, 1)) for _ in range(100)]
    geoms = numpy.array([shapely_wkb.dumps(p) for p in sites] + [None], dtype=object)
    pyogrio.raw.write(
        path, geoms, [numpy.arange(1, len(geoms) + 1, dtype=numpy.int64)], ["site_id"],
        layer="sites", driver="GPKG", geometry_type="Point", crs="EPSG:4326", append=True,
    )
    triggers = ok(path, "SELECT name FROM sqlite_schema WHERE type = 'trigger' AND name LIKE 'rtree_parks_geom%';")
    check("rtree_parks_geom_insert" in triggers, f"GDAL wrote the index triggers: {triggers}")

    # a. Without ambit the triggers fail.
    code, _, err = shell(path, "UPDATE parks SET geom = geom WHERE fid = 1;")
    check(code != 0 and "no such function: ST_" in err, f"without ambit: {err}")

    new_park = box(310000, 3510000, 311500, 3512500)
    moved = box(400000, 3600000, 401000, 3600500)
    empty = Polygon()
    edits = f"""
        INSERT INTO parks (fid, park_id, geom) VALUES (1001, 1001, X'{gp_blob(new_park, 32617).hex()}');
        INSERT INTO parks (fid, park_id, geom) VALUES (1002, 1002, NULL);
        INSERT INTO parks (fid, park_id, geom) VALUES (1003, 1003, X'{gp_blob(empty, 32617, empty=True).hex()}');
        UPDATE parks SET geom = X'{gp_blob(moved, 32617).hex()}' WHERE fid = 2;
        UPDATE parks SET geom = NULL WHERE fid = 3;
        UPDATE parks SET geom = X'{gp_blob(empty, 32617, empty=True).hex()}' WHERE fid = 6;
        UPDATE parks SET fid = 2004 WHERE fid = 4;
        UPDATE parks SET fid = 2007, geom = NULL WHERE fid = 7;
        UPDATE parks SET park_id = -8 WHERE fid = 8;
        DELETE FROM parks WHERE fid = 5;
        UPDATE parks SET geom = X'{gp_blob(new_park, 32617).hex()}' WHERE fid = 1002;
        UPDATE sites SET geom = X'{gp_blob(Point(-131.25, 38.5), 4326).hex()}' WHERE fid = 1;
        UPDATE sites SET geom = X'{gp_blob(Point(-131.0, 38.0), 4326).hex()}' WHERE geom IS NULL;
        DELETE FROM sites WHERE fid = 2;
        INSERT INTO sites (site_id, geom) VALUES (500, ST_Point(-131.125, 38.25));
    """
    ok(path, edits, library)
    parks_env = check_rtree(path, "parks", "geom")
    check(1001 in parks_env and 1002 in parks_env and 2004 in parks_env, "edited rows indexed")
    check(all(i not in parks_env for i in (3, 4, 5, 6, 7, 1003, 2007)), "removed rows not indexed")
    sites_env = check_rtree(path, "sites", "geom")
    # 100 points and a NULL; the NULL set, one deleted, one inserted.
    check(len(sites_env) == 101, f"{len(sites_env)} sites indexed")
    check_gdal_filter(path, "parks", parks_env, (300000, 3500000, 400500, 3600200))
    check_gdal_filter(path, "sites", sites_env, (-131.3, 38.2, -131.0, 38.6))
    print(f"GDAL GeoPackage edited with ambit loaded: {len(parks_env)} parks and {len(sites_env)} sites indexed right")


def ambit_index(library, tmp):
    rng = random.Random(12)
    path = os.path.join(tmp, "ambit_index.gpkg")
    places = squares(rng, 300, -132.0, 38.0, 1.0, 0.01)
    values = ",\n".join(f"({i + 1}, 'place {i + 1}', ST_GeomFromText('{p.wkt}'))" for i, p in enumerate(places))
    ok(path, f"""
        CREATE TABLE places (fid INTEGER PRIMARY KEY, name TEXT, geom POLYGON);
        INSERT INTO places VALUES {values};
        INSERT INTO places VALUES (301, 'no geometry', NULL), (302, 'empty', ST_GeomFromText('POLYGON EMPTY'));
        SELECT ambit_gpkg_register('places', 'geom', NULL, 1);
    """, library)
    env = check_rtree(path, "places", "geom")
    check(len(env) == 300, f"{len(env)} places indexed")
    ext = ok(path, "SELECT table_name, column_name, extension_name, scope FROM gpkg_extensions;")
    check(ext.strip() == "places|geom|gpkg_rtree_index|write-only", ext)
    triggers = sorted(ok(path, "SELECT name FROM sqlite_schema WHERE type = 'trigger' AND tbl_name = 'places';").split())
    check(triggers == sorted(f"rtree_places_geom_{s}" for s in ("insert", "update6", "update7", "update2", "update5", "update4", "delete")), triggers)
    info = pyogrio.read_info(path, layer="places")
    check(info["capabilities"]["fast_spatial_filter"], f"GDAL sees the index: {info['capabilities']}")
    check_gdal_filter(path, "places", env, (-131.8, 38.2, -131.5, 38.6))
    # Edits through the triggers ambit wrote.
    ok(path, """
        UPDATE places SET geom = ST_GeomFromText('POLYGON ((-131.6 38.3, -131.59 38.3, -131.59 38.31, -131.6 38.3))') WHERE fid = 1;
        UPDATE places SET geom = NULL WHERE fid = 2;
        UPDATE places SET fid = 1003 WHERE fid = 3;
        DELETE FROM places WHERE fid = 4;
        INSERT INTO places (name, geom) VALUES ('new', ST_Point(-131.7, 38.4));
        UPDATE places SET geom = ST_Point(-131.71, 38.41) WHERE fid = 301;
    """, library)
    env = check_rtree(path, "places", "geom")
    check_gdal_filter(path, "places", env, (-131.8, 38.2, -131.5, 38.6))
    # Registering again rebuilds the index.
    ok(path, "DELETE FROM rtree_places_geom; SELECT ambit_gpkg_register('places', 'geom', NULL, 1);", library)
    check(len(check_rtree(path, "places", "geom")) == len(env), "rebuilt index")
    # What cannot be indexed.
    for sql, needle in (
        ("CREATE VIEW places_view AS SELECT fid, geom FROM places; SELECT ambit_gpkg_register('places_view', 'geom', NULL, 1);", "is a view"),
        ("CREATE TABLE nokey (name TEXT, geom BLOB); INSERT INTO nokey VALUES ('a', ST_Point(1, 2)); SELECT ambit_gpkg_register('nokey', 'geom', NULL, 1);", "INTEGER PRIMARY KEY"),
        ("SELECT ambit_gpkg_register('places', 'geom', NULL, 2);", "argument 4 (spatial_index)"),
    ):
        code, _, err = shell(path, sql, library)
        check(code != 0 and "ambit_gpkg_register: " in err and needle in err, f"{sql}: {err}")
    print(f"ambit_gpkg_register spatial index: {len(env)} rows right after edits; GDAL fast_spatial_filter")


def attributes(library, tmp):
    path = os.path.join(tmp, "attributes.gpkg")
    ok(path, """
        CREATE TABLE parameters (build_year INTEGER, reach_m REAL, geoid TEXT(15), note TEXT);
        INSERT INTO parameters VALUES (2026, 804.672, '990010001001001', 'invented');
        SELECT ambit_gpkg_register('parameters', NULL);
        CREATE TABLE sites (fid INTEGER PRIMARY KEY, geom POINT);
        INSERT INTO sites (geom) VALUES (ST_Point(-131.5, 38.4));
        SELECT ambit_gpkg_register('sites', 'geom');
    """, library)
    contents = ok(path, "SELECT table_name, data_type, srs_id IS NULL FROM gpkg_contents ORDER BY 1;")
    check(contents.split() == ["parameters|attributes|1", "sites|features|0"], contents)
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        layers = dict(pyogrio.list_layers(path))
        meta, _, geometry, fields = pyogrio.raw.read(path, layer="parameters")
    check(not caught, [str(w.message) for w in caught])
    check(set(layers) == {"parameters", "sites"}, layers)
    check(geometry is None and list(meta["fields"]) == ["build_year", "reach_m", "geoid", "note"], meta)
    check(list(meta["dtypes"]) == ["int64", "float64", "object", "object"], meta["dtypes"])
    check([f[0] for f in fields] == [2026, 804.672, "990010001001001", "invented"], fields)
    for sql, needle in (
        ("CREATE TABLE untyped AS SELECT 1 AS a, ambit_miles(1) AS b; SELECT ambit_gpkg_register('untyped', NULL);", "column 'a' of 'untyped' has no declared type"),
        ("SELECT ambit_gpkg_register('parameters', NULL, 'POINT');", "takes no type"),
        ("SELECT ambit_gpkg_register('missing', NULL);", "no table named 'missing'"),
    ):
        code, _, err = shell(path, sql, library)
        check(code != 0 and needle in err, f"{sql}: {err}")
    print("attributes: registered, read by GDAL with their types and no warning")


def main():
    library = sys.argv[1]
    with tempfile.TemporaryDirectory() as tmp:
        gdal_files(library, tmp)
        ambit_index(library, tmp)
        attributes(library, tmp)
    check.report()


if __name__ == "__main__":
    main()
