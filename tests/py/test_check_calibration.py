#!/usr/bin/python3
"""`shoreward check` takes its run-time estimate from a cached, machine-measured rate.

usage: test_check_calibration.py SHOREWARD_BINARY WORK_DIR

Checks (the contract is README's `check` section and src/studies/estimate.h; no outside reference applies):
  - a first check measures the rate (rate_source "measured") and writes SHOREWARD_CACHE_DIR/rates.txt,
    a second reuses it (rate_source "cache", the same rate);
  - estimated_seconds = steps x nx x ny / rate_cells_per_s;
  - --recalibrate measures again and replaces the entry; --recalibrate is refused by `run`;
  - the text plan says where the rate came from and how to refresh it;
  - an unwritable cache folder does not fail the check: it measures and says why nothing was cached;
  - a stale entry (older than 30 days) is measured again.
Timings are never compared (benchmarks are not tests).
"""
import json
import os
import shutil
import subprocess
import sys
import time

from swtest import FAILURES, check

BIN = os.path.abspath(sys.argv[1])
WORK = os.path.abspath(sys.argv[2])
SCENARIO = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "..", "scenarios", "demo.scn")
CACHE = os.path.join(WORK, "cache")


def run(*args, cache=CACHE):
    # the rate is cached per thread count: the automatic choice (README "Threads on a busy machine") off, so
    # that a busy moment between two checks cannot change the key
    env = dict(os.environ, SHOREWARD_CACHE_DIR=cache, SHOREWARD_THREADS_AUTO="off")
    return subprocess.run([BIN, *args], capture_output=True, text=True, env=env, timeout=300)


def check_json(*extra, cache=CACHE):
    r = run("check", SCENARIO, "--json", *extra, cache=cache)
    check(r.returncode == 0, "check --json %s exits 0 (%d: %s)" % (" ".join(extra), r.returncode, r.stderr.strip()))
    return json.loads(r.stdout) if r.returncode == 0 else {}


def entries(path):
    with open(path) as f:
        return [line.rstrip("\n").split("\t") for line in f if line.strip() and not line.startswith("#")]


shutil.rmtree(WORK, ignore_errors=True)
os.makedirs(WORK)
rates = os.path.join(CACHE, "rates.txt")

first = check_json()
check(first.get("rate_source") == "measured", "first check measures (%s)" % first.get("rate_source"))
check(first.get("rate_age_days") == 0, "a new measurement is 0 days old")
check(first.get("rate_cache_file") == rates, "it names the cache file (%s)" % first.get("rate_cache_file"))
check(os.path.isfile(rates) and not os.path.exists(rates + ".part"), "rates.txt written, no .part left")
lines = entries(rates) if os.path.isfile(rates) else []
check(len(lines) == 1 and len(lines[0]) == 7 and lines[0][1] == first.get("layout") and lines[0][2] == "double"
      and int(lines[0][3]) == first.get("rate_threads"),
      "one entry: version, layout, precision, threads, cpu, rate, time (%s)" % lines)
check(lines and abs(int(lines[0][6]) - time.time()) < 600, "the entry carries the time of measurement")

second = check_json()
check(second.get("rate_source") == "cache", "second check reads the cache (%s)" % second.get("rate_source"))
check(second.get("rate_cells_per_s") == first.get("rate_cells_per_s"), "with the same rate")
check(0 <= second.get("rate_age_days", -1) < 0.1, "and its age in days (%s)" % second.get("rate_age_days"))
for doc in (first, second):
    cells = doc["grid"]["nx"] * doc["grid"]["ny"]
    want = doc["steps"] * cells / doc["rate_cells_per_s"]
    check(abs(doc["estimated_seconds"] - want) <= 1e-9 * want,
          "estimated_seconds %.6g = steps x cells / rate %.6g" % (doc["estimated_seconds"], want))

again = check_json("--recalibrate")
check(again.get("rate_source") == "measured", "--recalibrate measures again (%s)" % again.get("rate_source"))
lines = entries(rates)
# JSON carries 15 significant digits (cJSON), the file 17: equal to 1e-13
check(len(lines) == 1 and abs(float(lines[0][5]) - again.get("rate_cells_per_s", 0)) <= 1e-13 * float(lines[0][5]),
      "and replaces the entry with the new rate (%s; JSON: %r)" % (lines, again.get("rate_cells_per_s")))

r = run("check", SCENARIO)
check(r.returncode == 0 and "cached" in r.stdout and "--recalibrate" in r.stdout,
      "the text plan says the rate is cached and how to re-measure")
est = [line for line in r.stdout.splitlines() if line.startswith("Estimate")]
check(len(est) == 1 and "cell-updates/s" in est[0], "one estimate line with the rate: %s" % est)

# a stale entry: rewrite the time of measurement 31 days back
with open(rates) as f:
    text = f.read()
stale = text.replace("\t" + lines[0][6] + "\n", "\t%d\n" % (int(time.time()) - 31 * 86400))
check(stale != text, "the test could age the entry")
with open(rates, "w") as f:
    f.write(stale)
check(check_json().get("rate_source") == "measured", "an entry older than 30 days is measured again")

# an unwritable cache folder (under a regular file, so that even root cannot write it)
blocker = os.path.join(WORK, "plain-file")
with open(blocker, "w") as f:
    f.write("not a folder\n")
bad = os.path.join(blocker, "cache")
doc = check_json(cache=bad)
check(doc.get("rate_source") == "measured" and doc.get("rate_cache_file") is None,
      "an unwritable cache still gives a measured rate")
check("cache not written" in (doc.get("rate_note") or ""), "and a note why (%s)" % doc.get("rate_note"))
r = run("check", SCENARIO, cache=bad)
est = [line for line in r.stdout.splitlines() if line.startswith("Estimate")]
check(r.returncode == 0 and len(est) == 1 and "measured now" in est[0] and "cache not written" in est[0]
      and bad in est[0], "the text plan says so in its one estimate line: %s" % est)

r = run("check", "--help")
check(r.returncode == 0 and "--recalibrate" in r.stdout and "SHOREWARD_CACHE_DIR" in r.stdout
      and "30 days" in r.stdout, "check --help explains the cache and --recalibrate")
r = run("run", SCENARIO, "--recalibrate")
check(r.returncode == 2, "run refuses --recalibrate as a usage error (%d)" % r.returncode)

print("%d failed" % len(FAILURES))
sys.exit(1 if FAILURES else 0)
