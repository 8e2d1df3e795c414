#!/usr/bin/python3
"""A catalogue of inputs the parser accepts or refuses at the edges: each ends, in time, with the right
exit code and a one-line error that names the cause.

usage: test_bad_inputs.py SHOREWARD_BINARY WORK_DIR

Every case is one row of CASES: a name, the scenario text, the NetCDF files it needs (name -> builder),
the command, the expected exit code and words the output (stdout + stderr) must contain. Each command
runs under a timeout, so a hang (a loop that never ends, a signal ignored) fails instead of stalling
the suite. A row may also name a check of its own (EXTRA). Rows marked PENDING describe a fix that is
not in yet (see the comment beside them): they are run and reported but do not fail the test.

What is covered (issue 15, item 4): intervals far below the time step (the observers sample at most once
per step; the sample and snapshot counts are those of the steps), out-of-range values from a seabed file
after unpacking (scale_factor, add_offset), non-finite values, text that is not UTF-8, and grids one
cell wide with open edges across them. Every place name is invented (fictional).
"""
import json
import os
import subprocess
import sys

import numpy as np
from netCDF4 import Dataset

BIN = os.path.abspath(sys.argv[1])
WORK = os.path.abspath(sys.argv[2])
os.makedirs(WORK, exist_ok=True)
TIMEOUT_S = 60
FAILURES = []
PENDING_FAILED = []


def check(cond, what, pending=False):
    print(("ok   " if cond else ("PEND " if pending else "FAIL ")) + what)
    if not cond:
        (PENDING_FAILED if pending else FAILURES).append(what)


# ---- scenario pieces ----------------------------------------------------------------------------------
def run_sec(extra="", duration="10 min"):
    return f"[run]\ntitle = Brevanquil Flats (fictional)\nduration = {duration}\n{extra}"


GRID = "[grid]\nnx = 20\nny = 20\ndx = 1 km\n"
DEEP = "[seabed]\ndeep = 100 m\n"
HUMP = "[source Tervelka Hump]\nshape = hump\nx = 10 km\ny = 10 km\namplitude = 1 m\nradius = 3 km\n"
GAUGE = "[gauges]\nRavelquist Weir = 5 km, 5 km\n"
BASE = GRID + DEEP + HUMP + GAUGE   # 30 steps of 20.32 s over 10 min (C layout, 90 % of its limit)


def bed_file(var_keys=""):
    """A [seabed] from the file bed.nc (grid taken from it), with extra keys."""
    return "[seabed]\nfile = bed.nc\n" + var_keys


FILE_REST = "[source Tervelka Hump]\nshape = hump\nx = 5 km\ny = 5 km\namplitude = 1 m\nradius = 2 km\n" + \
            "[gauges]\nRavelquist Weir = 3 km, 3 km\n"


SRC_FILE = "[source Pellquin Patch]\nshape = file\nfile = eta.nc\nscale = 1\n"


def make_eta(values, dtype="f8", **attrs):
    """A builder of eta.nc: 0 m over the same 10 km x 10 km as BASE's grid except where values says."""
    return make_bed(values, dtype, positive=None, var="eta", base=0.0, **attrs)


def make_bed(values, dtype="f8", positive="down", var="depth", base=100.0, **attrs):
    """A builder of a 10 x 10 file of 1 km cells, variable `var` (dtype) of `base` where values (a dict
    {(j, i): value} of stored values) says nothing; attrs become attributes set before the data are written
    (scale_factor, add_offset: the raw stored values are written, unpacked by the reader)."""
    def build(path):
        with Dataset(path, "w") as d:
            d.createDimension("y", 10)
            d.createDimension("x", 10)
            for name in ("y", "x"):
                c = d.createVariable(name, "f8", (name,))
                c.units = "m"
                c[:] = 500.0 + 1000.0 * np.arange(10)
            v = d.createVariable(var, dtype, ("y", "x"))
            v.set_auto_maskandscale(False)
            if positive:
                v.positive = positive
            for k, a in attrs.items():
                v.setncattr(k, np.array(a, dtype=dtype) if k in ("scale_factor", "add_offset") and dtype == "f8" else a)
            data = np.full((10, 10), base)
            for (j, i), val in values.items():
                data[j, i] = val
            v[:] = data.astype(dtype)
    return build


# ---- checks of their own ------------------------------------------------------------------------------
def times_in(folder, name):
    with Dataset(os.path.join(folder, name)) as d:
        return len(d.dimensions["time"])


def every_step(out):
    """Gauge samples: one a step and one at t = 0 (30 steps: 31), not more; and so snapshots when written."""
    return times_in(out, "gauges.nc") == 31 and (not os.path.exists(os.path.join(out, "snapshots.nc"))
                                                 or times_in(out, "snapshots.nc") == 31)


def snapshots_every_step(out):
    """Snapshots one a step and one at t = 0 (31); gauges at the default 30 s over 10 min: 21."""
    return times_in(out, "snapshots.nc") == 31 and times_in(out, "gauges.nc") == 21


def valid_json(out_text):
    try:
        j = json.loads(out_text)
    except ValueError:
        return False
    return "Café" in j.get("title", "")


# ---- the catalogue ------------------------------------------------------------------------------------
# (name, scenario text, {file: builder}, command, exit code, words, extra check or None, pending)
# command: "check", "run" (into WORK/<name>-out) or "json" (check --json, whose stdout must parse).
CASES = [
    # intervals: bounded loops, buffers from the steps
    ("snap-1e-12", run_sec("snapshot_interval = 1e-12 s\n") + BASE, {}, "run", 0, [], snapshots_every_step, False),
    ("gauge-1e-12", run_sec("gauge_interval = 1e-12 s\n") + BASE, {}, "run", 0, [], every_step, False),
    ("gauge-1e-300", run_sec("gauge_interval = 1e-300 s\n") + BASE, {}, "run", 0, [], every_step, False),
    ("both-1e-300", run_sec("gauge_interval = 1e-300 s\nsnapshot_interval = 1e-300 s\n") + BASE, {}, "run", 0, [],
     every_step, False),
    ("check-snap-1e-12", run_sec("snapshot_interval = 1e-12 s\n") + BASE, {}, "check", 0,
     ["21 gauge samples each", "31 snapshots"], None, False),
    ("check-gauge-1e-300", run_sec("gauge_interval = 1e-300 s\n") + BASE, {}, "check", 0, ["31 gauge samples each"],
     None, False),
    ("gauge-below-dt", run_sec("gauge_interval = 7 s\n") + BASE, {}, "check", 0, ["31 gauge samples each"], None,
     False),
    ("gauge-long-run-tiny", run_sec("gauge_interval = 1e-12 s\nsnapshot_interval = 1e-9 s\n", "30 d")
     + GRID.replace("dx = 1 km", "dx = 1000 km") + DEEP, {}, "check", 0, ["gauge samples each"], None, False),
    ("gauge-0", run_sec("gauge_interval = 0 s\n") + BASE, {}, "check", 1, ["gauge_interval", "0 < gauge_interval"],
     None, False),
    ("gauge-negative", run_sec("gauge_interval = -1 s\n") + BASE, {}, "check", 1, ["gauge_interval", "accepted"], None,
     False),
    ("gauge-nan", run_sec("gauge_interval = nan s\n") + BASE, {}, "check", 1, ["gauge_interval", "not a finite"], None,
     False),
    ("snap-inf", run_sec("snapshot_interval = inf s\n") + BASE, {}, "check", 1, ["snapshot_interval", "not a finite"],
     None, False),
    ("snap-over", run_sec("snapshot_interval = 31 d\n") + BASE, {}, "check", 1, ["snapshot_interval", "30 d"], None,
     False),
    ("dt-tiny", run_sec("dt = 1e-300 s\n") + BASE, {}, "check", 1, ["steps", "shorten the duration"], None, False),
    # seabed file values, after unpacking, with the limits of [seabed] deep and land_height
    ("bed-ok", run_sec() + bed_file() + FILE_REST, {"bed.nc": make_bed({})}, "check", 0, ["Ravelquist Weir"], None, False),
    ("bed-11km", run_sec() + bed_file() + FILE_REST, {"bed.nc": make_bed({(3, 4): 11000.0})}, "check", 0, ["11000"],
     None, False),
    ("bed-1e6", run_sec() + bed_file() + FILE_REST, {"bed.nc": make_bed({(3, 4): 1e6})}, "check", 1,
     ["bed.nc", "'depth'", "1e+06", "i = 4, j = 3", "x = 4500 m, y = 3500 m", "deeper than any sea", "12000 m"], None,
     False),
    ("bed-1e300", run_sec() + bed_file() + FILE_REST, {"bed.nc": make_bed({(0, 0): 1e300})}, "check", 1,
     ["bed.nc", "i = 0, j = 0", "deeper than any sea"], None, False),
    ("bed-high-land", run_sec() + bed_file() + FILE_REST, {"bed.nc": make_bed({(9, 9): -2e4})}, "check", 1,
     ["bed.nc", "i = 9, j = 9", "higher than any land", "-9000 m"], None, False),
    ("bed-up-deep", run_sec() + bed_file("positive = up\n") + FILE_REST,
     {"bed.nc": make_bed({(2, 2): -5e4}, positive=None)}, "check", 1, ["i = 2, j = 2", "50000", "deeper"], None, False),
    ("bed-scale-overflow", run_sec() + bed_file() + FILE_REST,
     {"bed.nc": make_bed({(1, 2): 30000}, dtype="i2", scale_factor=np.float64(1e305))}, "check", 1,
     ["bed.nc", "depth[1][2]", "scale_factor", "overflows"], None, False),
    ("bed-scale-too-deep", run_sec() + bed_file() + FILE_REST,
     {"bed.nc": make_bed({(5, 6): 30000}, dtype="i2", scale_factor=np.float64(100.0))}, "check", 1,
     ["i = 6, j = 5", "3e+06", "deeper than any sea"], None, False),
    ("bed-offset-too-deep", run_sec() + bed_file() + FILE_REST,
     {"bed.nc": make_bed({}, dtype="i2", add_offset=np.float64(1e6))}, "check", 1,
     ["deeper than any sea", "i = 0, j = 0"], None, False),
    ("bed-packed-ok", run_sec() + bed_file() + FILE_REST,
     {"bed.nc": make_bed({}, dtype="i2", scale_factor=np.float64(2.0), add_offset=np.float64(-100.0))}, "check", 0,
     ["Ravelquist Weir"], None, False),   # 100 stored -> 100 m
    ("bed-nan", run_sec() + bed_file() + FILE_REST, {"bed.nc": make_bed({(4, 4): np.nan})}, "check", 1,
     ["depth[4][4]", "missing or non-finite", "missing = land"], None, False),
    ("bed-inf", run_sec() + bed_file() + FILE_REST, {"bed.nc": make_bed({(4, 5): np.inf})}, "check", 1,
     ["depth[4][5]", "non-finite"], None, False),
    ("bed-nan-land", run_sec() + bed_file("missing = land\n") + FILE_REST, {"bed.nc": make_bed({(9, 0): np.nan})},
     "check", 0, ["Ravelquist Weir"], None, False),
    # a source file's displacement, after unpacking and times `scale`, within [source] amplitude's 100 m
    ("src-file-ok", run_sec() + BASE + SRC_FILE, {"eta.nc": make_eta({(5, 5): 2.0})}, "check", 0, ["Ravelquist Weir"], None,
     False),
    ("src-file-1e300", run_sec() + BASE + SRC_FILE, {"eta.nc": make_eta({(5, 6): 1e300})}, "check", 1,
     ["eta.nc", "eta[5][6] = 1e+300", "|displacement| <= 100 m"], None, False),
    ("src-file-scale", run_sec() + BASE + SRC_FILE.replace("scale = 1", "scale = 1000"),
     {"eta.nc": make_eta({(5, 5): 2.0})}, "check", 1, ["eta[5][5] = 2", "scale = 1000", "<= 0.1 m"], None, False),
    ("src-file-overflow", run_sec() + BASE + SRC_FILE,
     {"eta.nc": make_eta({(5, 5): 30000}, dtype="i2", scale_factor=np.float64(1e306))}, "check", 1,
     ["eta.nc", "eta[5][5]", "overflows"], None, False),
    # text: UTF-8 only (titles and names go into JSON and NetCDF)
    ("utf8-latin1-title", "[run]\ntitle = Caf\xe9 Bay (fictional)\nduration = 10 min\n" + BASE, {}, "check", 1,
     [":2:", "byte 12 of the line (0xE9)", "not UTF-8"], None, False),
    ("utf8-gauge-name", run_sec() + BASE + "Wr\xf6ng Quay = 6 km, 6 km\n", {}, "check", 1,
     [":18:", "byte 3 of the line (0xF6)", "not UTF-8"], None, False),
    ("utf8-comment", "; Caf\xe9\n" + run_sec() + BASE, {}, "check", 1, [":1:", "not UTF-8"], None, False),
    ("utf8-overlong", run_sec().replace("Brevanquil", "Brevanquil\xc0\xaf") + BASE, {}, "check", 1, [":2:", "(0xC0)"], None,
     False),
    ("utf8-surrogate", run_sec().replace("Brevanquil", "Brevanquil\xed\xa0\x80") + BASE, {}, "check", 1, [":2:", "(0xED)"],
     None, False),
    ("utf8-above-max", run_sec().replace("Brevanquil", "Brevanquil\xf4\x90\x80\x80") + BASE, {}, "check", 1,
     [":2:", "(0xF4)"], None, False),
    ("utf8-f5", run_sec().replace("Brevanquil", "Brevanquil\xf5") + BASE, {}, "check", 1, [":2:", "(0xF5)"], None, False),
    ("utf8-truncated-end", run_sec() + BASE + "; \xe2\x82", {}, "check", 1, [":18:", "(0xE2)", "not UTF-8"], None,
     False),
    ("utf8-lone-continuation", run_sec() + BASE.replace("Ravelquist Weir", "Old \x80Weir"), {}, "check", 1, ["(0x80)"], None,
     False),
    ("utf8-valid-json", "[run]\ntitle = Café Bay — ebb 🌊 (fictional)\nduration = 10 min\n" + BASE
     + "Østrellø Kaj = 6 km, 6 km\n", {}, "json", 0, [], valid_json, False),
]

# one cell wide with open (or level) edges across it: the cross direction has waves after all (issue 15).
# sw_model_dims (model.c) gives such grids the plane's limit; walls or periodic edges across keep the channel's.
ROW = "[grid]\nnx = 200\nny = 1\ndx = 1 km\n[seabed]\ndeep = 1000 m\n" \
      "[source Tervelka Hump]\nshape = hump\nx = 100 km\ny = 0.5 km\namplitude = 1 m\nradius = 10 km\n"
COL = "[grid]\nnx = 1\nny = 200\ndx = 1 km\n[seabed]\ndeep = 1000 m\n" \
      "[source Tervelka Hump]\nshape = hump\nx = 0.5 km\ny = 100 km\namplitude = 1 m\nradius = 10 km\n"
for lay in "ACE":
    CASES.append((f"row-{lay}-walls", run_sec(f"layout = {lay}\n", "2 h") + ROW, {}, "run", 0, [], None, False))
    CASES.append((f"row-{lay}-open-along", run_sec(f"layout = {lay}\n", "2 h") + ROW
                  + "[edges]\nwest = open\neast = open\n", {}, "run", 0, [], None, False))
    CASES.append((f"row-{lay}-open-across", run_sec(f"layout = {lay}\n", "2 h") + ROW + "[edges]\nall = open\n",
                  {}, "run", 0, [], None, False))
CASES += [
    ("row-C-level-across", run_sec("layout = C\n", "2 h") + ROW + "[edges]\nsouth = level\nnorth = level\n", {}, "run", 0,
     [], None, False),
    ("col-C-open-across", run_sec("layout = C\n", "2 h") + COL + "[edges]\nall = open\n", {}, "run", 0, [], None, False),
    ("col-C-walls-dx-ne-dy", run_sec("layout = C\n", "2 h") + COL.replace("dx = 1 km", "dx = 5 km\ndy = 1 km")
     .replace("x = 0.5 km", "x = 2.5 km"), {}, "run", 0, [], None, False),
]


def run_case(name, text, files, command, want_rc, words, extra, pending):
    folder = os.path.join(WORK, name)
    os.makedirs(folder, exist_ok=True)
    for fname, build in files.items():
        path = os.path.join(folder, fname)
        if os.path.exists(path):
            os.remove(path)
        build(path)
    scn = os.path.join(folder, "case.scn")
    with open(scn, "wb") as f:
        f.write(text.encode("latin-1") if name.startswith("utf8-") and name != "utf8-valid-json"
                else text.encode("utf-8"))
    out = os.path.join(folder, "out")
    args = {"check": ["check", scn], "json": ["check", scn, "--json"], "run": ["run", scn, "--quiet", "--out", out]}
    try:
        r = subprocess.run([BIN] + args[command], capture_output=True, timeout=TIMEOUT_S)
    except subprocess.TimeoutExpired:
        check(False, f"{name}: ends within {TIMEOUT_S} s", pending)
        return
    said = (r.stdout + r.stderr).decode("utf-8", "replace")
    missing = [w for w in words if w not in said]
    error_lines = [ln for ln in r.stderr.decode("utf-8", "replace").splitlines() if "error:" in ln]
    sanitizer = "runtime error:" in said or "Sanitizer" in said   # a sanitizer build's report (tools/sanitize)
    ok = r.returncode == want_rc and not missing and not sanitizer and (want_rc == 0 or len(error_lines) == 1)
    if ok and extra is not None:
        ok = extra(r.stdout.decode("utf-8", "replace") if command == "json" else out)
    check(ok, f"{name}: exit {r.returncode} (want {want_rc})" + (f", missing {missing}" if missing else "")
          + ("" if ok else f" [{said.strip().splitlines()[-1][:300] if said.strip() else ''}]"), pending)


for case in CASES:
    run_case(*case)
print("%d cases, %d failed, %d pending still failing" % (len(CASES), len(FAILURES), len(PENDING_FAILED)))
sys.exit(1 if FAILURES else 0)
