#!/usr/bin/python3
"""End-to-end checks of storm-surge forcing through the command line: a moving storm and a weather file.

usage: test_surge.py SHOREWARD_BINARY WORK_DIR

Every name here is invented (storm Vantelle, the Ondrevi Shelf, Tervelka Quay, Eyepath Buoy): fictional.

Checks (each names its source where there is one):
  - gauges.nc gains air_pressure, wind_east, wind_north with the CF standard names
    air_pressure_at_mean_sea_level (Pa), eastward_wind, northward_wind (m s-1) (CF standard name table
    [memory]); the pressure at a gauge stays between the central and the ambient pressure (Holland 1980:
    p = pc + dp exp(-(rmax/r)^B) lies in [pc, pc + dp]) and at the gauge on the eye's path dips below
    ambient - dp/2;
  - maps.nc gains wind_speed_max (wind_speed, m s-1, "time: maximum") and air_pressure_min (Pa,
    "time: minimum"); the highest wind is at most reduction * Vmax + translation_fraction * |vt|, with
    Holland's cyclostrophic Vmax = sqrt(B dp / (rho_a e)) (Holland 1980) and w(r) <= 1 (docs/storm.md)
    [derived: triangle inequality], and at least 90 % of reduction * (Vmax - rmax |f| / 2), the gradient
    wind's lower bound with f (docs/storm.md) [derived; 10 % for the grid sampling the ring];
  - the track variables: storm_time every [storm] update from 0 to the end of the run, storm_x and
    storm_y linear in time between the track's points, moved by [storm] shift_across to the left of the
    heading, storm_central_pressure = ambient - pressure_drop_factor * dp [derived];
  - the global attributes `forcing` (naming the track) and `caution` (the surge caution: "no flooding of
    land"), the same in both files and in the JSON summary;
  - the storm raises the water on the coast it drives onshore: the coastal gauge's highest elevation is
    above 0.1 m; under the eye the peak is within a factor 2 of the static inverse barometer
    dp / (rho_w g) (common practice: about 1 cm per hPa);
  - the plan (`check`, `run`) prints the Forcing line, the summary the highest wind and lowest pressure;
  - a storm whose centre never enters the domain gets the plan's warning with its closest approach
    (200 km, from the geometry of the track [derived]);
  - a weather file of uniform wind and pressure gives exactly those maps (bilinear interpolation of equal
    values, docs/weather-file.md) and no track;
  - a `level` edge following a level series (a text file; docs/storm.md): a channel closed at its far end
    and driven at its mouth by a tide A sin(w t), slowly ramped up, holds the standing wave whose closed
    end rises to A / cos(k L), k = w / sqrt(g h) [derived from the linear equations with no flow at the
    closed end]; the mouth cell follows the series;
  - bad inputs fail with exit status 1, one line naming the file and line (or the file and the span),
    and leave no output file: a bad track line, a track shorter than the run, times not increasing, a
    negative rmax, a weather pressure without units, a weather slab with a missing value (found during
    the run), [storm] and [weather] together.
"""
import json
import math
import os
import re
import shutil
import sys

import numpy as np
from netCDF4 import Dataset

from swtest import FAILURES, check, run

BIN = os.path.abspath(sys.argv[1])
WORK = os.path.abspath(sys.argv[2])

AMBIENT_PA = 101300.0      # [storm] ambient_pressure default, 1013 hPa (docs/storm.md)
CENTRAL_PA = 97300.0       # the track's central pressure, 973 hPa
DP_PA = AMBIENT_PA - CENTRAL_PA
RMAX_M = 30e3
HOLLAND_B = 1.3
RHO_AIR = 1.15             # [wind] air_density default (common practice)
RHO_WATER = 1025.0         # [wind] water_density default (common practice)
REDUCTION = 0.8            # [storm] reduction default (common practice)
TRANSLATION = 0.5          # [storm] translation_fraction default (common practice)
G = 9.81
OMEGA = 7.2921159e-5       # Earth's rotation rate, s-1 [memory; docs/references.md]
UPDATE_S = 600.0           # [storm] update default

SCENARIO = """# Fictional: storm Vantelle crosses the Ondrevi Shelf (invented names, not a real place or storm).
[run]
title = Fictional storm Vantelle over the Ondrevi Shelf
duration = 6 h
rotation = f-plane
latitude = 20 deg
friction = quadratic
drag = 2.5e-3
{run_extra}
[grid]
nx = 60
ny = 40
dx = 5 km

[seabed]
deep = 60 m
coast = north
shoreline = 180 km
shelf_width = 60 km
shelf_depth = 20 m

{forcing}
[gauges]
Tervelka Quay = 170 km, 172 km
Eyepath Buoy = 140 km, 100 km
"""

# The storm heads due north along x = 140 km at 350 km / 8 h, onto the coast at y = 180 km.
TRACK = """# Fictional storm Vantelle: heads north onto the Ondrevi coast.
time[h]   x[km]   y[km]   central_pressure[hPa]   rmax[km]   B
0         {x}     -100    973                     30         1.3
8         {x}     250     973                     30         1.3
"""
TRACK_X_KM = 140.0
TRACK_Y0_KM, TRACK_Y1_KM, TRACK_T1_S = -100.0, 250.0, 8 * 3600.0


def write(name, text):
    path = os.path.join(WORK, name)
    with open(path, "w") as f:
        f.write(text)
    return path


def scenario(name, forcing, run_extra=""):
    return write(name, SCENARIO.format(forcing=forcing, run_extra=run_extra))


def storm_section(track="orla-track.txt", extra=""):
    return f"[storm]\ntrack = {track}\n{extra}"


def atts(path):
    with Dataset(path) as ds:
        return {a: ds.getncattr(a) for a in ds.ncattrs()}


def out_dir(name):
    path = os.path.join(WORK, name)
    shutil.rmtree(path, ignore_errors=True)
    return path


def no_files_left(path):
    return not os.path.exists(path) or not os.listdir(path)


# ---- the storm ---------------------------------------------------------------------------------------

def check_storm_run():
    write("orla-track.txt", TRACK.format(x=TRACK_X_KM))
    scn = scenario("orla.scn", storm_section())
    out = out_dir("orla")
    p = run("run", scn, "--out", out, "--quiet", "--json")
    if p.returncode != 0:
        check(False, f"the storm run succeeds: exit {p.returncode}: {p.stderr.strip()}")
        return None
    res = json.loads(p.stdout)
    caution = res["caution"]
    check("no flooding of land" in caution, f"the JSON summary carries the surge caution: {caution[:70]!r}...")
    check(all(c == caution for c in re.findall(r"(?m)^CAUTION:.*$", p.stderr)),
          "the caution --json prints on stderr is the surge caution")

    # gauges.nc: the air at the gauges
    gpath = os.path.join(out, "gauges.nc")
    with Dataset(gpath) as ds:
        ds["station_name"].set_auto_chartostring(False)   # raw chars although it carries _Encoding
        names = ["".join(c.decode() for c in row if c) for row in ds["station_name"][:].filled(b"")]
        want = {"air_pressure": ("air_pressure_at_mean_sea_level", "Pa"),
                "wind_east": ("eastward_wind", "m s-1"), "wind_north": ("northward_wind", "m s-1")}
        for var, (std, units) in want.items():
            v = ds.variables.get(var)
            check(v is not None and v.dimensions == ("station", "time") and v.standard_name == std
                  and v.units == units and "linear in time between forcing slabs" in v.long_name
                  and v.coordinates == "time station_y station_x station_name",
                  f"gauges.nc has {var}(station, time) with standard_name {std}, units {units}")
        p_pa = np.ma.filled(ds["air_pressure"][:], np.nan)
        speed = np.hypot(np.ma.filled(ds["wind_east"][:], np.nan), np.ma.filled(ds["wind_north"][:], np.nan))
    eye = names.index("Eyepath Buoy")
    check(np.isfinite(p_pa).all() and p_pa.min() >= CENTRAL_PA - 1 and p_pa.max() <= AMBIENT_PA + 1,
          f"gauge pressures lie between the central and the ambient pressure ({p_pa.min():.1f} .. "
          f"{p_pa.max():.1f} Pa; Holland 1980)")
    check(p_pa[eye].min() < AMBIENT_PA - DP_PA / 2,
          f"under the eye's path the pressure dips below ambient - dp/2: {p_pa[eye].min():.1f} Pa < "
          f"{AMBIENT_PA - DP_PA / 2:.0f} Pa")
    check(np.isfinite(speed).all() and speed.max() > 0, f"gauge winds are finite, up to {speed.max():.2f} m/s")

    # maps.nc: the highest wind, the lowest pressure, the track
    mpath = os.path.join(out, "maps.nc")
    with Dataset(mpath) as ds:
        w = ds.variables.get("wind_speed_max")
        pm = ds.variables.get("air_pressure_min")
        check(w is not None and w.standard_name == "wind_speed" and w.units == "m s-1"
              and w.cell_methods == "time: maximum" and w.long_name == "highest 10 m wind speed the water felt",
              "maps.nc has wind_speed_max (wind_speed, m s-1, time: maximum)")
        check(pm is not None and pm.standard_name == "air_pressure_at_mean_sea_level" and pm.units == "Pa"
              and pm.cell_methods == "time: minimum", "maps.nc has air_pressure_min (Pa, time: minimum)")
        wet = ds["wet"][:] == 1
        wmax = np.ma.filled(w[:], np.nan)
        pmin = np.ma.filled(pm[:], np.nan)
        check(np.isfinite(wmax[wet]).all() and np.isnan(wmax[~wet]).all() and np.isnan(pmin[~wet]).all(),
              "the wind and pressure maps have values on water and the fill on land")
        track = {k: ds[k][:] for k in ("storm_time", "storm_x", "storm_y", "storm_central_pressure")}
        check(ds.dimensions["track"].size == track["storm_time"].size,
              f"maps.nc has a track dimension of {ds.dimensions['track'].size} points")
        check(ds["storm_time"].standard_name == "time" and ds["storm_time"].units.startswith("seconds since ")
              and ds["storm_x"].units == "m" and ds["storm_central_pressure"].units == "Pa",
              "the track variables carry their units")
        arrival_ln = ds["arrival_time"].long_name
    check("for a surge: the first time the water departs from mean level by the threshold" in arrival_ln,
          "arrival_time's long_name says what arrival means for a surge")

    f = 2 * OMEGA * math.sin(math.radians(20))
    vmax = math.sqrt(HOLLAND_B * DP_PA / (RHO_AIR * math.e))          # Holland 1980
    vt = (TRACK_Y1_KM - TRACK_Y0_KM) * 1e3 / TRACK_T1_S
    upper = REDUCTION * vmax + TRANSLATION * vt                        # [derived]
    lower = 0.9 * REDUCTION * (vmax - RMAX_M * f / 2)                  # [derived]
    top = float(np.nanmax(wmax))
    check(lower <= top <= upper * (1 + 1e-6),
          f"highest wind {top:.2f} m/s lies in [{lower:.2f}, {upper:.2f}] m/s (Holland 1980 Vmax {vmax:.2f} m/s)")
    check(float(np.nanmin(pmin)) >= CENTRAL_PA - 1 and float(np.nanmin(pmin)) < CENTRAL_PA + 0.01 * DP_PA,
          f"lowest pressure on the map {np.nanmin(pmin):.1f} Pa is the central pressure {CENTRAL_PA:.0f} Pa "
          "(the eye crosses the water)")
    check(res["run"]["wind_max_ms"] == top and res["run"]["air_pressure_min_pa"] == float(np.nanmin(pmin)),
          "the JSON summary's highest wind and lowest pressure are the maps'")

    end = res["run"]["end_time_s"]
    t = track["storm_time"]
    n_expected = math.ceil(end / UPDATE_S - 1e-9) + 1
    check(t.size == n_expected and t[0] == 0 and abs(t[-1] - end) < 1e-6
          and np.allclose(t[:-1], UPDATE_S * np.arange(t.size - 1)),
          f"storm_time: every {UPDATE_S:g} s from 0 to the run's end ({t.size} points)")
    y_want = (TRACK_Y0_KM + (TRACK_Y1_KM - TRACK_Y0_KM) * t / TRACK_T1_S) * 1e3
    check(np.allclose(track["storm_x"], TRACK_X_KM * 1e3, rtol=0, atol=1e-6)
          and np.allclose(track["storm_y"], y_want, rtol=0, atol=1e-6)
          and np.allclose(track["storm_central_pressure"], CENTRAL_PA, rtol=0, atol=1e-6),
          "storm_x, storm_y follow the track linearly in time; storm_central_pressure is the track's")

    ga, ma = atts(gpath), atts(mpath)
    check("orla-track.txt" in ga.get("forcing", "") and ga.get("forcing") == ma.get("forcing")
          and ma.get("forcing") == res["run"]["forcing"],
          f"the global attribute forcing names the track: {ma.get('forcing')!r}")
    check(ga.get("caution") == caution and ma.get("caution") == caution,
          "both files carry the surge caution as their caution attribute")

    # the water: raised on the coast the storm drives onshore; the inverse barometer under the eye
    peaks = {g["name"]: g["peak_m"] for g in res["gauges"]}
    check(peaks["Tervelka Quay"] > 0.1, f"the storm raises the water at the coastal gauge: peak {peaks['Tervelka Quay']:.3f} m")
    ib = DP_PA / (RHO_WATER * G)
    check(0.5 * ib < peaks["Eyepath Buoy"] < 2 * ib,
          f"under the eye the peak {peaks['Eyepath Buoy']:.3f} m is within a factor 2 of the inverse barometer "
          f"{ib:.3f} m")

    # the text summary and the plan
    p = run("run", scn, "--out", out_dir("orla-text"))
    air = re.search(r"(?m)^Air over the water: highest 10 m wind ([0-9.]+) m/s, lowest air pressure ([0-9.]+) hPa$",
                    p.stdout)
    check(p.returncode == 0 and air is not None and abs(float(air.group(1)) - top) <= 0.05
          and abs(float(air.group(2)) - np.nanmin(pmin) / 100) <= 0.05,
          f"the run summary gives the highest wind and lowest pressure: {air.group(0) if air else p.stdout[-300:]!r}")
    check(re.search(r"(?m)^Forcing +storm orla-track\.txt \(Holland 1980\), slabs every 600 s; drag large-pond$",
                    p.stdout) is not None, "the run's plan prints the Forcing line")
    cautions = re.findall(r"(?m)^CAUTION:.*$", p.stdout)
    check(len(cautions) >= 1 and all(c == caution for c in cautions),
          f"every caution `run` prints is the surge caution ({len(cautions)} printed)")
    p = run("check", scn)
    check(p.returncode == 0 and re.search(r"(?m)^Forcing +storm orla-track\.txt \(Holland 1980\), slabs every "
                                          r"600 s; drag large-pond$", p.stdout) is not None
          and "warning: [storm]" not in p.stdout, "check prints the Forcing line and no storm warning")
    check(re.search(r"(?m)^Memory .*the forcing takes [0-9.]+ MB", p.stdout) is not None,
          "check's memory line counts the forcing")
    p = run("check", scn, "--json")
    plan = json.loads(p.stdout) if p.returncode == 0 else {}
    fo = plan.get("forcing") or {}
    check(fo.get("storm", {}).get("track") == "orla-track.txt" and fo.get("warnings") == []
          and fo.get("storm", {}).get("outside_domain") is False and fo.get("memory_bytes", 0) > 0,
          "check --json describes the forcing")
    return res


def check_storm_changes():
    """[storm] shift_across and pressure_drop_factor: named in the plan, applied to the track written."""
    scn = scenario("orla-shift.scn", storm_section(extra="shift_across = 40 km\npressure_drop_factor = 1.5\n"))
    p = run("check", scn)
    check(p.returncode == 0 and re.search(r"(?m)^Forcing +storm orla-track\.txt \(Holland 1980\), slabs every 600 s, "
                                          r"shifted 40 km across, pressure drop x 1\.5; drag large-pond$", p.stdout),
          "the plan names the shift and the factor")
    out = out_dir("orla-shift")
    p = run("run", scn, "--out", out, "--quiet", "--json")
    if p.returncode != 0:
        check(False, f"the shifted run succeeds: {p.stderr.strip()}")
        return
    with Dataset(os.path.join(out, "maps.nc")) as ds:
        x, pc = ds["storm_x"][:], ds["storm_central_pressure"][:]
    # heading north: its left is west, so 40 km across moves the centre to x = 100 km [derived]
    check(np.allclose(x, (TRACK_X_KM - 40) * 1e3, rtol=0, atol=1e-6), f"shift_across moves the track west: x = {x[0]:.0f} m")
    check(np.allclose(pc, AMBIENT_PA - 1.5 * DP_PA, rtol=0, atol=1e-6),
          f"pressure_drop_factor deepens the storm: central pressure {pc[0]:.0f} Pa")


def check_outside_warning():
    """A storm passing 200 km west of the domain: the plan warns (check and run)."""
    write("orla-far.txt", TRACK.format(x=-200))
    scn = scenario("orla-far.scn", storm_section(track="orla-far.txt"))
    # x = -200 km, 200 km west of the domain's west edge; y enters the domain's span (y >= 0) at
    # t = 8 h * 100 / 350 = 2.29 h, the first time of the closest approach [derived]
    want = ("warning: [storm] the track stays outside the domain for the whole run (closest approach 200 km at "
            "2.3 h): the water will feel only the storm's outer winds")
    p = run("check", scn)
    check(p.returncode == 0 and want in p.stdout, f"check warns about a storm outside the domain: {want[:60]!r}...")
    p = run("check", scn, "--json")
    fo = json.loads(p.stdout)["forcing"] if p.returncode == 0 else {}
    st = fo.get("storm", {})
    check(st.get("outside_domain") is True and abs(st.get("closest_approach_m", 0) - 200e3) < 1e-3
          and len(fo.get("warnings", [])) == 1, "check --json: outside_domain, closest_approach_m = 200 km, one warning")
    p = run("run", scn, "--out", out_dir("orla-far"))
    check(p.returncode == 0 and want in p.stdout, "the run's plan carries the warning too")


# ---- the weather file --------------------------------------------------------------------------------

def weather_file(name, units=True, hole=None):
    """A fictional weather file: uniform 10 m/s eastward wind and 1000 hPa, hourly 0 .. 7 h, on a grid
    a little wider than the model's. `hole` = (k, j, i): that value is left missing (the fill)."""
    path = os.path.join(WORK, name)
    with Dataset(path, "w") as ds:
        ds.createDimension("time", None)
        ds.createDimension("y", 9)
        ds.createDimension("x", 11)
        t = ds.createVariable("time", "f8", ("time",))
        t.units = "hours since 2000-01-01 00:00:00"
        y = ds.createVariable("y", "f8", ("y",))
        y.units = "km"
        x = ds.createVariable("x", "f8", ("x",))
        x.units = "km"
        t[:] = np.arange(8.0)
        y[:] = np.linspace(-10, 210, 9)
        x[:] = np.linspace(-10, 310, 11)
        spec = (("wind_e", "eastward_wind", "m s-1", 10.0), ("wind_n", "northward_wind", "m s-1", 0.0),
                ("pmsl", "air_pressure_at_mean_sea_level", "hPa", 1000.0))
        for var, std, unit, value in spec:
            v = ds.createVariable(var, "f4", ("time", "y", "x"), fill_value=np.float32(-9999.0))
            v.standard_name = std
            if units or var != "pmsl":
                v.units = unit
            data = np.ma.masked_array(np.full((8, 9, 11), value, dtype=np.float32), mask=False)
            if hole and var == "pmsl":
                data[hole] = np.ma.masked
            v[:] = data
    return name


def check_weather():
    scn = scenario("calder-weather.scn", f"[weather]\nfile = {weather_file('calder-weather.nc')}\n")
    out = out_dir("weather")
    p = run("run", scn, "--out", out, "--quiet", "--json")
    if p.returncode != 0:
        check(False, f"the weather run succeeds: {p.stderr.strip()}")
        return
    with Dataset(os.path.join(out, "maps.nc")) as ds:
        wet = ds["wet"][:] == 1
        w = np.ma.filled(ds["wind_speed_max"][:], np.nan)
        pm = np.ma.filled(ds["air_pressure_min"][:], np.nan)
        has_track = "track" in ds.dimensions or "storm_x" in ds.variables
        forcing = ds.getncattr("forcing")
    check(np.all(w[wet] == 10.0) and np.all(pm[wet] == 100000.0),
          "uniform weather gives wind_speed_max = 10 m/s and air_pressure_min = 100000 Pa on every water cell")
    check(not has_track, "a weather run writes no track")
    check(forcing.startswith("weather calder-weather.nc"), f"the forcing attribute names the file: {forcing!r}")
    with Dataset(os.path.join(out, "gauges.nc")) as ds:
        we = np.ma.filled(ds["wind_east"][:], np.nan)
    check(np.all(we == 10.0), "the gauges see the file's wind")
    p = run("check", scn)
    check(p.returncode == 0 and re.search(r"(?m)^Forcing +weather calder-weather\.nc; drag large-pond$", p.stdout),
          "check prints the weather file on the Forcing line")


# ---- refusals ----------------------------------------------------------------------------------------

def check_refusals(end_s):
    header = "time[h] x[km] y[km] central_pressure[hPa] rmax[km] B\n"
    tracks = {
        "bad-line.txt": header + "0 140 -100 973 30 1.3\n4 140 abc 973 30 1.3\n8 140 250 973 30 1.3\n",
        "short.txt": header + "0 140 -100 973 30 1.3\n4 140 75 973 30 1.3\n",
        "backwards.txt": header + "0 140 -100 973 30 1.3\n5 140 75 973 30 1.3\n4 140 50 973 30 1.3\n"
                                  "8 140 250 973 30 1.3\n",
        "negative-rmax.txt": header + "0 140 -100 973 30 1.3\n8 140 250 973 -5 1.3\n",
    }
    for name, text in tracks.items():
        write(name, text)
    need = math.ceil(end_s / UPDATE_S) * UPDATE_S   # the last slab the run reads (docs/storm.md) [derived]
    cases = [
        ("bad track line", storm_section(track="bad-line.txt"), r"bad-line\.txt:3: column 3 'abc' is not a number"),
        ("track shorter than the run", storm_section(track="short.txt"),
         rf"short\.txt: the track covers 0 \.\. 14400 s but the run needs 0 \.\. {need:.0f} s"),
        ("times not increasing", storm_section(track="backwards.txt"),
         r"backwards\.txt:4: time 4 h is not after the previous point's 5 h \(line 3\)"),
        ("negative rmax", storm_section(track="negative-rmax.txt"),
         r"negative-rmax\.txt:3: rmax -5 km is outside the accepted range"),
        ("pressure without units", f"[weather]\nfile = {weather_file('no-units.nc', units=False)}\n",
         r"no-units\.nc: .*pmsl.*unit"),
        ("a missing value in a slab", f"[weather]\nfile = {weather_file('holey.nc', hole=(3, 4, 5))}\n",
         r"holey\.nc: .*pmsl\[3\]\[4\]\[5\]"),
        ("[storm] and [weather] together",
         storm_section() + f"\n[weather]\nfile = {weather_file('calder-weather.nc')}\n",
         r"bad\.scn:\d+: \[storm\] \(line \d+\) and \[weather\] \(line \d+\) are both given"),
    ]
    for what, forcing, pattern in cases:
        scn = scenario("bad.scn", forcing, run_extra="snapshot_interval = 30 min\n")
        out = out_dir("bad-out")
        p = run("run", scn, "--out", out, "--quiet")
        msg = p.stderr.strip()
        check(p.returncode == 1 and re.search(pattern, msg) is not None and "\n" not in msg,
              f"{what}: exit 1 and one line: {msg!r}")
        check(no_files_left(out), f"{what}: no output file left ({sorted(os.listdir(out)) if os.path.exists(out) else []})")


# ---- a level series on a level edge -----------------------------------------------------------------

LEVEL_SCENARIO = """# Fictional: the Narrow Inlet, a channel closed at its east end, driven by an invented tide.
[run]
title = Narrow Inlet tide (fictional)
duration = 6 d
gauge_interval = 10 min
[grid]
nx = 60
ny = 3
dx = 1 km
[seabed]
deep = 10 m
[edges]
west = level
level_series = inlet-tide.txt
[gauges]
Inlet Head = 59.5 km, 1.5 km
Inlet Mouth = 0.5 km, 1.5 km
"""


def check_level_series():
    amp, period_h, ramp_h = 0.4, 12.42, 48.0
    w = 2 * math.pi / (period_h * 3600)
    lines = ["# an invented tide for the fictional Narrow Inlet, ramped up over two days", "time[h] elevation[m]"]
    for q in range(0, 6 * 24 * 4 + 9):   # every 15 min, a little past the 6 days
        t_h = q / 4
        lines.append(f"{t_h:.2f} {amp * (1 - math.exp(-t_h / ramp_h)) * math.sin(w * t_h * 3600):.6f}")
    write("inlet-tide.txt", "\n".join(lines) + "\n")
    path = write("inlet.scn", LEVEL_SCENARIO)
    out = out_dir("inlet-out")
    p = run("run", path, "--out", out, "--quiet")
    check(p.returncode == 0, f"level series run: {p.stderr.strip()[-300:]}")
    if p.returncode != 0:
        return
    with Dataset(os.path.join(out, "gauges.nc")) as ds:
        t = np.asarray(ds["time"][:], dtype=float)
        eta = np.asarray(ds["eta"][:], dtype=float)
        mcaution = ds.getncattr("caution")
    last = t >= t[-1] - 2 * period_h * 3600   # the last two tidal periods, long after most of the ramp
    level = amp * (1 - np.exp(-t[last] / 3600 / ramp_h)) * np.sin(w * t[last])   # the series at the samples
    c = math.sqrt(9.81 * 10)
    L = 60e3                                  # the node line (the edge) to the closed end
    kl = w / c * L
    # the response as a multiple of the mouth's level, by least squares over the window (the slow ramp
    # makes the amplitude drift; the ratio does not)
    for name, series, x in (("closed end", eta[0, last], 59.5e3), ("mouth cell", eta[1, last], 0.5e3)):
        ratio = float(np.dot(series, level) / np.dot(level, level))
        want = math.cos(kl * (1 - x / L)) / math.cos(kl)
        rms = float(np.sqrt(np.mean((series - ratio * level) ** 2)))
        check(abs(ratio / want - 1) < 0.01,
              f"level series: the {name} follows {ratio:.4f} x the mouth's level, cos(k (L - x)) / cos(kL) = "
              f"{want:.4f} (kL = {kl:.3f}) [derived]; misfit rms {rms:.4f} m")
    check("no flooding of land" in mcaution, "level series: the surge caution in gauges.nc")


def main():
    os.makedirs(WORK, exist_ok=True)
    res = check_storm_run()
    check_storm_changes()
    check_outside_warning()
    check_weather()
    check_level_series()
    check_refusals(res["run"]["end_time_s"] if res else 21601.41)

    if FAILURES:
        print(f"\n{len(FAILURES)} check(s) failed")
        return 1
    print("\nall surge checks passed")
    return 0


if __name__ == "__main__":
    sys.exit(main())
