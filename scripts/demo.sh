#!/usr/bin/env bash
# demo.sh LACUNA - the README's demo: a live patrol you can watch.
#
# Starts `lacuna serve` on 127.0.0.1 (port 7640, or a free one when 7640 is
# taken; LACUNA_DEMO_PORT overrides), prints the viewer URL, then drives two
# simulated robots through it with `lacuna sim --connect`, each looping its
# invented site until Ctrl-C: a unicycle on an office floor round and a
# holonomic robot sweeping warehouse aisles (the page's robot picker
# switches between them). Ctrl-C (or SIGTERM) stops the robots, then the
# server, which sends each robot a last stop setpoint.
# LACUNA_DEMO_SECONDS=N stops the demo by itself after N seconds.
set -euo pipefail
exe=${1:-build/lacuna}
root=$(cd "$(dirname "$0")/.." && pwd)
port=${LACUNA_DEMO_PORT:-7640}
log=$(mktemp -t lacuna-demo.XXXXXX)
pids=()

stop() {
    trap - INT TERM EXIT
    for p in "${pids[@]}"; do kill -INT "$p" 2>/dev/null || true; done
    for p in "${pids[@]}"; do wait "$p" 2>/dev/null || true; done
    rm -f "$log"
    echo
    echo "demo stopped"
    exit 0
}

# The port the server reports in its "listening on" line, once it listens.
wait_listening() {
    local i
    for i in $(seq 1 100); do
        if grep -q 'listening on' "$log"; then
            sed -n 's|.*listening on http://[^:]*:\([0-9]*\)/.*|\1|p' "$log" | head -n 1
            return 0
        fi
        kill -0 "${pids[0]}" 2>/dev/null || return 1
        sleep 0.1
    done
    return 1
}

start_server() {
    "$exe" serve --listen "127.0.0.1:$1" --web "$root/web" --log-level warn 2>"$log" &
    pids=($!)
}

trap stop INT TERM
start_server "$port"
if ! got=$(wait_listening); then
    wait "${pids[0]}" 2>/dev/null || true
    if [ -z "${LACUNA_DEMO_PORT:-}" ]; then
        echo "port $port is taken: using a free port instead" >&2
        start_server 0
        got=$(wait_listening) || { cat "$log" >&2; exit 1; }
    else
        cat "$log" >&2
        exit 1
    fi
fi
trap stop EXIT

cat <<EOF
lacuna demo: two simulated robots patrol invented sites through lacuna serve.

    open http://127.0.0.1:$got/ in a browser to watch them live
    (pick a robot at the top of the map; the panel says why it slows or stops)

Ctrl-C stops the demo. lacuna is not a safety-rated component: see
'$exe serve --help' before driving a real robot.
EOF

for s in office_round warehouse_aisles; do
    "$exe" sim "$root/scenarios/$s.jsonl" --connect "ws://127.0.0.1:$got/" --laps 0 \
        --json >/dev/null &
    pids+=($!)
done
if [ -n "${LACUNA_DEMO_SECONDS:-}" ]; then
    sleep "$LACUNA_DEMO_SECONDS" &
    pids+=($!)
fi
# Ends at Ctrl-C, or when a robot, the server or the timer ends by itself.
wait -n "${pids[@]}" || true
stop
