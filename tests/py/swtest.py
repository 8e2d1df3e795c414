"""swtest.py - what the end-to-end tests share: checks that collect failures, and running the program.

Every tests/py/test_*.py is run by ctest as  test_X.py SHOREWARD_BINARY SCRATCH_DIR  (tests/CMakeLists.txt);
this module reads both from the command line when it is imported. It is not a test itself (its name
does not start with test_), so ctest does not register it.

    from swtest import FAILURES, check, run
    check(run("check", path).returncode == 0, "the scenario is valid")
    sys.exit(1 if FAILURES else 0)
"""
import os
import subprocess
import sys

BIN = os.path.abspath(sys.argv[1]) if len(sys.argv) > 1 else None
WORK = os.path.abspath(sys.argv[2]) if len(sys.argv) > 2 else None
RUN_TIMEOUT_S = 900   # no single command of a test may hang the suite: ctest's own limit is the same

FAILURES = []


def check(cond, what):
    """Prints 'ok' or 'FAIL' and the claim; a failed claim is kept in FAILURES."""
    print(("ok   " if cond else "FAIL ") + what)
    if not cond:
        FAILURES.append(what)


def run(*args, **kw):
    """Runs the program with args, capturing text output; keyword arguments go to subprocess.run
    (timeout defaults to RUN_TIMEOUT_S: a hang raises subprocess.TimeoutExpired, which fails the test)."""
    kw.setdefault("timeout", RUN_TIMEOUT_S)
    return subprocess.run([BIN, *args], capture_output=True, text=True, **kw)
