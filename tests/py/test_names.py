#!/usr/bin/python3
"""Every place name in the repository is invented (issue "Care and conventions", item 1).

Checks, against the lists kept in docs/names.md:
1. every capitalised word of a gauge name, a [bay|island|shoal NAME] header or a scenario title, in the
   repository's scenarios and in the scenario texts inside tests and docs, is an invented name or a
   common word listed there;
2. no tracked file (nor a new file not yet ignored) holds a retired name: names of real places or
   features, or too close to them, that earlier versions used. They are listed only here, so that this
   file is the one place that still spells them.

usage: test_names.py SHOREWARD_BINARY SCRATCH_DIR   (both unused: the test reads the source tree)
"""
import os
import re
import subprocess
import sys

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(os.path.dirname(HERE))
FAILED = []

# Retired: real places or features (or too close to one) that earlier versions named. Replaced by the
# invented names of docs/names.md.
RETIRED = ["Merrow", "Calder", "Skerrin", "Tallow Bank", "Holme Point", "North Strand", "Outer Deep",
           "Brannagh", "Corran", "Halvard", "Sennet", "Tolmey", "Varlen", "Oskerry", "Osk Bank", "Hallin",
           "Tarn Rock", "Brannock", "Quillan", "Saltmere", "Gannet Holm", "Holm", "Brede", "Gull Rock",
           "Long Bay", "Alder Point", "Brisk Head", "Port Harrow", "North Pier", "Old Weir", "Kerrin",
           "Ferrow", "Tern Quay", "Tasman", "Brindle", "Orla", "Gull", "Pell Rock", "Tern Cove",
           "Middle Ground", "Kestrel Post", "Gull Patch", "Tern Holm"]


def check(cond, what):
    print(("ok   " if cond else "FAIL ") + what)
    if not cond:
        FAILED.append(what)


def lists():
    """(invented, common) word sets from docs/names.md."""
    text = open(os.path.join(ROOT, "docs", "names.md"), encoding="utf-8").read()
    invented = set(re.findall(r"^\| ([^\W\d_]+) \|", text, re.M)) - {"Name"}
    common_part = text.split("## Common words", 1)[1]
    common = {w for w in re.findall(r"[^\W\d_]+", common_part.split("\n\n", 2)[2])}
    return invented, common


def tree_files():
    """Tracked files plus new ones not ignored, relative to ROOT; a walk when git is not there."""
    try:
        out = subprocess.run(["git", "-C", ROOT, "ls-files", "--cached", "--others", "--exclude-standard"],
                             capture_output=True, text=True, check=True).stdout.split("\n")
        return [f for f in out if f and os.path.isfile(os.path.join(ROOT, f))]
    except (OSError, subprocess.CalledProcessError):
        files = []
        for d, dirs, names in os.walk(ROOT):
            dirs[:] = [x for x in dirs if not x.startswith((".git", "build"))]
            files += [os.path.relpath(os.path.join(d, n), ROOT) for n in names]
        return files


def read(rel):
    try:
        return open(os.path.join(ROOT, rel), encoding="utf-8").read()
    except (UnicodeDecodeError, OSError):
        return None


GAUGE = re.compile(r"(?:^|\\n|\")[ \t]*([A-Z][A-Za-z' -]*?) = -?[0-9.]+ ?(?:km|m|deg)?, -?[0-9.]+", re.M)
FEATURE = re.compile(r"\[(?:bay|island|shoal) ([^\]\\%\"]+)\]")
TITLE = re.compile(r"^title = (.*)$", re.M)


def names_in(rel, text):
    """[(kind, name)] of the place names in a file's scenario texts."""
    found = [("gauge", m.group(1).strip()) for m in GAUGE.finditer(text)]
    found += [("feature", m.group(1).strip()) for m in FEATURE.finditer(text)]
    if rel.endswith(".scn"):
        found += [("title", m.group(1).strip()) for m in TITLE.finditer(text)]
    return found


def main():
    invented, common = lists()
    check(len(invented) >= 30 and "Vashkel" in invented, f"docs/names.md lists {len(invented)} invented names")
    check("Bay" in common and "Point" in common, f"docs/names.md lists {len(common)} common words")
    files = tree_files()
    check(len(files) > 100, f"{len(files)} files in the tree to read")

    # 1. every place word is invented or common
    scanned, words_seen, unknown = 0, 0, {}
    for rel in files:
        if not (rel.endswith(".scn") or rel.startswith(("tests/", "docs/")) or rel == "README.md"):
            continue
        if not rel.endswith((".scn", ".c", ".py", ".md", ".txt")) or rel.endswith("test_names.py"):
            continue
        text = read(rel)
        if text is None:
            continue
        scanned += 1
        for kind, name in names_in(rel, text):
            for w in re.findall(r"[^\W\d_][^\W\d_']*", name):   # letters of any script
                if not w[0].isupper() or w.isupper():      # lower-case words, placeholders (NAME, A, C)
                    continue
                words_seen += 1
                if w not in invented and w not in common:
                    unknown.setdefault(w, []).append(f"{rel}: {kind} '{name}'")
    check(words_seen > 100, f"{words_seen} capitalised place words read in {scanned} files")
    for w, where in sorted(unknown.items()):
        check(False, f"'{w}' is neither invented nor common in docs/names.md: {where[0]}"
                     + (f" (and {len(where) - 1} more)" if len(where) > 1 else ""))
    if not unknown:
        check(True, "every place word is in docs/names.md")

    # 2. no retired name anywhere
    # a name may follow an escape such as \n inside a string, where \b sees no word boundary
    pattern = re.compile(r"(?:(?<=\\n)|(?<=\\t)|(?<![A-Za-z0-9_]))(" + "|".join(re.escape(n) for n in RETIRED)
                         + r")(?![A-Za-z0-9_])")
    hits = []
    for rel in files:
        if rel.endswith("test_names.py"):
            continue
        text = read(rel)
        if text is None:
            continue
        for k, line in enumerate(text.split("\n"), 1):
            m = pattern.search(line)
            if m:
                hits.append(f"{rel}:{k}: '{m.group(1)}'")
    for h in hits[:30]:
        check(False, f"retired name still present: {h}")
    check(not hits, f"no retired name in {len(files)} files ({len(hits)} found)")

    # the test must be able to fail: a retired name planted in a text is found
    check(pattern.search("[island Gull Rock]") is not None and pattern.search(r'"[gauges]\nOld Weir = 1, 2"')
          is not None and pattern.search("Holmes") is None, "a planted retired name is detected (also after \\n)")
    check(any(w not in invented | common for _, n in names_in("x.scn", "title = Zqxv Bay\n")
              for w in n.split()), "a planted unknown name is detected")

    print(f"\n{len(FAILED)} check(s) failed" if FAILED else "\nall checks passed")
    return 1 if FAILED else 0


if __name__ == "__main__":
    sys.exit(main())
