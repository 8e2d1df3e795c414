#!/usr/bin/python3
"""MPI checks of one run split over ranks, `mpirun -n N shoreward run` (a build configured with -DSW_MPI=ON).

usage: test_run_mpi.py SHOREWARD_BINARY WORK_DIR MPIRUN

The reference is always the same run as one process, without mpirun. Checks:
  - on every layout (A to E) and three sets of edges that together hold every edge kind (wall, open and
    level; all periodic; periodic south-north with open and level west-east), with rotation (a beta-plane)
    and quadratic friction on and snapshots every minute, 2, 3 and 4 ranks of one thread each give gauges.nc, maps.nc and
    snapshots.nc whose every variable has the same bytes as the one-process run's (the claim of
    src/run/split.h: a value does not depend on who computes it);
  - the grid has 40 rows, so the bands' boundaries fall on rows 10, 13, 20, 26 and 30: the source is centred
    on row 20 and gauges sit across rows 9/10, 12/13, 19/20, 25/26 and 29/30 (a gauge's bilinear stencil
    spans the boundary); the land along the south edge fills rows 0 to 11, so with 4 ranks rank 0's band is
    all land;
  - 2 ranks of 2 threads each equal the one-process run too (threads inside ranks);
  - the fictional demos of a rupture in time (scenarios/fault-demo.scn: the sea floor moves during the
    first steps), a storm (storm-demo.scn: wind and pressure slabs, level edges) and a geographic grid
    (geographic-demo.scn: rows of different metric factors) on 3 ranks equal their one-process runs;
  - only rank 0 prints: one plan, one summary;
  - a rank that cannot read the scenario (an MPMD job whose rank 1 names a missing file) ends the job: exit 1,
    one message naming the rank and the file, no output folder;
  - more ranks than the grid's rows can take: exit 2 or 1 with one line from rank 0 saying how many at most,
    and no output files;
  - a run with checkpoints on 2 ranks interrupted with SIGINT (to mpirun) once its first checkpoint exists
    exits non-zero naming the checkpoint and writes no files; `--resume` on 3 ranks then ends with the
    files of the uninterrupted one-process run, bit for bit;
  - several steps per sweep on split ranks (--steps-per-sweep: one exchange of a deeper halo per sweep):
    every layout on 2, 3 and 4 ranks (K = 5, 3, 2) and 2 ranks x 2 threads asking 16, the storm demo with
    K = 7 and the rupture demo with K = 4 on 3 ranks: the one-process run's bits.
The scenario is a small fictional basin (no real place).
"""
import json
import os
import signal
import subprocess
import sys
import time

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from mpitest import BIN, MPIRUN, TIMEOUT_S, WORK, check, data_vars, finish, mpi, run, write  # noqa: E402

BASIN = """; small fictional basin for the split-run tests (no real place)
[run]
title = split-run test basin (fictional)
duration = 8 min
layout = {layout}
courant_fraction = 0.9
gauge_interval = 20 s
snapshot_interval = 1 min
arrival_threshold = 0.01 m
rotation = beta-plane
coriolis = 1e-4 /s
beta = 1e-11
reference_y = 20 km
friction = quadratic
drag = 0.0025

[grid]
nx = 48
ny = {ny}
dx = 1 km

[edges]
{edges}

[seabed]
deep = 800 m
coast = south
shoreline = 12 km
shelf_depth = 40 m
shelf_width = 5 km
slope_width = 5 km
min_depth = 2 m

[source main]
shape = hump
x = 22 km
y = 20 km
amplitude = 1 m
radius = 4 km

[gauges]
across 9-10 = 30 km, 10 km
across 12-13 = 26 km, 13 km
across 19-20 = 15 km, 20 km
across 25-26 = 34 km, 26 km
across 29-30 = 8 km, 30 km
"""

EDGES = {
    "wall-open-level": "west = wall\neast = open\nsouth = level\nnorth = open",
    "periodic": "all = periodic",
    "periodic-ns": "south = periodic\nnorth = periodic\nwest = open\neast = level",
}
FILES = ("gauges.nc", "maps.nc", "snapshots.nc")


def same_files(a_dir, b_dir):
    """Whether every variable of the three files has the same bytes in both folders; the differing ones."""
    differ = []
    for f in FILES:
        pa, pb = os.path.join(a_dir, f), os.path.join(b_dir, f)
        if not (os.path.exists(pa) and os.path.exists(pb)):
            differ.append(f + " missing")
            continue
        a, b = data_vars(pa), data_vars(pb)
        differ += [f + ":" + k for k in sorted(set(a) | set(b)) if a.get(k) != b.get(k)]
    return differ


def test_identical():
    for layout in "ABCDE":
        for ename, edges in EDGES.items():
            scn = write(f"{layout}-{ename}.scn", BASIN.format(layout=layout, edges=edges, ny=40))
            ref = os.path.join(WORK, f"{layout}-{ename}-ref")
            r = run([BIN, "run", scn, "--out", ref, "--threads", "1", "--quiet"])
            check(r.returncode == 0, f"{layout} {ename}: one-process run exits 0 ({r.stderr.strip()[-200:]})")
            for n, threads in ((2, 1), (3, 1), (4, 1)) + (((2, 2),) if ename == "periodic-ns" else ()):
                out = os.path.join(WORK, f"{layout}-{ename}-{n}x{threads}")
                r = run(mpi(n, "run", scn, "--out", out, "--threads", str(threads), "--quiet"))
                differ = same_files(ref, out) if r.returncode == 0 else ["(run failed)"]
                check(r.returncode == 0 and not differ,
                      f"{layout} {ename}: {n} ranks x {threads} thread(s) equal the one-process run bit for bit "
                      f"(differ: {differ[:4]}; exit {r.returncode} {r.stderr.strip()[-200:]})")


def test_sweeps():
    """Several steps per sweep on split ranks (--steps-per-sweep K): each rank computes its band and the halo of
    the sweep's K steps after one exchange of that deeper halo (DEVELOPERS.md "Several steps per sweep");
    the files equal the one-process run's (K = 1) bit for bit."""
    for layout in "ABCDE":
        ref = os.path.join(WORK, f"{layout}-wall-open-level-ref")   # made by test_identical
        scn = os.path.join(WORK, f"{layout}-wall-open-level.scn")
        # the gauges' arrival, peak and trough (the summary's table, in no file) of the one-process run
        r = run([BIN, "run", scn, "--out", ref + "-json", "--threads", "1", "--json"])
        table = json.loads(r.stdout)["gauges"] if r.returncode == 0 else None
        for n, threads, k in ((2, 1, 5), (3, 1, 3), (4, 1, 2), (2, 2, 16)):
            out = os.path.join(WORK, f"{layout}-sweeps-{n}x{threads}-k{k}")
            r = run(mpi(n, "run", scn, "--out", out, "--threads", str(threads), "--json", "--steps-per-sweep", str(k)))
            differ = same_files(ref, out) if r.returncode == 0 else ["(run failed)"]
            if r.returncode == 0 and json.loads(r.stdout)["gauges"] != table:
                differ.append("the gauge table (arrival, peak, trough)")
            check(r.returncode == 0 and not differ,
                  f"{layout}: {n} ranks x {threads} thread(s), {k} steps a sweep, equal the one-process run bit for "
                  f"bit (differ: {differ[:4]}; exit {r.returncode} {r.stderr.strip()[-200:]})")
    scenarios = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "..", "scenarios")
    for name, k in (("storm-demo", 7), ("fault-demo", 4)):   # forcing slabs and a rupture in time, in sweeps
        scn = os.path.join(scenarios, name + ".scn")
        ref, out = os.path.join(WORK, name + "-ref"), os.path.join(WORK, f"{name}-3-k{k}")   # ref: test_demos
        r = run(mpi(3, "run", scn, "--out", out, "--threads", "1", "--quiet", "--steps-per-sweep", str(k)))
        differ = [x for x in same_files(ref, out) if not x.startswith("snapshots.nc")] \
            if r.returncode == 0 else ["(run failed)"]
        check(not differ, f"{name} on 3 ranks, {k} steps a sweep, equals the one-process run bit for bit "
              f"(differ: {differ[:4]}; exit {r.returncode} {r.stderr.strip()[-200:]})")


def test_demos():
    scenarios = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "..", "scenarios")
    for name in ("fault-demo", "storm-demo", "geographic-demo"):
        scn = os.path.join(scenarios, name + ".scn")
        ref, out = os.path.join(WORK, name + "-ref"), os.path.join(WORK, name + "-3")
        r1 = run([BIN, "run", scn, "--out", ref, "--threads", "1", "--quiet"])
        r3 = run(mpi(3, "run", scn, "--out", out, "--threads", "1", "--quiet"))
        differ = [x for x in same_files(ref, out) if not x.startswith("snapshots.nc")] \
            if r1.returncode == 0 and r3.returncode == 0 else ["(run failed)"]
        check(not differ, f"{name} on 3 ranks equals the one-process run bit for bit (differ: {differ[:4]}; "
              f"exit {r1.returncode}, {r3.returncode} {r3.stderr.strip()[-200:]})")


def test_rank0_prints():
    scn = os.path.join(WORK, "C-wall-open-level.scn")
    out = os.path.join(WORK, "printing")
    r = run(mpi(3, "run", scn, "--out", out, "--threads", "1"))
    check(r.returncode == 0 and r.stdout.count("Written:") == 1 and r.stdout.count("CAUTION") == 2,
          "3 ranks: one plan and one summary, from rank 0 (exit %d; %d 'Written:')"
          % (r.returncode, r.stdout.count("Written:")))


def test_rank_failure():
    scn = os.path.join(WORK, "C-wall-open-level.scn")
    out = os.path.join(WORK, "rank-fails")
    # MPMD: rank 0 reads the scenario, rank 1 names a file it cannot open
    cmd = [MPIRUN, "--oversubscribe", "--allow-run-as-root", "-n", "1", BIN, "run", scn, "--out", out, ":",
           "-n", "1", BIN, "run", os.path.join(WORK, "not-on-this-node.scn"), "--out", out]
    r = run(cmd)
    lines = [x for x in r.stderr.splitlines() if "error" in x]
    check(r.returncode == 1, "a rank that cannot read its scenario ends the job with exit 1 (got %d)" % r.returncode)
    check(len(lines) == 1 and "rank 1:" in lines[0] and "not-on-this-node.scn" in lines[0],
          "one message naming the rank and the file: %s" % lines)
    check(not os.path.exists(os.path.join(out, "maps.nc")), "no output file written")


def test_too_many_ranks():
    scn = write("thin.scn", BASIN.format(layout="C", edges=EDGES["wall-open-level"], ny=6).split("[gauges]")[0]
                .replace("shoreline = 12 km", "shoreline = 2 km").replace("y = 20 km", "y = 3 km"))
    out = os.path.join(WORK, "thin-out")
    r = run(mpi(4, "run", scn, "--out", out, "--threads", "1", "--quiet"))
    lines = [x for x in r.stderr.splitlines() if "shoreward" in x]   # mpirun adds its own banner on exit 1
    check(r.returncode != 0 and len(lines) == 1 and "too many for a grid of 6 rows" in lines[0]
          and "at most" in lines[0], "4 ranks on 6 rows: one line from rank 0 saying how many at most: %s" % lines)
    check(not os.path.exists(os.path.join(out, "maps.nc")), "no output file written")


def test_interrupted_resume():
    # a larger, longer basin: about ten seconds on two oversubscribed ranks here, so SIGINT lands mid-run
    text = BASIN.format(layout="C", edges=EDGES["periodic-ns"], ny=400).replace("nx = 48", "nx = 400") \
        .replace("duration = 8 min", "duration = 300 min\ncheckpoint_interval = 5 min") \
        .replace("snapshot_interval = 1 min", "snapshot_interval = 30 min")
    scn = write("slow.scn", text)
    ref, out = os.path.join(WORK, "slow-ref"), os.path.join(WORK, "slow-split")
    r = run([BIN, "run", scn, "--out", ref, "--quiet"])
    check(r.returncode == 0, "one-process run of the larger basin (%s)" % r.stderr.strip()[-200:])
    p = subprocess.Popen(mpi(2, "run", scn, "--out", out, "--threads", "1", "--quiet"), stdout=subprocess.PIPE,
                         stderr=subprocess.PIPE, text=True, cwd=WORK)
    t0 = time.time()
    while time.time() - t0 < 300 and p.poll() is None and not os.path.exists(os.path.join(out, "checkpoint.swck")):
        time.sleep(0.02)
    p.send_signal(signal.SIGINT)
    _, err = p.communicate(timeout=TIMEOUT_S)
    check(p.returncode != 0 and "checkpoint written" in err,
          "the interrupted split run exits non-zero and names its checkpoint (exit %s: %s)"
          % (p.returncode, err.strip()[-200:]))
    check(not os.path.exists(os.path.join(out, "maps.nc")), "no maps.nc after the interruption")
    r = run(mpi(3, "run", scn, "--out", out, "--threads", "1", "--quiet", "--resume"))
    differ = same_files(ref, out) if r.returncode == 0 else ["(resume failed: %s)" % r.stderr.strip()[-200:]]
    check(not differ, "resumed on 3 ranks: the files of the uninterrupted run bit for bit (differ: %s)" % differ[:4])


test_identical()
test_interrupted_resume()
test_demos()
test_sweeps()
test_rank0_prints()
test_rank_failure()
test_too_many_ranks()
finish()
