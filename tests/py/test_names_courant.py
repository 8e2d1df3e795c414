#!/usr/bin/python3
"""One word, one meaning: `courant_fraction` is a fraction of the layout's limit everywhere, and
`courant_number` the absolute c = sqrt(g h) dt / dx (issue "Care and conventions", item 4).

usage: test_names_courant.py SHOREWARD_BINARY WORK_DIR

Checks, on the command line, in JSON and in NetCDF:
- `check --json` gives courant_number, courant_limit and courant_fraction, with
  courant_number = courant_fraction x courant_limit and courant_fraction = the scenario's value;
  gauges.nc and maps.nc carry the same three as global attributes;
- `stability --courant-fraction F` and `--courant-number C` give the same table for C = F x limit; the
  C layout's 2D limit is 1/sqrt(2) (docs/references.md: 1D limit of the C layout c <= 1, and in 2D on
  square cells the highest frequency is sqrt(2) times the 1D one [derived]);
- the old spellings (`[run] courant`, a pair's `trough`, `stability --courant`) are refused with the new;
- a gauge on land is `on_land` in the JSON of both `check` and `run`.
"""
import json
import math
import os
import subprocess
import sys

from netCDF4 import Dataset

from swtest import FAILURES, check

BIN = os.path.abspath(sys.argv[1])
WORK = os.path.abspath(sys.argv[2])
os.makedirs(WORK, exist_ok=True)

SCENARIO = """[run]
title = Ketravo Point basin (fictional)
duration = 4 min
courant_fraction = 0.75
gauge_interval = 30 s
[grid]
nx = 40
ny = 30
dx = 1 km
[seabed]
deep = 400 m
coast = east
shoreline = 34 km
shelf_depth = 50 m
shelf_width = 6 km
slope_width = 4 km
[source hump]
shape = {shape}
x = 15 km
y = 15 km
amplitude = 1 m
{extra}
[gauges]
Ketravo Point = 20 km, 15 km
Pavrune Sands = 38 km, 15 km
"""
HUMP = dict(shape="hump", extra="radius = 3 km")


def run(*args):
    return subprocess.run([BIN, *args], capture_output=True, text=True, timeout=300)


def write(name, text):
    path = os.path.join(WORK, name)
    with open(path, "w") as f:
        f.write(text)
    return path


def main():
    scn = write("basin.scn", SCENARIO.format(**HUMP))
    r = run("check", scn, "--json")
    check(r.returncode == 0, f"check --json runs ({r.stderr.strip()[-200:]})")
    plan = json.loads(r.stdout) if r.returncode == 0 else {}
    num, lim, frac = plan.get("courant_number"), plan.get("courant_limit"), plan.get("courant_fraction")
    check(None not in (num, lim, frac) and "courant" not in plan,
          f"check JSON: courant_number {num}, courant_limit {lim}, courant_fraction {frac}, no bare 'courant'")
    if None not in (num, lim, frac):
        check(abs(frac - 0.75) < 1e-12, f"courant_fraction is the scenario's 0.75 ({frac})")
        check(abs(num - frac * lim) < 1e-12, "courant_number = courant_fraction x courant_limit")
        check(abs(lim - 1 / math.sqrt(2)) < 1e-9, f"C layout 2D limit 1/sqrt(2) [derived] ({lim})")
    gauges = plan.get("gauges", [])
    check(len(gauges) == 2 and all("on_land" in g for g in gauges) and gauges[1]["on_land"]
          and not gauges[0]["on_land"], "check JSON: gauges carry on_land; the one past the shoreline is on land")

    out = os.path.join(WORK, "out")
    r = run("run", scn, "--out", out, "--quiet", "--json")
    check(r.returncode == 0, f"run --json ({r.stderr.strip()[-200:]})")
    summary = json.loads(r.stdout) if r.returncode == 0 else {}
    rg = summary.get("gauges", [])
    check(len(rg) == 2 and all("on_land" in g and "dry" not in g for g in rg) and rg[1]["on_land"],
          "run JSON: gauges carry on_land (not dry)")
    for name in ("gauges.nc", "maps.nc"):
        path = os.path.join(out, name)
        if not os.path.exists(path):
            check(False, f"{name} written")
            continue
        with Dataset(path) as ds:
            a = {k: getattr(ds, k, None) for k in ("courant_number", "courant_limit", "courant_fraction")}
            check(None not in a.values() and "courant" not in ds.ncattrs()
                  and abs(a["courant_fraction"] - 0.75) < 1e-12
                  and abs(a["courant_number"] - 0.75 * a["courant_limit"]) < 1e-12,
                  f"{name}: globals courant_number, courant_limit, courant_fraction ({a})")
            if name == "gauges.nc":
                check("station_x" in ds.variables and "station_y" in ds.variables and "x" not in ds.variables,
                      "gauges.nc: positions are station_x, station_y (as in sweep.nc)")

    # stability: the fraction and the absolute number give the same table
    r1 = run("stability", "--layout", "C", "--courant-fraction", "0.5", "--json")
    c = 0.5 / math.sqrt(2)
    r2 = run("stability", "--layout", "C", "--courant-number", repr(c), "--json")
    check(r1.returncode == 0 and r2.returncode == 0, "stability --courant-fraction / --courant-number run")
    if r1.returncode == 0 and r2.returncode == 0:
        j1, j2 = json.loads(r1.stdout), json.loads(r2.stdout)
        l1, l2 = j1["layouts"][0], j2["layouts"][0]
        check(j1["courant_fraction"] == 0.5 and j1["courant_number"] is None
              and j2["courant_number"] == c and j2["courant_fraction"] is None,
              "stability JSON names what was asked: courant_fraction or courant_number")
        check(abs(l1["courant_number"] - c) < 1e-12 and abs(l2["courant_fraction"] - 0.5) < 1e-9,
              f"per layout: courant_number {l1['courant_number']}, courant_fraction {l2['courant_fraction']}")
        rows = list(zip(l1.get("table", []), l2.get("table", [])))
        same = bool(rows) and all(abs(a[d]["omega_dt"] - b[d]["omega_dt"]) < 1e-9 for a, b in rows
                                  for d in ("axis", "diagonal"))
        check(same, f"the same table either way ({len(rows)} rows compared by omega dt)")
    r = run("stability", "--layout", "C", "--courant-fraction", "0.5", "--courant-number", "0.3")
    check(r.returncode == 2 and "not both" in r.stderr, f"both flags refused, exit 2 ({r.stderr.strip()})")
    stab = os.path.join(WORK, "stab.nc")
    r = run("stability", "--layout", "C", "--out", stab)
    if r.returncode == 0:
        with Dataset(stab) as ds:
            check("courant_number" in ds.variables and "courant_number" in ds.ncattrs()
                  and "courant" not in ds.variables, "stab.nc: variable and global courant_number")
    else:
        check(False, f"stability --out ({r.stderr.strip()})")

    # the old spellings are refused with the new ones
    old = write("old.scn", SCENARIO.format(**HUMP).replace("courant_fraction = 0.75", "courant = 0.75"))
    r = run("check", old)
    check(r.returncode == 1 and "old.scn:4:" in r.stderr and "unknown key 'courant'" in r.stderr
          and "courant_fraction" in r.stderr, f"[run] courant refused with the new name: {r.stderr.strip()}")
    pair = SCENARIO.format(shape="pair", extra="length = 4 km\nwidth = 2 km\nangle = 0\nseparation = 3 km\n"
                                               "trough = 0.5 m")
    r = run("check", write("pair.scn", pair))
    check(r.returncode == 1 and "unknown key 'trough'" in r.stderr and "subsidence" in r.stderr,
          f"a pair's trough refused with subsidence: {r.stderr.strip()}")
    r = run("check", write("pair-ok.scn", pair.replace("trough = 0.5 m", "subsidence = 0.5 m")))
    check(r.returncode == 0, f"a pair's subsidence is read ({r.stderr.strip()[-200:]})")
    r = run("stability", "--courant", "0.5")
    check(r.returncode == 2 and "--courant-number" in r.stderr and "--courant-fraction" in r.stderr,
          f"stability --courant refused with both new names, exit 2 ({r.stderr.strip()})")
    # overrides (sweeps) with an old name: tests/unit/test_sweep.c

    print(f"\n{len(FAILURES)} check(s) failed" if FAILURES else "\nall checks passed")
    return 1 if FAILURES else 0


if __name__ == "__main__":
    sys.exit(main())
