#!/usr/bin/env python3
"""A robot client for `lacuna serve`: the integrator's starting point.

It connects to ws://HOST:PORT/ with the subprotocol lacuna.v2, says hello
(with the robot token when the server wants one), describes the robot,
sends a route, then streams laser scans of a tiny built-in scene (an
invented corridor with one pillar) and drives a simulated point robot with
the setpoints it gets back, printing each one, and the warnings the server
sends about what it was sent. Every setpoint may be followed for its
valid_ms and no longer: when no newer one has come by then (a slow server,
a link that died without closing), the robot stops itself, which is what a
real robot must do. With --rear the robot has two
scanners, front and rear: its description lists them, and every frame names
the scanner it comes from (every third one the rear one's), each answered by
its own setpoint. A real robot replaces
`scan()` with its scanner and `drive()` with its motor interface, and
keeps its own safety-rated protective stop: lacuna is not a safety-rated
component (see `lacuna serve --help`).

    lacuna serve &
    python3 proto/client_example.py --url ws://127.0.0.1:7640/ [--token-file FILE] [--rear]

Needs python3-websockets (Debian package). Exit 0 when the route is done.
"""
import argparse
import asyncio
import json
import math
import sys

import websockets

# The scene: walls as segments (x0, y0, x1, y1), world frame, metres.
def box(x0, y0, x1, y1):
    c = [(x0, y0), (x1, y0), (x1, y1), (x0, y1)]
    return [(*c[i], *c[(i + 1) % 4]) for i in range(4)]


SCENE = box(-1.0, -1.7, 8.0, -1.5) + box(-1.0, 1.5, 8.0, 1.7) + box(2.6, 0.1, 3.0, 0.5)
ROUTE = [[6.0, 0.0]]
ROBOT = {"type": "robot", "model": "point", "radius": 0.3, "margin": 0.05, "v_max": 0.8,
         "a_max": 0.8}
BEAMS, FOV, RANGE_MAX, PERIOD = 121, 1.5 * math.pi, 8.0, 0.05  # beams, rad, m, s
# --rear: the robot's two scanners, each in the robot frame [x, y, yaw]; a
# frame names its scanner and the server takes the mount from here.
SENSORS = [{"name": "front", "kind": "scan", "mount": [0.2, 0.0, 0.0]},
           {"name": "rear", "kind": "scan", "mount": [-0.2, 0.0, math.pi]}]


def ray(segments, px, py, ang, rmax):
    """Distance to the first segment hit along the ray, or None (no return)."""
    dx, dy = math.cos(ang), math.sin(ang)
    best = None
    for ax, ay, bx, by in segments:
        ex, ey = bx - ax, by - ay
        den = dx * ey - dy * ex
        if abs(den) < 1e-12:
            continue
        t = ((ax - px) * ey - (ay - py) * ex) / den
        u = ((ax - px) * dy - (ay - py) * dx) / den
        if t > 0 and 0 <= u <= 1 and (best is None or t < best):
            best = t
    return best if best is not None and best <= rmax else None


STOP = {"vx": 0.0, "vy": 0.0}
LINK_LOST_S = 10.0  # s stopped without any message: give up


def scan(segments, seq, stamp, pose, sensor=None):
    """A scan message as the robot's scanner would send it: from the robot's
    centre, or from the scanner of SENSORS named sensor (the frame names it)."""
    mx, my, myaw = next(s["mount"] for s in SENSORS if s["name"] == sensor) if sensor \
        else (0.0, 0.0, 0.0)
    c, s = math.cos(pose[2]), math.sin(pose[2])
    ox, oy, oyaw = pose[0] + c * mx - s * my, pose[1] + s * mx + c * my, pose[2] + myaw
    a0, step = -FOV / 2, FOV / (BEAMS - 1)
    m = {"type": "scan", "seq": seq, "stamp": stamp, "pose": list(pose),
         "bearing_first": a0, "bearing_step": step, "near": 0.05, "far": RANGE_MAX,
         "dist": [ray(segments, ox, oy, oyaw + a0 + i * step, RANGE_MAX)
                  for i in range(BEAMS)]}
    if sensor:
        m["sensor"] = sensor
    return m


def drive(pose, sp, dt):
    """Integrate a point-model setpoint (vx, vy in the robot frame) for dt."""
    x, y, yaw = pose
    c, s = math.cos(yaw), math.sin(yaw)
    return (x + (c * sp["vx"] - s * sp["vy"]) * dt, y + (s * sp["vx"] + c * sp["vy"]) * dt, yaw)


class Hold:
    """The setpoint the robot follows and until when (the robot's own clock):
    a setpoint's valid_ms from when it came; past that the robot stops."""

    def __init__(self):
        self.sp, self.until = STOP, None

    def take(self, m, now):
        self.sp, self.until = m, now + m["valid_ms"] / 1000.0

    def left(self, now):
        """s until the setpoint runs out; None when the robot stands already."""
        return None if self.until is None else self.until - now

    def expire(self):
        self.sp, self.until = STOP, None


async def answer(ws, seq, hold):
    """Messages until the setpoint of frame seq; the robot stops itself when
    the one it follows runs out meanwhile. None when the link is lost."""
    loop = asyncio.get_running_loop()
    while True:
        left = hold.left(loop.time())
        try:
            m = json.loads(await asyncio.wait_for(
                ws.recv(), LINK_LOST_S if left is None else max(left, 0.0)))
        except asyncio.TimeoutError:
            if left is None:
                return None
            print("setpoint %s expired (valid_ms %d): the robot stops itself"
                  % (hold.sp["seq"], hold.sp["valid_ms"]))
            hold.expire()
            continue
        if m["type"] == "error":
            print("error:", m, file=sys.stderr)
        elif m["type"] == "warning":
            print("warning %s: %s" % (m["code"], m["message"]))
        elif m["type"] == "event":  # after its frame's setpoint: read while awaiting the next
            print("event %s waypoint %s" % (m["event"], m["waypoint"]))
        elif m["type"] == "setpoint":
            hold.take(m, loop.time())
            if m["seq"] == seq:
                return m


async def run(url, name, token, frames, quiet, rear=False):
    async with websockets.connect(url, subprotocols=["lacuna.v2"], max_size=None) as ws:
        hello = {"type": "hello", "role": "robot", "robot": name}
        if token:
            hello["token"] = token
        await ws.send(json.dumps(hello))
        welcome = json.loads(await ws.recv())
        if welcome["type"] != "welcome":
            print("refused:", welcome, file=sys.stderr)
            return 1
        await ws.send(json.dumps(dict(ROBOT, sensors=SENSORS) if rear else ROBOT))
        await ws.send(json.dumps({"type": "route", "waypoints": ROUTE, "tolerance": 0.25}))
        pose = (0.0, 0.0, 0.0)
        hold = Hold()
        for seq in range(1, frames + 1):
            sensor = ("rear" if seq % 3 == 0 else "front") if rear else None
            await ws.send(json.dumps(scan(SCENE, seq, seq * PERIOD, pose, sensor)))
            m = await answer(ws, seq, hold)
            if m is None:
                print("no message for %g s: link lost" % LINK_LOST_S, file=sys.stderr)
                return 1
            if not quiet:
                print("seq %d pose (%.2f, %.2f) setpoint vx %.3f vy %.3f state %s limit %s "
                      "valid %d ms" % (seq, pose[0], pose[1], m["vx"], m["vy"], m["state"],
                                       m["limit"], m["valid_ms"]), flush=True)
            pose = drive(pose, hold.sp, PERIOD)
            if m["state"] == "done":
                print("route done after %d frames at (%.2f, %.2f)" % (seq, pose[0], pose[1]))
                return 0
        print("route not done after %d frames" % frames, file=sys.stderr)
        return 1


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--url", default="ws://127.0.0.1:7640/")
    ap.add_argument("--name", default="example-rover")
    ap.add_argument("--token-file", help="file holding the robot token")
    ap.add_argument("--frames", type=int, default=600)
    ap.add_argument("--quiet", action="store_true", help="print events and the end only")
    ap.add_argument("--rear", action="store_true", help="a front and a rear scanner")
    a = ap.parse_args()
    token = open(a.token_file).read().strip() if a.token_file else None
    return asyncio.run(run(a.url, a.name, token, a.frames, a.quiet, a.rear))


if __name__ == "__main__":
    sys.exit(main())
