#!/usr/bin/env python3
"""test_worlds.py - the world generator, scripts/worlds.py.

  - every family generates, with the header `lacuna sim` reads (robot,
    270-degree scanner of 720 beams, family, shortest_path, max_time);
  - the same seed gives the same bytes (also in another process with another
    string-hash seed), another seed other bytes;
  - every world written passes its own reachability check, read back from
    the file, with the shortest path of its header;
  - each family has its shape: 22-34 posts, the straight line blocked where
    the family says it leads into a pocket, a wall or a dead end, a doorway
    1.5-4 m off the line, a route that turns back, v_max 0.5 m/s in the
    cluttered corridor, the start heading within 15 degrees of the first
    waypoint;
  - the check refuses what cannot be driven: a doorway walled shut, a
    waypoint in a closed cage, a gap narrower than the robot; with --slack
    every world passes the check with obstacles grown by the slack;
  - the shortest path against closed forms (plane geometry): a straight line
    in an empty room, and the way round the end of a wall for a disc (two
    tangents and an arc round the wall's grown end);
  - bad arguments exit 2.

Standard library only. Exit 77 (skipped) when the generator cannot be found.
usage: test_worlds.py [SOURCE_ROOT]   (default: LACUNA_SOURCE_ROOT or .)
"""
import importlib.util
import json
import math
import os
import subprocess
import sys
import tempfile

ROOT = sys.argv[1] if len(sys.argv) > 1 else os.environ.get("LACUNA_SOURCE_ROOT", ".")
SCRIPT = os.path.join(ROOT, "scripts", "worlds.py")
failures = []


def check(ok, what):
    if not ok:
        failures.append(what)
        print("FAIL " + what)


def load_module():
    sys.dont_write_bytecode = True  # no __pycache__ in the source tree
    spec = importlib.util.spec_from_file_location("worlds", SCRIPT)
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


def header(path):
    with open(path, encoding="utf-8") as f:
        lines = f.read().splitlines()
    check(len(lines) == 1, "%s: a header line only" % path)
    return json.loads(lines[0])


def run(*args, env=None):
    return subprocess.run([sys.executable, SCRIPT] + list(args), capture_output=True, text=True,
                          env=env)


def read_dir(d):
    return {f: open(os.path.join(d, f), "rb").read() for f in sorted(os.listdir(d))}


def test_every_family(W, tmp):
    out = os.path.join(tmp, "a")
    W.generate(list(W.FAMILIES), 2, 7, out)
    files = sorted(os.listdir(out))
    check(len(files) == 2 * len(W.FAMILIES), "two files per family: %s" % files)
    for f in files:
        path = os.path.join(out, f)
        h = header(path)
        fam = h["family"]
        check(f.startswith(fam + "_"), "%s: family %s in its name" % (f, fam))
        check(h["type"] == "scenario" and h["version"] == 1, f + ": a scenario header")
        check(h["expect"] == "done", f + ": expect done")
        r = h["robot"]
        check(r["radius"] == 0.3 and r["margin"] == 0.05, f + ": a disc of 0.3 m, margin 0.05")
        check(r["v_max"] == (0.5 if fam == "cluttered_corridor" else 0.8), f + ": v_max")
        s = h["sensor"]
        check(s["beams"] == 720 and abs(s["fov"] - 1.5 * math.pi) < 1e-12, f + ": 270 deg, 720")
        sp = h["shortest_path"]
        check(sp > 0, f + ": shortest_path > 0")
        check(h["max_time"] == math.ceil(3 * sp / r["v_max"] + 30), f + ": max_time")
        # the start heads within 15 degrees of its first waypoint
        (sx, sy, yaw), (wx, wy) = h["start"], h["route"]["waypoints"][0]
        off = (yaw - math.atan2(wy - sy, wx - sx) + math.pi) % (2 * math.pi) - math.pi
        check(abs(off) <= math.radians(15) + 1e-3, "%s: heading %.1f deg off" % (f, math.degrees(off)))
        # reachable when read back, with the header's shortest path
        again = W.check_file(path)
        check(again is not None and abs(again - sp) < 1e-3,
              "%s: check of the file %s, header %s" % (f, again, sp))
        # the straight line to the goal is closed where the family says so
        if fam in ("cul_de_sac", "doorway", "l_corridor", "dead_end"):
            polys = [[tuple(p) for p in q] for q in h["world"]["polygons"]]
            grid = W.Grid(polys, 0.35, [(sx, sy), (wx, wy)])
            check(not grid.sight((sx, sy), (wx, wy)), f + ": the straight line is open")
        if fam == "posts":
            n = len(h["world"]["polygons"]) - 4   # the hall's four walls
            check(22 <= n <= 34, "%s: %d posts" % (f, n))
        if fam == "double_back":
            wps = [h["start"][:2]] + h["route"]["waypoints"]
            check(len(wps) >= 4, f + ": at least 3 waypoints")
            legs = [(b[0] - a[0], b[1] - a[1]) for a, b in zip(wps, wps[1:])]
            check(all(p[0] * q[0] + p[1] * q[1] < 0 for p, q in zip(legs, legs[1:])),
                  f + ": every leg turns back on the one before")


def test_same_seed_same_bytes(W, tmp):
    a, b, c = (os.path.join(tmp, d) for d in ("s1", "s2", "s3"))
    env = dict(os.environ, PYTHONHASHSEED="12345")
    r1 = run("--family", "all", "--count", "2", "--seed", "3", "--out", a)
    r2 = run("--family", "all", "--count", "2", "--seed", "3", "--out", b, env=env)
    r3 = run("--family", "all", "--count", "2", "--seed", "4", "--out", c)
    check(r1.returncode == 0 and r2.returncode == 0 and r3.returncode == 0,
          "generator runs: %s %s %s" % (r1.stderr, r2.stderr, r3.stderr))
    da, db, dc = read_dir(a), read_dir(b), read_dir(c)
    check(da == db and len(da) == 14, "the same seed gives the same bytes")
    check(all(da[f] != dc[f] for f in da), "another seed gives other worlds")
    # world i does not depend on how many are drawn after it
    d = os.path.join(tmp, "s4")
    W.generate(["doorway"], 1, 3, d)
    check(read_dir(d)["doorway_00.jsonl"] == da["doorway_00.jsonl"], "world 0 of 1 == of 2")


def test_walled_shut(W):
    w = W.World("doorway", 5, 0)
    grow = w.robot["radius"] + w.robot["margin"]
    sp = W.check_route(w.polys, 0.3, 0.05, w.start, w.waypoints)
    check(sp is not None, "the doorway world is reachable")
    p, q = w.notes["door"]
    dx, dy = q[0] - p[0], q[1] - p[1]
    n = math.hypot(dx, dy)
    ext = 0.2 / n  # the plug reaches 0.2 m into each jamb
    plug = W.slab((p[0] - dx * ext, p[1] - dy * ext), (q[0] + dx * ext, q[1] + dy * ext),
                  w.notes["thickness"])
    check(W.check_route(w.polys + [plug], 0.3, 0.05, w.start, w.waypoints) is None,
          "a doorway walled shut is refused")
    # a plug that leaves 0.5 m of the door open: narrower than the robot's 0.7 m
    k = (n - 0.5) / n
    part = W.slab((p[0] - dx * ext, p[1] - dy * ext), (p[0] + dx * k, p[1] + dy * k),
                  w.notes["thickness"])
    check(W.check_route(w.polys + [part], 0.3, 0.05, w.start, w.waypoints) is None,
          "a doorway narrowed to 0.5 m is refused (robot %.2f m wide)" % (2 * grow))
    # and through the file, as `worlds.py --check` sees it
    h = w.header()
    h["world"]["polygons"].append([list(v) for v in plug])
    with tempfile.NamedTemporaryFile("w", suffix=".jsonl", delete=False) as f:
        f.write(json.dumps(h) + "\n")
    r = run("--check", f.name)
    check(r.returncode == 1 and "unreachable" in r.stdout, "--check exits 1: " + r.stdout)
    os.unlink(f.name)


def test_cage_and_narrow_gap(W):
    room = W.room(0, -3, 10, 3, 0.2)
    cage = [W.box(6, -1, 6.1, 1), W.box(8, -1, 8.1, 1), W.box(6, -1, 8.1, -0.9),
            W.box(6, 0.9, 8.1, 1)]
    check(W.check_route(room + cage, 0.3, 0.05, (1, 0), [(7, 0)]) is None,
          "a waypoint in a closed cage")
    check(W.check_route(room + cage, 0.3, 0.05, (1, 0), [(9, 0)]) is not None,
          "a waypoint beside the cage")
    # a wall across with a gap of 0.6 m (< 0.7 m): closed; of 0.9 m: open
    for gap, open_ in ((0.6, False), (0.9, True)):
        wall = [W.box(5, -3, 5.2, -gap / 2), W.box(5, gap / 2, 5.2, 3)]
        got = W.check_route(room + wall, 0.3, 0.05, (1, 0), [(9, 0)]) is not None
        check(got == open_, "a gap of %.1f m is %s" % (gap, "open" if open_ else "closed"))


def test_shortest_closed_forms(W):
    room = W.room(-1, -4, 11, 4, 0.2)
    sp = W.check_route(room, 0.3, 0.05, (0, 0), [(9, 1.5)])
    want = math.hypot(9, 1.5)
    check(abs(sp - want) <= 0.001 * want, "empty room: %.4f for %.4f" % (sp, want))
    # round the end E = (d, -h) of a thin wall x = d, y in [-h, 3.8]: from
    # S = (0, 0) to G = (2d, 0) a disc of radius R (grown radius) goes down,
    # round E and up. Two tangents of length sqrt(D^2 - R^2), D = |SE|, and
    # the arc between them: the angle round E from ES to EG the long way
    # (2 pi - 2 atan(d / h)) less the two angles acos(R / D) at the tangents.
    d, h, R = 3.0, 1.0, 0.35
    wall = [[(d, -h), (d, 3.8)]]
    D = math.hypot(d, h)
    arc = 2 * math.pi - 2 * math.atan(d / h) - 2 * math.acos(R / D)
    want = 2 * math.sqrt(D * D - R * R) + R * arc
    sp = W.check_route(room + wall, 0.3, 0.05, (0, 0), [(2 * d, 0)])
    check(sp is not None and abs(sp - want) <= 0.01 * want,
          "round a wall's end: %s for %.4f (within 1 %%)" % (sp, want))
    check(sp is None or sp >= want - 2 * W.CELL, "no shorter than the closed form by a cell")


def test_slack(W):
    """--slack S: every world passes the check with obstacles grown S more."""
    for fam in ("l_corridor", "cluttered_corridor"):
        w = W.World(fam, 2, 0, slack=0.1)
        check(W.check_route(w.polys, 0.3, 0.15, w.start, w.waypoints) is not None,
              fam + ": reachable with 0.1 m of slack")
        check(abs(W.check_route(w.polys, 0.3, 0.05, w.start, w.waypoints) - w.shortest) < 1e-9,
              fam + ": its shortest path for the robot's own size")


def test_bad_arguments(tmp):
    for args in (["--family", "nowhere", "--out", tmp], ["--family", "posts"],
                 ["--family", "posts", "--count", "0", "--out", tmp],
                 ["--family", "posts", "--seed", "-1", "--out", tmp],
                 ["--family", "posts", "--slack", "-0.1", "--out", tmp]):
        r = run(*args)
        check(r.returncode == 2, "%s: exit %d" % (" ".join(args), r.returncode))
    r = run("--check", os.path.join(tmp, "missing.jsonl"))
    check(r.returncode == 2 and "missing.jsonl" in r.stderr, "--check of a missing file")


def main():
    if not os.path.exists(SCRIPT):
        print("test_worlds: %s not found; skipped" % SCRIPT)
        return 77
    W = load_module()
    with tempfile.TemporaryDirectory(prefix="lacuna_test_worlds_") as tmp:
        test_every_family(W, tmp)
        test_same_seed_same_bytes(W, tmp)
        test_walled_shut(W)
        test_cage_and_narrow_gap(W)
        test_shortest_closed_forms(W)
        test_slack(W)
        test_bad_arguments(tmp)
    print("%d failed" % len(failures))
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
