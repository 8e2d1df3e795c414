#!/usr/bin/python3
"""MPI checks of `mpirun -n N shoreward sweep` (a build configured with -DSW_MPI=ON).

usage: test_sweep_mpi.py SHOREWARD_BINARY WORK_DIR MPIRUN

Checks (the reference is always the same sweep run as one process, without mpirun):
  - 1, 2 and 3 ranks give a sweep.nc whose every variable has the same bytes as the one-process sweep's;
    only rank 0 prints (one summary);
  - a sweep on 2 ranks interrupted with SIGINT (to mpirun) keeps its finished members, leaves no sweep.nc
    and no .part file, and the same command on 3 ranks resumes it to the one-process sweep's bytes;
  - a rank that cannot read the scenario (an MPMD job whose rank 1 names a missing file) or that reads a
    different one ends the job: exit 1, one message naming the rank and the cause, nothing written;
  - more ranks than members: one note line from rank 0, and the sweep still equals the one-process one.
The scenarios are a small fictional coast (the one of tests/py/test_sweep.py); the ranks are oversubscribed
(--oversubscribe) so that the checks run on a two-core machine.
"""
import os
import signal
import subprocess
import sys
import time

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from mpitest import BIN, MPIRUN, TIMEOUT_S, WORK, check, data_vars, finish, mpi, run, write  # noqa: E402


def same_data(a_dir, b_dir):
    a, b = data_vars(os.path.join(a_dir, "sweep.nc")), data_vars(os.path.join(b_dir, "sweep.nc"))
    differ = sorted(k for k in set(a) | set(b) if a.get(k) != b.get(k))
    return not differ, len(a), differ


# A small fictional coast: shelf to the east, a hump offshore, three gauges (as in tests/py/test_sweep.py).
COAST = """; small fictional coast for the MPI sweep tests
[run]
title = MPI sweep test coast (fictional)
duration = {duration}
courant_fraction = 0.9
gauge_interval = 15 s
arrival_threshold = 0.01 m

[grid]
nx = {n}
ny = {n}
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

FACTORIAL = """design = factorial
amplitude_factor = 0.5, 1, 2
source_y_offset = -3 km, 0, 3 km
depth_factor = 0.9, 1.1"""     # 18 members

TWO = """design = one-at-a-time
amplitude_factor = 2"""        # 2 members: the base and one


def coast(sweep, duration="20 min", n=80):
    shore = n - 4
    return COAST.format(duration=duration, n=n, shore=shore, ym=n // 2, g2=shore - 8, g2y=n // 2 + 6, g3=shore - 2,
                        sweep=sweep)


def test_ranks_identical():
    path = write("fact.scn", coast(FACTORIAL))
    ref = os.path.join(WORK, "fact-one")
    r = run([BIN, "sweep", path, "--out", ref, "--quiet"])
    check(r.returncode == 0, "one-process sweep (%s)" % r.stderr.strip()[-300:])
    for n in (1, 2, 3):
        out = os.path.join(WORK, "fact-n%d" % n)
        t0 = time.time()
        r = run(mpi(n, "sweep", path, "--out", out))
        check(r.returncode == 0, "sweep on %d rank%s exits 0 in %.1f s (%s)"
              % (n, "s" if n > 1 else "", time.time() - t0, r.stderr.strip()[-300:]))
        if r.returncode != 0:
            continue
        same, nvar, differ = same_data(ref, out)
        check(same, "%d rank%s: sweep.nc bitwise equal to the one-process sweep (%d variables; differ: %s)"
              % (n, "s" if n > 1 else "", nvar, differ))
        check(r.stdout.count("Sweep of ") == 1 and r.stdout.count("Scenario   ") == 1,
              "%d rank%s: one plan and one summary (rank 0 only)" % (n, "s" if n > 1 else ""))
    return ref


def test_interrupted_resume(ref):
    path = os.path.join(WORK, "fact.scn")
    # members of about a second each here (AMD EPYC, 2 cores): slow enough to be caught half done even
    # on a machine several times faster (with 60 min on 200 x 200 all 18 could finish before SIGINT landed)
    slow = write("slow.scn", coast(FACTORIAL, duration="240 min", n=300))
    full = os.path.join(WORK, "slow-one")
    r = run([BIN, "sweep", slow, "--out", full, "--quiet"])
    check(r.returncode == 0, "one-process sweep of the longer members (%s)" % r.stderr.strip()[-300:])
    out = os.path.join(WORK, "slow-mpi")
    members = os.path.join(out, "members")
    p = subprocess.Popen(mpi(2, "sweep", slow, "--out", out, "--quiet"), stdout=subprocess.PIPE,
                         stderr=subprocess.PIPE, text=True, cwd=WORK)
    t0 = time.time()
    done = []
    while time.time() - t0 < 300:   # interrupt once at least two members are finished
        done = [f for f in os.listdir(members) if f.endswith(".nc")] if os.path.isdir(members) else []
        if len(done) >= 2 or p.poll() is not None:
            break
        time.sleep(0.02)
    p.send_signal(signal.SIGINT)
    _, err = p.communicate(timeout=TIMEOUT_S)
    kept = sorted(f for f in os.listdir(members) if f.endswith(".nc"))
    check(p.returncode != 0, "the interrupted MPI sweep exits non-zero (got %s)" % p.returncode)
    check(2 <= len(kept) < 18, "it keeps its finished members (%d of 18)" % len(kept))
    check(not os.path.exists(os.path.join(out, "sweep.nc")), "no sweep.nc after the interruption")
    check(not [f for f in os.listdir(members) if f.endswith(".part")], "no .part file left behind")
    r = run(mpi(3, "sweep", slow, "--out", out))
    check(r.returncode == 0, "the same command on 3 ranks resumes it (%s)" % r.stderr.strip()[-300:])
    check("kept from an earlier attempt" in r.stdout, "the resumed sweep says what it kept")
    if r.returncode == 0:
        same, nvar, differ = same_data(full, out)
        check(same, "resumed MPI sweep.nc bitwise equal to the uninterrupted one-process sweep (%d variables; "
              "differ: %s)" % (nvar, differ))
    del path, ref


def test_rank_failure():
    path = os.path.join(WORK, "fact.scn")
    missing = os.path.join(WORK, "not-on-this-node.scn")
    out = os.path.join(WORK, "fail-missing")
    # MPMD: rank 0 reads the scenario, rank 1 names a file it cannot open
    cmd = [MPIRUN, "--oversubscribe", "--allow-run-as-root", "-n", "1", BIN, "sweep", path, "--out", out, ":",
           "-n", "1", BIN, "sweep", missing, "--out", out]
    r = run(cmd)
    lines = [ln for ln in r.stderr.splitlines() if "shoreward" in ln]
    check(r.returncode == 1, "a rank that cannot read its scenario ends the job with exit 1 (got %d)" % r.returncode)
    check(len(lines) == 1 and "rank 1:" in lines[0] and "not-on-this-node.scn" in lines[0],
          "one message naming the rank and the file: %s" % lines)
    check(not os.path.exists(os.path.join(out, "sweep.nc")) and not os.path.isdir(os.path.join(out, "members")),
          "nothing written into the output folder")
    other = write("other.scn", coast(FACTORIAL.replace("0.9, 1.1", "0.8, 1.2")))
    out = os.path.join(WORK, "fail-other")
    cmd[cmd.index(missing)] = other
    cmd = [c if c != os.path.join(WORK, "fail-missing") else out for c in cmd]
    r = run(cmd)
    lines = [ln for ln in r.stderr.splitlines() if "shoreward" in ln]
    check(r.returncode == 1 and len(lines) == 1 and "rank 1 built a different sweep" in lines[0],
          "a rank that reads another scenario ends the job with one message: %s" % lines)
    check(not os.path.exists(os.path.join(out, "sweep.nc")), "no sweep.nc either")


def test_fewer_members():
    path = write("two.scn", coast(TWO))
    ref = os.path.join(WORK, "two-one")
    r = run([BIN, "sweep", path, "--out", ref, "--quiet"])
    check(r.returncode == 0, "one-process sweep of 2 members (%s)" % r.stderr.strip()[-300:])
    out = os.path.join(WORK, "two-n3")
    r = run(mpi(3, "sweep", path, "--out", out, "--quiet"))
    notes = [ln for ln in r.stderr.splitlines() if "note:" in ln]
    check(r.returncode == 0, "3 ranks for 2 members: exit 0 (%s)" % r.stderr.strip()[-300:])
    check(len(notes) == 1 and "3 ranks for 2 members" in notes[0] and "-n 2" in notes[0],
          "one note line from rank 0 says so and what to use: %s" % notes)
    if r.returncode == 0:
        same, nvar, differ = same_data(ref, out)
        check(same, "and the sweep equals the one-process one (%d variables; differ: %s)" % (nvar, differ))


ref = test_ranks_identical()
test_rank_failure()
test_fewer_members()
test_interrupted_resume(ref)
finish()
