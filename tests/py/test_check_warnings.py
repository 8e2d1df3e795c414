#!/usr/bin/python3
"""`check` warns about a scenario where nothing moves the water, or that has no gauges.

usage: test_check_warnings.py SHOREWARD_BINARY WORK_DIR

A scenario with neither a source, a fault, a storm, a weather file nor a level series runs a still sea;
one without gauges writes no time series. Neither is an error, but a practitioner should be told before
the run: the text plan prints a warning line for each and the JSON plan lists them under "warnings";
a scenario with both has none.
"""
import json
import os
import subprocess
import sys

from swtest import FAILURES, check

BIN = os.path.abspath(sys.argv[1])
WORK = os.path.abspath(sys.argv[2])
os.makedirs(WORK, exist_ok=True)

BASE = """[run]
title = Brevanquil Flats (fictional)
duration = 10 min
[grid]
nx = 20
ny = 20
dx = 1 km
[seabed]
deep = 100 m
"""
SOURCE = "[source hump]\nshape = hump\nx = 10 km\ny = 10 km\namplitude = 1 m\nradius = 3 km\n"
GAUGES = "[gauges]\nRavelquist Weir = 5 km, 5 km\n"


def plan(name, text):
    path = os.path.join(WORK, name)
    with open(path, "w") as f:
        f.write(text)
    r = subprocess.run([BIN, "check", path], capture_output=True, text=True)
    j = subprocess.run([BIN, "check", path, "--json"], capture_output=True, text=True)
    ok = r.returncode == 0 and j.returncode == 0
    return ok, r.stdout, (json.loads(j.stdout)["warnings"] if ok else None)


ok, text, warns = plan("bare.scn", BASE)
check(ok, "a scenario without source and gauges is valid")
check(ok and "warning: nothing moves the water" in text and "warning: no [gauges]" in text,
      "the text plan warns: nothing moves the water, and no gauges")
check(ok and len(warns) == 2 and "nothing moves the water" in warns[0] and "no [gauges]" in warns[1],
      f"the JSON plan lists both warnings ({warns})")
ok, text, warns = plan("full.scn", BASE + SOURCE + GAUGES)
check(ok and "warning:" not in text and warns == [], f"with a source and a gauge: no warning ({warns})")
ok, text, warns = plan("nogauge.scn", BASE + SOURCE)
check(ok and warns is not None and len(warns) == 1 and "no [gauges]" in warns[0], f"a source alone: one warning ({warns})")
print("%d failed" % len(FAILURES))
sys.exit(1 if FAILURES else 0)
