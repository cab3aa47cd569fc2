#!/usr/bin/python3
"""End-to-end checks of what lacuna.v2 added to the wire, through the real
daemon (python3-websockets; exit 77 without it):

- the handshake: a websocket that offers no subprotocol, or others than
  lacuna.v2, gets HTTP 400 with a one-line reason (read here as a client
  sees it, through python3-websockets and byte for byte on a plain socket)
  and a log line; one that offers lacuna.v2 among others is accepted;
- warnings a robot hears (PROTOCOL.md, Server to robot: warning): each kind
  once per connection and not twice, before the setpoint of the frame it is
  about and with its seq, unknown keys named with their path once per
  message type, again on a new connection; the log keeps its lines;
- valid_ms on every setpoint, stale stops included, following its rule:
  two of the step's control periods (the stamp difference, clamped to
  [dt_min, dt_max]; the first frame's 0.05 s), never more than the
  watchdog; checked for frames at 40, 20, 10 and 5 Hz and two watchdogs;
- bad_json names NaN and Infinity as Python's json.dumps writes them;
- a recording at changing frame rates replays with 0 mismatches, valid_ms
  compared, and scripts/lacuna_v2.py turns its lacuna.v1 form back into it;
- proto/client_example.py stops its robot itself when valid_ms runs out:
  the server is held (SIGSTOP) mid-route, the example says the setpoint
  expired, and once the server goes on (SIGCONT) it still finishes.

Usage: e2e_wire.py LACUNA_EXE (or env LACUNA_EXE). Exit 0 when every check
passes.
"""
import asyncio
import json
import math
import os
import re
import signal
import socket
import subprocess
import sys
import tempfile
import time

from serverlib import (FIGURES, SLOW, T, Server, check, connect, far_scan, finish, hello, recv,
                       recv_type, set_exe, wait_until, websockets)

EXE = set_exe(sys.argv)
HERE = os.path.dirname(os.path.abspath(__file__))
EXAMPLE = os.path.join(HERE, "..", "..", "proto", "client_example.py")
CONVERTER = os.path.join(HERE, "..", "..", "scripts", "lacuna_v2.py")


# ------------------------------------------------------------ handshake

def raw_handshake(port, offer):
    """A websocket upgrade offering these subprotocols (None: the header left
    out), on a plain socket: the whole answer until the server closes."""
    s = socket.create_connection(("127.0.0.1", port), T)
    req = ("GET / HTTP/1.1\r\nHost: 127.0.0.1:%d\r\nUpgrade: websocket\r\nConnection: Upgrade\r\n"
           "Sec-WebSocket-Key: dGhpcyBpcyBsYWN1bmEh==\r\nSec-WebSocket-Version: 13\r\n" % port)
    if offer is not None:
        req += "Sec-WebSocket-Protocol: %s\r\n" % offer
    s.sendall((req + "\r\n").encode())
    data = b""
    try:
        while True:
            d = s.recv(4096)
            if not d:
                break
            data += d
    except OSError:
        pass
    s.close()
    return data


async def test_subprotocol(srv):
    for offer, shown in [(None, "none offered"), ("lacuna.v1", "offered 'lacuna.v1'"),
                         ("chat, superchat", "offered 'chat, superchat'")]:
        subprotocols = None if offer is None else [p.strip() for p in offer.split(",")]
        try:
            ws = await websockets.connect(srv.url, open_timeout=T, subprotocols=subprotocols)
            status = 101
            await ws.close()
        except websockets.InvalidStatusCode as e:
            status = e.status_code
        check(status == 400, "offer %r: python3-websockets sees HTTP %s, want 400" % (offer, status))
        data = raw_handshake(srv.port, offer)
        head, _, body = data.partition(b"\r\n\r\n")
        lines = body.decode("utf-8", "replace").split("\n")
        check(head.startswith(b"HTTP/1.1 400 Bad Request\r\n"), "offer %r: status line %r"
              % (offer, head.split(b"\r\n")[0]))
        check(len(lines) == 2 and lines[1] == "" and "lacuna.v2 required" in lines[0]
              and shown in lines[0], "offer %r: one line of reason, got %r" % (offer, body))
        check(b"content-length: %d" % len(body) in head.lower(),
              "offer %r: content-length says the body's %d bytes" % (offer, len(body)))
        check(await srv.logged("refused with 400: websocket subprotocol lacuna.v2 required, "
                               + shown), "offer %r: the log says so" % offer)
        if offer == "lacuna.v1":
            FIGURES["refusal_seen_by_client"] = data.decode("utf-8", "replace")
    ws = await websockets.connect(srv.url, subprotocols=["chat", "lacuna.v2"], open_timeout=T)
    check(ws.subprotocol == "lacuna.v2", "lacuna.v2 among others: accepted (%s)" % ws.subprotocol)
    await ws.close()


# ------------------------------------------------------------- warnings

async def until_setpoint(ws, seq):
    """Every message up to and with the setpoint of frame seq, but the
    watchdog's stale stops (a slow server, valgrind, may send them between
    frames)."""
    got = []
    while True:
        m = await recv(ws)
        if m["type"] == "setpoint" and m["state"] == "stale":
            continue
        got.append(m)
        if m["type"] == "setpoint" and m["seq"] == seq:
            return got


def scan(seq, stamp, **extra):
    return dict(far_scan(seq, stamp), **extra)


async def frame(ws, seq, stamp, **extra):
    """Send a scan; the warnings that came before its setpoint, which must be
    the next message after them."""
    await ws.send(json.dumps(scan(seq, stamp, **extra)))
    got = await until_setpoint(ws, seq)
    check(all(m["type"] == "warning" for m in got[:-1]),
          "frame %d: only warnings before its setpoint: %s" % (seq, [m["type"] for m in got]))
    return got[:-1]


def one(warnings, code, seq, words):
    """The warnings are exactly one of this code, with this seq, saying words."""
    ok = (len(warnings) == 1 and warnings[0]["code"] == code and warnings[0].get("seq") == seq
          and words in warnings[0]["message"])
    check(ok, "want one warning %s (seq %s) saying %r, got %s" % (code, seq, words, warnings))


async def robot_session(srv, name):
    """One connection through every kind of warning; all the warnings it got."""
    ws = await connect(srv.url)
    await ws.send(json.dumps({"type": "hello", "role": "robot", "robot": name, "tokn": "x"}))
    m = await recv(ws)
    check(m["type"] == "welcome", "%s: welcome first, then the hello's warning: %s" % (name, m))
    every = []
    m = await recv(ws)
    one([m], "unknown_key", None, "'hello.tokn'")
    every.append(m)
    # a typo twice: the default radius stays; said once
    for _ in range(2):
        await ws.send(json.dumps({"type": "robot", "radus": 0.5, "sensors": [{"name": "front"}]}))
    w = await frame(ws, 10, 1.0)
    check([x["code"] for x in w] == ["unknown_key", "no_route"],
          "the robot message's typo, then the first frame's no_route: %s" % w)
    check("'robot.radus'" in w[0]["message"] and "seq" not in w[0], "names robot.radus: %s" % w[0])
    check(w[1].get("seq") == 10, "no_route carries the frame's seq: %s" % w[1])
    every += w
    every += await frame(ws, 11, 1.05)  # still no route: not said again
    await ws.send(json.dumps({"type": "route", "waypoints": [[3, 0]]}))
    w = await frame(ws, 9, 1.1)
    one(w, "seq_backwards", 9, "scan.seq: 9 is below the previous frame's 11")
    every += w
    w = await frame(ws, 12, 0.5)
    one(w, "stamp_backwards", 12, "scan.stamp: 0.5 is before the previous frame's 1.1")
    every += w
    every += await frame(ws, 5, 0.25)  # both again: not said again
    every += await frame(ws, 13, 1.2, sensor="front")
    w = await frame(ws, 14, 1.25, sensor="cam")
    one(w, "unlisted_sensor", 14, "scan.sensor: 'cam'")
    every += w
    every += await frame(ws, 15, 1.3, sensor="cam2")
    w = await frame(ws, 16, 1.35, strength=[1] * 31)
    one(w, "unknown_key", 16, "'scan.strength'")
    every += w
    every += await frame(ws, 17, 1.4, strength=[1] * 31)
    every += await frame(ws, 18, 1.45, sensor="cam", strength=[1] * 31)
    await ws.close()
    return every


async def test_warnings(srv):
    # the same name again: a new connection hears them again (a new session: the
    # first one is not resumed, this test's server keeps no session after a link)
    for name in ("hears-1", "hears-1"):
        every = await robot_session(srv, name)
        kinds = sorted((m["code"], m["message"].split("'")[1].split(".")[0]
                        if m["code"] == "unknown_key" else "") for m in every)
        want = sorted([("unknown_key", "hello"), ("unknown_key", "robot"), ("no_route", ""),
                       ("seq_backwards", ""), ("stamp_backwards", ""), ("unlisted_sensor", ""),
                       ("unknown_key", "scan")])
        check(kinds == want, "%s: each kind once (unknown keys once per message type): %s"
              % (name, kinds))
        FIGURES.setdefault("warnings_per_connection", len(every))
    check(await srv.logged("frame 14 names sensor 'cam', which its description does not list"),
          "the log keeps its line on an unlisted sensor")
    check(srv.log().count("names sensor 'cam'") == 2, "that line once per connection and name")
    # a viewer hears no warning for its unknown key
    v = await connect(srv.url)
    await v.send(json.dumps({"type": "hello", "role": "viewer", "colour": "red"}))
    m = await recv(v)
    check(m["type"] == "welcome", "viewer welcome")
    try:
        m = await recv(v, 0.5)
    except asyncio.TimeoutError:
        m = None
    check(m is None or m["type"] == "view", "a viewer gets no warning: %s" % m)
    await v.close()


# ----------------------------------------------------------------- order

async def test_order(srv):
    """What one frame brings, in order (measured here, stated in PROTOCOL.md):
    its warnings, its setpoint, then its events, all with its seq."""
    ws, m = await hello(srv.url, "orderly")
    await ws.send(json.dumps({"type": "route", "waypoints": [[0.1, 0], [0.2, 0]],
                              "tolerance": 0.5}))
    await ws.send(json.dumps(dict(far_scan(7, 3.0), sensor="nowhere")))
    await ws.send(json.dumps(far_scan(8, 3.05)))
    got = []
    while not got or got[-1].get("event") != "route_done":
        m = await recv(ws)
        if m.get("state") != "stale":
            got.append(m)
    kinds = [(m["type"], m.get("code") or m.get("event") or m.get("state"), m.get("seq"))
             for m in got]
    want = [("warning", "unlisted_sensor", 7), ("setpoint", "arrived", 7),
            ("event", "waypoint_reached", 7), ("setpoint", "arrived", 8),
            ("event", "waypoint_reached", 8), ("event", "route_done", 8)]
    check(kinds == want, "two frames' messages in order: %s, want %s" % (kinds, want))
    FIGURES["two_frames_order"] = ["%s %s (seq %s)" % k for k in kinds]
    await ws.close()


# -------------------------------------------------------------- valid_ms

def rule(dt, watchdog_ms, dt_min=0.005, dt_max=0.2):
    """valid_ms as PROTOCOL.md states it."""
    dt = min(max(dt, dt_min), dt_max)
    return max(1, min(watchdog_ms, round(2000 * dt)))


async def test_valid_ms(watchdog_ms):
    srv = Server("--watchdog-ms", str(watchdog_ms))
    try:
        ws, m = await hello(srv.url, "valid")
        await ws.send(json.dumps({"type": "route", "waypoints": [[3, 0]]}))
        stamp, seq, seen = 0.0, 0, []
        for hz in (40, 20, 10, 5):
            for k in range(4):
                seq += 1
                dt = 1.0 / hz if seq > 1 else 0.05  # the first frame's period
                stamp += 1.0 / hz
                await ws.send(json.dumps(far_scan(seq, stamp)))
                sp = await recv_type(ws, "setpoint")
                while sp["seq"] != seq:
                    sp = await recv_type(ws, "setpoint")
                seen.append((hz, sp.get("valid_ms")))
                check(sp.get("valid_ms") == rule(dt, watchdog_ms),
                      "watchdog %d ms, frames at %d Hz (seq %d): valid_ms %s, want %d"
                      % (watchdog_ms, hz, seq, sp.get("valid_ms"), rule(dt, watchdog_ms)))
                check(sp["valid_ms"] <= watchdog_ms, "never more than the watchdog")
        FIGURES["valid_ms_watchdog_%d" % watchdog_ms] = sorted(set(seen))
        # the watchdog's stale stops carry one too: the valid_ms of the reply they replace
        sp = await recv_type(ws, "setpoint", 3.0)
        check(sp["state"] == "stale" and sp.get("valid_ms") == seen[-1][1],
              "a stale stop carries valid_ms %s: %s" % (seen[-1][1], sp))
        await ws.close()
    finally:
        check(srv.stop() == 0, "valid_ms server exits 0")


# -------------------------------------------------------- NaN, Infinity

async def test_nonfinite(srv):
    ws, m = await hello(srv.url, "pythonic")
    for value, word in [(math.nan, "NaN"), (math.inf, "Infinity"), (-math.inf, "-Infinity")]:
        text = json.dumps({"type": "robot", "radius": value})  # json.dumps allows them by default
        await ws.send(text)
        m = await recv_type(ws, "error")
        check(m["code"] == "bad_json" and ("message: %s at offset" % word) in m["message"]
              and "null" in m["message"], "%s: bad_json naming it: %s" % (word, m))
    await ws.close()


# ------------------------------------------------ recordings and v1 files

def as_v1(text):
    """A lacuna.v2 recording written back as lacuna.v1 wrote it: the old scan
    names, no valid_ms."""
    old = {"bearing_first": "angle_start", "bearing_step": "angle_step", "near": "range_min",
           "far": "range_max", "dist": "ranges"}
    text = re.sub(r'"(bearing_first|bearing_step|near|far|dist)":',
                  lambda m: '"%s":' % old[m.group(1)], text)
    return re.sub(r',"valid_ms":\d+', "", text)


async def test_recording_converted(tmp):
    """A recording at changing rates, through a watchdog stop and the stop at
    shutdown, replays with 0 mismatches, valid_ms compared; written back in
    lacuna.v1's names, scripts/lacuna_v2.py gives it back byte for byte."""
    rec = os.path.join(tmp, "rec")
    srv = Server("--record", rec)
    ws, m = await hello(srv.url, "taped")
    await ws.send(json.dumps({"type": "route", "waypoints": [[3, 0]]}))
    stamp = 0.0
    for seq in range(1, 31):
        stamp += (0.025, 0.05, 0.1, 0.3)[seq % 4] + (0.5 if seq == 20 else 0)
        if seq == 20:  # past the watchdog: a stale stop is recorded
            while (await recv_type(ws, "setpoint")).get("state") != "stale":
                pass
        await ws.send(json.dumps(far_scan(seq, stamp)))
        while (await recv_type(ws, "setpoint"))["seq"] != seq:
            pass
    check(srv.stop() == 0, "recording server exits 0")
    path = os.path.join(rec, os.listdir(rec)[0])
    with open(path) as f:
        text = f.read()
    lines = [json.loads(x) for x in text.split("\n") if x]
    sps = [x for x in lines if x["type"] == "setpoint"]
    check(sps and all(isinstance(x.get("valid_ms"), int) for x in sps),
          "every recorded setpoint has valid_ms")
    check([x["state"] for x in sps if x["state"] in ("stale", "shutdown")][-1:] == ["shutdown"],
          "the recording ends with the stop at shutdown")
    r = subprocess.run([EXE, "replay", path, "--json"], capture_output=True, text=True, timeout=60)
    out = json.loads(r.stdout or "{}")
    check(r.returncode == 0 and out.get("mismatches") == 0 and out.get("compared") == 30
          and out.get("unpaired") == 0, "the recording replays: %s %s" % (r.stdout, r.stderr[-300:]))
    old = os.path.join(tmp, "v1.jsonl")
    with open(old, "w") as f:
        f.write(as_v1(text))
    conv = subprocess.run([sys.executable, CONVERTER, old], capture_output=True, text=True,
                          timeout=60)
    check(conv.returncode == 0 and conv.stdout == text,
          "scripts/lacuna_v2.py gives the lacuna.v1 form back as recorded (exit %d)"
          % conv.returncode)


# --------------------------------------- the example stops when it expires

def test_example_expiry():
    srv = Server()
    try:
        p = subprocess.Popen([sys.executable, EXAMPLE, "--url", srv.url, "--frames", "600"],
                             stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
        out = []
        for line in p.stdout:  # driving: hold the server still mid-route
            out.append(line)
            if line.startswith("seq 40 "):
                break
        srv.proc.send_signal(signal.SIGSTOP)
        time.sleep(1.0)  # kept: the held server is the point (valid_ms is at most 200 ms)
        srv.proc.send_signal(signal.SIGCONT)
        rest, err = p.communicate(timeout=120)
        out.append(rest)
        text = "".join(out)
        check(p.returncode == 0 and "route done" in text,
              "the example finishes after the server went on: exit %s %r %r"
              % (p.returncode, text[-300:], err[-300:]))
        expired = [x for x in text.split("\n") if "expired" in x]
        check(len(expired) >= 1 and "the robot stops itself" in expired[0],
              "the example says its setpoint expired and stops: %s" % expired)
        FIGURES["example_expired"] = expired[:1]
    finally:
        srv.proc.send_signal(signal.SIGCONT)
        check(srv.stop() == 0, "example server exits 0")


async def main():
    srv = Server("--log-level", "info", "--grace-ms", "0")
    try:
        await test_subprotocol(srv)
        await test_warnings(srv)
        await test_order(srv)
        await test_nonfinite(srv)
    finally:
        check(srv.stop() == 0, "main server exits 0")
    await test_valid_ms(200)
    await test_valid_ms(150)
    with tempfile.TemporaryDirectory() as tmp:
        await test_recording_converted(tmp)
    test_example_expiry()
    return finish("e2e_wire")


if __name__ == "__main__":
    sys.exit(asyncio.run(main()))
