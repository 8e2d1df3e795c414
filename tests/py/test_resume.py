#!/usr/bin/python3
"""Checkpoint and resume through the command line: SIGTERM, then `shoreward run SCENARIO --resume`.

usage: test_resume.py SHOREWARD_BINARY WORK_DIR

Checks (the reference is the program itself: a run never stopped, [derived] from the step being a
deterministic function of the state a checkpoint holds; the shelf below is fictional):
  - a run with [run] checkpoint_interval writes OUT/checkpoint.swck as it goes; SIGTERM stops it with exit
    status 130, a message naming the checkpoint, and no output file;
  - `run SCENARIO --resume` (same --out, another --threads) continues and ends with every variable of
    gauges.nc, maps.nc and snapshots.nc bit for bit equal to the uninterrupted run's, and removes the
    checkpoint and its frames file;
  - a second stop and resume gives the same bits again;
  - refusals: --resume with another --precision names the precision (exit 1); --resume with no checkpoint
    names the file (exit 1); --resume on a scenario without checkpoint_interval names the key (exit 1).
"""
import os
import shutil
import signal
import subprocess
import sys
import time

import numpy as np
from netCDF4 import Dataset

from swtest import BIN, FAILURES, WORK, check, run

os.makedirs(WORK, exist_ok=True)

# A fictional shelf (rotating-shelf.scn style): periodic west-east, wall to the south, open to the north,
# an f-plane and Manning friction; long enough (a few seconds) to be stopped in the middle.
SCENARIO = """; Brevanquil Flats - a FICTIONAL coast for tests/py/test_resume.py; every name is invented.
[run]
title = Brevanquil Flats (fictional) - resume test
duration = 30 h
layout = C
courant_fraction = 0.9
gauge_interval = 10 min
snapshot_interval = 2 h
checkpoint_interval = 1 h
arrival_threshold = 0.02 m
rotation = f-plane
latitude = 52 deg
friction = manning
manning = 0.025

[grid]
nx = 400
ny = 150
dx = 2 km

[edges]
west = periodic
east = periodic
south = wall
north = open

[seabed]
deep = 60 m
coast = south
shoreline = 4 km
shelf_depth = 60 m
shelf_width = 20 km
land_height = 20 m
min_depth = 2 m

[source coastal rise]
shape = hump
x = 400 km
y = 30 km
amplitude = 1 m
radius = 60 km

[gauges]
Istelbrac Point = 650 km, 10 km
Brisquelle Head = 150 km, 10 km
Offshore buoy = 400 km, 200 km
"""

scn = os.path.join(WORK, "brevanquil.scn")
with open(scn, "w") as f:
    f.write(SCENARIO)
ref, cut = os.path.join(WORK, "ref"), os.path.join(WORK, "cut")
for d in (ref, cut):
    shutil.rmtree(d, ignore_errors=True)
FILES = ("gauges.nc", "maps.nc", "snapshots.nc")


def raw(var):
    """The variable's stored values, unmasked and unscaled, as bytes."""
    var.set_auto_maskandscale(False)
    return np.ascontiguousarray(var[...]).tobytes()


def same_files(a, b):
    """Every variable of every output file holds the same bytes in folders a and b."""
    for name in FILES:
        with Dataset(os.path.join(a, name)) as x, Dataset(os.path.join(b, name)) as y:
            check(set(x.variables) == set(y.variables), f"{name}: the same variables")
            diff = [v for v in x.variables if v in y.variables and raw(x[v]) != raw(y[v])]
            check(not diff, f"{name}: {len(x.variables)} variables bit for bit equal to the uninterrupted "
                  f"run's{' (differ: ' + ', '.join(diff) + ')' if diff else ''}")


def stop_midway(threads, after_checkpoints):
    """Starts the run into `cut` (resuming when a checkpoint is there), waits until it has written
    `after_checkpoints` more checkpoints, sends SIGTERM; returns (exit status, stderr)."""
    args = [BIN, "run", scn, "--out", cut, "--threads", str(threads), "--quiet"]
    ck = os.path.join(cut, "checkpoint.swck")
    if os.path.exists(ck):
        args.append("--resume")
    seen = os.stat(ck).st_mtime_ns if os.path.exists(ck) else None
    p = subprocess.Popen(args, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    written, deadline = 0, time.time() + 600
    while written < after_checkpoints and p.poll() is None and time.time() < deadline:
        time.sleep(0.005)
        now = os.stat(ck).st_mtime_ns if os.path.exists(ck) else None
        if now is not None and now != seen:
            written, seen = written + 1, now
    p.send_signal(signal.SIGTERM)
    _, err = p.communicate(timeout=600)
    return p.returncode, err


r = run("run", scn, "--out", ref, "--threads", "2", "--quiet")
check(r.returncode == 0, f"the uninterrupted run (exit {r.returncode}: {r.stderr.strip()[-300:]})")
check(not os.path.exists(os.path.join(ref, "checkpoint.swck")), "a finished run leaves no checkpoint")

code, err = stop_midway(1, 2)
check(code == 130 and "checkpoint.swck" in err and "--resume" in err,
      f"SIGTERM: exit 130 and a message naming the checkpoint (exit {code}: {err.strip()[-300:]})")
check(not any(os.path.exists(os.path.join(cut, n)) for n in FILES), "the stopped run wrote no output file")
check(os.path.exists(os.path.join(cut, "checkpoint.swck")), "the checkpoint is there")

code, err = stop_midway(2, 3)   # stopped again, resumed from the first stop
check(code == 130 and "checkpoint.swck" in err, f"a resumed run stops again the same way (exit {code})")

r = run("run", scn, "--out", cut, "--precision", "single", "--resume")
check(r.returncode == 1 and "precision" in r.stderr and "'double' in the checkpoint" in r.stderr,
      f"--resume with another --precision is refused, naming it ({r.stderr.strip()[-300:]})")

r = run("run", scn, "--out", cut, "--threads", "1", "--quiet", "--resume")
check(r.returncode == 0, f"--resume finishes the run (exit {r.returncode}: {r.stderr.strip()[-300:]})")
check(not os.path.exists(os.path.join(cut, "checkpoint.swck")) and
      not os.path.exists(os.path.join(cut, "checkpoint.frames")), "the finished run removed its checkpoint")
if r.returncode == 0:
    same_files(ref, cut)

r = run("run", scn, "--out", cut, "--resume")
check(r.returncode == 1 and "checkpoint.swck" in r.stderr and "cannot open" in r.stderr,
      f"--resume without a checkpoint names the file ({r.stderr.strip()[-300:]})")

plain = os.path.join(WORK, "plain.scn")
with open(plain, "w") as f:
    f.write(SCENARIO.replace("checkpoint_interval = 1 h\n", ""))
r = run("run", plain, "--out", os.path.join(WORK, "plain-out"), "--resume")
check(r.returncode == 1 and "checkpoint_interval" in r.stderr,
      f"--resume on a scenario without checkpoints names the key ({r.stderr.strip()[-300:]})")

print("%d failed" % len(FAILURES))
sys.exit(1 if FAILURES else 0)
