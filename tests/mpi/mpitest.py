"""Shared helpers of the MPI tests (test_sweep_mpi.py, test_run_mpi.py).

Each test is started as  TEST.py SHOREWARD_BINARY WORK_DIR MPIRUN : importing this module reads those
arguments, empties WORK_DIR and gives the helpers below. Ranks are oversubscribed (--oversubscribe) so
that the tests run on a two-core machine; root is allowed (CI runs as root).
"""
import os
import shutil
import subprocess
import sys

import numpy as np
from netCDF4 import Dataset

BIN = os.path.abspath(sys.argv[1])
WORK = os.path.abspath(sys.argv[2])
MPIRUN = sys.argv[3] if len(sys.argv) > 3 else "mpirun"
TIMEOUT_S = 600
FAILURES = []
shutil.rmtree(WORK, ignore_errors=True)   # start from nothing (a sweep resumes from what it finds)
os.makedirs(WORK)


def check(cond, what):
    print(("ok   " if cond else "FAIL ") + what, flush=True)
    if not cond:
        FAILURES.append(what)


def write(name, text):
    path = os.path.join(WORK, name)
    with open(path, "w") as f:
        f.write(text)
    return path


def mpi(n, *args):
    """The command line of `shoreward ARGS` on n ranks."""
    return [MPIRUN, "--oversubscribe", "--allow-run-as-root", "-n", str(n), BIN, *args]


def run(cmd):
    return subprocess.run(cmd, capture_output=True, text=True, timeout=TIMEOUT_S, cwd=WORK)


def data_vars(path):
    """Every variable's raw bytes (fill values as stored), for bitwise comparison."""
    out = {}
    with Dataset(path) as d:
        d.set_auto_mask(False)
        for k, v in d.variables.items():
            out[k] = np.array(v[:]).tobytes()
    return out


def finish():
    print("%d failure(s)" % len(FAILURES))
    sys.exit(1 if FAILURES else 0)
