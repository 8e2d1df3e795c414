#!/usr/bin/python3
"""The state's precision, chosen at run time: `--precision` and the scenario key `[run] precision`.

usage: test_precision.py SHOREWARD_BINARY WORK_DIR

Checks:
  - the fictional demo run in single and in double precision gives the same gauge series to within
    1e-5 of the peak (IEEE 754 single precision: unit round-off 2^-24 = 6.0e-8, growing about like
    u sqrt(steps) over the run's ~1000 steps [common practice for the estimate]) and the same arrival
    times to within 0.1 s;
  - each file says which precision made it (global attribute `precision`), so do the plan and the
    JSON summary;
  - the scenario key sets it, the flag overrides the key, and the model state takes half the memory;
  - a bad value is refused: the flag with exit status 2 naming the accepted values, the key with
    exit status 1 and FILE:LINE.
"""
import json
import os
import subprocess
import sys

import numpy as np
from netCDF4 import Dataset

from swtest import FAILURES, check

BIN = os.path.abspath(sys.argv[1])
WORK = os.path.abspath(sys.argv[2])
os.makedirs(WORK, exist_ok=True)


def run(*args):
    return subprocess.run([BIN, *args], capture_output=True, text=True, timeout=600)


runs = {}
for p in ("double", "single"):
    out = os.path.join(WORK, "demo-" + p)
    r = run("demo", out, "--precision", p, "--threads", "2", "--json")
    check(r.returncode == 0, f"demo runs in {p} precision (exit {r.returncode}: {r.stderr.strip()[-300:]})")
    runs[p] = (out, json.loads(r.stdout) if r.returncode == 0 else None)

if all(doc for _, doc in runs.values()):
    (dd, jd), (ds, js) = runs["double"], runs["single"]
    check(jd["precision"] == "double" and js["precision"] == "single", "the JSON summary names the precision")
    with Dataset(os.path.join(dd, "gauges.nc")) as a, Dataset(os.path.join(ds, "gauges.nc")) as b:
        check(a.getncattr("precision") == "double" and b.getncattr("precision") == "single",
              "gauges.nc carries the global attribute precision")
        ea, eb = np.asarray(a["eta"][:], float), np.asarray(b["eta"][:], float)
    with Dataset(os.path.join(ds, "maps.nc")) as m:
        check(m.getncattr("precision") == "single", "maps.nc carries the global attribute precision")
    peak = np.nanmax(np.abs(ea))
    diff = np.nanmax(np.abs(ea - eb))
    check(peak > 0.1 and diff <= 1e-5 * peak,
          f"gauge series single vs double: largest difference {diff:.2e} m, {diff / peak:.1e} of the peak")
    for ga, gb in zip(jd["gauges"], js["gauges"]):
        check(abs(ga["arrival_s"] - gb["arrival_s"]) <= 0.1,
              f"{ga['name']}: arrival {ga['arrival_s']:.2f} s (double), {gb['arrival_s']:.2f} s (single)")

# the scenario key, and the flag over it
scn = os.path.join(WORK, "demo-double", "demo.scn")
with open(scn) as f:
    text = f.read()
keyed = os.path.join(WORK, "single.scn")
with open(keyed, "w") as f:
    f.write(text.replace("[run]\n", "[run]\nprecision = single\n", 1))
plans = {}
for label, args in (("key single", [keyed]), ("key single, flag double", [keyed, "--precision", "double"]),
                    ("no key", [scn])):
    r = run("check", *args, "--json")
    check(r.returncode == 0, f"check with {label} (exit {r.returncode}: {r.stderr.strip()[-300:]})")
    plans[label] = json.loads(r.stdout) if r.returncode == 0 else {}
check(plans["key single"].get("precision") == "single", "[run] precision = single is read")
check(plans["key single, flag double"].get("precision") == "double", "--precision overrides the scenario key")
check(plans["no key"].get("precision") == "double", "double is the default")
mem_s, mem_d = plans["key single"].get("memory_bytes", 0), plans["no key"].get("memory_bytes", 1)
check(0 < mem_s < mem_d, f"single precision needs less memory ({mem_s} vs {mem_d} bytes)")
r = run("check", keyed)
check("Precision  single" in r.stdout, "the text plan names the precision")

# refusals
r = run("run", scn, "--precision", "half")
check(r.returncode == 2 and "double or single" in r.stderr and "'half'" in r.stderr,
      f"--precision half is refused with the accepted values (exit {r.returncode}: {r.stderr.strip()})")
bad = os.path.join(WORK, "bad.scn")
with open(bad, "w") as f:
    f.write(text.replace("[run]\n", "[run]\nprecision = quad\n", 1))
r = run("check", bad)
line = text.split("\n").index("[run]") + 2
check(r.returncode == 1 and f"bad.scn:{line}:" in r.stderr and "accepted: double, single" in r.stderr,
      f"[run] precision = quad is refused with FILE:LINE and the accepted values ({r.stderr.strip()})")

print("%d failed" % len(FAILURES))
sys.exit(1 if FAILURES else 0)
