#!/usr/bin/env python3
"""What one sql-examples script costs on one database, step by step.

    python3 benches/script-footprint.py DIR DB SCRIPT

Runs SCRIPT (a file of sql-examples/) in the stock sqlite3 shell on DB with
DIR as the current folder (the scripts read downloads/ and write results/
there), ambit found through LD_LIBRARY_PATH as the README says, and prints
for each step of the script (its `-- N. ...` headings) and for the whole run:

- wall time, and CPU time of the shell (user + system, all its threads,
  from /proc/PID/stat at the step boundaries);
- peak RSS of the shell (VmHWM, reset at each step through
  /proc/PID/clear_refs);
- the database file's growth, and the peaks of its rollback journal or WAL
  and of SQLite's temporary files (the shell's open `etilqs_*` files,
  deleted on open and so invisible to du, sized through /proc/PID/fd),
  sampled every FOOTPRINT_INTERVAL seconds (default 0.5).

The shell's own output goes to DIR/footprint.out and its errors to
DIR/footprint.err. Not part of `cargo test`; the machine's load average at
the start and the end is printed beside the figures.

Environment: AMBIT_LIB_DIR (the folder of libambit.so, default
target/release), SQLITE3 (default sqlite3), FOOTPRINT_INTERVAL.
"""

import os
import re
import subprocess
import sys
import time

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
TICKS = os.sysconf("SC_CLK_TCK")
STEP = re.compile(r"^-- (\d+)\. ")


def marked(script_text, marks):
    """The script with a `.shell` line before each step heading and at the
    end, appending `MARK name time utime stime vmhwm_kb` to marks and then
    resetting the high-water mark."""
    out = []

    def mark(name):
        out.append(
            ".shell echo \"MARK %s $(date +%%s.%%N) $(cut -d' ' -f14,15 /proc/$PPID/stat)"
            " $(awk '/VmHWM/ {print $2}' /proc/$PPID/status)\" >> '%s';"
            " echo 5 > /proc/$PPID/clear_refs" % (name, marks)
        )

    mark("start")
    for line in script_text.splitlines():
        m = STEP.match(line)
        if m:
            mark("step" + m.group(1))
        out.append(line)
    mark("end")
    return "\n".join(out) + "\n"


def size(path):
    try:
        return os.stat(path).st_size
    except OSError:
        return 0


def temp_bytes(pid):
    total = 0
    try:
        fds = os.listdir("/proc/%d/fd" % pid)
    except OSError:
        return 0
    for fd in fds:
        try:
            if "etilqs_" in os.readlink("/proc/%d/fd/%s" % (pid, fd)):
                total += os.stat("/proc/%d/fd/%s" % (pid, fd)).st_size
        except OSError:
            pass
    return total


def gb(n):
    return "%.2f GB" % (n / 1e9) if abs(n) >= 1e8 else "%.1f MB" % (n / 1e6)


def main():
    if len(sys.argv) != 4:
        sys.exit("usage: benches/script-footprint.py DIR DB SCRIPT")
    folder, db, script = (os.path.abspath(a) for a in sys.argv[1:])
    lib_dir = os.environ.get("AMBIT_LIB_DIR", os.path.join(ROOT, "target/release"))
    shell = os.environ.get("SQLITE3", "sqlite3")
    interval = float(os.environ.get("FOOTPRINT_INTERVAL", "0.5"))
    if not os.path.exists(os.path.join(lib_dir, "libambit.so")):
        sys.exit("script-footprint: %s/libambit.so is missing; run 'cargo build --release'" % lib_dir)
    marks = os.path.join(folder, "footprint.marks")
    if os.path.exists(marks):
        os.remove(marks)
    with open(script) as f:
        text = marked(f.read(), marks)
    load_before = open("/proc/loadavg").read().split()[:3]
    db_before = size(db)
    env = dict(os.environ, LD_LIBRARY_PATH=lib_dir)
    samples = []  # (time, db, journal, temp)
    with open(os.path.join(folder, "footprint.out"), "w") as out, open(
        os.path.join(folder, "footprint.err"), "w"
    ) as err:
        proc = subprocess.Popen(
            [shell, db], cwd=folder, env=env, stdin=subprocess.PIPE, stdout=out, stderr=err,
            text=True,
        )
        proc.stdin.write(text)
        proc.stdin.close()
        while proc.poll() is None:
            journal = max(size(db + "-journal"), size(db + "-wal"))
            samples.append((time.time(), size(db), journal, temp_bytes(proc.pid)))
            time.sleep(interval)
    status = proc.returncode
    load_after = open("/proc/loadavg").read().split()[:3]
    rows = []
    for line in open(marks):
        _, name, t, ut, st, hwm = line.split()
        rows.append((name, float(t), (int(ut) + int(st)) / TICKS, int(hwm) * 1024))
    print("script-footprint: %s on %s (%s before), shell exit status %d"
          % (os.path.basename(script), db, gb(db_before), status))
    print("load average at start %s, at end %s" % (" ".join(load_before), " ".join(load_after)))
    print("%-8s %9s %9s %10s %12s %12s %12s" % (
        "step", "wall s", "cpu s", "peak RSS", "db growth", "journal pk", "temp peak"))
    last_db = db_before
    for (name, t0, cpu0, _), (_, t1, cpu1, hwm) in zip(rows, rows[1:]):
        inside = [s for s in samples if t0 <= s[0] <= t1]
        db_end = max([s[1] for s in samples if s[0] <= t1] or [last_db])
        print("%-8s %9.1f %9.1f %10s %12s %12s %12s" % (
            "head" if name == "start" else name, t1 - t0, cpu1 - cpu0, gb(hwm),
            gb(db_end - last_db), gb(max([s[2] for s in inside] or [0])),
            gb(max([s[3] for s in inside] or [0]))))
        last_db = db_end
    db_after = size(db)
    print("%-8s %9.1f %9.1f %10s %12s %12s %12s" % (
        "total", rows[-1][1] - rows[0][1], rows[-1][2] - rows[0][2],
        gb(max(r[3] for r in rows[1:])), gb(db_after - db_before),
        gb(max([s[2] for s in samples] or [0])), gb(max([s[3] for s in samples] or [0]))))
    sys.exit(status)


if __name__ == "__main__":
    main()
