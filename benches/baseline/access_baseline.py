#!/usr/bin/env python3
"""Planar Python baseline for ambit's access benchmark.

For every block of a GeoPackage (EPSG:4326): `reached` = 1 when any park lies
within 804.672 m (half a mile) of it or any facility within its own reach (a
per-feature column, metres); `nearest_m`, the distance to the nearest park or
facility (empty if none within 10 km). Writes a CSV (fid, reached, nearest_m),
prints the county summary (first five characters of geoid), the time of each
phase (read, project, index, query, write), `total_s X` and `peak_rss_kib N`.
Written as a strong analyst would with shapely 2, pyproj, numpy and sqlite3.

Caveat: distances here are planar, in a local projected CRS chosen from the
blocks' extent (transverse Mercator or Lambert azimuthal equal-area centred on
it). They differ from geodesic distances on the WGS84 ellipsoid by the
projection's scale error (1e-6 to 1e-5 relative over a county, growing with
the square of the distance from the centre), and a straight projected edge is
not a geodesic edge, so blocks near a threshold can be decided differently from
an exact geodesic computation: one of the reasons ambit exists. The benchmark
compares speed; `--compare ambit.csv` (columns fid, reached) counts the blocks
whose `reached` differs. `--self-test` runs on a tiny file it builds itself.
"""
import argparse
import csv
import math
import resource
import sqlite3
import struct
import tempfile
from collections import defaultdict
from contextlib import contextmanager
from pathlib import Path
from time import perf_counter

import numpy as np
import pyproj
import shapely

PARK_REACH_M = 804.672           # half an international mile
NEAREST_MAX_M = 10_000.0
ENVELOPE_BYTES = {0: 0, 1: 32, 2: 48, 3: 48, 4: 64}
EARTH_R = 6_371_008.8            # mean radius, only to choose the projection
MAX_REACH_GROUPS = 16            # beyond this many distinct reaches, filter pairs
PHASES = ("read", "project", "index", "query", "write")


def wkb_of(blob):
    """ISO WKB inside a GeoPackage geometry blob (OGC 12-128); None if NULL or empty."""
    if blob is None:
        return None
    if blob[:2] != b"GP":
        raise ValueError("not a GeoPackage geometry blob")
    if blob[3] & 0x10:           # empty-geometry flag: reaches nothing
        return None
    code = (blob[3] >> 1) & 7
    if code not in ENVELOPE_BYTES:
        raise ValueError(f"bad GeoPackage envelope code {code}")
    return blob[8 + ENVELOPE_BYTES[code]:]


def read_geoms(blobs):
    return shapely.from_wkb([wkb_of(b) for b in blobs])


def q(name):
    return '"' + name.replace('"', '""') + '"'


def blocks_extent(con, chunk):
    """(minx, miny, maxx, maxy) of blocks: from the GeoPackage R-tree if any, else a scan."""
    try:
        row = con.execute("SELECT min(minx), min(miny), max(maxx), max(maxy) "
                          "FROM rtree_blocks_geom").fetchone()
        if row[0] is not None:
            return row
    except sqlite3.OperationalError:
        pass
    ext = np.array([np.inf, np.inf, -np.inf, -np.inf])
    cur = con.execute("SELECT geom FROM blocks")
    while rows := cur.fetchmany(chunk):
        b = shapely.total_bounds(read_geoms(r[0] for r in rows))
        ext = np.r_[np.fmin(ext[:2], b[:2]), np.fmax(ext[2:], b[2:])]
    if not np.isfinite(ext).all():
        raise SystemExit("blocks: no geometry")
    return tuple(ext)


def local_crs(minx, miny, maxx, maxy, margin_m=NEAREST_MAX_M):
    """Transverse Mercator or LAEA centred on the extent, whichever distorts less: over
    half-widths w (east-west) and h (north-south), grown by margin_m, their scale errors
    peak near w^2 / 2R^2 and (w^2 + h^2) / 8R^2, so TM wins only when h^2 > 3 w^2."""
    lon0, lat0 = (minx + maxx) / 2, (miny + maxy) / 2
    widest = 0.0 if miny <= 0 <= maxy else min(abs(miny), abs(maxy))
    w = math.radians(maxx - minx) / 2 * EARTH_R * math.cos(math.radians(widest)) + margin_m
    h = math.radians(maxy - miny) / 2 * EARTH_R + margin_m
    if h * h > 3 * w * w:
        proj, err = "tmerc +k_0=1", w * w / (2 * EARTH_R ** 2)
    else:
        proj, err = "laea", (w * w + h * h) / (8 * EARTH_R ** 2)
    return f"+proj={proj} +lat_0={lat0:.6f} +lon_0={lon0:.6f} +ellps=WGS84 +units=m +no_defs", err


def project(geoms, tf):
    return shapely.transform(geoms, tf.transform, interleaved=False)


def compare(path, fid, reached):
    with open(path, newline="") as f:
        ref = {int(r["fid"]): int(float(r["reached"])) for r in csv.DictReader(f)}
    ours = dict(zip(fid.tolist(), reached.astype(int).tolist()))
    common = ours.keys() & ref.keys()
    differ = sum(ours[k] != ref[k] for k in common)
    only_here, only_there = len(ours.keys() - ref.keys()), len(ref.keys() - ours.keys())
    print(f"compare {path}: {differ} of {len(common)} blocks differ in reached "
          f"({only_here} only here, {only_there} only there)")


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[1])
    ap.add_argument("gpkg", nargs="?", metavar="DB.gpkg")
    ap.add_argument("--facilities", metavar="TABLE", help="point table with a reach column")
    ap.add_argument("--reach-column", metavar="COL", help="reach of each facility, metres")
    ap.add_argument("--out", metavar="CSV", help="CSV to write: fid, reached, nearest_m")
    ap.add_argument("--compare", metavar="CSV", help="reference CSV (fid, reached) to diff")
    ap.add_argument("--chunk", type=int, default=100_000, help="blocks per chunk (100000)")
    ap.add_argument("--self-test", action="store_true", help="run on a tiny built-in file")
    args = ap.parse_args(argv)
    if args.self_test:
        return self_test()
    if not (args.gpkg and args.facilities and args.reach_column and args.out):
        ap.error("DB.gpkg, --facilities, --reach-column and --out are required")
    t_start, spent = perf_counter(), dict.fromkeys(PHASES, 0.0)

    @contextmanager
    def timer(phase):
        t0 = perf_counter()
        yield
        spent[phase] += perf_counter() - t0

    con = sqlite3.connect(f"{Path(args.gpkg).resolve().as_uri()}?mode=ro", uri=True)

    with timer("read"):
        extent = blocks_extent(con, args.chunk)
        parks = read_geoms(r[0] for r in con.execute("SELECT geom FROM parks"))
        sql = f"SELECT {q(args.reach_column)}, geom FROM {q(args.facilities)}"
        rows = con.execute(sql).fetchall()
        reach = np.array([np.nan if r[0] is None else float(r[0]) for r in rows])
        facs = read_geoms(r[1] for r in rows)
    with timer("project"):
        crs, scale_err = local_crs(*extent)
        tf = pyproj.Transformer.from_crs("EPSG:4326", crs, always_xy=True)
        parks, facs = project(parks, tf), project(facs, tf)
    print(f"crs {crs} (scale error up to ~{scale_err:.1e})")

    with timer("index"):
        usable = np.isfinite(reach) & (reach >= 0)
        values = np.unique(reach[usable])[::-1]          # widest reach first
        if len(values) <= MAX_REACH_GROUPS:             # one tree per reach value
            fac_groups = [(r, shapely.STRtree(facs[reach == r]), None) for r in values]
        else:                                           # one tree, filter pairs by reach
            idx = np.flatnonzero(usable)
            fac_groups = [(values[0], shapely.STRtree(facs[idx]), reach[idx])] if len(idx) else []
        park_tree = shapely.STRtree(parks)
        near_tree = shapely.STRtree(np.concatenate([parks, facs]))

    out = open(args.out, "w", newline="")
    out.write("fid,reached,nearest_m\n")
    counties = defaultdict(lambda: np.zeros(3))        # blocks, population, population reached
    all_fid, all_reached = [np.zeros(0, np.int64)], [np.zeros(0, bool)]
    cur = con.execute("SELECT fid, geoid, population, geom FROM blocks ORDER BY fid")
    while True:
        with timer("read"):
            rows = cur.fetchmany(args.chunk)
            if not rows:
                break
            fid = np.array([r[0] for r in rows], dtype=np.int64)
            county = [(r[1] or "")[:5] for r in rows]
            pop = np.array([r[2] or 0 for r in rows], dtype=np.float64)
            blocks = read_geoms(r[3] for r in rows)
        with timer("project"):
            blocks = project(blocks, tf)
        with timer("query"):
            reached = np.zeros(len(rows), dtype=bool)
            for r, tree, pair_reach in fac_groups:       # points first: cheap
                todo = np.flatnonzero(~reached)
                b, f = tree.query(blocks[todo], predicate="dwithin", distance=r)
                if pair_reach is not None:
                    keep = shapely.distance(blocks[todo[b]], tree.geometries[f]) <= pair_reach[f]
                    b = b[keep]
                reached[todo[b]] = True
            todo = np.flatnonzero(~reached)             # then parks, for blocks not yet reached
            b, _ = park_tree.query(blocks[todo], predicate="dwithin", distance=PARK_REACH_M)
            reached[todo[b]] = True
            nearest = np.full(len(rows), np.nan)
            (b, _), d = near_tree.query_nearest(blocks, max_distance=NEAREST_MAX_M,
                                                return_distance=True, all_matches=False)
            nearest[b] = d
        with timer("write"):
            near_txt = ["" if math.isnan(x) else f"{x:.3f}" for x in nearest.tolist()]
            out.write("".join(f"{f},{int(r)},{n}\n"
                              for f, r, n in zip(fid.tolist(), reached.tolist(), near_txt)))
            keys, inv = np.unique(county, return_inverse=True)
            sums = np.stack([np.bincount(inv), np.bincount(inv, pop),
                             np.bincount(inv, pop * reached)], axis=1)
            for k, s in zip(keys.tolist(), sums):
                counties[k] += s
            all_fid.append(fid)
            all_reached.append(reached)
    con.close()
    with timer("write"):
        out.close()
        print(f"{'county':<8}{'blocks':>10}{'population':>14}{'pop_reached':>14}{'pct':>8}")
        for k in sorted(counties):
            n, p, pr = counties[k]
            pct = f"{100 * pr / p:.1f}" if p else "-"
            print(f"{k:<8}{int(n):>10}{int(p):>14}{int(pr):>14}{pct:>8}")
    for phase in PHASES:
        print(f"{phase}_s {spent[phase]:.3f}")
    print(f"total_s {perf_counter() - t_start:.3f}")
    print(f"peak_rss_kib {resource.getrusage(resource.RUSAGE_SELF).ru_maxrss}")
    if args.compare:
        compare(args.compare, np.concatenate(all_fid), np.concatenate(all_reached))


def self_test():
    """Four blocks 0.25 deg apart, features placed with pyproj.Geod: a facility 0.5 m inside its
    reach, one 0.5 m outside, a park 0.5 m inside half a mile, and nothing within 10 km."""
    geod, mile = pyproj.Geod(ellps="WGS84"), 1609.344

    def blob(g, code):           # odd envelope codes little-endian, even ones big-endian
        x0, y0, x1, y1 = shapely.bounds(g)
        env = [x0, x1, y0, y1, 0, 0, 0, 0][:ENVELOPE_BYTES[code] // 8]
        head = struct.pack(("<" if code % 2 else ">") + f"i{len(env)}d", 4326, *env)
        wkb = shapely.to_wkb(g, byte_order=code % 2)
        return b"GP\x00" + bytes([code << 1 | code % 2]) + head + wkb

    blocks = [shapely.box(-131.5 + 0.25 * k, 38.5, -131.495 + 0.25 * k, 38.504) for k in range(4)]
    facs = [shapely.Point(geod.fwd(-131.4975 + 0.25 * k, 38.5, 180, mile + d)[:2])  # due south
            for k, d in ((0, -0.5), (1, 0.5))]
    park_x = geod.fwd(-130.995, 38.504, 90, PARK_REACH_M - 0.5)[0]  # east of block 3's corner
    parks = [shapely.box(park_x, 38.5, park_x + 0.003, 38.504)]
    want = [(1, mile - 0.5), (0, mile + 0.5), (1, PARK_REACH_M - 0.5), (0, None)]
    with tempfile.TemporaryDirectory() as tmp:
        db, out = f"{tmp}/t.gpkg", f"{tmp}/out.csv"
        con = sqlite3.connect(db)
        con.executescript("""
            CREATE TABLE blocks(fid INTEGER PRIMARY KEY, geoid TEXT, population INTEGER,
                                water INTEGER, geom BLOB);
            CREATE TABLE parks(fid INTEGER PRIMARY KEY, park_id TEXT, name TEXT, geom BLOB);
            CREATE TABLE fac(fid INTEGER PRIMARY KEY, reach_m REAL, geom BLOB);""")
        con.executemany("INSERT INTO blocks VALUES(?,?,?,0,?)", [
            (k + 1, f"0600{k % 2}0{k}", 10 * (k + 1), blob(g, k)) for k, g in enumerate(blocks)])
        con.executemany("INSERT INTO parks VALUES(1,'p1','park',?)", [(blob(parks[0], 4),)])
        con.executemany("INSERT INTO fac VALUES(?,?,?)",
                        [(k + 1, mile, blob(g, k + 1)) for k, g in enumerate(facs)])
        con.commit()
        con.close()
        main([db, "--facilities", "fac", "--reach-column", "reach_m", "--out", out, "--chunk", "3"])
        with open(out, newline="") as f:
            got = [(int(r["reached"]), float(r["nearest_m"]) if r["nearest_m"] else None)
                   for r in csv.DictReader(f)]
    ok = len(got) == len(want) and all(
        g[0] == w[0] and (g[1] is None) == (w[1] is None)
        and (w[1] is None or abs(g[1] - w[1]) < 0.1) for g, w in zip(got, want))
    print("self-test", "ok" if ok else f"FAILED: got {got}, want {want}")
    raise SystemExit(0 if ok else 1)


if __name__ == "__main__":
    main()
