#!/usr/bin/python3
"""The repository is self-contained: no file names a path of the machine it was written on or a file
outside the repository.

usage: test_self_contained.py SHOREWARD_BINARY WORK_DIR   (the arguments are unused: every py test takes them)

Scans every file git tracks (or, outside a git checkout, every file below the repository) that reads as
text, for the patterns below, and fails naming file and line. A published value a test uses is restated
in docs/references.md with its source, never cited from a file beside the checkout.
"""
import os
import re
import subprocess
import sys

ROOT = os.path.abspath(os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", ".."))
# The checkout's own top folder, unless it is one every system has (a clone under /tmp, /home, ...): a file
# naming it names this machine. Derived at run time, so this file names no machine's path itself.
SYSTEM_DIRS = {"tmp", "usr", "etc", "dev", "proc", "home", "opt", "var", "bin", "lib", "srv", "mnt", "root"}
TOP = ROOT.strip(os.sep).split(os.sep)[0]
PATTERNS = [
    (re.compile(r"\.\./shared\b"), "a folder beside the checkout"),
    (re.compile(r"REFERENCES\.md"), "a references file outside the repository (ours is docs/references.md)"),
]
if TOP and TOP not in SYSTEM_DIRS:
    PATTERNS.append((re.compile(re.escape(os.sep + TOP + os.sep)), "an absolute path of this machine"))
THIS = os.path.relpath(os.path.abspath(__file__), ROOT)


def files():
    try:
        out = subprocess.run(["git", "-C", ROOT, "ls-files"], capture_output=True, text=True, check=True).stdout
        return [l for l in out.splitlines() if l]
    except (OSError, subprocess.CalledProcessError):
        found = []
        for d, dirs, names in os.walk(ROOT):
            dirs[:] = [x for x in dirs if not x.startswith((".git", "build"))]
            found += [os.path.relpath(os.path.join(d, n), ROOT) for n in names]
        return found


bad = []
scanned = 0
for rel in files():
    if rel == THIS:
        continue
    try:
        with open(os.path.join(ROOT, rel), encoding="utf-8") as f:
            lines = f.read().splitlines()
    except (UnicodeDecodeError, OSError):
        continue   # binary files (none are tracked today) are not text to cite from
    scanned += 1
    for n, line in enumerate(lines, 1):
        for pat, why in PATTERNS:
            if pat.search(line):
                bad.append(f"{rel}:{n}: {why}: {line.strip()[:100]}")
print(f"scanned {scanned} files")
for b in bad:
    print("FAIL " + b)
print("ok   no path outside the repository" if not bad else f"{len(bad)} failed")
sys.exit(1 if bad else 0)
