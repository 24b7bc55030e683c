"""The raw downloads written by ambit-downloads, read back by independent
readers and compared with the demo database they come from:

    a. blocks_<county>.zip, counties.zip, urban_areas.zip: GDAL (pyogrio
       0.13, PyPI) reads each zipped shapefile, finds NAD83 (EPSG 4269) in
       its .prj and UTF-8 in its .cpg; GEOID is text of 15 (5) characters,
       POP an integer; every geometry equals the demo database's
       (shapely, after normalising ring orientation and start).
    b. parks/parks_utm9n.shp: GDAL finds NAD83 / UTM zone 9N (EPSG 26909)
       in the .prj; PROJ (pyproj 3.7.2) converts every vertex back to
       longitude/latitude, within 1 mm of the demo's parks (geodesic
       distance, geographiclib): an outside check of ambit's forward
       projection.
    c. rec_sites.geojson: GDAL reads the registry's points, equal to the
       demo's.
    d. fitness_list.csv: Python's csv module reads latitude/longitude
       columns; every demo entry is there with its coordinates, plus the
       rows that cannot be placed.

Usage: python3 downloads_check.py path/to/libambit.so DOWNLOADS_DIR DEMO.gpkg
"""

import csv
import os
import sqlite3
import sys

import numpy
import pyogrio
import pyogrio.raw
import pyproj
import shapely
from geographiclib.geodesic import Geodesic
from shapely import wkb as shapely_wkb
from shapely import normalize

from checks import Checks

check = Checks()


def gp_geometry(blob):
    """The geometry of a GeoPackage blob (OGC 12-128, clause 2.1.3)."""
    flags = blob[3]
    envelope = {0: 0, 1: 32, 2: 48, 3: 48, 4: 64}[(flags >> 1) & 0x07]
    return shapely_wkb.loads(bytes(blob[8 + envelope:]))


def single(g):
    """A multipolygon of one polygon as that polygon: a shapefile polygon
    with one outer ring is read as a POLYGON."""
    return g.geoms[0] if g.geom_type == "MultiPolygon" and len(g.geoms) == 1 else g


def same(a, b):
    return normalize(single(a)).equals_exact(normalize(single(b)), 0.0)


def main():
    downloads, demo = sys.argv[2], sys.argv[3]
    db = sqlite3.connect(demo)

    # a. Zipped shapefiles in NAD83 longitude/latitude.
    demo_blocks = {g: (p, w, gp_geometry(b)) for g, p, w, b in db.execute("SELECT geoid, population, water, geom FROM blocks")}
    seen = 0
    counties = sorted(f for f in os.listdir(downloads) if f.startswith("blocks_") and f.endswith(".zip"))
    check(len(counties) == db.execute("SELECT count(*) FROM counties").fetchone()[0], counties)
    for name in counties:
        path = f"/vsizip/{os.path.join(downloads, name)}/{name[:-4]}.shp"
        info = pyogrio.read_info(path)
        check(info["crs"] == "EPSG:4269" and info["encoding"] == "UTF-8", info)
        check(list(info["fields"]) == ["GEOID", "POP", "WATER"], info["fields"])
        check(list(info["dtypes"])[:2] == ["object", "int64"], info["dtypes"])
        _, _, geometry, (geoids, pops, waters) = pyogrio.raw.read(path)
        for geoid, pop, water, wkb in zip(geoids, pops, waters, geometry):
            check(len(geoid) == 15 and geoid.startswith(name[7:12]), geoid)
            p, w, g = demo_blocks[geoid]
            check((int(pop), int(water)) == (p, w), geoid)
            check(same(shapely_wkb.loads(wkb), g), f"block {geoid}")
            seen += 1
    check(seen == len(demo_blocks), f"{seen} of {len(demo_blocks)} blocks")
    for table, fields in (("counties", ["GEOID", "NAME"]), ("urban_areas", ["NAME"])):
        path = f"/vsizip/{os.path.join(downloads, table + '.zip')}/{table}.shp"
        info = pyogrio.read_info(path)
        check(info["crs"] == "EPSG:4269" and list(info["fields"]) == fields, info)
        _, _, geometry, values = pyogrio.raw.read(path)
        demo_rows = db.execute(f"SELECT name, geom FROM {table} ORDER BY fid").fetchall()
        check(len(geometry) == len(demo_rows), table)
        for wkb, name, (demo_name, blob) in zip(geometry, values[-1], demo_rows):
            check(name == demo_name, name)
            check(same(shapely_wkb.loads(wkb), gp_geometry(blob)), name)
    print(f"zipped shapefiles: {seen} blocks, counties and urban areas equal to the demo database")

    # b. Parks in UTM zone 9N, back to longitude/latitude with PROJ.
    path = os.path.join(downloads, "parks", "parks_utm9n.shp")
    info = pyogrio.read_info(path)
    check(info["crs"] == "EPSG:26909", info["crs"])
    to_lonlat = pyproj.Transformer.from_crs("EPSG:26909", "EPSG:4269", always_xy=True)
    _, _, geometry, (park_ids, _) = pyogrio.raw.read(path)
    demo_parks = dict(db.execute("SELECT park_id, geom FROM parks").fetchall())
    check(len(geometry) == len(demo_parks), "parks")
    worst = 0.0
    vertices = 0
    for park_id, wkb in zip(park_ids, geometry):
        ours = normalize(single(shapely.transform(
            shapely_wkb.loads(wkb), lambda xy: numpy.column_stack(to_lonlat.transform(xy[:, 0], xy[:, 1]))
        )))
        theirs = normalize(single(gp_geometry(demo_parks[park_id])))
        a, b = shapely.get_coordinates(ours), shapely.get_coordinates(theirs)
        check(ours.geom_type == theirs.geom_type and len(a) == len(b), park_id)
        for (lon, lat), (x, y) in zip(a, b):
            worst = max(worst, Geodesic.WGS84.Inverse(y, x, lat, lon)["s12"])
        vertices += len(a)
    check(worst <= 0.001, f"parks: {worst * 1000} mm from the demo's")
    print(f"parks in UTM 9N: {vertices} vertices within {worst * 1000:.6f} mm of the demo's after PROJ's inverse")

    # c. The registry as GeoJSON.
    _, _, geometry, (codes, _, _) = pyogrio.raw.read(os.path.join(downloads, "rec_sites.geojson"))
    demo_sites = dict(db.execute("SELECT site_code, geom FROM rec_sites").fetchall())
    check(len(codes) == len(demo_sites), "rec_sites")
    for code, wkb in zip(codes, geometry):
        check(shapely_wkb.loads(wkb).equals_exact(gp_geometry(demo_sites[code]), 0.0), code)

    # d. The fitness list as CSV.
    with open(os.path.join(downloads, "fitness_list.csv"), newline="") as f:
        rows = list(csv.DictReader(f))
    check(list(rows[0]) == ["license_no", "business", "category", "latitude", "longitude"], rows[0])
    demo_fitness = {r[0]: r[1:] for r in db.execute("SELECT license_no, lon, lat FROM fitness_list")}
    for row in rows:
        if row["license_no"] in demo_fitness:
            lon, lat = demo_fitness[row["license_no"]]
            if lon is None:
                check(row["latitude"] == row["longitude"] == "", row)
            else:
                check((float(row["longitude"]), float(row["latitude"])) == (lon, lat), row)
    extra = len(rows) - len(demo_fitness)
    check(extra == 3, f"{extra} rows beyond the demo's")
    print(f"rec_sites.geojson and fitness_list.csv: every demo entry, plus {extra} rows that cannot be placed")
    check.report()


if __name__ == "__main__":
    main()
