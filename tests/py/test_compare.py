#!/usr/bin/python3
"""`shoreward compare`: every layout x resolution produces a row, the files are written, and the
differences from the reference (the finest C run) shrink as the grid is refined - the behaviour of a
convergent discretisation (for these second-order layouts, roughly by 2-4x per halving of dx) - unless
they are already below 1.5 s.

usage: test_compare.py SHOREWARD_BINARY WORK_DIR
"""
import csv
import json
import os
import subprocess
import sys

BIN, WORK = os.path.abspath(sys.argv[1]), os.path.abspath(sys.argv[2])
os.makedirs(WORK, exist_ok=True)
FAILURES = []


def check(cond, what):
    print(("ok   " if cond else "FAIL ") + what)
    if not cond:
        FAILURES.append(what)


SCENARIO = """; small fictional coast for the comparison test
[run]
title = compare test (fictional)
duration = 15 min
arrival_threshold = 0.01 m
[grid]
nx = 60
ny = 40
dx = 1 km
[edges]
all = open
[seabed]
deep = 500 m
coast = east
shoreline = 55 km
shelf_width = 15 km
shelf_depth = 50 m
slope_width = 10 km
[island Rock]
x = 30 km
y = 20 km
radius = 2 km
height = 20 m
[source s]
shape = hump
x = 10 km
y = 20 km
amplitude = 1 m
radius = 3 km
[gauges]
lee = 36 km, 20 km
coast = 48 km, 30 km
"""

path = os.path.join(WORK, "cmp.scn")
with open(path, "w") as f:
    f.write(SCENARIO)
out = os.path.join(WORK, "cmp-out")
r = subprocess.run([BIN, "compare", path, "--refine", "1,2,4", "--out", out, "--json"],
                   capture_output=True, text=True)
check(r.returncode == 0, "compare runs (exit %d: %s)" % (r.returncode, r.stderr.strip()[-300:]))
doc = json.loads(r.stdout) if r.returncode == 0 else {"runs": []}
runs = doc["runs"]
names = sorted({x["layout"] for x in runs})
check(len(runs) == 3 * len(names) and len(names) >= 2, "one row per layout x resolution (%d rows, layouts %s)"
      % (len(runs), ",".join(names)))
check(all(x["status"] == "ok" for x in runs), "every run succeeded")
ref = runs[doc["reference"]] if doc.get("reference", -1) >= 0 else {}
check(ref.get("layout") == "C" and ref.get("refine") == 4, "reference is the finest C run")
check(all(x["courant"] <= x["courant_limit"] * 0.9 + 1e-9 for x in runs), "every run at 90 % of its limit")
for lay in names:
    rows = sorted([x for x in runs if x["layout"] == lay], key=lambda x: x["refine"])
    for g in range(2):
        d = [abs(x["gauges"][g]["d_arrival_s"]) for x in rows]
        name = rows[0]["gauges"][g]["name"]
        if lay == "C":
            d = d[:2]   # the x4 C run is the reference itself
        # converged: the finest run's difference is at most half the coarsest's, or already within
        # 1.5 s (a fraction of the coarsest time step, below which differences are round-off of the
        # threshold crossing)
        check(d[-1] <= max(0.5 * d[0], 1.5),
              "%s, gauge %s: |arrival - reference| shrinks under refinement: %s"
              % (lay, name, ", ".join("%.1f s" % v for v in d)))
with open(os.path.join(out, "compare.csv")) as f:
    lines = list(csv.DictReader(f))
check(len(lines) == len(runs) * 2, "compare.csv: one line per run and gauge")
md = open(os.path.join(out, "compare.md")).read()
check("not a hazard forecast" in md and "| layout |" in md, "compare.md: table and caution")
r = subprocess.run([BIN, "compare", path, "--layouts", "A,Q"], capture_output=True, text=True)
check(r.returncode == 1 and "Q" in r.stderr and "available" in r.stderr, "unknown layout named with the list")
print("%d failed" % len(FAILURES))
sys.exit(1 if FAILURES else 0)
