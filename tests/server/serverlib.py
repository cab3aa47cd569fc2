"""Shared helpers of the daemon's end-to-end scripts (e2e_serve.py, load.py,
faults.py, security.py): starting `lacuna serve`, websocket clients (python3-
websockets, and a raw-socket one for what a normal client would not send),
/proc readings of the server process, and the check/figures bookkeeping.

Every server listens on 127.0.0.1:0; the port is read from its "listening on"
line on stderr, so runs can share a machine. LACUNA_SERVE_WRAP, when set, is a
command put in front of every server (the valgrind tests use it); SLOW is then
true and every wait is longer, since timings under valgrind mean nothing.

Waits are on conditions (wait_until, hello_again, the server's own lines),
never a fixed sleep standing in for one. Without python3-websockets the
scripts exit 77, which meson shows as skipped.
"""
import asyncio
import base64
import json
import os
import re
import shlex
import signal
import socket
import struct
import subprocess
import sys
import threading
import time

try:
    import websockets
except ImportError:
    print("python3-websockets missing (apt-get install python3-websockets): skipped",
          flush=True)
    sys.exit(77)

EXE = os.environ.get("LACUNA_EXE", "build/lacuna")
PROTO = ["lacuna.v2"]
WRAP = shlex.split(os.environ.get("LACUNA_SERVE_WRAP", ""))
SLOW = bool(WRAP)
T = 30.0 if SLOW else 5.0  # s, every single wait
# The server's resident size means something only without valgrind (its own
# memory) and without ASan (its quarantine holds freed blocks on purpose).
MEASURE_RSS = not SLOW and os.environ.get("LACUNA_SANITIZE", "none") in ("", "none")
FIGURES = {}
FAILED = []
SERVERS = []
LISTENING = re.compile(r"listening on (https?)://([0-9.]+):(\d+)/")


def set_exe(argv):
    """The lacuna executable: argv[1], else LACUNA_EXE."""
    global EXE
    if len(argv) > 1:
        EXE = argv[1]
    return EXE


def check(cond, what):
    if not cond:
        FAILED.append(what)
        print("FAIL:", what, flush=True)
    return cond


class Server:
    """`lacuna serve` with args; prefix: a command in front (e.g. unshare)."""

    def __init__(self, *args, prefix=(), preexec_fn=None, listen="127.0.0.1:0"):
        cmd = [*prefix, *WRAP, EXE, "serve", "--listen", listen, *args]
        self.proc = subprocess.Popen(cmd, stdin=subprocess.DEVNULL, stdout=subprocess.PIPE,
                                     stderr=subprocess.PIPE, text=True, preexec_fn=preexec_fn)
        self.pid = self.proc.pid
        self.lines = []
        self.port = None
        deadline = time.time() + (60 if SLOW else 15)
        while time.time() < deadline:
            line = self.proc.stderr.readline()
            if not line:
                break
            self.lines.append(line)
            m = LISTENING.search(line)
            if m:
                self.tls = m.group(1) == "https"
                self.host = m.group(2)
                self.port = int(m.group(3))
                break
        if self.port is None:
            self.proc.kill()
            raise RuntimeError("server did not start: " + "".join(self.lines))
        self.drain = threading.Thread(target=self._drain, daemon=True)
        self.drain.start()
        SERVERS.append(self)
        self.url = "ws%s://127.0.0.1:%d/" % ("s" if self.tls else "", self.port)

    def _drain(self):
        for line in self.proc.stderr:
            self.lines.append(line)

    def log(self):
        return "".join(self.lines)

    async def logged(self, text, timeout=None):
        """True once text is in the server's stderr (read by a thread: it may lag)."""
        return await wait_until(lambda: text in self.log(), T if timeout is None else timeout)

    def stop(self, sig=signal.SIGTERM):
        """Signal it, wait for the exit; returns the exit status."""
        if self.proc.poll() is None:
            self.proc.send_signal(sig)
            try:
                self.proc.wait(90 if SLOW else 10)
            except subprocess.TimeoutExpired:
                self.proc.kill()
                self.proc.wait()
        self.drain.join(5)  # every line it wrote is in self.lines
        return self.proc.returncode

    def rss_kb(self):
        """Resident set size of the server process (kB, /proc/PID/status VmRSS)."""
        with open("/proc/%d/status" % self.pid) as f:
            for line in f:
                if line.startswith("VmRSS:"):
                    return int(line.split()[1])
        return 0

    def cpu_s(self):
        """CPU time (user + system, s) the server has used so far."""
        with open("/proc/%d/stat" % self.pid) as f:
            col = f.read().rsplit(")", 1)[1].split()
        return (int(col[11]) + int(col[12])) / os.sysconf("SC_CLK_TCK")

    def fds(self):
        """Open file descriptors of the server process."""
        return len(os.listdir("/proc/%d/fd" % self.pid))

    def connections(self):
        """TCP sockets of the server with a peer (established or closing), from /proc/net/tcp."""
        inodes = set()
        for fd in os.listdir("/proc/%d/fd" % self.pid):
            try:
                target = os.readlink("/proc/%d/fd/%s" % (self.pid, fd))
            except OSError:
                continue
            if target.startswith("socket:["):
                inodes.add(target[8:-1])
        n = 0
        with open("/proc/%d/net/tcp" % self.pid) as f:
            for line in f.readlines()[1:]:
                col = line.split()
                if col[9] in inodes and col[3] != "0A":  # 0A: listening
                    n += 1
        return n

    def send_queue_to(self, peer_port):
        """Bytes the kernel holds unsent on the server's socket to that client port."""
        with open("/proc/%d/net/tcp" % self.pid) as f:
            for line in f.readlines()[1:]:
                col = line.split()
                local, remote = col[1], col[2]
                if int(local.split(":")[1], 16) == self.port and \
                        int(remote.split(":")[1], 16) == peer_port:
                    return int(col[4].split(":")[0], 16)
        return None


async def wait_until(pred, timeout):
    """Poll pred() until true or timeout; returns its last value."""
    end = time.monotonic() + timeout
    while True:
        v = pred()
        if v or time.monotonic() > end:
            return v
        await asyncio.sleep(0.05)  # the poll interval of this wait, not a wait of its own


# ------------------------------------------------------------ websockets

async def connect(url, ssl=None, **kw):
    if url.startswith("wss:") and ssl is None:
        raise ValueError("wss:// needs an ssl context")
    extra = {"ssl": ssl} if ssl is not None else {}
    return await websockets.connect(url, subprotocols=PROTO, max_size=None, open_timeout=T,
                                    close_timeout=T, **extra, **kw)


async def recv(ws, timeout=T):
    return json.loads(await asyncio.wait_for(ws.recv(), timeout))


async def recv_type(ws, mtype, timeout=T):
    """Next message of that type (others are skipped)."""
    end = time.monotonic() + timeout
    while True:
        m = await recv(ws, max(0.01, end - time.monotonic()))
        if m.get("type") == mtype:
            return m


async def hello(url, name, role="robot", token=None, **kw):
    ws = await connect(url, **kw)
    h = {"type": "hello", "role": role, "robot": name}
    if token is not None:
        h["token"] = token
    await ws.send(json.dumps(h))
    return ws, await recv(ws)


async def hello_again(url, name, role="robot", timeout=None, **kw):
    """Hello until welcome, or timeout: for a name or a connection slot that
    frees when the server has seen an earlier connection close. Returns the
    last (ws, reply); a refused connection is closed before the next try."""
    end = time.monotonic() + (T if timeout is None else timeout)
    while True:
        try:
            ws, m = await hello(url, name, role, **kw)
        except websockets.ConnectionClosed as e:  # refused before our hello went out
            ws, m = None, {"type": "closed", "code": e.rcvd.code if e.rcvd else None}
        if m.get("type") == "welcome" or time.monotonic() > end:
            return ws, m
        if ws:
            await ws.close()
        await asyncio.sleep(0.05)  # the poll interval of this wait


async def closed(ws, timeout=T):
    """True when the server closes the connection (after whatever it sent)."""
    try:
        while True:
            await asyncio.wait_for(ws.recv(), timeout)
    except websockets.ConnectionClosed:
        return True
    except asyncio.TimeoutError:
        return False


def far_scan(seq, stamp, beams=31):
    """A scan with every beam at 6 m: open space."""
    return {"type": "scan", "seq": seq, "stamp": stamp, "pose": [0, 0, 0],
            "bearing_first": -1.5, "bearing_step": 3.0 / beams, "near": 0.05,
            "far": 10, "dist": [6.0] * beams}


def frame_template(frame):
    """A frame as text with %d and %r slots for seq and stamp (cheap to send often)."""
    body = {k: v for k, v in frame.items() if k not in ("type", "seq", "stamp")}
    return ('{"type": "%s", "seq": %%d, "stamp": %%r, ' % frame["type"]
            + json.dumps(body)[1:].replace("%", "%%"))


class Streamer:
    """A robot that streams frames at a fixed rate without waiting for the
    answers (as a robot's sensor loop does), and counts them: every setpoint
    not stale answers the frame whose seq it echoes."""

    def __init__(self, url, name, template=None, ssl=None):
        self.url, self.name, self.ssl = url, name, ssl
        self.template = template or frame_template(far_scan(0, 0.0))
        self.sent = {}      # seq -> monotonic time sent
        self.answered = {}  # seq -> round trip, s
        self.stale = 0
        self.errors = []
        self.closed = False
        self.ws = None

    async def open(self, robot=None, route=((3, 0),)):
        self.ws, m = await hello(self.url, self.name, **({"ssl": self.ssl} if self.ssl else {}))
        if m.get("type") == "welcome":
            if robot:
                await self.ws.send(json.dumps(robot))
            if route:
                await self.ws.send(json.dumps({"type": "route", "waypoints": [list(w) for w in route],
                                               "loop": True}))
            self.reader = asyncio.ensure_future(self._read())
        return m

    async def _read(self):
        try:
            while True:
                m = json.loads(await self.ws.recv())
                if m["type"] == "setpoint":
                    if m["state"] == "stale":
                        self.stale += 1
                    elif m["seq"] in self.sent and m["seq"] not in self.answered:
                        self.answered[m["seq"]] = time.monotonic() - self.sent[m["seq"]]
                elif m["type"] == "error":
                    self.errors.append(m)
        except websockets.ConnectionClosed:
            self.closed = True

    async def stream(self, hz, count=None, stop=None):
        """Send count frames (or until stop is set) at hz frames per second."""
        t0, k = time.monotonic(), 0
        while (count is None or k < count) and not (stop and stop.is_set()) and not self.closed:
            delay = t0 + k / hz - time.monotonic()
            if delay > 0:
                await asyncio.sleep(delay)  # kept: the fixed send schedule is the point
            seq = len(self.sent) + 1
            self.sent[seq] = time.monotonic()
            try:
                await self.ws.send(self.template % (seq, seq / hz))
            except websockets.ConnectionClosed:
                self.closed = True
            k += 1
        self.elapsed = time.monotonic() - t0

    async def drain(self, timeout=T):
        """Wait until every frame sent is answered; True when they all are."""
        return await wait_until(lambda: len(self.answered) == len(self.sent) or self.closed,
                                timeout) and len(self.answered) == len(self.sent)

    async def close(self):
        """A normal close; a peer that is gone already (killed) is not an error."""
        if self.ws:
            try:
                await self.ws.close()
            except (OSError, websockets.ConnectionClosed):
                pass
        if getattr(self, "reader", None):
            self.reader.cancel()

    def rtt_ms(self):
        rtts = list(self.answered.values())
        return {"p50": round(percentile(rtts, 0.5) * 1e3, 3),
                "p99": round(percentile(rtts, 0.99) * 1e3, 3)} if rtts else {}


def percentile(xs, q):
    xs = sorted(xs)
    return xs[min(len(xs) - 1, int(q * (len(xs) - 1) + 0.5))] if xs else None


# ---------------------------------------------- raw websocket (RFC 6455)

class RawWS:
    """A websocket over a plain socket, for frames a normal client would not send
    (cut in the middle) and for a peer that never reads (small receive buffer)."""

    def __init__(self, port, origin=None, rcvbuf=None, protocol="lacuna.v2"):
        self.s = socket.socket(socket.AF_INET, socket.SOCK_STREAM)
        if rcvbuf:
            self.s.setsockopt(socket.SOL_SOCKET, socket.SO_RCVBUF, rcvbuf)
        self.s.settimeout(T)
        self.s.connect(("127.0.0.1", port))
        self.local_port = self.s.getsockname()[1]
        key = base64.b64encode(os.urandom(16)).decode()
        req = ("GET / HTTP/1.1\r\nHost: 127.0.0.1:%d\r\nUpgrade: websocket\r\n"
               "Connection: Upgrade\r\nSec-WebSocket-Key: %s\r\nSec-WebSocket-Version: 13\r\n"
               % (port, key))
        if protocol:
            req += "Sec-WebSocket-Protocol: %s\r\n" % protocol
        if origin:
            req += "Origin: %s\r\n" % origin
        self.s.sendall((req + "\r\n").encode())
        head = b""
        while b"\r\n\r\n" not in head:
            d = self.s.recv(1)
            if not d:
                break
            head += d
        self.status = int(head.split(b" ")[1]) if head.startswith(b"HTTP/") else 0
        self.buf = b""

    @staticmethod
    def frame(payload, opcode=1, fin=True, declared=None):
        """A masked client frame; declared: the length written in the header."""
        n = len(payload) if declared is None else declared
        b0 = (0x80 if fin else 0) | opcode
        if n < 126:
            head = struct.pack("!BB", b0, 0x80 | n)
        elif n < 65536:
            head = struct.pack("!BBH", b0, 0x80 | 126, n)
        else:
            head = struct.pack("!BBQ", b0, 0x80 | 127, n)
        mask = os.urandom(4)
        body = bytes(c ^ mask[i % 4] for i, c in enumerate(payload))
        return head + mask + body

    def send(self, text):
        self.s.sendall(self.frame(text.encode()))

    def recv_message(self):
        """The next whole server frame's payload (server frames are unmasked)."""
        while True:
            if len(self.buf) >= 2:
                n = self.buf[1] & 0x7F
                off = 2
                if n == 126:
                    n, off = struct.unpack("!H", self.buf[2:4])[0], 4
                elif n == 127:
                    n, off = struct.unpack("!Q", self.buf[2:10])[0], 10
                if len(self.buf) >= off + n:
                    op, data = self.buf[0] & 0x0F, self.buf[off:off + n]
                    self.buf = self.buf[off + n:]
                    return op, data
            d = self.s.recv(65536)
            if not d:
                return None, b""
            self.buf += d

    def close(self):
        self.s.close()


def http_get(port, path, host=None):
    """One raw GET (the path sent as given, unnormalised): (status, body)."""
    s = socket.create_connection(("127.0.0.1", port), T)
    s.sendall(("GET %s HTTP/1.1\r\nHost: %s\r\nConnection: close\r\n\r\n"
               % (path, host or "127.0.0.1:%d" % port)).encode("latin-1"))
    data = b""
    try:
        while True:
            d = s.recv(65536)
            if not d:
                break
            data += d
    except OSError:
        pass
    s.close()
    head, _, body = data.partition(b"\r\n\r\n")
    m = re.match(rb"HTTP/1\.[01] (\d+)", head)
    return (int(m.group(1)) if m else 0), body


def other_address():
    """A local address other than 127.0.0.1: the machine's own, else 127.0.0.2."""
    try:
        s = socket.socket(socket.AF_INET, socket.SOCK_DGRAM)
        s.connect(("192.0.2.1", 9))  # no packet is sent: this only picks a route
        addr = s.getsockname()[0]
        s.close()
        if not addr.startswith("127."):
            return addr
    except OSError:
        pass
    return "127.0.0.2"


def finish(name):
    """Check every server's stderr, print the figures; the exit status."""
    for srv in SERVERS:
        if srv.proc.poll() is not None:
            srv.drain.join(T)  # an exited server's last lines are in (its stderr at EOF)
        text = srv.log()
        check("runtime error" not in text and "Sanitizer" not in text,
              "server stderr is free of sanitizer reports:\n" + text[-3000:])
        for m in re.finditer(r"ERROR SUMMARY: (\d+) errors", text):
            check(m.group(1) == "0", "valgrind: %s errors:\n%s" % (m.group(1), text[-6000:]))
        if SLOW:
            check("ERROR SUMMARY" in text or srv.proc.returncode == -signal.SIGKILL,
                  "valgrind summary present (server exit %s)" % srv.proc.returncode)
    if FIGURES:
        print("%s figures: %s" % (name, json.dumps(FIGURES)), flush=True)
    if FAILED:
        print("%d check(s) failed" % len(FAILED), flush=True)
        return 1
    print("all checks passed", flush=True)
    return 0
