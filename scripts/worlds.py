#!/usr/bin/env python3
"""worlds.py - seeded families of invented sites for `lacuna sim`.

    worlds.py --family NAME|all --count N --seed S --out DIR [--slack S]
    worlds.py --check FILE...

Writes one scenario file per world (a JSON Lines header only, the format of
proto/PROTOCOL.md) named DIR/<family>_<NN>.jsonl. Every world is a closed
site of our own invention, the kind a patrol robot meets with no map:

  posts               a hall with a field of 22-34 posts between start and goal
  cul_de_sac          a U-shaped pocket between robot and goal, opening toward
                      the robot, so that the straight line leads into it
  doorway             a wall across the way with one doorway 1.5-4 m off the
                      straight line
  l_corridor          an L-shaped corridor with boxes in it, goal round the corner
  dead_end            corridors where the straight branch is a dead end and the
                      way on turns off it
  double_back         a route of 3-5 waypoints to and fro among posts
  cluttered_corridor  a 4.5 m wide corridor cluttered with boxes and columns,
                      goal 10 m ahead, v_max 0.5 m/s

Sizes, positions, orientations and counts vary with the seed; each world is
also turned by a random angle and moved, so no family is axis-aligned. The
robot (unicycle in the header; `lacuna sim --model point` runs the same file
as a point) is a disc of radius 0.3 m with margin 0.05 m; the scanner covers
270 degrees with 720 beams at 20 Hz, 0.05-10 m, 0.01 m noise.

Reachability. Before a world is used it is checked on an occupancy grid of
5 cm cells: a cell is blocked when its centre lies inside a polygon or within
radius + margin of one (exact distance to each edge, rasterised row by row),
and a path of free cells (16-neighbour moves, no corner cutting) must lead
from the start through every waypoint in order. An unreachable draw is
discarded and drawn again from the next attempt's seed, so the output is a
function of (family, seed, index) alone. --slack S checks with obstacles
grown by S more: every passage is then at least 2 S wider than the robot
with its margin (with S = 0, the default, a passage may be as narrow as the
robot with its margin plus a cell).

Shortest path. The header's "shortest_path" (m) is the length of that grid
path (A*, Hart, Nilsson and Raphael 1968, with the Euclidean heuristic),
shortened by greedy line-of-sight shortcuts between its turning points,
leg by leg to each waypoint's centre. It is an upper bound of the shortest
path in the grid's free space: 16-neighbour moves are at most 2.8 % longer
than a straight line (1 / cos 13.3 degrees, the widest gap between move
directions), and the shortcuts take most of that back; the grid's cell-centre
test moves each wall by at most half a cell (2.5 cm). tests/tools/test_worlds.py
checks it against closed forms within 1 %.

Standard library only; Debian's python3. Deterministic: the same arguments
give the same bytes (random.Random seeded with a string hashes it with
SHA-512, stable across Python 3 releases; only random() and randrange()-based
draws are used).
"""
import argparse
import heapq
import json
import math
import os
import random
import sys

CELL = 0.05          # m, grid cell
FOV = 1.5 * math.pi  # 270 degrees
ATTEMPTS = 200       # redraws before a family is declared broken

ROBOT = {"model": "unicycle", "radius": 0.3, "margin": 0.05, "v_max": 0.8,
         "a_max": 0.5, "w_max": 1.0, "dw_max": 2.0}
SENSOR = {"beams": 720, "fov": FOV, "near": 0.05, "far": 10.0,
          "rate": 20, "noise": 0.01, "mount": [0, 0, 0]}
TOLERANCE = 0.3

# ------------------------------------------------------------------ shapes


def box(x0, y0, x1, y1):
    """Axis-aligned rectangle, counter-clockwise."""
    return [(x0, y0), (x1, y0), (x1, y1), (x0, y1)]


def rect(cx, cy, w, h, a=0.0):
    """w x h rectangle centred at (cx, cy), turned by a."""
    c, s = math.cos(a), math.sin(a)
    return [(cx + c * x - s * y, cy + s * x + c * y)
            for x, y in ((-w / 2, -h / 2), (w / 2, -h / 2), (w / 2, h / 2), (-w / 2, h / 2))]


def disc(cx, cy, r, n=12, a=0.0):
    """A column: regular n-gon of circumradius r."""
    return [(cx + r * math.cos(a + 2 * math.pi * k / n), cy + r * math.sin(a + 2 * math.pi * k / n))
            for k in range(n)]


def slab(p, q, t):
    """A wall of thickness t along the segment p-q (ends flush)."""
    dx, dy = q[0] - p[0], q[1] - p[1]
    n = math.hypot(dx, dy)
    ox, oy = -dy / n * t / 2, dx / n * t / 2
    return [(p[0] - ox, p[1] - oy), (q[0] - ox, q[1] - oy), (q[0] + ox, q[1] + oy),
            (p[0] + ox, p[1] + oy)]


def room(x0, y0, x1, y1, t):
    """Four walls of thickness t outside the rectangle [x0, x1] x [y0, y1]."""
    return [box(x0 - t, y0 - t, x1 + t, y0), box(x0 - t, y1, x1 + t, y1 + t),
            box(x0 - t, y0, x0, y1), box(x1, y0, x1 + t, y1)]


def carve(free, t):
    """Solid rectangles filling the bounding box of the free rectangles
    (x0, y0, x1, y1), grown by t, except the free ones: corridors cut into
    a block. Cells between consecutive distinct coordinates are free when
    their centre lies in a free rectangle; solid cells merge along rows."""
    bx0 = min(r[0] for r in free) - t
    by0 = min(r[1] for r in free) - t
    bx1 = max(r[2] for r in free) + t
    by1 = max(r[3] for r in free) + t
    xs = sorted({bx0, bx1} | {r[0] for r in free} | {r[2] for r in free})
    ys = sorted({by0, by1} | {r[1] for r in free} | {r[3] for r in free})
    out = []
    for j in range(len(ys) - 1):
        cy = (ys[j] + ys[j + 1]) / 2
        run = None
        for i in range(len(xs) - 1):
            cx = (xs[i] + xs[i + 1]) / 2
            solid = not any(r[0] < cx < r[2] and r[1] < cy < r[3] for r in free)
            if solid and run is None:
                run = xs[i]
            if not solid and run is not None:
                out.append(box(run, ys[j], xs[i], ys[j + 1]))
                run = None
        if run is not None:
            out.append(box(run, ys[j], xs[-1], ys[j + 1]))
    return out


def seg_dist(p, a, b):
    dx, dy = b[0] - a[0], b[1] - a[1]
    L2 = dx * dx + dy * dy
    t = 0.0 if L2 == 0 else max(0.0, min(1.0, ((p[0] - a[0]) * dx + (p[1] - a[1]) * dy) / L2))
    return math.hypot(p[0] - a[0] - t * dx, p[1] - a[1] - t * dy)


def edges(poly):
    n = len(poly)
    if n == 2:
        return [(poly[0], poly[1])]
    return [(poly[i], poly[(i + 1) % n]) for i in range(n)]


def inside(p, poly):
    if len(poly) < 3:
        return False
    res = False
    for a, b in edges(poly):
        if (a[1] > p[1]) != (b[1] > p[1]) and \
                p[0] < (b[0] - a[0]) * (p[1] - a[1]) / (b[1] - a[1]) + a[0]:
            res = not res
    return res


def distance(p, polys):
    """Distance from p to the nearest polygon (0 inside one)."""
    best = math.inf
    for poly in polys:
        if inside(p, poly):
            return 0.0
        for a, b in edges(poly):
            best = min(best, seg_dist(p, a, b))
    return best


# ------------------------------------------------------------------ grid


class Grid:
    """Cells of CELL m over the polygons' bounding box (plus a border of two
    blocked cells, so that no move leaves the grid); blocked[j * w + i] is 1
    when the centre of cell (i, j) lies inside a polygon or within `grow` m
    of one."""

    def __init__(self, polys, grow, extra_points=()):
        xs = [p[0] for poly in polys for p in poly] + [p[0] for p in extra_points]
        ys = [p[1] for poly in polys for p in poly] + [p[1] for p in extra_points]
        pad = grow + 3 * CELL
        self.x0 = math.floor((min(xs) - pad) / CELL) * CELL
        self.y0 = math.floor((min(ys) - pad) / CELL) * CELL
        self.w = int(math.ceil((max(xs) + pad - self.x0) / CELL)) + 1
        self.h = int(math.ceil((max(ys) + pad - self.y0) / CELL)) + 1
        self.blocked = bytearray(self.w * self.h)
        for poly in polys:
            self._fill(poly)
            for a, b in edges(poly):
                self._capsule(a, b, grow)
        w, h, blk = self.w, self.h, self.blocked
        for j in range(h):
            if j < 2 or j >= h - 2:
                blk[j * w:(j + 1) * w] = b"\x01" * w
            else:
                blk[j * w:j * w + 2] = b"\x01\x01"
                blk[j * w + w - 2:j * w + w] = b"\x01\x01"

    def centre(self, i, j):
        return (self.x0 + (i + 0.5) * CELL, self.y0 + (j + 0.5) * CELL)

    def cell(self, p):
        return (int(math.floor((p[0] - self.x0) / CELL)), int(math.floor((p[1] - self.y0) / CELL)))

    def free(self, p):
        i, j = self.cell(p)
        return 0 <= i < self.w and 0 <= j < self.h and not self.blocked[j * self.w + i]

    def _rows(self, ylo, yhi):
        j0 = max(0, int(math.ceil((ylo - self.y0) / CELL - 0.5)))
        j1 = min(self.h - 1, int(math.floor((yhi - self.y0) / CELL - 0.5)))
        return range(j0, j1 + 1)

    def _span(self, j, xlo, xhi):
        """Block the cells of row j whose centre x lies in [xlo, xhi]."""
        i0 = max(0, int(math.ceil((xlo - self.x0) / CELL - 0.5)))
        i1 = min(self.w - 1, int(math.floor((xhi - self.x0) / CELL - 0.5)))
        if i1 >= i0:
            self.blocked[j * self.w + i0:j * self.w + i1 + 1] = b"\x01" * (i1 - i0 + 1)

    def _fill(self, poly):
        """The polygon's inside, by the even-odd rule on each row."""
        if len(poly) < 3:
            return
        es = edges(poly)
        for j in self._rows(min(p[1] for p in poly), max(p[1] for p in poly)):
            y = self.y0 + (j + 0.5) * CELL
            xs = sorted(a[0] + (y - a[1]) * (b[0] - a[0]) / (b[1] - a[1])
                        for a, b in es if (a[1] > y) != (b[1] > y))
            for k in range(0, len(xs) - 1, 2):
                self._span(j, xs[k], xs[k + 1])

    def _capsule(self, a, b, r):
        """Every centre within r of the segment a-b: on each row the capsule
        (convex) meets the row in one interval, the hull of its pieces: the two
        end discs and the rectangle swept by the segment's normal."""
        dx, dy = b[0] - a[0], b[1] - a[1]
        L = math.hypot(dx, dy)
        quad = None
        if L > 0:
            nx, ny = -dy / L * r, dx / L * r
            quad = [(a[0] + nx, a[1] + ny), (b[0] + nx, b[1] + ny), (b[0] - nx, b[1] - ny),
                    (a[0] - nx, a[1] - ny)]
        for j in self._rows(min(a[1], b[1]) - r, max(a[1], b[1]) + r):
            y = self.y0 + (j + 0.5) * CELL
            lo, hi = math.inf, -math.inf
            for c in (a, b):
                d = r * r - (y - c[1]) ** 2
                if d >= 0:
                    s = math.sqrt(d)
                    lo, hi = min(lo, c[0] - s), max(hi, c[0] + s)
            if quad:
                for p, q in zip(quad, quad[1:] + quad[:1]):
                    if (p[1] - y) * (q[1] - y) <= 0:
                        if p[1] == q[1]:
                            xs = (p[0], q[0])
                        else:
                            xs = (p[0] + (y - p[1]) * (q[0] - p[0]) / (q[1] - p[1]),)
                        lo, hi = min(lo, *xs), max(hi, *xs)
            if lo <= hi:
                self._span(j, lo, hi)

    # ---------------------------------------------------------- search

    def _moves(self):
        w = self.w
        out = []
        for dx, dy in ((1, 0), (-1, 0), (0, 1), (0, -1), (1, 1), (1, -1), (-1, 1), (-1, -1),
                       (2, 1), (2, -1), (-2, 1), (-2, -1), (1, 2), (-1, 2), (1, -2), (-1, -2)):
            sx, sy = (dx > 0) - (dx < 0), (dy > 0) - (dy < 0)
            if abs(dx) == 2:      # crosses the cells beside and ahead of the first step
                via = (sx, sx + dy * w)
            elif abs(dy) == 2:
                via = (sy * w, dx + sy * w)
            elif dx and dy:       # a diagonal: both cells at its corner free
                via = (dx, dy * w)
            else:
                via = ()
            out.append((dx + dy * w, math.hypot(dx, dy) * CELL, via))
        return out

    def astar(self, p, q):
        """Cells of a 16-neighbour shortest path from p's cell to q's (flat
        indices, p first), or None when there is none."""
        if not (self.free(p) and self.free(q)):
            return None
        w, blk = self.w, self.blocked
        si, sj = self.cell(p)
        gi, gj = self.cell(q)
        s, g = sj * w + si, gj * w + gi
        gx, gy = gi * CELL, gj * CELL
        moves = self._moves()
        dist = {s: 0.0}
        parent = {s: -1}
        done = bytearray(len(blk))
        heap = [(math.hypot(si * CELL - gx, sj * CELL - gy), 0.0, s)]
        while heap:
            _, d, u = heapq.heappop(heap)
            if done[u]:
                continue
            if u == g:
                path = []
                while u != -1:
                    path.append(u)
                    u = parent[u]
                return path[::-1]
            done[u] = 1
            for off, cost, via in moves:
                v = u + off
                if blk[v] or done[v] or any(blk[u + o] for o in via):
                    continue
                nd = d + cost
                if nd < dist.get(v, math.inf):
                    dist[v] = nd
                    parent[v] = u
                    vi, vj = v % w, v // w
                    heapq.heappush(heap, (nd + math.hypot(vi * CELL - gx, vj * CELL - gy), nd, v))
        return None

    def sight(self, p, q):
        """True when every point of the segment p-q, sampled every half
        cell, lies in a free cell."""
        n = max(1, int(math.ceil(math.hypot(q[0] - p[0], q[1] - p[1]) / (CELL / 2))))
        return all(self.free((p[0] + (q[0] - p[0]) * k / n, p[1] + (q[1] - p[1]) * k / n))
                   for k in range(n + 1))

    def shortest(self, p, q):
        """(length, polyline) of a path from p to q, or None."""
        cells = self.astar(p, q)
        if cells is None:
            return None
        # the turning points of the cell path, with the exact ends
        pts = [p]
        for k in range(1, len(cells) - 1):
            a, b, c = cells[k - 1], cells[k], cells[k + 1]
            if b - a != c - b:
                pts.append(self.centre(b % self.w, b // self.w))
        pts.append(q)
        # greedy line-of-sight shortcuts (a shortcut never lengthens the path)
        out, k = [pts[0]], 0
        while k < len(pts) - 1:
            m = k + 1
            for n in range(len(pts) - 1, k + 1, -1):
                if self.sight(pts[k], pts[n]):
                    m = n
                    break
            out.append(pts[m])
            k = m
        length = sum(math.hypot(b[0] - a[0], b[1] - a[1]) for a, b in zip(out, out[1:]))
        return length, out


def check_route(polys, radius, margin, start, waypoints):
    """Shortest path length (m) from start through every waypoint in order
    for a disc of radius + margin, or None when a leg cannot be driven."""
    grid = Grid(polys, radius + margin, [start] + list(waypoints))
    total, at = 0.0, start
    for w in waypoints:
        leg = grid.shortest(at, w)
        if leg is None:
            return None
        total += leg[0]
        at = w
    return total


# ------------------------------------------------------------------ families
#
# Each family draws a world in its own frame (start near the origin, the way
# on roughly along +x) and returns (polygons, start, waypoints, description,
# notes); notes hold named features in the same frame for the tests.


def u(rng, a, b):
    return a + (b - a) * rng.random()


def sign(rng):
    return 1 if rng.random() < 0.5 else -1


def scatter(rng, n, area, keep_clear, make, gap=0.1, tries=4000):
    """Up to n obstacles from make(rng, x, y) -> (polygon, radius) placed
    uniformly in area (x0, y0, x1, y1), each at least radius + gap from the
    others and radius + d from each (point, d) of keep_clear."""
    placed = []
    for _ in range(tries):
        if len(placed) == n:
            break
        x, y = u(rng, area[0], area[2]), u(rng, area[1], area[3])
        poly, r = make(rng, x, y)
        if any(math.hypot(x - p[0], y - p[1]) < r + d for p, d in keep_clear):
            continue
        if any(math.hypot(x - q[0], y - q[1]) < r + q[2] + gap for q in placed):
            continue
        placed.append((x, y, r, poly))
    return [q[3] for q in placed]


def post(rng, x, y):
    """A square post (0.2-0.5 m) or a round one (radius 0.1-0.25 m)."""
    if rng.random() < 0.5:
        side = u(rng, 0.2, 0.5)
        return rect(x, y, side, side, u(rng, 0, math.pi / 2)), side / math.sqrt(2)
    r = u(rng, 0.1, 0.25)
    return disc(x, y, r, 12, u(rng, 0, math.pi)), r


def clutter(rng, x, y):
    """A crate (0.3-0.9 m) or a column (radius 0.15-0.45 m)."""
    if rng.random() < 0.6:
        w, h = u(rng, 0.3, 0.9), u(rng, 0.3, 0.9)
        return rect(x, y, w, h, u(rng, 0, math.pi)), math.hypot(w, h) / 2
    r = u(rng, 0.15, 0.45)
    return disc(x, y, r, 12, u(rng, 0, math.pi)), r


def fam_posts(rng):
    L, W = u(rng, 13, 18), u(rng, 8, 12)
    start, goal = (1.0, u(rng, -1.5, 1.5)), (L - 1.0, u(rng, -1.5, 1.5))
    n = 22 + rng.randrange(13)
    band = min(u(rng, 3.0, 4.0), W / 2 - 0.5)   # the field: a band along the way
    posts = scatter(rng, n, (2.5, -band, L - 2.5, band), [(start, 1.0), (goal, 1.0)], post)
    polys = room(0 - 0.5, -W / 2, L + 0.5, W / 2, 0.2) + posts
    desc = ("Invented hall with a field of %d posts (square and round) between the robot and its "
            "goal %.1f m away: exercises gaps between posts that are not lanes and pockets "
            "among them." % (len(posts), math.dist(start, goal)))
    return polys, start, [goal], desc, {"posts": len(posts)}


def fam_cul_de_sac(rng):
    D = u(rng, 9, 14)
    start, goal = (0.0, 0.0), (D, u(rng, -0.5, 0.5))
    w, d, t = u(rng, 2.0, 4.5), u(rng, 1.5, 3.5), u(rng, 0.15, 0.3)
    splay = u(rng, 0, math.radians(20))
    xb = u(rng, max(d + 2.5, 0.45 * D), D - 2.0)   # back wall; opening >= 2.5 m ahead
    yc = u(rng, -0.25, 0.25) * w                     # the line stays inside the pocket
    spread = w / 2 + d * math.tan(splay)
    back = slab((xb, yc - w / 2 - t / 2), (xb, yc + w / 2 + t / 2), t)
    arms = [slab((xb, yc + s * w / 2), (xb - d, yc + s * spread), t) for s in (-1, 1)]
    half = spread + abs(yc) + u(rng, 1.5, 3.5)
    polys = room(-1.5, -half, D + 1.5, half, 0.2) + [back] + arms
    desc = ("Invented yard with a U-shaped pocket %.1f m wide and %.1f m deep between the "
            "robot and its goal, open toward the robot: the straight line leads into it." % (w, d))
    return polys, start, [goal], desc, {"pocket": [(xb - d, yc - spread), (xb, yc + spread)]}


def fam_doorway(rng):
    Lx = u(rng, 10, 16)
    start, goal = (1.0, u(rng, -1, 1)), (Lx - 1.0, u(rng, -1, 1))
    xw = u(rng, 0.4, 0.6) * Lx
    tilt, t = u(rng, -math.radians(15), math.radians(15)), u(rng, 0.1, 0.3)
    dw, off = u(rng, 0.9, 1.4), sign(rng) * u(rng, 1.5, 4.0)
    # the wall: the line through (xw, yl) along (-sin tilt, cos tilt), yl
    # where the straight line crosses x = xw; the door `off` along it
    yl = start[1] + (goal[1] - start[1]) * (xw - start[0]) / (goal[0] - start[0])
    ux, uy = -math.sin(tilt), math.cos(tilt)
    half = max(abs(yl + off * uy) + dw / 2 + u(rng, 0.8, 3.0), 4.0)
    lo, hi = (-half - yl) / uy - 0.3, (half - yl) / uy + 0.3   # reach into the side walls

    def at(s):
        return (xw + s * ux, yl + s * uy)

    polys = room(0.0, -half, Lx, half, 0.2)
    polys += [slab(at(lo), at(off - dw / 2), t), slab(at(off + dw / 2), at(hi), t)]
    door = at(off)
    boxes = scatter(rng, rng.randrange(4), (1.5, -half + 0.5, Lx - 1.5, half - 0.5),
                    [(start, 1.2), (goal, 1.2), (door, 2.0), ((xw, yl), 1.0)], clutter)
    polys += boxes
    desc = ("Invented pair of rooms split by a wall with one %.2f m doorway %.1f m off the "
            "straight line to the goal: the robot must leave the line to find the door."
            % (dw, abs(off)))
    return polys, start, [goal], desc, {"door": [at(off - dw / 2), at(off + dw / 2)],
                                        "thickness": t}


def fam_l_corridor(rng):
    w1, w2 = u(rng, 1.4, 2.2), u(rng, 1.4, 2.2)
    L1, L2, s = u(rng, 6, 12), u(rng, 5, 10), sign(rng)
    leg1 = (-0.8, -w1 / 2, L1 + w2 / 2, w1 / 2)
    leg2 = (L1 - w2 / 2, -w1 / 2 if s > 0 else -(L2 + 0.8), L1 + w2 / 2,
            L2 + 0.8 if s > 0 else w1 / 2)
    start, goal = (0.0, u(rng, -0.2, 0.2)), (L1 + u(rng, -0.2, 0.2), s * L2)
    polys = carve([leg1, leg2], u(rng, 0.3, 0.6))
    boxes = []
    for _ in range(2 + rng.randrange(4)):
        size = (u(rng, 0.3, 0.7), u(rng, 0.3, 0.7))
        if rng.random() < 0.5:   # in the first leg, across its width
            c = (u(rng, 1.5, L1 - 1.0), u(rng, -w1 / 2, w1 / 2))
        else:
            c = (L1 + u(rng, -w2 / 2, w2 / 2), s * u(rng, w1 / 2 + 1.0, L2 - 1.0))
        boxes.append(rect(c[0], c[1], size[0], size[1], u(rng, -0.3, 0.3)))
    polys += boxes
    desc = ("Invented L-shaped service corridor (%.1f m then %.1f m, turning %s) with %d boxes "
            "left in it; the goal is round the corner." % (L1, L2, "left" if s > 0 else "right",
                                                            len(boxes)))
    return polys, start, [goal], desc, {}


def xy_box(x0, ya, x1, yb):
    """The rectangle between x0..x1 and ya, yb in either order."""
    return (x0, min(ya, yb), x1, max(ya, yb))


def fam_dead_end(rng):
    w = u(rng, 1.4, 2.0)
    xd = u(rng, 8, 12)                   # the straight branch ends here
    xj = u(rng, 0.3, 0.55) * xd          # the turn-off
    xe = xd + u(rng, 1.0, 2.5) + w / 2   # the way down to the goal, beyond the dead end
    h, s = u(rng, 3.0, 5.0), sign(rng)
    goal_room = (xe - w / 2, -w / 2 - 0.5, xe + w / 2 + u(rng, 1.0, 2.5), w / 2 + 0.5)
    rects = [(-0.8, -w / 2, xd, w / 2),                                # straight: dead end
             xy_box(xj - w / 2, 0, xj + w / 2, s * (h + w / 2)),       # the turn-off
             xy_box(xj - w / 2, s * (h - w / 2), xe + w / 2, s * (h + w / 2)),  # across
             xy_box(xe - w / 2, s * (h + w / 2), xe + w / 2, 0),       # down
             goal_room]
    stub = rng.random() < 0.5            # a second dead end on the other side
    if stub:
        xs = u(rng, 1.5, xd - 1.5)
        rects.append(xy_box(xs - w / 2, 0, xs + w / 2, -s * u(rng, 2.0, 4.0)))
    polys = carve(rects, u(rng, 0.3, 0.5))
    start = (0.0, u(rng, -0.2, 0.2))
    goal = (u(rng, xe, goal_room[2] - 0.6), u(rng, -0.3, 0.3))
    desc = ("Invented basement corridors: the straight corridor toward the goal is a dead end "
            "%.1f m long; the way on turns off %.1f m from the start and comes round%s."
            % (xd, xj, " (a second dead end on the other side)" if stub else ""))
    return polys, start, [goal], desc, {"dead_end": xd}


def fam_double_back(rng):
    L, W = u(rng, 12, 18), u(rng, 7, 10)
    start = (1.0, u(rng, -W / 2 + 1.0, W / 2 - 1.0))
    k = 3 + rng.randrange(3)
    wps = []
    for i in range(k):
        x = u(rng, L - 2.5, L - 1.0) if i % 2 == 0 else u(rng, 1.0, 2.5)
        wps.append((x, u(rng, -W / 2 + 1.0, W / 2 - 1.0)))
    n = 12 + rng.randrange(11)
    posts = scatter(rng, n, (2.0, -W / 2 + 0.4, L - 2.0, W / 2 - 0.4),
                    [(p, 0.9) for p in [start] + wps], post)
    polys = room(-0.5, -W / 2, L + 0.5, W / 2, 0.2) + posts
    desc = ("Invented storage hall with %d posts: a route of %d waypoints to and fro along the "
            "hall, so the robot turns round and drives back through space it has passed."
            % (len(posts), k))
    return polys, start, wps, desc, {}


def fam_cluttered_corridor(rng):
    W = 4.5
    start, goal = (0.0, u(rng, -1.0, 1.0)), (10.0, u(rng, -1.0, 1.0))
    n = 10 + rng.randrange(11)
    obs = scatter(rng, n, (1.2, -W / 2, 8.8, W / 2), [(start, 0.9), (goal, 0.9)], clutter,
                  gap=0.0)
    polys = room(-1.5, -W / 2, 11.5, W / 2, 0.2) + obs
    desc = ("Invented 4.5 m wide corridor cluttered with %d crates and columns, goal 10 m "
            "ahead, at 0.5 m/s." % len(obs))
    return polys, start, [goal], desc, {"v_max": 0.5}


FAMILIES = {
    "posts": fam_posts,
    "cul_de_sac": fam_cul_de_sac,
    "doorway": fam_doorway,
    "l_corridor": fam_l_corridor,
    "dead_end": fam_dead_end,
    "double_back": fam_double_back,
    "cluttered_corridor": fam_cluttered_corridor,
}

# ------------------------------------------------------------------ worlds


def r4(x):
    """Four decimals (0.1 mm): short files, and -0.0 written as 0."""
    v = round(x, 4)
    return 0.0 if v == 0 else v


def place(pts, a, tx, ty):
    c, s = math.cos(a), math.sin(a)
    return [(r4(c * x - s * y + tx), r4(s * x + c * y + ty)) for x, y in pts]


class World:
    """One drawn world, in the world frame: polygons, start pose, waypoints,
    the header's fields, and notes (the family's named features, moved
    into the world frame)."""

    def __init__(self, family, seed, index, slack=0.0):
        for attempt in range(ATTEMPTS):
            key = "%s:%d:%d:%d" % (family, seed, index, attempt)
            rng = random.Random(key + (":slack%r" % slack if slack else ""))
            if self._draw(family, rng, slack):
                self.attempts = attempt + 1
                return
        raise RuntimeError("%s: no reachable world in %d draws" % (family, ATTEMPTS))

    def _draw(self, family, rng, slack):
        polys, start, wps, desc, notes = FAMILIES[family](rng)
        a, tx, ty = u(rng, -math.pi, math.pi), u(rng, -20, 20), u(rng, -20, 20)
        self.polys = [place(p, a, tx, ty) for p in polys]
        (self.start,) = place([start], a, tx, ty)
        self.waypoints = place(wps, a, tx, ty)
        self.notes = {k: place(v, a, tx, ty) if isinstance(v, list) else v
                      for k, v in notes.items()}
        first = self.waypoints[0]
        self.yaw = r4(math.atan2(first[1] - self.start[1], first[0] - self.start[0]) +
                      u(rng, -math.radians(15), math.radians(15)))
        self.family, self.desc = family, desc
        self.robot = dict(ROBOT)
        if "v_max" in notes:
            self.robot["v_max"] = notes["v_max"]
        r, m = self.robot["radius"], self.robot["margin"]
        # the start clear of everything, waypoints reachable within tolerance
        if distance(self.start, self.polys) < r + m + max(0.15, slack + 0.05):
            return False
        if any(distance(w, self.polys) < r + m + slack + 0.05 for w in self.waypoints):
            return False
        if slack and check_route(self.polys, r, m + slack, self.start, self.waypoints) is None:
            return False
        self.shortest = check_route(self.polys, r, m, self.start, self.waypoints)
        return self.shortest is not None

    def header(self):
        v = self.robot["v_max"]
        return {
            "type": "scenario", "version": 1,
            "description": self.desc,
            "family": self.family,
            "robot": self.robot,
            "route": {"waypoints": [list(p) for p in self.waypoints], "tolerance": TOLERANCE},
            "start": [self.start[0], self.start[1], self.yaw],
            "world": {"polygons": [[list(p) for p in poly] for poly in self.polys]},
            "sensor": SENSOR,
            "expect": "done",
            "max_time": math.ceil(3 * self.shortest / v + 30),
            "shortest_path": round(self.shortest, 3),
        }


def text(header):
    return json.dumps(header, separators=(",", ":")) + "\n"


def generate(families, count, seed, out, log=None, slack=0.0):
    """Writes the worlds; their paths. log: a stream for each family's count
    of draws discarded as unreachable (or too close to an obstacle). slack:
    the check's extra growth (m), so that every passage is 2 slack wider than
    the robot with its margin."""
    os.makedirs(out, exist_ok=True)
    paths = []
    for fam in families:
        discarded = 0
        for i in range(count):
            path = os.path.join(out, "%s_%02d.jsonl" % (fam, i))
            w = World(fam, seed, i, slack)
            discarded += w.attempts - 1
            with open(path, "w", encoding="utf-8") as f:
                f.write(text(w.header()))
            paths.append(path)
        if log:
            print("worlds.py: %s: %d worlds, %d draws discarded" % (fam, count, discarded),
                  file=log)
    return paths


def check_file(path):
    """Shortest path through the route of a scenario file's header, None
    when unreachable. Raises ValueError on a file that is not a scenario."""
    with open(path, encoding="utf-8") as f:
        h = json.loads(f.readline())
    if h.get("type") != "scenario":
        raise ValueError("%s: not a scenario header" % path)
    robot = h.get("robot", {})
    polys = [[tuple(p) for p in poly] for poly in h["world"]["polygons"]]
    return check_route(polys, robot.get("radius", 0.3), robot.get("margin", 0.05),
                       tuple(h["start"][:2]), [tuple(p) for p in h["route"]["waypoints"]])


def main(argv):
    ap = argparse.ArgumentParser(description="Seeded families of invented worlds for "
                                 "`lacuna sim`, each checked reachable for the robot's size.")
    ap.add_argument("--family", help="one of %s, or all" % ", ".join(FAMILIES))
    ap.add_argument("--count", type=int, default=20, help="worlds per family (default 20)")
    ap.add_argument("--seed", type=int, default=1, help="seed (default 1)")
    ap.add_argument("--slack", type=float, default=0.0,
                    help="m: check reachability with obstacles grown by radius + margin + "
                    "SLACK, so that no passage is narrower than the robot with its margin "
                    "plus 2 SLACK (default 0; the shortest path is for radius + margin)")
    ap.add_argument("--out", help="directory to write the scenario files to")
    ap.add_argument("--check", nargs="+", metavar="FILE",
                    help="check scenario files instead: the shortest path, exit 1 when a "
                    "route cannot be driven")
    a = ap.parse_args(argv)
    if a.check:
        bad = 0
        for path in a.check:
            try:
                length = check_file(path)
            except (OSError, ValueError, KeyError, TypeError, IndexError) as e:
                print("worlds.py: %s: %s" % (path, e), file=sys.stderr)
                return 2
            print("%s: %s" % (path, "unreachable" if length is None
                              else "shortest path %.3f m" % length))
            bad += length is None
        return 1 if bad else 0
    if not a.family or not a.out:
        ap.error("--family and --out are needed (or --check FILE...)")
    if a.family != "all" and a.family not in FAMILIES:
        ap.error("--family: one of %s or all, not %s" % (", ".join(FAMILIES), a.family))
    if a.count < 1 or a.count > 1000:
        ap.error("--count: 1 to 1000, not %d" % a.count)
    if not 0 <= a.slack <= 1:
        ap.error("--slack: 0 to 1 m, not %g" % a.slack)
    if a.seed < 0:
        ap.error("--seed: a whole number >= 0, not %d" % a.seed)
    fams = list(FAMILIES) if a.family == "all" else [a.family]
    for p in generate(fams, a.count, a.seed, a.out, sys.stderr, a.slack):
        print(p)
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
