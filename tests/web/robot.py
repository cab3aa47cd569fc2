#!/usr/bin/env python3
"""Test robot for the browser check (tests/web/run.sh): drives `lacuna serve`.

A unicycle robot patrols a loop around two pillars in an invented room
(walls as segments, world frame, metres). It ray-casts its own scans, sends
them at 20 Hz with the robot's pose, and integrates the setpoints it gets
back. When the server goes away (the test restarts it) the robot keeps
trying to reconnect every 0.3 s and starts again where it stood, so the
viewer page has a live patrol again after the restart.

    robot.py --url ws://127.0.0.1:PORT/ [--name NAME] [--start X,Y,YAW]

Needs python3-websockets (Debian package). Runs until killed.
"""
import argparse
import asyncio
import json
import math
import sys

import websockets


def box(x0, y0, x1, y1):
    c = [(x0, y0), (x1, y0), (x1, y1), (x0, y1)]
    return [(*c[i], *c[(i + 1) % 4]) for i in range(4)]


# Invented room: outer walls 0..10 x 0..8, two pillars inside the loop.
SCENE = (box(-0.2, -0.2, 10.2, 0.0) + box(-0.2, 8.0, 10.2, 8.2) + box(-0.2, 0.0, 0.0, 8.0)
         + box(10.0, 0.0, 10.2, 8.0) + box(3.6, 3.4, 4.4, 4.6) + box(6.0, 3.0, 6.6, 5.0))
ROUTE = [[1.8, 1.8], [8.2, 1.8], [8.2, 6.2], [1.8, 6.2]]
ROBOT = {"type": "robot", "model": "unicycle", "radius": 0.3, "margin": 0.05,
         "v_max": 0.8, "a_max": 0.8, "w_max": 1.5, "dw_max": 3.0}
BEAMS, FOV, RANGE_MAX, PERIOD = 91, 1.5 * math.pi, 6.0, 0.05  # -, rad, m, s


def ray(px, py, ang, rmax):
    """Distance to the first wall hit along the ray, or None (no return)."""
    dx, dy = math.cos(ang), math.sin(ang)
    best = None
    for ax, ay, bx, by in SCENE:
        ex, ey = bx - ax, by - ay
        den = dx * ey - dy * ex
        if abs(den) < 1e-12:
            continue
        t = ((ax - px) * ey - (ay - py) * ex) / den
        u = ((ax - px) * dy - (ay - py) * dx) / den
        if t > 0 and 0 <= u <= 1 and (best is None or t < best):
            best = t
    return best if best is not None and best <= rmax else None


def scan(seq, stamp, pose):
    a0, step = -FOV / 2, FOV / (BEAMS - 1)
    return {"type": "scan", "seq": seq, "stamp": stamp, "pose": list(pose),
            "angle_start": a0, "angle_step": step, "range_min": 0.05,
            "range_max": RANGE_MAX,
            "ranges": [ray(pose[0], pose[1], pose[2] + a0 + i * step, RANGE_MAX)
                       for i in range(BEAMS)]}


def drive(pose, sp, dt):
    x, y, yaw = pose
    v, w = sp.get("v") or 0.0, sp.get("w") or 0.0
    return (x + v * math.cos(yaw) * dt, y + v * math.sin(yaw) * dt, yaw + w * dt)


async def session(url, name, state):
    async with websockets.connect(url, subprotocols=["lacuna.v1"], max_size=None,
                                  open_timeout=2) as ws:
        await ws.send(json.dumps({"type": "hello", "role": "robot", "robot": name}))
        welcome = json.loads(await ws.recv())
        if welcome.get("type") != "welcome":
            print("robot.py: refused:", welcome, file=sys.stderr)
            return
        await ws.send(json.dumps(ROBOT))
        await ws.send(json.dumps({"type": "route", "waypoints": ROUTE, "loop": True,
                                  "tolerance": 0.35, "on_blocked": "skip"}))
        loop = asyncio.get_running_loop()
        while True:
            t0 = loop.time()
            state["seq"] += 1
            seq = state["seq"]
            await ws.send(json.dumps(scan(seq, seq * PERIOD, state["pose"])))
            while True:
                m = json.loads(await ws.recv())
                if m.get("type") == "setpoint" and m.get("seq") == seq:
                    break
            state["pose"] = drive(state["pose"], m, PERIOD)
            await asyncio.sleep(max(0.0, PERIOD - (loop.time() - t0)))


async def run(url, name, start):
    state = {"seq": 0, "pose": start}
    while True:
        try:
            await session(url, name, state)
        except (OSError, asyncio.TimeoutError, websockets.exceptions.WebSocketException):
            pass
        await asyncio.sleep(0.3)


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--url", required=True)
    ap.add_argument("--name", default="test-rover")
    ap.add_argument("--start", default="1.8,1.8,0")
    a = ap.parse_args()
    start = tuple(float(v) for v in a.start.split(","))
    try:
        asyncio.run(run(a.url, a.name, start))
    except KeyboardInterrupt:
        pass
    return 0


if __name__ == "__main__":
    sys.exit(main())
