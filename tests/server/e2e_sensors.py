#!/usr/bin/python3
"""End to end: a robot with a front and a rear scanner through `lacuna serve --record`.

Usage: e2e_sensors.py LACUNA_EXE   (or env LACUNA_EXE). Exit 0 when every check
passes (77: skipped without python3-websockets).

- The robot describes two scanners (proto/client_example.py's SENSORS: front
  at +0.2 m, rear at -0.2 m facing back). Their frames come at 40 Hz and 20 Hz
  by their stamps (the front's j-th at j / 40, the rear's at j / 20; a tie
  sends the front first), each naming its scanner and carrying no mount. In a
  closed loop (the robot follows each setpoint until the next frame of either
  scanner), a point robot drives out along the example's corridor and back to
  its start without turning: the way back is seen by the rear scanner only.
  It arrives (route_done) without touching a wall.
- Every frame gets exactly one setpoint, echoing its seq.
- A frame naming a sensor the description does not list is still answered,
  and the server logs it once per connection and name.
- The recording replays with `lacuna replay`: every frame compared, 0
  mismatches; its header lists the two sensors; its frames keep their names
  and no mount.
- proto/client_example.py --rear (two scanners) drives its route to done.
- `lacuna sim --connect` of scenarios/cold_store_shuttle.jsonl (front and rear
  scanners, 25 and 12.5 Hz, 4 s of wall time) sends frames naming their
  scanner and a description listing both, and its recording replays exactly.
"""
import asyncio
import json
import math
import os
import subprocess
import sys
import tempfile

from serverlib import FIGURES, T, Server, check, finish, hello, recv, set_exe

EXE = set_exe(sys.argv)
HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, os.path.join(HERE, "..", "..", "proto"))
import client_example as example  # noqa: E402

RATES = {"front": 40.0, "rear": 20.0}
ROUTE = [[6.0, -0.4], [0.5, 0.0]]
FRAMES_MAX = 4000


def clearance(x, y):
    """Distance from (x, y) to the example scene's nearest wall, less the radius."""
    best = 1e9
    for ax, ay, bx, by in example.SCENE:
        ex, ey = bx - ax, by - ay
        t = max(0.0, min(1.0, ((x - ax) * ex + (y - ay) * ey) / (ex * ex + ey * ey)))
        best = min(best, math.hypot(x - ax - t * ex, y - ay - t * ey))
    return best - example.ROBOT["radius"]


def schedule():
    """(stamp, sensor) of every frame, in time order, the front first on a tie."""
    count = {name: 0 for name in RATES}
    while True:
        name = min(RATES, key=lambda n: (count[n] / RATES[n], n != "front"))
        yield count[name] / RATES[name], name
        count[name] += 1


async def setpoint_of(ws, seq, answers):
    """The setpoint answering seq (events and stale stops in between are kept aside)."""
    while True:
        m = await recv(ws)
        if m["type"] == "setpoint" and m["state"] != "stale":
            answers.append(m["seq"])
            if m["seq"] == seq:
                return m
        elif m["type"] == "error":
            check(False, "error from the server: %s" % m)


async def drive(srv):
    """The closed loop; returns (frames sent, setpoints' seqs, done, least clearance)."""
    ws, m = await hello(srv.url, "twin")
    check(m.get("type") == "welcome", "welcome: %s" % m)
    await ws.send(json.dumps(dict(example.ROBOT, sensors=example.SENSORS)))
    await ws.send(json.dumps({"type": "route", "waypoints": ROUTE, "tolerance": 0.25}))
    pose, answers, least, done = (0.0, 0.0, 0.0), [], 1e9, False
    frames = schedule()
    stamp, sensor = next(frames)
    seq = 0
    while seq < FRAMES_MAX and not done:
        seq += 1
        await ws.send(json.dumps(example.scan(example.SCENE, seq, stamp, pose, sensor)))
        sp = await setpoint_of(ws, seq, answers)
        done = sp["state"] == "done"
        stamp_next, sensor = next(frames)
        steps = max(1, int(math.ceil((stamp_next - stamp) / 0.005)))
        for _ in range(steps):  # 5 ms substeps, the clearance after each
            pose = example.drive(pose, sp, (stamp_next - stamp) / steps)
            least = min(least, clearance(pose[0], pose[1]))
        stamp = stamp_next
    # frames naming sensors the description does not list: answered, logged once each
    for name in ("roof", "roof", "bumper"):
        seq += 1
        await ws.send(json.dumps(example.scan(example.SCENE, seq, stamp, pose, None)
                                 | {"sensor": name}))
        await setpoint_of(ws, seq, answers)
        stamp += 0.025
    await ws.close()
    return seq, answers, done, least


def check_recording(path, frames, names):
    """The recording at path: the header lists front and rear, frames (all of
    them, when frames is not None) without a mount and of these names, and
    `lacuna replay` finds every frame's setpoint again."""
    with open(path) as f:
        lines = [json.loads(line) for line in f if line.strip()]
    listed = [s["name"] for s in lines[0].get("robot", {}).get("sensors", [])]
    check(listed == ["front", "rear"], "the recording's header lists the sensors: %s" % listed)
    scans = [m for m in lines if m["type"] == "scan"]
    if frames is None:
        frames = len(scans)
    check(len(scans) == frames, "the recording holds every frame (%d of %d)" % (len(scans), frames))
    check(all("mount" not in m for m in scans), "recorded frames carry no mount")
    named = {m.get("sensor") for m in scans}
    check(named == names, "recorded frames keep their names: %s"
          % sorted(n or "" for n in named))
    r = subprocess.run([EXE, "replay", path, "--json"], capture_output=True, text=True,
                       timeout=120)
    try:
        out = json.loads(r.stdout)
    except ValueError:
        out = {}
    check(r.returncode == 0 and out.get("mismatches") == 0 and out.get("compared") == frames,
          "replay of the recording: exit %d, %s %s" % (r.returncode, r.stdout.strip(),
                                                        r.stderr.strip()[-500:]))
    FIGURES.setdefault("replays", []).append(out)


def sim_connect(srv):
    """`lacuna sim --connect` with two scanners for 4 s: it runs (exit 0 or,
    not there yet, 1) and names its frames."""
    scen = os.path.join(HERE, "..", "..", "scenarios", "cold_store_shuttle.jsonl")
    r = subprocess.run([EXE, "sim", scen, "--connect", srv.url, "--name", "shuttle",
                        "--max-time", "4", "--json"], capture_output=True, text=True, timeout=120)
    try:
        out = json.loads(r.stdout)
    except ValueError:
        out = {}
    check(r.returncode in (0, 1) and out.get("collisions") == 0 and out.get("frames", 0) > 100,
          "sim --connect with two scanners: exit %d, %s %s"
          % (r.returncode, r.stdout.strip()[:300], r.stderr.strip()[-300:]))


async def main():
    with tempfile.TemporaryDirectory() as tmp:
        rec = os.path.join(tmp, "rec")
        srv = Server("--record", rec, "--log-level", "warn")
        try:
            frames, answers, done, least = await drive(srv)
            FIGURES.update(frames=frames, least_clearance_m=round(least, 3))
            check(done, "the two-scanner robot drove its route out and back (%d frames)" % frames)
            check(least > 0, "never closer to a wall than its radius (%.3f m)" % least)
            check(sorted(answers) == list(range(1, frames + 1)),
                  "one setpoint per frame: %d setpoints for %d frames" % (len(answers), frames))
            for name in ("roof", "bumper"):  # the log is read by a thread: it may lag
                await srv.logged("names sensor '%s'" % name)
            log = srv.log()
            for name in ("roof", "bumper"):
                n = log.count("names sensor '%s'" % name)
                check(n == 1, "frames naming unlisted sensor %s logged once (%d)" % (name, n))
            check("'front'" not in log and "'rear'" not in log, "listed sensors are not logged")
            r = subprocess.run([sys.executable, os.path.join(HERE, "..", "..", "proto",
                                                             "client_example.py"),
                                "--url", srv.url, "--rear", "--quiet", "--name", "rear-example"],
                               capture_output=True, text=True, timeout=120)
            check(r.returncode == 0, "client_example.py --rear: exit %d, %r %r"
                  % (r.returncode, r.stdout[-300:], r.stderr[-300:]))
            sim_connect(srv)
        finally:
            check(srv.stop() == 0, "server exits 0 on SIGTERM")
        for robot, count, names in (("twin", frames, {"front", "rear", "roof", "bumper"}),
                                    ("shuttle", None, {"front", "rear"})):
            files = sorted(f for f in os.listdir(rec) if f.startswith(robot + "-"))
            check(len(files) == 1, "one recording of %s (%s)" % (robot, files))
            if files:
                check_recording(os.path.join(rec, files[0]), count, names)
    return finish("e2e_sensors")


if __name__ == "__main__":
    sys.exit(asyncio.run(asyncio.wait_for(main(), 300)))
