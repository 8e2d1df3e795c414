#!/usr/bin/python3
"""The caution is everywhere (issue 17, item 2): every file that `run`, `compare` and `sweep` write, the text
and JSON that `run`, `check`, `compare` and `sweep` print, and the --help text of every command whose output
could be read as hazard information carry the full caution; every sweep output also carries the sweep
sentence (docs/sweep.md: the spread is this model's sensitivity, not a real event's uncertainty).

How each kind of file carries it: NetCDF (.nc) the global attribute `caution`; CSV (.csv) a comment line
starting with '#' before the header; JSON (.json) the key "caution"; Markdown (.md) a paragraph; a sweep
member's scenario (.scn) comment lines starting with ';'. A file of any other kind, or a left-over
temporary file, fails the test: a new output must be added here with the way it carries the caution.

Scenarios here are small and fictional (invented coast, no real place).

usage: test_caution.py SHOREWARD_BINARY WORK_DIR
"""
import json
import os
import re
import shutil
import subprocess
import sys

import netCDF4

from swtest import FAILURES, check

BIN, WORK = os.path.abspath(sys.argv[1]), os.path.abspath(sys.argv[2])
shutil.rmtree(WORK, ignore_errors=True)
os.makedirs(WORK)

# The sentences every full caution has (the plain and the surge form share them; run.c defines both).
FULL = ["CAUTION:", "hazard forecast or warning.",
        "In an emergency follow official warning agencies and local emergency management.",
        "Planning decisions need qualified professionals and local codes."]
# The sweep sentence (docs/sweep.md, "Caution" box).
SWEEP = ["The spread shows how sensitive this model is to the settings you vary, not the uncertainty of a "
         "real event."]
# The short form (top-level --help).
SHORT = ["CAUTION:", "not a hazard forecast or warning",
         "in an emergency follow official warning agencies and local emergency management"]


def flat(text):
    """Text with comment and quote markers (#, ;, >) at line starts and Markdown emphasis removed, and
    every run of white space one space, so that a caution folded over lines still matches."""
    lines = [re.sub(r"^\s*[#;>]+\s?", "", l) for l in text.splitlines()]
    return " ".join(" ".join(lines).replace("**", "").split())


def has(text, phrases):
    t = flat(text)
    return all(p in t for p in phrases)


def run(*args, ok=True):
    r = subprocess.run([BIN] + list(args), capture_output=True, text=True)
    if ok and r.returncode != 0:
        check(False, "shoreward %s exits 0 (got %d: %s)" % (" ".join(args), r.returncode, r.stderr.strip()[-300:]))
    return r


def write(name, text):
    p = os.path.join(WORK, name)
    with open(p, "w") as f:
        f.write(text)
    return p


SCENARIO = """; tiny fictional coast for the caution test
[run]
title = caution test (fictional)
duration = 4 min
arrival_threshold = 0.01 m
snapshot_interval = 2 min
[grid]
nx = 40
ny = 30
dx = 1 km
[edges]
all = open
[seabed]
deep = 500 m
coast = east
shoreline = 36 km
shelf_width = 8 km
shelf_depth = 50 m
slope_width = 5 km
[source s]
shape = hump
x = 10 km
y = 15 km
amplitude = 1 m
radius = 3 km
[gauges]
Istelbrac Point = 25 km, 15 km
Brisquelle Head = 30 km, 22 km
"""
SWEEP_SECTION = """[sweep]
design = one-at-a-time
amplitude_factor = 0.5, 2
source_y_offset = -3 km, 3 km
"""


def file_has(path, phrases):
    """(carries the phrases, how it was looked for) for one output file, by its kind."""
    name = os.path.basename(path)
    ext = os.path.splitext(name)[1]
    if ext == ".nc":
        with netCDF4.Dataset(path) as ds:
            c = getattr(ds, "caution", None)
        return c is not None and has(c, phrases), "global attribute caution"
    if ext == ".csv":
        with open(path) as f:
            lines = f.read().splitlines()
        head = []
        for l in lines:
            if not l.startswith("#"):
                break
            head.append(l)
        return bool(head) and has("\n".join(head), phrases), "'#' comment header"
    if ext == ".json":
        with open(path) as f:
            o = json.load(f)
        return isinstance(o, dict) and isinstance(o.get("caution"), str) and has(o["caution"], phrases), "key caution"
    if ext == ".md":
        return has(open(path).read(), phrases), "Markdown paragraph"
    if ext == ".scn":
        comments = [l for l in open(path).read().splitlines() if l.lstrip().startswith(";")]
        return has("\n".join(comments), phrases), "';' comment lines"
    return False, "an output of unknown kind (add how it carries the caution to this test)"


def walk(label, folder, phrases, skip=()):
    """Every file under folder carries the phrases; returns how many files were looked at."""
    n = 0
    for root, _, files in os.walk(folder):
        for name in sorted(files):
            path = os.path.join(root, name)
            rel = os.path.relpath(path, folder)
            if rel in skip:
                continue
            n += 1
            if ".part" in name or name.startswith("."):
                check(False, "%s: %s is a left-over temporary file" % (label, rel))
                continue
            ok, how = file_has(path, phrases)
            check(ok, "%s: %s carries the caution%s (%s)"
                  % (label, rel, " and the sweep sentence" if phrases is not FULL else "", how))
    check(n > 0, "%s: %s holds output files" % (label, folder))
    return n


# ---- help texts ----------------------------------------------------------------------------------
r = run("--help")
check(has(r.stdout, SHORT), "shoreward --help: the short caution")
for cmd in ("run", "check", "demo", "compare", "sweep"):
    r = run(cmd, "--help")
    check(has(r.stdout, FULL), "shoreward %s --help: the full caution" % cmd)
    if cmd == "sweep":
        check(has(r.stdout, SWEEP), "shoreward sweep --help: the sweep sentence")

plain = write("coast.scn", SCENARIO)
swept = write("coast-sweep.scn", SCENARIO + SWEEP_SECTION)

# ---- check ---------------------------------------------------------------------------------------
r = run("check", plain)
check(has(r.stdout, FULL), "check: the caution in the text output")
r = run("check", plain, "--json")
o = json.loads(r.stdout)
check(has(o.get("caution", ""), FULL), "check --json: key caution")
r = run("check", swept)
check(has(r.stdout, FULL + SWEEP), "check of a sweep scenario: the caution and the sweep sentence")
r = run("check", swept, "--json")
o = json.loads(r.stdout)
check(has(o.get("caution", ""), FULL + SWEEP), "check --json of a sweep scenario: key caution with the sweep sentence")

# ---- run -----------------------------------------------------------------------------------------
out = os.path.join(WORK, "run-out")
r = run("run", plain, "--out", out)
check(has(r.stdout, FULL), "run: the caution in the text output")
n = walk("run", out, FULL)
check(n == 4, "run: gauges.nc, maps.nc, snapshots.nc and run.json looked at (%d files)" % n)
r = run("run", plain, "--out", os.path.join(WORK, "run-json"), "--json")
o = json.loads(r.stdout)
check(has(o.get("caution", ""), FULL), "run --json: key caution")
walk("run --json", os.path.join(WORK, "run-json"), FULL)

# ---- compare -------------------------------------------------------------------------------------
out = os.path.join(WORK, "compare-out")
r = run("compare", plain, "--layouts", "A,C", "--out", out, "--quiet")
check(has(r.stdout, FULL), "compare: the caution in the text output")
walk("compare", out, FULL)
r = run("compare", plain, "--layouts", "C", "--out", os.path.join(WORK, "compare-json"), "--json")
o = json.loads(r.stdout)
check(has(o.get("caution", ""), FULL), "compare --json: key caution")

# ---- sweep ---------------------------------------------------------------------------------------
out = os.path.join(WORK, "sweep-out")
r = run("sweep", swept, "--out", out, "--quiet")
check(has(r.stdout, FULL + SWEEP), "sweep: the caution and the sweep sentence in the text output")
n = walk("sweep", out, FULL + SWEEP)
check(n >= 1 + 1 + 1 + 5 * 2, "sweep: sweep.nc, sweep.md, the manifest and 5 members' .nc and .scn looked at (%d files)" % n)
r = run("sweep", swept, "--out", os.path.join(WORK, "sweep-json"), "--json")
o = json.loads(r.stdout)
check(has(o.get("caution", ""), FULL + SWEEP), "sweep --json: key caution with the sweep sentence")
# a member's scenario file still runs, and the run's files carry the (plain) caution
member = os.path.join(out, "members", "m00001.scn")
r = run("run", member, "--out", os.path.join(WORK, "member-run"), "--quiet")
check(r.returncode == 0, "members/m00001.scn with its caution comment runs with `shoreward run`")

if FAILURES:
    print("\n%d check(s) failed" % len(FAILURES))
    sys.exit(1)
print("\nall checks passed")
