#!/usr/bin/python3
"""End-to-end checks of an earthquake source through the command line: scenarios/fault-demo.scn.

usage: test_faults.py SHOREWARD_BINARY WORK_DIR

The fictional Zelvaro Trench: a table of 12 segments rupturing from a hypocentre at 2 km/s (20 s rise,
Kajiura filter) and a splay fault moving at 45 s. Checks, each against its outside reference:
  - the plan's seismic moment is the sum of mu L W D over the segments, with the default rigidity of
    30 GPa (common practice), and Mw = (2/3)(log10 M0 - 9.1) (Hanks & Kanamori 1979, J. Geophys. Res. 84
    [memory]), recomputed here from the table file;
  - the rupture ends when the last segment stops: start = the 3D distance from the hypocentre to the
    centre of its rectangle (W/2 cos(dip) down dip of the top edge's centre, W/2 sin(dip) deeper)
    over the rupture speed, plus the rise [derived from the stated convention, docs/faults.md];
  - the run succeeds, the deep-water buoy hears the wave within minutes and the coast later, in the order
    of their distance from the rupture;
  - a segment table with a bad line is refused with one line naming the table file and line.
"""
import json
import math
import os
import shutil
import sys

from swtest import FAILURES, check, run

BIN = os.path.abspath(sys.argv[1])
WORK = os.path.abspath(sys.argv[2])
HERE = os.path.dirname(os.path.abspath(__file__))
SCN_DIR = os.path.join(HERE, "..", "..", "scenarios")
os.makedirs(WORK, exist_ok=True)


def table_rows(path):
    """The segment table's rows as dicts of SI values (the demo's columns carry km, deg, m)."""
    rows, head = [], None
    for line in open(path):
        line = line.split("#", 1)[0].strip()
        if not line:
            continue
        if head is None:
            head = [h.split("[")[0] for h in line.split()]
            units = [h.split("[")[1].rstrip("]") if "[" in h else "" for h in line.split()]
            continue
        vals = [float(v) * (1000.0 if u == "km" else 1.0) for v, u in zip(line.split(), units)]
        rows.append(dict(zip(head, vals)))
    return rows


def main():
    for name in ("fault-demo.scn", "fault-demo-segments.txt"):
        shutil.copy(os.path.join(SCN_DIR, name), WORK)
    scn = os.path.join(WORK, "fault-demo.scn")
    rows = table_rows(os.path.join(WORK, "fault-demo-segments.txt"))
    check(len(rows) == 12, f"the demo's table has 12 segments ({len(rows)})")
    mu = 30e9
    m0 = sum(mu * r["length"] * r["width"] * r["slip"] for r in rows) + mu * 40e3 * 10e3 * 2.0   # + the splay
    mw = (2.0 / 3.0) * (math.log10(m0) - 9.1)

    r = run("check", scn, "--json")
    check(r.returncode == 0, f"check --json (exit {r.returncode}: {r.stderr.strip()[-200:]})")
    if r.returncode != 0:
        return
    f = json.loads(r.stdout)["faults"]
    check(f["segments"] == 13 and f["sections"] == 2, f"13 segments in 2 sections ({f['segments']}, {f['sections']})")
    check(abs(f["moment_nm"] / m0 - 1) < 1e-9,
          f"M0 = sum of mu L W D = {m0:.6e} N m (plan: {f['moment_nm']:.6e})")
    check(abs(f["magnitude_mw"] - mw) < 1e-9, f"Mw = (2/3)(log10 M0 - 9.1) = {mw:.6f} (plan: {f['magnitude_mw']:.6f})")

    hx, hy, hz, speed, rise = 100e3, 40e3, 12e3, 2000.0, 20.0
    end = 45.0 + 10.0   # the splay
    for s in rows:
        d = math.radians(s["dip"])
        th = math.radians(s["strike"] + 90.0)   # down dip: to the right of the strike direction
        cx = s["x"] + 0.5 * s["width"] * math.cos(d) * math.sin(th)
        cy = s["y"] + 0.5 * s["width"] * math.cos(d) * math.cos(th)
        cz = s["depth"] + 0.5 * s["width"] * math.sin(d)
        end = max(end, math.sqrt((cx - hx) ** 2 + (cy - hy) ** 2 + (cz - hz) ** 2) / speed + rise)
    check(abs(f["rupture_end_s"] - end) < 1e-6,
          f"the rupture ends at {end:.3f} s (the farthest segment centre / 2 km/s + 20 s; plan: {f['rupture_end_s']:.3f} s)")

    out = os.path.join(WORK, "out")
    r = run("run", scn, "--out", out, "--quiet", "--json")
    check(r.returncode == 0, f"the run succeeds (exit {r.returncode}: {r.stderr.strip()[-200:]})")
    if r.returncode != 0:
        return
    res = json.loads(r.stdout)
    arr = {g["name"]: g["arrival_s"] for g in res["gauges"]}
    check(arr["Zelvaro Deep buoy"] is not None and arr["Zelvaro Deep buoy"] < 120,
          f"the deep buoy above the rupture hears it within 2 minutes ({arr['Zelvaro Deep buoy']} s)")
    coast = [arr[n] for n in ("Ketravo Point", "Umbrisk Harbour", "Pavrune Sands")]
    check(all(t is not None and t > arr["Zelvaro Deep buoy"] + 300 for t in coast),
          f"the coast 100 km further east hears it minutes later ({coast} s)")

    bad = os.path.join(WORK, "fault-demo-segments.txt")
    with open(bad) as fh:
        lines = fh.read().splitlines()
    k = next(i for i, l in enumerate(lines) if l.startswith("80.00    87.5"))
    lines[k] = "80.00    87.5    3.00       25          30         0            95        90         8.0"
    with open(bad, "w") as fh:
        fh.write("\n".join(lines) + "\n")
    r = run("check", scn)
    err = r.stderr.strip()
    check(r.returncode == 1 and f"fault-demo-segments.txt:{k + 1}:" in err and "dip" in err and len(err.splitlines()) == 1,
          f"a table line with dip 95 is refused naming the file and line {k + 1}: {err}")


if __name__ == "__main__":
    main()
    print("%d failed" % len(FAILURES))
    sys.exit(1 if FAILURES else 0)
