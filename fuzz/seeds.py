#!/usr/bin/env python3
"""Writes the seed corpora of the fuzz targets: small valid examples of
every geometry type, built with Python's struct module from the layouts of
ISO WKB (OGC 06-103r4 clause 8), GeoPackage blobs (OGC 12-128 Requirement
19), WKT (06-103r4 clause 7) and GeoJSON (RFC 7946), apart from ambit's own
writers. Run from the fuzz folder: python3 seeds.py"""

import json
import os
import struct

RING = [(-131.0, 38.0), (-130.9, 38.0), (-130.9, 38.1), (-131.0, 38.0)]


def wkb(kind, body, dims=0, big=False):
    order = ">" if big else "<"
    return bytes([0 if big else 1]) + struct.pack(order + "I", kind + dims) + body(order)


def coords(order, pts):
    return b"".join(struct.pack(order + "d" * len(p), *p) for p in pts)


def line(order, pts):
    return struct.pack(order + "I", len(pts)) + coords(order, pts)


def point(p, dims=0, big=False):
    return wkb(1, lambda o: coords(o, [p]), dims, big)


def polygon(rings, dims=0, big=False):
    return wkb(3, lambda o: struct.pack(o + "I", len(rings)) + b"".join(line(o, r) for r in rings), dims, big)


def multi(kind, members, big=False):
    return wkb(kind, lambda o: struct.pack(o + "I", len(members)) + b"".join(members), 0, big)


NAN = struct.unpack("<d", bytes.fromhex("000000000000f87f"))[0]
WKB = {
    "point": point((-131.5, 38.4)),
    "point-be": point((-131.5, 38.4), big=True),
    "point-z": point((-131.5, 38.4, 12.0), dims=1000),
    "point-m": point((-131.5, 38.4, 3.0), dims=2000),
    "point-zm": point((-131.5, 38.4, 12.0, 3.0), dims=3000),
    "point-empty": point((NAN, NAN)),
    "line": wkb(2, lambda o: line(o, RING[:3])),
    "polygon": polygon([RING]),
    "polygon-be": polygon([RING], big=True),
    "multipoint": multi(4, [point((-131.0, 38.0)), point((-130.0, 38.5), big=True)]),
    "multiline": multi(5, [wkb(2, lambda o: line(o, RING[:2]))]),
    "multipolygon": multi(6, [polygon([RING]), polygon([RING])]),
    "collection": multi(7, [point((-131.0, 38.0)), multi(7, [polygon([RING])]), multi(7, [])]),
}


def gpkg(w, srs_id=4326, envelope=True, empty=False):
    flags = 0b1 | (0b10 if envelope else 0) | (0b10000 if empty else 0)
    head = b"GP" + bytes([0, flags]) + struct.pack("<i", srs_id)
    if envelope:
        head += struct.pack("<4d", -131.5, -130.0, 38.0, 38.5)
    return head + w


WKT = {
    "point": "POINT (-131.5 38.4)",
    "point-z": "POINT Z (-131.5 38.4 12)",
    "point-zm": "POINT ZM (-131.5 38.4 12 3)",
    "point-m": "point m(1 2 3)",
    "empty": "POLYGON EMPTY",
    "line": "LINESTRING (-131.5 38.4, -131.49 38.41)",
    "polygon": "POLYGON ((-131 38, -130.9 38, -130.9 38.1, -131 38), (-130.99 38.01, -130.98 38.01, -130.98 38.02, -130.99 38.01))",
    "multipoint": "MULTIPOINT ((1 2), EMPTY, (3 4))",
    "multipoint-bare": "MULTIPOINT (1 2, 3 4)",
    "multiline": "MULTILINESTRING ((1 2, 3 4), EMPTY)",
    "multipolygon": "MULTIPOLYGON (((-131 38, -130.9 38, -130.9 38.1, -131 38)), EMPTY)",
    "collection": "GEOMETRYCOLLECTION (POINT (1 2), GEOMETRYCOLLECTION (LINESTRING (1 2, 3 4)), POLYGON EMPTY)",
    "collection-z": "GEOMETRYCOLLECTION Z (POINT Z (1 2 3), GEOMETRYCOLLECTION Z EMPTY)",
    "numbers": "LINESTRING (1e3 -2.5E-2, +0.5 .5, -0 1.7976931348623157e308)",
}

R = [list(p) for p in RING]
GEOJSON = {
    "point": {"type": "Point", "coordinates": [-131.5, 38.4]},
    "point-z": {"type": "Point", "coordinates": [-131.5, 38.4, 12]},
    "point-empty": {"type": "Point", "coordinates": []},
    "line": {"type": "LineString", "coordinates": R[:3]},
    "polygon": {"type": "Polygon", "coordinates": [R]},
    "multipoint": {"type": "MultiPoint", "coordinates": [[1, 2], [], [3, 4]]},
    "multiline": {"type": "MultiLineString", "coordinates": [R[:2], []]},
    "multipolygon": {"type": "MultiPolygon", "coordinates": [[R], []]},
    "collection": {"type": "GeometryCollection", "geometries": [
        {"type": "Point", "coordinates": [1, 2]},
        {"type": "GeometryCollection", "geometries": []}]},
    "feature": {"type": "Feature", "id": 7, "properties": {"name": "a"},
                "geometry": {"type": "Point", "coordinates": [1.25, -2e-5]}},
    "feature-null": {"type": "Feature", "properties": None, "geometry": None},
}


def write(folder, name, data):
    os.makedirs(folder, exist_ok=True)
    with open(os.path.join(folder, "seed-" + name), "wb") as f:
        f.write(data)


for name, w in WKB.items():
    write("corpus/wkb_decode", name, w)
    write("corpus/round_trip", "wkb-" + name, w)
    empty = name == "point-empty"
    write("corpus/gpkg_decode", name, gpkg(w, envelope=not empty, empty=empty))
    write("corpus/round_trip", "gpkg-" + name, gpkg(w, envelope=not empty, empty=empty))
write("corpus/gpkg_decode", "big-endian-header",
      b"GP\x00\x02" + struct.pack(">i", 4269) + struct.pack(">4d", 1, 1, 2, 2) + WKB["point"])
for name, text in WKT.items():
    write("corpus/wkt_parse", name, text.encode())
for name, value in GEOJSON.items():
    write("corpus/geojson_parse", name, json.dumps(value).encode())

# ambit_read's readers: the first byte picks the format (read_files), or
# gives where the .shp ends and the .dbf begins (read_shapefile). The
# shapefile seeds come from the README's fixture archive.
import zipfile  # noqa: E402

FIXTURE = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "tests", "fixtures", "read")
archive = open(os.path.join(FIXTURE, "blocks_99001.zip"), "rb").read()
write("corpus/read_files", "zip", b"\x00" + archive)
write("corpus/read_files", "csv", b"\x01" + open(os.path.join(FIXTURE, "clinics.csv"), "rb").read())
write("corpus/read_files", "geojson", b"\x02" + json.dumps({"type": "FeatureCollection", "features": [
    {"type": "Feature", "properties": {"a": 1}, "geometry": GEOJSON[next(iter(GEOJSON))]}]}).encode())
write("corpus/read_files", "ndjson", b"\x03" + b'{"type":"Point","coordinates":[1,2]}\n{"type":"Feature","properties":null,"geometry":null}\n')
with zipfile.ZipFile(os.path.join(FIXTURE, "blocks_99001.zip")) as z:
    shp, dbf = z.read("blocks_99001.shp"), z.read("blocks_99001.dbf")
write("corpus/read_shapefile", "polygons", struct.pack("<H", len(shp)) + shp + dbf)
