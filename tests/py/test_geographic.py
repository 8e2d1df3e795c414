#!/usr/bin/python3
"""End-to-end checks of a geographic (longitude, latitude) run through the command line.

usage: test_geographic.py SHOREWARD_BINARY WORK_DIR

Runs scenarios/geographic-demo.scn (the fictional Quorvane Sea) and checks, each against its outside
reference:
  - the plan states the grid kind and extent in degrees and finds the time-step limit on the row nearest
    the pole, where the cells are narrowest: dx R cos(latitude) [derived];
  - maps.nc has lon/lat coordinates in degrees at the cell centres the scenario asks for;
  - the wave front is a circle on the ground, not in degrees: at points the same great-circle distance
    (haversine; Sinnott 1984, Sky and Telescope 68(2), 159 [memory]) east and north of the source the
    first arrivals agree within a cell crossing, while the same number of degrees east and north would
    differ by the factor cos(35 deg) in distance;
  - between two deep-water gauges the peaks travel at sqrt(g h) along great circles (Lamb 1932,
    Hydrodynamics, section 170 [memory]), within 4 % (the gauges sample every 30 s);
  - a gauge given in metres on the geographic grid is refused with one line naming the file, line and key.
"""
import math
import os
import sys

import numpy as np
from netCDF4 import Dataset

from swtest import FAILURES, check, run

BIN = os.path.abspath(sys.argv[1])
WORK = os.path.abspath(sys.argv[2])
HERE = os.path.dirname(os.path.abspath(__file__))
SCN = os.path.join(HERE, "..", "..", "scenarios", "geographic-demo.scn")
R = 6371e3
G = 9.81
os.makedirs(WORK, exist_ok=True)


def haversine(lat1, lon1, lat2, lon2):
    """Great-circle distance (m) between two points given in degrees (Sinnott 1984)."""
    p1, p2, dl = math.radians(lat1), math.radians(lat2), math.radians(lon2 - lon1)
    a = math.sin(0.5 * (p2 - p1)) ** 2 + math.cos(p1) * math.cos(p2) * math.sin(0.5 * dl) ** 2
    return 2 * R * math.asin(math.sqrt(a))


def destination(lat, lon, dist, bearing_deg):
    """The point dist (m) from (lat, lon) along the initial bearing (deg clockwise from north)."""
    p1, l1, th, d = math.radians(lat), math.radians(lon), math.radians(bearing_deg), dist / R
    p2 = math.asin(math.sin(p1) * math.cos(d) + math.cos(p1) * math.sin(d) * math.cos(th))
    l2 = l1 + math.atan2(math.sin(th) * math.sin(d) * math.cos(p1), math.cos(d) - math.sin(p1) * math.sin(p2))
    return math.degrees(p2), math.degrees(l2)


def main():
    src_lat, src_lon = 35.0, -147.0   # [source main] of the scenario
    r = run("check", SCN)
    check(r.returncode == 0, f"check passes (exit {r.returncode}: {r.stderr.strip()[-200:]})")
    plan = r.stdout
    check("geographic" in plan and "longitude -150 to -140 deg" in plan and "latitude 31 to 40 deg" in plan,
          "the plan states the grid kind and its extent in degrees")
    # the narrowest cells are on the north row (39.975 deg N centres; its north face at 40 N)
    want_w = R * math.radians(0.05) * math.cos(math.radians(40.0))
    check("row 179" in plan and f"{want_w / 1e3:.3f} km" in plan,
          f"the time-step limit is found on row 179, cells {want_w / 1e3:.3f} km wide (R dlon cos 40 deg)")

    out = os.path.join(WORK, "geographic-demo-out")
    r = run("run", SCN, "--out", out, "--quiet")
    check(r.returncode == 0, f"the run succeeds (exit {r.returncode}: {r.stderr.strip()[-200:]})")
    if r.returncode != 0:
        return
    with Dataset(os.path.join(out, "maps.nc")) as ds:
        lon, lat = ds.variables["lon"][:], ds.variables["lat"][:]
        check(np.allclose(lon, -150 + 0.05 * (np.arange(200) + 0.5), atol=1e-9)
              and np.allclose(lat, 31 + 0.05 * (np.arange(180) + 0.5), atol=1e-9),
              "maps.nc: lon, lat at the cell centres, in degrees")
        arr = np.ma.filled(ds.variables["arrival_time"][:], np.nan)
        depth = ds.variables["depth"][:]

    def at(la, lo):
        i, j = int((lo + 150) / 0.05), int((la - 31) / 0.05)
        return arr[j, i], depth[j, i], lat[j], lon[i]

    c = math.sqrt(G * 4200.0)
    cell_time = R * math.radians(0.05) / c   # one north-south cell crossing, s
    for dist in (150e3, 250e3):   # west of the source the grid ends 2.9 degrees (240-270 km) away
        pts = [destination(src_lat, src_lon, dist, b) for b in (0.0, 270.0)]   # north and west (deep water)
        t = [at(*p) for p in pts]
        # each cell centre's own great-circle distance, to take out where in its cell the point fell
        tt = [ti[0] - haversine(src_lat, src_lon, ti[2], ti[3]) / c for ti in t]
        check(all(ti[1] > 4000 for ti in t) and abs(tt[0] - tt[1]) < cell_time,
              f"{dist / 1e3:.0f} km north and west of the source: arrivals less distance / c agree within a "
              f"cell crossing ({tt[0]:.1f} s, {tt[1]:.1f} s; a cell is {cell_time:.1f} s)")
        deg = math.degrees(dist / R)   # the same angle east in degrees of longitude is cos(35) shorter
        t_deg = at(src_lat, src_lon - deg)[0]
        check(abs(t_deg - t[0][0]) > 3 * cell_time,   # (1 - cos 35) of the distance: 130-220 s here
              f"... whereas {deg:.2f} degrees west arrives {t[0][0] - t_deg:.0f} s earlier than {deg:.2f} degrees "
              "north: the front is round on the ground, not in degrees")

    with Dataset(os.path.join(out, "gauges.nc")) as g:
        names = ["".join(c.decode() for c in row if c).strip() if row.dtype.kind == "S" else str(row)
                 for row in np.ma.filled(g.variables["station_name"][:], b"")]
        eta = g.variables["eta"][:]
        time = g.variables["time"][:]
        glat, glon = g.variables["station_lat"][:], g.variables["station_lon"][:]
    k1, k2 = names.index("Gorvolt Rock buoy"), names.index("Far Station")
    t1, t2 = time[np.argmax(eta[k1])], time[np.argmax(eta[k2])]
    d1 = haversine(src_lat, src_lon, glat[k1], glon[k1])
    d2 = haversine(src_lat, src_lon, glat[k2], glon[k2])
    speed = (d2 - d1) / (t2 - t1)
    check(abs(speed / c - 1) < 0.04,
          f"peaks travel from Gorvolt Rock buoy to Far Station at {speed:.1f} m/s over the great circle, "
          f"sqrt(g h) = {c:.1f} m/s ({100 * (speed / c - 1):+.1f} %)")

    with open(SCN) as f:
        text = f.read()
    bad = os.path.join(WORK, "metres-gauge.scn")
    with open(bad, "w") as f:
        f.write(text.replace("Far Station = -149.5 deg, 39.5 deg", "Far Station = 120 km, 300 km"))
    line = 1 + text[:text.index("Far Station =")].count("\n")
    r = run("check", bad)
    err = r.stderr.strip()
    check(r.returncode == 1 and f"metres-gauge.scn:{line}:" in err and "Far Station" in err
          and "deg" in err and len(err.splitlines()) == 1,
          f"a gauge in metres on a geographic grid: one line naming file, line and key ({err})")


if __name__ == "__main__":
    main()
    print("%d failed" % len(FAILURES))
    sys.exit(1 if FAILURES else 0)
