"""Every output of the example scripts read by an independent GeoPackage
reader, GDAL through pyogrio 0.13 (PyPI): every table and view a script
leaves in the file is registered in gpkg_contents (OGC 12-128, clause
1.1.3: features, or attributes for tables without geometry, clause 2.4), so
GDAL lists it, and GDAL reads every layer without a warning (before the
attributes tables were declared and registered, each untyped column gave
"Field format '' not supported").

Usage: python3 gpkg_outputs_check.py path/to/libambit.so OUTPUT.gpkg...
"""

import sqlite3
import sys
import warnings

import pyogrio
import pyogrio.raw

from checks import Checks

check = Checks()


def main():
    for path in sys.argv[2:]:
        db = sqlite3.connect(path)
        tables = {
            name
            for (name,) in db.execute(
                "SELECT name FROM sqlite_schema WHERE type IN ('table', 'view')"
                " AND name NOT LIKE 'gpkg%' AND name NOT LIKE 'rtree%' AND name NOT LIKE 'sqlite%'"
            )
        }
        registered = {name for (name,) in db.execute("SELECT table_name FROM gpkg_contents")}
        db.close()
        check(tables <= registered, f"{path}: not registered: {sorted(tables - registered)}")
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            layers = [name for name, _ in pyogrio.list_layers(path)]
            rows = 0
            for name in layers:
                meta, _, _, fields = pyogrio.raw.read(path, layer=name)
                rows += len(fields[0]) if fields else 0
        check(not caught, f"{path}: {sorted({str(w.message) for w in caught})}")
        check(set(layers) == registered, f"{path}: GDAL lists {sorted(set(layers) ^ registered)} differently")
        print(f"{path.split('/')[-1]}: {len(layers)} layers read by GDAL without a warning")
    check.report()


if __name__ == "__main__":
    main()
