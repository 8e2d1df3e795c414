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

from swtest import FAILURES, check

BIN, WORK = os.path.abspath(sys.argv[1]), os.path.abspath(sys.argv[2])
os.makedirs(WORK, exist_ok=True)


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
check(all(x["courant_number"] <= x["courant_limit"] * 0.9 + 1e-9 for x in runs), "every run at 90 % of its limit")
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
    lines = list(csv.DictReader(l for l in f if not l.startswith("#")))   # after the caution comment line
check(len(lines) == len(runs) * 2, "compare.csv: one line per run and gauge")
md = open(os.path.join(out, "compare.md")).read()
check("not a hazard forecast" in md and "| layout |" in md, "compare.md: table and caution")
r = subprocess.run([BIN, "compare", path, "--layouts", "A,Q"], capture_output=True, text=True)
check(r.returncode == 1 and "Q" in r.stderr and "available" in r.stderr, "unknown layout named with the list")

# A seabed file without [grid]: the refined runs cover the file's cells, whose outer halves they read by the
# edge values (ncinput.h), so every refinement runs. (Before, every refined run of a file seabed failed: its
# outer cell centres lie beyond the file's.)
import numpy as np
from netCDF4 import Dataset

FILE_SCENARIO = """; a fictional shelf read from a file, for the comparison test
[run]
title = compare of a file seabed (fictional)
duration = 8 min
[edges]
all = open
[seabed]
file = bed.nc
positive = down
[source s]
shape = hump
x = 12 km
y = 15 km
amplitude = 1 m
radius = 3 km
[gauges]
mid = 25 km, 15 km
"""


def write_bed(name, geo):
    """40 x 30 cells of 1 km (or 0.01 deg), a shelf rising to land at the east side; positive down."""
    with Dataset(os.path.join(WORK, name), "w") as nc:
        nc.createDimension("lat" if geo else "y", 30)
        nc.createDimension("lon" if geo else "x", 40)
        x = nc.createVariable("lon" if geo else "x", "f8", ("lon" if geo else "x",))
        y = nc.createVariable("lat" if geo else "y", "f8", ("lat" if geo else "y",))
        if geo:
            x.units, y.units = "degrees_east", "degrees_north"
            x[:] = 170.005 + 0.01 * np.arange(40)
            y[:] = -20.005 - 0.01 * np.arange(30)      # decreasing, as many global files are
        else:
            x.units = y.units = "m"
            x[:] = 500.0 + 1000.0 * np.arange(40)
            y[:] = 500.0 + 1000.0 * np.arange(30)
        d = nc.createVariable("depth", "f8", ("lat" if geo else "y", "lon" if geo else "x"))
        i = np.arange(40)[None, :] + 0 * np.arange(30)[:, None]
        d[:] = np.minimum(400.0, 20.0 * (36 - i))


write_bed("bed.nc", False)
fpath = os.path.join(WORK, "file.scn")
with open(fpath, "w") as f:
    f.write(FILE_SCENARIO)
fout = os.path.join(WORK, "file-out")
r = subprocess.run([BIN, "compare", fpath, "--layouts", "C,A", "--refine", "1,2", "--out", fout, "--json"],
                   capture_output=True, text=True)
check(r.returncode == 0, "compare of a file seabed with --refine 1,2 runs (exit %d: %s)"
      % (r.returncode, r.stderr.strip()[-300:]))
runs = json.loads(r.stdout)["runs"] if r.returncode == 0 else []
check(len(runs) == 4 and all(x["status"] == "ok" for x in runs), "every refined run of the file seabed succeeded: %s"
      % [(x["layout"], x["refine"], x["status"], x.get("error", "")[:120]) for x in runs])
check(all((x["nx"], x["ny"]) == (40 * x["refine"], 30 * x["refine"]) for x in runs if x["status"] == "ok"),
      "the refined grids cover the file's 40 x 30 cells")

# the same on a geographic grid: a longitude/latitude file (latitudes decreasing), positions in degrees
write_bed("bed_geo.nc", True)
gpath = os.path.join(WORK, "file_geo.scn")
with open(gpath, "w") as f:
    f.write(FILE_SCENARIO.replace("bed.nc", "bed_geo.nc").replace("x = 12 km", "x = 170.11 deg")
            .replace("y = 15 km", "y = -20.15 deg").replace("mid = 25 km, 15 km", "mid = 170.25 deg, -20.15 deg")
            .replace("[edges]", "[grid]\nkind = geographic\n[edges]"))
r = subprocess.run([BIN, "compare", gpath, "--layouts", "C", "--refine", "1,2", "--out", fout + "-geo", "--json"],
                   capture_output=True, text=True)
check(r.returncode == 0, "compare of a longitude/latitude seabed file with --refine 1,2 runs (exit %d: %s)"
      % (r.returncode, r.stderr.strip()[-300:]))
runs = json.loads(r.stdout)["runs"] if r.returncode == 0 else []
check(len(runs) == 2 and all(x["status"] == "ok" for x in runs), "every refined geographic run succeeded: %s"
      % [(x["layout"], x["refine"], x["status"], x.get("error", "")[:160]) for x in runs])

# A comparison in which one run fails exits 1 after writing its tables: the E layout's checkerboard needs an
# even nx between periodic edges (setup.c), so E x1 fails on nx = 25 while C x1 runs.
ppath = os.path.join(WORK, "periodic.scn")
with open(ppath, "w") as f:
    f.write(SCENARIO.replace("nx = 60", "nx = 25").replace("all = open", "all = periodic")
            .replace("coast = east", "coast = none").replace("duration = 15 min", "duration = 3 min")
            .replace("coast = 48 km, 30 km", "coast = 20 km, 30 km").replace("lee = 36 km, 20 km", "lee = 16 km, 20 km"))
pout = os.path.join(WORK, "periodic-out")
r = subprocess.run([BIN, "compare", ppath, "--layouts", "C,E", "--out", pout], capture_output=True, text=True)
check(r.returncode == 1, "a comparison with a failed run exits 1 (exit %d)" % r.returncode)
check("1 of 2 runs failed; the first, layout E x1" in r.stderr and "even" in r.stderr,
      "the error names the failed run and its cause: %s" % r.stderr.strip()[-300:])
check(os.path.exists(os.path.join(pout, "compare.md")) and os.path.exists(os.path.join(pout, "compare.csv")),
      "the tables are still written")
check("(reference)" in r.stdout and "failed:" in r.stdout, "the table still shows the run that worked")
print("%d failed" % len(FAILURES))
sys.exit(1 if FAILURES else 0)
