#!/usr/bin/python3
"""End to end: robot sessions that survive a dropped link, through `lacuna serve`.

Usage: e2e_resume.py LACUNA_EXE   (or env LACUNA_EXE). Exit 0 when every check
passes (77: skipped without python3-websockets).

- Within the grace period: a point robot drives its route in a closed loop
  (the pose follows each setpoint) past its first waypoint and up to speed;
  its link closes; a hello under the same name is welcomed with
  "resumed": true, and the next frame, sent without description or route,
  is answered on the same waypoint, tracking, at the speed it had (within one
  period's acceleration). The session's recording is one file and replays
  with 0 mismatches across the reconnect.
- After the grace period: the same, but the hello comes late: "resumed":
  false, and the next frame is answered idle (no route) at rest.
- A viewer sees the link go down and come back (view "link"); the views it
  gets, one with the remembered cells among them, and the welcomes validate
  against proto/schema (python3-jsonschema; not checked without it).
- A half-dead link: a robot that stops reading and writing without closing.
  Its name is refused (name_taken) while the link is still taken to be
  alive, then free within the link timeout (3 s by default), and the hello
  that gets it resumes the session; the log says why the link was closed.
- A live but quiet robot (python3-websockets answers the server's pings by
  itself) is not closed by the link timeout.
- With a robot token, a hello that proves it takes a live name over at once
  (resumed); the old link gets name_taken and is closed.
"""
import asyncio
import json
import os
import subprocess
import sys
import tempfile
import time

from serverlib import (FIGURES, SLOW, T, RawWS, Server, check, far_scan, finish, hello,
                       hello_again, recv, recv_type, set_exe)
import websockets  # noqa: E402 - serverlib exits 77 first when it is missing

EXE = set_exe(sys.argv)
HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, os.path.join(HERE, "..", "proto"))
DT = 0.05          # s between frame stamps
GRACE_MS = 2000    # the servers' grace period here: short, so waiting past it is quick
# far_scan's arc of returns 6 m ahead moves with the robot: the route stays inside it
ROUTE = {"type": "route", "waypoints": [[0.1, 0.0], [4.5, 0.0], [0.1, 0.5]], "loop": True,
         "tolerance": 0.25}
BEAMS = 301
ROBOT = {"type": "robot", "model": "point", "radius": 0.25, "v_max": 0.7, "a_max": 0.5}
SLACK = 10.0 if SLOW else 1.0  # s beyond a bound the server promises (timer, loop, this script)


class Robot:
    """A point robot in open space, its pose following the setpoints it gets."""

    def __init__(self):
        self.x, self.seq = 0.0, 0

    async def step(self, ws):
        """One frame; (setpoint, events before and after it)."""
        self.seq += 1
        frame = far_scan(self.seq, self.seq * DT, beams=BEAMS)
        frame["pose"] = [self.x, 0.0, 0.0]
        await ws.send(json.dumps(frame))
        events = []
        self.warnings = []
        while True:
            m = await recv(ws)
            if m["type"] == "setpoint" and m["seq"] == self.seq:
                break
            if m["type"] == "warning":
                self.warnings.append(m)
                continue
            check(m["type"] in ("event", "setpoint"), "only setpoints and events: %s" % m)
            events.append(m)
        self.x += m["vx"] * DT
        return m, events

    async def drive(self, ws, frames):
        m = None
        for _ in range(frames):
            m, _ = await self.step(ws)
        return m


async def start(url, name, token=None):
    ws, w = await hello(url, name, token=token)
    check(w.get("type") == "welcome" and w.get("resumed") is False,
          "%s: a first hello is welcomed, not resumed: %s" % (name, w))
    check(w.get("grace_ms") == GRACE_MS and w.get("link_timeout_ms") == 3000,
          "%s: the welcome states grace_ms and link_timeout_ms: %s" % (name, w))
    await ws.send(json.dumps(ROBOT))
    await ws.send(json.dumps(ROUTE))
    return ws


def schema_check(messages):
    """Every message valid against the schema of its type (welcome, view)."""
    try:
        import check_schemas as cs
    except SystemExit:  # python3-jsonschema missing: it exits 77
        print("python3-jsonschema missing: views not checked against the schema", flush=True)
        return
    root = os.path.join(HERE, "..", "..", "proto", "schema")
    schemas = {f[:-5]: cs.load(os.path.join(root, f)) for f in os.listdir(root) if f.endswith(".json")}
    validators = cs.make_validators(schemas)
    for m in messages:
        errors = [e.message for e in validators[m["type"]].iter_errors(m)]
        check(not errors, "%s valid against proto/schema/%s.json: %s"
              % (m["type"], m["type"], errors[:3]))
    check(any("memory" in m for m in messages), "a view with the remembered cells was checked")


async def test_within_grace(srv, rec):
    bot = Robot()
    viewer, _ = await hello(srv.url, "rover", role="viewer")
    ws = await start(srv.url, "rover")
    before = await bot.drive(ws, 40)
    check(before["waypoint"] == 1 and before["state"] == "tracking" and before["vx"] > 0.5,
          "before the drop: waypoint 1, tracking, %.3f m/s" % before["vx"])
    await ws.close()
    t0 = time.monotonic()
    down = await wait_view(viewer, lambda v: v.get("link") == "down")
    check(down is not None, "the viewer sees the link go down")
    ws, w = await hello(srv.url, "rover")
    gap = time.monotonic() - t0
    check(w.get("type") == "welcome" and w.get("resumed") is True,
          "a hello within the grace period resumes the session: %s" % w)
    after, events = await bot.step(ws)  # no description, no route
    check(after["waypoint"] == 1 and after["state"] == "tracking",
          "resumed on the same waypoint, tracking: %s" % after)
    drop = before["vx"] - after["vx"]
    check(drop <= ROBOT["a_max"] * DT + 1e-6,
          "resumed at its speed: %.3f m/s, then %.3f m/s" % (before["vx"], after["vx"]))
    check(after["vx"] <= ROBOT["v_max"] + 1e-9, "the description's v_max holds: %.3f" % after["vx"])
    up = await wait_view(viewer, lambda v: v.get("link") == "up")
    check(up is not None and up.get("radius") == ROBOT["radius"],
          "the viewer sees the link up again, the description kept: %s"
          % (up and up.get("radius")))
    await bot.drive(ws, 10)
    frames = bot.seq
    views = [await wait_view(viewer, lambda v: v.get("pose") is not None)]
    views.append(await wait_view(viewer, lambda v: "memory" in v))
    schema_check([w] + [v for v in views if v])
    await ws.close()
    await viewer.close()
    FIGURES["within_grace"] = {"reconnect_s": round(gap, 3), "speed_before": before["vx"],
                               "speed_after": after["vx"]}
    return frames


async def wait_view(viewer, pred, timeout=T):
    """The first view of rover that pred accepts, or None."""
    end = time.monotonic() + timeout
    try:
        while time.monotonic() < end:
            v = await recv_type(viewer, "view", max(0.01, end - time.monotonic()))
            if v.get("robot") == "rover" and pred(v):
                return v
    except asyncio.TimeoutError:
        pass
    return None


def replay_recording(rec, name, frames):
    files = sorted(f for f in os.listdir(rec) if f.startswith(name + "-"))
    check(len(files) == 1, "one recording of %s across the reconnect: %s" % (name, files))
    if not files:
        return
    r = subprocess.run([EXE, "replay", os.path.join(rec, files[0]), "--json"],
                       capture_output=True, text=True, timeout=120)
    try:
        out = json.loads(r.stdout)
    except ValueError:
        out = {}
    check(r.returncode == 0 and out.get("mismatches") == 0 and out.get("compared") == frames,
          "the resumed session's recording replays exactly: exit %d, %s %s"
          % (r.returncode, r.stdout.strip(), r.stderr.strip()[-300:]))
    FIGURES["replay"] = out


async def test_after_grace(srv):
    bot = Robot()
    ws = await start(srv.url, "late")
    await bot.drive(ws, 20)
    await ws.close()
    await srv.logged("robot late did not come back within %d ms" % GRACE_MS,
                     GRACE_MS / 1000.0 + SLACK + T)
    ws, w = await hello(srv.url, "late")
    check(w.get("resumed") is False, "a hello after the grace period starts anew: %s" % w)
    m, _ = await bot.step(ws)
    check(m["state"] == "idle" and m["vx"] == 0 and m["waypoint"] is None,
          "the new session has no route and stands: %s" % m)
    check([w["code"] for w in bot.warnings] == ["no_route"],
          "and the robot hears that it has no route: %s" % bot.warnings)
    await ws.close()


def raw_robot_driving(port, name, token=None):
    """A raw-socket robot (it answers no ping) that says hello, sends its
    description and route and five frames, reading the answers."""
    raw = RawWS(port)
    h = {"type": "hello", "role": "robot", "robot": name}
    if token:
        h["token"] = token
    raw.send(json.dumps(h))
    op, data = raw.recv_message()
    check(op == 1 and json.loads(data).get("type") == "welcome", "%s welcomed" % name)
    raw.send(json.dumps(ROBOT))
    raw.send(json.dumps(ROUTE))
    for k in range(1, 6):
        raw.send(json.dumps(far_scan(k, k * DT)))
        while True:
            op, data = raw.recv_message()
            if op == 1 and json.loads(data).get("type") == "setpoint":
                break
    return raw


async def test_half_dead(srv):
    """Stops reading and writing without closing: the name is free within the link timeout."""
    raw = raw_robot_driving(srv.port, "mute")
    t0 = time.monotonic()
    ws, m = await hello(srv.url, "mute")
    check(m.get("code") == "name_taken" and "3000 ms" in m.get("message", ""),
          "while the silent link is alive, the name is taken (and the error says for how long "
          "at most): %s" % m)
    if ws:
        await ws.close()
    ws, m = await hello_again(srv.url, "mute", timeout=3.0 + SLACK + T)
    freed = time.monotonic() - t0
    check(m.get("type") == "welcome" and m.get("resumed") is True,
          "the name comes free and the hello resumes the session: %s" % m)
    check(freed <= 3.0 + SLACK, "the silent link let the name go within the link timeout "
          "(3 s): %.2f s" % freed)
    check(await srv.logged("robot mute: nothing heard for 3000 ms"), "the log says why")
    FIGURES["half_dead_name_free_s"] = round(freed, 2)
    if ws:
        await ws.close()
    raw.close()


async def test_quiet_but_alive(srv):
    """A robot that sends nothing for twice the link timeout but answers pings stays."""
    ws, w = await hello(srv.url, "quiet")
    await asyncio.sleep(6.0)  # the point: silence longer than the link timeout
    try:
        await ws.send(json.dumps(far_scan(1, 0.0)))
        m = await recv_type(ws, "setpoint")
        check(m["seq"] == 1, "the quiet robot's frame is answered: %s" % m)
    except (websockets.ConnectionClosed, asyncio.TimeoutError) as e:
        check(False, "a quiet robot that answers pings keeps its link over 6 s: %r" % e)
    await ws.close()


async def test_token_takeover(tmp):
    token = "lantern-quay-42"
    path = os.path.join(tmp, "token")
    with open(path, "w") as f:
        f.write(token + "\n")
    srv = Server("--token-file", path, "--grace-ms", str(GRACE_MS), "--log-level", "info")
    try:
        raw = raw_robot_driving(srv.port, "relay", token=token)
        t0 = time.monotonic()
        ws, m = await hello(srv.url, "relay", token="lantern-quay-41")
        check(m.get("code") == "unauthorized", "a wrong token takes nothing over: %s" % m)
        ws, m = await hello(srv.url, "relay", token=token)
        took = time.monotonic() - t0
        check(m.get("type") == "welcome" and m.get("resumed") is True,
              "the token takes the live name over at once, resumed: %s" % m)
        op, data = raw.recv_message()
        while op == 1 and json.loads(data).get("type") == "setpoint":
            op, data = raw.recv_message()
        old = json.loads(data) if op == 1 else {}
        check(old.get("code") == "name_taken", "the old link is told: %s" % old)
        op, data = raw.recv_message()
        check(op in (8, None), "then closed (opcode %s)" % op)
        bot = Robot()
        bot.seq = 5
        sp, _ = await bot.step(ws)
        check(sp["waypoint"] == 1 and sp["state"] == "tracking",
              "the route goes on on the new link: %s" % sp)
        FIGURES["token_takeover_s"] = round(took, 3)
        await ws.close()
        raw.close()
    finally:
        check(srv.stop() == 0, "token server exits 0")


async def main():
    with tempfile.TemporaryDirectory() as tmp:
        rec = os.path.join(tmp, "rec")
        srv = Server("--record", rec, "--grace-ms", str(GRACE_MS), "--log-level", "info")
        try:
            frames = await test_within_grace(srv, rec)
            await test_after_grace(srv)
            await test_half_dead(srv)
            await test_quiet_but_alive(srv)
        finally:
            check(srv.stop() == 0, "server exits 0 on SIGTERM")
        replay_recording(rec, "rover", frames)
        await test_token_takeover(tmp)
    return finish("e2e_resume")


if __name__ == "__main__":
    sys.exit(asyncio.run(asyncio.wait_for(main(), 300)))
