#!/usr/bin/env python3
"""lacuna_v2.py - a lacuna.v1 recording, scenario file or plan request
rewritten for lacuna.v2 (proto/PROTOCOL.md), in place or to stdout.

What changes, line by line, everything else byte for byte:
- the scan frame's keys: angle_start -> bearing_first, angle_step ->
  bearing_step, range_min -> near, range_max -> far, ranges -> dist (in a
  frame, a plan request's frames and a scenario header's "sensor" alike);
- a welcome's "protocol": "lacuna.v1" becomes "lacuna.v2";
- every setpoint line without "valid_ms" gets the one lacuna.v2 sends: two
  of its step's control periods, at most the watchdog (from the header's
  "control"; without one, a file of lacuna sim: the stamp difference, the
  fastest sensor's period for the first frame, no watchdog), so that
  `lacuna replay` compares it too. A stop that answers no frame (the
  watchdog's, the last one at shutdown) keeps the valid_ms of the setpoint
  before it. A shutdown stop recorded as state idle stays as it was: the
  file cannot tell it from a stop of the route.

usage: lacuna_v2.py FILE... [--in-place]
"""
import json
import re
import sys

NAMES = {"angle_start": "bearing_first", "angle_step": "bearing_step", "range_min": "near",
         "range_max": "far", "ranges": "dist"}
KEY = re.compile(r'"(angle_start|angle_step|range_min|range_max|ranges)"(\s*:)')
PROTOCOL = re.compile(r'("protocol"\s*:\s*)"lacuna\.v1"')


class Periods:
    """The control period rule of src/core/control.h, as a recording's
    header states it, and valid_ms from it."""

    def __init__(self, header):
        c = header.get("control")
        if c is not None:
            self.period = c.get("period", 0)
            self.dt_min, self.dt_max = c.get("dt_min", 1e-4), c.get("dt_max", 1.0)
            self.first_dt, self.watchdog_ms = c.get("first_dt", 0.05), c.get("watchdog_ms", 0)
        else:  # lc_control_stamps with lc_scenario_first_dt
            rates = [s.get("rate", 20) for s in header.get("sensors", [])]
            if "sensor" in header:
                rates.append(header["sensor"].get("rate", 20))
            self.period, self.dt_min, self.dt_max, self.watchdog_ms = 0, 0, float("inf"), 0
            self.first_dt = 1.0 / max(rates) if rates and max(rates) > 0 else 0.05
        self.prev = None  # stamp of the last frame
        self.dt = self.first_dt

    def frame(self, stamp):
        if self.prev is not None and stamp == self.prev:
            return  # a revision of the same instant: the same period
        if self.period > 0:
            dt = self.period
        elif self.prev is None:
            dt = self.first_dt
        else:
            dt = stamp - self.prev
            if not dt > 0:
                dt = self.dt_min if self.dt_min > 0 else self.first_dt
        self.dt = min(max(dt, self.dt_min), self.dt_max)
        self.prev = stamp

    def valid_ms(self):
        ms = 2000.0 * self.dt
        if not ms >= 1:
            return 1
        if self.watchdog_ms > 0 and ms > self.watchdog_ms:
            ms = self.watchdog_ms
        return min(int(round(ms)), 1000000000)


def convert(text):
    out, periods = [], None
    for line in text.split("\n"):
        line = KEY.sub(lambda m: '"%s"%s' % (NAMES[m.group(1)], m.group(2)), line)
        line = PROTOCOL.sub(r'\1"lacuna.v2"', line)
        try:
            m = json.loads(line)
        except ValueError:
            out.append(line)  # blank, cut or not JSON: as it was
            continue
        kind = m.get("type") if isinstance(m, dict) else None
        if kind == "scenario":
            periods = Periods(m)
        elif kind in ("scan", "points") and periods is not None:
            periods.frame(m.get("stamp", 0))
        elif kind == "setpoint" and "valid_ms" not in m and periods is not None:
            body = line.rstrip()  # its last byte the object's "}"
            line = body[:-1] + (',"valid_ms":%d}' % periods.valid_ms()) + line[len(body):]
        out.append(line)
    return "\n".join(out)


def main(argv):
    files = [a for a in argv if not a.startswith("--")]
    in_place = "--in-place" in argv
    if not files or any(a.startswith("--") and a != "--in-place" for a in argv):
        sys.stderr.write(__doc__)
        return 2
    for path in files:
        with open(path, encoding="utf-8", newline="") as f:
            text = f.read()
        new = convert(text)
        if in_place:
            if new != text:
                with open(path, "w", encoding="utf-8", newline="") as f:
                    f.write(new)
        else:
            sys.stdout.write(new)
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
