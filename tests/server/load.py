#!/usr/bin/python3
"""Load and soak of `lacuna serve`: robots streaming scans at a fixed rate while
viewers watch every robot, then many connect/disconnect cycles.

Usage: load.py LACUNA_EXE [--seconds S] [--robots N] [--hz F] [--viewers N]
                          [--beams N] [--cycles N]
--seconds defaults to LACUNA_SOAK_S, else 8 (the suite's short run; the soak is
LACUNA_SOAK_S=60). Prints one JSON summary line ("load summary: {...}") and
exits 0 when every check passes:
- every frame answered: per robot, the setpoints received that answer a frame
  (state not stale) equal the frames sent, seq for seq;
- memory flat: the server's resident size (/proc/PID/status VmRSS), sampled
  every 0.25 s, grows by at most RSS_GROWTH_KB from the end of the warm-up
  (the first quarter of the run, at least 1 s) to the end of the run. Not
  checked in a sanitizer build (LACUNA_SANITIZE set by meson): ASan's
  quarantine holds freed memory on purpose; the figures are still printed;
- no descriptor leaks: /proc/PID/fd counted before the load and after the load
  and CYCLES connections of six kinds (clean robot, clean viewer, bare TCP,
  HTTP GET, websocket dropped without a close, and a robot that drops in the
  middle of a message) have come and gone.
Round trips (p50, p99, max; frame sent to its setpoint received, measured by
this client on a shared machine) are reported, never asserted: speed is for
`lacuna bench`.
"""
import argparse
import asyncio
import json
import math
import os
import re
import socket
import sys
import time

from serverlib import (MEASURE_RSS, T, RawWS, Server, Streamer, check, finish, frame_template, hello,
                       http_get, percentile, recv, set_exe, wait_until)

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, os.path.join(HERE, "..", "..", "proto"))
import client_example as example  # noqa: E402

# After warm-up. Measured growth: 0 to 72 kB in 6 to 60 s runs; a leak of 250
# bytes per setpoint (800 frames/s) passes the bound in under 3 s.
RSS_GROWTH_KB = 512


def scan_template(pose, beams):
    """A scan of the example scene from pose (frame_template text)."""
    fov = 1.5 * math.pi
    a0, step = -fov / 2, fov / (beams - 1)
    ranges = [example.ray(example.SCENE, pose[0], pose[1], pose[2] + a0 + i * step, 8.0)
              for i in range(beams)]
    return frame_template({"type": "scan", "pose": list(pose), "bearing_first": a0,
                           "bearing_step": step, "near": 0.05, "far": 8.0,
                           "dist": ranges})


def robot(url, i, beams):
    pose = (0.3 + 0.6 * i, -0.6 + 0.4 * (i % 4), 0.2 * (i % 3))
    return Streamer(url, "load-%d" % i, scan_template(pose, beams))


async def run_robot(r, hz, seconds):
    m = await r.open(robot=example.ROBOT, route=[(6, 0), (0, 0)])
    check(m["type"] == "welcome", "%s welcome" % r.name)
    await r.stream(hz, count=int(hz * seconds))
    await r.drain(6 * T)  # the check is that every frame is answered, not how soon
    await r.close()


async def run_viewer(url, i, stop, counts, ready):
    ws, m = await hello(url, "", "viewer")
    check(m["type"] == "welcome", "viewer %d welcome" % i)
    ready.append(i)
    views = nbytes = 0
    while not stop.is_set():
        try:
            text = await asyncio.wait_for(ws.recv(), 0.5)
        except asyncio.TimeoutError:
            continue
        nbytes += len(text)
        views += text.startswith('{"type":"view"')
    counts[i] = (views, nbytes)
    await ws.close()


async def sample_rss(srv, stop, samples):
    t0 = time.monotonic()
    while not stop.is_set():
        samples.append((time.monotonic() - t0, srv.rss_kb()))
        await asyncio.sleep(0.25)  # kept: the sampling period


async def one_cycle(srv, k):
    """One short-lived connection of kind k % 6 (see the module doc)."""
    kind = k % 6
    if kind == 0:
        ws, m = await hello(srv.url, "cycle-%d" % k)
        await ws.send(json.dumps(dict(example.scan(example.SCENE, 1, 0.0, (0, 0, 0)))))
        m = await recv(ws)
        check(m.get("code") == "no_route", "cycle robot %d warned of no route (%s)" % (k, m))
        m = await recv(ws)
        check(m["type"] == "setpoint", "cycle robot %d answered (%s)" % (k, m.get("type")))
        await ws.close()
    elif kind == 1:
        ws, m = await hello(srv.url, "", "viewer")
        await ws.close()
    elif kind == 2:
        s = socket.create_connection(("127.0.0.1", srv.port), T)
        s.close()
    elif kind == 3:
        status, body = http_get(srv.port, "/")
        check(status in (200, 404), "cycle GET / status %d" % status)
    else:
        raw = RawWS(srv.port)
        raw.send(json.dumps({"type": "hello", "role": "robot", "robot": "drop-%d" % k}))
        raw.recv_message()  # the welcome
        if kind == 5:  # a frame announced as 1000 bytes, cut after 20
            raw.s.sendall(RawWS.frame(b'{"type": "scan", "se', declared=1000)[:26])
        raw.close()


async def main(args):
    set_exe([None, args.exe])
    srv = Server("--log-level", "info", *args.serve)
    fds_before = srv.fds()  # settled: the server says it listens once every descriptor is open
    rss_idle = srv.rss_kb()
    robots = [robot(srv.url, i, args.beams) for i in range(args.robots)]
    stop = asyncio.Event()
    counts = {}
    samples = []
    ready = []
    sampler = asyncio.ensure_future(sample_rss(srv, stop, samples))
    viewers = [asyncio.ensure_future(run_viewer(srv.url, i, stop, counts, ready))
               for i in range(args.viewers)]
    # every viewer welcomed before the first frame, so each sees the whole run
    check(await wait_until(lambda: len(ready) == args.viewers, T), "every viewer connected")
    cpu0, t0, client0 = srv.cpu_s(), time.monotonic(), time.process_time()
    await asyncio.gather(*[run_robot(r, args.hz, args.seconds) for r in robots])
    run_s = time.monotonic() - t0
    cpu = {"server_percent": round(100 * (srv.cpu_s() - cpu0) / run_s, 1),
           "client_percent": round(100 * (time.process_time() - client0) / run_s, 1)}
    stop.set()
    await asyncio.gather(*viewers)
    await sampler

    sent = sum(len(r.sent) for r in robots)
    answered = sum(len(r.answered) for r in robots)
    for r in robots:
        check(len(r.answered) == len(r.sent) == int(args.hz * args.seconds),
              "%s: %d frames sent, %d answered" % (r.name, len(r.sent), len(r.answered)))
        check(not r.errors, "%s: errors %s" % (r.name, r.errors[:3]))
    rtts = [x for r in robots for x in r.answered.values()]
    if os.environ.get("LOAD_DEBUG"):  # round trips second by second
        t0 = min(t for r in robots for t in r.sent.values())
        for sec in range(int(args.seconds) + 1):
            w = [x for r in robots for q, x in r.answered.items() if sec <= r.sent[q] - t0 < sec + 1]
            if w:
                print("second %d: n %d p50 %.1f p99 %.1f max %.1f ms" % (
                    sec, len(w), percentile(w, .5) * 1e3, percentile(w, .99) * 1e3, max(w) * 1e3))
    warm = max(1.0, 0.25 * args.seconds)
    after = [kb for t, kb in samples if t >= warm]
    rss = {"idle": rss_idle, "after_warmup": after[0] if after else None,
           "end": after[-1] if after else None, "max": max(kb for _, kb in samples),
           "samples": len(samples)}
    rss["growth"] = rss["end"] - rss["after_warmup"] if after else None
    if MEASURE_RSS:
        check(after and rss["growth"] <= RSS_GROWTH_KB,
              "server RSS grew by %s kB after warm-up (bound %d kB): %s"
              % (rss["growth"], RSS_GROWTH_KB, rss))
    views = sum(v for v, _ in counts.values())
    check(len(counts) == args.viewers and all(v > 0 for v, _ in counts.values()),
          "every viewer got views (%s)" % counts)

    await wait_until(lambda: srv.connections() == 0, T)
    fds_after_load = srv.fds()
    t_cycles = time.monotonic()
    for k in range(args.cycles):
        await one_cycle(srv, k)
    t_cycles = time.monotonic() - t_cycles
    await wait_until(lambda: srv.connections() == 0 and srv.fds() == fds_before, T)
    fds_after = srv.fds()
    check(fds_after_load == fds_before and fds_after == fds_before,
          "server descriptors: %d before, %d after the load, %d after %d cycles"
          % (fds_before, fds_after_load, fds_after, args.cycles))
    ws, m = await hello(srv.url, "after-cycles")
    check(m["type"] == "welcome", "a robot is welcome after the cycles")
    await ws.close()
    check(srv.stop() == 0, "load server exits 0 on SIGTERM")
    dropped = re.search(r"stopped \((\d+) views dropped", srv.log())

    summary = {
        "robots": args.robots, "hz": args.hz, "seconds": args.seconds, "viewers": args.viewers,
        "beams": args.beams, "frames_sent": sent, "frames_answered": answered,
        "stale_setpoints": sum(r.stale for r in robots),
        "send_rate_hz": round(sent / max(r.elapsed for r in robots), 1),
        "rtt_ms": {"p50": round(percentile(rtts, 0.5) * 1e3, 3),
                   "p99": round(percentile(rtts, 0.99) * 1e3, 3),
                   "max": round(max(rtts) * 1e3, 3)},
        "cpu": cpu, "loadavg_1min": round(os.getloadavg()[0], 2), "views": views,
        "views_dropped_for_slow_viewers": int(dropped.group(1)) if dropped else None, "view_mbytes": round(sum(b for _, b in counts.values()) / 1e6, 2),
        "rss_kb": rss,
        "fds": {"before": fds_before, "after_load": fds_after_load, "after_cycles": fds_after,
                "cycles": args.cycles, "cycles_s": round(t_cycles, 2)},
    }
    print("load summary: " + json.dumps(summary), flush=True)
    return finish("load")


if __name__ == "__main__":
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("exe", nargs="?", default=os.environ.get("LACUNA_EXE", "build/lacuna"))
    ap.add_argument("--seconds", type=float, default=float(os.environ.get("LACUNA_SOAK_S", 8)))
    ap.add_argument("--robots", type=int, default=8)
    ap.add_argument("--hz", type=float, default=100)
    ap.add_argument("--viewers", type=int, default=4)
    ap.add_argument("--beams", type=int, default=360)
    ap.add_argument("--cycles", type=int, default=240)
    ap.add_argument("--serve", action="append", default=[],
                    help="an extra argument for lacuna serve (repeat: --serve=--send-buffer --serve=0)")
    a = ap.parse_args()
    sys.exit(asyncio.run(asyncio.wait_for(main(a), a.seconds + 300)))
