#!/usr/bin/env python3
"""End to end: `lacuna sim --connect` driving a real `lacuna serve`, and the demo.

    e2e_connect.py LACUNA_EXE SOURCE_ROOT

Servers listen on 127.0.0.1 port 0 (a free port, read back from the log),
so the test runs beside others. Checks:
- a patrol planned by the server over the protocol finishes without a
  collision, --laps 2 drives the route twice (the robot starts over and the
  route is sent again), and the outcome matches the same run planned locally;
- a server with a robot token refuses a sim without it (exit 1, the
  server's `unauthorized` in the reason) and takes it with --token-file;
- no server: exit 1 with a one-line reason; bad usage: exit 2;
- SIGINT ends a --laps 0 run at once with the metrics so far (outcome
  "interrupted", exit 1);
- the README's demo script: prints the viewer URL, a viewer connected to it
  sees both demo robots in view messages, and it stops by itself
  (LACUNA_DEMO_SECONDS) with exit 0 and no process left behind.
Needs python3-websockets (Debian); exit 77 (skipped) without it.
"""
import asyncio
import json
import os
import re
import signal
import socket
import subprocess
import sys
import tempfile
import time

try:
    import websockets
except ImportError:
    print("python3-websockets missing: skipped")
    sys.exit(77)

EXE, ROOT = sys.argv[1], sys.argv[2]
failures = []


def check(ok, what):
    print(("ok   " if ok else "FAIL ") + what)
    if not ok:
        failures.append(what)


def wait_for(pred, timeout):
    """Poll pred() until it holds or timeout s pass; returns its last value.
    Every wait of this script is one of these, on a condition."""
    end = time.monotonic() + timeout
    while True:
        v = pred()
        if v or time.monotonic() > end:
            return v
        time.sleep(0.05)  # the poll interval of this wait


def box(x0, y0, x1, y1):
    return [[x0, y0], [x1, y0], [x1, y1], [x0, y1]]


# An invented loading bay: a 7 m corridor, 2.4 m wide, a crate on one side.
SCENARIO = {
    "type": "scenario", "version": 1,
    "description": "test corridor: one waypoint 3 m ahead, a crate beside the way",
    "robot": {"model": "point", "radius": 0.25, "margin": 0.05, "v_max": 1.0, "a_max": 1.0},
    "route": {"waypoints": [[3.0, 0.0]], "loop": False, "tolerance": 0.25},
    "start": [0.0, 0.0, 0.0],
    "world": {"polygons": [box(-1.0, -1.4, 6.0, -1.2), box(-1.0, 1.2, 6.0, 1.4),
                           box(-1.2, -1.4, -1.0, 1.4), box(1.5, 0.6, 2.0, 1.2)]},
    "sensor": {"beams": 181, "fov": 6.2, "near": 0.05, "far": 8.0, "rate": 20,
               "noise": 0.005, "mount": [0, 0, 0]},
    "expect": "done", "max_time": 30,
}


class Server:
    def __init__(self, tmp, *args):
        self.log = open(os.path.join(tmp, "serve-%d.log" % time.monotonic_ns()), "w+")
        self.proc = subprocess.Popen([EXE, "serve", "--listen", "127.0.0.1:0", *args],
                                     stdout=subprocess.DEVNULL, stderr=self.log)
        self.port = wait_for(self.listening, 15.0)
        assert self.port, "the server did not start"
        self.url = "ws://127.0.0.1:%d/" % self.port

    def listening(self):
        """The port of the server's "listening on" line, None before it."""
        self.log.seek(0)
        m = re.search(r"listening on http://127\.0\.0\.1:(\d+)/", self.log.read())
        return int(m.group(1)) if m else None

    def stop(self):
        self.proc.send_signal(signal.SIGTERM)
        return self.proc.wait(10)


def sim(scenario, *args, timeout=60):
    p = subprocess.run([EXE, "sim", scenario, "--json", *args], capture_output=True, text=True,
                       timeout=timeout)
    try:
        out = json.loads(p.stdout) if p.stdout.strip() else None
    except ValueError:
        out = None
    return p.returncode, out, p.stderr


def one_line(text):
    return len(text.strip().splitlines()) == 1


def test_patrol(tmp, scen):
    srv = Server(tmp)
    rc, out, err = sim(scen, "--connect", srv.url, "--laps", "2")
    check(rc == 0 and out is not None, "sim --connect --laps 2: exit 0 (%s %s)" % (rc, err.strip()))
    if out:
        check(out["done"] and out["collisions"] == 0, "route done without a collision")
        check(out["laps"] == 2 and out["waypoints_reached"] == 2,
              "two laps, the waypoint reached in each (%s, %s)"
              % (out["laps"], out["waypoints_reached"]))
        check("round_trip_us" in out and out["round_trip_us"]["median"] > 0,
              "round trip reported")
    rc1, one, _ = sim(scen, "--connect", srv.url)
    rcl, local, _ = sim(scen)
    check(rc1 == 0 and rcl == 0, "one lap over the server and locally: exit 0 (%s, %s)"
          % (rc1, rcl))
    if one and local:
        # Planned by the same session step; frames on a busy machine may
        # come late (stale stops), so the paths agree to a tolerance only.
        check(one["done"] == local["done"] and one["waypoints_reached"] == local["waypoints_reached"],
              "the served run ends as the local run does")
        check(abs(one["path_length"] - local["path_length"]) < 0.3,
              "path length served %.3f m, local %.3f m" % (one["path_length"], local["path_length"]))
    check(srv.stop() == 0, "server stops with exit 0")


def test_token(tmp, scen):
    tok = os.path.join(tmp, "robot.token")
    with open(tok, "w") as f:
        f.write("quarry-gate-51\n")
    srv = Server(tmp, "--token-file", tok)
    rc, _, err = sim(scen, "--connect", srv.url)
    check(rc == 1 and "unauthorized" in err and one_line(err),
          "no token: exit 1 naming unauthorized (%s: %s)" % (rc, err.strip()))
    rc, out, err = sim(scen, "--connect", srv.url, "--token-file", tok, "--name", "bay-7")
    check(rc == 0 and out and out["done"], "right token: done (%s %s)" % (rc, err.strip()))
    srv.stop()


def test_errors(tmp, scen):
    srv = Server(tmp)
    port = srv.port
    srv.stop()
    rc, _, err = sim(scen, "--connect", "ws://127.0.0.1:%d/" % port, "--timeout", "1")
    check(rc == 1 and one_line(err) and "127.0.0.1" in err,
          "no server: exit 1, one line (%s: %s)" % (rc, err.strip()))
    for args, what in ((["--connect", "http://x/"], "--connect"),
                       (["--connect", "ws://127.0.0.1:1/", "--out", os.path.join(tmp, "o")], "--out"),
                       (["--connect", "ws://127.0.0.1:1/", "--name", "two words"], "--name"),
                       (["--laps", "3"], "--laps"),
                       (["--connect", "ws://127.0.0.1:1/", "--laps", "-1"], "--laps")):
        rc, _, err = sim(scen, *args)
        check(rc == 2 and what in err and one_line(err),
              "usage %s: exit 2 naming %s (%s: %s)" % (" ".join(args), what, rc, err.strip()))


def test_interrupt(tmp, scen):
    srv = Server(tmp)
    p = subprocess.Popen([EXE, "sim", scen, "--json", "--connect", srv.url, "--laps", "0"],
                         stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    # under way: the server has planned frame 15 (seq from 0), so the sim has
    # more than 10 frames to report
    seq = asyncio.run(view_seq(srv.url, 15, 30.0))
    check(seq is not None and seq >= 15, "the sim's frames reach the server (seq %s)" % seq)
    t = time.monotonic()
    p.send_signal(signal.SIGINT)
    out, err = p.communicate(timeout=10)
    took = time.monotonic() - t
    res = json.loads(out) if out.strip() else {}
    check(p.returncode == 1 and res.get("outcome") == "interrupted",
          "SIGINT: exit 1, outcome interrupted (%s, %s)" % (p.returncode, res.get("outcome")))
    check(res.get("frames", 0) > 10, "metrics so far printed (%s frames)" % res.get("frames"))
    check(took < 3.0, "SIGINT ends the run promptly (%.2f s)" % took)
    srv.stop()


async def views(url, done, seconds):
    """Reads view messages as a viewer until done(view) holds or `seconds`
    pass; returns done's last value."""
    async with websockets.connect(url, subprotocols=["lacuna.v2"], max_size=None) as ws:
        await ws.send(json.dumps({"type": "hello", "role": "viewer"}))
        end = time.monotonic() + seconds
        while time.monotonic() < end:
            try:
                m = json.loads(await asyncio.wait_for(ws.recv(), end - time.monotonic()))
            except asyncio.TimeoutError:
                break
            if m.get("type") == "view":
                v = done(m)
                if v:
                    return v
    return done(None)


async def view_seq(url, seq, seconds):
    """The seq of the first view at or past seq, None if none comes."""
    return await views(url, lambda m: m and m.get("seq") is not None and m["seq"] >= seq
                       and m["seq"], seconds)


async def watch(url, names, seconds):
    """Robot names seen in views with a setpoint, until all of names are."""
    seen = set()

    def note(m):
        if m and m.get("setpoint"):
            seen.add(m.get("robot"))
        return names <= seen

    await views(url, note, seconds)
    return seen


def port_open(port):
    try:
        socket.create_connection(("127.0.0.1", port), 1.0).close()
        return True
    except OSError:
        return False


def test_demo(tmp):
    srv = Server(tmp)  # only to learn a free port
    port = srv.port
    srv.stop()
    env = dict(os.environ, LACUNA_DEMO_SECONDS="6", LACUNA_DEMO_PORT=str(port))
    p = subprocess.Popen(["bash", os.path.join(ROOT, "scripts", "demo.sh"), EXE],
                         stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, env=env,
                         start_new_session=True)
    url = "http://127.0.0.1:%d/" % port
    robots = {"office_round", "warehouse_aisles"}
    seen = set()
    if wait_for(lambda: port_open(port), 15.0):  # the demo's server is up
        seen = asyncio.run(watch("ws://127.0.0.1:%d/" % port, robots, 5.0))
    out, err = p.communicate(timeout=30)
    check(p.returncode == 0, "demo exits 0 when its time is up (%s: %s)" % (p.returncode, err.strip()))
    check(url in out, "demo prints the viewer URL %s" % url)
    check(robots <= seen,
          "a viewer sees both demo robots live (%s)" % sorted(seen))
    left = subprocess.run(["pgrep", "-f", "ws://127.0.0.1:%d/" % port], capture_output=True)
    check(left.returncode == 1, "no demo process left behind")


def test_stop_at_startup(tmp, _scen):
    """SIGTERM as soon as the server says it listens: exit 0, at once
    (a signal before the first wait used to wait for traffic)."""
    worst = 0.0
    for _ in range(10):
        srv = Server(tmp)
        t = time.monotonic()
        rc = srv.stop()
        worst = max(worst, time.monotonic() - t)
        if rc != 0:
            break
    check(rc == 0 and worst < 2.0, "SIGTERM right after start: exit %s, %.2f s at most" % (rc, worst))


def main():
    with tempfile.TemporaryDirectory() as tmp:
        scen = os.path.join(tmp, "bay.jsonl")
        with open(scen, "w") as f:
            f.write(json.dumps(SCENARIO) + "\n")
        for t in (test_patrol, test_token, test_errors, test_interrupt, test_stop_at_startup):
            t(tmp, scen)
        test_demo(tmp)
    print("%d failed" % len(failures))
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
