"""One long ambit_share call stops soon after the host interrupts it
(apsw's Connection.interrupt, which calls sqlite3_interrupt, from a timer
thread), in the scalar function and in ambit_sweep's share column: a
polygon of 150,000 vertices about 80 km across against 2,000
parks, which takes seconds uninterrupted. ambit promises to honour an
interrupt within 0.2 s (DEVELOPERS.md, "Interrupts"); the check allows 1 s
so a loaded machine does not fail it, and prints the latency measured.
Test data is invented (a fixed seed).

Usage: python3 share_interrupt_check.py path/to/libambit.so
"""

import math
import random
import sys
import threading
import time

import apsw
from geographiclib.geodesic import Geodesic

from checks import Checks, connect

G = Geodesic.WGS84
check = Checks()


def main():
    conn = connect(sys.argv[1])
    rng = random.Random(13)
    lon0, lat0 = -131.0, 38.5
    n = 150_000
    ring = []
    for k in range(n):
        azi = 360.0 * k / n
        r = 40_000.0 * (1.0 + 0.05 * math.sin(37 * math.radians(azi)))
        d = G.Direct(lat0, lon0, azi, r)
        ring.append(f"{d['lon2']!r} {d['lat2']!r}")
    wkt = "POLYGON((" + ", ".join(ring[::-1] + [ring[-1]]) + "))"
    conn.execute("CREATE TEMP TABLE parks (id INTEGER, lon REAL, lat REAL)")
    with conn:
        conn.executemany("INSERT INTO parks VALUES (?, ?, ?)", [
            (i, lon0 + rng.uniform(-0.5, 0.5), lat0 + rng.uniform(-0.4, 0.4)) for i in range(3000)
        ])
    conn.execute("SELECT ambit_layer('parks', ST_Point(lon, lat), 804.672, id) FROM parks").fetchall()
    conn.execute("CREATE TEMP TABLE g AS SELECT ST_GeomFromText(?) AS geom", (wkt,))

    start = time.perf_counter()
    whole = conn.execute("SELECT ambit_share('parks', geom) FROM g").fetchone()[0]
    uninterrupted = time.perf_counter() - start
    print(f"uninterrupted: share {whole:.6f} in {uninterrupted:.2f} s")
    # About 1 s on an idle 2-core machine, several when loaded; the delays
    # below are fractions of it, so a faster machine only shortens them.
    check(uninterrupted > 0.3, f"the call must be long enough to interrupt: {uninterrupted:.2f} s")

    latencies = []

    def interrupt_after(sql, delay, expected, label):
        """Runs sql, interrupting it after delay seconds, and checks the latency.
        When the machine got faster than it was during the measured call
        (another job ended), the call may finish before the interrupt is
        sent: that says nothing about ambit, so the delay is halved and the
        call run again. A call that goes on for 1 s or more after the
        interrupt was sent (the latency allowed below) is a failure."""
        for _ in range(6):
            fired = {}

            def fire():
                fired["at"] = time.perf_counter()
                conn.interrupt()

            timer = threading.Timer(delay, fire)
            timer.start()
            try:
                conn.execute(sql).fetchall()
                finished = time.perf_counter()
                timer.cancel()
                timer.join()
                # A call that ends soon after the interrupt may simply have
                # been done; it is given the latency the check allows.
                late = finished - fired.get("at", finished)
                check(late < 1.0, f"{label} after {delay:.2f} s went on {late:.2f} s "
                      "after the interrupt")
                print(f"{label} finished before the interrupt at {delay:.2f} s; "
                      f"trying {delay / 2:.2f} s")
                delay /= 2
                continue
            except (apsw.InterruptError, apsw.SQLError) as e:
                latency = time.perf_counter() - fired["at"]
                check(expected in str(e), f"{label} message: {e}")
            timer.join()
            print(f"{label} interrupted after {delay:.2f} s: returned "
                  f"{1000 * latency:.0f} ms after the interrupt")
            check(latency < 1.0, f"{label} latency {latency:.3f} s")
            latencies.append(latency)
            return
        check(False, f"{label} always finished before the interrupt")

    # The first delay falls in decoding, validating and preparing the
    # polygon (before the share computation starts); the later ones in the
    # computation. Fractions of the measured call, so that a fast machine
    # (about 1 s) and a loaded one (several seconds) both interrupt it.
    for delay in (min(0.3, 0.2 * uninterrupted), 0.45 * uninterrupted, 0.7 * uninterrupted):
        interrupt_after("SELECT ambit_share('parks', geom) FROM g", delay,
                        "ambit_share: interrupted", "ambit_share")
    # The sweep's share column: its workers see the interrupt through a
    # flag the calling thread sets.
    interrupt_after("SELECT share FROM ambit_sweep('parks', 'SELECT 1, geom FROM g')",
                    0.6 * uninterrupted, "interrupted", "the sweep")
    # The connection works afterwards.
    again = conn.execute("SELECT ambit_share('parks', geom) FROM g").fetchone()[0]
    check(again == whole, f"the same share after interrupts: {again} vs {whole}")
    if latencies:
        print(f"max latency {1000 * max(latencies):.0f} ms")
    check.report()


if __name__ == "__main__":
    main()
