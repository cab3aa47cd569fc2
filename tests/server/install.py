#!/usr/bin/env python3
"""`meson install` gives a working daemon: install.py BUILD_DIR PART

Installs the build into a temporary DESTDIR (`meson install --destdir`, no
root, no network) and checks what landed there. PART is one of:

  daemon  the installed program starts on a free loopback port with the
          installed example configuration and serves the installed viewer
          (GET / is the installed index.html, byte for byte); a copy of the
          program with no viewer anywhere refuses to start (exit 2, one line
          naming every path it tried) and starts with --web; one man page per
          command of `lacuna --help`, each saying exactly the words of that
          command's --help (the SAFETY text of serve with them) and clean for
          groff; the example configuration means what its README says; the
          systemd unit runs the installed program as no root with the
          hardening keys below.
  unit    `systemd-analyze verify` finds nothing to say about the installed
          unit (its man: references resolved in the DESTDIR), and `systemd-
          analyze security --offline` rates its exposure at most 2.0 of 10
          ("OK"). Exit 77 (skipped) without systemd-analyze.

Where each file goes is read from `meson introspect --installed`, so the
checks follow --prefix, --datadir, --mandir, --sysconfdir and
-Dsystemdunitdir. MESON (env) is the meson command, else `meson` on PATH.
"""
import json
import os
import re
import shutil
import signal
import subprocess
import sys
import tempfile
import urllib.request

FAILED = []
T = 15  # s, every single wait
LISTENING = re.compile(r"listening on http://127\.0\.0\.1:(\d+)/")


def check(cond, what):
    print(("ok  " if cond else "FAIL") + "  " + what, flush=True)
    if not cond:
        FAILED.append(what)
    return cond


def run(argv, **kw):
    return subprocess.run(argv, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
                          timeout=kw.pop("timeout", 120), **kw)


class Install:
    """The build installed under a fresh DESTDIR; paths as installed (no DESTDIR)
    and as found in the DESTDIR (dest())."""

    def __init__(self, build, tmp):
        meson = os.environ.get("MESON", "meson")
        self.root = os.path.join(tmp, "root")
        r = run([meson, "install", "-C", build, "--no-rebuild", "--quiet", "--destdir", self.root])
        if r.returncode != 0:
            sys.exit("meson install failed (%d): %s%s" % (r.returncode, r.stdout, r.stderr))
        r = run([meson, "introspect", "--installed", build])
        self.installed = json.loads(r.stdout)
        by_name = {os.path.basename(dst): dst for dst in self.installed.values()}
        self.exe = by_name["lacuna"]
        self.web = by_name["web"]
        self.config = by_name["serve.json"]
        self.unit = by_name["lacuna.service"]
        self.readme = by_name["README.daemon.md"]
        self.man = {name[:-2]: dst for name, dst in by_name.items() if name.endswith(".1")}

    def dest(self, path):
        return os.path.join(self.root, path.lstrip("/"))


# ------------------------------------------------------------ the daemon

def serve(argv):
    """Start a server; (process, port or None, stderr lines so far)."""
    proc = subprocess.Popen(argv, stdin=subprocess.DEVNULL, stdout=subprocess.DEVNULL,
                            stderr=subprocess.PIPE, text=True)
    lines = []
    for line in proc.stderr:
        lines.append(line)
        m = LISTENING.search(line)
        if m:
            return proc, int(m.group(1)), lines
    proc.wait(T)
    return proc, None, lines


def stop(proc):
    proc.send_signal(signal.SIGTERM)
    try:
        rest = proc.communicate(timeout=T)[1]
    except subprocess.TimeoutExpired:
        proc.kill()
        rest = proc.communicate()[1]
    return proc.returncode, rest


def get(port, path):
    with urllib.request.urlopen("http://127.0.0.1:%d%s" % (port, path), timeout=T) as r:
        return r.status, r.read()


def check_installed_server(inst, tmp):
    exe, web = inst.dest(inst.exe), inst.dest(inst.web)
    record = os.path.join(tmp, "recordings")
    proc, port, lines = serve([exe, "serve", "--config", inst.dest(inst.config),
                               "--listen", "127.0.0.1:0", "--record", record])
    if not check(port is not None, "the installed lacuna serve starts with the installed "
                                   "serve.json: " + "".join(lines).strip()):
        return
    try:
        status, body = get(port, "/")
        with open(os.path.join(web, "index.html"), "rb") as f:
            page = f.read()
        check(status == 200 and body == page,
              "GET / is the installed viewer's index.html (%d, %d bytes)" % (status, len(body)))
        check(b"<title>lacuna viewer</title>" in body, "the page is the lacuna viewer")
        status, js = get(port, "/lacuna.js")
        check(status == 200 and len(js) == os.path.getsize(os.path.join(web, "lacuna.js")),
              "GET /lacuna.js is the installed script")
    finally:
        rc, rest = stop(proc)
    log = "".join(lines) + rest
    check(rc == 0, "SIGTERM: exit 0 (got %s)" % rc)
    # The DESTDIR's own viewer, found from the program's place: not the
    # compiled-in path (nothing there under a DESTDIR) nor the source tree.
    check("viewer page from %s\n" % os.path.realpath(web) in log,
          "it says it serves the DESTDIR's viewer: " + log.strip().splitlines()[0])
    check(os.path.isdir(record), "--record DIR made")


def check_refusal(inst, tmp):
    """A copy of the program with no viewer beside it or where it was built for."""
    compiled_in = inst.web
    if os.path.isdir(compiled_in):
        print("note: %s exists on this machine (an installed lacuna): the copy would find "
              "it, so the refusal is checked with --web only" % compiled_in, flush=True)
    lonely = os.path.join(tmp, "lonely")
    bindir = os.path.join(lonely, os.path.relpath(os.path.dirname(inst.exe), "/"))
    os.makedirs(bindir)
    exe = os.path.join(bindir, "lacuna")
    shutil.copy2(inst.dest(inst.exe), exe)
    # every place it may look: its installed place seen from the copy, beside a
    # build (../web, web), and the compiled-in data directory
    from_bin = os.path.relpath(inst.web, os.path.dirname(inst.exe))
    tried = [os.path.normpath(os.path.join(bindir, from_bin)),
             os.path.normpath(os.path.join(bindir, "..", "web")),
             os.path.join(bindir, "web"), compiled_in]
    if not os.path.isdir(compiled_in):
        r = run([exe, "serve", "--listen", "127.0.0.1:0"], timeout=T)
        err = r.stderr.strip()
        check(r.returncode == 2, "no viewer anywhere: exit 2 (got %d)" % r.returncode)
        check(len(err.splitlines()) == 1 and "no viewer page found" in err,
              "one line saying why: " + err)
        for path in tried:
            check(path in err, "it names " + path)
        check("--web" in err, "it says to give --web")
    r = run([exe, "serve", "--listen", "127.0.0.1:0", "--web", os.path.join(lonely, "nowhere")],
            timeout=T)
    check(r.returncode == 2 and "web: " in r.stderr, "--web on a missing directory: exit 2, "
          "naming web: " + r.stderr.strip())
    proc, port, lines = serve([exe, "serve", "--listen", "127.0.0.1:0",
                               "--web", inst.dest(inst.web)])
    if check(port is not None, "the copy starts when --web is given"):
        check(get(port, "/")[0] == 200, "and serves the page given")
        check(stop(proc)[0] == 0, "and stops on SIGTERM with exit 0")


# ------------------------------------------------------------ man pages

def untroff(text):
    """The words a man page says from SYNOPSIS to FILES / SEE ALSO."""
    words, on = [], False
    for line in text.splitlines():
        if line.startswith(".SH"):
            on = line.split(None, 1)[1] in ("SYNOPSIS", "DESCRIPTION")
            continue
        if not on or line.startswith("."):
            continue
        line = re.sub(r"\\f[BIRP]", "", line).replace("\\&", "").replace("\\-", "-")
        words += line.replace("\\e", "\\").split()
    return words


def help_words(text, main):
    """The words of a --help text, less "usage:" and the main help's title line."""
    lines = text.splitlines()[1:] if main else text.splitlines()
    return [w for line in lines for i, w in enumerate(line.split())
            if not (i == 0 and w == "usage:")]


def check_man_pages(inst):
    exe = inst.dest(inst.exe)
    main_help = run([exe, "--help"]).stdout
    table = main_help.split("commands:\n", 1)[1].split("\n\n", 1)[0]
    commands = [line.split()[0] for line in table.splitlines() if line.strip()]
    check(len(commands) >= 6, "lacuna --help lists its commands: " + " ".join(commands))
    want = ["lacuna"] + ["lacuna-" + c for c in commands]
    check(sorted(inst.man) == sorted(want),
          "one man page per command, no other: %s" % " ".join(sorted(inst.man)))
    groff = shutil.which("groff")
    if not groff:
        print("note: no groff: the pages are not rendered", flush=True)
    for name in want:
        path = inst.dest(inst.man.get(name, "/nonexistent/" + name))
        if not check(os.path.isfile(path), "%s(1) installed in %s" % (name, os.path.dirname(path))):
            continue
        with open(path) as f:
            text = f.read()
        cmd = [] if name == "lacuna" else [name[len("lacuna-"):]]
        said = help_words(run([exe, *cmd, "--help"]).stdout, not cmd)
        page = untroff(text)
        first = next((i for i, (a, b) in enumerate(zip(said, page)) if a != b), None)
        check(said == page, "%s(1) says the words of `lacuna %s--help`, in order%s" % (
            name, " ".join(cmd) + " " if cmd else "",
            "" if said == page else " (first difference at word %s: %r vs %r)" % (
                first, said[first:first + 4], page[first:first + 4]) if first is not None
            else " (lengths %d vs %d)" % (len(said), len(page))))
        if groff:
            r = run([groff, "-man", "-ww", "-z", "-Tutf8", path])
            check(r.returncode == 0 and not r.stderr.strip(),
                  "%s(1): groff has no warning %s" % (name, r.stderr.strip()))
    with open(inst.dest(inst.man["lacuna-serve"])) as f:
        serve = " ".join(untroff(f.read()))
    check("SAFETY. lacuna is not a safety-rated component. A robot that moves near people "
          "needs a safety-rated protective stop" in serve, "lacuna-serve(1) holds the SAFETY text")


# ------------------------------------------------------------ configuration and unit

def check_config(inst):
    exe, path = inst.dest(inst.exe), inst.dest(inst.config)
    with open(path) as f:
        example = json.load(f)
    r = run([exe, "serve", "--config", path, "--print-config"])
    if not check(r.returncode == 0, "lacuna serve --config serve.json --print-config: exit 0 "
                                    + r.stderr.strip()):
        return
    effective = json.loads(r.stdout)
    for key, value in example.items():
        got = effective.get(key)
        if isinstance(value, list):
            value = ",".join(value)
        check(got == value, "serve.json %s is in effect (%r)" % (key, got))
    with open(inst.dest(inst.readme)) as f:
        readme = f.read()
    for key in example:
        check("- `%s`" % key in readme or "`%s`:" % key in readme,
              "README.daemon.md explains serve.json's %s" % key)


def unit_keys(path):
    keys = {}
    with open(path) as f:
        for line in f:
            line = line.strip()
            if line and not line.startswith(("#", ";", "[")) and "=" in line:
                k, v = line.split("=", 1)
                keys.setdefault(k.strip(), []).append(v.strip())
    return keys


def check_unit(inst):
    keys = unit_keys(inst.dest(inst.unit))
    one = {k: v[-1] for k, v in keys.items()}
    user = one.get("User", "")
    check(one.get("DynamicUser") == "yes" or (user and user not in ("root", "0")),
          "a user of its own, not root (DynamicUser=%s, User=%s)" % (one.get("DynamicUser"), user))
    check("User" not in one or user not in ("root", "0"), "no User=root")
    want = {"ProtectSystem": "strict", "PrivateTmp": "yes", "NoNewPrivileges": "yes",
            "ProtectHome": "yes", "PrivateDevices": "yes", "CapabilityBoundingSet": "",
            "ProtectKernelTunables": "yes", "ProtectKernelModules": "yes",
            "ProtectControlGroups": "yes", "RestrictSUIDSGID": "yes",
            "MemoryDenyWriteExecute": "yes", "SystemCallArchitectures": "native"}
    for k, v in want.items():
        check(one.get(k) == v, "%s=%s (got %r)" % (k, v, one.get(k)))
    check(one.get("StateDirectory") == "lacuna", "StateDirectory=lacuna")
    check("SystemCallFilter" in one and "RestrictAddressFamilies" in one,
          "system calls and address families restricted")
    start = one.get("ExecStart", "").split()
    check(start[:2] == [inst.exe, "serve"], "ExecStart runs the installed %s serve" % inst.exe)
    arg = {start[i]: start[i + 1] for i in range(2, len(start) - 1) if start[i].startswith("--")}
    check(arg.get("--config") == inst.config, "--config the installed " + inst.config)
    check(arg.get("--record") in ("%S/lacuna", "${STATE_DIRECTORY}", "$STATE_DIRECTORY"),
          "--record the state directory (got %r)" % arg.get("--record"))
    check("man:lacuna-serve(1)" in one.get("Documentation", ""),
          "Documentation= names lacuna-serve(1)")


def check_unit_tools(inst, tmp):
    analyze = shutil.which("systemd-analyze")
    if not analyze:
        print("no systemd-analyze (apt-get install systemd): skipped", flush=True)
        sys.exit(77)
    # The unit names the program at its installed place; under the DESTDIR it
    # is elsewhere, so check a copy that names it there (nothing else differs).
    with open(inst.dest(inst.unit)) as f:
        text = f.read()
    check(inst.exe in text, "the unit names " + inst.exe)
    copy = os.path.join(tmp, "lacuna.service")
    with open(copy, "w") as f:
        f.write(text.replace(inst.exe, inst.dest(inst.exe)))
    mandir = os.path.dirname(os.path.dirname(inst.dest(inst.man["lacuna"])))
    env = dict(os.environ, MANPATH=mandir)
    r = run([analyze, "verify", copy], env=env, cwd=tmp)
    check(r.returncode == 0 and not (r.stdout + r.stderr).strip(),
          "systemd-analyze verify: nothing to say (%s)" % (r.stdout + r.stderr).strip())
    r = run([analyze, "security", "--offline=yes", "--threshold=20", copy], cwd=tmp)
    m = re.search(r"Overall exposure level for \S+: ([0-9.]+)", r.stdout + r.stderr)
    if m is None and "offline" in r.stderr:
        print("note: this systemd-analyze has no security --offline", flush=True)
        return
    check(r.returncode == 0 and m is not None,
          "systemd-analyze security: exposure %s of 10, at most 2.0" % (m.group(1) if m else "?"))


def main():
    if len(sys.argv) != 3 or sys.argv[2] not in ("daemon", "unit"):
        sys.exit("usage: install.py BUILD_DIR daemon|unit")
    build, part = sys.argv[1], sys.argv[2]
    tmp = tempfile.mkdtemp(prefix="lacuna-install-")
    try:
        inst = Install(build, tmp)
        if part == "daemon":
            check_installed_server(inst, tmp)
            check_refusal(inst, tmp)
            check_man_pages(inst)
            check_config(inst)
            check_unit(inst)
        else:
            check_unit_tools(inst, tmp)
    finally:
        shutil.rmtree(tmp, ignore_errors=True)
    if FAILED:
        print("%d check(s) failed" % len(FAILED), flush=True)
        sys.exit(1)
    print("all install checks passed", flush=True)


if __name__ == "__main__":
    main()
