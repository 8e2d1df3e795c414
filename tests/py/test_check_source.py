#!/usr/bin/python3
"""`check` reports the source as the model holds it, and counts the gauge samples the file will hold.

usage: test_check_source.py SHOREWARD_BINARY WORK_DIR

1. The gauge sample count `check` prints (text and --json "gauge_samples") equals the length of the time
   axis of the gauges.nc the run writes, also when the duration is not a multiple of gauge_interval; the
   snapshot count ("snapshots") that of snapshots.nc.
2. The source: peak uplift and subsidence, extent and displaced volume (--json "source"). The volume is
   checked against the Gaussian integral A pi R^2 of a hump (int exp(-x^2) dx = sqrt(pi)) and against an
   independent sum, numpy over the run's first snapshot (t = 0) times the cell area (dx dy cos(latitude)
   on a geographic grid, docs/geographic.md).
3. Sources the water does not keep: a hump cut by the coast or by the grid's edge is a warning naming the
   source and the share lost; one entirely on land or outside the grid is an error (exit 1) naming it, for
   `check` and for `run`.
4. A scenario that only a storm drives says it has no initial displacement.
5. A sweep's member scenario files show the shortest decimal that reads back as the same value: 0.4 m, not
   0.40000000000000002 m.
6. `compare` writes its live progress line only on a terminal: with stderr to a file (as here) no carriage
   return or progress text appears. The terminal case itself cannot be checked from a test.
All places and names are fictional.
"""
import json
import math
import os
import sys

import netCDF4
import numpy as np

from swtest import FAILURES, check, run

BIN = os.path.abspath(sys.argv[1])
WORK = os.path.abspath(sys.argv[2])
REPO = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
os.makedirs(WORK, exist_ok=True)


def write(name, text):
    path = os.path.join(WORK, name)
    with open(path, "w") as f:
        f.write(text)
    return path


def plan(path):
    """The text and the JSON plan of `check` (None when either fails)."""
    r = run("check", path)
    j = run("check", path, "--json")
    if r.returncode != 0 or j.returncode != 0:
        print(r.stderr, j.stderr)
        return None, None
    return r.stdout, json.loads(j.stdout)


def scenario(run_keys, grid, seabed, sources, gauges="[gauges]\nRavelquist Weir = 5 km, 5 km\n"):
    return ("[run]\ntitle = Brevanquil Flats (fictional)\n" + run_keys + grid + seabed + sources + gauges)


GRID = "[grid]\nnx = 20\nny = 20\ndx = 1 km\n"
DEEP = "[seabed]\ndeep = 100 m\n"
HUMP = "[source Tervelka Hump]\nshape = hump\nx = 10 km\ny = 10 km\namplitude = 1 m\nradius = 3 km\n"

# ---- 1. gauge samples: check's count = the file's time axis -----------------------------------------
for k, run_keys in enumerate([
        "duration = 10 min\ngauge_interval = 30 s\n",            # dt does not divide the interval
        "duration = 10 min\ngauge_interval = 70 s\n",            # duration not a multiple of the interval
        "duration = 95 s\ndt = 5 s\ngauge_interval = 30 s\n",    # exact steps, a last partial interval
        "duration = 90 s\ndt = 5 s\ngauge_interval = 30 s\n",    # exact steps, the end on a sample
        "duration = 10 min\ngauge_interval = 5 s\n",             # interval shorter than dt
        "duration = 3 min\ngauge_interval = 1 h\n"]):            # interval longer than the run
    # snapshots at the same interval: their count is the snapshot file's time axis (no sample at the end)
    snap = run_keys.split("gauge_interval = ")[1].strip()
    run_keys += f"snapshot_interval = {snap}\n"
    path = write(f"samples{k}.scn", scenario(run_keys, GRID, DEEP, HUMP))
    text, js = plan(path)
    out = os.path.join(WORK, f"samples{k}-out")
    r = run("run", path, "--quiet", "--out", out)
    if text is None or r.returncode != 0:
        check(False, f"samples{k}: check and run succeed ({r.stderr.strip()})")
        continue
    with netCDF4.Dataset(os.path.join(out, "gauges.nc")) as d:
        held = len(d.dimensions["time"])
    said = [line for line in text.splitlines() if "gauge samples each" in line]
    n_text = int(said[0].split(";")[1].split()[0]) if said else -1
    check(n_text == held and js["gauge_samples"] == held,
          f"samples{k} ({run_keys.strip()!r}): check says {n_text} (text), {js['gauge_samples']} (JSON); "
          f"gauges.nc holds {held}")
    with netCDF4.Dataset(os.path.join(out, "snapshots.nc")) as d:
        frames = len(d.dimensions["time"])
    check(js["snapshots"] == frames and f"; {frames} snapshots" in text,
          f"samples{k}: check says {js['snapshots']} snapshots; snapshots.nc holds {frames}")

# ---- 2. the source: peaks, extent, volume --------------------------------------------------------------
path = write("hump.scn", scenario("duration = 2 min\nsnapshot_interval = 1 min\n", GRID, DEEP, HUMP))
text, js = plan(path)
src = js["source"] if js else None
check(src is not None and "Source     initial surface over water: uplift" in text, "the text plan has a Source line")
if src:
    want = math.pi * 1.0 * 3e3 ** 2    # A pi R^2, the Gaussian integral [derived]
    check(abs(src["volume_m3"] - want) <= 1e-4 * want,
          f"hump volume {src['volume_m3']:.6g} m^3 = A pi R^2 = {want:.6g} m^3 (Gaussian integral)")
    check(src["volume_lowered_m3"] == 0 and src["subsidence_at"] is None, "a hump lowers nothing")
    # the peak: the four cells around (10 km, 10 km) are 0.5 km from it: exp(-(0.5^2 + 0.5^2) / 9) [derived]
    check(abs(src["uplift_max_m"] - math.exp(-0.5 / 9)) < 1e-12 and src["uplift_at"]["x_m"] in (9500, 10500),
          f"peak uplift {src['uplift_max_m']} m at a cell next to the centre")
    # extent: cells with exp(-r^2 / R^2) above 1 % of the peak
    xc = (np.arange(20) + 0.5) * 1e3
    X, Y = np.meshgrid(xc, xc)
    eta = np.exp(-((X - 10e3) ** 2 + (Y - 10e3) ** 2) / 9e6)
    over = eta > 0.01 * eta.max()
    check(src["extent_area_m2"] == over.sum() * 1e6, f"extent {src['extent_area_m2']:.4g} m^2 = {over.sum()} cells")
    check(src["sources"][0]["name"] == "Tervelka Hump" and src["warnings"] == [], "one source, kept whole: no warning")
    out = os.path.join(WORK, "hump-out")
    r = run("run", path, "--quiet", "--out", out)
    with netCDF4.Dataset(os.path.join(out, "snapshots.nc")) as d:
        e0 = np.ma.filled(d["eta"][0].astype(np.float64), 0.0)
        e0 = np.nan_to_num(e0)
    vol = e0.sum() * 1e3 * 1e3
    check(r.returncode == 0 and abs(src["volume_m3"] - vol) <= 1e-6 * want,
          f"volume = numpy over the run's t = 0 snapshot: {src['volume_m3']:.8g} vs {vol:.8g} m^3")

# a geographic grid: cells weigh dx dy cos(latitude)
GEO = ("[grid]\nkind = geographic\nnx = 60\nny = 60\ndx = 0.02 deg\nx0 = 10 deg\ny0 = 44.4 deg\n")
GHUMP = "[source Skua Rise]\nshape = hump\nx = 10.6 deg\ny = 45 deg\namplitude = 0.5 m\nradius = 12 km\n"
path = write("geo.scn", scenario("duration = 2 min\nsnapshot_interval = 1 min\n", GEO, DEEP, GHUMP,
                                 "[gauges]\nPellquin Stack = 10.5 deg, 45 deg\n"))
text, js = plan(path)
if js is None:
    check(False, "the geographic hump scenario checks")
else:
    src, g = js["source"], js["grid"]
    out = os.path.join(WORK, "geo-out")
    r = run("run", path, "--quiet", "--out", out)
    with netCDF4.Dataset(os.path.join(out, "snapshots.nc")) as d:
        e0 = np.nan_to_num(np.ma.filled(d["eta"][0].astype(np.float64), 0.0))
    R = g["radius_m"]
    lat = np.radians(g["lat_south_deg"] + (np.arange(60) + 0.5) * g["dy_deg"])
    area = (R * math.radians(g["dx_deg"])) * (R * math.radians(g["dy_deg"])) * np.cos(lat)
    vol = (e0 * area[:, None]).sum()
    want = math.pi * 0.5 * 12e3 ** 2
    check(r.returncode == 0 and abs(src["volume_m3"] - vol) <= 1e-6 * want,
          f"geographic: volume = numpy with cos(latitude) weights: {src['volume_m3']:.8g} vs {vol:.8g} m^3")
    check(abs(src["volume_m3"] - want) <= 1e-3 * want,
          f"geographic: volume {src['volume_m3']:.6g} m^3 near A pi R^2 = {want:.6g} m^3 (lengths true on the sphere)")
    check("lon_deg" in src["uplift_at"] and "lon 10.6" in text.split("Source", 1)[1].split("\n")[0],
          "geographic: the peak's place in degrees")

# ---- 3. what the water does not keep ------------------------------------------------------------------
COAST = "[seabed]\ndeep = 100 m\ncoast = east\nshoreline = 12 km\nshelf_width = 5 km\nland_height = 10 m\n"
path = write("shore.scn", scenario("duration = 2 min\n", GRID, COAST,
                                   HUMP.replace("x = 10 km", "x = 12 km"), "[gauges]\nRavelquist Weir = 4 km, 5 km\n"))
text, js = plan(path)
if js is None:
    check(False, "a hump straddling the shore checks (a warning, not an error)")
else:
    b = js["source"]["sources"][0]
    lost = 1 - b["in_water_m3"] / b["asked_m3"]
    ws = js["source"]["warnings"]
    check(0.3 < lost < 0.7 and abs(b["lost_fraction"] - lost) < 1e-12,
          f"a hump on the shoreline loses about half its volume ({100 * lost:.0f} %)")
    check(len(ws) == 1 and "source 'Tervelka Hump'" in ws[0] and "falls on land" in ws[0]
          and f"{100 * lost:.0f} %" in ws[0], f"the JSON warns, naming the source and the share ({ws})")
    check("warning: source 'Tervelka Hump':" in text, "the text plan warns too")

path = write("edge.scn", scenario("duration = 2 min\n", GRID, DEEP, HUMP.replace("x = 10 km", "x = 0 km")))
text, js = plan(path)
ws = js["source"]["warnings"] if js else []
check(len(ws) == 1 and "falls outside the grid" in ws[0] and "50 %" in ws[0],
      f"a hump centred on the west edge: half falls outside the grid ({ws})")

for name, where in (("onland.scn", "x = 19.5 km"), ("outside.scn", "x = 80 km")):
    seabed = COAST.replace("shoreline = 12 km", "shoreline = 8 km") if name == "onland.scn" else DEEP
    radius = "radius = 1 km" if name == "onland.scn" else "radius = 3 km"
    path = write(name, scenario("duration = 2 min\n", GRID, seabed,
                                HUMP.replace("x = 10 km", where).replace("radius = 3 km", radius),
                                "[gauges]\nRavelquist Weir = 2 km, 5 km\n"))
    c = run("check", path)
    r = run("run", path, "--quiet", "--out", os.path.join(WORK, name + "-out"))
    check(c.returncode == 1 and r.returncode == 1 and "[source Tervelka Hump]" in c.stderr
          and "nothing of its displaced volume is left in the water" in r.stderr,
          f"{name}: check and run refuse it, naming the source ({c.stderr.strip()})")

# ---- 4. a storm scenario: no initial displacement -------------------------------------------------------
storm = os.path.join(REPO, "scenarios", "storm-demo.scn")
if os.path.exists(storm):
    text, js = plan(storm)
    check(js is not None and js["source"]["displaced"] is False
          and "no initial displacement (the forcing drives the run)" in text,
          "a storm scenario: no initial displacement, the forcing drives the run")

# a rupture in time: the final static surface is reported
fault = os.path.join(REPO, "scenarios", "fault-demo.scn")
if os.path.exists(fault):
    text, js = plan(fault)
    ok = js is not None and js["faults"]["peaks_of"] == "whole rupture"
    check(ok and js["source"]["final_surface"] is True and "final static surface" in text
          and abs(js["source"]["uplift_max_m"] - js["faults"]["uplift_max_m"]) < 1e-12,
          "a rupture in time: the source is its final static surface, with the faults' peak")

# ---- 5. member files: shortest round-trip digits ------------------------------------------------------
path = write("sweep.scn", scenario("duration = 2 min\n", GRID, DEEP, HUMP)
             + "[sweep]\namplitude_factor = 0.4, 2\nsource_y_offset = -0.3 km, 0.7 km\n")
out = os.path.join(WORK, "sweep-out")
r = run("sweep", path, "--out", out)
texts = []
members = os.path.join(out, "members")
for f in sorted(os.listdir(members)) if os.path.isdir(members) else []:
    if f.endswith(".scn"):
        with open(os.path.join(members, f)) as fh:
            texts.append(fh.read())
joined = "\n".join(texts)
check(r.returncode == 0 and "amplitude = 0.4 m" in joined and "0.40000000000000002" not in joined
      and "y = 9700 m" in joined, "member files show 'amplitude = 0.4 m' and 'y = 9700 m'")

# ---- 6. compare: no progress text when stderr is not a terminal ---------------------------------------
path = write("cmp.scn", scenario("duration = 2 min\n", GRID, DEEP, HUMP))
r = run("compare", path, "--layouts", "A,C", "--out", os.path.join(WORK, "cmp-out"))
check(r.returncode == 0 and "\r" not in r.stderr and "ETA" not in r.stderr and "[2/2] layout C x1:" in r.stderr,
      "compare to a file: the per-run lines, no progress line")

print("%d failed" % len(FAILURES))
sys.exit(1 if FAILURES else 0)
