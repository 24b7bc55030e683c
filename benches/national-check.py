"""The national benchmark's check (run by benches/national after the
example's stages): sampled blocks of the national GeoPackage against brute
force.

    python3 benches/national-check.py GPKG LIBRARY SAMPLES NEAREST [REMOTE]

The samples: SAMPLES random blocks, REMOTE (default 20) blocks of the remote islands (the
counties entirely south of latitude 27, more than 500 km from every
feature), and 10 blocks next to each of the three biggest parks. For each,
block_results (written by the sweep of sql-examples/exercise-access.sql)
must equal brute force: ambit_distance from the block to every feature of
the layer 'exercise' (parks with the park reach, facilities with their
reach_m, as the script builds it) that can matter, `reached` = some feature
within its reach, `nearest_m` = the least distance (when NEAREST is 1),
compared exactly, or NULL when the least distance exceeds the script's
nearest_within_m.

Which features can matter: a feature whose latitudes all lie more than D
degrees from the block's is more than D * 110574 m away, the length of one
degree of latitude where it is shortest (at the equator: the meridional
radius of curvature a(1 - e^2) = 6,335,439 m on WGS84, from memory), since
any path between two parallels is at least the meridian arc between them.
Likewise, at latitudes within 60 degrees (all of the country), a
feature whose longitudes all lie more than D degrees from the block's is
more than D * 50,000 m away: a degree of the parallel at 60 degrees is
55,660 m (a cos 60 degrees * pi / 180 on WGS84) and the shortest path between
two points at that latitude is shorter than the parallel only by a factor of
at most 0.99 for the windows used here (up to 1,000 km; from memory, with
margin). Beyond 1,000 km no longitude window is used.
The window starts at 5,000 m (more than the largest reach, 3 miles) and
grows fourfold until the least distance found lies within it.
"""

import random
import sys
import time

import apsw
import shapely

METRES_PER_DEGREE_MIN = 110574.0


def wkb(blob):
    """The WKB of a GeoPackage geometry blob (OGC 12-128: 8-byte header,
    then an envelope whose size the flags give)."""
    flags = blob[3]
    envelope = {0: 0, 1: 32, 2: 48, 3: 48, 4: 64}[(flags >> 1) & 7]
    return bytes(blob[8 + envelope:])


def bounds(blobs):
    geoms = shapely.from_wkb([wkb(b) for b in blobs])
    return shapely.bounds(geoms), geoms


def main():
    gpkg, library, samples, nearest = sys.argv[1], sys.argv[2], int(sys.argv[3]), sys.argv[4] == "1"
    remote_samples = int(sys.argv[5]) if len(sys.argv) > 5 else 20
    conn = apsw.Connection(gpkg, flags=apsw.SQLITE_OPEN_READONLY)
    conn.enable_load_extension(True)
    conn.load_extension(library)
    started = time.time()

    park_reach = conn.execute("SELECT park_reach_m FROM build_parameters").fetchone()[0]
    features = []  # (id, reach, blob)
    for fid, blob in conn.execute("SELECT fid, geom FROM parks WHERE geom IS NOT NULL"):
        features.append((fid, park_reach, blob))
    for fid, reach, blob in conn.execute("SELECT fid, reach_m, geom FROM facilities WHERE geom IS NOT NULL"):
        features.append((1_000_000 + fid, reach, blob))
    fb, _ = bounds([f[2] for f in features])
    minx, miny, maxx, maxy = fb[:, 0], fb[:, 1], fb[:, 2], fb[:, 3]
    assert abs(fb[:, [1, 3]]).max() <= 60.0, "the longitude window needs latitudes within 60 degrees"
    print(f"check: {len(features)} features of the layer read in {time.time() - started:.1f} s", flush=True)

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
    for n, (kind, fid) in enumerate(chosen, 1):
        block, access, nearest_m = conn.execute(
            "SELECT b.geom, r.access, r.nearest_m FROM blocks b JOIN block_results r ON r.fid = b.fid "
            "WHERE b.fid = ?", (fid,)).fetchone()
        (bminx, bminy, bmaxx, bmaxy) = shapely.bounds(shapely.from_wkb(wkb(block)))
        radius = 5000.0
        done = {}
        while True:
            d = radius / METRES_PER_DEGREE_MIN
            band = (maxy >= bminy - d) & (miny <= bmaxy + d)
            if radius <= 1.0e6:
                e = radius / 50000.0
                band &= (maxx >= bminx - e) & (minx <= bmaxx + e)
            window = band.nonzero()[0]
            for i in window:
                if i not in done:
                    done[i] = conn.execute(
                        "SELECT ambit_distance(?, ?)", (block, features[i][2])).fetchone()[0]
            least = min(done.values(), default=None)
            if not nearest or (least is not None and least <= radius):
                break
            radius *= 4
            if radius > 2.1e7:
                break
        reached = int(any(done[i] <= features[i][1] for i in done))
        expected = least if cap is None or (least is not None and least <= cap) else None
        ok = reached == access and (not nearest or expected == nearest_m)
        failures += not ok
        if not ok or n % 25 == 0 or kind != "random":
            print(f"check: {kind} block {fid}: sweep {access} {nearest_m}, brute force {reached} "
                  f"{least if nearest else ''} ({len(done)} features) {'ok' if ok else 'DIFFERS'}",
                  flush=True)
    print(f"check: {len(chosen)} blocks, {failures} differ from brute force "
          f"({time.time() - started:.0f} s)")
    sys.exit(1 if failures else 0)


if __name__ == "__main__":
    main()
