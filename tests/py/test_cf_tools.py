#!/usr/bin/python3
"""Every NetCDF file that run, compare and sweep write opens in common tools and follows the CF rules
those tools rely on.

usage: test_cf_tools.py SHOREWARD_BINARY WORK_DIR

Checks (each names its outside reference):
  - xarray (Debian's python3-xarray) opens every file; station names come back as text, and a gauge
    selected by name holds the same series as the same row read with netCDF4 (xarray decodes a char
    array to str only with `_Encoding`, "Reading encoded data" in the xarray user guide [memory]);
  - arrival_time, eta_max_time and the sweep's arrival / peak times decode as durations
    (timedelta64) equal to the stored seconds (xarray decodes units "seconds" without "since" as a
    time difference [memory]; UDUNITS takes "seconds" as "s");
  - history starts with an ISO 8601 UTC timestamp "YYYY-MM-DDTHH:MM:SSZ: " (CF 1.11 section 2.6.2:
    history lists the programs that modified the data, conventionally each with a date and time [memory]);
  - no coordinate variable (1-D, named after its dimension) and no station position carries a
    _FillValue (CF 1.11 section 2.5.1: missing data is not allowed in coordinate variables [memory]);
  - a file with a cf_role variable has the global attribute featureType (CF 1.11 section 9.5 [memory]);
  - every cell_methods method is one of CF 1.11 Appendix E [memory], and each member statistic of the
    sweep names the member dimension;
  - `ncks -m` (NCO) reads every file's metadata;
  - `cdo sinfo` reads maps.nc and sweep.nc; on gauges.nc CDO refuses the CF timeSeries layout
    eta(station, time) with "Time must be the first dimension" - the reason README gives. If a newer
    CDO reads it, the check says so and README must be updated.
Tools that are missing are reported as "skip" (tools/deps test installs them).
"""
import os
import re
import shutil
import subprocess
import sys
import warnings

import numpy as np
from netCDF4 import Dataset

from swtest import FAILURES, check

BIN = os.path.abspath(sys.argv[1])
WORK = os.path.abspath(sys.argv[2])
shutil.rmtree(WORK, ignore_errors=True)
os.makedirs(WORK)
# pandas warns when xarray turns the _FillValue cells (NaN) of a duration into NaT: expected here
warnings.filterwarnings("ignore", category=RuntimeWarning, module="pandas")

# CF 1.11 Appendix E, cell methods [memory]
CF_METHODS = {"point", "sum", "maximum", "maximum_absolute_value", "median", "mid_range", "minimum",
              "minimum_absolute_value", "mean", "mean_absolute_value", "mean_of_upper_decile", "mode",
              "range", "root_mean_square", "standard_deviation", "sum_of_squares", "variance"}
ISO_HISTORY = re.compile(r"^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}Z: ")
DURATIONS = ("arrival_time", "eta_max_time", "peak_time", "arrival_earliest", "arrival_median",
             "arrival_latest", "arrival_spread")

# A small fictional basin (no real place): shelf and wall to the east, three gauges, a sweep section.
SCENARIO = """; small fictional basin for the CF and tools checks
[run]
title = cf tools basin (fictional)
duration = 8 min
courant_fraction = 0.9
gauge_interval = 15 s
arrival_threshold = 0.01 m
snapshot_interval = 2 min

[grid]
nx = 50
ny = 40
dx = 1 km

[edges]
all = open
east = wall

[seabed]
deep = 400 m
coast = east
shoreline = 46 km
shelf_depth = 50 m
shelf_width = 8 km
slope_width = 6 km
min_depth = 2 m

[source main]
shape = hump
x = 12 km
y = 20 km
amplitude = 0.5 m
radius = 3 km

[gauges]
Outer Ridge = 20 km, 20 km
Lantern Shelf = 38 km, 26 km
Quay End = 44 km, 20 km

[sweep]
design = factorial
amplitude_factor = 0.5, 1
depth_factor = 0.8, 1.2
"""


def run(*args):
    return subprocess.run([BIN, *args], capture_output=True, text=True, cwd=WORK)


def nc_files(top):
    out = []
    for root, _, files in os.walk(top):
        out += [os.path.join(root, f) for f in files if f.endswith(".nc")]
    return sorted(out)


def rel(path):
    return os.path.relpath(path, WORK)


def check_cf(path):
    """CF attribute rules, read with netCDF4 (raw attributes)."""
    with Dataset(path) as ds:
        name = rel(path)
        member = os.sep + "members" + os.sep in path   # the sweep's working files, read back by sweep
        if not member:
            check(ISO_HISTORY.match(getattr(ds, "history", "")) is not None,
                  f"{name}: history starts with an ISO 8601 UTC timestamp ({getattr(ds, 'history', '')[:40]!r})")
        for v in ds.variables.values():
            coord = v.ndim == 1 and v.dimensions[0] == v.name
            position = v.name in ("station_x", "station_y", "station_lon", "station_lat")
            if coord or position:
                check("_FillValue" not in v.ncattrs(), f"{name}: coordinate {v.name} has no _FillValue")
            if "cf_role" in v.ncattrs():
                ft = getattr(ds, "featureType", None)
                check(ft in ("timeSeries", "point", "trajectory", "profile"),
                      f"{name}: {v.name} has cf_role, and the file has featureType ({ft})")
            if "cell_methods" in v.ncattrs():
                text = re.sub(r"\([^)]*\)", "", v.cell_methods)   # drop "(comment: ...)" parts
                pairs = re.findall(r"([A-Za-z_][\w ]*?):\s*([A-Za-z_]+)", text)
                bad = [m for _, m in pairs if m not in CF_METHODS]
                check(pairs and not bad, f"{name}: {v.name} cell_methods {v.cell_methods!r} uses CF methods")
                if v.name.startswith(("arrival_earliest", "arrival_median", "arrival_latest", "arrival_spread",
                                      "eta_max_p", "eta_max_highest")):
                    check(any(n.strip() == "member" for n, _ in pairs),
                          f"{name}: {v.name} cell_methods names the member statistic")
        if "eta_max_p90" in ds.variables:
            check("90th percentile" in ds["eta_max_p90"].long_name and "percentile" in ds["eta_max_p90"].cell_methods,
                  f"{name}: eta_max_p90 says 90th percentile in long_name and cell_methods comment")


def check_xarray(path, xr):
    name = rel(path)
    try:
        ds = xr.open_dataset(path)
    except Exception as e:  # noqa: BLE001 - any failure to open is the finding
        check(False, f"{name}: xarray opens it ({e})")
        return
    with ds:
        check(True, f"{name}: xarray opens it")
        for v in DURATIONS:
            if v not in ds.variables:
                continue
            with Dataset(path) as raw:
                if "units" not in raw[v].ncattrs():
                    continue   # the sweep's member working files carry bare numbers
                secs = np.ma.filled(raw[v][:].astype(float), np.nan)
            got = ds[v].values
            ok = got.dtype.kind == "m"
            if ok:
                dec = got.astype("timedelta64[ns]").astype(float) / 1e9
                dec[np.isnat(got)] = np.nan
                ok = np.array_equal(np.isnan(dec), np.isnan(secs)) and \
                    np.allclose(dec[~np.isnan(dec)], secs[~np.isnan(secs)], rtol=0, atol=1e-6)
            check(ok, f"{name}: xarray decodes {v} as a duration equal to the stored seconds ({got.dtype})")
        if "station_name" in ds.variables:
            names = [str(n) for n in ds["station_name"].values]
            check(ds["station_name"].dtype.kind in "OU" and "Lantern Shelf" in names,
                  f"{name}: xarray reads station names as text ({names})")
            if "Lantern Shelf" not in names:
                return
            series = "eta" if "eta" in ds.variables else "gauge_eta"
            pick = ds.set_coords("station_name").swap_dims(station="station_name").sel(station_name="Lantern Shelf")
            with Dataset(path) as raw:
                k = names.index("Lantern Shelf")
                want = np.ma.filled(raw[series][..., k, :].astype(float), np.nan)
            check(np.array_equal(pick[series].values, want, equal_nan=True),
                  f"{name}: xarray selects gauge 'Lantern Shelf' by name, same {series} as row {k}")


def check_ncks(path):
    r = subprocess.run(["ncks", "-m", path], capture_output=True, text=True)
    check(r.returncode == 0 and "dimensions:" in r.stdout, f"{rel(path)}: ncks -m reads it")


def check_cdo(path):
    r = subprocess.run(["cdo", "-s", "sinfo", path], capture_output=True, text=True)
    base = os.path.basename(path)
    if base == "gauges.nc":
        refused = r.returncode != 0 and "Time must be the first dimension" in r.stderr
        check(refused or r.returncode == 0,
              f"{rel(path)}: cdo sinfo reads it, or refuses with the reason README gives")
        if r.returncode == 0:
            print(f"note {rel(path)}: this CDO reads gauges.nc: update README's CDO note")
    elif base in ("maps.nc", "sweep.nc"):
        check(r.returncode == 0, f"{rel(path)}: cdo sinfo reads it ({r.stderr.strip()[-120:]})")


def main():
    scn = os.path.join(WORK, "basin.scn")
    with open(scn, "w") as f:
        f.write(SCENARIO)
    for args in (("run", scn, "--out", "run", "--quiet"),
                 ("compare", scn, "--layouts", "A,C", "--out", "compare", "--quiet"),
                 ("sweep", scn, "--out", "sweep", "--quiet")):
        r = run(*args)
        check(r.returncode == 0, f"shoreward {args[0]} ran ({r.stderr.strip()[-200:]})")
    files = nc_files(WORK)
    names = {rel(p) for p in files}
    for want in ("run/gauges.nc", "run/maps.nc", "compare/C-x1/gauges.nc", "sweep/sweep.nc"):
        check(want in names, f"{want} written")

    for p in files:
        check_cf(p)
    try:
        import xarray as xr
    except ImportError:
        xr = None
        print("skip xarray checks: python3-xarray is not installed (tools/deps test)")
    if xr is not None:
        for p in files:
            check_xarray(p, xr)
    for tool, fn in (("ncks", check_ncks), ("cdo", check_cdo)):
        if shutil.which(tool) is None:
            print(f"skip {tool} checks: {tool} is not installed (tools/deps test)")
            continue
        for p in files:
            fn(p)

    if FAILURES:
        print(f"{len(FAILURES)} check(s) failed")
        sys.exit(1)
    print("all checks passed")


if __name__ == "__main__":
    main()
