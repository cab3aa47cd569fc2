#!/usr/bin/python3
"""Faults `lacuna serve` must survive, end to end (python3-websockets and raw
sockets). Usage: faults.py LACUNA_EXE. Exit 0 when every check passes.

- a client that drops in the middle of a message (a frame cut short, a
  fragmented message cut between fragments, a handshake cut short), with
  recording on: the robot's name is free again, another robot is served
  throughout, no descriptor is left behind;
- a viewer that never reads: the robots are still answered frame for frame
  (round trips reported with and without it), the server's memory stays
  bounded (it drops that viewer's older views), and SIGTERM still ends the
  server with exit 0;
- a robot flooding frames: read, every frame is answered (a burst of 1000
  frames in one write, past the reply queue, is held back in TCP, not
  refused); not read, the server stops
  reading it, its bounded reply queue fills with the watchdog's stale stops
  and it is closed (error rate_limited); memory bounded either way, another
  robot served throughout;
- kill -9 while a robot streams with recording on: every complete line of the
  recording parses and every setpoint the robot got is in it;
- recording to a full disk (a 64 KiB tmpfs in a private mount namespace; where
  that cannot be made, a 64 KiB file size limit): the robot gets one error
  recording_failed, the log says why, setpoints go on.
Round trips are reported, never asserted (speed is for `lacuna bench`).
"""
import asyncio
import json
import os
import resource
import signal
import socket
import subprocess
import sys
import tempfile
import time


from serverlib import (FIGURES, MEASURE_RSS, SLOW, T, RawWS, Server, Streamer, check, far_scan, finish,
                       frame_template, hello, hello_again, recv, recv_type, set_exe, wait_until,
                       websockets)

RSS_BOUND_KB = 2048  # growth of the server's resident size during one fault
# A robot that says hello gets a session holding its memory (src/core/memory.h:
# 20 m at 5 cm, 400 x 400 cells of 7 bytes, 1094 kB) and its guidance search
# grid (src/core/guide.c: 200 x 200 cells of 34 bytes, 1328 kB); the robots
# a fault brings add that much each to the bound.
SESSION_KB = 1094 + 1328
# Scans of 1081 beams make big views (they fill a stuck viewer's buffers fast)
# and real planning work; under valgrind, 181 keep the run short.
BEAMS = 181 if SLOW else 1081


def rss_check(before, after, what, new_robots=0):
    if MEASURE_RSS:
        bound = RSS_BOUND_KB + new_robots * SESSION_KB
        check(after - before <= bound, "RSS %s: %d -> %d kB (bound +%d kB, %d new robot%s)"
              % (what, before, after, bound, new_robots, "" if new_robots == 1 else "s"))


class Steady:
    """A robot streaming at 50 Hz beside a fault; it must be answered throughout."""

    async def start(self, url, name):
        self.robot = Streamer(url, name)
        await self.robot.open()
        self.stop = asyncio.Event()
        self.runner = asyncio.ensure_future(self.robot.stream(50, stop=self.stop))
        return self

    async def finish(self, what):
        self.stop.set()
        await self.runner
        r = self.robot
        check(await r.drain() and not r.errors, "steady robot %s: %d of %d answered, errors %s"
              % (what, len(r.answered), len(r.sent), r.errors[:2]))
        await r.close()
        return r


def raw_robot(port, name, **kw):
    raw = RawWS(port, **kw)
    raw.send(json.dumps({"type": "hello", "role": "robot", "robot": name}))
    op, data = raw.recv_message()
    check(data.startswith(b'{"type":"welcome"'), "raw robot %s welcome: %r" % (name, data[:80]))
    return raw


async def test_drop_mid_message(tmp):
    srv = Server("--record", os.path.join(tmp, "drop-rec"))
    try:
        fds0 = srv.fds()  # settled: the server says it listens once every descriptor is open
        steady = await Steady().start(srv.url, "steady")
        text = json.dumps(far_scan(1, 0.0)).encode()
        cuts = {
            # a text frame announcing its whole length, cut after 40 bytes
            "frame cut short": lambda raw: raw.s.sendall(RawWS.frame(text)[:46]),
            # a first fragment (FIN clear), then nothing
            "between fragments": lambda raw: raw.s.sendall(RawWS.frame(text[:50], fin=False)),
            # a first fragment, then a continuation cut short
            "inside a continuation": lambda raw: raw.s.sendall(
                RawWS.frame(text[:50], fin=False) + RawWS.frame(text[50:], opcode=0)[:20]),
            # 900 kB announced (under max_message), 64 kB sent
            "large frame cut short": lambda raw: raw.s.sendall(
                RawWS.frame(b"{" + b" " * 65535, declared=900000)[:65536]),
        }
        for n, (what, cut) in enumerate(cuts.items()):
            for k in range(5):
                raw = raw_robot(srv.port, "cut-%d-%d" % (n, k))
                raw.send(json.dumps({"type": "route", "waypoints": [[3, 0]]}))
                raw.send(json.dumps(far_scan(1, 0.0)))
                op, data = raw.recv_message()  # its setpoint: the session is recording
                cut(raw)
                raw.close()
            ws, m = await hello_again(srv.url, "cut-%d-4" % n)
            check(m["type"] == "welcome", "after drops %s: the name is free (%s)" % (what, m))
            await ws.close()
        # a handshake cut short, and a viewer cut mid-message
        for k in range(5):
            s = socket.create_connection(("127.0.0.1", srv.port), T)
            s.sendall(b"GET / HTTP/1.1\r\nHost: 127.0.0.1\r\nUpgrade: websocket\r\nConn")
            s.close()
            v = RawWS(srv.port)
            v.send(json.dumps({"type": "hello", "role": "viewer"}))
            v.s.sendall(RawWS.frame(b'{"type": "hel', declared=300)[:20])
            v.close()
        steady = await steady.finish("during the drops")
        fds1 = await wait_until(lambda: srv.fds() == fds0 and srv.connections() == 0, T)
        check(fds1, "descriptors after the drops: %d, before %d" % (srv.fds(), fds0))
        FIGURES["drops"] = {"kinds": len(cuts) + 2, "connections": 5 * (len(cuts) + 2),
                            "fds_before": fds0, "fds_after": srv.fds(),
                            "steady_answered": len(steady.answered)}
    finally:
        check(srv.stop() == 0, "drop server exits 0")


async def robot_round_trips(url, name, hz, seconds, beams=31):
    r = Streamer(url, name, frame_template(far_scan(0, 0.0, beams=beams)))
    m = await r.open()
    await r.stream(hz, count=int(hz * seconds))
    ok = await r.drain()
    await r.close()
    return r, ok


async def three_robots(url, tag, hz, secs):
    robots = await asyncio.gather(*[robot_round_trips(url, "%s-%d" % (tag, i), hz, secs, BEAMS)
                                    for i in range(3)])
    for r, ok in robots:
        check(ok and not r.errors, "%s: %d of %d answered" % (r.name, len(r.answered), len(r.sent)))
    return [r.rtt_ms() for r, _ in robots]


async def test_viewer_never_reads():
    """Three robots and a viewer that reads, first alone, then beside one that never reads."""
    # a 32 KiB send buffer (64 KiB as Linux counts it): the stuck viewer's
    # kernel buffer fills in a fraction of a second, then the server drops views
    srv = Server("--log-level", "info", "--send-buffer", "32768")
    hz, secs = (10, 2.0) if SLOW else (100, 2.5)
    try:
        reader_ws, m = await hello(srv.url, "", "viewer")
        views = [0]

        async def read_views():
            try:
                while True:
                    views[0] += (await reader_ws.recv()).startswith('{"type":"view"')
            except websockets.ConnectionClosed:
                pass

        reading = asyncio.ensure_future(read_views())
        rtt_without = await three_robots(srv.url, "round", hz, secs)
        views_without = views[0]
        rss0 = srv.rss_kb()
        # the stuck viewer: a 4 kB receive buffer, and it never calls recv
        stuck = RawWS(srv.port, rcvbuf=4096)
        stuck.send(json.dumps({"type": "hello", "role": "viewer"}))
        rtt_with = await three_robots(srv.url, "round", hz, secs)
        rss1 = srv.rss_kb()
        queued = srv.send_queue_to(stuck.local_port)
        check(queued is not None and queued <= 2 * 32768,
              "kernel send queue to the stuck viewer: %s bytes (SO_SNDBUF 32 KiB, doubled)" % queued)
        check(views[0] > views_without, "the reading viewer still got views (%d, then %d)"
              % (views_without, views[0] - views_without))
        rss_check(rss0, rss1, "with a stuck viewer", new_robots=3)
        reading.cancel()
        await reader_ws.close()
        # SIGTERM with the stuck viewer still attached
        rc = srv.stop()
        check(rc == 0, "SIGTERM with a stuck viewer: exit %s" % rc)
        dropped = [l for l in srv.lines if "views dropped" in l]
        n_dropped = int(dropped[0].split("(")[1].split()[0]) if dropped else -1
        check(n_dropped > 0, "the server dropped views for the stuck viewer (%s)" % dropped)
        stuck.close()
        FIGURES["stuck_viewer"] = {
            "robots": 3, "hz": hz, "seconds": secs, "beams": BEAMS,
            "rtt_ms_without": rtt_without, "rtt_ms_with": rtt_with,
            "rss_kb": [rss0, rss1], "kernel_send_queue_bytes": queued,
            "views_dropped": n_dropped, "views_to_reading_viewer": views[0]}
    finally:
        srv.stop()


async def test_flood_read(srv):
    """A robot sends big scans as fast as it can and reads: all answered."""
    steady = await Steady().start(srv.url, "steady-f")
    rss0 = srv.rss_kb()
    flood = Streamer(srv.url, "flood", frame_template(far_scan(0, 0.0, beams=BEAMS)))
    await flood.open()
    n = 300 if SLOW else 3000
    t0 = time.monotonic()
    for seq in range(1, n + 1):
        flood.sent[seq] = time.monotonic()
        await flood.ws.send(flood.template % (seq, seq * 0.01))
    ok = await flood.drain(T * 4)
    span = time.monotonic() - t0
    rss1 = srv.rss_kb()
    steady = await steady.finish("during the flood")
    check(ok and not flood.errors, "flood (read): %d of %d answered, errors %s"
          % (len(flood.answered), n, flood.errors[:2]))
    rss_check(rss0, rss1, "during the flood", new_robots=1)
    FIGURES["flood_read"] = {"frames": n, "beams": BEAMS, "seconds": round(span, 2),
                             "frames_per_s": round(n / span), "rss_kb": [rss0, rss1],
                             "steady_rtt_ms": steady.rtt_ms()}
    await flood.close()


async def test_burst(srv):
    """1000 small frames in one write, read as they come: all answered (the server
    stops reading the robot while its replies queue up, rather than refuse it)."""
    raw = raw_robot(srv.port, "burst")
    raw.s.sendall(b"".join(RawWS.frame(json.dumps(far_scan(k, k * 0.01)).encode())
                           for k in range(1, 1001)))
    seqs, other, warned = [], [], []
    while len(seqs) < 1000:
        op, data = raw.recv_message()
        if op != 1:
            break
        m = json.loads(data)
        if m["type"] == "setpoint" and m["state"] != "stale":
            seqs.append(m["seq"])
        elif m["type"] == "warning":
            warned.append(m["code"])
        elif m["type"] != "setpoint":
            other.append(m)
    raw.close()
    check(seqs == list(range(1, 1001)) and not other,
          "a burst of 1000 frames: %d answered in order, other messages %s"
          % (len(seqs), other[:2]))
    check(warned == ["no_route"], "the burst (sent without a route) is warned of once: %s" % warned)
    FIGURES["burst_frames_answered"] = len(seqs)


async def test_flood_no_read(srv):
    """A robot floods small frames and never reads: closed after its reply queue fills."""
    steady = await Steady().start(srv.url, "steady-n")
    rss0 = srv.rss_kb()
    raw = raw_robot(srv.port, "flood-mute", rcvbuf=4096)
    frame = RawWS.frame(json.dumps(far_scan(1, 0.0)).encode())
    raw.s.settimeout(0.2)
    sent, t0, ended = 0, time.monotonic(), None
    loop = asyncio.get_running_loop()
    while time.monotonic() - t0 < (120 if SLOW else 30):
        try:
            await loop.run_in_executor(None, raw.s.sendall, frame * 50)
            sent += 50
        except socket.timeout:
            pass  # not writable for 0.2 s: the server stopped reading for now; again
        except OSError as e:
            ended = type(e).__name__
            break
    span = time.monotonic() - t0
    rss1 = srv.rss_kb()
    raw.close()
    await steady.finish("during the mute flood")
    check(ended is not None, "the non-reading flooder was disconnected (%d frames in %.1f s)"
          % (sent, span))
    check(await srv.logged("send queue full, closing"), "the log says why the flooder was closed")
    rss_check(rss0, rss1, "during the mute flood", new_robots=1)
    FIGURES["flood_no_read"] = {"frames_sent_before_close": sent, "seconds": round(span, 2),
                                "ended_by": ended, "rss_kb": [rss0, rss1]}


def read_recording(path):
    """(parsed complete lines, number of lines that do not parse)."""
    with open(path) as f:
        lines = f.read().split("\n")[:-1]  # after the last newline: possibly a cut line
    parsed, bad = [], 0
    for line in lines:
        try:
            parsed.append(json.loads(line))
        except ValueError:
            bad += 1
    return parsed, bad


async def test_kill9_streaming(tmp):
    rec = os.path.join(tmp, "kill9")
    srv = Server("--record", rec)
    r = Streamer(srv.url, "kill9")
    await r.open()
    stop = asyncio.Event()
    runner = asyncio.ensure_future(r.stream(100, stop=stop))
    await wait_until(lambda: len(r.answered) >= 80, T)
    srv.proc.send_signal(signal.SIGKILL)  # while frames are in flight
    srv.proc.wait(T)
    stop.set()
    await runner
    await r.close()
    files = os.listdir(rec)
    check(len(files) == 1, "kill -9: one recording (%s)" % files)
    if not files:
        return
    parsed, bad = read_recording(os.path.join(rec, files[0]))
    check(bad == 0, "kill -9: %d complete lines do not parse" % bad)
    recorded = {p["seq"] for p in parsed if p.get("type") == "setpoint"}
    got = set(r.answered)
    check(got <= recorded, "kill -9: every setpoint the robot got is recorded (%d missing)"
          % len(got - recorded))
    FIGURES["kill9"] = {"frames_sent": len(r.sent), "setpoints_received": len(got),
                        "lines": len(parsed), "bad_lines": bad,
                        "scans_recorded": sum(p.get("type") == "scan" for p in parsed)}


def full_disk_server(rec):
    """A server recording to a full-to-be disk: a 64 KiB tmpfs mounted on rec in a private
    mount namespace; else a 64 KiB file size limit. (server, how)"""
    os.makedirs(rec)
    mount = 'mount -t tmpfs -o size=64k lacuna-full "$0" && exec "$@"'
    for ns in (["unshare", "--mount"], ["unshare", "--user", "--map-root-user", "--mount"]):
        probe = subprocess.run([*ns, "sh", "-c", mount, rec, "true"], capture_output=True)
        if probe.returncode == 0:
            return Server("--record", rec, prefix=[*ns, "sh", "-c", mount, rec]), "tmpfs 64k"

    def limit():
        signal.signal(signal.SIGXFSZ, signal.SIG_IGN)  # EFBIG instead of a kill
        resource.setrlimit(resource.RLIMIT_FSIZE, (65536, 65536))
    return Server("--record", rec, preexec_fn=limit), "RLIMIT_FSIZE 64k"


async def test_full_disk(tmp):
    rec = os.path.join(tmp, "full")
    srv, how = full_disk_server(rec)
    try:
        ws, m = await hello(srv.url, "filler")
        await ws.send(json.dumps({"type": "route", "waypoints": [[3, 0]]}))
        failed_at, errors, after = None, [], 0
        for seq in range(1, 601):
            await ws.send(json.dumps(far_scan(seq, seq * 0.05)))
            while True:
                m = await recv(ws)
                if m["type"] == "error":
                    errors.append(m)
                    failed_at = failed_at or seq
                elif m["type"] == "setpoint" and m["state"] != "stale":
                    break
            check(m["seq"] == seq, "full disk: frame %d answered (%s)" % (seq, m))
            if failed_at:
                after += 1
                if after >= 100:
                    break
        await ws.close()
        check(failed_at is not None, "full disk (%s): the robot was told" % how)
        check(len(errors) == 1 and errors[0]["code"] == "recording_failed",
              "full disk: one error recording_failed (%s)" % errors)
        check(after >= 100, "full disk: %d setpoints after the recording stopped" % after)
        # the file, seen through the server's own mount namespace
        root = "/proc/%d/root%s" % (srv.pid, rec)
        files = os.listdir(root)
        parsed, bad = read_recording(os.path.join(root, files[0])) if files else ([], -1)
        check(len(files) == 1 and bad == 0 and len(parsed) > 10,
              "full disk: the recording's complete lines parse (%d lines, %d bad)"
              % (len(parsed), bad))
        await srv.logged("recording stopped")
        log = [l.strip() for l in srv.lines if "recording stopped" in l]
        check(len(log) == 1, "full disk: one log line (%s)" % log)
        FIGURES["full_disk"] = {"how": how, "failed_at_frame": failed_at,
                                "error": errors[0]["message"] if errors else None,
                                "lines_kept": len(parsed), "frames_after": after,
                                "log": log[0] if log else None}
    finally:
        check(srv.stop() == 0, "full-disk server exits 0")


async def main():
    with tempfile.TemporaryDirectory() as tmp:
        await test_drop_mid_message(tmp)
        await test_viewer_never_reads()
        # a short reply queue and watchdog: the mute flooder fills the queue
        # with stale stops in 8 watchdog periods (the default 256 takes 128)
        srv = Server("--max-rate", "100000", "--send-queue", "16", "--watchdog-ms", "50")
        try:
            await test_flood_read(srv)
            await test_burst(srv)
            await test_flood_no_read(srv)
        finally:
            check(srv.stop() == 0, "flood server exits 0")
        await test_kill9_streaming(tmp)
        await test_full_disk(tmp)
    return finish("faults")


if __name__ == "__main__":
    set_exe(sys.argv)
    sys.exit(asyncio.run(asyncio.wait_for(main(), 900 if SLOW else 180)))
