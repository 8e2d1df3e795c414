#!/usr/bin/python3
"""`shoreward bench` runs end to end on a tiny grid and reports every figure for every layout.
Timings are never checked (benchmarks are not tests); only that the figures exist and are positive,
and that the shares of the grid in motion are shares.

usage: test_bench.py SHOREWARD_BINARY WORK_DIR
"""
import json
import os
import subprocess
import sys

from swtest import FAILURES, check

BIN = os.path.abspath(sys.argv[1])


# two layouts (C, the default, and E, the other sweep shape) keep the test under 30 s on two cores
r = subprocess.run([BIN, "bench", "--size", "96", "--rounds", "3", "--threads", "1,2", "--layouts", "C,E", "--json"],
                   capture_output=True, text=True, timeout=600)
check(r.returncode == 0, "bench runs (exit %d: %s)" % (r.returncode, r.stderr.strip()[-300:]))
doc = json.loads(r.stdout) if r.returncode == 0 else {"layouts": []}
check(len(doc["layouts"]) >= 2, "a row per layout (%d)" % len(doc["layouts"]))
for lay in doc["layouts"]:
    figs = [lay["triad_bytes_per_s"]["median"], lay["large"]["median"], lay["large_tracked"]["median"],
            lay["small"]["median"]] + [s["median"] for s in lay["scaling"]]
    check(all(f > 0 for f in figs) and lay["values_per_cell"] > 0,
          "layout %s: every figure measured and positive" % lay["layout"])
    # tracking on the bench's small hump and on a moving source (a hump an eighth of the grid wide), each
    # with the share of row segments whose maps changed in its timed steps
    check(lay["large_moving"]["n"] == 3 and lay["large_moving_tracked"]["n"] == 3
          and lay["large_moving"]["median"] > 0 and lay["large_moving_tracked"]["median"] > 0
          and lay["moving_source_cells"] == 96 / 8 and lay["tracking_source_cells"] > 0,
          "layout %s: tracking measured on a moving source beside its plain step" % lay["layout"])
    check(all(0 < lay[k] <= 1 for k in ("tracking_active_share", "moving_active_share")),
          "layout %s: the share of the grid in motion reported for both tracking figures (%.3g, %.3g)"
          % (lay["layout"], lay["tracking_active_share"], lay["moving_active_share"]))
    check(lay["large_terms"]["n"] == 3 and lay["large_terms"]["median"] > 0 and lay["terms_ratio"] > 0,
          "layout %s: the step with rotation and friction measured beside the plain one" % lay["layout"])
    check(all(lay[k]["n"] == 3 and lay[k]["median"] > 0 for k in ("large_storm", "large_weather", "large_forced"))
          and all(lay[k] > 0 for k in ("storm_ratio", "weather_ratio", "forced_ratio", "storm_build_s",
                                       "storm_steps_per_build")),
          "layout %s: the steps with a storm, a weather file and held slabs measured beside the plain one"
          % lay["layout"])
    check(lay["large_geographic"]["n"] == 3 and lay["large_geographic"]["median"] > 0
          and lay["geographic_cost_ratio"] > 0,
          "layout %s: the step on a geographic grid measured beside the projected one" % lay["layout"])
    if lay["layout"] == "C":
        # the pre-stepper C step kept in bench_reference.c must compute what the stepper computes
        check(lay["reference"]["median"] > 0 and lay["reference_ratio"] > 0 and lay["reference_identical"] is True,
              "layout C: the pre-stepper step measured, and it leaves the stepper's bits")
check(any(lay["layout"] == "C" and "reference_identical" in lay for lay in doc["layouts"]),
      "the C layout reports the comparison with the pre-stepper step")
check(doc["numpy"]["rate"]["n"] == 3 and doc["numpy"]["ratio"] > 0, "NumPy comparison measured in every round")
print("%d failed" % len(FAILURES))
sys.exit(1 if FAILURES else 0)
