#!/usr/bin/python3
"""Security of `lacuna serve`, end to end. Usage: security.py LACUNA_EXE.
Exit 0 when every check passes.

- the robot token off loopback (listening on another local address);
- TLS: a self-signed certificate made here with openssl (subjectAltName
  IP:127.0.0.1); wss:// for a robot and a viewer and https:// for the page,
  with a client that trusts that certificate and checks the host name; a
  client that does not trust it fails; plain ws:// and http:// on the TLS
  port get nothing; a certificate that is not one is a clear startup error;
- the Origin allow-list: no Origin and the page's own origin pass, listed
  origins pass, anything else gets error forbidden and close 1008; "*" lets
  any through;
- connections per address (error too_many_connections, close 1008) and in all
  (HTTP 503 at the handshake); messages per second per connection (error
  rate_limited, close 1008);
- static files that cannot leave the web directory: "..", percent-encoded,
  double-encoded, backslash and overlong-UTF-8 variants sent over a raw socket
  (a normal client would normalise them), and symbolic links leading out.
"""
import asyncio
import json
import os
import shutil
import ssl
import subprocess
import sys
import tempfile
import urllib.request


import serverlib
from serverlib import (FIGURES, SLOW, T, RawWS, Server, check, closed, connect, far_scan,
                       finish, hello, hello_again, http_get, other_address, recv, recv_type,
                       set_exe, websockets)

SECRET = "lacuna-test-secret-7f3a"


async def test_token_off_loopback(tmp):
    addr = other_address()
    tok = os.path.join(tmp, "robot.token")
    with open(tok, "w") as f:
        f.write("harbour-kite-42\n")
    srv = Server("--token-file", tok, listen="%s:0" % addr)
    url = "ws://%s:%d/" % (addr, srv.port)
    try:
        for token, want in [(None, "unauthorized"), ("harbour-kite-41", "unauthorized"),
                            ("harbour-kite-42", "welcome")]:
            ws, m = await hello(url, "far", token=token)
            check(m.get("code", m["type"]) == want, "off loopback, token %r: %s" % (token, m))
            await ws.close()
        ws, m = await hello(url, "", "viewer")
        check(m["type"] == "welcome", "off loopback: a viewer needs no token without a viewer token")
        await ws.close()
        check(await srv.logged("without TLS: tokens cross the network in clear"),
              "off loopback without TLS: a warning")
    finally:
        check(srv.stop() == 0, "off-loopback server exits 0")
    r = subprocess.run([serverlib.EXE, "serve", "--listen", "%s:0" % addr], capture_output=True, text=True,
                       timeout=10)
    check(r.returncode == 2 and "token" in r.stderr, "off loopback without a token: exit %d %r"
          % (r.returncode, r.stderr.strip()))
    FIGURES["token_off_loopback_address"] = addr


def make_certificate(tmp):
    cert, key = os.path.join(tmp, "cert.pem"), os.path.join(tmp, "key.pem")
    r = subprocess.run(["openssl", "req", "-x509", "-newkey", "ec", "-pkeyopt",
                        "ec_paramgen_curve:prime256v1", "-nodes", "-days", "2",
                        "-subj", "/CN=127.0.0.1", "-addext", "subjectAltName=IP:127.0.0.1",
                        "-keyout", key, "-out", cert], capture_output=True, timeout=60)
    check(r.returncode == 0, "openssl made a test certificate: %s" % r.stderr[-300:])
    return cert, key


async def test_tls(tmp):
    if not shutil.which("openssl"):
        check(False, "openssl is needed for the TLS tests (Debian package openssl)")
        return
    cert, key = make_certificate(tmp)
    trusting = ssl.create_default_context(cafile=cert)  # verifies the chain and the host name
    srv = Server("--tls-cert", cert, "--tls-key", key)
    try:
        check(srv.url.startswith("wss://"), "a TLS server announces https:// and wss://")
        viewer, m = await hello(srv.url, "sealed", "viewer", ssl=trusting)
        check(m["type"] == "welcome", "viewer over wss://: welcome")
        ws, m = await hello(srv.url, "sealed", ssl=trusting)
        check(m["type"] == "welcome", "robot over wss://: welcome")
        await ws.send(json.dumps({"type": "route", "waypoints": [[3, 0]]}))
        await ws.send(json.dumps(far_scan(1, 0.0)))
        m = await recv_type(ws, "setpoint")
        check(m["seq"] == 1, "setpoint over wss://")
        v = await recv_type(viewer, "view")
        check(v["robot"] == "sealed", "view over wss://")
        await ws.close()
        await viewer.close()
        page = urllib.request.urlopen("https://127.0.0.1:%d/" % srv.port, timeout=T,
                                      context=trusting)
        check(page.status == 200 and b"<html" in page.read().lower(), "the page over https://")
        # a client that does not trust the certificate refuses it
        try:
            ws, m = await hello(srv.url, "doubt", ssl=ssl.create_default_context())
            check(False, "an untrusting client connected: %s" % m)
        except ssl.SSLCertVerificationError:
            pass
        # plain websocket and plain HTTP on the TLS port get nothing useful
        try:
            ws, m = await hello("ws://127.0.0.1:%d/" % srv.port, "plain")
            check(False, "plain ws:// on the TLS port got %s" % m)
        except (websockets.InvalidHandshake, websockets.ConnectionClosed, OSError,
                asyncio.TimeoutError):
            pass
        status, body = http_get(srv.port, "/")
        check(status != 200, "plain http:// on the TLS port: status %d" % status)
    finally:
        check(srv.stop() == 0, "TLS server exits 0")
    bogus = os.path.join(tmp, "bogus.pem")
    with open(bogus, "w") as f:
        f.write("-----BEGIN CERTIFICATE-----\nnot a certificate\n-----END CERTIFICATE-----\n")
    r = subprocess.run([*serverlib.WRAP, serverlib.EXE, "serve", "--listen", "127.0.0.1:0",
                        "--tls-cert", bogus, "--tls-key", key], capture_output=True, text=True,
                       timeout=120)  # under valgrind too: that exit path leaks nothing
    check(r.returncode == 1 and "certificate" in r.stderr,
          "a bogus certificate: exit %d, %r" % (r.returncode, r.stderr.strip()[-300:]))
    r = subprocess.run([serverlib.EXE, "serve", "--listen", "127.0.0.1:0", "--tls-cert", cert],
                       capture_output=True, text=True, timeout=10)
    check(r.returncode == 2 and "tls_key" in r.stderr, "--tls-cert without --tls-key: exit %d"
          % r.returncode)


async def origin_answer(srv, origin):
    """welcome, or the error code and the close code."""
    ws = await connect(srv.url, origin=origin)
    try:  # a refused connection may be closed already: its error is still to be read
        await ws.send(json.dumps({"type": "hello", "role": "viewer"}))
    except websockets.ConnectionClosed:
        pass
    try:
        m = await recv(ws)
    except websockets.ConnectionClosed:
        m = {}
    if m.get("type") == "welcome":
        await ws.close()
        return "welcome"
    ok = await closed(ws)
    return "%s/%s" % (m.get("code"), ws.close_code if ok else "open")


async def test_origin():
    srv = Server("--allow-origin", "https://ops.example", "--allow-origin", "null")
    own = "http://127.0.0.1:%d" % srv.port
    cases = [(None, "welcome"), (own, "welcome"), ("https://ops.example", "welcome"),
             ("HTTPS://OPS.EXAMPLE", "welcome"), ("null", "welcome"),
             ("https://evil.example", "forbidden/1008"),
             ("https://ops.example.evil.example", "forbidden/1008"),
             ("http://localhost:%d" % srv.port, "forbidden/1008"),  # not the Host it asked
             ("https://127.0.0.1:%d" % srv.port, "forbidden/1008"),  # not the scheme served
             (own + "/", "forbidden/1008")]
    try:
        for origin, want in cases:
            got = await origin_answer(srv, origin)
            check(got == want, "Origin %r: %s, want %s" % (origin, got, want))
        check(await srv.logged("origin 'https://evil.example' not allowed"),
              "the log names the origin")
    finally:
        check(srv.stop() == 0, "origin server exits 0")
    srv = Server("--allow-origin", "*")
    try:
        got = await origin_answer(srv, "https://evil.example")
        check(got == "welcome", "--allow-origin '*': any origin (%s)" % got)
    finally:
        check(srv.stop() == 0, "origin * server exits 0")
    FIGURES["origins_tried"] = len(cases) + 1


async def test_connection_limits():
    srv = Server("--max-per-address", "2")
    try:
        a, m = await hello(srv.url, "pa-1")
        b, m = await hello(srv.url, "pa-2")
        c = await connect(srv.url)
        m = await recv(c)
        check(m.get("code") == "too_many_connections" and "max_per_address" in m["message"],
              "third connection from one address: %s" % m)
        check(await closed(c) and c.close_code == 1008, "it is closed with 1008 (%s)" % c.close_code)
        await a.close()
        d, m = await hello_again(srv.url, "pa-3")  # once the server has seen a close
        check(m["type"] == "welcome", "a slot of the address is free again: %s" % m)
        await b.close()
        await d.close()
    finally:
        check(srv.stop() == 0, "per-address server exits 0")
    srv = Server("--max-connections", "2")
    try:
        held = [RawWS(srv.port), RawWS(srv.port)]
        extra = RawWS(srv.port)
        check([h.status for h in held] == [101, 101] and extra.status == 503,
              "past max_connections 2: HTTP %d, want 503" % extra.status)
        check(await srv.logged("handshake refused (max_connections)"),
              "the log says max_connections")
        for x in held + [extra]:
            x.close()
    finally:
        check(srv.stop() == 0, "max_connections server exits 0")


async def test_max_rate():
    srv = Server("--max-rate", "50")
    try:
        # 300 frames in one write, over a raw socket: python3-websockets stops
        # reading once its own writes fail, so it would not show the error
        raw = RawWS(srv.port)
        raw.send(json.dumps({"type": "hello", "role": "robot", "robot": "hasty"}))
        raw.recv_message()
        raw.s.sendall(b"".join(RawWS.frame(json.dumps(far_scan(k, k * 0.01)).encode())
                               for k in range(1, 301)))
        answered, error, close = 0, None, None
        while True:
            op, data = raw.recv_message()
            if op != 1:
                close = data if op == 8 else None
                break
            m = json.loads(data)
            if m["type"] == "setpoint" and m["state"] != "stale":
                check(error is None, "no setpoint after the rate error")
                answered += 1
            elif m["type"] == "error":
                error = m
        raw.close()
        check(error and error["code"] == "rate_limited" and "50 messages per second"
              in error["message"], "flood past max_rate: %s" % error)
        check(close and close[:2] == b"\x03\xf0", "flood past max_rate: close frame %r (1008)"
              % close)
        # the bucket holds 50 (less the hello's token) and refills at 50/s while
        # the server works through the burst: how many pass depends on its speed
        check(40 <= answered < 300, "frames answered before the limit: %d of 300" % answered)
        # a robot under the limit is not touched
        calm, m = await hello(srv.url, "calm")
        for k in range(1, 21):
            await calm.send(json.dumps(far_scan(k, k * 0.05)))
            m = await recv_type(calm, "setpoint")
            await asyncio.sleep(0.03)  # kept: the pace is the point (about 30 Hz, under 50)
        check(m["seq"] == 20, "a robot at about 30 Hz is not limited")
        await calm.close()
        FIGURES["max_rate_50_answered_before_close"] = answered
    finally:
        check(srv.stop() == 0, "rate server exits 0")


# request path -> "ok" (served from inside), or "refused" (never the secret)
STATIC = [
    ("/", "ok"), ("/index.html", "ok"), ("/sub/page.html", "ok"), ("/sub/home.html", "ok"),
    ("/sub/../index.html", "ok"),
    ("/../secret.txt", "refused"), ("/sub/../../secret.txt", "refused"),
    ("/%2e%2e/secret.txt", "refused"), ("/%2E%2E/secret.txt", "refused"),
    ("/%2e%2e%2fsecret.txt", "refused"), ("/..%2fsecret.txt", "refused"),
    ("/sub/..%2f..%2fsecret.txt", "refused"), ("/%252e%252e/secret.txt", "refused"),
    ("/%252e%252e%252fsecret.txt", "refused"), ("/..%5csecret.txt", "refused"),
    ("/..\\secret.txt", "refused"), ("//../secret.txt", "refused"), ("/./../secret.txt", "refused"),
    ("/%c0%ae%c0%ae/secret.txt", "refused"), ("/.%2e/secret.txt", "refused"),
    ("/..;/secret.txt", "refused"), ("/index.html%00../../secret.txt", "refused"),
    ("/..", "ok"),  # ".." above the root stays at the root: the page
    ("http://127.0.0.1/../secret.txt", "refused"), ("/leak.txt", "refused"),
    ("/outside/secret.txt", "refused"), ("/etc/passwd", "refused"), ("/etcdir/passwd", "refused"),
    ("/etcdir/hostname", "refused"), ("/nothing.html", "refused"),
]


async def test_static(tmp):
    top = os.path.join(tmp, "static")
    web = os.path.join(top, "web")
    os.makedirs(os.path.join(web, "sub"))
    files = {"web/index.html": "<html>INDEX</html>", "web/sub/page.html": "<html>PAGE</html>",
             "secret.txt": SECRET}
    for rel, text in files.items():
        with open(os.path.join(top, rel), "w") as f:
            f.write(text)
    os.symlink("../index.html", os.path.join(web, "sub", "home.html"))  # inside: served
    os.symlink("../secret.txt", os.path.join(web, "leak.txt"))          # out: refused
    os.symlink(top, os.path.join(web, "outside"))                       # a directory out
    os.symlink("/etc", os.path.join(web, "etcdir"))
    srv = Server("--web", web)
    results = {}
    try:
        for path, want in STATIC:
            status, body = http_get(srv.port, path)
            leaked = SECRET.encode() in body or b"root:" in body
            got = "ok" if status == 200 and not leaked else ("LEAK" if leaked else "refused")
            results[path] = status
            check(got == want, "GET %s: HTTP %d, %s, want %s" % (path, status, got, want))
        check(await srv.logged("'/leak.txt' refused (leads outside the web directory)"),
              "the log says a link led outside")
    finally:
        check(srv.stop() == 0, "static server exits 0")
    FIGURES["static_requests"] = len(STATIC)
    FIGURES["static_statuses"] = results


async def main():
    with tempfile.TemporaryDirectory() as tmp:
        await test_token_off_loopback(tmp)
        await test_tls(tmp)
        await test_origin()
        await test_connection_limits()
        await test_max_rate()
        await test_static(tmp)
    return finish("security")


if __name__ == "__main__":
    set_exe(sys.argv)
    sys.exit(asyncio.run(asyncio.wait_for(main(), 600 if SLOW else 120)))
