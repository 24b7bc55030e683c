"""ambit: exact geodesic proximity on the WGS84 ellipsoid inside SQLite.

This package holds ambit's loadable SQLite library for this platform and
two functions:

    load(conn)      loads ambit into an open connection of the standard
                    sqlite3 module, of apsw, or of another DB-API module
                    whose connections can load extensions;
    library_path()  the path of the library file, for other hosts (the
                    sqlite3 shell's .load, R's RSQLite, SELECT load_extension);

and run_script(conn, path), which runs the SQL of one of ambit's example
scripts (sql-examples/) in a Python connection.

The SQL functions are documented in ambit's README ("Function reference").
"""

import os

__all__ = ["load", "library_path", "run_script", "ENTRY_POINT"]

#: The library's entry point (SQLite also derives it from the file name).
ENTRY_POINT = "sqlite3_ambit_init"

_NAMES = ("libambit.so", "libambit.dylib", "libambit.dll")


def library_path():
    """Returns the absolute path of ambit's library in this package.

    Raises FileNotFoundError when the package holds no library (a wheel of
    another platform, or sources without a build).
    """
    here = os.path.dirname(os.path.abspath(__file__))
    for name in _NAMES:
        path = os.path.join(here, name)
        if os.path.exists(path):
            return path
    raise FileNotFoundError(
        "ambit_sqlite holds no library for this platform in %s; install the "
        "wheel built for this platform (README, 'Install')" % here
    )


_NO_LOADING = (
    "ambit_sqlite.load: this Python's sqlite3 module was built without extension loading "
    "(its connections have no enable_load_extension), so it cannot load "
    "ambit. Ways out: install apsw from PyPI (pip install apsw) and pass an "
    "apsw.Connection to ambit_sqlite.load, or use a Python whose sqlite3 "
    "module can load extensions (Debian's /usr/bin/python3 can)."
)


def load(conn):
    """Loads ambit into the open connection `conn` and returns `conn`.

    Works with connections of the standard sqlite3 module and of apsw, and
    with other DB-API connections that either have load_extension or
    accept SELECT load_extension(...) (their SQLite must allow it).
    Extension loading is switched back off afterwards where the connection
    lets it be switched. Raises RuntimeError naming the way out when the
    connection cannot load extensions at all.
    """
    module = type(conn).__module__.split(".")[0]
    enable = getattr(conn, "enable_load_extension", None)
    load_extension = getattr(conn, "load_extension", None)
    if module == "sqlite3" and enable is None:
        raise RuntimeError(_NO_LOADING)
    path = library_path()
    if enable is not None and load_extension is not None:
        enable(True)
        try:
            if module == "apsw":
                load_extension(path, ENTRY_POINT)
            else:
                load_extension(path)
        finally:
            enable(False)
        return conn
    # Another DB-API module: ask SQLite itself.
    cursor = conn.cursor()
    try:
        cursor.execute("SELECT load_extension(?, ?)", (path, ENTRY_POINT))
        cursor.fetchall()
    finally:
        cursor.close()
    return conn


def _writefile(path, data):
    """The sqlite3 shell's writefile(path, data): writes and returns the size."""
    if data is None:
        return None
    if isinstance(data, str):
        data = data.encode("utf-8")
    with open(path, "wb") as f:
        f.write(data)
    return len(data)


def run_script(conn, path):
    """Runs the SQL of the sqlite3-shell script at `path` in `conn` (a
    connection of the sqlite3 module or of apsw with ambit loaded) and
    returns `conn`.

    The shell's dot-commands (lines starting with '.') are skipped, so
    output settings (.mode, .output, .once, .headers) have no effect and
    nothing is printed; scripts that need .import or .read (join-measures.sql,
    sensitivity.sql) need the shell. The shell's writefile(path, data) is
    provided, with paths relative to the current folder, as in the shell.
    Raises the connection's own error at the first failing statement.
    """
    with open(path, encoding="utf-8") as f:
        sql = "".join(line for line in f if not line.startswith("."))
    module = type(conn).__module__.split(".")[0]
    if module == "apsw":
        conn.create_scalar_function("writefile", _writefile, 2)
        for _ in conn.execute(sql):
            pass
    else:
        conn.create_function("writefile", 2, _writefile)
        conn.executescript(sql)
    return conn
