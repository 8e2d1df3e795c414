#!/usr/bin/python3
"""End-to-end checks of rotation, friction and periodic edges through the command line.

usage: test_terms.py SHOREWARD_BINARY WORK_DIR

Checks (each names its outside reference where there is one):
  - scenarios/rotating-shelf.scn (fictional): the coastal response to a rise of the sea against a coast
    is one-sided with rotation: a Kelvin wave keeps the coast on its right (northern hemisphere, f > 0)
    and travels east along a southern coast (Gill 1982, Atmosphere-Ocean Dynamics, section 10.4
    [memory]); the gauge 250 km east must see more than twice what the gauge 250 km west sees, and
    without rotation (same scenario, rotation = none) both see the same to 1e-9, by symmetry;
  - latitude = 52 deg gives f = 2 Omega sin(52 deg) = 1.14925e-4 s-1 (Omega = 7.2921159e-5 s-1, common
    practice [memory; docs/references.md]);
  - the terms in force are named in the plan, the run summary, --json and the NetCDF global attributes;
  - linear friction keeps the model linear (twice the source, twice the answer, to round-off), quadratic
    friction does not (docs/terms.md: amplitudes no longer scale);
  - bad keys fail with exit status 1 and one FILE:LINE message naming the key and what is accepted.
"""
import json
import math
import os
import re
import sys

from netCDF4 import Dataset

from swtest import FAILURES, check, run

BIN = os.path.abspath(sys.argv[1])
WORK = os.path.abspath(sys.argv[2])
HERE = os.path.dirname(os.path.abspath(__file__))
SCN = os.path.join(HERE, "..", "..", "scenarios", "rotating-shelf.scn")
os.makedirs(WORK, exist_ok=True)


def write(name, text):
    path = os.path.join(WORK, name)
    with open(path, "w") as f:
        f.write(text)
    return path


def run_json(scn, out):
    p = run("run", scn, "--out", os.path.join(WORK, out), "--quiet", "--json")
    if p.returncode != 0:
        check(False, f"run {os.path.basename(scn)}: exit {p.returncode}: {p.stderr.strip()}")
        return None
    return json.loads(p.stdout)


def peaks(result):
    return {g["name"]: g["peak_m"] for g in result["gauges"]}


def main():
    text = open(SCN).read()

    # --- the Kelvin wave: one-sided with rotation, symmetric without
    rot = run_json(SCN, "rot")
    norot = run_json(write("norot.scn", re.sub(r"(?m)^rotation = f-plane\n^latitude = 52 deg\n", "", text)), "norot")
    if rot and norot:
        pr, pn = peaks(rot), peaks(norot)
        print(f"     peaks with rotation {pr}\n     without {pn}")
        check(pr["Ostvarin Head"] > 2 * pr["Ulmquessa"],
              f"with rotation the gauge 250 km east sees more than twice the west one "
              f"({pr['Ostvarin Head']:.3f} m vs {pr['Ulmquessa']:.3f} m; Kelvin wave, coast on its right)")
        check(abs(pn["Ostvarin Head"] - pn["Ulmquessa"]) <= 1e-9 * pn["Ulmquessa"],
              f"without rotation east and west see the same ({pn['Ostvarin Head']:.6f} vs {pn['Ulmquessa']:.6f} m)")
        t = rot["terms"]
        f52 = 2 * 7.2921159e-5 * math.sin(math.radians(52))
        check(t["rotation"] == "f-plane" and abs(t["coriolis_f0_per_s"] / f52 - 1) < 1e-12,
              f"--json names the rotation, f = {t['coriolis_f0_per_s']:.6e} s-1 (2 Omega sin 52 deg = {f52:.6e})")
        check(t["bottom_friction"] == "manning" and t["manning_n"] == 0.025, "--json names the friction")
        check(norot["terms"]["rotation"] == "none", "--json says rotation none when there is none")
        with Dataset(os.path.join(WORK, "rot", "maps.nc")) as ds:
            att = {a: ds.getncattr(a) for a in ds.ncattrs()}
        check(att.get("rotation") == "f-plane" and abs(att.get("coriolis_f0_per_s", 0) / f52 - 1) < 1e-12
              and att.get("bottom_friction") == "manning" and att.get("manning_n") == 0.025
              and "rotation f-plane" in att.get("momentum_terms", ""),
              f"maps.nc global attributes name the terms: {att.get('momentum_terms')!r}")
        with Dataset(os.path.join(WORK, "rot", "gauges.nc")) as ds:
            check(ds.getncattr("rotation") == "f-plane", "gauges.nc names the terms too")

    # --- the plan and the summary
    p = run("check", SCN)
    check(p.returncode == 0 and re.search(r"(?m)^Terms +rotation f-plane \(f = 0\.000114925 s-1\); friction manning",
                                          p.stdout) is not None, "check prints the terms in force")
    check("Edges      west periodic, east periodic" in p.stdout, "check prints the periodic edges")
    p = run("run", SCN, "--out", os.path.join(WORK, "rot2"))
    check(p.returncode == 0 and "Terms: rotation f-plane" in p.stdout, "the run summary names the terms")

    # --- linear friction keeps the model linear; quadratic does not
    def scaled(friction_lines, amp):
        t = re.sub(r"(?m)^friction = manning\n^manning = 0.025\n", friction_lines, text)
        t = t.replace("amplitude = 1 m", f"amplitude = {amp} m").replace("duration = 8 h", "duration = 3 h")
        return write(f"scaled-{len(friction_lines)}-{amp}.scn", t)

    for lines, linear in (("friction = linear\nfriction_rate = 1 mm/s\n", True),
                          ("friction = quadratic\ndrag = 0.01\n", False)):
        r1, r2 = run_json(scaled(lines, 1), "s1"), run_json(scaled(lines, 2), "s2")
        if not (r1 and r2):
            continue
        ratio = peaks(r2)["Yelmarsk Sands"] / peaks(r1)["Yelmarsk Sands"]
        kind = lines.split("\n")[0]
        if linear:
            check(abs(ratio - 2) < 1e-9, f"{kind}: twice the source gives twice the peak (ratio {ratio:.12f})")
        else:
            check(ratio < 1.99, f"{kind}: twice the source gives less than twice the peak (ratio {ratio:.4f}): "
                  "quadratic friction makes the model nonlinear")

    # --- bad input
    base = "[run]\nduration = 1 h\n{run}[grid]\nnx = 20\nny = 10\ndx = 1 km\n[seabed]\ndeep = 50 m\n{edges}"
    bad = [
        (base.format(run="drag = 0.003\n", edges=""), r"bad\.scn:3: \[run\] drag: not used without friction"),
        (base.format(run="rotation = beta-plane\ncoriolis = 1e-4\nbeta = 1e-11\n", edges=""),
         r"bad\.scn:3: \[run\] rotation = beta-plane needs reference_y"),
        (base.format(run="rotation = f-plane\ncoriolis = 5e-3\n", edges=""),
         r"bad\.scn:4: \[run\] coriolis = 5e-3: out of range \(accepted: -1e-3 <= coriolis <= 1e-3 s-1"),
        (base.format(run="", edges="[edges]\nnorth = periodic\n"),
         r"bad\.scn:10: \[edges\] north = periodic needs south = periodic too"),
        (base.format(run="layout = E\n", edges="[edges]\nall = periodic\n").replace("nx = 20", "nx = 21"),
         r"bad\.scn:3: \[run\] layout = E with periodic west/east edges: the E layout's checkerboard needs an even "
         r"number of cells between periodic edges \(nx = 21"),
    ]
    for text_bad, pattern in bad:
        p = run("check", write("bad.scn", text_bad))
        msg = p.stderr.strip()
        check(p.returncode == 1 and re.search(pattern, msg) is not None and "\n" not in msg,
              f"refused with exit 1 and one line: {msg!r}")

    if FAILURES:
        print(f"\n{len(FAILURES)} check(s) failed")
        return 1
    print("\nall terms checks passed")
    return 0


if __name__ == "__main__":
    sys.exit(main())
