"""What the Python checks share: counting checks that must hold, and a
connection with ambit loaded (apsw, PyPI)."""

import apsw


class Checks:
    """Counts passed checks; the first failure raises with its message."""

    def __init__(self):
        self.passed = 0

    def __call__(self, condition, what):
        if not condition:
            raise AssertionError(what)
        self.passed += 1

    def report(self):
        print(f"{self.passed} passed, 0 failed")


def connect(library, path=":memory:", readonly=False):
    """An apsw connection to `path` with the extension `library` loaded."""
    flags = apsw.SQLITE_OPEN_READONLY if readonly else apsw.SQLITE_OPEN_READWRITE | apsw.SQLITE_OPEN_CREATE
    conn = apsw.Connection(path, flags=flags)
    conn.enable_load_extension(True)
    conn.load_extension(library)
    return conn
