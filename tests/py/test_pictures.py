#!/usr/bin/python3
"""Checks of the pictures drawn by tools/plot and tools/plot-sweep.

usage: test_pictures.py SHOREWARD_BINARY WORK_DIR

Runs the built-in demo (`shoreward demo`), the storm demo (scenarios/storm-demo.scn) and the
geographic demo (scenarios/geographic-demo.scn), all on fictional coasts, and a small fictional
sweep, then draws their pictures with the tools' own functions and checks:
  - label placement: no two label boxes overlap, using the boxes matplotlib reports after drawing
    (Text.get_window_extent of every gauge, isochrone, seabed, storm-track, highest-value label and
    note box), and every gauge inside the map keeps its name;
  - every picture carries the file's global attribute `caution` in full, in small type (<= 7 pt);
  - the arrival map states the threshold (arrival_threshold_m) and has a clock-time scale from the
    time origin of the file (CF time units "seconds since ...", CF conventions 1.11 section 4.4);
  - eta_max marks its highest value where it is (the cell of the largest eta_max over water);
  - gauges.png: --shared-y gives every elevation panel the same y limits; without it the picture
    says that each gauge has its own y scale;
  - plot-sweep: every gauge panel shows x tick labels; the saved pictures have no empty margins
    (no more than 0.3 inch of blank border on any side, 45 pixels at 150 dpi: common practice).
"""
import importlib.machinery
import importlib.util
import os
import shutil
import subprocess
import sys

import matplotlib

matplotlib.use("Agg")
import matplotlib.image  # noqa: E402
import matplotlib.text  # noqa: E402
import numpy as np  # noqa: E402
from netCDF4 import Dataset  # noqa: E402

from swtest import FAILURES, check, run

BIN = os.path.abspath(sys.argv[1])
WORK = os.path.abspath(sys.argv[2])
HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.join(HERE, "..", "..")
TOOLS = os.path.join(ROOT, "tools")
shutil.rmtree(WORK, ignore_errors=True)
os.makedirs(WORK)
MAX_MARGIN_PX = 45


def load(name):
    loader = importlib.machinery.SourceFileLoader(name.replace("-", "_"), os.path.join(TOOLS, name))
    spec = importlib.util.spec_from_loader(loader.name, loader)
    module = importlib.util.module_from_spec(spec)
    loader.exec_module(module)
    return module


plot = load("plot")
plot_sweep = load("plot-sweep")

# Every figure saved through the tools' save() is recorded here before it closes: its texts (string,
# font size) and its axes, so that the checks can look at what was drawn.
SAVED = {}
_original_save = plot.save


def recording_save(fig, out):
    texts = [(t.get_text(), t.get_fontsize(), t.get_visible()) for t in fig.findobj(matplotlib.text.Text)]
    axes = [(ax.get_ylim(), [lab.get_visible() and lab.get_text() != "" for lab in ax.get_xticklabels()],
             ax.axison) for ax in fig.axes]
    SAVED[os.path.basename(out)] = {"texts": texts, "axes": axes, "fig": fig}
    return _original_save(fig, out)


plot.save = recording_save          # plot-sweep calls tools/plot's save through the same module object
plot_sweep.sp.save = recording_save


def squash(text):
    return " ".join(text.split())


def no_overlap(boxes, what):
    """Pairwise: two boxes overlap when their intersection has a positive area."""
    bad = []
    for i in range(len(boxes)):
        for j in range(i + 1, len(boxes)):
            a, b = boxes[i][2], boxes[j][2]
            if a.x0 < b.x1 and b.x0 < a.x1 and a.y0 < b.y1 and b.y0 < a.y1:
                bad.append(f"'{boxes[i][1]}' / '{boxes[j][1]}'")
    check(not bad, f"{what}: no two of its {len(boxes)} label boxes overlap" + (f" ({', '.join(bad[:4])})"
                                                                                    if bad else ""))


def caution_drawn(name, caution):
    texts = SAVED[name]["texts"]
    hit = [size for text, size, shown in texts if shown and squash(text) == squash(caution)]
    check(bool(hit) and max(hit) <= 7.0, f"{name}: carries the file's caution in full, in small type "
                                          f"({hit[0] if hit else 'missing'} pt)")


def margins(path):
    """Blank border (pixels) on the left, right, top and bottom of a saved picture."""
    img = matplotlib.image.imread(path)[..., :3]
    ink = np.nonzero((img < 0.97).any(axis=2))
    rows, cols = ink
    h, w = img.shape[:2]
    return cols.min(), w - 1 - cols.max(), rows.min(), h - 1 - rows.max()


def check_run(folder, label):
    maps_path, gauges_path = os.path.join(folder, "maps.nc"), os.path.join(folder, "gauges.nc")
    maps, gauges = plot.read_maps(maps_path), plot.read_gauges(gauges_path)
    with Dataset(maps_path) as ds:
        caution = ds.caution
        thr = float(ds.arrival_threshold_m)
    with Dataset(gauges_path) as ds:
        origin = ds.variables["time"].units.split("since ", 1)[1][:10]

    boxes = plot.plot_arrival(maps, gauges, os.path.join(folder, "arrival.png"))
    no_overlap(boxes, f"{label} arrival.png")
    sc = gauges["scale"]
    x0, x1 = np.nanmin(maps["x"]) / sc, np.nanmax(maps["x"]) / sc
    y0, y1 = np.nanmin(maps["y"]) / sc, np.nanmax(maps["y"]) / sc
    inside = [n for n, x, y in zip(gauges["names"], gauges["x"] / sc, gauges["y"] / sc)
              if x0 <= x <= x1 and y0 <= y <= y1]
    shown = {text for kind, text, _ in boxes if kind == "gauge"}
    check(set(inside) <= shown, f"{label} arrival.png: every gauge in the map keeps its name "
                                f"({sorted(set(inside) - shown)} missing)")
    check(any(kind == "isochrone" for kind, _, _ in boxes), f"{label} arrival.png: isochrone labels drawn")
    caution_drawn("arrival.png", caution)
    texts = [squash(t) for t, _, shown in SAVED["arrival.png"]["texts"] if shown]
    check(any(f">= {thr:g} m" in t for t in texts), f"{label} arrival.png: states the threshold {thr:g} m")
    check(any("clock time" in t and origin in t for t in texts),
          f"{label} arrival.png: a clock-time scale from the origin {origin}")

    boxes = plot.plot_eta_max(maps, gauges, os.path.join(folder, "eta_max.png"))
    no_overlap(boxes, f"{label} eta_max.png")
    caution_drawn("eta_max.png", caution)
    eta = np.where(maps["wet"] & np.isfinite(maps["eta_max"]), maps["eta_max"], -np.inf)
    j, i = np.unravel_index(np.argmax(eta), eta.shape)
    fig = SAVED["eta_max.png"]["fig"]
    marks = [t for t in fig.axes[0].texts if (t.get_gid() or "") == "label:highest"]
    where = (maps["x"][i] / maps["scale"], maps["y"][j] / maps["scale"])
    check(len(marks) == 1 and np.allclose(marks[0].xy, where) and f"{eta[j, i]:.3g}" in marks[0].get_text(),
          f"{label} eta_max.png: the highest value {eta[j, i]:.3g} m is marked at its cell {where}")

    for name, var in (("wind_max.png", "wind_speed_max"), ("pressure_min.png", "air_pressure_min")):
        if maps[var] is not None:
            boxes = plot.plot_air_map(maps, gauges, os.path.join(folder, name), var, 1.0, "viridis", var, "",
                                      var, var == "air_pressure_min")
            no_overlap(boxes, f"{label} {name}")
            caution_drawn(name, caution)

    plot.plot_gauges(gauges, os.path.join(folder, "gauges.png"))
    caution_drawn("gauges.png", caution)
    check(any("each gauge has its own y scale" in t for t, _, s in SAVED["gauges.png"]["texts"] if s),
          f"{label} gauges.png: says that each gauge has its own y scale")
    plot.plot_gauges(gauges, os.path.join(folder, "gauges-shared.png"), shared_y=True)
    n = len(gauges["names"])      # the subplots come first in fig.axes, twin axes after them
    all_axes = SAVED["gauges-shared.png"]["axes"]
    eta_axes = all_axes[0:2 * n:2] if gauges["air"] is not None else all_axes[:n]
    limits = {tuple(np.round(lim, 12)) for lim, _, _ in eta_axes}
    check(len(limits) == 1, f"{label} gauges.png --shared-y: one y scale on all {len(eta_axes)} panels")


def main():
    # the built-in demo (fictional Vashkel Bay)
    demo = os.path.join(WORK, "demo")
    r = run("demo", demo)
    check(r.returncode == 0, "shoreward demo runs " + r.stderr.strip()[-200:])
    check_run(demo, "demo")
    cli = subprocess.run(["/usr/bin/python3", os.path.join(TOOLS, "plot"), demo, "--shared-y"],
                         capture_output=True, text=True)
    check(cli.returncode == 0 and "gauges.png" in cli.stdout, "tools/plot --shared-y draws from the command line "
          + cli.stderr.strip()[-200:])

    # the storm demo (fictional Storm Quistabel) and the geographic demo (fictional Quorvane Sea)
    for label, files in (("storm", ("storm-demo.scn", "storm-demo-track.txt")),
                         ("geographic", ("geographic-demo.scn",))):
        folder = os.path.join(WORK, label)
        os.makedirs(folder)
        for name in files:
            shutil.copy(os.path.join(ROOT, "scenarios", name), folder)
        r = run("run", os.path.join(folder, files[0]), "--out", folder, "--quiet")
        check(r.returncode == 0, f"{label} demo runs " + r.stderr.strip()[-200:])
        check_run(folder, label)

    # a small fictional sweep
    sweep_scn = os.path.join(WORK, "sweep.scn")
    with open(sweep_scn, "w") as f:
        f.write(SWEEP)
    out = os.path.join(WORK, "sweep")
    r = run("sweep", sweep_scn, "--out", out, "--quiet")
    check(r.returncode == 0, "a small sweep runs " + r.stderr.strip()[-200:])
    d = plot_sweep.read_sweep(os.path.join(out, "sweep.nc"))
    with Dataset(os.path.join(out, "sweep.nc")) as ds:
        caution = ds.caution
    boxes = plot_sweep.plot_spread(d, os.path.join(out, "sweep_spread.png"))
    no_overlap(boxes, "sweep_spread.png")
    caution_drawn("sweep_spread.png", caution)
    plot_sweep.plot_gauges(d, os.path.join(out, "sweep_gauges.png"))
    caution_drawn("sweep_gauges.png", caution)
    panels = [ticks for _, ticks, on in SAVED["sweep_gauges.png"]["axes"] if on]
    check(len(panels) == 4 and all(any(t) for t in panels),
          f"sweep_gauges.png: all {len(panels)} gauge panels show x tick labels")
    for name in ("sweep_spread.png", "sweep_gauges.png"):
        m = margins(os.path.join(out, name))
        check(max(m) <= MAX_MARGIN_PX, f"{name}: blank borders {m} px, at most {MAX_MARGIN_PX}")


# A small fictional coast with four gauges (two panel columns in sweep_gauges.png).
SWEEP = """; a small FICTIONAL coast for picture tests
[run]
title = picture test coast (fictional)
duration = 8 min
courant_fraction = 0.9
gauge_interval = 15 s
arrival_threshold = 0.01 m

[grid]
nx = 50
ny = 40
dx = 1 km

[edges]
all = open
east = wall

[seabed]
deep = 400 m
coast = east
shoreline = 46 km
shelf_depth = 50 m
shelf_width = 8 km
slope_width = 6 km
min_depth = 2 m

[source main]
shape = hump
x = 12 km
y = 20 km
amplitude = 0.5 m
radius = 3 km

[gauges]
offshore = 20 km, 20 km
shelf = 38 km, 26 km
shelf south = 38 km, 24 km
coast = 44 km, 20 km

[sweep]
amplitude_factor = 0.5, 1, 2
source_x_offset = -3 km, 0 km, 3 km
design = one-at-a-time
"""

if __name__ == "__main__":
    main()
    print(f"{len(FAILURES)} failure(s)")
    sys.exit(1 if FAILURES else 0)
