"""ambit_share next to the biggest park of a generated file, two builds side
by side in one run: every block that the biggest park (most vertices)
reaches at half a mile, the share of its area within half a mile of any
park, timed block by block with each library (each in its own connection,
the layer of all parks built first, not timed), and the two shares
compared.

    python3 benches/share-forest.py GPKG BEFORE_LIBRARY AFTER_LIBRARY [N]

GPKG a file of demo-db/build-region (for example `national:60000 7`, whose
forest parks have 131,074 to 262,147 vertices); the libraries as given to
`.load` (a build of an earlier commit, kept in a folder of its own as
libambit.so, and target/release/libambit); N (default 40) the most blocks
timed. Needs a Python whose sqlite3 module loads extensions (Debian's
/usr/bin/python3). Not part of the test command.
"""

import sqlite3
import sys
import time


def connect(db, lib):
    con = sqlite3.connect(db)
    con.enable_load_extension(True)
    con.load_extension(lib)
    con.execute("SELECT ambit_layer('parks_reach', geom, ambit_miles(0.5), fid) FROM parks").fetchall()
    return con


def main():
    db, before, after = sys.argv[1:4]
    n = int(sys.argv[4]) if len(sys.argv) > 4 else 40
    con = connect(db, after)
    fid, vertices = con.execute(
        "SELECT fid, length(geom) / 16 FROM parks ORDER BY length(geom) DESC LIMIT 1").fetchone()
    con.execute(f"SELECT ambit_layer('big', geom, ambit_miles(0.5), fid) FROM parks WHERE fid = {fid}").fetchall()
    blocks = [b for (b,) in con.execute(
        "SELECT id FROM ambit_sweep('big', 'SELECT fid, geom FROM blocks') WHERE reached ORDER BY id")][:n]
    con.close()
    print(f"park {fid} (about {vertices} vertices): {len(blocks)} blocks within half a mile")
    results = {}
    for name, lib in (("before", before), ("after", after)):
        con = connect(db, lib)
        for b in blocks:
            t = time.perf_counter()
            share = con.execute("SELECT ambit_share('parks_reach', geom) FROM blocks WHERE fid = ?", (b,)).fetchone()[0]
            results[(name, b)] = (share, time.perf_counter() - t)
        con.close()
    print("| block | before s | after s | before share | after share | abs diff |")
    print("|---|---|---|---|---|---|")
    worst = 0.0
    for b in blocks:
        (s0, t0), (s1, t1) = results[("before", b)], results[("after", b)]
        worst = max(worst, abs(s0 - s1))
        print(f"| {b} | {t0:.3f} | {t1:.3f} | {s0:.9f} | {s1:.9f} | {abs(s0 - s1):.1e} |")
    t_before = sum(results[("before", b)][1] for b in blocks)
    t_after = sum(results[("after", b)][1] for b in blocks)
    print(f"total: before {t_before:.2f} s, after {t_after:.2f} s, ratio {t_before / max(t_after, 1e-9):.1f}; "
          f"largest share difference {worst:.1e}")


if __name__ == "__main__":
    main()
