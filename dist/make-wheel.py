"""Writes a platform wheel of ambit_sqlite (dist/python) holding one built
library: python3 dist/make-wheel.py VERSION PLATFORM LIBDIR OUTDIR.

PLATFORM is one of dist/build's folders; the wheel's tag is py3-none-<tag>
(PEP 425, PEP 427; manylinux_2_17 per PEP 600, macOS 11.0 per the build's
MACOSX_DEPLOYMENT_TARGET). Standard library only.
"""

import base64
import hashlib
import os
import sys
import zipfile

TAGS = {
    "linux-x86_64": "manylinux_2_17_x86_64.manylinux2014_x86_64",
    "windows-x86_64": "win_amd64",
    "macos-arm64": "macosx_11_0_arm64",
    "macos-x86_64": "macosx_11_0_x86_64",
}
LIBRARIES = {
    "linux-x86_64": "libambit.so",
    "windows-x86_64": "libambit.dll",
    "macos-arm64": "libambit.dylib",
    "macos-x86_64": "libambit.dylib",
}


def main(version, platform, libdir, outdir):
    tag = TAGS[platform]
    lib = LIBRARIES[platform]
    name = "ambit_sqlite"
    here = os.path.dirname(os.path.abspath(__file__))
    dist_info = "%s-%s.dist-info" % (name, version)
    files = []
    with open(os.path.join(here, "python", name, "__init__.py"), "rb") as f:
        files.append(("%s/__init__.py" % name, f.read()))
    with open(os.path.join(libdir, lib), "rb") as f:
        files.append(("%s/%s" % (name, lib), f.read()))
    files.append(
        (
            dist_info + "/METADATA",
            (
                "Metadata-Version: 2.1\n"
                "Name: ambit-sqlite\n"
                "Version: %s\n"
                "Summary: ambit, exact geodesic proximity inside SQLite: the "
                "loadable library and a loader for Python hosts\n"
                "License: MIT OR Apache-2.0\n"
                "Requires-Python: >=3.8\n" % version
            ).encode(),
        )
    )
    files.append(
        (
            dist_info + "/WHEEL",
            (
                "Wheel-Version: 1.0\n"
                "Generator: ambit dist/make-wheel.py\n"
                "Root-Is-Purelib: false\n"
                + "".join("Tag: py3-none-%s\n" % t for t in tag.split("."))
            ).encode(),
        )
    )
    record = []
    for path, data in files:
        digest = base64.urlsafe_b64encode(hashlib.sha256(data).digest()).rstrip(b"=")
        record.append("%s,sha256=%s,%d\n" % (path, digest.decode(), len(data)))
    record.append(dist_info + "/RECORD,,\n")
    files.append((dist_info + "/RECORD", "".join(record).encode()))
    os.makedirs(outdir, exist_ok=True)
    wheel = os.path.join(outdir, "%s-%s-py3-none-%s.whl" % (name, version, tag))
    with zipfile.ZipFile(wheel, "w", zipfile.ZIP_DEFLATED) as z:
        for path, data in files:
            info = zipfile.ZipInfo(path, date_time=(2026, 1, 1, 0, 0, 0))
            info.external_attr = (0o755 if path.endswith(lib) else 0o644) << 16
            info.compress_type = zipfile.ZIP_DEFLATED
            z.writestr(info, data)
    print("dist/build: %s (%d bytes)" % (wheel, os.path.getsize(wheel)))


if __name__ == "__main__":
    main(*sys.argv[1:])
