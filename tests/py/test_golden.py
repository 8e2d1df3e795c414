#!/usr/bin/python3
"""Golden comparison: the demo and one scenario per layout give, bit for bit, the gauge series and maps
that the code gave when tests/golden/expected.json was recorded.

usage: test_golden.py SHOREWARD_BINARY WORK_DIR
       test_golden.py SHOREWARD_BINARY WORK_DIR --record     (rewrites expected.json; see below)

What it pins: every variable of gauges.nc and maps.nc (values as stored, fill values included), as a
SHA-256 of the raw bytes, for the built-in demo, tests/golden/layout_?.scn and tests/golden/terms_*.scn,
each in double and in single precision, on 2 threads. The references of the demo and layout_?.scn were
recorded with the code before the stepper redesign (commit d66de45, when every layout still wrote its own
schedule), so this test proves that the shared stepper, with rotation and friction off, computes the same
numbers as the five hand-written steps did.

The tests/golden/terms_*.scn cases (a strait 600 cells wide with coasts and islands, rotation and each
kind of friction) pin the momentum terms the same way. They were recorded with commit 5abafa5, before
the B and D kernels began to skip the water-fraction bytes in open-water segments of a row, so they
prove that change left every bit as it was; they guard later changes to the terms kernels alike.

The check is against the project's own earlier output, not an outside reference: it guards the numbers
that the verification suite (tests/verify, against published formulas) has already established.

Record again (--record) only for a change that is meant to alter results, and say so in the commit.
The hashes assume IEEE arithmetic without fused multiply-add (the build uses -ffp-contract=off) and the
same libm as Debian 12's; a mismatch message gives the largest difference so that a platform effect
(1 ulp) can be told from a real change.
"""
import hashlib
import json
import os
import subprocess
import sys

import numpy as np
from netCDF4 import Dataset

from swtest import FAILURES, check

BIN = os.path.abspath(sys.argv[1])
WORK = os.path.abspath(sys.argv[2])
RECORD = "--record" in sys.argv[3:]
HERE = os.path.dirname(os.path.abspath(__file__))
GOLDEN = os.path.join(HERE, "..", "golden")
EXPECTED = os.path.join(GOLDEN, "expected.json")
os.makedirs(WORK, exist_ok=True)


def cases():
    out = []
    for prec in ("double", "single"):
        out.append((f"demo-{prec}", ["demo", "{out}", "--precision", prec]))
        for lay in "abcde":
            scn = os.path.join(GOLDEN, f"layout_{lay}.scn")
            out.append((f"layout_{lay}-{prec}", ["run", scn, "--out", "{out}", "--precision", prec]))
        for scn in sorted(f for f in os.listdir(GOLDEN) if f.startswith("terms_") and f.endswith(".scn")):
            out.append((f"{scn[:-4]}-{prec}", ["run", os.path.join(GOLDEN, scn), "--out", "{out}", "--precision", prec]))
    return out


def fingerprint(path):
    """{variable: {"sha256": ..., "max_abs": ...}} of every variable in a NetCDF file, raw values."""
    res = {}
    with Dataset(path) as ds:
        ds.set_auto_mask(False)
        ds.set_auto_scale(False)
        ds.set_auto_chartostring(False)   # raw chars of station_name, which carries _Encoding
        for name, var in ds.variables.items():
            a = np.ascontiguousarray(var[:])
            if a.dtype.kind in "fiu":
                a = a.astype(a.dtype.newbyteorder("<"), copy=False)
                finite = a[np.isfinite(a)] if a.dtype.kind == "f" else a
                max_abs = float(np.max(np.abs(finite))) if finite.size else 0.0
            else:
                max_abs = None
            res[name] = {"sha256": hashlib.sha256(a.tobytes()).hexdigest(), "max_abs": max_abs}
    return res


def run_case(name, args):
    out = os.path.join(WORK, name)
    cmd = [BIN] + [a.replace("{out}", out) for a in args] + ["--threads", "2", "--quiet"]
    p = subprocess.run(cmd, capture_output=True, text=True)
    if p.returncode != 0:
        check(False, f"{name}: {' '.join(cmd)} exited {p.returncode}: {p.stderr.strip()}")
        return None
    return {f: fingerprint(os.path.join(out, f)) for f in ("gauges.nc", "maps.nc")}


def main():
    got = {}
    for name, args in cases():
        fp = run_case(name, args)
        if fp is not None:
            got[name] = fp
    if RECORD:
        with open(EXPECTED, "w") as f:
            json.dump(got, f, indent=1, sort_keys=True)
            f.write("\n")
        print(f"recorded {len(got)} cases into {EXPECTED}")
        return 0 if not FAILURES else 1
    with open(EXPECTED) as f:
        want = json.load(f)
    check(sorted(want) == sorted(got) or bool(FAILURES), "every recorded case ran")
    for name in sorted(want):
        if name not in got:
            continue
        for fname, variables in want[name].items():
            bad = []
            for var, ref in variables.items():
                new = got[name].get(fname, {}).get(var)
                if new is None:
                    bad.append(f"{var} missing")
                elif new["sha256"] != ref["sha256"]:
                    bad.append(f"{var} differs (max |value| {new['max_abs']!r}, recorded {ref['max_abs']!r})")
            check(not bad, f"{name} {fname}: every variable bit-identical to the recorded run"
                  + ("" if not bad else ": " + "; ".join(bad)))
    if FAILURES:
        print(f"\n{len(FAILURES)} check(s) failed")
        return 1
    print("\nall golden checks passed")
    return 0


if __name__ == "__main__":
    sys.exit(main())
