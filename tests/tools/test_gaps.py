#!/usr/bin/env python3
"""test_gaps.py - the one-gap scenes, scripts/gaps.py.

  - one file per slack, thickness and offset, and per slack, thickness and
    side corridor; --no-side leaves the side gaps out;
  - each gap is 2 (radius + margin + s) wide: the distance between the two
    wall pieces' facing ends (plane geometry), within 0.1 mm (the files'
    four decimals);
  - the family names the slack in whole centimetres (gap_s03 for 0.03);
  - the shortest path against closed forms: straight in line with the gap
    it is the distance from start to waypoint, 4.2 m; a side gap's is the
    corridor leg plus the leg up through the gap;
  - the same arguments give the same bytes;
  - bad arguments exit 2 and name the option.

Standard library only. Exit 77 (skipped) when the script cannot be found.
usage: test_gaps.py [SOURCE_ROOT]   (default: LACUNA_SOURCE_ROOT or .)
"""
import json
import os
import subprocess
import sys
import tempfile

ROOT = sys.argv[1] if len(sys.argv) > 1 else os.environ.get("LACUNA_SOURCE_ROOT", ".")
SCRIPT = os.path.join(ROOT, "scripts", "gaps.py")
failures = []


def check(ok, what):
    if not ok:
        failures.append(what)


def run(args):
    return subprocess.run([sys.executable, SCRIPT] + args, capture_output=True, text=True)


def headers(d):
    out = {}
    for name in sorted(os.listdir(d)):
        with open(os.path.join(d, name), encoding="utf-8") as f:
            out[name] = json.loads(f.readline())
    return out


def span(p, k):
    return min(q[k] for q in p), max(q[k] for q in p)


def gap_width(h, side):
    """The gap between the wall's two pieces. Wall scenes: the two polygons
    whose x range starts at the wall (x = 3), the lower one's top to the
    upper one's bottom. Side scenes: in the corridor's left wall (y > 0),
    the piece from the room's west edge (x = -0.2) to before the gap and
    the one from after it to the east edge (x = 6.2)."""
    polys = h["world"]["polygons"]
    if side:
        left = [p for p in polys if span(p, 1)[0] > 0 and span(p, 0)[0] == -0.2 and
                0.5 < span(p, 0)[1] < 3.0]
        right = [p for p in polys if span(p, 1)[0] > 0 and span(p, 0)[1] == 6.2 and
                 3.0 < span(p, 0)[0] < 5.5]
        if len(left) != 1 or len(right) != 1:
            return float("nan")
        return span(right[0], 0)[0] - span(left[0], 0)[1]
    pieces = [p for p in polys if abs(min(q[0] for q in p) - 3.0) < 1e-9]
    lower = min(pieces, key=lambda p: min(q[1] for q in p))
    upper = max(pieces, key=lambda p: min(q[1] for q in p))
    return min(q[1] for q in upper) - max(q[1] for q in lower)


def main():
    if not os.path.exists(SCRIPT):
        print("test_gaps: %s not found; skipped" % SCRIPT)
        return 77
    with tempfile.TemporaryDirectory(prefix="lacuna_test_gaps_") as tmp:
        a, b, c = (os.path.join(tmp, x) for x in "abc")
        r = run(["--out", a, "--slack", "0.01,0.03", "--offset", "0,0.8", "--thickness",
                 "0.1,0.5", "--side", "1.0"])
        check(r.returncode == 0, "gaps.py exit %d: %s" % (r.returncode, r.stderr))
        hs = headers(a)
        check(len(hs) == 2 * 2 * (2 + 1), "%d files, not 12" % len(hs))
        for name, h in hs.items():
            s = int(name[5:8]) / 1000.0
            robot = h["robot"]
            want = 2 * (robot["radius"] + robot["margin"] + s)
            got = gap_width(h, "side" in name)
            check(abs(got - want) < 1e-4,
                  "%s: gap %.5f m, not 2 (r + m + s) = %.5f" % (name, got, want))
            check(h["family"] == "gap_s%02d" % round(100 * s), "%s: family %s" % (name, h["family"]))
            check(h["type"] == "scenario" and h["expect"] == "done" and h["sensor"]["beams"] == 720,
                  "%s: header %s" % (name, sorted(h)))
            if "_o00_" in name:
                (x0, y0), (x1, y1) = h["start"][:2], h["route"]["waypoints"][0]
                check(abs(h["shortest_path"] - 4.2) < 1e-3 and abs(y0 - y1) < 1e-9,
                      "%s: shortest %s, not 4.2" % (name, h["shortest_path"]))
            if "side" in name:
                t = float(name.rsplit("_t", 1)[1][:2]) / 10.0
                width = float(name.split("side", 1)[1][:2]) / 10.0
                # along the corridor from x = 0.8 to the gap at x = 3, then up
                # from its middle past the wall (its face at width / 2, t
                # thick) to 1.5 m into the room behind
                want_len = (3.0 - 0.8) + (width / 2.0 + t + 1.5)
                check(abs(h["shortest_path"] - want_len) < 1e-3,
                      "%s: shortest %s, not %.3f" % (name, h["shortest_path"], want_len))
        r = run(["--out", b, "--slack", "0.01,0.03", "--offset", "0,0.8", "--thickness",
                 "0.1,0.5", "--side", "1.0"])
        same = all(open(os.path.join(a, n), "rb").read() == open(os.path.join(b, n), "rb").read()
                   for n in hs)
        check(r.returncode == 0 and sorted(os.listdir(b)) == sorted(hs) and same,
              "the same arguments gave other files")
        r = run(["--out", c, "--slack", "0.05", "--no-side"])
        check(r.returncode == 0 and len(os.listdir(c)) == 3 * 2,
              "--no-side: %s" % sorted(os.listdir(c)) if os.path.isdir(c) else r.stderr)
        for bad, opt in ((["--out", c, "--slack", "0"], "--slack"),
                         (["--out", c, "--slack", "x"], "--slack"),
                         (["--out", c, "--offset", "-1"], "--offset"),
                         (["--out", c, "--thickness", "2"], "--thickness"),
                         (["--slack", "0.03"], "--out")):
            r = run(bad)
            check(r.returncode == 2 and opt in r.stderr,
                  "%s: exit %d, %r" % (bad, r.returncode, r.stderr[-200:]))
    for f in failures:
        print("FAIL " + f)
    print("test_gaps: %d failures" % len(failures))
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
