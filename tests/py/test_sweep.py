#!/usr/bin/python3
"""End-to-end checks of `shoreward sweep`, its files and tools/plot-sweep.

usage: test_sweep.py SHOREWARD_BINARY WORK_DIR

Checks (each names its outside reference where there is one):
  - every member equals the same member run alone with `shoreward run` on its members/mNNNNN.scn
    (bitwise for the gauge series, exactly for arrival and peak);
  - members side by side (--members-parallel 2) and one after another give bitwise identical data;
  - a sweep interrupted with SIGINT keeps its finished members and, run again, gives the same
    sweep.nc data as an uninterrupted sweep; a changed scenario is then refused;
  - a member with an unstable dt fails with its cause and the others are not affected;
  - the maps equal numpy's min / median / max / percentiles of the member maps (numpy.percentile,
    linear interpolation = Hyndman & Fan 1996 definition 7 [memory]);
  - one-at-a-time swings equal max - min computed with numpy; Latin hypercube sensitivities equal
    scipy.stats.spearmanr, and each parameter has one member per stratum (McKay et al. 1979 [memory]);
  - CF attributes (CF 1.11: realization, timeseries_id), the caution in the terminal, Markdown and
    file, `check` and --json, FILE:LINE errors, and tools/plot-sweep's pictures.
"""
import json
import os
import shutil
import signal
import subprocess
import sys
import time
import warnings

import numpy as np
from netCDF4 import Dataset
from scipy import stats

from swtest import FAILURES, check, run

BIN = os.path.abspath(sys.argv[1])
WORK = os.path.abspath(sys.argv[2])
HERE = os.path.dirname(os.path.abspath(__file__))
PLOT = os.path.join(HERE, "..", "..", "tools", "plot-sweep")
shutil.rmtree(WORK, ignore_errors=True)   # a sweep resumes from what it finds: start from nothing
os.makedirs(WORK)


def write(name, text):
    path = os.path.join(WORK, name)
    with open(path, "w") as f:
        f.write(text)
    return path


# A small fictional coast: shelf to the east, a hump offshore, three gauges.
COAST = """; small fictional coast for sweep tests
[run]
title = sweep test coast
duration = {duration}
courant_fraction = 0.9
gauge_interval = 15 s
arrival_threshold = 0.01 m

[grid]
nx = {nx}
ny = {ny}
dx = 1 km

[edges]
all = open
east = wall

[seabed]
deep = 400 m
coast = east
shoreline = {shore} km
shelf_depth = 50 m
shelf_width = 8 km
slope_width = 6 km
min_depth = 2 m

[source main]
shape = hump
x = 12 km
y = {ym} km
amplitude = 0.5 m
radius = 3 km

[gauges]
offshore = 20 km, {ym} km
shelf = {g2} km, {g2y} km
coast = {g3} km, {ym} km

[sweep]
{sweep}
"""


def coast(sweep, duration="8 min", nx=50, ny=40):
    shore = nx - 4
    return COAST.format(duration=duration, nx=nx, ny=ny, shore=shore, ym=ny // 2, g2=shore - 8, g2y=ny // 2 + 6,
                        g3=shore - 2, sweep=sweep)


def data_vars(path):
    """Every variable's raw bytes (fill values as stored), for bitwise comparison."""
    out = {}
    with Dataset(path) as d:
        d.set_auto_mask(False)
        for k, v in d.variables.items():
            out[k] = np.array(v[:]).tobytes()
    return out


def masked(ds, name):
    return np.ma.filled(np.ma.asarray(ds.variables[name][:], dtype=float), np.nan)


def sweep(path, out, *extra):
    return run("sweep", path, "--out", out, *extra)


# ---- checks ------------------------------------------------------------------------------

OAT = """amplitude_factor = 2
source_x_offset = 3 km
courant_fraction = 0.5
grid.dx = 1.2 km
layout = A
arrival_threshold = 0.02 m"""


def test_members_equal_run():
    path = write("oat.scn", coast(OAT))
    out = os.path.join(WORK, "oat")
    r = sweep(path, out, "--quiet")
    check(r.returncode == 0, "one-at-a-time sweep runs (exit %d: %s)" % (r.returncode, r.stderr.strip()[-400:]))
    with Dataset(os.path.join(out, "sweep.nc")) as d:
        n = d.dimensions["member"].size
        check(n == 7, "base + 6 one-at-a-time members (%d)" % n)
        eta = masked(d, "gauge_eta")
        check(not np.array(d.variables["member_failed"][:]).any(), "no member failed")
        arrival, peak = masked(d, "arrival_time"), masked(d, "peak")
    for k in range(n):
        scn = os.path.join(out, "members", "m%05d.scn" % k)
        rout = os.path.join(WORK, "oat-run-%d" % k)
        rr = run("run", scn, "--out", rout, "--json", "--threads", "2")
        check(rr.returncode == 0, "member %d runs alone with `shoreward run` (%s)" % (k, rr.stderr.strip()[-300:]))
        doc = json.loads(rr.stdout)
        with Dataset(os.path.join(rout, "gauges.nc")) as g:
            g.set_auto_mask(False)
            alone = np.array(g.variables["eta"][:])
        mine = eta[k][:, :alone.shape[1]]
        same = mine.tobytes() == alone.tobytes() and np.all(np.isnan(eta[k][:, alone.shape[1]:]))
        check(same, "member %d: gauge series bitwise equal to `shoreward run` (%d x %d values)"
              % (k, alone.shape[0], alone.shape[1]))
        arr_alone = np.array([np.nan if g["arrival_s"] is None else g["arrival_s"] for g in doc["gauges"]])
        pk_alone = np.array([g["peak_m"] for g in doc["gauges"]])
        # cJSON prints a double with 15 digits when that reads back within 1 ulp, so compare to 1 ulp
        close = np.allclose(arr_alone, arrival[k], rtol=3e-16, atol=0, equal_nan=True) and \
            np.allclose(pk_alone, peak[k], rtol=3e-16, atol=0)
        check(close, "member %d: arrival and peak equal to `shoreward run` (to the 1 ulp JSON keeps)" % k)
    return out


def test_swing(out):
    """One-at-a-time swing = max - min over the base and the member that varies the parameter."""
    with Dataset(os.path.join(out, "sweep.nc")) as d:
        arrival, peak = masked(d, "arrival_time"), masked(d, "peak")
        sa, sp = masked(d, "arrival_sensitivity"), masked(d, "peak_sensitivity")
    worst = 0.0
    for p in range(6):
        members = [0, p + 1]   # one value per parameter, written in order
        for g in range(3):
            for y, s in ((arrival, sa), (peak, sp)):
                v = y[members, g]
                v = v[np.isfinite(v)]
                want = v.max() - v.min() if v.size >= 2 else np.nan
                worst = max(worst, 0 if np.isnan(want) and np.isnan(s[g, p]) else abs(want - s[g, p]))
    check(worst == 0.0, "one-at-a-time swings equal numpy max - min (worst difference %g)" % worst)
    # doubling the amplitude doubles the peak (linear model [derived]): member 1 vs the base
    ratio = peak[1] / peak[0]
    check(np.allclose(ratio, 2.0, rtol=1e-13, atol=0), "amplitude_factor 2 doubles every gauge's peak: %s"
          % np.array2string(ratio, precision=15))


FACTORIAL = """design = factorial
amplitude_factor = 0.5, 1, 2
source_y_offset = -3 km, 0, 3 km
depth_factor = 0.8, 1.2"""


def test_parallel_identical():
    path = write("fact.scn", coast(FACTORIAL))
    outs = []
    for par in ("1", "2"):
        out = os.path.join(WORK, "fact-p%s" % par)
        r = sweep(path, out, "--quiet", "--members-parallel", par)
        check(r.returncode == 0, "factorial sweep with --members-parallel %s (%s)" % (par, r.stderr.strip()[-300:]))
        outs.append(data_vars(os.path.join(out, "sweep.nc")))
    same = outs[0].keys() == outs[1].keys() and all(outs[0][k] == outs[1][k] for k in outs[0])
    check(same, "members one after another and side by side: bitwise identical data (%d variables)" % len(outs[0]))
    return os.path.join(WORK, "fact-p1")


def test_maps_vs_numpy(out):
    with Dataset(os.path.join(out, "sweep.nc")) as d:
        failed = np.array(d.variables["member_failed"][:]).astype(bool)
        got = {k: masked(d, k) for k in ("arrival_earliest", "arrival_median", "arrival_latest", "arrival_spread",
                                         "eta_max_p50", "eta_max_p90", "eta_max_highest")}
        nwet = np.array(d.variables["members_wet"][:])
        nreach = np.array(d.variables["members_reached"][:])
    arr, emx, wet = [], [], []
    for k in np.nonzero(~failed)[0]:
        with Dataset(os.path.join(out, "members", "m%05d.nc" % k)) as m:
            arr.append(masked(m, "arrival_map"))
            emx.append(masked(m, "eta_max_map"))
            wet.append(np.array(m.variables["wet"][:]).astype(bool))
    arr, emx, wet = np.array(arr), np.array(emx), np.array(wet)
    a = np.where(wet, np.where(np.isnan(arr), np.inf, arr), np.nan)    # never reached = latest
    e = np.where(wet, emx, np.nan)
    with np.errstate(all="ignore"), warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)   # all-NaN cells: land in every member
        want = {
            "arrival_earliest": np.nanmin(a, axis=0),
            "arrival_latest": np.nanmax(a, axis=0),
            "arrival_median": np.nanpercentile(a, 50, axis=0),
            "eta_max_p50": np.nanpercentile(e, 50, axis=0),
            "eta_max_p90": np.nanpercentile(e, 90, axis=0),
            "eta_max_highest": np.nanmax(e, axis=0),
        }
    want = {k: np.where(np.isfinite(v), v, np.nan) for k, v in want.items()}
    want["arrival_spread"] = want["arrival_latest"] - want["arrival_earliest"]
    for k, v in want.items():
        both = np.isfinite(v) & np.isfinite(got[k])
        agree_nan = np.array_equal(np.isnan(v), np.isnan(got[k]))
        err = np.max(np.abs(v[both] - got[k][both]) / np.maximum(np.abs(v[both]), 1e-30)) if both.any() else 0
        check(agree_nan and err < 1e-12, "%s equals numpy over %d members (rel. difference %.2g, %d cells)"
              % (k, arr.shape[0], err, both.sum()))
    check(np.array_equal(nwet, wet.sum(axis=0)) and np.array_equal(nreach, (wet & np.isfinite(arr)).sum(axis=0)),
          "members_wet and members_reached count the member maps")
    print("     eta_max_p90 - p50 at most %.3g m; arrival spread at most %.1f min" % (
        np.nanmax(got["eta_max_p90"] - got["eta_max_p50"]), np.nanmax(got["arrival_spread"]) / 60))


def test_resume():
    path = write("resume.scn", coast(FACTORIAL, duration="60 min", nx=200, ny=200))
    full = os.path.join(WORK, "resume-full")
    r = sweep(path, full, "--quiet")
    check(r.returncode == 0, "uninterrupted sweep for the resume check (%s)" % r.stderr.strip()[-300:])
    out = os.path.join(WORK, "resume")
    members = os.path.join(out, "members")
    p = subprocess.Popen([BIN, "sweep", path, "--out", out, "--quiet"], stdout=subprocess.PIPE,
                         stderr=subprocess.PIPE, text=True)
    t0 = time.time()
    while time.time() - t0 < 120:   # interrupt once at least two members are finished
        done = [f for f in os.listdir(members) if f.endswith(".nc")] if os.path.isdir(members) else []
        if len(done) >= 2 or p.poll() is not None:
            break
        time.sleep(0.02)
    p.send_signal(signal.SIGINT)
    _, err = p.communicate(timeout=120)
    kept = sorted(f for f in os.listdir(members) if f.endswith(".nc"))
    check(p.returncode == 130, "interrupted sweep exits 130 (got %s)" % p.returncode)
    check(2 <= len(kept) < 18, "interrupted sweep keeps its finished members (%d of 18)" % len(kept))
    check("resume" in err and "kept" in err, "it says how to resume: %s" % err.strip()[-200:])
    check(not os.path.exists(os.path.join(out, "sweep.nc")), "no sweep.nc after an interruption")
    check(not [f for f in os.listdir(members) if f.endswith(".part")], "no .part file left behind")
    r = sweep(path, out)
    check(r.returncode == 0, "the same command resumes (%s)" % r.stderr.strip()[-300:])
    check("kept from an earlier attempt" in r.stdout, "the resumed sweep says what it kept")
    a, b = data_vars(os.path.join(full, "sweep.nc")), data_vars(os.path.join(out, "sweep.nc"))
    same = a.keys() == b.keys() and all(a[k] == b[k] for k in a)
    diff = [k for k in a if a.get(k) != b.get(k)]
    check(same, "resumed sweep.nc data equal the uninterrupted sweep's (%d variables; differ: %s)" % (len(a), diff))
    # a changed scenario cannot resume into the same folder
    write("resume.scn", coast(FACTORIAL.replace("0.5, 1, 2", "0.5, 1, 3"), duration="60 min", nx=200, ny=200))
    r = sweep(path, out, "--quiet")
    check(r.returncode == 1 and "different scenario text" in r.stderr and "line" in r.stderr,
          "a changed scenario is refused: %s" % r.stderr.strip()[-300:])


def test_failed_member():
    path = write("unstable.scn", coast("run.dt = 5 s, 400 s"))
    out = os.path.join(WORK, "unstable")
    r = sweep(path, out)
    check(r.returncode == 0, "a sweep with one unstable member completes (exit %d)" % r.returncode)
    check("1 member failed" in r.stdout and "exceeds the C-layout limit" in r.stdout,
          "the failed member is reported with its cause")
    with Dataset(os.path.join(out, "sweep.nc")) as d:
        failed = np.array(d.variables["member_failed"][:])
        errors = [str(s) for s in d.variables["member_error"][:].astype(str)]
        err2 = "".join(np.array(d.variables["member_error"][2]).astype(str))
        peak = masked(d, "peak")
    check(list(failed) == [0, 0, 1], "member_failed = %s" % list(failed))
    check("exceeds" in err2, "member_error holds the cause")
    check(np.isfinite(peak[:2]).all() and np.isnan(peak[2]).all(), "the other members have their results")
    del errors


LHS = """design = latin-hypercube
members = 12
seed = 5
depth_factor = 0.7 .. 1.3
source_x_offset = -1 km .. 1 km"""


def test_lhs_spearman():
    path = write("lhs.scn", coast(LHS, duration="15 min"))
    out = os.path.join(WORK, "lhs")
    r = sweep(path, out, "--json", "--quiet")
    check(r.returncode == 0, "Latin hypercube sweep runs (%s)" % r.stderr.strip()[-300:])
    try:
        doc = json.loads(r.stdout)
    except ValueError:
        doc = {}
    check(doc.get("design") == "latin-hypercube" and len(doc.get("gauges", [])) == 3 and "caution" in doc,
          "--json: design, 3 gauges, caution")
    with Dataset(os.path.join(out, "sweep.nc")) as d:
        values = masked(d, "parameter_value")
        arrival = masked(d, "arrival_time")
        sens = masked(d, "arrival_sensitivity")
        check(int(d.sweep_seed) == 5 and d.variables["arrival_sensitivity"].units == "1", "seed and units recorded")
    lo, hi = np.array([0.7, -1000.0]), np.array([1.3, 1000.0])
    strata = np.floor((values - lo) / (hi - lo) * 12).astype(int)
    check(all(sorted(strata[:, p]) == list(range(12)) for p in range(2)),
          "each parameter has one member in each of the 12 strata (McKay et al. 1979)")
    worst = 0.0
    for g in range(3):
        for p in range(2):
            ok = np.isfinite(arrival[:, g])
            rho = stats.spearmanr(values[ok, p], arrival[ok, g]).correlation
            worst = max(worst, abs(rho - sens[g, p]))
    check(worst < 1e-12, "arrival sensitivity equals scipy.stats.spearmanr (worst difference %.2g)" % worst)
    # deeper water, earlier arrival (c = sqrt(g h), Lamb 1932 [memory]): far from the source, where the
    # depth dominates the +-1 km shift, depth_factor and arrival are strongly anti-correlated
    check(sens[1, 0] < -0.8 and sens[2, 0] < -0.8, "depth_factor: rho < -0.8 at the shelf and coast gauges (%s)"
          % np.array2string(sens[:, 0], precision=2))


def test_check_json_and_texts(oat_out):
    path = os.path.join(WORK, "oat.scn")
    r = run("check", path)
    check(r.returncode == 0 and "Sweep" in r.stdout and "7 members" in r.stdout and "Memory" in r.stdout
          and "Estimate" in r.stdout, "check prints the member count, memory and estimated time")
    r = run("check", path, "--json")
    try:
        plan = json.loads(r.stdout)
    except ValueError:
        plan = {}
    sw = plan.get("sweep", {})
    check(sw.get("members") == 7 and sw.get("memory_bytes", 0) > 0 and "estimated_seconds" in sw,
          "check --json has the sweep's members, memory and estimate")
    with Dataset(os.path.join(oat_out, "sweep.nc")) as d:
        check(d.Conventions.startswith("CF-1.") and "not a hazard forecast" in d.caution,
              "sweep.nc: CF Conventions and the caution attribute")
        check(d.variables["member"].standard_name == "realization", "sweep.nc: member is a CF realization")
        check(d.variables["station_name"].cf_role == "timeseries_id", "sweep.nc: station_name cf_role")
        check("[sweep]" in d.scenario and d.sweep_design == "one-at-a-time", "sweep.nc: scenario and design")
        names = ["".join(s.astype(str)).strip() for s in np.array(d.variables["parameter_name"][:])]
        check(names[0] == "amplitude_factor" and names[3] == "grid.dx", "sweep.nc: parameter names %s" % names)
    md = open(os.path.join(oat_out, "sweep.md")).read()
    check("not a hazard forecast" in md and "| gauge |" in md and "which parameter" in md.lower(),
          "sweep.md: caution, gauge table, ranking")
    r = sweep(path, os.path.join(WORK, "oat"))   # everything kept: nothing runs again
    check(r.returncode == 0 and "not a hazard forecast" in r.stdout and "7 kept from an earlier attempt" in r.stdout,
          "terminal summary has the caution; a finished sweep is not run again")


def test_plot(out):
    r = subprocess.run(["/usr/bin/python3", PLOT, out], capture_output=True, text=True)
    pics = [os.path.join(out, f) for f in ("sweep_spread.png", "sweep_gauges.png")]
    check(r.returncode == 0 and all(os.path.getsize(p) > 10000 for p in pics if os.path.exists(p))
          and all(os.path.exists(p) for p in pics), "tools/plot-sweep draws the spread map and the gauge ranges (%s)"
          % r.stderr.strip()[-200:])


def test_errors():
    path = write("bad.scn", coast("depth_factor = 0.9\nwobble = 2"))
    r = sweep(path, os.path.join(WORK, "bad"))
    line = coast("").splitlines().index("[sweep]") + 3
    check(r.returncode == 1 and ("bad.scn:%d: [sweep] unknown key 'wobble'" % line) in r.stderr,
          "a bad [sweep] key: FILE:LINE message (%s)" % r.stderr.strip())
    plain = write("plain.scn", coast("").replace("[sweep]", ""))
    r = sweep(plain, os.path.join(WORK, "plain"))
    check(r.returncode == 1 and "has no [sweep] section" in r.stderr, "a scenario without [sweep] is refused")
    r = run("run", write("runs.scn", coast("depth_factor = 1.1")), "--out", os.path.join(WORK, "runs"), "--quiet")
    check(r.returncode == 0, "`shoreward run` runs the base of a scenario with [sweep]")
    r = run("sweep", path, "--members-parallel", "0")
    check(r.returncode == 2, "--members-parallel 0 is a usage error")


if __name__ == "__main__":
    test_errors()
    oat = test_members_equal_run()
    test_swing(oat)
    test_check_json_and_texts(oat)
    fact = test_parallel_identical()
    test_maps_vs_numpy(fact)
    test_failed_member()
    test_lhs_spearman()
    test_plot(fact)
    test_resume()
    print("%d failed" % len(FAILURES))
    sys.exit(1 if FAILURES else 0)
