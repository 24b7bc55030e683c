"""ambit_share checked against an independent reference: the same share
computed with shapely 2.2 (PyPI; GEOS buffers, unions and intersections) in
PROJ's ellipsoidal azimuthal equidistant projection (pyproj 3.7.2, PyPI,
"+proj=aeqd" on WGS84) centred on the polygon, with buffers of 512
segments per quarter circle (the shortfall of such an inscribed buffer is
under 2e-5 of its reach, so well under the tolerance below for polygons
of a few hundred metres).

    a. block-sized polygons (150-500 m, some with a hole) against random
       layers of points and polygons (some with a hole) with reaches of 0,
       200 m, 0.5 mi and 1 mi at several latitudes and across the
       antimeridian: |ambit - reference| <= 1e-4 of the share
    b. county-sized polygons (about 100 km across) against 150 parks at
       0.5 mi: |ambit - reference| <= 2e-4 (the projection's scale error
       at 50 km from the centre is about 1e-5; see ambit's reference page)
    c. exactly 0 for polygons out of reach, exactly 1 for polygons inside
       one feature's reach and for one covered only by two discs together
    d. NULL for NULL arguments and empty polygons; errors for points,
       lines and unknown layers

The reach thresholds 0.5 mi = 804.672 m and 1 mi = 1609.344 m are common
practice (no source); the mile is exact by NIST SP 811, appendix B.8.
Test data is invented: random shapes from a fixed seed.

Usage: python3 share_check.py path/to/libambit.so
"""

import math
import random
import sys
import time
from decimal import Decimal

import apsw
import shapely
from geographiclib.geodesic import Geodesic
from pyproj import CRS, Transformer
from shapely.geometry import Point, Polygon

from checks import Checks, connect

G = Geodesic.WGS84
HALF_MILE = 804.672
MILE = 1609.344
QUAD_SEGS = 512

check = Checks()


def num(v):
    text = repr(float(v))
    if "e" in text or "E" in text:
        text = format(Decimal(text), "f")
    return text


def place(lon0, lat0, x, y):
    """The point x metres east, y north of the centre along the geodesic of
    that azimuth and length (the azimuthal equidistant meaning of x, y)."""
    s = math.hypot(x, y)
    azi = math.degrees(math.atan2(x, y))
    d = G.Direct(lat0, lon0, azi, s)
    lon = d["lon2"]
    # Keep longitudes continuous around the centre (across 180).
    while lon - lon0 > 180:
        lon -= 360
    while lon - lon0 < -180:
        lon += 360
    return lon, d["lat2"]


def star(rng, cx, cy, radius, n):
    """A random star-shaped ring around (cx, cy), metres, counter-clockwise;
    no two vertices more than 1.8 / n of a turn apart, so every edge stays
    farther than 0.3 radius from the centre."""
    angles = [(i + rng.uniform(0, 0.8)) * 2 * math.pi / n for i in range(n)]
    return [
        (cx + radius * rng.uniform(0.55, 1.0) * math.cos(a),
         cy + radius * rng.uniform(0.55, 1.0) * math.sin(a))
        for a in angles
    ]


def wkt_polygon(lon0, lat0, rings):
    parts = []
    for ring in rings:
        pts = [place(lon0, lat0, x, y) for x, y in ring]
        pts.append(pts[0])
        parts.append("(" + ", ".join(f"{num(a)} {num(b)}" for a, b in pts) + ")")
    return "POLYGON(" + ", ".join(parts) + ")"


def shape_polygon(lon0, lat0, rings, to_plane):
    planar = []
    for ring in rings:
        pts = [place(lon0, lat0, x, y) for x, y in ring]
        xs, ys = to_plane.transform([p[0] for p in pts], [p[1] for p in pts])
        planar.append(list(zip(xs, ys)))
    return Polygon(planar[0], planar[1:])


def random_polygon(rng, cx, cy, radius, hole):
    """A random valid polygon (checked by shapely in metres), some with a
    small clockwise hole around the centre."""
    while True:
        rings = [star(rng, cx, cy, radius, rng.randint(6, 24))]
        if hole:
            rings.append(star(rng, cx, cy, radius * 0.2, 6)[::-1])
        if Polygon(rings[0], rings[1:]).is_valid:
            return rings


def plane_at(lon0, lat0):
    crs = CRS.from_proj4(f"+proj=aeqd +lat_0={lat0!r} +lon_0={lon0!r} +ellps=WGS84 +units=m")
    return Transformer.from_crs(CRS.from_epsg(4326), crs, always_xy=True)


class Case:
    """A layer of features around a centre, in SQL and in the plane."""

    def __init__(self, conn, name, lon0, lat0):
        self.conn, self.name, self.lon0, self.lat0 = conn, name, lon0, lat0
        self.to_plane = plane_at(lon0, lat0)
        self.rows = []
        self.buffers = []

    def add_point(self, x, y, reach):
        lon, lat = place(self.lon0, self.lat0, x, y)
        self.rows.append((len(self.rows) + 1, f"POINT({num(lon)} {num(lat)})", reach))
        px, py = self.to_plane.transform(lon, lat)
        self.buffers.append(Point(px, py).buffer(reach, quad_segs=QUAD_SEGS))

    def add_polygon(self, rings, reach):
        self.rows.append((len(self.rows) + 1, wkt_polygon(self.lon0, self.lat0, rings), reach))
        p = shape_polygon(self.lon0, self.lat0, rings, self.to_plane)
        self.buffers.append(p.buffer(reach, quad_segs=QUAD_SEGS) if reach > 0 else p)

    def build(self):
        c = self.conn
        c.execute("DROP TABLE IF EXISTS temp.features")
        c.execute("CREATE TEMP TABLE features (id INTEGER, wkt TEXT, reach REAL)")
        with c:
            c.executemany("INSERT INTO features VALUES (?, ?, ?)", self.rows)
        c.execute(
            "SELECT ambit_layer(?, ST_GeomFromText(wkt), reach, id) FROM features", (self.name,)
        ).fetchall()
        self.union = shapely.union_all(self.buffers)

    def share(self, rings):
        got = self.conn.execute(
            "SELECT ambit_share(?, ST_GeomFromText(?))",
            (self.name, wkt_polygon(self.lon0, self.lat0, rings)),
        ).fetchone()[0]
        g = shape_polygon(self.lon0, self.lat0, rings, self.to_plane)
        want = g.intersection(self.union).area / g.area
        return got, want


def block_sized(conn, rng):
    centres = [(-131.0, 38.5), (12.0, -40.0), (179.995, 10.0), (-70.0, 65.0), (100.0, 0.0)]
    worst = 0.0
    cases = 0
    for k in range(60):
        lon0, lat0 = centres[k % len(centres)]
        case = Case(conn, f"blocks{k}", lon0, lat0)
        for _ in range(rng.randint(1, 6)):
            case.add_point(rng.uniform(-1500, 1500), rng.uniform(-1500, 1500),
                           rng.choice([200.0, HALF_MILE, MILE]))
        for _ in range(rng.randint(0, 4)):
            reach = rng.choice([0.0, 200.0, HALF_MILE, MILE])
            rings = random_polygon(rng, rng.uniform(-1500, 1500), rng.uniform(-1500, 1500),
                                   rng.uniform(50, 500), rng.random() < 0.3)
            case.add_polygon(rings, reach)
        case.build()
        for _ in range(5):
            rings = random_polygon(rng, rng.uniform(-300, 300), rng.uniform(-300, 300),
                                   rng.uniform(150, 500), rng.random() < 0.3)
            got, want = case.share(rings)
            check(got is not None and 0.0 <= got <= 1.0, f"share in [0, 1]: {got}")
            d = abs(got - want)
            worst = max(worst, d)
            check(d <= 1e-4, f"block case {k} at {lon0},{lat0}: ambit {got} vs reference {want}")
            cases += 1
    print(f"a. block-sized: {cases} polygons, max |ambit - reference| = {worst:.2e}")


def county_sized(conn, rng):
    worst = 0.0
    for k, (lon0, lat0) in enumerate([(-131.0, 38.5), (24.0, 60.0)]):
        case = Case(conn, f"county{k}", lon0, lat0)
        for _ in range(150):
            rings = random_polygon(rng, rng.uniform(-55000, 55000), rng.uniform(-55000, 55000),
                                   rng.uniform(100, 1500), rng.random() < 0.2)
            case.add_polygon(rings, HALF_MILE)
        case.build()
        county = random_polygon(rng, 0.0, 0.0, 55000, False)
        start = time.perf_counter()
        got, want = case.share(county)
        seconds = time.perf_counter() - start
        d = abs(got - want)
        worst = max(worst, d)
        check(d <= 2e-4, f"county case {k}: ambit {got} vs reference {want}")
        print(f"b. county-sized at {lon0},{lat0}: ambit {got:.8f}, reference {want:.8f}, "
              f"|d| = {d:.2e} ({seconds:.2f} s)")


def exact_cases(conn):
    lon0, lat0 = -131.0, 38.5
    case = Case(conn, "exact", lon0, lat0)
    case.add_point(0.0, 0.0, MILE)                       # covers a 1 mi disc at the centre
    case.add_polygon([star(random.Random(5), 20000, 0, 3000, 12)], 0.0)  # a big park, reach 0
    case.add_point(-20000.0, -300.0, HALF_MILE)          # two discs that only together
    case.add_point(-20000.0, 300.0, HALF_MILE)           # cover a thin box between them
    case.build()
    square = lambda cx, cy, h, w=None: [[(cx - (w or h), cy - h), (cx + (w or h), cy - h),
                                         (cx + (w or h), cy + h), (cx - (w or h), cy + h)]]
    got, _ = case.share(square(0, 0, 300))
    check(got == 1.0, f"inside one disc: exactly 1, got {got!r}")
    got, _ = case.share(square(20000, 0, 200))
    check(got == 1.0, f"inside a park: exactly 1, got {got!r}")
    got, _ = case.share(square(-20000, 0, 100, 400))
    check(got == 1.0, f"inside two discs together: exactly 1, got {got!r}")
    got, _ = case.share(square(0, 10000, 300))
    check(got == 0.0, f"out of reach: exactly 0, got {got!r}")
    # A polygon half out: the reference decides the value, near 0.5.
    got, want = case.share(square(MILE, 0, 200))
    check(abs(got - want) <= 1e-4 and 0.3 < got < 0.7, f"half in: {got} vs {want}")
    print("c. exact 0 and 1: passed")

    q = lambda sql: conn.execute(sql).fetchone()[0]
    check(q("SELECT ambit_share('exact', NULL)") is None, "NULL geometry gives NULL")
    check(q("SELECT ambit_share(NULL, ST_GeomFromText('POLYGON((0 0, 1 0, 1 1, 0 0))'))") is None,
          "NULL layer gives NULL")
    check(q("SELECT ambit_share('exact', ST_GeomFromText('POLYGON EMPTY'))") is None,
          "empty polygon gives NULL")
    for sql, words in [
        ("SELECT ambit_share('exact', ST_Point(-131, 38.5))", "got a POINT"),
        ("SELECT ambit_share('exact', ST_GeomFromText('LINESTRING(-131 38.5, -131.1 38.5)'))",
         "got a LINESTRING"),
        ("SELECT ambit_share('nowhere', ST_GeomFromText('POLYGON((0 0, 1 0, 1 1, 0 0))'))",
         "no layer named 'nowhere'"),
    ]:
        try:
            conn.execute(sql).fetchall()
            check(False, f"{sql} should fail")
        except apsw.SQLError as e:
            check("ambit_share" in str(e) and words in str(e), f"{sql}: {e}")
    print("d. NULL, empty and refused inputs: passed")


def main():
    conn = connect(sys.argv[1])
    rng = random.Random(20261201)
    block_sized(conn, rng)
    county_sized(conn, rng)
    exact_cases(conn)
    check.report()


if __name__ == "__main__":
    main()
