#!/usr/bin/env python3
"""gaps.py - invented one-gap scenes: how narrow a passage a robot gets through.

Each scene is a 6 x 6 m room split by one wall with one gap in it, the gap
w = 2 (radius + margin + s) wide: s metres a side more than the robot with
its margin needs. The robot starts 2 m before the wall, straight in line
with the gap or offset from that line (it must turn into the gap), and the
waypoint lies 2.2 m past it. For each s of --slack, each offset of --offset
and each wall thickness of --thickness, one file; and for each s, corridor
width of --side and thickness, a side gap (the robot drives along a corridor
and turns into the gap in its wall). Each file has family "gap_sNN" (NN: s in
whole centimetres), so that `lacuna sim DIR --model both --seeds K` prints
one row per s. The robot and scanner are those of scripts/worlds.py (disc of
0.3 m, margin 0.05 m, 270 degrees, 720 beams, 1 cm range noise), at 0.5 m/s.

What it measures: with range noise, the nearest of a face's returns stands
out from the face, and the region keeps radius + margin from every return,
so a gap closes for the planner before it closes for the robot's body.

Standard library only; Debian's python3. Deterministic: no random draws.
"""
import argparse
import json
import os
import sys

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import worlds  # noqa: E402  (the robot, the scanner, the shapes, the check)

ROOM = 3.0     # m, half side of the room (the wall at x = WALL_X)
WALL_X = 3.0   # m
START_X = 1.0  # m
GOAL_X = 5.2   # m
V_MAX = 0.5    # m/s


def scene(s, offset, thickness):
    """(polygons, start pose, waypoint, shortest path) for slack s, offset
    and wall thickness (m)."""
    r, m = worlds.ROBOT["radius"], worlds.ROBOT["margin"]
    w = 2.0 * (r + m + s)
    x0, x1 = WALL_X, WALL_X + thickness
    polys = worlds.room(0.0, -ROOM, 2.0 * ROOM, ROOM, 0.2)
    polys += [worlds.box(x0, -ROOM, x1, -w / 2.0), worlds.box(x0, w / 2.0, x1, ROOM)]
    start = (START_X, offset, 0.0)
    goal = (GOAL_X, -0.5 * offset)
    return polys, start, goal, shortest_path(s, start, goal, thickness)


def shortest_path(s, start, goal, thickness):
    """The centre's way: the straight line from start to goal, its crossings
    of the wall's two faces held within the s that the gap leaves the centre
    either side of its middle (plane geometry; the grown wall's rounded ends
    shorten it by millimetres, and worlds.py's 5 cm grid cannot resolve a gap
    this narrow)."""
    (x0, y0), (x1, y1) = start[:2], goal
    pts = [(x0, y0)]
    for x in (WALL_X, WALL_X + thickness):
        y = y0 + (y1 - y0) * (x - x0) / (x1 - x0)
        pts.append((x, max(-s, min(s, y))))
    pts.append((x1, y1))
    return sum(((b[0] - a[0]) ** 2 + (b[1] - a[1]) ** 2) ** 0.5 for a, b in zip(pts, pts[1:]))


def side_scene(s, width, thickness):
    """(polygons, start pose, waypoint, shortest path) of a side gap: a
    corridor `width` wide along x, the robot at its start heading along
    it, the gap in the corridor's left wall at x = WALL_X, the waypoint in
    the room behind that wall. The shortest path: along the corridor's
    middle to below the gap, a quarter turn, straight up (an upper bound:
    plane geometry)."""
    r, m = worlds.ROBOT["radius"], worlds.ROBOT["margin"]
    w = 2.0 * (r + m + s)
    y1 = width / 2.0
    top = y1 + thickness
    polys = [worlds.box(-0.2, -y1 - 0.2, 6.2, -y1),
             worlds.box(-0.2, -y1, 0.0, y1), worlds.box(6.0, -y1, 6.2, y1),
             worlds.box(-0.2, y1, WALL_X - w / 2.0, top), worlds.box(WALL_X + w / 2.0, y1, 6.2, top),
             worlds.box(-0.2, top, 0.0, top + 3.0), worlds.box(6.0, top, 6.2, top + 3.0),
             worlds.box(-0.2, top + 3.0, 6.2, top + 3.2)]
    start = (0.8, 0.0, 0.0)
    goal = (WALL_X, top + 1.5)
    return polys, start, goal, (WALL_X - start[0]) + (goal[1] - start[1])


def header(s, offset, thickness, side_width=None):
    if side_width is None:
        polys, start, goal, shortest = scene(s, offset, thickness)
        where = "the robot starts %.1f m off the gap's line" % offset
    else:
        polys, start, goal, shortest = side_scene(s, side_width, thickness)
        where = "the gap opens off the side of a corridor %.1f m wide" % side_width
    robot = dict(worlds.ROBOT)
    robot["v_max"] = V_MAX
    return {
        "type": "scenario", "version": 1,
        "description": "Invented test room split by a wall %.1f m thick with one gap %.0f mm "
                       "a side wider than the robot with its margin; %s." % (thickness,
                                                                              1000 * s, where),
        "family": "gap_s%02d" % round(100 * s),
        "robot": robot,
        "route": {"waypoints": [list(goal)], "tolerance": worlds.TOLERANCE},
        "start": list(start),
        "world": {"polygons": [[list(p) for p in poly] for poly in polys]},
        "sensor": worlds.SENSOR,
        "expect": "done",
        "max_time": 60,
        "shortest_path": round(shortest, 3),
    }


def numbers(text, name, lo, hi):
    try:
        vals = [float(v) for v in text.split(",")]
    except ValueError:
        raise argparse.ArgumentTypeError("%s: numbers separated by commas, not %r" % (name, text))
    if not vals or any(not lo <= v <= hi for v in vals):
        raise argparse.ArgumentTypeError("%s: each from %g to %g m, not %r" % (name, lo, hi, text))
    return vals


def main(argv):
    ap = argparse.ArgumentParser(description="Invented one-gap scenes for `lacuna sim`: how "
                                 "narrow a passage the robot gets through.")
    ap.add_argument("--out", required=True, help="directory to write the scenario files to")
    ap.add_argument("--slack", default="0.01,0.02,0.03,0.05",
                    type=lambda t: numbers(t, "--slack", 0.005, 0.5),
                    help="m a side over the robot with its margin, comma separated "
                    "(default 0.01,0.02,0.03,0.05)")
    ap.add_argument("--offset", default="0,0.8,1.6",
                    type=lambda t: numbers(t, "--offset", 0.0, 2.0),
                    help="m the start lies off the gap's line (default 0,0.8,1.6)")
    ap.add_argument("--side", default="1.0,1.4",
                    type=lambda t: numbers(t, "--side", 0.8, 3.0),
                    help="m, widths of the corridors a side gap opens off, comma separated "
                    "(default 1.0,1.4)")
    ap.add_argument("--no-side", action="store_true", help="no side gaps")
    ap.add_argument("--thickness", default="0.1,0.5",
                    type=lambda t: numbers(t, "--thickness", 0.05, 1.0),
                    help="m, the wall's thickness: the gap's length (default 0.1,0.5)")
    a = ap.parse_args(argv)
    os.makedirs(a.out, exist_ok=True)
    n = 0
    scenes = []  # (header arguments, file name)
    for s in a.slack:
        mm = round(1000 * s)
        for t in a.thickness:
            for off in a.offset:
                scenes.append(((s, off, t, None),
                               "gap_s%03d_o%02d_t%02d.jsonl" % (mm, round(10 * off), round(10 * t))))
            for wd in [] if a.no_side else a.side:
                scenes.append(((s, 0.0, t, wd),
                               "gap_s%03d_side%02d_t%02d.jsonl" % (mm, round(10 * wd), round(10 * t))))
    for h_args, name in scenes:
        with open(os.path.join(a.out, name), "w", encoding="utf-8") as f:
            f.write(worlds.text(header(*h_args)))
        n += 1
    print("gaps.py: %d scenes in %s" % (n, a.out), file=sys.stderr)
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
