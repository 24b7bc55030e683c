"""ambit_to_lonlat checked against PROJ (pyproj 3.7.2 from PyPI, which
bundles PROJ 9), the reference implementation of map projections.

    a. accuracy: 10,000 random points in the area of use of each system
       (EPSG 3857, 5070, 2229 in US survey feet, 26918, 32617, 3395, and
       EPSG 3035 and 2229 given as WKT2:2019 text written by PROJ itself): PROJ
       projects them, ambit converts them back to longitude/latitude and
       PROJ's own inverse gives the reference. The difference is measured as
       the geodesic distance on WGS84 (geographiclib 2.1, Karney 2013) and
       must be <= 1 mm. The source system is given as 'EPSG:n', as WKT2
       text, and for one system as a GeoPackage srs_id whose
       gpkg_spatial_ref_sys definition is PROJ's WKT1 (as GDAL writes it).
    b. round trip: PROJ's forward projection of ambit's longitude/latitude
       returns the projected input within 1 mm (on the ground).
    c. a GeoPackage layer in UTM written by GDAL (pyogrio 0.13 from PyPI)
       converts with the srs_id its geometries carry.
    d. SQL semantics: NULL in, NULL out; srs_id 4326 out; errors name the
       function and the definition or the vertex.

Points are invented: uniform in each system's area of use from a fixed
seed. Prints the maximum error per system.

Usage: python3 reproject_check.py path/to/libambit.so
"""

import math
import os
import random
import struct
import sys
import tempfile

import apsw
import numpy
import pyogrio.raw
import pyproj
from geographiclib.geodesic import Geodesic
from shapely import wkb as shapely_wkb
from shapely.geometry import Point, Polygon

G = Geodesic.WGS84
POINTS = 10_000
TOLERANCE_M = 0.001

from checks import Checks, connect

check = Checks()


def gpkg_blob(geom, srs_id):
    """A GeoPackage geometry blob (OGC 12-128, clause 2.1.3: magic 'GP',
    version 0, flags with little-endian byte order and no envelope, int32
    srs_id, then WKB)."""
    return b"GP" + bytes([0, 1]) + struct.pack("<i", srs_id) + shapely_wkb.dumps(geom)


def lonlat(conn, blob):
    x, y, srid = conn.execute(
        "SELECT ST_X(g), ST_Y(g), ST_SRID(g) FROM (SELECT ? AS g)", (blob,)
    ).fetchone()
    return x, y, srid


def accuracy(library):
    wkt2 = pyproj.CRS("EPSG:3035").to_wkt("WKT2_2019")
    systems = [
        ("EPSG:3857", "EPSG:3857"),
        ("EPSG:5070", "EPSG:5070"),
        ("EPSG:2229", "EPSG:2229"),
        ("EPSG:26918", "EPSG:26918"),
        ("EPSG:32617", "EPSG:32617"),
        ("EPSG:3395", "EPSG:3395"),
        ("EPSG:3035 as WKT2", wkt2),
        ("EPSG:2229 as WKT2", pyproj.CRS("EPSG:2229").to_wkt("WKT2_2019")),
        ("EPSG:26918 by srs_id", None),
    ]
    conn = connect(library)
    # gpkg_spatial_ref_sys as GDAL writes it: PROJ's WKT1 in definition.
    conn.execute(
        "CREATE TABLE gpkg_spatial_ref_sys (srs_name TEXT NOT NULL, srs_id INTEGER PRIMARY KEY,"
        " organization TEXT NOT NULL, organization_coordsys_id INTEGER NOT NULL,"
        " definition TEXT NOT NULL, description TEXT)"
    )
    conn.execute(
        "INSERT INTO gpkg_spatial_ref_sys VALUES ('NAD83 / UTM zone 18N', 26918, 'EPSG', 26918, ?, NULL)",
        (pyproj.CRS("EPSG:26918").to_wkt("WKT1_GDAL"),),
    )
    rng = random.Random(20261202)
    report = []
    for name, definition in systems:
        crs = pyproj.CRS(definition if definition else "EPSG:26918")
        geo = crs.geodetic_crs
        forward = pyproj.Transformer.from_crs(geo, crs, always_xy=True)
        inverse = pyproj.Transformer.from_crs(crs, geo, always_xy=True)
        west, south, east, north = crs.area_of_use.bounds
        unit = crs.axis_info[0].unit_conversion_factor  # metres per unit
        lons = [rng.uniform(west, east) for _ in range(POINTS)]
        lats = [rng.uniform(south, north) for _ in range(POINTS)]
        xs, ys = forward.transform(lons, lats)
        ref_lons, ref_lats = inverse.transform(xs, ys)
        if definition is None:
            blobs = [gpkg_blob(Point(x, y), 26918) for x, y in zip(xs, ys)]
            sql = "SELECT ST_X(g), ST_Y(g), ST_SRID(g) FROM (SELECT ambit_to_lonlat(?) AS g)"
            rows = [conn.execute(sql, (b,)).fetchone() for b in blobs]
        else:
            sql = "SELECT ST_X(g), ST_Y(g), ST_SRID(g) FROM (SELECT ambit_to_lonlat(?, ?) AS g)"
            rows = [
                conn.execute(sql, (shapely_wkb.dumps(Point(x, y)), definition)).fetchone()
                for x, y in zip(xs, ys)
            ]
        worst = worst_orig = proj_self = 0.0
        for (lon, lat, srid), rlon, rlat, olon, olat in zip(rows, ref_lons, ref_lats, lons, lats):
            check(srid == 4326, f"{name}: output srs_id {srid}")
            d = G.Inverse(rlat, rlon, lat, lon)["s12"]
            d_orig = G.Inverse(olat, olon, lat, lon)["s12"]
            d_self = G.Inverse(olat, olon, rlat, rlon)["s12"]
            # Against PROJ's inverse: within 1 mm, or within 1 mm of PROJ's
            # own inverse-of-forward error at that point (PROJ 9.5's
            # ellipsoidal Lambert azimuthal inverse misses its own forward
            # by up to 1.5 mm far from the centre; see the printed figures).
            check(d <= TOLERANCE_M + d_self, f"{name}: {d * 1000:.6f} mm from PROJ at {olon} {olat}")
            check(d_orig <= TOLERANCE_M, f"{name}: {d_orig * 1000:.6f} mm from the point PROJ projected")
            worst, worst_orig, proj_self = max(worst, d), max(worst_orig, d_orig), max(proj_self, d_self)
        back_x, back_y = forward.transform([r[0] for r in rows], [r[1] for r in rows])
        trip = max(
            math.hypot(bx - x, by - y) * unit for bx, by, x, y in zip(back_x, back_y, xs, ys)
        )
        check(trip <= TOLERANCE_M, f"{name}: round trip {trip * 1000:.6f} mm")
        report.append((name, worst, worst_orig, proj_self, trip))
    print("system                 points  max mm vs PROJ inverse  vs PROJ's input  (PROJ inverse vs its input)  round trip mm")
    for name, worst, worst_orig, proj_self, trip in report:
        print(
            f"{name:22s} {POINTS:6d}  {worst * 1000:22.6f}  {worst_orig * 1000:15.6f}"
            f"  {proj_self * 1000:27.6f}  {trip * 1000:13.6f}"
        )


def gdal_geopackage(library):
    """A GeoPackage layer in UTM 17N written by GDAL (pyogrio)."""
    crs = pyproj.CRS("EPSG:32617")
    forward = pyproj.Transformer.from_crs(crs.geodetic_crs, crs, always_xy=True)
    rng = random.Random(7)
    polys = []
    for _ in range(50):
        lon, lat = rng.uniform(-83.5, -78.5), rng.uniform(30, 45)
        ring = [(lon, lat), (lon + 0.01, lat), (lon + 0.01, lat + 0.01), (lon, lat + 0.01)]
        xs, ys = forward.transform([p[0] for p in ring], [p[1] for p in ring])
        polys.append((ring, Polygon(list(zip(xs, ys)))))
    with tempfile.TemporaryDirectory() as tmp:
        path = os.path.join(tmp, "parks_utm.gpkg")
        geometry = numpy.array([shapely_wkb.dumps(p) for _, p in polys], dtype=object)
        pyogrio.raw.write(
            path,
            geometry,
            [numpy.arange(len(polys), dtype=numpy.int64)],
            ["park_id"],
            layer="parks",
            driver="GPKG",
            geometry_type="Polygon",
            crs="EPSG:32617",
        )
        conn = connect(library, path)
        rows = conn.execute(
            "SELECT park_id, ST_SRID(geom), ST_AsText(ambit_to_lonlat(geom)) FROM parks ORDER BY park_id"
        ).fetchall()
        check(len(rows) == len(polys), f"{len(rows)} rows read")
        worst = 0.0
        for (park_id, srid, text), (ring, _) in zip(rows, polys):
            check(srid == 32617, f"srs_id {srid} in the GDAL file")
            coords = list(shapely_wkb.loads(
                conn.execute("SELECT ST_AsBinary(ST_GeomFromText(?))", (text,)).fetchone()[0]
            ).exterior.coords)
            for (lon, lat), (rlon, rlat) in zip(coords, ring):
                worst = max(worst, G.Inverse(rlat, rlon, lat, lon)["s12"])
        check(worst <= TOLERANCE_M, f"GDAL GeoPackage: {worst * 1000} mm")
        print(f"GeoPackage by GDAL (UTM 17N, 50 polygons): max difference {worst * 1000:.6f} mm")


def semantics(library):
    conn = connect(library)

    def error(sql, *args):
        try:
            conn.execute(sql, args).fetchall()
        except apsw.Error as e:
            return str(e)
        raise AssertionError(f"no error: {sql}")

    check(conn.execute("SELECT ambit_to_lonlat(NULL)").fetchone()[0] is None, "NULL in, NULL out")
    check(
        conn.execute("SELECT ambit_to_lonlat(NULL, 'EPSG:32617')").fetchone()[0] is None,
        "NULL in, NULL out (with a source)",
    )
    pt = shapely_wkb.dumps(Point(500000, 0))
    # Already lon/lat: 4326 in, same coordinates out.
    x, y, srid = conn.execute(
        "SELECT ST_X(g), ST_Y(g), ST_SRID(g) FROM (SELECT ambit_to_lonlat(ST_Point(-80.5, 35.25)) g)"
    ).fetchone()
    check((x, y, srid) == (-80.5, 35.25, 4326), f"lon/lat unchanged: {x} {y} {srid}")
    # An integer source without gpkg_spatial_ref_sys is an EPSG code.
    x, y = conn.execute(
        "SELECT ST_X(g), ST_Y(g) FROM (SELECT ambit_to_lonlat(?, 32617) g)", (pt,)
    ).fetchone()
    check(abs(x + 81) < 1e-9 and abs(y) < 1e-9, f"EPSG 32617 origin: {x} {y}")
    e = error("SELECT ambit_to_lonlat(?, 'EPSG:999999')", pt)
    check(e.startswith("ambit_to_lonlat: argument 2 (source)") and "'EPSG:999999'" in e, e)
    e = error("SELECT ambit_to_lonlat(?, '+proj=nosuch')", pt)
    check("ambit_to_lonlat" in e and "+proj=nosuch" in e, e)
    e = error("SELECT ambit_to_lonlat(?, 1.5)", pt)
    check("argument 2 (source)" in e and "real 1.5" in e, e)
    # A blob with an srs_id the database does not define.
    e = error("SELECT ambit_to_lonlat(?)", gpkg_blob(Point(500000, 0), 32617))
    check("srs_id 32617 of the geometry" in e and "gpkg_spatial_ref_sys" in e, e)
    # A vertex outside the projection's domain: Mercator of a latitude
    # beyond 90 degrees (far north) gives no position; named by number.
    e = error(
        "SELECT ambit_to_lonlat(?, 'EPSG:3035')",
        shapely_wkb.dumps(shapely_wkb.loads(shapely_wkb.dumps(Point(0, 0))).union(Point(4e7, 4e7))),
    )
    check("ambit_to_lonlat: argument 1 (geom): vertex 2" in e and "'EPSG:3035'" in e, e)
    e = error("SELECT ambit_to_lonlat('POINT (1 2)', 'EPSG:3857')")
    check("argument 1 (geom)" in e, e)
    print("semantics: NULL, srs_id 4326 out, named errors")


def main():
    library = sys.argv[1]
    accuracy(library)
    gdal_geopackage(library)
    semantics(library)
    check.report()


if __name__ == "__main__":
    main()
