#!/usr/bin/python3
"""Threads on a busy machine (issue 18, part 6): with one of the run's two CPUs kept busy by another
program, the plan's Threads line and the summary name the busy core and the choice (threads, waiting), and
what the user sets wins: --threads, OMP_NUM_THREADS, OMP_WAIT_POLICY, SHOREWARD_THREADS_AUTO=off.

The program and the busy loop are pinned (sched_setaffinity) to two CPUs of this machine, one of them the
busy loop's, so the test holds on any machine with two CPUs or more, however loaded by other tests: the
busy CPU is never idle, so at least one core counts as busy. Timings are not tests: the wall time of each
run is printed, never compared. On a machine with one CPU the test is skipped (exit 0).

Passive waiting is set by executing the program again with OMP_WAIT_POLICY=passive (libgomp reads it
before main; base/cpu_share.h); OMP_DISPLAY_ENV=verbose makes libgomp print its settings at each start,
so the restart and the spin count it took are seen on stderr.

A long run follows the load (README "Threads on a busy machine"): it starts with 2 threads, a busy loop pinned
to one of its CPUs starts a second in, and the run must say it went to 1 thread (the summary's Threads line,
the JSON's run.threads_changes / threads_min / threads_changed) and write the same bits as the same run on
--threads 1 (every variable of gauges.nc, maps.nc and snapshots.nc, and the JSON gauge table): results never
depend on the thread count. The start's choice is fixed to "2 threads, all 2 cores free" through
SHOREWARD_CPU_SHARE (the variable that carries a choice across the restart, base/cpu_share.h), so that the
test does not depend on what else the machine runs when the run starts; the re-measuring during the run is
the real one. A second such run, with --json and --steps-per-sweep 4, starts with the busy loop already
running and covers the sweeps of several steps. Whether the run goes back to 2 threads once the loop ends is
printed, not tested (other programs may hold the core).

The scenarios are fictional (invented coasts, no real place).

usage: test_busy.py SHOREWARD_BINARY WORK_DIR
"""
import json
import os
import numpy as np
import re
import shutil
import subprocess
import sys
import time

from netCDF4 import Dataset
from swtest import BIN, FAILURES, RUN_TIMEOUT_S, WORK, check

shutil.rmtree(WORK, ignore_errors=True)
os.makedirs(WORK)

SCENARIO = """; a small fictional coast for the busy-machine test
[run]
title = busy machine test (fictional)
duration = 10 min
arrival_threshold = 0.01 m
[grid]
nx = 120
ny = 90
dx = 500 m
[edges]
all = open
[seabed]
deep = 500 m
coast = east
shoreline = 50 km
shelf_width = 8 km
shelf_depth = 50 m
slope_width = 5 km
[source s]
shape = hump
x = 15 km
y = 22 km
amplitude = 1 m
radius = 3 km
[gauges]
Istelbrac Point = 40 km, 22 km
"""
scn = os.path.join(WORK, "busy.scn")
with open(scn, "w") as f:
    f.write(SCENARIO)

cpus = sorted(os.sched_getaffinity(0))
if len(cpus) < 2:
    print("skipped: this process may run on %d CPU only; the test needs 2" % len(cpus))
    sys.exit(0)
BUSY_CPU, FREE_CPU = cpus[0], cpus[1]
PAIR = {BUSY_CPU, FREE_CPU}


def clean_env(**extra):
    """The environment without the variables the choice reads, plus extra."""
    env = {k: v for k, v in os.environ.items()
           if k not in ("OMP_NUM_THREADS", "OMP_WAIT_POLICY", "GOMP_SPINCOUNT", "OMP_DISPLAY_ENV",
                        "SHOREWARD_THREADS_AUTO", "SHOREWARD_CPU_SHARE")}
    env.update(extra)
    return env


def shoreward(label, args, env):
    """Runs the program pinned to the two CPUs; prints and returns (result, wall seconds)."""
    t0 = time.monotonic()
    r = subprocess.run([BIN, *args], capture_output=True, text=True, env=env, timeout=RUN_TIMEOUT_S,
                       preexec_fn=lambda: os.sched_setaffinity(0, PAIR))
    wall = time.monotonic() - t0
    print("     %-44s exit %d, wall %.2f s" % (label, r.returncode, wall))
    return r, wall


def threads_line(text):
    """(count, reason) of the plan's "Threads    N (reason)" line, or (None, '')."""
    m = re.search(r"^Threads +(\d+)(?: \((.*)\))?$", text, re.M)
    return (int(m.group(1)), m.group(2) or "") if m else (None, "")


def summary_reason(text):
    m = re.search(r"^Threads: (.*)$", text, re.M)
    return m.group(1) if m else ""


def spin_counts(stderr):
    """GOMP_SPINCOUNT of each libgomp start shown by OMP_DISPLAY_ENV=verbose, in order."""
    return re.findall(r"GOMP_SPINCOUNT = '(\d+)'", stderr)


def cpu_ticks(pid):
    with open("/proc/%d/stat" % pid) as f:
        fields = f.read().rsplit(")", 1)[1].split()
    return int(fields[11]) + int(fields[12])   # utime + stime (proc(5): fields 14 and 15)


# Quiet or not, first a reference run with the choice off (the wall times are only printed).
print("CPUs %d (busy loop) and %d; the program is pinned to both" % (BUSY_CPU, FREE_CPU))
r, wall_off_quiet = shoreward("before the busy loop, choice off, 2 threads", ["run", scn, "--out",
                              os.path.join(WORK, "o0"), "--threads", "2"], clean_env(SHOREWARD_THREADS_AUTO="off"))
check(r.returncode == 0, "a run before the busy loop exits 0")

spinner = subprocess.Popen(["/usr/bin/python3", "-c", "while True: pass"],
                           preexec_fn=lambda: os.sched_setaffinity(0, {BUSY_CPU}))
try:
    deadline = time.monotonic() + 30
    while cpu_ticks(spinner.pid) < 2 and time.monotonic() < deadline:   # it is running (2 ticks of CPU)
        time.sleep(0.01)
    check(cpu_ticks(spinner.pid) >= 2, "the busy loop runs on CPU %d" % BUSY_CPU)

    # 1. the automatic choice: one thread, and why
    r, wall_auto = shoreward("busy, automatic", ["run", scn, "--out", os.path.join(WORK, "o1")], clean_env())
    n, why = threads_line(r.stdout)
    check(r.returncode == 0, "automatic: the run exits 0")
    check(n == 1, "automatic: the plan says 1 thread (got %s: %r)" % (n, why))
    check(re.search(r"\b[12](\.\d)? of 2 cores busy with other work", why) is not None,
          "automatic: the plan names the busy core: %r" % why)
    check("with 1 thread " in r.stdout and "busy with other work" in summary_reason(r.stdout),
          "automatic: the summary says 1 thread and why: %r" % summary_reason(r.stdout))
    check("passive" not in why, "automatic: one thread waits for nobody (no passive waiting named)")
    r, _ = shoreward("busy, automatic, --json", ["run", scn, "--out", os.path.join(WORK, "o1j"), "--json"],
                     clean_env())
    js = json.loads(r.stdout)["run"] if r.returncode == 0 else {}
    check(js.get("threads") == 1 and "busy with other work" in js.get("threads_reason", ""),
          "automatic: the JSON summary gives the threads and why: %r" % js.get("threads_reason"))

    # 2. --threads wins; more threads than free cores: passive waiting, through a restart
    r, wall_t2 = shoreward("busy, --threads 2", ["run", scn, "--out", os.path.join(WORK, "o2"), "--threads", "2"],
                           clean_env(OMP_DISPLAY_ENV="verbose"))
    n, why = threads_line(r.stdout)
    check(r.returncode == 0, "--threads 2: the run exits 0")
    check(n == 2 and why.startswith("set by --threads") and "busy with other work" in why
          and why.endswith("passive waiting"), "--threads 2: 2 threads, busy core, passive waiting: %r" % why)
    counts = spin_counts(r.stderr)
    check(len(counts) == 2 and counts[-1] == "0",
          "--threads 2: the program started again and libgomp took passive waiting (spin counts %s)" % counts)
    check("with 2 threads " in r.stdout and summary_reason(r.stdout) == why,
          "--threads 2: the summary has the same reason")

    # 3. OMP_NUM_THREADS wins the same way
    r, _ = shoreward("busy, OMP_NUM_THREADS=2", ["run", scn, "--out", os.path.join(WORK, "o3"), "--quiet"],
                     clean_env(OMP_NUM_THREADS="2"))
    check(r.returncode == 0 and "with 2 threads " in r.stdout and
          summary_reason(r.stdout).startswith("set by OMP_NUM_THREADS") and "passive waiting" in r.stdout,
          "OMP_NUM_THREADS=2: 2 threads, passive waiting: %r" % summary_reason(r.stdout))

    # 4. the user's OMP_WAIT_POLICY wins: no restart, the reason names it
    r, _ = shoreward("busy, --threads 2, OMP_WAIT_POLICY=passive",
                     ["run", scn, "--out", os.path.join(WORK, "o4"), "--threads", "2"],
                     clean_env(OMP_WAIT_POLICY="passive", OMP_DISPLAY_ENV="verbose"))
    n, why = threads_line(r.stdout)
    check(r.returncode == 0 and n == 2 and why.endswith("waiting as OMP_WAIT_POLICY=passive"),
          "OMP_WAIT_POLICY set by the user: named, kept: %r" % why)
    check(len(spin_counts(r.stderr)) == 1, "OMP_WAIT_POLICY set by the user: no restart (%d libgomp starts)"
          % len(spin_counts(r.stderr)))

    # 5. the switch off: OpenMP's defaults (both CPUs), said so
    r, wall_off = shoreward("busy, SHOREWARD_THREADS_AUTO=off", ["run", scn, "--out", os.path.join(WORK, "o5")],
                            clean_env(SHOREWARD_THREADS_AUTO="off", OMP_DISPLAY_ENV="verbose"))
    n, why = threads_line(r.stdout)
    check(r.returncode == 0 and n == 2 and "automatic choice off by SHOREWARD_THREADS_AUTO=off" in why,
          "SHOREWARD_THREADS_AUTO=off: all (2) threads, said so: %r" % why)
    check(len(spin_counts(r.stderr)) == 1, "SHOREWARD_THREADS_AUTO=off: no restart")

    # 6. a bad switch value is refused with the accepted values
    r, _ = shoreward("busy, SHOREWARD_THREADS_AUTO=maybe", ["run", scn, "--out", os.path.join(WORK, "o6")],
                     clean_env(SHOREWARD_THREADS_AUTO="maybe"))
    check(r.returncode == 2 and "SHOREWARD_THREADS_AUTO = 'maybe'" in r.stderr and "on and off" in r.stderr,
          "SHOREWARD_THREADS_AUTO=maybe: exit 2 naming the accepted values (%d: %s)"
          % (r.returncode, r.stderr.strip()[-200:]))
finally:
    spinner.kill()
    spinner.wait()

print("wall times (printed, not tested): quiet-or-not 2 threads %.2f s; busy: automatic %.2f s, --threads 2 "
      "passive %.2f s, choice off (2 threads spinning) %.2f s" % (wall_off_quiet, wall_auto, wall_t2, wall_off))

# 7. a long run follows the load: 2 threads at the start, 1 once a busy loop holds one of its CPUs
LONG = """; a larger fictional coast for the long run of the busy-machine test
[run]
title = busy machine long run (fictional)
duration = 300 min
arrival_threshold = 0.02 m
gauge_interval = 20 s
snapshot_interval = 50 min
[grid]
nx = 500
ny = 375
dx = 400 m
[edges]
all = open
east = wall
[seabed]
deep = 3000 m
coast = east
shoreline = 150 km
shelf_width = 30 km
shelf_depth = 120 m
slope_width = 20 km
land_height = 30 m
min_depth = 2 m
[source s]
shape = hump
x = 60 km
y = 75 km
amplitude = 1 m
radius = 15 km
[gauges]
Istelbrac Point = 145 km, 75 km
Offshore buoy = 100 km, 120 km
"""
long_scn = os.path.join(WORK, "long.scn")
with open(long_scn, "w") as f:
    f.write(LONG)
START_TWO = "v1 2 0 0 2 2.0000|all 2 cores free"   # SW_THREADS_AUTO, SW_WAIT_SPIN (sw_cpu_share_encode)
FILES = ("gauges.nc", "maps.nc", "snapshots.nc")


def raw(var):
    """The variable's stored values, unmasked and unscaled, as bytes."""
    var.set_auto_maskandscale(False)
    return np.ascontiguousarray(var[...]).tobytes()


def same_files(a, b, what):
    """Every variable of every output file holds the same bytes in folders a and b."""
    for name in FILES:
        with Dataset(os.path.join(a, name)) as x, Dataset(os.path.join(b, name)) as y:
            diff = [v for v in x.variables if v not in y.variables or raw(x[v]) != raw(y[v])]
            check(set(x.variables) == set(y.variables) and not diff,
                  "%s: %s's %d variables bit for bit equal to --threads 1's%s"
                  % (what, name, len(x.variables), " (differ: " + ", ".join(diff) + ")" if diff else ""))


def start_spinner():
    p = subprocess.Popen(["/usr/bin/python3", "-c", "while True: pass"],
                         preexec_fn=lambda: os.sched_setaffinity(0, {BUSY_CPU}))
    return p


def long_run(label, out, extra, spin_from_s):
    """The long run pinned to the two CPUs with the start's choice fixed to 2 threads; the busy loop starts
    spin_from_s seconds after it (0: before it) and is stopped when the run ends. Returns (result, wall s)."""
    spinner = start_spinner() if spin_from_s <= 0 else None
    t0 = time.monotonic()
    p = subprocess.Popen([BIN, "run", long_scn, "--out", out, *extra], stdout=subprocess.PIPE,
                         stderr=subprocess.PIPE, text=True, env=clean_env(SHOREWARD_CPU_SHARE=START_TWO),
                         preexec_fn=lambda: os.sched_setaffinity(0, PAIR))
    try:
        if spinner is None:
            time.sleep(spin_from_s)
            spinner = start_spinner()
        stdout, stderr = p.communicate(timeout=RUN_TIMEOUT_S)
    finally:
        spinner.kill()
        spinner.wait()
        if p.poll() is None:
            p.kill()
            p.wait()
    wall = time.monotonic() - t0
    print("     %-44s exit %d, wall %.2f s" % (label, p.returncode, wall))
    return subprocess.CompletedProcess(p.args, p.returncode, stdout, stderr), wall


r, wall_follow = long_run("long, 2 threads, busy loop from 1 s", os.path.join(WORK, "l1"), [], 1.0)
line = summary_reason(r.stdout)
print("     summary: Threads: %s" % line)
check(r.returncode == 0, "long run: exits 0 (%s)" % r.stderr.strip()[-300:])
check(re.match(r"2 \(all 2 cores free\), then 1 from t = [0-9hmins ]+ \(another program took a core\)", line)
      is not None, "long run: the summary says 2 threads, then 1 from a time, and why: %r" % line)
r, wall_one = shoreward("long, --threads 1 (the reference)", ["run", long_scn, "--out", os.path.join(WORK, "l0"),
                        "--threads", "1", "--json"], clean_env())
ref = json.loads(r.stdout) if r.returncode == 0 else {}
check(r.returncode == 0 and ref["run"]["threads_changes"] == 0 and ref["run"]["threads_min"] == 1
      and ref["run"]["threads_max"] == 1 and ref["run"]["threads_changed"] == [],
      "--threads 1: never changes (threads_changes 0, threads_changed [])")
same_files(os.path.join(WORK, "l1"), os.path.join(WORK, "l0"), "long run")

r, wall_json = long_run("long, --json, --steps-per-sweep 4, busy loop first", os.path.join(WORK, "l2"),
                        ["--json", "--steps-per-sweep", "4"], 0)
js = json.loads(r.stdout) if r.returncode == 0 else {}
run = js.get("run", {})
print("     run: threads %s, changes %s, min %s, max %s, changed %s" % (run.get("threads"), run.get(
    "threads_changes"), run.get("threads_min"), run.get("threads_max"), run.get("threads_changed")))
ch = run.get("threads_changed", [])
check(r.returncode == 0 and run.get("threads") == 2 and run.get("threads_changes", 0) >= 1
      and run.get("threads_min") == 1 and run.get("threads_max") == 2 and ch and ch[0]["threads"] == 1
      and 0 < ch[0]["time_s"] < run["end_time_s"] and ch[0]["wall_s"] > 0
      and len(ch) == min(run["threads_changes"], 4) and run.get("steps_per_sweep") == 4,
      "long run --json: from 2 threads to 1 (threads_changes >= 1, threads_min 1, threads_changed[0] at a time "
      "inside the run), 4 steps per sweep")
same_files(os.path.join(WORK, "l2"), os.path.join(WORK, "l0"), "long run, 4 steps per sweep")
check(js.get("gauges") == ref.get("gauges"), "long run --json: the gauge table equals --threads 1's")

print("wall times (printed, not tested): long run following the load %.2f s (busy loop from 1 s), --threads 1 "
      "%.2f s (quiet or not), following the load with the busy loop from the start %.2f s"
      % (wall_follow, wall_one, wall_json))
if FAILURES:
    print("\n%d check(s) failed" % len(FAILURES))
    sys.exit(1)
print("\nall checks passed")
