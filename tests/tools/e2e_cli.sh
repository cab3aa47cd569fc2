#!/usr/bin/env bash
# e2e_cli.sh - the `lacuna` command as a user meets it: help, version, exit
# codes (docs/INTERFACES.md: 0 ok, 1 runtime failure, 2 bad usage or input with a
# one-line reason naming the field), and `lacuna plan` on the shipped
# example requests.
set -u
exe=${LACUNA_EXE:?}
root=${LACUNA_SOURCE_ROOT:?}
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
pass=0 fail=0

check() { # check NAME WANT_RC CMD... ; stdout/stderr kept in $tmp/out, $tmp/err
    local name=$1 want=$2
    shift 2
    "$@" >"$tmp/out" 2>"$tmp/err"
    local rc=$?
    if [ "$rc" -eq "$want" ]; then
        pass=$((pass + 1))
    else
        fail=$((fail + 1))
        echo "FAIL $name: exit $rc, wanted $want"
        sed 's/^/  err: /' "$tmp/err" | head -5
    fi
}

expect_in() { # expect_in NAME FILE PATTERN
    if grep -q -- "$3" "$2"; then pass=$((pass + 1)); else
        fail=$((fail + 1))
        echo "FAIL $1: '$3' not in $(basename "$2"):"
        head -5 "$2" | sed 's/^/  /'
    fi
}

check help 0 "$exe" --help
expect_in help "$tmp/out" "usage: lacuna <command>"
check version 0 "$exe" --version
expect_in version "$tmp/out" "^lacuna [0-9]"
check no-args 2 "$exe"
check unknown-command 2 "$exe" fly
expect_in unknown-command "$tmp/err" "unknown command 'fly'"
check plan-help 0 "$exe" plan --help
expect_in plan-help "$tmp/out" "usage: lacuna plan"
check plan-unknown-option 2 "$exe" plan --fast
check plan-missing-file 2 "$exe" plan "$tmp/nope.json"
check plan-directory 2 "$exe" plan "$tmp"
expect_in plan-directory "$tmp/err" "Is a directory"
expect_in plan-missing-file "$tmp/err" "cannot read"

for req in office-corner aisle-points cellar-door; do
    check "plan-$req" 0 "$exe" plan --json "$root/scenarios/requests/$req.json"
    python3 - "$tmp/out" <<'PY' || { fail=$((fail + 1)); echo "FAIL plan-$req: result shape"; }
import json, sys
r = json.load(open(sys.argv[1]))
for k in ("obstacles", "region", "ellipse", "target", "setpoint", "state", "limit", "timing_us"):
    assert k in r, k
assert r["region"]["vertices"] and r["region"]["halfspaces"]
assert "total" in r["timing_us"]
assert len(r["ellipse"]["matrix"]) == 2
PY
    pass=$((pass + 1))
    check "plan-$req-pretty" 0 "$exe" plan --pretty "$root/scenarios/requests/$req.json"
    expect_in "plan-$req-pretty" "$tmp/out" "limited by"
done

# Standard input, and bad requests: exit 2, one line naming the field.
check plan-stdin 0 sh -c "'$exe' plan --json - < '$root/scenarios/requests/office-corner.json'"
bad() { # bad NAME JSON FIELD
    printf '%s' "$2" >"$tmp/bad.json"
    check "bad-$1" 2 "$exe" plan "$tmp/bad.json"
    expect_in "bad-$1" "$tmp/err" "$3"
    [ "$(wc -l <"$tmp/err")" -eq 1 ] || { fail=$((fail + 1)); echo "FAIL bad-$1: reason not one line"; }
}
frame='"frame": {"type": "scan", "seq": 1, "stamp": 0, "pose": [0,0,0], "bearing_first": 0, "bearing_step": 0.1, "near": 0.1, "far": 5, "dist": [1, 2, null]}'
bad truncated '{"goal": [1, 2], ' "bad_json\|JSON\|json"
bad no-frame '{"goal": [1, 2]}' "frame"
bad radius "{\"robot\": {\"radius\": -1}, \"goal\": [1, 2], $frame}" "radius"
bad goal "{\"goal\": [1], $frame}" "goal"
bad step '{"goal": [1, 2], "frame": {"type": "scan", "seq": 1, "stamp": 0, "pose": [0,0,0], "bearing_first": 0, "bearing_step": 0, "near": 0.1, "far": 5, "dist": [1]}}' "bearing_step"
bad beam '{"goal": [1, 2], "frame": {"type": "scan", "seq": 1, "stamp": 0, "pose": [0,0,0], "bearing_first": 0, "bearing_step": 0.1, "near": 0.1, "far": 5, "dist": [1, "x"]}}' "frame.dist\[1\]"
bad dt "{\"goal\": [1, 2], \"dt\": -0.1, $frame}" "dt"

# lacuna check: the stopping distances of docs/REFERENCES.md (d = v t_r + v^2/(2a):
# 1.0 m/s, 0.1 s, 1.0 m/s^2 -> 0.60 m; 1.5 m/s, 0.2 s, 1.0 m/s^2 -> 1.425 m).
check check-060 0 "$exe" check --v-max 1.0 --latency 0.1 --a-max 1.0
expect_in check-060 "$tmp/out" "stopping distance  0.600 m"
check check-1425 1 "$exe" check --v-max 1.5 --latency 0.2 --a-max 1.0 --range 2.5 --strict
expect_in check-1425 "$tmp/out" "stopping distance  1.425 m"
expect_in check-1425 "$tmp/out" "WARNING"
expect_in check-1425 "$tmp/out" "not a safety function"
check check-bad 2 "$exe" check --a-max -1
expect_in check-bad "$tmp/err" "a-max"
# with the robot's shape: its front, 0.5 m ahead of the centre, needs d + 0.5
# (0.72 + 0.5 = 1.22 m at the defaults), more than half of a 2 m range
check check-footprint 1 "$exe" check --range 2 --strict \
    --footprint '[[0.5,-0.25],[0.5,0.25],[-0.5,0.25],[-0.5,-0.25]]'
expect_in check-footprint "$tmp/out" "0.500 m ahead of its centre: it needs 1.220 m"
expect_in check-footprint "$tmp/out" "WARNING"
check check-radius 0 "$exe" check --radius 0.3
expect_in check-radius "$tmp/out" "it needs 1.020 m"
check check-footprint-bad 2 "$exe" check --footprint '[[0.5,-0.25],[-0.5,-0.25],[-0.5,0.25]]'
expect_in check-footprint-bad "$tmp/err" "footprint: runs clockwise"
check check-two-shapes 2 "$exe" check --radius 0.3 --footprint '[[1,0],[0,1],[-1,-1]]'
check check-footprint-json 2 "$exe" check --footprint '[[1,0],'
expect_in check-footprint-json "$tmp/err" "not JSON"

# lacuna bench smoke test: the JSON shape of docs/INTERFACES.md and that the solver
# comparison ran (never a timing assertion).
check bench-quick 0 "$exe" bench --quick --json
python3 - "$tmp/out" <<'PY' && pass=$((pass + 1)) || { fail=$((fail + 1)); echo "FAIL bench-quick: JSON shape"; }
import json, sys
d = json.load(open(sys.argv[1]))
assert d["cases"], "no cases"
for c in d["cases"]:
    for k in ("name", "beams", "obstacles", "median_us", "p99_us", "stages"):
        assert k in c, k
    assert set(c["stages"]) >= {"ingest", "segment", "hull", "grow", "region", "ellipse", "target", "setpoint"}
e = d["ellipse"]
for k in ("lacuna_us", "reference_us", "reference", "max_rel_gap"):
    assert k in e, k
if e["reference"] != "none":
    assert e["reference_us"] is not None and e["max_rel_gap"] is not None, "comparison did not run"
    assert e["max_rel_gap"] <= 1e-6, e["max_rel_gap"]
c = d["codec"]
assert c["beams"] == 1081 and 0 < c["bytes_mm"] < c["bytes_full"], c
for k in ("decode_mm_us", "decode_full_us", "decode_mm_cjson_us"):
    assert c[k] is not None and c[k] > 0, k
PY
check bench-bad 2 "$exe" bench --frames 0

# The websocket round trip (its own lacuna serve on loopback): every frame
# answered, the figures present; no timing assertion.
check bench-roundtrip 0 "$exe" bench --roundtrip --seconds 0.5 --rate 1000 --runs 2 --json
python3 - "$tmp/out" <<'PY' && pass=$((pass + 1)) || { fail=$((fail + 1)); echo "FAIL bench-roundtrip: JSON"; cat "$tmp/out"; }
import json, sys
r = json.load(open(sys.argv[1]))["roundtrip"]
assert r["frames"] == 1000 and r["answered"] == 1000, r
for k in ("p50_us", "p99_us", "max_us", "achieved_hz"):
    assert r[k] > 0, k
assert r["p50_us"] <= r["p99_us"], r
assert 0 <= r["wake_lag_p50_us"] <= r["wake_lag_p99_us"] <= r["wake_lag_max_us"], r
assert len(r["runs"]) == 2, r
for run in r["runs"]:
    assert 0 < run["p50_us"] <= run["p99_us"] <= run["max_us"], run
PY
check bench-roundtrip-bad 2 "$exe" bench --roundtrip --rate 0
expect_in bench-roundtrip-bad "$tmp/err" "rate"
check bench-roundtrip-runs 2 "$exe" bench --roundtrip --runs 21
expect_in bench-roundtrip-runs "$tmp/err" "runs"

echo "$pass passed, $fail failed"
[ "$fail" -eq 0 ]
