"""ambit in a Python host: apsw (PyPI), which bundles a recent SQLite and can
load extensions. Also reads what ambit writes with independent readers:
shapely (PyPI) for WKB, and Python's struct module for the GeoPackage header
laid out by OGC 12-128 (Requirement 19 and the flags table beside it).

Usage: python3 host_apsw.py path/to/libambit.so
Exits non-zero on the first failed check; prints how many passed.
"""

import math
import struct
import sys

import apsw
import shapely
import shapely.wkb
import shapely.wkt

checks = 0


def check(condition, what):
    global checks
    if not condition:
        raise AssertionError(what)
    checks += 1


def main(library):
    conn = apsw.Connection(":memory:")
    conn.enable_load_extension(True)
    conn.load_extension(library)
    one = lambda sql, *args: conn.execute(sql, args).fetchone()[0]

    # The host is a newer SQLite than the Debian shell.
    version = tuple(int(p) for p in apsw.sqlite_lib_version().split("."))
    check(version >= (3, 45, 0), f"apsw bundles a recent SQLite, got {version}")
    check(one("SELECT ambit_version()") == "0.1.0", "ambit_version")
    check(one("SELECT sqlite_version()") == apsw.sqlite_lib_version(), "host version")

    # Independent WKB reader: shapely reads ST_AsBinary's output as the
    # geometry the WKT described (OGC 06-103r4, clause 8).
    for wkt in [
        "POINT (-97.25 35.5)",
        "LINESTRING (0 0, 1 1, 2 0.5)",
        "POLYGON ((0 0, 10 0, 10 10, 0 10, 0 0), (2 2, 2 3, 3 3, 2 2))",
        "MULTIPOINT ((1 2), (3 4))",
        "MULTILINESTRING ((0 0, 1 1), (2 2, 3 3))",
        "MULTIPOLYGON (((0 0, 1 0, 1 1, 0 0)), ((5 5, 6 5, 6 6, 5 5)))",
        "GEOMETRYCOLLECTION (POINT (1 2), LINESTRING (0 0, 1 1))",
        "POINT Z (1 2 3)",
        "LINESTRING Z (0 0 1, 1 1 2)",
    ]:
        wkb = one("SELECT ST_AsBinary(ST_GeomFromText(?))", wkt)
        theirs = shapely.wkb.loads(bytes(wkb))
        check(theirs.equals_exact(shapely.wkt.loads(wkt), 0.0), f"shapely reads {wkt}")
        check(theirs.has_z == (" Z " in wkt), f"Z flag of {wkt}")
        # And what shapely writes, ambit reads back to the same text.
        back = one("SELECT ST_AsText(ST_GeomFromWKB(?))", shapely.wkb.dumps(theirs, flavor="iso"))
        check(back == wkt, f"ambit reads shapely's WKB of {wkt}: {back}")
        big = shapely.wkb.dumps(theirs, byte_order=0, flavor="iso")
        back = one("SELECT ST_AsText(ST_GeomFromWKB(?))", big)
        check(back == wkt, f"ambit reads big-endian WKB of {wkt}: {back}")

    # The GeoPackage header parsed by hand per OGC 12-128: magic 'GP',
    # version 0, flags R R X Y E E E B, int32 srs_id, envelope doubles.
    blob = one("SELECT ST_GeomFromText('LINESTRING (-97.5 35.25, -97.25 35.75)', 4269)")
    magic, version_byte, flags, srs_id = struct.unpack_from("<2sBBi", blob, 0)
    check(magic == b"GP" and version_byte == 0, "magic and version")
    check(flags & 1 == 1, "little-endian header (B = 1)")
    check((flags >> 1) & 7 == 1, "envelope code 1: [minx, maxx, miny, maxy]")
    check(flags & 0x10 == 0 and flags & 0x20 == 0 and flags & 0xC0 == 0, "Y, X, R clear")
    check(srs_id == 4269, "srs_id")
    envelope = struct.unpack_from("<4d", blob, 8)
    check(envelope == (-97.5, -97.25, 35.25, 35.75), f"envelope {envelope}")
    check(shapely.wkb.loads(bytes(blob[40:])).equals_exact(
        shapely.wkt.loads("LINESTRING (-97.5 35.25, -97.25 35.75)"), 0.0), "WKB after the header")

    # Empty geometries (12-128, Requirement 149 and the note under
    # Requirement 19): empty flag, no envelope, POINT EMPTY as quiet NaNs.
    blob = one("SELECT ST_GeomFromText('POINT EMPTY')")
    _, _, flags, _ = struct.unpack_from("<2sBBi", blob, 0)
    check(flags == 0x11, f"empty flags 0x{flags:02x}")
    check(bytes(blob[8 + 5:8 + 21]) == bytes.fromhex("000000000000f87f" * 2), "quiet NaN")
    x, y = struct.unpack_from("<2d", blob, 13)
    check(math.isnan(x) and math.isnan(y), "NaN ordinates")
    check(shapely.wkb.loads(bytes(blob[8:])).is_empty, "shapely sees it empty")

    # Errors reach Python as exceptions with ambit's message; the
    # connection stays usable.
    for sql, piece in [
        ("SELECT ST_AsText(x'')", "ST_AsText: argument 1 (geom): empty blob"),
        ("SELECT ST_Point(500000, 4500000)", "look projected"),
        ("SELECT ST_Point(1, 2, 3857)", "srs_id 3857"),
    ]:
        try:
            conn.execute(sql).fetchall()
            check(False, f"{sql} should fail")
        except apsw.SQLError as e:
            check(piece in str(e), f"{sql}: {e}")
    check(one("SELECT ST_X(ST_Point(3, 4))") == 3.0, "connection still usable")

    print(f"{checks} passed, 0 failed")


if __name__ == "__main__":
    main(sys.argv[1])
