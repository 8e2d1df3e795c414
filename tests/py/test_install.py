#!/usr/bin/python3
"""`cmake --install` gives a working shoreward outside the checkout (issue 17, item 7).

Installs the build folder that holds SHOREWARD_BINARY into WORK_DIR/prefix
(`cmake --install BUILD --prefix WORK_DIR/prefix`) and checks:
  - what is installed where: bin/shoreward and the user-facing tools under names with a shoreward-
    prefix (shoreward-plot, shoreward-plot-sweep, shoreward-plot-stability) and nothing else in bin/;
    the example scenarios in share/shoreward/scenarios; README.md, LICENSE and docs/ in
    share/doc/shoreward;
  - PREFIX/bin/shoreward --version prints the project version (project() in CMakeLists.txt), and
    `PREFIX/bin/shoreward check PREFIX/share/shoreward/scenarios/demo.scn` succeeds;
  - every installed tool's --help works and names the command as invoked (shoreward-plot, ...), and so
    does each checkout copy (tools/plot, ...: plot, ...);
  - no installed tool holds a path of the checkout (the install must not lean on the source tree);
  - a small fictional run drawn with the installed shoreward-plot and with the checkout's tools/plot:
    each writes arrival.png, eta_max.png and gauges.png, real pictures (PNG signature, more than one
    colour), as tests/py/test_pictures.py checks them in depth;
  - a small sweep drawn with the installed shoreward-plot-sweep (it loads shoreward-plot from beside
    itself), also through a symbolic link from another folder, and alone in a folder it stops with a
    message naming what it looked for; no __pycache__ is left in bin/;
  - `shoreward stability --out` drawn with the installed shoreward-plot-stability;
  - a tool's error message starts with the command as invoked (shoreward-plot: ..., plot: ...).
The scenario is small and fictional (an invented coast, no real place). Runs in a few seconds.

usage: test_install.py SHOREWARD_BINARY WORK_DIR
"""
import os
import re
import shutil
import subprocess
import sys

from swtest import FAILURES, check

BIN, WORK = os.path.abspath(sys.argv[1]), os.path.abspath(sys.argv[2])
BUILD = os.path.dirname(BIN)
ROOT = os.path.abspath(os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", ".."))
TOOLS = os.path.join(ROOT, "tools")
PREFIX = os.path.join(WORK, "prefix")
PY = "/usr/bin/python3"
shutil.rmtree(WORK, ignore_errors=True)
os.makedirs(WORK)
INSTALLED_TOOLS = ["shoreward-plot", "shoreward-plot-sweep", "shoreward-plot-stability"]
PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"     # PNG specification (ISO/IEC 15948), section 5.2 [memory]


def sh(cmd, cwd=None):
    """Runs cmd (a list) in WORK (or cwd) and returns the CompletedProcess."""
    return subprocess.run(cmd, capture_output=True, text=True, cwd=cwd or WORK)


def tail(r):
    return (r.stdout + r.stderr).strip()[-400:]


def write(path, text):
    os.makedirs(os.path.dirname(path), exist_ok=True)
    with open(path, "w") as f:
        f.write(text)
    return path


def picture_ok(path):
    """A PNG file with more than one colour in it (a drawn picture, not an empty canvas)."""
    if not os.path.isfile(path):
        return False
    with open(path, "rb") as f:
        if f.read(8) != PNG_SIGNATURE:
            return False
    import matplotlib
    matplotlib.use("Agg")
    import matplotlib.image
    import numpy as np
    img = matplotlib.image.imread(path)
    return img.ndim == 3 and np.unique(img.reshape(-1, img.shape[-1]), axis=0).shape[0] > 1


SCENARIO = """; tiny fictional coast for the install test (no real place)
[run]
title = install test (fictional)
duration = 4 min
arrival_threshold = 0.01 m
[grid]
nx = 40
ny = 30
dx = 1 km
[edges]
all = open
[seabed]
deep = 500 m
coast = east
shoreline = 36 km
shelf_width = 8 km
shelf_depth = 50 m
slope_width = 5 km
[source s]
shape = hump
x = 10 km
y = 15 km
amplitude = 1 m
radius = 3 km
[gauges]
Istelbrac Point = 25 km, 15 km
Brisquelle Head = 30 km, 22 km
"""
SWEEP = """[sweep]
design = one-at-a-time
amplitude_factor = 0.5, 2
"""


def project_version():
    with open(os.path.join(ROOT, "CMakeLists.txt")) as f:
        m = re.search(r"project\(\s*shoreward\s+VERSION\s+([0-9.]+)", f.read())
    return m.group(1) if m else None


def main():
    r = sh(["cmake", "--install", BUILD, "--prefix", PREFIX])
    check(r.returncode == 0, f"cmake --install BUILD --prefix WORK/prefix succeeds ({tail(r)})")
    if r.returncode != 0:
        return
    bindir = os.path.join(PREFIX, "bin")
    share = os.path.join(PREFIX, "share", "shoreward")
    doc = os.path.join(PREFIX, "share", "doc", "shoreward")
    sw = os.path.join(bindir, "shoreward")

    # --- what is where
    found = sorted(os.listdir(bindir))
    check(found == sorted(["shoreward"] + INSTALLED_TOOLS), f"bin/ holds shoreward and the three tools only: {found}")
    for name in found:
        check(os.access(os.path.join(bindir, name), os.X_OK), f"bin/{name} is executable")
    scenarios = sorted(os.listdir(os.path.join(ROOT, "scenarios")))
    got = sorted(os.listdir(os.path.join(share, "scenarios"))) if os.path.isdir(os.path.join(share, "scenarios")) else []
    check(got == scenarios, f"share/shoreward/scenarios holds the checkout's scenarios/ ({len(got)} of {len(scenarios)})")
    for rel in ("README.md", "LICENSE", os.path.join("docs", "scenario.md")):
        check(os.path.isfile(os.path.join(doc, rel)), f"share/doc/shoreward/{rel} is installed")
    check(os.path.isfile(os.path.join(share, "bench_numpy.py")), "share/shoreward/bench_numpy.py is installed")
    for name in INSTALLED_TOOLS:
        with open(os.path.join(bindir, name)) as f:
            text = f.read()
        check(text.startswith("#!/usr/bin/python3\n"), f"{name} runs with /usr/bin/python3")
        check(ROOT not in text and BUILD not in text, f"{name} names no path of the checkout or the build")

    # --- the program
    version = project_version()
    r = sh([sw, "--version"])
    check(r.returncode == 0 and version is not None and version in r.stdout,
          f"bin/shoreward --version prints the project version {version} ({tail(r)})")
    r = sh([sw, "check", os.path.join(share, "scenarios", "demo.scn")])
    check(r.returncode == 0 and "Scenario is valid" in r.stdout,
          f"bin/shoreward check share/shoreward/scenarios/demo.scn succeeds ({tail(r)[-200:]})")

    # --- every tool's --help, installed and in the checkout; the usage names the command as invoked
    for name in INSTALLED_TOOLS:
        r = sh([os.path.join(bindir, name), "--help"])
        check(r.returncode == 0 and f"usage: {name} " in r.stdout, f"{name} --help works and names {name} ({tail(r)[:200]})")
        plain = name[len("shoreward-"):]
        r = sh([PY, os.path.join(TOOLS, plain), "--help"])
        check(r.returncode == 0 and f"usage: {plain} " in r.stdout, f"tools/{plain} --help works and names {plain}")

    # --- a small run drawn by the installed shoreward-plot and by the checkout's tools/plot
    run_dir = os.path.join(WORK, "run")
    scn = write(os.path.join(WORK, "scn", "tiny.scn"), SCENARIO)
    r = sh([sw, "run", scn, "--out", run_dir])
    check(r.returncode == 0, f"bin/shoreward run of the tiny scenario succeeds ({tail(r)})")
    copy = os.path.join(WORK, "run-checkout-plot")
    os.makedirs(copy)
    for f in ("maps.nc", "gauges.nc"):
        if os.path.exists(os.path.join(run_dir, f)):
            shutil.copy(os.path.join(run_dir, f), copy)
    for label, cmd, folder in (("installed shoreward-plot", [os.path.join(bindir, "shoreward-plot"), run_dir], run_dir),
                               ("checkout tools/plot", [PY, os.path.join(TOOLS, "plot"), copy], copy)):
        r = sh(cmd)
        check(r.returncode == 0, f"{label} draws the run ({tail(r)})")
        for pic in ("arrival.png", "eta_max.png", "gauges.png"):
            check(picture_ok(os.path.join(folder, pic)), f"{label} wrote {pic}, a PNG with a picture in it")

    # --- messages name the command as invoked
    missing = os.path.join(WORK, "no-such-folder")
    r = sh([os.path.join(bindir, "shoreward-plot"), missing])
    check(r.returncode == 1 and r.stderr.startswith("shoreward-plot: "), f"shoreward-plot's error starts 'shoreward-plot: ' ({tail(r)})")
    r = sh([PY, os.path.join(TOOLS, "plot"), missing])
    check(r.returncode == 1 and r.stderr.startswith("plot: "), f"tools/plot's error starts 'plot: ' ({tail(r)})")

    # --- a small sweep drawn by the installed shoreward-plot-sweep (which loads shoreward-plot beside it)
    sweep_dir = os.path.join(WORK, "sweep")
    sscn = write(os.path.join(WORK, "scn", "tiny-sweep.scn"), SCENARIO + SWEEP)
    r = sh([sw, "sweep", sscn, "--out", sweep_dir])
    check(r.returncode == 0, f"bin/shoreward sweep of the tiny scenario succeeds ({tail(r)})")
    r = sh([os.path.join(bindir, "shoreward-plot-sweep"), sweep_dir])
    check(r.returncode == 0, f"installed shoreward-plot-sweep draws the sweep ({tail(r)})")
    for pic in ("sweep_spread.png", "sweep_gauges.png"):
        check(picture_ok(os.path.join(sweep_dir, pic)), f"shoreward-plot-sweep wrote {pic}, a PNG with a picture in it")
    links = os.path.join(WORK, "links")
    os.makedirs(links)
    os.symlink(os.path.join(bindir, "shoreward-plot-sweep"), os.path.join(links, "shoreward-plot-sweep"))
    r = sh([os.path.join(links, "shoreward-plot-sweep"), "--help"])
    check(r.returncode == 0, f"shoreward-plot-sweep through a symbolic link in another folder finds shoreward-plot ({tail(r)})")
    lonely = os.path.join(WORK, "lonely")
    os.makedirs(lonely)
    shutil.copy(os.path.join(bindir, "shoreward-plot-sweep"), lonely)
    r = sh([os.path.join(lonely, "shoreward-plot-sweep"), "--help"])
    check(r.returncode != 0 and r.stderr.startswith("shoreward-plot-sweep: ") and "shoreward-plot" in r.stderr
          and "looked for" in r.stderr, f"shoreward-plot-sweep alone in a folder says what it looked for ({tail(r)})")
    check(not os.path.exists(os.path.join(bindir, "__pycache__")), "no __pycache__ is left in bin/")

    # --- shoreward stability --out drawn by the installed shoreward-plot-stability
    stab = os.path.join(WORK, "stab.nc")
    r = sh([sw, "stability", "--layout", "C", "--out", stab])
    check(r.returncode == 0, f"bin/shoreward stability --out succeeds ({tail(r)[-200:]})")
    check("draw them with shoreward-plot-stability " in r.stdout,
          "the installed program names the installed tool, not the checkout's tools/ path")
    r = sh([BIN, "stability", "--layout", "C", "--out", stab])
    check("draw them with tools/plot-stability " in r.stdout, "the build-folder program names tools/plot-stability")
    r = sh([os.path.join(bindir, "shoreward-plot-stability"), stab])
    check(r.returncode == 0 and picture_ok(os.path.join(WORK, "stab.png")),
          f"installed shoreward-plot-stability draws stab.png ({tail(r)})")


if __name__ == "__main__":
    main()
    print(f"\n{len(FAILURES)} failure(s)")
    sys.exit(1 if FAILURES else 0)
