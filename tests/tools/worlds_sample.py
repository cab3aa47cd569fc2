#!/usr/bin/env python3
"""worlds_sample.py - a small seeded sample of the world families through
`lacuna sim` in batch, both models: what CI runs of the suite.

Generates --count worlds per family (scripts/worlds.py, --seed), runs
`lacuna sim DIR --model both --jobs N` and checks its table: one row per
family and model plus one "all" row per model, each row's counts adding up
(runs = done + blocked + other, --count runs per family and model), the
footer's totals, and 0 collisions everywhere. The share of runs done (over
all rows) must be at least --min-done; the default 0 asserts nothing about
arriving: today's planner does not arrive in many of these families, and
the bar is raised with the guidance (`--min-done 0.95`).

usage: worlds_sample.py [--count N] [--seed S] [--jobs N] [--min-done F]
                        [--keep DIR]
Needs LACUNA_EXE and LACUNA_SOURCE_ROOT (meson sets both). Exit 77 (skipped)
when the generator is missing.
"""
import argparse
import os
import re
import subprocess
import sys
import tempfile

COLUMNS = ["family", "model", "runs", "done", "collisions", "blocked", "other", "median_s",
           "median_ratio", "done_95%"]


def parse_table(text):
    """{(family, model): {column: value}} and the footer's (runs, ok)."""
    lines = text.splitlines()
    if not lines or lines[0].split() != COLUMNS:
        raise ValueError("header line %r" % (lines[0] if lines else ""))
    rows, footer = {}, None
    for line in lines[1:]:
        m = re.match(r"(\d+) runs?: (\d+) met their expectation without a collision, (\d+) did "
                     r"not\.$", line)
        if m:
            footer = tuple(int(g) for g in m.groups())
            continue
        cells = line.split()
        if len(cells) != len(COLUMNS):
            continue
        row = dict(zip(COLUMNS, cells))
        for k in COLUMNS[2:7]:
            row[k] = int(row[k])
        for k in COLUMNS[7:9]:
            row[k] = None if row[k] == "-" else float(row[k])
        low, high = (int(x) for x in row["done_95%"].split("-"))
        row["done_95%"] = (low, high)
        key = (row["family"], row["model"])
        if key in rows:
            raise ValueError("row %s twice" % (key,))
        rows[key] = row
    if footer is None:
        raise ValueError("no footer line")
    return rows, footer


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--count", type=int, default=2)
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--jobs", type=int, default=2)
    ap.add_argument("--min-done", type=float, default=0.0,
                    help="least share of runs done, 0..1 (default 0)")
    ap.add_argument("--keep", help="generate into DIR and keep it (default: a temporary one)")
    a = ap.parse_args()
    if not 0 <= a.min_done <= 1:
        ap.error("--min-done: a share from 0 to 1")
    exe = os.environ["LACUNA_EXE"]
    root = os.environ.get("LACUNA_SOURCE_ROOT", ".")
    script = os.path.join(root, "scripts", "worlds.py")
    if not os.path.exists(script):
        print("worlds_sample: %s not found; skipped" % script)
        return 77
    tmp = None
    out = a.keep
    if not out:
        tmp = tempfile.TemporaryDirectory(prefix="lacuna_worlds_sample_")
        out = tmp.name
    gen = subprocess.run([sys.executable, script, "--family", "all", "--count", str(a.count),
                          "--seed", str(a.seed), "--out", out], capture_output=True, text=True)
    if gen.returncode != 0:
        print("generator failed:\n" + gen.stderr)
        return 1
    sim = subprocess.run([exe, "sim", out, "--model", "both", "--jobs", str(a.jobs)],
                         capture_output=True, text=True)
    print(sim.stdout, end="")
    if sim.returncode not in (0, 1):
        print("lacuna sim exit %d:\n%s" % (sim.returncode, sim.stderr))
        return 1
    failures = []
    families = sorted({f.rsplit("_", 1)[0] for f in os.listdir(out) if f.endswith(".jsonl")})
    try:
        rows, footer = parse_table(sim.stdout)
    except ValueError as e:
        print("FAIL table: %s" % e)
        return 1
    want = {(f, m) for f in families for m in ("point", "unicycle")}
    want |= {("all", "point"), ("all", "unicycle")}
    if set(rows) != want:
        failures.append("rows %s, wanted %s" % (sorted(rows), sorted(want)))
    for key, r in rows.items():
        n = a.count * (len(families) if key[0] == "all" else 1)
        if r["runs"] != n:
            failures.append("%s: %d runs, not %d" % (key, r["runs"], n))
        if r["done"] + r["blocked"] + r["other"] != r["runs"]:
            failures.append("%s: done + blocked + other != runs" % (key,))
        if r["collisions"] != 0:
            failures.append("%s: %d collisions" % (key, r["collisions"]))
        low, high = r["done_95%"]
        if not 0 <= low <= 100 * r["done"] / r["runs"] <= high <= 100:
            failures.append("%s: done_95%% %d-%d does not hold %d of %d" %
                            (key, low, high, r["done"], r["runs"]))
        if (r["median_s"] is None) != (r["done"] == 0):
            failures.append("%s: a median time without a run done, or none with" % (key,))
    total = sum(r["runs"] for k, r in rows.items() if k[0] == "all")
    done = sum(r["done"] for k, r in rows.items() if k[0] == "all")
    if footer[0] != total or footer[1] + footer[2] != total:
        failures.append("footer %s for %d runs" % (footer, total))
    share = done / total if total else 0.0
    print("done: %d of %d runs (%.0f %%), at least %.0f %% wanted" %
          (done, total, 100 * share, 100 * a.min_done))
    if share < a.min_done:
        failures.append("done share %.3f < %.3f" % (share, a.min_done))
    for f in failures:
        print("FAIL " + f)
    if tmp:
        tmp.cleanup()
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
