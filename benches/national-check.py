"""The national benchmark's check (run by benches/national after the
example's stages): sampled blocks of the national GeoPackage against brute
force.

    python3 benches/national-check.py GPKG LIBRARY SAMPLES NEAREST [REMOTE]

The samples: SAMPLES random blocks, REMOTE (default 20) blocks of the
remote islands (the counties entirely south of latitude 27, more than
500 km from every feature), and 10 blocks next to each of the three
biggest parks. For each, block_results (written by the sweep of
sql-examples/exercise-access.sql) must equal brute force: ambit_distance
(the scalar, not the layer or sweep code) from the block to every feature
of the layer 'exercise' (parks with the park reach, facilities with their
reach_m, as the script builds it) that can matter, `reached` = some
feature within its reach, `nearest_m` = the least distance (when NEAREST
is 1), compared exactly, or NULL when the least distance exceeds the
script's nearest_within_m. Each block's line gives the number of exact
distances computed and the seconds taken; a line per kind of block sums
them up.

Which features can matter (branch and bound, with no use of ambit's index
code): every feature and the block get a ball in Earth-centred,
Earth-fixed (ECEF) coordinates on WGS84 that contains the whole geometry,
edges and polygon interiors included. Between a block in ball (c_b, r_b)
and a feature in ball (c_f, r_f) the geodesic distance is at least
L = |c_b - c_f| - r_b - r_f: a straight segment is no longer than any
path on the surface between its ends, and every point of each geometry
lies in its ball. Per block the features are taken in increasing L; a
feature's exact distance is computed when its L is at most the least
distance found so far (with NEAREST 1) or, while no feature is found
within reach, at most its own reach. The least distance only falls and
`reached` only turns true, so a feature passed over never matters: it is
farther than the nearest one, and farther than its reach or some other
feature is within reach. The walk stops when L exceeds both the least
distance found and the largest reach (with NEAREST 0: the largest reach,
or as soon as one feature is within reach).

The ball: centre = the mean of the vertices' ECEF coordinates (the
textbook formula for height 0, X = N cos(lat) cos(lon), Y = N cos(lat)
sin(lon), Z = N (1 - e^2) sin(lat), N = a / sqrt(1 - e^2 sin^2(lat)),
checked against PROJ through pyproj, EPSG:4326 -> EPSG:4978, on a sample
of vertices at start); radius = the largest distance of a vertex from the
centre + half the longest edge's chord times ARC_PER_CHORD + 1 mm for
rounding (ECEF coordinates are about 6.4e6 m and round at about 1e-9 m).

- Edges: an edge is the shortest geodesic between its vertices, so each
  of its points lies within half its arc length s of one of its ends (in
  space too: the chord is no longer than the arc). A geodesic is a space
  curve whose curvature is its normal curvature, at most 1 / M_min on
  WGS84, M_min = b^2 / a = 6,335,439 m (the meridional radius of
  curvature at the equator; from memory, and a(1 - e^2) gives the same).
  By the arc-chord comparison for curves of curvature at most k (Schur's
  comparison theorem, for arcs shorter than pi / k = 19,900 km, which a
  shortest edge whose ends are 100 km apart is by far),
  c >= (2 / k) sin(k s / 2), so s <= 2 M_min asin(c / (2 M_min)): for
  chords c <= MAX_EDGE = 100 km, s / c <= 1.0000104. ARC_PER_CHORD = 1.001
  leaves a wide margin; the script asserts that no edge of a feature or of
  a sampled block has a chord over MAX_EDGE and checks s / c on the
  longest edge with geographiclib (Karney's geodesics).
- Polygon interiors: the balls are far smaller than the Earth (the script
  asserts radii under MAX_RADIUS = 1,000 km, against radii of curvature of
  at least 6,335 km), so the part of the surface inside a ball is a disc
  (there the surface is the graph of a function over the ball's tangent
  plane), and it holds every ring of the geometry. ambit's polygon is what
  the even-odd rule makes of its rings (README, "Valid geometries"): a
  point is inside when a path from it to far away crosses the rings an odd
  number of times. A point of the surface outside the disc reaches far
  away through the rest of the surface, which is connected and misses
  every ring, crossing none: it is outside. So the polygon lies in the
  disc, hence in the ball.

A feature that is an empty geometry (ambit_distance NULL) is left out and
counted on the first line.
"""

import itertools
import json
import math
import random
import sys
import time

import apsw
import numpy as np
import pyproj
import shapely
from geographiclib.geodesic import Geodesic

A = 6378137.0
F = 1 / 298.257223563
E2 = F * (2 - F)
M_MIN = A * (1 - E2)  # b^2 / a
MAX_EDGE = 100_000.0
ARC_PER_CHORD = 1.001
MAX_RADIUS = 1_000_000.0
ROUNDING = 0.001
# Exact distances are asked for in batches in increasing lower bound, of
# 1, 2, 4, ... up to BATCH features (the first ones found usually settle
# the bound); a feature of more than HEAVY vertices is asked for alone, so
# that a better distance found before it can still spare it.
BATCH = 64
HEAVY = 20_000

assert 2 * M_MIN * math.asin(MAX_EDGE / (2 * M_MIN)) / MAX_EDGE < 1.0000105 < ARC_PER_CHORD


def wkb(blob):
    """The WKB of a GeoPackage geometry blob (OGC 12-128: 8-byte header,
    then an envelope whose size the flags give)."""
    flags = blob[3]
    envelope = {0: 0, 1: 32, 2: 48, 3: 48, 4: 64}[(flags >> 1) & 7]
    return bytes(blob[8 + envelope:])


def bounds(blobs):
    geoms = shapely.from_wkb([wkb(b) for b in blobs])
    return shapely.bounds(geoms), geoms


def ecef(xy):
    """ECEF coordinates (m, WGS84, height 0) of an (n, 2) array of
    longitudes and latitudes in degrees."""
    lon, lat = np.radians(xy[:, 0]), np.radians(xy[:, 1])
    sin_lat, cos_lat = np.sin(lat), np.cos(lat)
    n = A / np.sqrt(1 - E2 * sin_lat * sin_lat)
    return np.column_stack((n * cos_lat * np.cos(lon), n * cos_lat * np.sin(lon), n * (1 - E2) * sin_lat))


def check_ecef(xy):
    """The formula against PROJ on the given vertices; the largest
    difference in metres."""
    to_ecef = pyproj.Transformer.from_crs("EPSG:4326", "EPSG:4978", always_xy=True)
    x, y, z = to_ecef.transform(xy[:, 0], xy[:, 1], np.zeros(len(xy)))
    return float(np.abs(ecef(xy) - np.column_stack((x, y, z))).max())


def balls(geoms):
    """Centres (k, 3), radii (k,), vertex counts (k,) and the longest
    edge (its chord in m and its ends in degrees) of k non-empty
    geometries (points, lines, polygons and their collections)."""
    k = len(geoms)
    xy, owner = shapely.get_coordinates(geoms, return_index=True)
    xyz = ecef(xy)
    counts = np.bincount(owner, minlength=k)
    assert counts.min() > 0, "an empty geometry"
    centres = np.column_stack([np.bincount(owner, weights=xyz[:, j], minlength=k) for j in range(3)])
    centres /= counts[:, None]
    far = np.zeros(k)
    np.maximum.at(far, owner, np.linalg.norm(xyz - centres[owner], axis=1))
    # Edges: consecutive vertices of one ring or line.
    parts, part_owner = shapely.get_parts(geoms, return_index=True)
    kind = shapely.get_type_id(parts)
    polygons = kind == 3
    rings, ring_part = shapely.get_rings(parts[polygons], return_index=True)
    lines = (kind == 1) | (kind == 2)
    paths = np.concatenate((rings, parts[lines]))
    path_owner = np.concatenate((part_owner[polygons][ring_part], part_owner[lines]))
    longest = np.zeros(k)
    worst = (0.0, None, None)
    if len(paths):
        pxy, path = shapely.get_coordinates(paths, return_index=True)
        pxyz = ecef(pxy)
        same = path[1:] == path[:-1]
        chord = np.linalg.norm(pxyz[1:] - pxyz[:-1], axis=1)[same]
        np.maximum.at(longest, path_owner[path[:-1][same]], chord)
        if len(chord):
            i = int(np.argmax(chord))
            at = np.nonzero(same)[0][i]
            worst = (float(chord[i]), pxy[at], pxy[at + 1])
    radii = far + 0.5 * ARC_PER_CHORD * longest + ROUNDING
    return centres, radii, counts, worst


def check_edge(worst, what):
    """The longest edge under MAX_EDGE, and its arc per chord within
    ARC_PER_CHORD (geographiclib)."""
    chord, p, q = worst
    assert chord <= MAX_EDGE, f"{what}: an edge of {chord:.0f} m chord, over {MAX_EDGE:.0f} m"
    if p is not None:
        s = Geodesic.WGS84.Inverse(p[1], p[0], q[1], q[0])["s12"]
        assert s <= ARC_PER_CHORD * chord, f"{what}: arc {s} m over chord {chord} m"


class Layer:
    """The layer's features: ids (parks: fid; facilities: 1000000 + fid,
    as the script numbers them), reaches, balls, vertex counts."""

    def __init__(self, conn):
        park_reach = conn.execute("SELECT park_reach_m FROM build_parameters").fetchone()[0]
        ids, reach, centres, radii, counts = [], [], [], [], []
        self.empty = 0
        self.worst = (0.0, None, None)

        def add(rows, base):
            geoms = shapely.from_wkb([wkb(r[2]) for r in rows])
            keep = ~shapely.is_empty(geoms)
            self.empty += int((~keep).sum())
            rows = [r for r, k in zip(rows, keep) if k]
            c, r, n, worst = balls(geoms[keep])
            ids.append(np.array([base + row[0] for row in rows], dtype=np.int64))
            reach.append(np.array([row[1] for row in rows], dtype=float))
            centres.append(c)
            radii.append(r)
            counts.append(n)
            if worst[0] > self.worst[0]:
                self.worst = worst
            if self.sample is None:
                self.sample = shapely.get_coordinates(geoms[keep])[:10_000]

        self.sample = None
        for base, sql in ((0, "SELECT fid, ?, geom FROM parks WHERE geom IS NOT NULL"),
                          (1_000_000, "SELECT fid, reach_m, geom FROM facilities WHERE geom IS NOT NULL")):
            cursor = conn.execute(sql, (park_reach,)) if base == 0 else conn.execute(sql)
            while rows := list(itertools.islice(cursor, 20_000)):
                add(rows, base)
        self.ids = np.concatenate(ids)
        self.reach = np.concatenate(reach)
        self.centres = np.concatenate(centres)
        self.radii = np.concatenate(radii)
        self.counts = np.concatenate(counts)
        assert np.isfinite(self.reach).all(), "a feature without a reach"
        self.max_reach = float(self.reach.max())
        check_edge(self.worst, "a feature")
        assert self.radii.max() < MAX_RADIUS, f"a feature's ball of radius {self.radii.max():.0f} m"


def brute_force(conn, layer, block, nearest):
    """(reached, least distance or None, exact distances computed) of a
    block (its GeoPackage blob) against the layer."""
    geom = shapely.from_wkb(wkb(block))
    centre, radius, _, worst = balls(np.array([geom]))
    check_edge(worst, "a block")
    assert radius[0] < MAX_RADIUS
    low = np.linalg.norm(layer.centres - centre[0], axis=1) - layer.radii - radius[0]
    order = np.argsort(low, kind="stable")
    low, reach, counts = low[order], layer.reach[order], layer.counts[order]
    done = {}  # feature index -> distance
    best = math.inf
    reached = False
    k = 0  # the features before k in `order` are computed or cannot matter
    size = 1
    while k < len(order):
        limit = max(best, layer.max_reach) if nearest else (-math.inf if reached else layer.max_reach)
        end = min(int(np.searchsorted(low, limit, side="right")), k + 4096)
        if end <= k:
            break
        # Those that can still matter: within the least distance found, or
        # within their own reach while none is reached. (A feature passed
        # over stays so: the least distance only falls, reached only turns
        # true.)
        need = ~reached & (low[k:end] <= reach[k:end])
        if nearest:
            need |= low[k:end] <= best
        take = k + np.nonzero(need)[0][:size]
        if not len(take):
            k = end
            continue
        heavy = np.nonzero(counts[take] > HEAVY)[0]
        if len(heavy):
            take = take[:max(int(heavy[0]), 1)]
        k = int(take[-1]) + 1
        size = min(2 * size, BATCH)
        batch = order[take]
        ids = layer.ids[batch]
        parks = [int(i) for i in ids if i < 1_000_000]
        facilities = [int(i) - 1_000_000 for i in ids if i >= 1_000_000]
        index = {int(i): int(j) for i, j in zip(ids, batch)}
        for base, table, chosen in ((0, "parks", parks), (1_000_000, "facilities", facilities)):
            if not chosen:
                continue
            for fid, d in conn.execute(
                    f"SELECT fid, ambit_distance(?, geom) FROM {table} "
                    "WHERE fid IN (SELECT value FROM json_each(?))", (block, json.dumps(chosen))):
                j = index[base + fid]
                done[j] = d
                best = min(best, d)
                reached |= bool(d <= layer.reach[j])
        assert all(int(j) in done for j in batch), "a feature's distance is missing"
    least = None if best == math.inf else best
    return int(reached), least, len(done)


def main():
    gpkg, library, samples, nearest = sys.argv[1], sys.argv[2], int(sys.argv[3]), sys.argv[4] == "1"
    remote_samples = int(sys.argv[5]) if len(sys.argv) > 5 else 20
    conn = apsw.Connection(gpkg, flags=apsw.SQLITE_OPEN_READONLY)
    conn.enable_load_extension(True)
    conn.load_extension(library)
    started = time.time()

    layer = Layer(conn)
    print(f"check: {len(layer.ids)} features of the layer read and bounded in {time.time() - started:.1f} s "
          f"(largest ball {layer.radii.max():.0f} m, longest edge {layer.worst[0]:.0f} m, "
          f"{layer.empty} empty left out; ECEF formula against PROJ: {check_ecef(layer.sample):.1e} m)",
          flush=True)

    # Random blocks.
    top = conn.execute("SELECT max(fid) FROM blocks").fetchone()[0]
    rng = random.Random(20261202)
    chosen = [("random", f) for f in rng.sample(range(1, top + 1), min(samples, top))]

    # Remote blocks: counties wholly south of latitude 27.
    counties = conn.execute("SELECT geoid, geom FROM counties").fetchall()
    cb, _ = bounds([c[1] for c in counties])
    remote = [c[0] for c, b in zip(counties, cb) if b[3] < 27.0]
    remote_fids = []
    for geoid in remote:
        remote_fids += [r[0] for r in conn.execute(
            "SELECT fid FROM blocks WHERE geoid >= ? AND geoid < ?", (geoid, geoid + "~"))]
    print(f"check: {len(remote_fids)} blocks in {len(remote)} remote counties", flush=True)
    chosen += [("remote", f) for f in rng.sample(remote_fids, min(remote_samples, len(remote_fids)))]

    # Blocks next to the three biggest parks (by blob size), found among
    # the blocks of the park's state (its park_id starts PKss-).
    # (ids first: a sort that carries the blobs reads them over and over)
    big = conn.execute("SELECT fid FROM parks ORDER BY length(geom) DESC LIMIT 3").fetchall()
    for (park_fid,) in big:
        park_id, blob = conn.execute(
            "SELECT park_id, geom FROM parks WHERE fid = ?", (park_fid,)).fetchone()
        park = shapely.from_wkb(wkb(blob))
        state = park_id[2:4]
        rows = conn.execute(
            "SELECT fid, geom FROM blocks WHERE geoid >= ? AND geoid < ?", (state, state + "~")).fetchall()
        _, geoms = bounds([r[1] for r in rows])
        # Blocks within 0.01 degree of 200 of the park's vertices (an exact
        # polygon-to-polygon test against 262,000 vertices per block is
        # too slow in shapely).
        coords = shapely.get_coordinates(park)
        picks = coords[[rng.randrange(len(coords)) for _ in range(200)]]
        tree = shapely.STRtree(geoms)
        hits = tree.query(shapely.points(picks), predicate="dwithin", distance=0.01)
        near = sorted({rows[i][0] for i in hits[1]})
        print(f"check: park {park_id} ({shapely.get_num_coordinates(park)} vertices): "
              f"{len(near)} blocks within 0.01 degree of its vertices", flush=True)
        chosen += [("big park", f) for f in rng.sample(near, min(10, len(near)))]

    # The script stores nearest_m up to its parameter nearest_within_m
    # (NULL beyond); without that parameter, uncapped.
    columns = [r[1] for r in conn.execute("PRAGMA table_info(build_parameters)")]
    cap = (conn.execute("SELECT nearest_within_m FROM build_parameters").fetchone()[0]
           if "nearest_within_m" in columns else None)
    print(f"check: nearest_m stored up to {cap} m" if cap else "check: nearest_m uncapped")
    failures = 0
    kinds = {}  # kind -> [blocks, seconds, slowest, exact distances]
    for n, (kind, fid) in enumerate(chosen, 1):
        block_started = time.time()
        block, access, nearest_m = conn.execute(
            "SELECT b.geom, r.access, r.nearest_m FROM blocks b JOIN block_results r ON r.fid = b.fid "
            "WHERE b.fid = ?", (fid,)).fetchone()
        reached, least, computed = brute_force(conn, layer, block, nearest)
        expected = least if cap is None or (least is not None and least <= cap) else None
        ok = reached == access and (not nearest or expected == nearest_m)
        failures += not ok
        seconds = time.time() - block_started
        k = kinds.setdefault(kind, [0, 0.0, 0.0, 0])
        k[0] += 1
        k[1] += seconds
        k[2] = max(k[2], seconds)
        k[3] += computed
        if not ok or n % 25 == 0 or kind != "random":
            print(f"check: {kind} block {fid}: sweep {access} {nearest_m}, brute force {reached} "
                  f"{least if nearest else ''} ({computed} features, {seconds:.2f} s) {'ok' if ok else 'DIFFERS'}",
                  flush=True)
    for kind, (blocks, seconds, slowest, computed) in kinds.items():
        print(f"check: {kind}: {blocks} blocks in {seconds:.1f} s ({seconds / blocks:.2f} s per block, "
              f"slowest {slowest:.2f} s; {computed / blocks:.1f} exact distances per block)")
    print(f"check: {len(chosen)} blocks, {failures} differ from brute force "
          f"({time.time() - started:.0f} s)")
    sys.exit(1 if failures else 0)


if __name__ == "__main__":
    main()
