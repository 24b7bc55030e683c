"""ambit_read checked against independent writers and an independent reader.

Writers (all from PyPI, pinned in requirements.txt):
    pyshp 3.1.6     a pure-Python shapefile writer
    pyogrio 0.13.0  GDAL's ESRI Shapefile, GeoJSON, GeoJSONSeq and CSV
                    drivers (GDAL bundled in the wheel)
Real open shapefiles: the examples carried by libpysal 4.14.1 (county sets in
longitude/latitude with a .prj, in UTM zone 17N, in state plane feet, in a
Japanese plane zone, and sets without any .prj).

Reference reading: pyogrio (GDAL) reads each file; its geometries, converted
to longitude/latitude with pyproj (PROJ) from the file's own system to that
system's geographic system when the file is projected, and its attributes
must equal what ambit_read returns:
    a. geometry type equal; every coordinate equal (exactly for files in
       longitude/latitude, within 1e-8 degree, about 1 mm, for projected
       files: the accuracy h-reproject states against PROJ);
    b. attributes: the same names in the same order; integers equal,
       reals equal, text equal (leading zeros kept), dates as ISO text;
    c. a zip of a shapefile reads as the shapefile itself, and a pattern
       reads several files in name order;
    d. GeoJSON FeatureCollection and newline-delimited GeoJSON, and CSV with
       longitude/latitude columns, equal to GDAL's GeoJSON, GeoJSONSeq and
       CSV drivers (GDAL gives '' for an empty CSV field, ambit NULL).

Usage: python3 read_check.py path/to/libambit.so
Prints how many checks passed; exits non-zero on the first failure.
"""

import json
import math
import os
import sys
import tempfile
import zipfile

import apsw
import libpysal
import numpy as np
import pyogrio
import shapefile  # pyshp
import shapely
from pyproj import CRS, Transformer

from checks import Checks, connect

check = Checks()
WORST = {}  # file: largest coordinate difference from PROJ, degrees


def ambit(conn, path, options=None):
    return list(
        conn.execute(
            "SELECT file, row, ST_AsBinary(geom), attributes, problem FROM ambit_read(?, ?)",
            (path, options),
        )
    )


def same_value(a, r, what):
    """An attribute of ambit (JSON-decoded) against pyogrio's value."""
    if isinstance(r, float) and math.isnan(r):
        r = None
    if isinstance(r, np.generic):
        r = r.item()
    if r is None or r == "":
        check(a is None or a == "" or a == r, f"{what}: ambit {a!r}, GDAL {r!r}")
        return
    if isinstance(r, np.datetime64) or type(r).__name__ in ("date", "datetime"):
        check(a == str(r)[:10], f"{what}: ambit {a!r}, GDAL {r!r}")
        return
    if isinstance(r, bool):
        check(a == r or a == int(r), f"{what}: ambit {a!r}, GDAL {r!r}")
        return
    if isinstance(r, (int, float)) and not isinstance(r, bool):
        check(isinstance(a, (int, float)) and a == r, f"{what}: ambit {a!r}, GDAL {r!r}")
        if isinstance(r, int):
            check(isinstance(a, int), f"{what}: ambit {a!r} should be an integer")
        return
    check(a == r, f"{what}: ambit {a!r}, GDAL {r!r}")


def compare(conn, path, options=None, reference=None, tolerance=None):
    """ambit_read(path) against pyogrio's reading of `reference` (or path)."""
    meta, _, geoms, fields = pyogrio.raw.read(reference or path, **(options or {}).get("gdal", {}))
    rows = ambit(conn, path, (options or {}).get("ambit"))
    name = os.path.basename(path)
    check(len(rows) == len(geoms), f"{name}: {len(rows)} rows, GDAL {len(geoms)}")
    to_lonlat = None
    crs = (options or {}).get("crs") or meta["crs"]
    crs = CRS.from_user_input(crs) if crs else None
    if crs is not None and crs.is_projected:
        to_lonlat = Transformer.from_crs(crs, crs.geodetic_crs, always_xy=True)
    for i, (file, row, wkb, attributes, problem) in enumerate(rows):
        where = f"{name} row {row}"
        check(row == i + 1, f"{where}: rows numbered from 1 in order")
        if geoms[i] is None:
            check(wkb is None and problem is not None, f"{where}: GDAL reads no geometry")
            continue
        check(problem is None, f"{where}: ambit reports {problem}")
        got = shapely.from_wkb(wkb)
        want = shapely.from_wkb(geoms[i])
        if to_lonlat is not None:
            want = shapely.transform(want, lambda xy: np.column_stack(to_lonlat.transform(xy[:, 0], xy[:, 1])))
        check(got.geom_type == want.geom_type, f"{where}: {got.geom_type} vs GDAL {want.geom_type}")
        a = shapely.get_coordinates(got)
        b = shapely.get_coordinates(want)
        check(a.shape == b.shape, f"{where}: {len(a)} vertices vs GDAL {len(b)}")
        a = a[np.lexsort((a[:, 1], a[:, 0]))]
        b = b[np.lexsort((b[:, 1], b[:, 0]))]
        if tolerance is None and to_lonlat is None:
            check(np.array_equal(a, b), f"{where}: coordinates differ from GDAL's")
            check(got.equals(want), f"{where}: not the same figure as GDAL's")
        else:
            worst = float(np.max(np.abs(a - b))) if len(a) else 0.0
            check(worst <= (tolerance or 1e-8), f"{where}: {worst} degrees from PROJ")
            WORST[name] = max(WORST.get(name, 0.0), worst)
        attrs = json.loads(attributes)
        check(list(attrs) == list(meta["fields"]), f"{where}: fields {list(attrs)} vs {list(meta['fields'])}")
        for k, field in enumerate(meta["fields"]):
            same_value(attrs[field], fields[k][i], f"{where} field {field}")
    return rows


WGS84_PRJ = CRS.from_epsg(4326).to_wkt("WKT1_ESRI")

# Invented shapes around an invented place (no real features).
SHELL = [(-120.0, 38.0), (-120.0, 38.1), (-119.9, 38.1), (-119.9, 38.0), (-120.0, 38.0)]  # clockwise
HOLE = [(-119.97, 38.03), (-119.93, 38.03), (-119.93, 38.07), (-119.97, 38.07), (-119.97, 38.03)]  # counterclockwise
SECOND = [(-119.8, 38.0), (-119.8, 38.05), (-119.75, 38.05), (-119.75, 38.0), (-119.8, 38.0)]
LINE = [(-120.0, 38.2), (-119.95, 38.25), (-119.9, 38.22)]


def pyshp_files(folder):
    """Shapefiles written by pyshp: polygons with holes and several parts,
    lines, points and multipoints, every dBASE field type ambit reads, a
    null shape, UTF-8 and Windows-1252 text."""
    paths = {}
    p = os.path.join(folder, "blocks")
    w = shapefile.Writer(p, shapeType=shapefile.POLYGON, encoding="utf-8")
    w.field("GEOID", "C", size=15)
    w.field("NAME", "C", size=20)
    w.field("POP", "N", size=9, decimal=0)
    w.field("LAND_M2", "N", size=14, decimal=2)
    w.field("SHARE", "F", size=12, decimal=6)
    w.field("SURVEYED", "D")
    w.field("URBAN", "L")
    w.poly([SHELL, HOLE])
    w.record("010010201001000", "Ñandú Flats", 1234, 98765.25, 0.125, "20200401", True)
    w.poly([SHELL, SECOND])
    w.record("010010201001001", "  padded", 0, 0.5, 1.5e-3, "19991231", False)
    w.null()
    w.record("010010201001002", "no shape", None, None, None, None, None)
    w.close()
    open(p + ".prj", "w").write(WGS84_PRJ)
    open(p + ".cpg", "w").write("UTF-8")
    paths["blocks"] = p + ".shp"

    p = os.path.join(folder, "trails_utm")
    utm = Transformer.from_crs(4326, 32617, always_xy=True)
    to_utm = lambda pts: [utm.transform(x + 40.0, y) for x, y in pts]  # noqa: E731 (near 80 W)
    w = shapefile.Writer(p, shapeType=shapefile.POLYLINE)
    w.field("ID", "N", size=5)
    w.line([to_utm(LINE)])
    w.record(1)
    w.line([to_utm(LINE), to_utm([(x, y + 0.1) for x, y in LINE])])
    w.record(2)
    w.close()
    open(p + ".prj", "w").write(CRS.from_epsg(32617).to_wkt("WKT1_ESRI"))
    paths["trails_utm"] = p + ".shp"

    p = os.path.join(folder, "sites")
    w = shapefile.Writer(p, shapeType=shapefile.MULTIPOINT)
    w.field("KIND", "C", size=10)
    w.multipoint([(-120.0, 38.0), (-119.5, 38.5)])
    w.record("pair")
    w.close()
    paths["sites"] = p + ".shp"

    p = os.path.join(folder, "legacy")
    w = shapefile.Writer(p, shapeType=shapefile.POINT, encoding="cp1252")
    w.field("NAME", "C", size=12)
    w.point(-120.0, 38.0)
    w.record("Café Größe")
    w.close()
    open(p + ".cpg", "w").write("1252")
    paths["legacy"] = p + ".shp"
    return paths


def gdal_files(folder):
    """Shapefiles written by GDAL (through pyogrio) in longitude/latitude
    and in projected systems: Albers equal-area (5070), state plane in US
    feet (2229), Web Mercator (3857), UTM 18N (26918)."""
    paths = {}
    polys = [shapely.Polygon(SHELL, [HOLE]), shapely.MultiPolygon([shapely.Polygon(SHELL), shapely.Polygon(SECOND)])]
    for epsg in (4326, 5070, 2229, 3857, 26918):
        t = Transformer.from_crs(4326, epsg, always_xy=True)
        dx = {26918: 45.0, 2229: 1.5}.get(epsg, 0.0)  # inside each zone's area of use
        geoms = [
            shapely.transform(g, lambda xy: np.column_stack(t.transform(xy[:, 0] + dx, xy[:, 1] - (4.0 if epsg == 2229 else 0.0))))
            for g in polys
        ]
        p = os.path.join(folder, f"gdal_{epsg}.shp")
        pyogrio.raw.write(
            p,
            geometry=np.array([shapely.to_wkb(g) for g in geoms], dtype=object),
            field_data=[np.array(["06001400100", "06001400200"], dtype=object), np.array([10, 20], dtype=np.int64), np.array([0.25, 2.5])],
            fields=["GEOID", "POP", "SHARE"],
            geometry_type="MultiPolygon",
            crs=f"EPSG:{epsg}",
            driver="ESRI Shapefile",
        )
        paths[epsg] = p
    return paths


def main(library):
    conn = connect(library)
    with tempfile.TemporaryDirectory() as folder:
        written = pyshp_files(folder)
        # The null shape is a bad row: an error by default, kept on request.
        try:
            ambit(conn, written["blocks"])
            check(False, "a null shape must be an error by default")
        except apsw.SQLError as e:
            check("blocks.shp, row 3: null shape" in str(e), str(e))
        rows = compare(conn, written["blocks"], {"ambit": '{"bad_rows": "keep"}'})
        check(json.loads(rows[0][3])["GEOID"] == "010010201001000", "leading zeros kept")
        for key in ("trails_utm", "sites", "legacy"):
            compare(conn, written[key])
        check(json.loads(ambit(conn, written["legacy"])[0][3])["NAME"] == "Café Größe", "Windows-1252 text")

        for epsg, path in gdal_files(folder).items():
            compare(conn, path)

        # c. a zip as downloaded, and a pattern over several files.
        z = os.path.join(folder, "blocks.zip")
        with zipfile.ZipFile(z, "w", zipfile.ZIP_DEFLATED) as archive:
            for ext in ("shp", "shx", "dbf", "prj", "cpg"):
                archive.write(os.path.join(folder, f"blocks.{ext}"), f"blocks.{ext}")
        plain = ambit(conn, written["blocks"], '{"bad_rows": "keep"}')
        zipped = ambit(conn, z, '{"bad_rows": "keep"}')
        check([r[1:] for r in zipped] == [r[1:] for r in plain], "zip reads as the plain shapefile")
        check(zipped[0][0] == z + "/blocks.shp", f"zip member named {zipped[0][0]}")
        many = ambit(conn, os.path.join(folder, "gdal_*.shp"))
        files = [os.path.basename(r[0]) for r in many]
        check(files == sorted(files) and len(set(files)) == 5 and len(many) == 10, f"pattern read {files}")

        # d. GeoJSON, newline-delimited GeoJSON and CSV against GDAL's drivers.
        features = [
            {"type": "Feature", "properties": {"geoid": "060014001001000", "pop": 12, "share": 0.5}, "geometry": shapely.geometry.mapping(shapely.Polygon(SHELL, [HOLE]))},
            {"type": "Feature", "properties": {"geoid": "060014001001001", "pop": 7, "share": 0.25}, "geometry": {"type": "LineString", "coordinates": LINE}},
        ]
        gj = os.path.join(folder, "parks.geojson")
        json.dump({"type": "FeatureCollection", "features": features}, open(gj, "w"))
        compare(conn, gj)
        nd = os.path.join(folder, "parks.geojsonl")
        open(nd, "w").write("".join(json.dumps(f) + "\n" for f in features))
        compare(conn, nd)
        csv = os.path.join(folder, "clinics.csv")
        open(csv, "w").write("id,name,lat,lon\n01,North,38.5,-120.25\n02,,38.125,-120.0625\n")
        compare(conn, csv, {"gdal": {"X_POSSIBLE_NAMES": "lon", "Y_POSSIBLE_NAMES": "lat", "KEEP_GEOM_COLUMNS": "NO"}})
        # A CSV in UTM 17N metres, its system given with the option srs,
        # and one with a WKT column in Albers (5070).
        utm = os.path.join(folder, "depots.csv")
        open(utm, "w").write("code,easting,northing\nA1,500000,4200000\nA2,612345.5,4099876.25\n")
        compare(
            conn,
            utm,
            {
                "ambit": '{"srs": "EPSG:32617", "lon": "easting", "lat": "northing"}',
                "gdal": {"X_POSSIBLE_NAMES": "easting", "Y_POSSIBLE_NAMES": "northing", "KEEP_GEOM_COLUMNS": "NO"},
                "crs": "EPSG:32617",
            },
        )
        albers = os.path.join(folder, "zones.csv")
        open(albers, "w").write('zone,wkt\nZ1,"POLYGON ((-2000000 1900000, -2000000 1910000, -1990000 1910000, -1990000 1900000, -2000000 1900000))"\n')
        compare(
            conn,
            albers,
            {"ambit": '{"srs": "EPSG:5070"}', "gdal": {"GEOM_POSSIBLE_NAMES": "wkt", "KEEP_GEOM_COLUMNS": "NO"}, "crs": "EPSG:5070"},
        )

    # Real open shapefiles carried by libpysal.
    examples = os.path.join(os.path.dirname(libpysal.__file__), "examples")
    real = [
        "virginia/virginia.shp",  # counties, longitude/latitude, .prj
        "virginia/vautm17n.shp",  # the same counties in UTM 17N, .prj
        "virginia/vautm17n_points.shp",
        "geodanet/streets.shp",  # state plane, US feet, .prj
        "geodanet/schools.shp",
        "snow_maps/SohoPeople.shp",  # Web Mercator, .prj
        "tokyo/tokyomet262.shp",  # Japan plane zone 6 on the Tokyo datum
        "Polygon_Holes/Polygon_Holes.shp",
        "Line/Line.shp",
        "Point/Point.shp",
        "us_income/us48.shp",  # no .prj: longitude/latitude as read
        "sids2/sids2.shp",
    ]
    for rel in real:
        compare(conn, os.path.join(examples, rel))
    for name, worst in WORST.items():
        print(f"{name}: largest difference from PROJ {worst:.1e} degrees")
    check.report()


if __name__ == "__main__":
    main(sys.argv[1])
