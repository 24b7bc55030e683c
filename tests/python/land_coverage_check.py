"""sql-examples/land-coverage.sql checked against an independent reference:
for each county, its land (the county polygon less its water-only blocks)
and the parks buffered by half a mile, in PROJ's ellipsoidal azimuthal
equidistant projection centred on the county (pyproj 3.7.2, PyPI), with
shapely 2.2 (PyPI; GEOS buffers of 128 segments per quarter circle, union,
intersection, planar area). The script's land percentage and its
whole-county percentage must match the reference to 0.01 percentage
points (1e-4 of the share; the projection's scale error over a county is
about 4e-5 of it and the inscribed buffers' shortfall under 1e-5).

Usage: python3 land_coverage_check.py path/to/libambit.so path/to/result.gpkg
"""

import sys

import numpy as np
import shapely
from pyproj import CRS, Transformer

from checks import Checks, connect
from shapely import wkb

HALF_MILE = 804.672  # 0.5 mi (common practice, no source); NIST SP 811 B.8 mile
TOLERANCE_PCT = 0.01

check = Checks()


def main():
    library, db = sys.argv[1], sys.argv[2]
    conn = connect(library, db, readonly=True)
    rows = lambda sql: conn.execute(sql).fetchall()
    parks = [wkb.loads(b) for (b,) in rows("SELECT ST_AsBinary(geom) FROM parks")]
    results = {
        g: (land, county)
        for g, land, county in rows(
            "SELECT county_geoid, pct_land_within_reach, pct_county_within_reach FROM county_land_coverage"
        )
    }
    counties = rows("SELECT geoid, ST_AsBinary(geom) FROM counties ORDER BY geoid")
    check(len(counties) == len(results) == 6, "six counties in the result")
    for geoid, blob in counties:
        county = wkb.loads(blob)
        water = [wkb.loads(b) for (b,) in rows(
            f"SELECT ST_AsBinary(geom) FROM blocks WHERE water = 1 AND substr(geoid, 1, 5) = '{geoid}'")]
        c = county.centroid
        crs = CRS.from_proj4(f"+proj=aeqd +lat_0={c.y!r} +lon_0={c.x!r} +ellps=WGS84 +units=m")
        to_plane = Transformer.from_crs(CRS.from_epsg(4326), crs, always_xy=True).transform

        def transform(_, g):
            return shapely.transform(g, lambda xy: np.column_stack(to_plane(xy[:, 0], xy[:, 1])))

        plane_county = transform(to_plane, county)
        plane_land = plane_county.difference(shapely.union_all([transform(to_plane, w) for w in water])) \
            if water else plane_county
        # Parks that can reach the county (a generous lon/lat window first).
        minx, miny, maxx, maxy = county.bounds
        near = [p for p in parks if p.intersects(shapely.box(minx - 0.05, miny - 0.05, maxx + 0.05, maxy + 0.05))]
        reach = shapely.union_all([transform(to_plane, p).buffer(HALF_MILE, quad_segs=128) for p in near])
        want_land = 100.0 * plane_land.intersection(reach).area / plane_land.area
        want_county = 100.0 * plane_county.intersection(reach).area / plane_county.area
        got_land, got_county = results[geoid]
        print(f"{geoid}: land {got_land:.5f} % vs reference {want_land:.5f} %, "
              f"county {got_county:.5f} % vs {want_county:.5f} % ({len(water)} water blocks, {len(near)} parks)")
        check(abs(got_land - want_land) <= TOLERANCE_PCT, f"{geoid} land: {got_land} vs {want_land}")
        check(abs(got_county - want_county) <= TOLERANCE_PCT, f"{geoid} county: {got_county} vs {want_county}")
    check.report()


if __name__ == "__main__":
    main()
