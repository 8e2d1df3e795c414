#!/usr/bin/python3
"""`shoreward bench` runs end to end on a tiny grid and reports every figure for every layout.
Timings are never checked (benchmarks are not tests); only that the figures exist and are positive,
and that the shares of the grid in motion are shares.

usage: test_bench.py SHOREWARD_BINARY WORK_DIR
"""
import json
import math
import os
import subprocess
import sys

from swtest import FAILURES, check

BIN = os.path.abspath(sys.argv[1])


# a number of steps per sweep out of range is refused as a usage error, before anything is measured
r = subprocess.run([BIN, "bench", "--steps-per-sweep", "17"], capture_output=True, text=True, timeout=60)
check(r.returncode == 2 and "--steps-per-sweep" in r.stderr,
      "--steps-per-sweep 17 refused (exit %d: %s)" % (r.returncode, r.stderr.strip()[-200:]))

# a real-run refinement out of range is refused the same way
r = subprocess.run([BIN, "bench", "--real-refine", "17"], capture_output=True, text=True, timeout=60)
check(r.returncode == 2 and "--real-refine" in r.stderr,
      "--real-refine 17 refused (exit %d: %s)" % (r.returncode, r.stderr.strip()[-200:]))

# two layouts (C, the default, and E, the other sweep shape) keep the test under 30 s on two cores; a 96 x 96
# grid fits in any cache, where the automatic choice is one step per sweep: 4 are asked for, so that the
# blocked figures run the wavefront (two steps a thread of the pipeline)
r = subprocess.run([BIN, "bench", "--size", "96", "--rounds", "3", "--threads", "1,2", "--layouts", "C,E",
                    "--steps-per-sweep", "4", "--real-refine", "1", "--json"], capture_output=True, text=True, timeout=600)
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
    # several steps per sweep beside the one-step step: its rate, its ratio and effective bandwidth, its
    # tracking cost on the moving source with the share in motion, and the same bits as single steps
    check(lay["steps_per_sweep"] == 4 and lay["steps_per_sweep_auto"] >= 1 and lay["wave_window_bytes"] >= 0
          and lay["large_blocked"]["n"] == 3 and lay["large_blocked"]["median"] > 0 and lay["blocked_ratio"] > 0
          and lay["blocked_bandwidth_bytes_per_s"] > 0 and lay["blocked_bandwidth_ratio_to_triad"] > 0,
          "layout %s: the step in sweeps of 4 measured beside the one-step step" % lay["layout"])
    check(lay["large_moving_blocked"]["n"] == 3 and lay["large_moving_blocked_tracked"]["n"] == 3
          and lay["large_moving_blocked"]["median"] > 0 and lay["large_moving_blocked_tracked"]["median"] > 0
          and 0 < lay["moving_blocked_active_share"] <= 1,
          "layout %s: tracking measured on the moving source in sweeps of 4 (grid in motion %.3g)"
          % (lay["layout"], lay["moving_blocked_active_share"]))
    check(lay["blocked_identical"] is True,
          "layout %s: sweeps of 4 steps leave the bits of single steps (state and tracking maps)" % lay["layout"])
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
# the real run: the built-in demo (500 x 375 cells, 6 gauges; scenarios/demo.scn) unrefined here, 30 min of
# model time with its gauges and maps, beside the plain step on the same grid for as many steps
real = doc.get("real_run", {})
check(real.get("refine") == 1 and real.get("nx") == 500 and real.get("ny") == 375 and real.get("gauges") == 6
      and real.get("duration_s") == 1800 and real.get("steps", 0) == math.ceil(1800 / real.get("dt_s", 1) - 1e-9)
      and real.get("steps_per_sweep", 0) >= 1 and real.get("note") == "",
      "the real run: the demo's grid, gauges and 30 min of model time (%s)"
      % {k: real.get(k) for k in ("refine", "nx", "ny", "gauges", "steps", "dt_s", "note")})
check(real.get("run", {}).get("n") == 3 and real["run"]["median"] > 0 and real.get("plain", {}).get("n") == 3
      and real["plain"]["median"] > 0 and real.get("ratio", 0) > 0,
      "the real run timed beside the plain step in every round")
check(doc["numpy"]["rate"]["n"] == 3 and doc["numpy"]["ratio"] > 0, "NumPy comparison measured in every round")
print("%d failed" % len(FAILURES))
sys.exit(1 if FAILURES else 0)
