#!/usr/bin/env python3
"""check_schemas.py - proto/schema against proto/examples.

Every schema must be a valid draft 2020-12 schema, every example must
validate against the schema of the same name, a few instances that the
codec refuses must be refused by the schemas too (so this check can fail),
and a few variants it accepts must be accepted. Every number of every
example is written as lacuna writes numbers (PROTOCOL.md, Numbers on the
wire: 15 significant digits when they read back to the same double, else
17), and no example uses a name of lacuna.v1's scan frame.
Needs python3-jsonschema (Debian 12 ships 4.10; newer releases resolve
references through the `referencing` package, older ones through
RefResolver: both are handled). Exit 77 (skipped) when it is missing.

usage: check_schemas.py [SOURCE_ROOT]   (default: LACUNA_SOURCE_ROOT or .)
"""
import copy
import json
import os
import re
import sys

try:
    import jsonschema
    from jsonschema import Draft202012Validator
except ImportError:
    print("check_schemas: python3-jsonschema is not installed; skipped")
    sys.exit(77)


def load(path):
    with open(path, encoding="utf-8") as f:
        return json.load(f)


def make_validators(schemas):
    """One validator per schema name, resolving references between files."""
    try:
        from referencing import Registry, Resource
        from referencing.jsonschema import DRAFT202012

        registry = Registry().with_resources(
            (s["$id"], Resource.from_contents(s, default_specification=DRAFT202012))
            for s in schemas.values())
        return {n: Draft202012Validator(s, registry=registry) for n, s in schemas.items()}
    except ImportError:
        store = {s["$id"]: s for s in schemas.values()}
        return {n: Draft202012Validator(
                    s, resolver=jsonschema.RefResolver.from_schema(s, store=store))
                for n, s in schemas.items()}


def refused_cases(examples):
    """(schema, instance, why): instances the codec refuses, built from examples."""
    cases = []

    def variant(name, why, change):
        inst = copy.deepcopy(examples[name])
        change(inst)
        cases.append((name, inst, why))

    variant("scan", "bearing_step 0", lambda m: m.update(bearing_step=0))
    variant("scan", "empty dist", lambda m: m.update(dist=[]))
    variant("scan", "a string beam", lambda m: m["dist"].__setitem__(1, "far"))
    variant("scan", "pose of 2 numbers", lambda m: m.update(pose=[0, 0]))
    variant("scan", "negative seq", lambda m: m.update(seq=-1))
    variant("scan", "fractional seq", lambda m: m.update(seq=1.5))
    variant("scan", "no dist", lambda m: m.pop("dist"))
    variant("scan", "near 0", lambda m: m.update(near=0))
    variant("scan", "far negative", lambda m: m.update(far=-1))
    variant("scan", "lacuna.v1's names", lambda m: m.update(
        angle_start=m.pop("bearing_first"), angle_step=m.pop("bearing_step"),
        range_min=m.pop("near"), range_max=m.pop("far"), ranges=m.pop("dist")))
    variant("points", "xy with null", lambda m: m["xy"].__setitem__(0, None))
    variant("route", "waypoint of 3", lambda m: m["waypoints"].__setitem__(0, [1, 2, 3]))
    variant("route", "tolerance 0", lambda m: m.update(tolerance=0))
    variant("route", "unknown policy", lambda m: m.update(on_blocked="retry"))
    variant("robot", "radius 0", lambda m: m.update(radius=0))
    variant("robot", "unknown model", lambda m: m.update(model="tank"))
    variant("robot", "wrong type", lambda m: m.update(type="route"))
    variant("robot", "no sensors in the list", lambda m: m.update(sensors=[]))
    variant("robot", "nine sensors", lambda m: m.update(sensors=[{"name": c} for c in "abcdefghi"]))
    variant("robot", "a sensor without a name", lambda m: m["sensors"][0].pop("name"))
    variant("robot", "a sensor name with a slash",
            lambda m: m["sensors"][1].update(name="cam/left"))
    variant("robot", "a sensor name of 33", lambda m: m["sensors"][0].update(name="s" * 33))
    variant("robot", "a scanner with a fov", lambda m: m["sensors"][0].update(fov=1.0))
    variant("robot", "a scanner with a height band", lambda m: m["sensors"][0].update(z_max=1.0))
    variant("robot", "an unknown sensor kind", lambda m: m["sensors"][1].update(kind="sonar"))
    variant("robot", "a fov of 0", lambda m: m["sensors"][1].update(fov=0))
    variant("robot", "a footprint of 2 vertices",
            lambda m: m.update(footprint=[[0.3, 0], [-0.3, 0]]))
    variant("robot", "a footprint of 17 vertices",
            lambda m: m.update(footprint=[[0.3, 0.01 * i] for i in range(17)]))
    variant("robot", "a footprint vertex of 3 numbers",
            lambda m: m.update(footprint=[[0.3, 0, 0], [0, 0.3], [-0.3, -0.3]]))
    variant("scan", "an empty sensor name", lambda m: m.update(sensor=""))
    variant("points", "a sensor name with a space", lambda m: m.update(sensor="cam 1"))
    variant("hello", "robot without a name", lambda m: m.pop("robot"))
    variant("hello", "name with a slash", lambda m: m.update(robot="a/b"))
    variant("hello", "unknown role", lambda m: m.update(role="admin"))
    variant("setpoint", "both velocity pairs", lambda m: m.update(vx=0, vy=0))
    variant("setpoint", "unknown state", lambda m: m.update(state="napping"))
    variant("setpoint", "no valid_ms", lambda m: m.pop("valid_ms"))
    variant("setpoint", "valid_ms 0", lambda m: m.update(valid_ms=0))
    variant("setpoint", "fractional valid_ms", lambda m: m.update(valid_ms=99.5))
    variant("warning", "unknown code", lambda m: m.update(code="typo"))
    variant("warning", "no message", lambda m: m.pop("message"))
    variant("warning", "negative seq", lambda m: m.update(seq=-1))
    variant("error", "unknown code", lambda m: m.update(code="oops"))
    variant("event", "unknown event", lambda m: m.update(event="teleported"))
    variant("plan_request", "dt 0", lambda m: m.update(dt=0))
    variant("plan_request", "no frame", lambda m: m.pop("frame"))
    variant("plan_request", "frame and frames", lambda m: m.update(frames=[m["frame"]]))
    variant("plan_request", "no frames", lambda m: (m.pop("frame"), m.update(frames=[])))
    variant("plan_request", "65 frames",
            lambda m: m.update(frames=[m.pop("frame")] * 65))
    variant("plan_request", "a frame of frames without dist",
            lambda m: m.update(frames=[{k: v for k, v in m.pop("frame").items() if k != "dist"}]))
    variant("plan_request", "goal of 3", lambda m: m.update(goal=[1, 2, 3]))
    variant("plan_result", "no setpoint", lambda m: m.pop("setpoint"))
    variant("scenario", "version 2", lambda m: m.update(version=2))
    variant("scenario", "sensor and sensors", lambda m: m.update(sensors=[{"name": "a"}]))
    variant("scenario", "a listed sensor without a name",
            lambda m: m.update(sensors=[{"rate": 10}]) or m.pop("sensor"))
    variant("scenario", "a listed sensor of an unknown kind",
            lambda m: m.update(sensors=[{"name": "a", "kind": "radar"}]) or m.pop("sensor"))
    variant("scenario", "a family of two words", lambda m: m.update(family="two words"))
    variant("scenario", "a negative shortest path", lambda m: m.update(shortest_path=-1))
    variant("scenario", "a sensor's far of 0", lambda m: m["sensor"].update(far=0))
    variant("scenario", "a control period below 0",
            lambda m: m.update(control={"period": -0.05}))
    variant("scenario", "a control watchdog of 0.5 ms",
            lambda m: m.update(control={"watchdog_ms": 0.5}))
    variant("scenario", "an unknown expectation", lambda m: m.update(expect="arrived"))
    return cases


def accepted_cases(examples):
    """(schema, instance, what): variants of the examples the codec accepts."""
    front = copy.deepcopy(examples["scan"])
    front.pop("mount")
    rear = copy.deepcopy(front)
    rear.update(seq=front["seq"] + 1, sensor="rear")
    request = copy.deepcopy(examples["plan_request"])
    request["frames"] = [request.pop("frame"), front, rear]
    robot = copy.deepcopy(examples["robot"])
    robot["sensors"] = [{"name": "front"}, {"name": "rear", "mount": [-0.3, 0, 3.14]},
                        {"name": "c.A-9_", "kind": "points"}]
    scenario = copy.deepcopy(examples["scenario"])
    scenario.pop("sensor")
    scenario["sensors"] = [{"name": "front", "mount": [0.3, 0, 0], "near": 0.1, "far": 12},
                           {"name": "cam", "kind": "points", "fov": 1.2, "rate": 30}]
    legged = copy.deepcopy(examples["robot"])
    legged.pop("radius")
    legged["footprint"] = [[0.5, -0.25], [0.5, 0.25], [-0.5, 0.25], [-0.5, -0.25]]
    scenario_fp = copy.deepcopy(examples["scenario"])
    scenario_fp["robot"] = {"model": "unicycle", "footprint": legged["footprint"],
                            "radius": 0.559}
    shutdown = copy.deepcopy(examples["setpoint"])
    shutdown.update(v=0, w=0, state="shutdown", limit="none")
    warning = copy.deepcopy(examples["warning"])
    warning.pop("seq")
    warning.update(code="unknown_key", message="unknown key 'robot.radus' ignored")
    recording = copy.deepcopy(examples["scenario"])
    recording["control"] = {"period": 0, "dt_min": 0.005, "dt_max": 0.2, "first_dt": 0.05,
                            "watchdog_ms": 200}
    return [("setpoint", shutdown, "the last stop at shutdown"),
            ("warning", warning, "no seq"),
            ("scenario", recording, "a recording's control object"),
            ("plan_request", request, "three frames"),
            ("robot", legged, "a polygon footprint, radius left out"),
            ("scenario", scenario_fp, "a footprint with its circumscribed radius"),
            ("scenario", scenario, "a list of sensors"),
            ("robot", robot, "a kind left out, a points sensor without fov"),
            ("scan", front, "a sensor named, no mount")]


def lacuna_number(x):
    """x as lacuna writes it: %.15g when that reads back to x, else %.17g."""
    text = "%.15g" % x
    return text if float(text) == x else "%.17g" % x


TOKEN = re.compile(r'"(?:[^"\\]|\\.)*"|-?\d+(?:\.\d+)?(?:[eE][-+]?\d+)?')
OLD_NAMES = ("angle_start", "angle_step", "range_min", "range_max", "ranges")


def number_faults(text):
    """The numbers of a JSON text not written as lacuna writes them."""
    return [t for t in TOKEN.findall(text)
            if not t.startswith('"') and re.search(r"[.eE]", t) and t != lacuna_number(float(t))]


def main():
    root = sys.argv[1] if len(sys.argv) > 1 else os.environ.get("LACUNA_SOURCE_ROOT", ".")
    schema_dir = os.path.join(root, "proto", "schema")
    example_dir = os.path.join(root, "proto", "examples")
    schemas = {f[:-5]: load(os.path.join(schema_dir, f))
               for f in sorted(os.listdir(schema_dir)) if f.endswith(".json")}
    examples = {f[:-5]: load(os.path.join(example_dir, f))
                for f in sorted(os.listdir(example_dir)) if f.endswith(".json")}
    texts = {f[:-5]: open(os.path.join(example_dir, f), encoding="utf-8").read()
             for f in sorted(os.listdir(example_dir)) if f.endswith(".json")}
    passed = failed = 0

    def report(ok, what):
        nonlocal passed, failed
        if ok:
            passed += 1
        else:
            failed += 1
            print("FAIL " + what)

    for name, s in schemas.items():
        try:
            Draft202012Validator.check_schema(s)
            report(True, name)
        except jsonschema.exceptions.SchemaError as e:
            report(False, "schema %s: %s" % (name, e.message))
    validators = make_validators(schemas)
    for name in schemas:
        if name != "defs":
            report(name in examples, "schema %s has no example" % name)
    for name, inst in examples.items():
        if name not in validators:
            report(False, "example %s has no schema" % name)
            continue
        errors = list(validators[name].iter_errors(inst))
        report(not errors, "example %s: %s" % (
            name, "; ".join("%s: %s" % (list(e.absolute_path), e.message) for e in errors[:3])))
    for name, text in texts.items():
        bad = number_faults(text)
        report(not bad, "example %s: numbers not in lacuna's format: %s" % (name, bad[:5]))
        old = [w for w in OLD_NAMES if '"%s"' % w in text]
        report(not old, "example %s: lacuna.v1 names %s" % (name, old))
    report(number_faults('{"v": 0.42999999999999999, "w": 12.0}') == ["0.42999999999999999", "12.0"],
           "the number check finds what it should")
    for name, inst, why in refused_cases(examples):
        report(not validators[name].is_valid(inst), "%s with %s validates" % (name, why))
    for name, inst, what in accepted_cases(examples):
        errors = list(validators[name].iter_errors(inst))
        report(not errors, "%s with %s refused: %s" % (
            name, what, "; ".join(e.message for e in errors[:3])))
    print("%d passed, %d failed" % (passed, failed))
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
