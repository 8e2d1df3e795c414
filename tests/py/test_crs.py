#!/usr/bin/python3
"""Coordinate systems in the outputs: GIS tools place maps.nc where the run was.

usage: test_crs.py SHOREWARD_BINARY WORK_DIR

Checks (each names its outside reference):
  - a projected run on a seabed file with a UTM zone 33N grid mapping (CF 1.11 section 5.6,
    transverse_mercator, appendix F; the zone's parameters: central meridian 15 deg E, scale 0.9996,
    false easting 500 000 m on WGS 84 [memory]) copies every attribute of the file's mapping variable
    into the variable crs of maps.nc, gauges.nc and snapshots.nc, and every gridded variable names it
    in grid_mapping; the same with the CF parameters alone (no crs_wkt);
  - gdalinfo (GDAL, Debian gdal-bin) reads maps.nc of that run as UTM zone 33N with the file's corner
    coordinates, and of a geographic run as longitude / latitude on a sphere of the scenario's radius
    with corners in degrees, across the 180th meridian; without gdalinfo these checks are skipped with
    a message and the others still run;
  - a geographic run writes lon, lat coordinates in degrees (CF 1.11 sections 4.1, 4.2: degrees_east,
    degrees_north), a latitude_longitude crs (semi_major_axis = the radius, inverse_flattening 0 for a
    sphere, appendix F) and the gauges in degrees;
  - a seabed file whose grid_mapping names a missing variable, whose grid_mapping_name is not a CF one,
    or whose mapping is latitude_longitude under a projected grid, fails the run with one line naming
    the file and variable and the accepted names;
  - tools/plot draws a geographic run in degrees with the aspect 1 / cos(mid-latitude) [derived: a
    degree of longitude is cos(latitude) times a degree of latitude on the sphere].
All places and names here are fictional.
"""
import importlib.machinery
import importlib.util
import json
import math
import os
import shutil
import subprocess
import sys

import numpy as np
from netCDF4 import Dataset

from swtest import FAILURES, check, run

BIN = os.path.abspath(sys.argv[1])
WORK = os.path.abspath(sys.argv[2])
HERE = os.path.dirname(os.path.abspath(__file__))
PLOT = os.path.join(HERE, "..", "..", "tools", "plot")
os.makedirs(WORK, exist_ok=True)
GDALINFO = shutil.which("gdalinfo")
GDALSRSINFO = shutil.which("gdalsrsinfo")

# WGS 84 / UTM zone 33N as WKT 1 (EPSG 32633) [memory]
UTM33_WKT = (
    'PROJCS["WGS 84 / UTM zone 33N",GEOGCS["WGS 84",DATUM["WGS_1984",SPHEROID["WGS 84",6378137,298.257223563,'
    'AUTHORITY["EPSG","7030"]],AUTHORITY["EPSG","6326"]],PRIMEM["Greenwich",0,AUTHORITY["EPSG","8901"]],'
    'UNIT["degree",0.0174532925199433,AUTHORITY["EPSG","9122"]],AUTHORITY["EPSG","4326"]],'
    'PROJECTION["Transverse_Mercator"],PARAMETER["latitude_of_origin",0],PARAMETER["central_meridian",15],'
    'PARAMETER["scale_factor",0.9996],PARAMETER["false_easting",500000],PARAMETER["false_northing",0],'
    'UNIT["metre",1,AUTHORITY["EPSG","9001"]],AXIS["Easting",EAST],AXIS["Northing",NORTH],'
    'AUTHORITY["EPSG","32633"]]')

# the same zone as CF transverse_mercator parameters (CF 1.11 appendix F) [memory]
UTM33_CF = {
    "grid_mapping_name": "transverse_mercator",
    "longitude_of_central_meridian": 15.0,
    "latitude_of_projection_origin": 0.0,
    "scale_factor_at_central_meridian": 0.9996,
    "false_easting": 500000.0,
    "false_northing": 0.0,
    "semi_major_axis": 6378137.0,
    "inverse_flattening": 298.257223563,
}

# the seabed file's grid: 60 x 40 cells of 1 km, west edge 400 km E, south edge 4500 km N (zone 33)
NX, NY, DX = 60, 40, 1000.0
X_WEST, Y_SOUTH = 400000.0, 4500000.0

GRIDDED = ("depth", "wet", "eta_max", "eta_min", "arrival_time", "eta_max_time", "speed_max")


def write(name, text):
    path = os.path.join(WORK, name)
    with open(path, "w") as f:
        f.write(text)
    return path


def seabed_file(name, mapping="wkt+cf", grid_mapping="crs", mapping_name=None):
    """A flat 500 m seabed on the UTM grid; `mapping` says what its variable crs holds: "wkt+cf" (the
    CF parameters, crs_wkt and spatial_ref, as GDAL writes them), "cf" (the parameters alone)."""
    path = os.path.join(WORK, name)
    with Dataset(path, "w") as ds:
        ds.createDimension("y", NY)
        ds.createDimension("x", NX)
        x = ds.createVariable("x", "f8", ("x",))
        x.units = "m"
        x.standard_name = "projection_x_coordinate"
        x[:] = X_WEST + (np.arange(NX) + 0.5) * DX
        y = ds.createVariable("y", "f8", ("y",))
        y.units = "m"
        y.standard_name = "projection_y_coordinate"
        y[:] = Y_SOUTH + (np.arange(NY) + 0.5) * DX
        d = ds.createVariable("depth", "f8", ("y", "x"))
        d.units = "m"
        d.positive = "down"
        d.grid_mapping = grid_mapping
        d[:] = 500.0
        c = ds.createVariable("crs", "i4", ())
        for k, v in UTM33_CF.items():
            setattr(c, k, v)
        if mapping_name:
            c.grid_mapping_name = mapping_name
        if mapping == "wkt+cf":
            c.crs_wkt = UTM33_WKT
            c.spatial_ref = UTM33_WKT
        c.epsg_code = np.int32(32633)
    return path


UTM_SCENARIO = """; a fictional basin on a UTM grid (tests/py/test_crs.py)
[run]
title = Fennikar Deep (fictional)
duration = 4 min
courant_fraction = 0.9
gauge_interval = 30 s
snapshot_interval = 2 min

[edges]
all = open

[seabed]
file = {bed}

[source centre]
shape = hump
x = 430 km
y = 4520 km
amplitude = 1 m
radius = 5 km

[gauges]
Fennikar Quay = 440 km, 4520 km
"""

GEO_SCENARIO = """; a fictional ocean basin across the 180th meridian (tests/py/test_crs.py)
[run]
title = Oskeldrun Reach (fictional)
duration = 10 min
courant_fraction = 0.9
gauge_interval = 60 s
snapshot_interval = 5 min

[grid]
kind = geographic
radius = 6378 km
nx = 40
ny = 20
dx = 0.25 deg
dy = 0.25 deg
x0 = 179 deg
y0 = -45 deg

[edges]
all = open

[seabed]
deep = 3000 m

[source centre]
shape = hump
x = -176 deg
y = -42.5 deg
amplitude = 1 m
radius = 30 km

[gauges]
Dateline Buoy = 180.5 deg, -43 deg
Kervallo Bank = -175.5 deg, -41 deg
"""


def gdal_json(path, var):
    """gdalinfo -json of one variable of a NetCDF file (a subdataset)."""
    p = subprocess.run([GDALINFO, "-json", f'NETCDF:"{path}":{var}'], capture_output=True, text=True)
    if p.returncode != 0:
        return None, p.stderr.strip()
    return json.loads(p.stdout), ""


def proj4(path, var):
    """The CRS gdalsrsinfo reads from one variable, as PROJ.4 words {key: value}."""
    p = subprocess.run([GDALSRSINFO, "-o", "proj4", f'NETCDF:"{path}":{var}'], capture_output=True, text=True)
    words = {}
    for w in p.stdout.split():
        k, _, v = w.lstrip("+").partition("=")
        words[k] = v
    return words


def corners_close(got, want, tol):
    return all(abs(a - b) <= tol for k in want for a, b in zip(got[k], want[k]))


def same_value(a, b):
    if isinstance(b, str):
        return str(a) == b
    return np.allclose(np.atleast_1d(a).astype(float), np.atleast_1d(b).astype(float), rtol=0, atol=0)


def check_crs_copied(path, bed_path, what):
    """Every attribute of the seabed file's crs on the output's crs; grid_mapping on the gridded ones."""
    with Dataset(bed_path) as b, Dataset(path) as ds:
        src = b.variables["crs"]
        ok = "crs" in ds.variables
        bad = []
        if ok:
            out = ds.variables["crs"]
            for k in src.ncattrs():
                if k.startswith("_"):
                    continue
                if k not in out.ncattrs() or not same_value(out.getncattr(k), src.getncattr(k)):
                    bad.append(k)
            ok = not bad and out.ndim == 0
        check(ok, f"{what}: crs holds every attribute of the seabed file's grid mapping ({bad or 'all equal'})")
        names = [v for v in ds.variables if ds.variables[v].dimensions[-2:] in (("y", "x"), ("lat", "lon"))
                 or {"station", "time"} <= set(ds.variables[v].dimensions)]   # maps, and gauge series
        missing = [v for v in names if getattr(ds.variables[v], "grid_mapping", "") != "crs"]
        check(names and not missing, f"{what}: every gridded variable has grid_mapping = crs ({missing or names})")


def test_projected(kind):
    bed = seabed_file(f"ferrow-{kind}.nc", mapping=kind)
    scn = write(f"ferrow-{kind}.scn", UTM_SCENARIO.format(bed=bed))
    out = os.path.join(WORK, f"ferrow-{kind}-out")
    r = run("run", scn, "--out", out, "--quiet")
    check(r.returncode == 0, f"UTM ({kind}) run (exit {r.returncode}: {r.stderr.strip()[-300:]})")
    if r.returncode != 0:
        return
    maps = os.path.join(out, "maps.nc")
    for f in ("maps.nc", "gauges.nc", "snapshots.nc"):
        check_crs_copied(os.path.join(out, f), bed, f"UTM ({kind}) {f}")
    with Dataset(maps) as ds:
        check(ds.variables["x"].standard_name == "projection_x_coordinate" and ds.variables["x"].units == "m",
              f"UTM ({kind}) maps.nc: x stays projection_x_coordinate in m")
        x = ds.variables["x"][:]
        check(abs(x[0] - (X_WEST + 500.0)) < 1e-6, f"UTM ({kind}) maps.nc: x[0] = {x[0]} m (the file's first centre)")
    if not GDALINFO:
        return
    info, msg = gdal_json(maps, "eta_max")
    check(info is not None, f"UTM ({kind}): gdalinfo opens maps.nc eta_max {msg}")
    if info is None:
        return
    # corner coordinates: the cells' outer edges [derived: first centre - dx / 2, last centre + dx / 2]
    want = {"upperLeft": (X_WEST, Y_SOUTH + NY * DX), "lowerRight": (X_WEST + NX * DX, Y_SOUTH)}
    got = info.get("cornerCoordinates", {})
    check(corners_close(got, want, 1e-3), f"UTM ({kind}): gdalinfo corners {got.get('upperLeft')} "
          f"{got.get('lowerRight')}, expected {want['upperLeft']} {want['lowerRight']}")
    wkt = info.get("coordinateSystem", {}).get("wkt", "")
    words = proj4(maps, "eta_max")
    utm = words.get("proj") == "utm" and words.get("zone") == "33" and "south" not in words
    tmerc = (words.get("proj") == "tmerc" and float(words.get("lon_0", "nan")) == 15.0
             and float(words.get("k", words.get("k_0", "nan"))) == 0.9996 and float(words.get("x_0", "nan")) == 500000)
    said = " ".join(f"{k}={v}" for k, v in words.items())
    check(utm or tmerc, f"UTM ({kind}): gdalsrsinfo reads UTM zone 33N: {said}")
    if kind == "wkt+cf":
        check("UTM zone 33N" in wkt, "UTM (wkt+cf): gdalinfo's coordinate system is 'WGS 84 / UTM zone 33N'")
    # the projection's ellipsoid is WGS 84 (a = 6378137 m, 1/f = 298.257223563) [memory]
    check(words.get("datum") == "WGS84" or words.get("ellps") == "WGS84",
          f"UTM ({kind}): on WGS 84 ({words.get('datum') or words.get('ellps')})")


def test_projected_without_crs():
    text = UTM_SCENARIO.replace("[seabed]\nfile = {bed}\n", "[grid]\nnx = 60\nny = 40\ndx = 1 km\nx0 = 400 km\n"
                                "y0 = 4500 km\n\n[seabed]\ndeep = 500 m\n")
    scn = write("ferrow-recipe.scn", text)
    out = os.path.join(WORK, "ferrow-recipe-out")
    r = run("run", scn, "--out", out, "--quiet")
    check(r.returncode == 0, f"recipe run (exit {r.returncode}: {r.stderr.strip()[-300:]})")
    if r.returncode != 0:
        return
    with Dataset(os.path.join(out, "maps.nc")) as ds:
        check("crs" not in ds.variables and not any("grid_mapping" in ds.variables[v].ncattrs() for v in ds.variables),
              "projected run without a seabed file: no crs, no grid_mapping (the files as before)")


def test_sweep_carries_crs():
    """sweep.nc of a projected sweep over a seabed file with a grid mapping carries it as a run's files do."""
    bed = seabed_file("sweep-utm.nc")
    scn = write("sweep-utm.scn", UTM_SCENARIO.format(bed=bed) + "\n[sweep]\namplitude_factor = 0.5, 2\n")
    out = os.path.join(WORK, "sweep-utm-out")
    shutil.rmtree(out, ignore_errors=True)   # a folder left by an earlier run would be resumed
    r = run("sweep", scn, "--out", out, "--quiet")
    check(r.returncode == 0, f"UTM sweep (exit {r.returncode}: {r.stderr.strip()[-300:]})")
    if r.returncode == 0:
        check_crs_copied(os.path.join(out, "sweep.nc"), bed, "UTM sweep.nc")


def test_bad_mapping():
    cases = [
        ("whose grid_mapping names a missing variable", dict(grid_mapping="utm"),
         ["grid_mapping 'utm' names no variable", "variable 'depth'"]),
        ("whose grid mapping has an unknown grid_mapping_name", dict(mapping_name="swiss_grid"),
         ["'swiss_grid' is not a CF grid mapping", "transverse_mercator", "latitude_longitude",
          "polar_stereographic", "the grid_mapping of 'depth'"]),
        ("whose grid mapping is in degrees on a projected grid", dict(mapping_name="latitude_longitude"),
         ["is latitude_longitude, in degrees, but the grid is projected", "kind = geographic"]),
    ]
    for what, kw, words in cases:
        name = "bad-" + what.split()[-1] + ".nc"
        bed = seabed_file(name, **kw)
        scn = write(name.replace(".nc", ".scn"), UTM_SCENARIO.format(bed=bed))
        out = os.path.join(WORK, name.replace(".nc", "-out"))
        r = run("run", scn, "--out", out, "--quiet")
        err = r.stderr.strip()
        check(r.returncode == 1, f"a seabed file {what}: exit 1 (got {r.returncode})")
        check(name in err and all(w in err for w in words) and len(err.splitlines()) == 1,
              f"... one line naming the file, the variable and the accepted form: {err}")
        left = [f for f in os.listdir(out)] if os.path.isdir(out) else []
        check(not any(f.endswith(".nc") or f.endswith(".part") for f in left), f"... and no output file ({left})")
        r = run("check", scn)
        check(r.returncode == 1 and all(w in r.stderr for w in words),
              f"... and `check` stops on it too (exit {r.returncode}: {r.stderr.strip()[-200:]})")


def test_geographic():
    scn = write("tasman.scn", GEO_SCENARIO)
    out = os.path.join(WORK, "tasman-out")
    r = run("run", scn, "--out", out, "--quiet")
    check(r.returncode == 0, f"geographic run (exit {r.returncode}: {r.stderr.strip()[-300:]})")
    if r.returncode != 0:
        return
    maps = os.path.join(out, "maps.nc")
    radius = 6378000.0
    with Dataset(maps) as ds:
        lon, lat = ds.variables.get("lon"), ds.variables.get("lat")
        check(lon is not None and lat is not None and "x" not in ds.variables,
              "geographic maps.nc: lon and lat coordinates, no x or y")
        if lon is None or lat is None:
            return
        check(lon.units == "degrees_east" and lon.standard_name == "longitude" and lon.dimensions == ("lon",),
              "lon: degrees_east, standard_name longitude, on dimension lon")
        check(lat.units == "degrees_north" and lat.standard_name == "latitude" and lat.dimensions == ("lat",),
              "lat: degrees_north, standard_name latitude, on dimension lat")
        # cell centres [derived: west edge + (i + 1/2) dx], increasing eastward across 180
        want_lon = 179.0 + (np.arange(40) + 0.5) * 0.25
        want_lat = -45.0 + (np.arange(20) + 0.5) * 0.25
        check(np.allclose(lon[:], want_lon, atol=1e-9, rtol=0) and np.allclose(lat[:], want_lat, atol=1e-9, rtol=0),
              f"lon {float(lon[0]):.6f} .. {float(lon[-1]):.6f}, lat {float(lat[0]):.6f} .. {float(lat[-1]):.6f}")
        crs = ds.variables.get("crs")
        check(crs is not None and crs.grid_mapping_name == "latitude_longitude"
              and float(crs.semi_major_axis) == radius and float(crs.inverse_flattening) == 0.0,
              "crs: latitude_longitude on the sphere of the scenario's radius (6378 km, inverse_flattening 0)")
        missing = [v for v in GRIDDED if getattr(ds.variables[v], "grid_mapping", "") != "crs"]
        check(not missing, f"every map names crs in grid_mapping ({missing or 'all'})")
        check(ds.variables["eta_max"].dimensions == ("lat", "lon"), "eta_max(lat, lon)")
    with Dataset(os.path.join(out, "gauges.nc")) as g:
        glon, glat = g.variables.get("station_lon"), g.variables.get("station_lat")
        # -175.5 deg is moved by 360 onto the grid: 184.5 (the scenario's rule, scenario.h)
        ok = glon is not None and glat is not None and "station_x" not in g.variables
        check(ok and np.allclose(glon[:], [180.5, 184.5], atol=1e-9)
              and np.allclose(glat[:], [-43.0, -41.0], atol=1e-9),
              f"gauges in degrees: lon {glon[:] if ok else None}, lat {glat[:] if ok else None}")
        check(ok and glon.units == "degrees_east" and g.variables["eta"].coordinates == "time station_lat station_lon station_name",
              "gauges: lon in degrees_east, eta's coordinates name station_lat and station_lon")
    with Dataset(os.path.join(out, "snapshots.nc")) as s:
        check(s.variables["eta"].dimensions == ("time", "lat", "lon") and s.variables["eta"].grid_mapping == "crs",
              "snapshots: eta(time, lat, lon) with grid_mapping crs")

    if GDALINFO:
        info, msg = gdal_json(maps, "eta_max")
        check(info is not None, f"geographic: gdalinfo opens maps.nc eta_max {msg}")
        if info is not None:
            want = {"upperLeft": (179.0, -40.0), "lowerRight": (189.0, -45.0)}
            got = info.get("cornerCoordinates", {})
            check(corners_close(got, want, 1e-7), f"geographic: gdalinfo corners {got.get('upperLeft')} "
                  f"{got.get('lowerRight')}, expected {want['upperLeft']} {want['lowerRight']}")
            words = proj4(maps, "eta_max")
            sphere = words.get("R") == "6378000" or (words.get("a") == words.get("b") == "6378000")
            check(words.get("proj") == "longlat" and sphere,
                  f"geographic: gdalsrsinfo reads longitude/latitude on a 6378 km sphere: "
                  f"{' '.join(f'{k}={v}' for k, v in words.items())}")
    test_plot_geographic(out, maps)


def load_plot():
    loader = importlib.machinery.SourceFileLoader("sw_plot", PLOT)
    spec = importlib.util.spec_from_loader("sw_plot", loader)
    mod = importlib.util.module_from_spec(spec)
    loader.exec_module(mod)
    return mod


def test_plot_geographic(out, maps_path):
    plot = load_plot()
    maps = plot.read_maps(maps_path)
    check(maps["geo"], "tools/plot reads the geographic maps.nc as geographic")
    mid = 0.5 * (-44.875 + -40.125)   # the centres' mid-latitude, deg [derived]
    want = 1.0 / math.cos(math.radians(mid))
    check(abs(plot.geo_aspect(maps) - want) < 1e-12, f"aspect 1 / cos({mid} deg) = {want:.6f}")
    fig, ax = plot.map_figure(maps)
    plot.draw_base(ax, maps, 1)
    check(abs(ax.get_aspect() - want) < 1e-12 and ax.get_xlabel() == "longitude (deg E)"
          and ax.get_ylabel() == "latitude (deg N)",
          f"map axes: aspect {ax.get_aspect()}, labels '{ax.get_xlabel()}', '{ax.get_ylabel()}'")
    x0, x1 = ax.get_xlim()
    check(abs(x0 - 179.0) < 1e-9 and abs(x1 - 189.0) < 1e-9, f"map x limits {x0}, {x1} deg E")
    check(plot.lon_180(181.5) == -178.5 and plot.lon_180(180.0) == 180.0 and plot.lon_180(179.0) == 179.0,
          "longitude tick labels in -180..180 (181.5 deg E shown as -178.5)")
    plot.plt.close(fig)
    r = subprocess.run([sys.executable, PLOT, out], capture_output=True, text=True)
    pics = [os.path.join(out, f) for f in ("arrival.png", "eta_max.png", "gauges.png")]
    check(r.returncode == 0 and all(os.path.exists(p) for p in pics),
          f"tools/plot draws the geographic run (exit {r.returncode}: {r.stderr.strip()[-200:]})")


if __name__ == "__main__":
    if not GDALINFO or not GDALSRSINFO:
        print("SKIP the gdalinfo checks: gdalinfo / gdalsrsinfo not found (Debian: apt-get install gdal-bin; "
              "CI installs it through tools/deps test)")
        GDALINFO = GDALSRSINFO = None
    test_projected("wkt+cf")
    test_projected("cf")
    test_projected_without_crs()
    test_bad_mapping()
    test_sweep_carries_crs()
    test_geographic()
    print("%d failed" % len(FAILURES))
    sys.exit(1 if FAILURES else 0)
