#!/usr/bin/python3
"""The output folder of a run: refused early, locked, and replaced as one set (README "What a run
guarantees about its output folder").

usage: test_output_safety.py SHOREWARD_BINARY WORK_DIR

Checks:
  - a read-only output folder is refused before anything is computed (well under a second, against a
    run of several seconds), exit 1, no file left;
  - a folder locked by a live process (flock on .shoreward.lock) is refused with the holder's pid;
  - a stale lock (its pid gone, no flock) is taken over with a note, and the lock is gone afterwards;
  - two runs started together into one folder: one runs, the other is refused as locked; the folder
    then holds one complete set (run.json lists files that exist with those sizes);
  - a full disk (a small tmpfs; needs root to mount, skipped with a message otherwise): refused before
    computing when the outputs cannot fit, and, when the disk fills during the run, exit 1 with
    "no space left" and no crash (exit 139 before); the previous set's checksums are unchanged;
  - SIGKILL while maps.nc is being written leaves the previous set's checksums unchanged; the next run
    removes the dead run's staging folder and takes over its lock;
  - tools/plot draws a complete set and refuses one whose run.json does not match its files;
  - an address-space limit (RLIMIT_AS, as `prlimit --as` or `ulimit -v` set it) below the run's memory is
    refused with the figures before any step.
The scenarios are flat, fictional basins.
"""
import hashlib
import json
import os
import resource
import subprocess
import sys
import time

BIN = os.path.abspath(sys.argv[1])
WORK = os.path.abspath(sys.argv[2])
os.makedirs(WORK, exist_ok=True)
FAILURES = []
MOUNTS = []


def check(cond, what):
    print(("ok   " if cond else "FAIL ") + what)
    if not cond:
        FAILURES.append(what)


def skip(what):
    print("skip " + what)


def write(name, text):
    path = os.path.join(WORK, name)
    with open(path, "w") as f:
        f.write(text)
    return path


def run(*args, **kw):
    return subprocess.run([BIN, *args], capture_output=True, text=True, **kw)


BASIN = """; a flat basin for the output-safety tests (fictional)
[run]
title = flat basin (fictional)
duration = {duration}
layout = C
courant_fraction = 0.9
gauge_interval = 30 s
arrival_threshold = 0.01 m
snapshot_interval = {snap}

[grid]
nx = {nx}
ny = {ny}
dx = {dx}

[edges]
all = open

[seabed]
deep = 1000 m

[source centre]
shape = hump
x = {x}
y = {y}
amplitude = 1 m
radius = 20 km

[gauges]
Near Kessel = {x}, {y}
"""


def basin(name, nx, ny, dx_km, duration, snap="0"):
    return write(name, BASIN.format(nx=nx, ny=ny, dx="%g km" % dx_km, duration=duration, snap=snap,
                                    x="%g km" % (nx * dx_km / 2), y="%g km" % (ny * dx_km / 2)))


def digests(folder):
    """{name: sha256} of the visible files of folder."""
    out = {}
    for name in sorted(os.listdir(folder)):
        p = os.path.join(folder, name)
        if os.path.isfile(p) and not name.startswith("."):
            with open(p, "rb") as f:
                out[name] = hashlib.sha256(f.read()).hexdigest()
    return out


def complete_set(folder):
    """(the manifest lists files that exist with its sizes, why not)."""
    try:
        with open(os.path.join(folder, "run.json")) as f:
            man = json.load(f)
    except (OSError, ValueError) as e:
        return False, "no readable run.json: %s" % e
    for entry in man.get("files", []):
        p = os.path.join(folder, entry["name"])
        if not os.path.isfile(p) or os.path.getsize(p) != entry["bytes"]:
            return False, "%s missing or not %d bytes" % (entry["name"], entry["bytes"])
    if not man.get("files"):
        return False, "run.json lists no files"
    return True, "%d files" % len(man["files"])


def leftovers(folder):
    return [n for n in os.listdir(folder) if n.startswith(".") or n.endswith(".part")]


def mount_tmpfs(path, opts):
    """Mounts a tmpfs at path with opts; True when done (needs root)."""
    os.makedirs(path, exist_ok=True)
    if os.geteuid() != 0:
        return False
    r = subprocess.run(["mount", "-t", "tmpfs", "-o", opts, "tmpfs", path], capture_output=True, text=True)
    if r.returncode == 0:
        MOUNTS.append(path)
        return True
    print("     (mount -t tmpfs -o %s failed: %s)" % (opts, r.stderr.strip()))
    return False


# A run that computes for a few seconds: refusals must come well before that.
SLOW = basin("slow.scn", 400, 300, 1, "6 h")


def test_read_only():
    ro = os.path.join(WORK, "ro")
    how = "a read-only tmpfs"
    if not mount_tmpfs(ro, "ro,size=1m"):
        if os.geteuid() == 0:
            skip("read-only folder: cannot mount a read-only tmpfs (root ignores permissions)")
            return
        os.makedirs(ro, exist_ok=True)
        os.chmod(ro, 0o555)
        how = "a folder with mode 555"
    t = time.time()
    r = run("run", SLOW, "--out", ro, "--quiet")
    dt = time.time() - t
    check(r.returncode == 1, "read-only folder (%s): exit 1 (got %d)" % (how, r.returncode))
    check("cannot write in the folder" in r.stderr, "read-only folder: the message says so: %s" % r.stderr.strip())
    check(dt < 1.0, "read-only folder: refused before computing (%.2f s)" % dt)
    check(not os.listdir(ro), "read-only folder: nothing written")


class Holder:
    """A live lock holder: this test process, with a flock on OUT/.shoreward.lock."""

    def __init__(self, folder):
        import fcntl
        os.makedirs(folder, exist_ok=True)
        self.fd = os.open(os.path.join(folder, ".shoreward.lock"), os.O_RDWR | os.O_CREAT, 0o644)
        fcntl.flock(self.fd, fcntl.LOCK_EX)
        os.write(self.fd, ("host=%s\npid=%d\nstarted=2026-12-05T10:00:00Z\ncommand=holder\n"
                           % (os.uname().nodename, os.getpid())).encode())

    def release(self):
        os.close(self.fd)


def test_locked():
    out = os.path.join(WORK, "locked")
    h = Holder(out)
    t = time.time()
    r = run("run", SLOW, "--out", out, "--quiet")
    dt = time.time() - t
    h.release()
    check(r.returncode == 1, "locked folder: exit 1 (got %d)" % r.returncode)
    check("locked by another run" in r.stderr and ("pid %d" % os.getpid()) in r.stderr
          and "2026-12-05T10:00:00Z" in r.stderr, "locked folder: the holder's pid and start time: %s" % r.stderr.strip())
    check(dt < 1.0, "locked folder: refused before computing (%.2f s)" % dt)


def dead_pid():
    p = subprocess.Popen(["true"])
    p.wait()
    return p.pid


def test_stale_lock():
    out = os.path.join(WORK, "stale")
    os.makedirs(out, exist_ok=True)
    pid = dead_pid()
    with open(os.path.join(out, ".shoreward.lock"), "w") as f:
        f.write("host=%s\npid=%d\nstarted=2026-12-01T00:00:00Z\ncommand=gone\n" % (os.uname().nodename, pid))
    quick = basin("quick.scn", 60, 50, 1, "10 min")
    r = run("run", quick, "--out", out, "--quiet")
    check(r.returncode == 0, "stale lock: the run goes on (exit %d: %s)" % (r.returncode, r.stderr.strip()))
    check("took over the stale lock" in r.stderr and ("pid %d" % pid) in r.stderr,
          "stale lock: a note names the dead pid: %s" % r.stderr.strip())
    check(not leftovers(out), "stale lock: no lock, staging or .part left (%s)" % leftovers(out))
    ok, why = complete_set(out)
    check(ok, "stale lock: a complete set (%s)" % why)


def test_two_at_once():
    out = os.path.join(WORK, "two")
    scn = basin("two.scn", 200, 150, 1, "2 h")
    ps = [subprocess.Popen([BIN, "run", scn, "--out", out, "--quiet"], stdout=subprocess.PIPE,
                           stderr=subprocess.PIPE, text=True) for _ in range(2)]
    res = [(p.wait(timeout=300), p.stderr.read()) for p in ps]
    codes = sorted(c for c, _ in res)
    check(codes == [0, 1], "two runs into one folder: one runs, one is refused (exit codes %s)" % codes)
    refused = [e for c, e in res if c == 1]
    check(bool(refused) and "locked by another run" in refused[0],
          "two runs: the refused one names the lock: %s" % (refused[0].strip() if refused else ""))
    ok, why = complete_set(out)
    check(ok, "two runs: one complete set (%s)" % why)
    check(not leftovers(out), "two runs: nothing left over (%s)" % leftovers(out))


def test_full_disk():
    fs = os.path.join(WORK, "fulldisk")
    if not mount_tmpfs(fs, "size=24m"):
        skip("full disk: cannot mount a tmpfs (not root); run as root (CI does) to check it")
        return
    out = os.path.join(fs, "out")
    scn = basin("disk.scn", 400, 300, 1, "1 h")
    r = run("run", scn, "--out", out, "--quiet")
    check(r.returncode == 0, "full disk: the first run writes its set (%s)" % r.stderr.strip())
    before = digests(out)
    check("maps.nc" in before and "gauges.nc" in before and "run.json" in before,
          "full disk: gauges.nc, maps.nc and run.json (%s)" % sorted(before))

    # 1. too little room left already: refused before computing, with both figures
    filler = os.path.join(fs, "filler")
    st = os.statvfs(fs)
    with open(filler, "wb") as f:
        f.write(b"\0" * max(0, st.f_bavail * st.f_frsize - 2 * 1024 * 1024))
    t = time.time()
    r = run("run", scn, "--out", out, "--quiet")
    dt = time.time() - t
    check(r.returncode == 1 and "no space left" in r.stderr and "free" in r.stderr,
          "full disk, known before: exit 1 and 'no space left' with the figures: %s" % r.stderr.strip())
    check(dt < 1.0, "full disk, known before: refused before computing (%.2f s)" % dt)
    check(digests(out) == before, "full disk, known before: the previous set is unchanged")
    os.remove(filler)

    # 2. the disk fills while the run computes: the write fails, exit 1, no crash
    p = subprocess.Popen([BIN, "run", scn, "--out", out], stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    for line in p.stdout:      # the plan is printed after the checks, before the first step
        if line.startswith("CAUTION"):
            break
    st = os.statvfs(fs)
    with open(filler, "wb") as f:   # 256 kB left: the files are created, maps.nc's data does not fit
        try:
            f.write(b"\0" * max(0, st.f_bavail * st.f_frsize - 256 * 1024))
        except OSError:
            pass
    _, err = p.communicate(timeout=300)
    check(p.returncode == 1, "full disk during the run: exit 1, no crash (got %d)" % p.returncode)
    check("no space left" in err, "full disk during the run: 'no space left': %s" % err.strip())
    check("out/" in err and ".nc" in err, "full disk during the run: the message names the file")
    check(digests(out) == before, "full disk during the run: the previous set's checksums are unchanged")
    check(not leftovers(out), "full disk during the run: no staging, lock or .part left (%s)" % leftovers(out))
    ok, why = complete_set(out)
    check(ok, "full disk during the run: the previous set is still complete (%s)" % why)
    os.remove(filler)


def test_sigkill():
    out = os.path.join(WORK, "killed")
    small = basin("kill-small.scn", 60, 50, 1, "10 min")
    r = run("run", small, "--out", out, "--quiet")
    check(r.returncode == 0, "SIGKILL: the first run writes its set")
    before = digests(out)
    big = basin("kill-big.scn", 2400, 1800, 0.5, "2 min")   # 4.3 M cells: a maps.nc that takes a while
    p = subprocess.Popen([BIN, "run", big, "--out", out, "--quiet"], stdout=subprocess.DEVNULL,
                         stderr=subprocess.DEVNULL)
    part = os.path.join(out, ".staging-%d" % p.pid, "maps.nc.part")
    t_end = time.time() + 300
    caught = False
    while p.poll() is None and time.time() < t_end:
        if os.path.exists(part):
            caught = True
            break
        time.sleep(0.002)
    p.kill()
    p.wait()
    if not caught:
        print("     (maps.nc.part was not seen before the run ended; killed at the end of the run instead)")
    check(caught, "SIGKILL: killed while maps.nc was being written")
    check(digests(out) == before, "SIGKILL: the previous set's checksums are unchanged")
    ok, why = complete_set(out)
    check(ok, "SIGKILL: the previous set is still complete (%s)" % why)
    r = run("run", small, "--out", out, "--quiet")
    check(r.returncode == 0 and "took over the stale lock" in r.stderr,
          "SIGKILL: the next run takes over the dead run's lock: %s" % r.stderr.strip())
    check(not leftovers(out), "SIGKILL: the next run removed the dead run's staging folder (%s)" % leftovers(out))


def test_plot_checks_the_set():
    """tools/plot draws a complete set and refuses a folder whose run.json does not match its files."""
    plot = os.path.join(os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__)))), "tools", "plot")
    out = os.path.join(WORK, "plotted")
    r = run("run", basin("plot.scn", 60, 50, 1, "10 min"), "--out", out, "--quiet")
    check(r.returncode == 0, "plot: a run to draw")
    r = subprocess.run(["/usr/bin/python3", plot, out], capture_output=True, text=True)
    check(r.returncode == 0, "plot: a complete set is drawn (%s)" % r.stderr.strip()[-200:])
    with open(os.path.join(out, "maps.nc"), "ab") as f:
        f.write(b"x")
    r = subprocess.run(["/usr/bin/python3", plot, out], capture_output=True, text=True)
    check(r.returncode == 1 and "not a complete set" in r.stderr, "plot: a changed maps.nc is refused: %s"
          % r.stderr.strip())


def test_memory_limit():
    huge = basin("huge.scn", 4000, 4000, 0.5, "1 h")   # 16 M cells, ~2 GB in double precision (125 bytes a cell)
    limit = 1000 * 1024 * 1024

    def cap():
        resource.setrlimit(resource.RLIMIT_AS, (limit, limit))

    out = os.path.join(WORK, "memory")
    t = time.time()
    r = subprocess.run([BIN, "run", huge, "--out", out, "--quiet"], capture_output=True, text=True, preexec_fn=cap)
    dt = time.time() - t
    if "Sanitizer" in r.stderr:   # ASan reserves terabytes of shadow address space: it cannot start under RLIMIT_AS
        skip("memory limit: a sanitizer build cannot run under an address-space limit")
        return
    check(r.returncode == 1, "memory limit: exit 1 (got %d)" % r.returncode)
    check("needs" in r.stderr and "GB" in r.stderr and "RLIMIT_AS" in r.stderr,
          "memory limit: refused with the figures and the limit: %s" % r.stderr.strip())
    check(dt < 10, "memory limit: refused before any step (%.1f s)" % dt)
    check(not os.path.isdir(out) or not os.listdir(out), "memory limit: no output")


if __name__ == "__main__":
    try:
        test_read_only()
        test_locked()
        test_stale_lock()
        test_two_at_once()
        test_full_disk()
        test_sigkill()
        test_plot_checks_the_set()
        test_memory_limit()
    finally:
        for m in reversed(MOUNTS):
            subprocess.run(["umount", m])
    print("%d failed" % len(FAILURES))
    sys.exit(1 if FAILURES else 0)
