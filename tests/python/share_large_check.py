"""ambit_share on polygons from a degree to a continent, checked against an
independent construction measured with Karney's geographiclib (PyPI,
geographiclib 2.x: Geodesic.WGS84.Direct and PolygonArea, Karney 2013):

    a. a layer of one point with reach r, and g a geodesic polygon (four
       corners on two meridians, geodesic edges) that contains the geodesic
       circle of radius r: the share is area(circle) / area(g). The circle's
       area is PolygonArea of N points on it (Direct from the centre), with
       Richardson extrapolation from N and 2N points (the inscribed
       polygon's shortfall falls as 1/N^2). Sizes 1, 5, 20 and 60 degrees,
       and a 170 x 119 degree box.
    b. the same circle clipped by two meridians (g narrower than the
       circle): the reference region is the circle's arcs inside the band
       joined by the meridian segments (meridians are geodesics), measured
       by PolygonArea.
       And a park (reach 0) with long geodesic edges inside a larger box:
       the ratio of their PolygonArea areas.
    c. a ring along the equator (a hemisphere): the hemisphere ambit counts
       as inside (asked through ambit_distance of a point inside) is the
       reference polygon.

Bound: |ambit - reference| <= 1e-5 of g's area (ambit's stated accuracy;
see the ambit_share entry of README.md). Every case is printed with its
error. Test data is invented.

Usage: python3 share_large_check.py path/to/libambit.so
"""

import math
import sys
import time

from geographiclib.geodesic import Geodesic
from geographiclib.polygonarea import PolygonArea

from checks import Checks, connect

G = Geodesic.WGS84
BOUND = 1e-5
check = Checks()


def polygon_area(points):
    """|area| of the geodesic polygon through (lon, lat) points."""
    p = PolygonArea(G, False)
    for lon, lat in points:
        p.AddPoint(lat, lon)
    _, _, area = p.Compute(False, True)
    return abs(area)


def circle_points(lon0, lat0, r, n):
    out = []
    for k in range(n):
        d = G.Direct(lat0, lon0, 360.0 * k / n, r)
        out.append((d["lon2"], d["lat2"]))
    return out


def circle_area(lon0, lat0, r, n=4096):
    a1 = polygon_area(circle_points(lon0, lat0, r, n))
    a2 = polygon_area(circle_points(lon0, lat0, r, 2 * n))
    return (4 * a2 - a1) / 3


def clipped_circle_area(lon0, lat0, r, half_width, n=4096):
    """Area of the geodesic circle inside lon0 - w <= lon <= lon0 + w."""

    def inside(lon):
        return abs(lon - lon0) <= half_width

    def at(azi):
        d = G.Direct(lat0, lon0, azi, r)
        return d["lon2"], d["lat2"]

    def crossing(a0, a1):
        # Bisection on the azimuth for the meridian crossing.
        for _ in range(60):
            m = (a0 + a1) / 2
            if inside(at(m)[0]) == inside(at(a0)[0]):
                a0 = m
            else:
                a1 = m
        lon, lat = at((a0 + a1) / 2)
        side = lon0 + half_width if lon > lon0 else lon0 - half_width
        return side, lat

    def area(n):
        pts = []
        azis = [360.0 * k / n for k in range(n + 1)]
        for a0, a1 in zip(azis, azis[1:]):
            p0 = at(a0)
            if inside(p0[0]):
                pts.append(p0)
            if inside(p0[0]) != inside(at(a1)[0]):
                pts.append(crossing(a0, a1))
        return polygon_area(pts)

    a1, a2 = area(n), area(2 * n)
    return (4 * a2 - a1) / 3


def box_wkt(lon0, lat0, half_lon, half_lat):
    w, e = lon0 - half_lon, lon0 + half_lon
    s, n = lat0 - half_lat, lat0 + half_lat
    pts = [(w, s), (e, s), (e, n), (w, n), (w, s)]
    return pts, "POLYGON((" + ", ".join(f"{x!r} {y!r}" for x, y in pts) + "))"


def one_point_layer(conn, name, lon0, lat0, r):
    conn.execute(f"SELECT ambit_layer('{name}', ST_Point({lon0!r}, {lat0!r}), {r!r}, 1)").fetchall()


def share(conn, name, wkt):
    start = time.perf_counter()
    got = conn.execute("SELECT ambit_share(?, ST_GeomFromText(?))", (name, wkt)).fetchone()[0]
    return got, time.perf_counter() - start


def main():
    conn = connect(sys.argv[1])
    worst = {}

    # a. a circle inside a box, from a degree to a continent.
    cases = [
        ("1 deg", 10.0, 45.0, 0.5, 0.5, 35_000.0),
        ("5 deg", -60.0, 30.0, 2.5, 2.5, 200_000.0),
        ("20 deg", 100.0, -20.0, 10.0, 10.0, 800_000.0),
        ("60 deg", 0.0, 10.0, 30.0, 30.0, 2_500_000.0),
        ("170 x 119 deg", 0.0, 0.0, 85.0, 59.5, 1_000_000.0),
    ]
    for k, (label, lon0, lat0, hl, ha, r) in enumerate(cases):
        name = f"circle{k}"
        one_point_layer(conn, name, lon0, lat0, r)
        pts, wkt = box_wkt(lon0, lat0, hl, ha)
        want = circle_area(lon0, lat0, r) / polygon_area(pts[:-1])
        got, secs = share(conn, name, wkt)
        d = abs(got - want) if got is not None else math.inf
        worst[label] = d
        print(f"a. {label}: ambit {got!r}, reference {want:.9f}, |d| = {d:.2e} ({secs:.2f} s)")
        check(d <= BOUND, f"a. {label}: ambit {got} vs reference {want}")

    # b. a circle clipped by two meridians.
    for k, (label, lon0, lat0, w, ha, r) in enumerate([
        ("clipped, 2 deg", 20.0, 50.0, 0.4, 1.0, 60_000.0),
        ("clipped, 30 deg", -120.0, 20.0, 8.0, 15.0, 1_500_000.0),
    ]):
        name = f"clipped{k}"
        one_point_layer(conn, name, lon0, lat0, r)
        pts, wkt = box_wkt(lon0, lat0, w, ha)
        want = clipped_circle_area(lon0, lat0, r, w) / polygon_area(pts[:-1])
        got, secs = share(conn, name, wkt)
        d = abs(got - want) if got is not None else math.inf
        worst[label] = d
        print(f"b. {label}: ambit {got!r}, reference {want:.9f}, |d| = {d:.2e} ({secs:.2f} s)")
        check(d <= BOUND, f"b. {label}: ambit {got} vs reference {want}")

    # b2. a park with long geodesic edges (a 4-corner box, reach 0) inside
    # a larger box: the share is the ratio of their geodesic areas.
    for k, (label, lon0, lat0, inner, outer) in enumerate([
        ("long-edged park, 2 deg", 30.0, 55.0, 0.7, 1.0),
        ("long-edged park, 24 deg", -40.0, 10.0, 8.0, 12.0),
    ]):
        name = f"park{k}"
        ipts, iwkt = box_wkt(lon0 + 0.1 * inner, lat0, inner, inner * 0.8)
        conn.execute(f"SELECT ambit_layer('{name}', ST_GeomFromText('{iwkt}'), 0, 1)").fetchall()
        pts, wkt = box_wkt(lon0, lat0, outer, outer)
        want = polygon_area(ipts[:-1]) / polygon_area(pts[:-1])
        got, secs = share(conn, name, wkt)
        d = abs(got - want) if got is not None else math.inf
        worst[label] = d
        print(f"b. {label}: ambit {got!r}, reference {want:.9f}, |d| = {d:.2e} ({secs:.2f} s)")
        check(d <= BOUND, f"b. {label}: ambit {got} vs reference {want}")

    # c. a ring along the equator: a hemisphere.
    ring = "POLYGON((0 0, 90 0, 180 0, -90 0, 0 0))"
    q = lambda sql: conn.execute(sql).fetchone()[0]
    south = q(f"SELECT ambit_distance(ST_Point(10, -45), ST_GeomFromText('{ring}'))") == 0
    north = q(f"SELECT ambit_distance(ST_Point(10, 45), ST_GeomFromText('{ring}'))") == 0
    check(south != north, f"the equator ring holds one hemisphere: south {south}, north {north}")
    lat0 = -30.0 if south else 30.0
    one_point_layer(conn, "hemisphere", 40.0, lat0, 2_000_000.0)
    pole = -90.0 if south else 90.0
    hemi = polygon_area([(0, 0), (90, 0), (180, 0), (-90, 0)])
    want = circle_area(40.0, lat0, 2_000_000.0) / hemi
    got, secs = share(conn, "hemisphere", ring)
    d = abs(got - want) if got is not None else math.inf
    worst["equator ring"] = d
    print(f"c. equator ring ({'south' if south else 'north'}ern hemisphere): ambit {got!r}, "
          f"reference {want:.9f}, |d| = {d:.2e} ({secs:.2f} s)")
    check(d <= BOUND, f"c. equator ring: ambit {got} vs reference {want}")

    print("max |ambit - reference| per case: "
          + ", ".join(f"{k} {v:.1e}" for k, v in worst.items()))
    check.report()


if __name__ == "__main__":
    main()
