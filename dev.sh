#!/usr/bin/env bash
# dev.sh - the README's quick start: `./dev.sh demo` and `./dev.sh test`;
# `./dev.sh bench` measures the README's performance figures again.
#
# Each command does its own set-up on a fresh Debian 12 machine: installs the
# Debian packages that are missing (as root, or through sudo), configures
# and builds with meson, then runs. Build directories: build/ (normal),
# build-san/ (ASan + UBSan), build-fuzz/ (clang, libFuzzer; tests/fuzz/run.sh).
set -euo pipefail
cd "$(dirname "$0")"

RUNTIME_PKGS=(gcc pkg-config meson ninja-build libqhull-dev libcjson-dev libwebsockets-dev)
TEST_PKGS=(libcmocka-dev libgeos-dev coinor-libipopt-dev python3 python3-websockets
           python3-jsonschema libxml2-utils chromium openssl valgrind groff-base systemd
           clang libclang-rt-14-dev)

say() { printf '==> %s\n' "$*" >&2; }

ensure_packages() {
    local missing=()
    for p in "$@"; do
        dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q 'install ok installed' ||
            missing+=("$p")
    done
    [ ${#missing[@]} -eq 0 ] && return 0
    say "installing Debian packages: ${missing[*]}"
    local sudo=()
    [ "$(id -u)" -eq 0 ] || sudo=(sudo)
    "${sudo[@]}" apt-get update -qq
    DEBIAN_FRONTEND=noninteractive "${sudo[@]}" apt-get install -y -qq --no-install-recommends \
        "${missing[@]}" >/dev/null
}

# configure DIR [meson options...]: set up once, reconfigure when options change.
configure() {
    local dir=$1
    shift
    if [ -f "$dir/build.ninja" ]; then
        meson configure "$dir" "$@" >/dev/null
    else
        meson setup "$dir" "$@" >/dev/null
    fi
}

build() {
    local dir=$1
    shift
    configure "$dir" "$@"
    say "building $dir"
    meson compile -C "$dir" >/dev/null || meson compile -C "$dir"
}

suite() {
    local dir=$1
    say "running the test suite in $dir"
    meson test -C "$dir" --print-errorlogs --num-processes 2
}

cmd_demo() {
    ensure_packages "${RUNTIME_PKGS[@]}"
    build build
    exec scripts/demo.sh build/lacuna
}

cmd_test() {
    ensure_packages "${RUNTIME_PKGS[@]}" "${TEST_PKGS[@]}"
    # The browser test's driver (tests/web/package-lock.json); Debian's node
    # and npm unless a node with npm is installed already.
    command -v npm >/dev/null || ensure_packages nodejs npm
    npm ci --prefix tests/web --no-audit --no-fund --prefer-offline >/dev/null
    build build -Dwerror=true -Dtests=enabled -Dipopt=enabled
    suite build
    build build-san -Dwerror=true -Dtests=enabled -Dipopt=enabled \
        -Db_sanitize=address,undefined -Db_lundef=false
    ASAN_OPTIONS=detect_leaks=1:abort_on_error=1 \
        UBSAN_OPTIONS=print_stacktrace=1:halt_on_error=1 suite build-san
    say "fuzzing every decoder for ${LACUNA_FUZZ_SECONDS:-15} s each (libFuzzer, ASan+UBSan)"
    tests/fuzz/run.sh
    say "all tests passed (normal and ASan+UBSan builds, fuzzing)"
}

# The README's performance figures, measured again on this machine: every
# stage, the ellipse solver beside Ipopt, decoding, then the websocket round
# trip (five runs). Prints figures; never a pass or fail on time.
cmd_bench() {
    ensure_packages "${RUNTIME_PKGS[@]}" coinor-libipopt-dev
    build build -Dipopt=enabled
    say "lacuna bench (about 15 s)"
    build/lacuna bench
    say "lacuna bench --roundtrip --runs 5 (about 30 s)"
    build/lacuna bench --roundtrip --runs 5
}

case "${1:-}" in
demo) cmd_demo ;;
test) cmd_test ;;
bench) cmd_bench ;;
*)
    echo "usage: ./dev.sh demo | ./dev.sh test | ./dev.sh bench" >&2
    exit 2
    ;;
esac
