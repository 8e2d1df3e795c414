#!/usr/bin/python3
"""End-to-end checks of the shoreward command line and its NetCDF outputs.

usage: test_outputs.py SHOREWARD_BINARY WORK_DIR

Checks (each names its outside reference where there is one):
  - the demo's files carry the CF variables and attributes promised in README (CF conventions 1.11,
    chapter 9 discrete sampling geometries, featureType timeSeries);
  - on constant depth, arrival time grows with distance from the source, and matches distance /
    sqrt(g h) (phase speed: Lamb 1932, Hydrodynamics, ch. VIII [memory]) within the pulse's width;
  - 1 and 2 threads give bitwise identical files' data;
  - --json prints one JSON object with the gauges and the caution;
  - an interrupted run (SIGINT) leaves no output file;
  - a bad scenario fails with exit status 1 and a FILE:LINE message.
"""
import json
import math
import os
import signal
import subprocess
import sys
import time

import numpy as np
from netCDF4 import Dataset

from swtest import FAILURES, check, run

BIN = os.path.abspath(sys.argv[1])
WORK = os.path.abspath(sys.argv[2])
os.makedirs(WORK, exist_ok=True)


FLAT = """; constant-depth basin for output tests (fictional)
[run]
title = flat basin
duration = {duration}
layout = {layout}
courant_fraction = 0.9
gauge_interval = 20 s
arrival_threshold = 0.005 m
snapshot_interval = {snap}

[grid]
nx = 120
ny = 100
dx = 1 km

[edges]
all = open

[seabed]
deep = 1000 m

[source centre]
shape = hump
x = 60 km
y = 50 km
amplitude = 1 m
radius = 3 km

[gauges]
near = 70 km, 50 km
far = 100 km, 50 km
diagonal = 85 km, 75 km
"""


def write(name, text):
    path = os.path.join(WORK, name)
    with open(path, "w") as f:
        f.write(text)
    return path


def test_demo_files():
    out = os.path.join(WORK, "demo")
    r = run("demo", out, "--quiet")
    check(r.returncode == 0, "demo runs (exit %d: %s)" % (r.returncode, r.stderr.strip()[-300:]))
    check("not a hazard forecast" in r.stdout, "demo prints the caution")
    g = Dataset(os.path.join(out, "gauges.nc"))
    check(g.featureType == "timeSeries", "gauges: featureType timeSeries")
    check(g.Conventions.startswith("CF-1."), "gauges: CF Conventions declared")
    check(g.variables["station_name"].cf_role == "timeseries_id", "gauges: station_name cf_role")
    check(g.variables["eta"].dimensions == ("station", "time"), "gauges: eta(station, time)")
    check(g.variables["eta"].standard_name == "sea_surface_height_above_mean_sea_level", "gauges: eta standard_name")
    for v in ("u", "v"):
        check(v in g.variables and g.variables[v].units == "m s-1", "gauges: %s present with units" % v)
    check(g.variables["time"].units.startswith("seconds since"), "gauges: CF time units")
    check("not a hazard forecast" in g.caution, "gauges: caution attribute")
    check("[run]" in g.scenario, "gauges: scenario text attribute")
    names = [n for n in g.variables["station_name"][:].astype(str) if True]
    check(len(names) == 6, "gauges: six stations (%d)" % len(names))
    g.close()
    m = Dataset(os.path.join(out, "maps.nc"))
    for v in ("depth", "eta_max", "eta_min", "arrival_time", "eta_max_time", "speed_max"):
        check(v in m.variables and hasattr(m.variables[v], "units"), "maps: %s with units" % v)
    check(m.variables["eta_max"].cell_methods == "time: maximum", "maps: eta_max cell_methods")
    check(m.variables["speed_max"].cell_methods == "time: maximum", "maps: speed_max cell_methods")
    check(m.variables["eta_min"].cell_methods == "time: minimum", "maps: eta_min cell_methods")
    arr = m.variables["arrival_time"][:]
    check(np.ma.is_masked(arr) and arr.mask.any(), "maps: arrival_time has _FillValue where never reached")
    check(m.layout == "C" and m.time_step_s > 0 and m.courant_number < m.courant_limit,
          "maps: layout, dt and Courant number attributes")
    check(m.history.startswith(BIN) or "shoreward" in m.history, "maps: history holds the command line")
    m.close()
    left = [f for f in os.listdir(out) if f.endswith(".part")]
    check(not left, "demo leaves no .part files")


def test_arrival_grows_with_distance():
    path = write("flat.scn", FLAT.format(duration="8 min", layout="C", snap="0"))
    out = os.path.join(WORK, "flat-out")
    r = run("run", path, "--out", out, "--quiet")
    check(r.returncode == 0, "flat run (exit %d: %s)" % (r.returncode, r.stderr.strip()[-300:]))
    m = Dataset(os.path.join(out, "maps.nc"))
    x = m.variables["x"][:]
    y = m.variables["y"][:]
    arr = m.variables["arrival_time"][:]
    m.close()
    X, Y = np.meshgrid(x, y)
    r_m = np.hypot(X - 60e3, Y - 50e3)
    c = math.sqrt(9.81 * 1000)
    sel = (~arr.mask) & (r_m > 12e3) & (r_m < 35e3)
    rr, tt = r_m[sel], arr[sel].data
    order = np.argsort(rr)
    # arrival time, binned by distance, increases with distance
    bins = np.linspace(12e3, 35e3, 8)
    means = [tt[(rr >= a) & (rr < b)].mean() for a, b in zip(bins[:-1], bins[1:])]
    check(all(b > a for a, b in zip(means, means[1:])), "arrival time increases with distance: %s"
          % ", ".join("%.0f" % v for v in means))
    # the front's slope: d(arrival)/d(distance) = 1 / sqrt(g h), from a least-squares line
    slope = np.polyfit(rr[order], tt[order], 1)[0]
    check(abs(slope * c - 1) < 0.03, "arrival slope %.5f s/m vs 1/sqrt(g h) = %.5f s/m" % (slope, 1 / c))


def read_all(out):
    data = {}
    for f in ("gauges.nc", "maps.nc", "snapshots.nc"):
        with Dataset(os.path.join(out, f)) as d:
            d.set_auto_mask(False)
            for k, v in d.variables.items():
                data[f + ":" + k] = np.array(v[:])
    return data


def test_threads_identical():
    for layout in ("A", "C"):
        path = write("flat-%s.scn" % layout, FLAT.format(duration="4 min", layout=layout, snap="1 min"))
        outs = []
        for n in (1, 2):
            out = os.path.join(WORK, "threads-%s-%d" % (layout, n))
            r = run("run", path, "--out", out, "--quiet", "--threads", str(n))
            check(r.returncode == 0, "layout %s with %d thread(s) runs" % (layout, n))
            outs.append(read_all(out))
        same = outs[0].keys() == outs[1].keys() and all(
            outs[0][k].tobytes() == outs[1][k].tobytes() for k in outs[0])
        check(same, "layout %s: 1 and 2 threads give bitwise identical data (%d variables)"
              % (layout, len(outs[0])))


def test_json():
    path = write("flat-json.scn", FLAT.format(duration="3 min", layout="C", snap="0"))
    r = run("run", path, "--out", os.path.join(WORK, "json-out"), "--json")
    try:
        doc = json.loads(r.stdout)
    except ValueError:
        doc = {}
    check(r.returncode == 0 and "gauges" in doc, "--json prints one JSON object")
    check(len(doc.get("gauges", [])) == 3 and "caution" in doc, "--json has 3 gauges and the caution")
    near = [g for g in doc.get("gauges", []) if g["name"] == "near"]
    check(bool(near) and near[0]["arrival_s"] is not None and near[0]["peak_m"] > 0, "--json near gauge arrival")
    r = run("check", path, "--json")
    try:
        plan = json.loads(r.stdout)
    except ValueError:
        plan = {}
    check(r.returncode == 0 and plan.get("courant_number", 9) <= plan.get("courant_limit", 0), "check --json plan")


def test_interrupt_leaves_nothing():
    path = write("long.scn", FLAT.format(duration="30 d", layout="C", snap="10 min"))
    out = os.path.join(WORK, "interrupted")
    p = subprocess.Popen([BIN, "run", path, "--out", out, "--quiet"], stdout=subprocess.PIPE,
                         stderr=subprocess.PIPE, text=True)
    time.sleep(1.5)
    p.send_signal(signal.SIGINT)
    _, err = p.communicate(timeout=60)
    check(p.returncode == 130, "interrupted run exits 130 (got %s)" % p.returncode)
    left = os.listdir(out) if os.path.isdir(out) else []
    check(not left, "interrupted run leaves no files (%s)" % left)
    check("interrupted" in err, "interrupted run says so")


def test_bad_scenario():
    text = FLAT.format(duration="5 min", layout="C", snap="0").replace("courant_fraction = 0.9", "courant_fraction = 1.9")
    path = write("bad.scn", text)
    r = run("run", path, "--out", os.path.join(WORK, "bad-out"))
    check(r.returncode == 1, "bad scenario exits 1")
    check("bad.scn:6:" in r.stderr and "courant_fraction" in r.stderr, "message names file:line and key: %s"
          % r.stderr.strip())
    r = run("run", os.path.join(WORK, "missing.scn"))
    check(r.returncode == 1 and "missing.scn" in r.stderr, "missing scenario named")
    r = run("frobnicate")
    check(r.returncode == 2, "unknown command exits 2")


if __name__ == "__main__":
    test_bad_scenario()
    test_json()
    test_arrival_grows_with_distance()
    test_threads_identical()
    test_interrupt_leaves_nothing()
    test_demo_files()
    print("%d failed" % len(FAILURES))
    sys.exit(1 if FAILURES else 0)
