#!/usr/bin/python3
"""Several steps per sweep through the command line: `shoreward run SCENARIO --steps-per-sweep K`.

usage: test_wave_run.py SHOREWARD_BINARY WORK_DIR

The claim (README "Several steps per pass over memory"): gauges.nc, maps.nc and snapshots.nc are the same
bits whatever the schedule and the thread count. The reference is the program itself, run with
--steps-per-sweep 1 ([derived]: the wavefront computes every value from the same inputs in the same order
as the one-step sweep, DEVELOPERS.md "Several steps per sweep"). tests/unit/test_wave.c holds the model to
it; this test holds the whole run, observers and writers included. Every basin below is fictional.

Checks:
  - every layout A..E, each with wall, open and level edges on different sides, in double and single
    precision: K = 2, 3, 7, 16 on 1 and 2 threads (a covering set of the pairs, not every combination)
    against K = 1; every variable of the three files byte for byte, their attributes (but `history`, the
    command line), and the summary's gauge table (first arrival, peak, trough and their times, which no
    file holds) and volumes. The gauges sit on many rows: at a cell centre's row, between two rows, inside
    the first and last half cell (south and north edges), beside the west and east edges, two on one row,
    one on land and two beside the island (stencils partly dry). Sample and snapshot intervals are not
    multiples of dt (so sweeps are cut at them), and long enough in some basins for whole 16-step sweeps;
    the arrival threshold is low, so that arrivals happen inside sweeps;
  - periodic west-east with open and level south-north edges, f-plane rotation and quadratic friction;
  - a rupture in time (a fault with a rise time: single steps first, then sweeps);
  - the demo storm (surface forcing: every step of a sweep its own slab weight, sweeps cut where the
    storm's next slabs begin), K = 5, 6, 7, 16, both precisions; a tide held by level edges (a level
    series: every step its own edge level), K = 7 and 16;
  - a checkpointed run stopped by SIGTERM midway and resumed with another K and thread count: the same
    bits as the reference;
  - the plan's Schedule line says "asked for" with K > 1; with periodic south and north edges it says one
    step per sweep and why, even with --steps-per-sweep 5, and the files still match; run --json has
    run.steps_per_sweep and run.schedule; check --json has steps_per_sweep and schedule;
  - --steps-per-sweep 0, 17, abc, 2.5, -1, an empty and a missing value: exit 2 (cli_usage_error) with one
    line naming the option and the range 1 to 16, and no output folder;
  - the comparison can fail: a run whose arrival threshold differs by a tenth is found to differ in
    arrival_time alone, and in the gauge table;
  - the coverage the claims above rely on: where the gauges' stencils fall (rows, land, edges), that some
    basins allow whole 16-step sweeps and others cut them short, and that most arrivals and peaks in the
    runs with K >= 7 are seen inside a sweep ([derived] from run.c's sweep_steps).
The gauge table matters: on a copy of the program whose wavefront gap was too small (checked by hand, not
committed), 14 of the 23 failing comparisons had identical files and differed in the table alone.
A blow-up is not tried: the command line cannot make one (courant_fraction <= 1, a dt beyond the limit is
refused, amplitudes and depths are range-checked); tests/unit/test_blowup.c forces it through the library.
"""
import json
import os
import re
import shutil
import signal
import subprocess
import sys
import time

import numpy as np
from netCDF4 import Dataset

from swtest import BIN, FAILURES, WORK, check, run

T_START = time.time()
os.makedirs(WORK, exist_ok=True)
# `check` caches its rate; ctest sets the folder, a run by hand keeps it in the scratch folder
os.environ.setdefault("SHOREWARD_CACHE_DIR", os.path.join(WORK, "rate-cache"))
FILES = ("gauges.nc", "maps.nc", "snapshots.nc")
KS = (2, 3, 7, 16)

# A fictional basin of 60 x 80 cells: an island (land, and partly dry stencils beside it) and a shoal;
# the source is off-centre so that the wave reaches every edge within the run. {terms} adds rotation and
# friction. The gauges' rows (dy = 1 km, centres at 0.5, 1.5, ... km): Istelbrac Point in the first half
# cell (row 0 alone), Brisquelle Head in the last (row 79 alone), Port Vantrebel on row 40's centre
# (weight 0 on row 41), the others between two rows; Tervelka Quay and Tervelka Cove share rows 32-33;
# Pellquin Stack is on the island's land; Pellquin Rock and Dravonne Pier beside it.
BASIN = """; Lonquessa Bay - a FICTIONAL basin for tests/py/test_wave_run.py; every name is invented.
[run]
title = Lonquessa Bay (fictional) - {what}
duration = {duration}
layout = {layout}
courant_fraction = 0.9
gauge_interval = {gauge_interval}
snapshot_interval = {snapshot_interval}
arrival_threshold = {threshold}
{terms}
[grid]
nx = 60
ny = 80
dx = 1 km

[edges]
west = {west}
east = {east}
south = {south}
north = {north}

[seabed]
deep = {deep}
min_depth = 2 m

[island Pellquin Stack]
x = 30.5 km
y = 50.5 km
radius = 4 km
height = 3000 m

[shoal Kervallo Bank]
x = 45 km
y = 20 km
radius = 4 km
crest = 15 m
{source}
[gauges]
Istelbrac Point = 12 km, 0.2 km
Brisquelle Head = 47 km, 79.8 km
Port Vantrebel = 20.5 km, 40.5 km
Fennikar Quay = 8 km, 12 km
Fennikar Deep = 52 km, 61.3 km
Oskeldrun Reach = 33 km, 70.7 km
Oskeldrun Post = 40 km, 5.9 km
Ravelquist Weir = 25 km, 27.75 km
Trevolsk Ground = 15 km, 55.1 km
Kervallo Bank = 45 km, 20.2 km
Tervelka Quay = 5 km, 33.3 km
Tervelka Cove = 55 km, 33.2 km
Lonquessa Bay = 0.3 km, 66 km
Brevanquil Flats = 59.7 km, 44 km
Pellquin Stack = 30.5 km, 50.5 km
Pellquin Rock = 35.2 km, 50.5 km
Dravonne Pier = 30.5 km, 45.6 km
"""

HUMP = """
[source rise]
shape = hump
x = 18 km
y = 30 km
amplitude = 1 m
radius = 6 km
"""

# A thrust under the basin that slips over 2 minutes: single steps while the floor moves (run.c
# rupture_step), sweeps after.
FAULT = """
[fault slow slip]
x = 22 km
y = 35 km
depth = 2 km
length = 20 km
width = 8 km
strike = 10
dip = 20
rake = 90
slip = 3 m
start = 0 s
rise = 2 min
"""


def basin(what, layout, edges, duration="40 min", gauge_interval="250 s", snapshot_interval="410 s",
          threshold="0.001 m", terms="", deep="1000 m", source=HUMP):
    west, east, south, north = edges
    return BASIN.format(what=what, layout=layout, duration=duration, gauge_interval=gauge_interval,
                        snapshot_interval=snapshot_interval, threshold=threshold, terms=terms, west=west,
                        east=east, south=south, north=north, deep=deep, source=source)


def write(name, text):
    path = os.path.join(WORK, name)
    with open(path, "w") as f:
        f.write(text)
    return path


def raw(var):
    """The variable's stored values, unmasked and unscaled, as bytes."""
    var.set_auto_maskandscale(False)
    return np.ascontiguousarray(var[...]).tobytes()


def attrs(obj, skip=()):
    """An object's attributes as comparable values (arrays as their bytes and type)."""
    out = {}
    for k in obj.ncattrs():
        if k in skip:
            continue
        v = obj.getncattr(k)
        out[k] = v if isinstance(v, str) else (np.asarray(v).dtype.str, np.asarray(v).tobytes())
    return out


def file_differences(a, b):
    """What differs between the output files of folders a and b: ["maps.nc:arrival_time", ...]
    (variables by their bytes, type and shape; attributes; global attributes but `history`)."""
    diff = []
    for name in FILES:
        with Dataset(os.path.join(a, name)) as x, Dataset(os.path.join(b, name)) as y:
            if set(x.variables) != set(y.variables):
                diff.append(f"{name}: variables {sorted(set(x.variables) ^ set(y.variables))}")
            for v in x.variables:
                if v not in y.variables:
                    continue
                p, q = x[v], y[v]
                if p.dtype != q.dtype or p.shape != q.shape or raw(p) != raw(q):
                    diff.append(f"{name}:{v}")
                elif attrs(p) != attrs(q):
                    diff.append(f"{name}:{v} attributes")
            if attrs(x, ("history",)) != attrs(y, ("history",)):
                diff.append(f"{name}: global attributes")
    return diff


def summary_differences(a, b):
    """What differs between two run --json summaries in what the run computed: the gauge table (JSON
    numbers carry 17 digits, so equal floats are equal bits) and the run's steps, end time and volumes."""
    diff = [f"gauge {g['name']}" for g, h in zip(a["gauges"], b["gauges"]) if g != h]
    if len(a["gauges"]) != len(b["gauges"]):
        diff.append("gauge count")
    diff += [f"run.{k}" for k in ("steps", "end_time_s", "volume_start_m3", "volume_end_m3")
             if a["run"][k] != b["run"][k]]
    return diff


def run_json(scn, out, k, threads, precision="double"):
    """Runs scn into a new folder out with --steps-per-sweep k and --json; returns (exit status, summary or
    None, stderr)."""
    shutil.rmtree(out, ignore_errors=True)
    r = run("run", scn, "--out", out, "--threads", str(threads), "--precision", precision, "--json",
            "--steps-per-sweep", str(k))
    summary = None
    if r.returncode == 0:
        try:
            summary = json.loads(r.stdout)
        except ValueError:
            pass
    return r.returncode, summary, r.stderr


COVERAGE = []   # (scenario, precision, dt, steps, samples, snapshots): printed at the end
INSIDE = []     # (gauge arrivals and peaks watched inside a sweep, of all) in runs with K >= 7


def seconds(text, key):
    """A scenario's `key = N s|min|h` in seconds (0 when absent)."""
    m = re.search(r"^%s = ([0-9.]+) (s|min|h)$" % key, text, re.M)
    return float(m.group(1)) * {"s": 1, "min": 60, "h": 3600}[m.group(2)] if m else 0.0


def sweep_ends(text, dt, n_steps, k):
    """The steps after which a run with K = k ends a sweep: run.c's sweep_steps, cut at each gauge sample
    and snapshot ([derived] from its comparisons; the first sample is at t = 0, the next at one interval)."""
    every = [v for v in (seconds(text, "gauge_interval"), seconds(text, "snapshot_interval")) if v > 0]
    nxt, ends, n = list(every), set(), 0
    while n < n_steps:
        q, kk = 1, min(k, n_steps - n)
        while q < kk and not any((n + q) * dt >= t - 1e-9 * e for t, e in zip(nxt, every)):
            q += 1
        n += q
        ends.add(n)
        for i, e in enumerate(every):
            while n * dt >= nxt[i] - 1e-9 * e:
                nxt[i] += e
    return ends


def compare_set(tag, scn, precision, ref_threads, variants):
    """The reference run (K = 1 on ref_threads) of scn, then each (K, threads) of variants against it:
    a check per variant. Returns the reference's folder and summary."""
    ref = os.path.join(WORK, f"{tag}-{precision}-ref")
    code, base, err = run_json(scn, ref, 1, ref_threads, precision)
    check(code == 0 and base is not None and base["run"]["steps_per_sweep"] == 1,
          f"{tag} {precision}: the reference run, K = 1 on {ref_threads} thread(s)"
          f"{'' if code == 0 else ' (exit ' + str(code) + ': ' + err.strip()[-300:] + ')'}")
    if base is None:
        return ref, None
    dt = base["dt_s"]
    COVERAGE.append((tag, precision, dt, base["steps"], base["gauge_samples"], base["snapshots"]))
    for k, threads in variants:
        out = os.path.join(WORK, f"{tag}-{precision}-k{k}-t{threads}")
        code, got, err = run_json(scn, out, k, threads, precision)
        if code != 0 or got is None:
            check(False, f"{tag} {precision}: K = {k} on {threads} thread(s) ran (exit {code}: {err.strip()[-300:]})")
            continue
        diff = file_differences(ref, out) + summary_differences(base, got)
        sched = got["run"]["steps_per_sweep"] == k and "asked for" in got["run"]["schedule"]
        text = open(scn).read()
        if k >= 7 and "[fault" not in text:   # the steps at which arrivals and peaks were seen: sweeps' ends?
            ends = sweep_ends(text, dt, base["steps"], k)
            seen = [g for g in got["gauges"] if g["arrival_s"] is not None]   # not on land, reached
            steps = [int(np.ceil(g["arrival_s"] / dt - 1e-6)) for g in seen] + \
                    [int(round(g["peak_time_s"] / dt)) for g in seen]
            steps = [q for q in steps if q > 0]   # not the initial state's
            INSIDE.append((sum(q not in ends for q in steps), len(steps)))
        check(sched and not diff,
              f"{tag} {precision}: K = {k} on {threads} thread(s): the 3 files and the gauge table bit for bit "
              f"K = 1's{'' if sched else ' (run.steps_per_sweep ' + str(got['run']['steps_per_sweep']) + ')'}"
              f"{' (differ: ' + ', '.join(diff) + ')' if diff else ''}")
    return ref, base


def placement(ref, summary):
    """Where the gauges of a run sit: their stencils as gauges.c builds them ([derived] from its
    axis_weights: rows j0 and j0 + 1 around the centre below, one row within half a cell of an edge),
    against the wet mask in ref/maps.nc."""
    with Dataset(os.path.join(ref, "maps.nc")) as d:
        wet, x, y = d["wet"][...], d["x"][...], d["y"][...]
    dx, dy, ny = float(x[1] - x[0]), float(y[1] - y[0]), len(y)
    top, rows_of, out = [], {}, {"straddle": 0, "partly_dry": 0}
    for g in summary["gauges"]:
        p = g["y_m"] / dy - 0.5
        j0 = 0 if p <= 0 else min(int(np.floor(p)), ny - 1)
        j1 = j0 if p <= 0 or p >= ny - 1 else j0 + 1
        i0 = max(int(np.floor(g["x_m"] / dx - 0.5)), 0)
        cells = [wet[j, i] for j in (j0, j1) for i in (i0, min(i0 + 1, wet.shape[1] - 1))]
        top.append(j1)
        rows_of.setdefault(j1, []).append(g["name"])
        out["straddle"] += j1 > j0 and p != np.floor(p)
        out["partly_dry"] += 0 < sum(bool(c) for c in cells) < 4
    out["rows"] = len(set(top))
    out["south"] = [g["name"] for g, t in zip(summary["gauges"], top) if t == 0]
    out["north"] = [g["name"] for g, t in zip(summary["gauges"], top) if t == ny - 1]
    out["on_land"] = [g["name"] for g in summary["gauges"] if g["on_land"]]
    out["shared"] = [v for v in rows_of.values() if len(v) > 1]
    return out


# ---- every layout, its own set of edges; double and single precision ----------------------------------
# (west, east, south, north): each of wall, open and level appears on every side among the five
LAYOUTS = {
    "A": (("open", "wall", "level", "open"), "250 s", "410 s"),
    "B": (("wall", "open", "open", "level"), "47 s", "130 s"),
    "C": (("level", "open", "wall", "open"), "310 s", "275 s"),
    "D": (("open", "level", "open", "wall"), "100 s", "600 s"),
    "E": (("level", "wall", "level", "level"), "290 s", "333 s"),
}
for n, (layout, (edges, gi, si)) in enumerate(LAYOUTS.items()):
    scn = write(f"layout_{layout.lower()}.scn", basin(f"layout {layout}", layout, edges, gauge_interval=gi,
                                                      snapshot_interval=si))
    # double: every K, threads alternating (A and B together hold all 8 pairs of K and threads)
    pairs = [(k, 1 + (n + q) % 2) for q, k in enumerate(KS)]
    ref, base = compare_set(f"layout {layout}", scn, "double", 1 + n % 2, pairs)
    if layout == "A":
        ref_a, base_a = ref, base
    if layout == "A" and base:
        where = placement(ref, base)
        check(where["rows"] >= 14 and where["south"] and where["north"] and where["on_land"] == ["Pellquin Stack"]
              and where["partly_dry"] >= 2 and where["straddle"] >= 10 and where["shared"],
              f"the gauges watch {where['rows']} different top rows: {where['straddle']} stencils straddle two "
              f"rows, one in row 0 alone: {where['south']}, one in row 79 alone: {where['north']}, two share a "
              f"row: {where['shared']}; on land: {where['on_land']}; {where['partly_dry']} partly dry")
    # single: two of the Ks, one on each thread count
    compare_set(f"layout {layout}", scn, "single", 2 - n % 2, [(KS[n % 4], 2), (KS[(n + 2) % 4], 1)])

# ---- periodic west-east, open and level south-north, rotation and quadratic friction ------------------
TERMS = "rotation = f-plane\nlatitude = 48 deg\nfriction = quadratic\ndrag = 0.0025\n"
for n, (layout, south, north, precision) in enumerate((("B", "open", "level", "double"),
                                                      ("C", "level", "open", "single"),
                                                      ("E", "open", "open", "double"))):
    scn = write(f"periodic_{layout.lower()}.scn",
                basin(f"periodic west-east, layout {layout}", layout, ("periodic", "periodic", south, north),
                      duration="75 min", gauge_interval="530 s", snapshot_interval="470 s", terms=TERMS,
                      deep="60 m"))
    compare_set(f"periodic W-E {layout}", scn, precision, 2, [(16, 1), (7, 2), (3, 2 - n % 2)])

# ---- a rupture in time: single steps while the floor moves, then sweeps ------------------------------
scn = write("rupture.scn", basin("a rupture in time", "D", ("open", "wall", "level", "open"),
                                 gauge_interval="200 s", source=FAULT))
compare_set("rupture D", scn, "double", 1, [(7, 2), (16, 1)])

# ---- a storm: each step of a sweep takes its own slab weight; sweeps end where new slabs are needed ----
# The demo storm (scenarios/storm-demo.scn, fictional) over its first 70 minutes: the storm's slabs are 10 min
# apart and the gauges sample every 5 min, so sweeps are cut by both; K = 6 and 7 once cut a sweep at a
# sample without cutting it at the slab change before it (caught here, fixed in run.c sweep_steps).
HERE = os.path.dirname(os.path.abspath(__file__))
with open(os.path.join(HERE, "..", "..", "scenarios", "storm-demo.scn")) as f:
    storm = re.sub(r"(?m)^duration = .*$", "duration = 70 min\nsnapshot_interval = 7 min", f.read())
shutil.copy(os.path.join(HERE, "..", "..", "scenarios", "storm-demo-track.txt"), WORK)
scn = write("storm.scn", storm)
compare_set("storm C", scn, "double", 2, [(6, 1), (7, 2), (16, 1)])
compare_set("storm C", scn, "single", 1, [(5, 2)])

# a tide held by a level edge (a level series: every step of a sweep its own edge level); an invented tide
lines = ["# an invented tide for a fictional basin", "time[h] elevation[m]"]
lines += [f"{q / 12:.4f} {0.3 * np.sin(2 * np.pi * q / 12 / 1.3):.6f}" for q in range(0, 24)]
write("tide.txt", "\n".join(lines) + "\n")
scn = write("tide.scn", basin("a tide on a level edge", "E", ("level", "wall", "open", "level")).replace(
    "[edges]\n", "[edges]\nlevel_series = tide.txt\n", 1))
compare_set("tide E", scn, "double", 1, [(7, 2), (16, 1)])

# ---- the comparison can fail: a run that differs in the arrival threshold alone --------------------------
scn_a = os.path.join(WORK, "layout_a.scn")
other = write("layout_a_threshold.scn", open(scn_a).read().replace("arrival_threshold = 0.001 m",
                                                                   "arrival_threshold = 0.0011 m"))
code, planted, _ = run_json(other, os.path.join(WORK, "planted"), 7, 2)
if base_a and planted:
    fd = file_differences(ref_a, os.path.join(WORK, "planted"))
    sd = summary_differences(base_a, planted)
    fv = [d for d in fd if "attributes" not in d]   # the scenario text and the threshold are attributes too
    check(fv == ["maps.nc:arrival_time"] and "maps.nc: global attributes" in fd and sd
          and all(s.startswith("gauge ") for s in sd),
          f"a planted difference is found: arrival threshold 0.0011 m against 0.001 m differs in {fd} and in "
          f"{len(sd)} gauge rows of the table")
else:
    check(False, f"the planted-difference run ran (exit {code})")

# ---- the Schedule line, run --json and check --json ---------------------------------------------------
r = run("run", scn_a, "--out", os.path.join(WORK, "plan-k7"), "--threads", "2", "--steps-per-sweep", "7")
line = next((s for s in r.stdout.split("\n") if s.startswith("Schedule")), "")
check(r.returncode == 0 and re.match(r"Schedule +7 steps per sweep over memory \(asked for; the choice would be "
                                     r"\d+\)$", line) is not None,
      f"the plan's Schedule line with K = 7 says it was asked for: '{line}'")
r = run("run", scn_a, "--out", os.path.join(WORK, "plan-k1"), "--threads", "1", "--steps-per-sweep", "1")
line = next((s for s in r.stdout.split("\n") if s.startswith("Schedule")), "")
check(r.returncode == 0 and re.match(r"Schedule +one step per sweep over memory \(asked for\)$", line) is not None,
      f"the plan's Schedule line with K = 1 says one step, asked for: '{line}'")
r = run("run", scn_a, "--out", os.path.join(WORK, "plan-default"), "--threads", "2")
line = next((s for s in r.stdout.split("\n") if s.startswith("Schedule")), "")
check(r.returncode == 0 and "one step per sweep over memory" in line and "asked" not in line and "cache" in line,
      f"without --steps-per-sweep a small basin takes one step per sweep, since it stays in the cache: '{line}'")

r = run("check", scn_a, "--json")
try:
    plan = json.loads(r.stdout) if r.returncode == 0 else {}
except ValueError:
    plan = {}
check(isinstance(plan.get("steps_per_sweep"), int) and 1 <= plan["steps_per_sweep"] <= 16
      and isinstance(plan.get("schedule"), str) and "per sweep" in plan["schedule"],
      f"check --json has steps_per_sweep ({plan.get('steps_per_sweep')}) and schedule ('{plan.get('schedule')}')")
r = run("check", scn_a)
line = next((s for s in r.stdout.split("\n") if s.startswith("Schedule")), "")
check(r.returncode == 0 and re.match(r"Schedule +.*per sweep over memory.* \(on \d+ threads?\)$", line) is not None,
      f"check prints the Schedule line: '{line}'")

# periodic south and north: one step per sweep whatever is asked, and why; the files still match
scn_p = write("periodic_sn.scn", basin("periodic south-north", "D", ("open", "level", "periodic", "periodic"),
                                       gauge_interval="250 s"))
r = run("run", scn_p, "--out", os.path.join(WORK, "plan-sn"), "--threads", "2", "--steps-per-sweep", "5")
line = next((s for s in r.stdout.split("\n") if s.startswith("Schedule")), "")
check(r.returncode == 0 and "one step per sweep" in line and "south and north edges are periodic" in line,
      f"periodic south and north: the Schedule line says one step per sweep and why, even with "
      f"--steps-per-sweep 5: '{line}'")
ref_p, base_p = compare_set("periodic S-N D", scn_p, "double", 1, [])
out_p = os.path.join(WORK, "periodic-sn-k5")
code, got, err = run_json(scn_p, out_p, 5, 2)
if got and base_p:
    diff = file_differences(ref_p, out_p) + summary_differences(base_p, got)
    check(got["run"]["steps_per_sweep"] == 1 and "periodic" in got["run"]["schedule"] and not diff,
          f"periodic south and north with --steps-per-sweep 5: run.steps_per_sweep {got['run']['steps_per_sweep']}, "
          f"and the files are K = 1's{' (differ: ' + ', '.join(diff) + ')' if diff else ''}")
else:
    check(False, f"periodic south and north with --steps-per-sweep 5 ran (exit {code}: {err.strip()[-300:]})")

# ---- bad values of --steps-per-sweep: exit 2, one line naming the option and its range ----------------
for bad in (["0"], ["17"], ["abc"], ["2.5"], ["-1"], [""], [], ["--quiet"], ["=0"]):
    out = os.path.join(WORK, "bad-out")
    shutil.rmtree(out, ignore_errors=True)
    opt = ["--steps-per-sweep" + bad[0]] if bad and bad[0].startswith("=") else ["--steps-per-sweep", *bad]
    r = run("run", scn_a, "--out", out, *opt)
    first = r.stderr.split("\n")[0]
    check(r.returncode == 2 and first.startswith("shoreward run: --steps-per-sweep takes a whole number from 1 to 16")
          and not os.path.exists(out),
          f"{' '.join(opt) if bad else '--steps-per-sweep (no value)'}: exit {r.returncode}, '{first}'")

# ---- checkpoint, SIGTERM midway, resume with another K and thread count ------------------------------
# A larger basin (about a second a run on 2 threads here) so that the run can be stopped in the middle.
CKPT = """; Brevanquil Flats - a FICTIONAL basin for tests/py/test_wave_run.py; every name is invented.
[run]
title = Brevanquil Flats (fictional) - several steps per sweep, stopped and resumed
duration = 30 h
layout = C
courant_fraction = 0.9
gauge_interval = 17 min
snapshot_interval = 97 min
checkpoint_interval = 253 min
arrival_threshold = 0.001 m
rotation = f-plane
latitude = 52 deg
friction = quadratic
drag = 0.0025

[grid]
nx = 240
ny = 160
dx = 2 km

[edges]
west = open
east = wall
south = level
north = open

[seabed]
deep = 200 m
coast = east
shoreline = 460 km
shelf_depth = 40 m
shelf_width = 30 km
land_height = 20 m
min_depth = 2 m

[source coastal rise]
shape = hump
x = 300 km
y = 160 km
amplitude = 1 m
radius = 30 km

[gauges]
Istelbrac Point = 440 km, 10 km
Brisquelle Head = 150 km, 319.5 km
Offshore buoy = 200 km, 161 km
"""
scn_c = write("brevanquil.scn", CKPT)
ref_c, cut = os.path.join(WORK, "ckpt-ref"), os.path.join(WORK, "ckpt-cut")
shutil.rmtree(cut, ignore_errors=True)
t0 = time.time()
code, base_c, err = run_json(scn_c, ref_c, 1, 2)
ref_wall = time.time() - t0
check(code == 0 and base_c is not None, f"the uninterrupted checkpointed run, K = 1, {ref_wall:.2f} s"
      f"{'' if code == 0 else ' (exit ' + str(code) + ': ' + err.strip()[-300:] + ')'}")


def stop_midway(k, threads, after_checkpoints):
    """Starts the run into `cut` with --steps-per-sweep k, waits for `after_checkpoints` checkpoints,
    sends SIGTERM; returns (exit status, stderr)."""
    args = [BIN, "run", scn_c, "--out", cut, "--threads", str(threads), "--quiet", "--steps-per-sweep", str(k)]
    ck = os.path.join(cut, "checkpoint.swck")
    seen, written, deadline = None, 0, time.time() + 600
    p = subprocess.Popen(args, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    while written < after_checkpoints and p.poll() is None and time.time() < deadline:
        time.sleep(0.002)
        now = os.stat(ck).st_mtime_ns if os.path.exists(ck) else None
        if now is not None and now != seen:
            written, seen = written + 1, now
    p.send_signal(signal.SIGTERM)
    _, err = p.communicate(timeout=600)
    return p.returncode, err


code, err = stop_midway(3, 1, 3)
at = re.search(r"interrupted at t = ([0-9.e+]+) s", err)
check(code == 130 and at is not None and os.path.exists(os.path.join(cut, "checkpoint.swck"))
      and not any(os.path.exists(os.path.join(cut, n)) for n in FILES),
      f"K = 3 on 1 thread, SIGTERM after 3 checkpoints: exit 130, a checkpoint and no file"
      + (f" (stopped at t = {float(at.group(1)) / 3600:.2f} h of 30 h)" if at
         else f" (exit {code}: {err.strip()[-200:]})"))
r = run("run", scn_c, "--out", cut, "--threads", "2", "--json", "--steps-per-sweep", "16", "--resume")
got = json.loads(r.stdout) if r.returncode == 0 else None
if got and base_c:
    diff = file_differences(ref_c, cut) + summary_differences(base_c, got)
    check(got["run"]["steps_per_sweep"] == 16 and not diff
          and not os.path.exists(os.path.join(cut, "checkpoint.swck")),
          f"resumed with K = 16 on 2 threads: the 3 files and the gauge table bit for bit the uninterrupted "
          f"K = 1 run's{' (differ: ' + ', '.join(diff) + ')' if diff else ''}")
else:
    check(False, f"--resume with K = 16 finishes the run (exit {r.returncode}: {r.stderr.strip()[-300:]})")

# ---- what was covered ---------------------------------------------------------------------------------
print("\nscenario              precision      dt s  steps  samples  snapshots  steps/sample")
for tag, precision, dt, steps, samples, snaps in COVERAGE:
    print(f"{tag:21s} {precision:9s} {dt:8.3f} {steps:6d} {samples:8d} {snaps:10d} {steps / max(samples - 1, 1):13.1f}")
check(any(steps / max(samples - 1, 1) > 16 for _, _, _, steps, samples, _ in COVERAGE)
      and any(steps / max(samples - 1, 1) < 7 for _, _, _, steps, samples, _ in COVERAGE),
      "some basins sample less often than every 16 steps (whole sweeps of 16) and some more often than every 7 "
      "(sweeps cut)")
inside, total = sum(a for a, _ in INSIDE), sum(b for _, b in INSIDE)
check(total > 0 and inside > total / 2, f"in the runs with K >= 7, {inside} of {total} gauge arrivals and peaks "
      "were seen at a step inside a sweep (not at its end)")
print(f"checkpointed reference run: {ref_wall:.2f} s wall; whole test: {time.time() - T_START:.1f} s")
print("%d failed" % len(FAILURES))
sys.exit(1 if FAILURES else 0)
