#!/usr/bin/env bash
# tests/fuzz/run.sh - build the libFuzzer targets (clang, ASan+UBSan, meson
# -Dfuzz=enabled) and fuzz each one for a while, starting from its seed corpus.
#
#   tests/fuzz/run.sh [-t SECONDS] [TARGET...]     TARGET: codec scenario config plan
#
# SECONDS per target (default 15, or $LACUNA_FUZZ_SECONDS): 4 targets x 15 s
# is the one-minute CI run; give 300 or more for a long run. Other settings:
#   LACUNA_FUZZ_BUILD   build directory (default build-fuzz in the project root)
#   LACUNA_FUZZ_KEEP    directory to keep the new inputs in (one subdirectory
#                       per target); default: a temporary directory, removed
#   LACUNA_FUZZ_JOBS    targets run at the same time (default 1)
#
# The committed corpus (tests/fuzz/corpus/TARGET) is only read: libFuzzer
# writes what it finds to the first corpus directory it is given, which here
# is a scratch one. A crash, leak, timeout or sanitizer report fails the run
# (exit 1); its input is copied to BUILD/fuzz-artifacts/ and the command that
# reproduces it is printed. Per target it prints runs, execs/s, the corpus
# at the end (seeds plus new inputs) and libFuzzer's coverage counter (cov:).
#
# Needs the Debian packages clang and libclang-rt-14-dev (libFuzzer's runtime;
# only a recommendation of clang, so --no-install-recommends leaves it out).
set -euo pipefail
cd "$(dirname "$0")/../.."
root=$PWD

seconds=${LACUNA_FUZZ_SECONDS:-15}
if [ "${1:-}" = "-t" ]; then
    seconds=$2
    shift 2
fi
targets=("$@")
[ ${#targets[@]} -gt 0 ] || targets=(codec scenario config plan)
build=${LACUNA_FUZZ_BUILD:-$root/build-fuzz}
jobs=${LACUNA_FUZZ_JOBS:-1}

say() { printf '==> %s\n' "$*" >&2; }

case $seconds in
'' | *[!0-9]*) echo "run.sh: -t wants whole seconds, not '$seconds'" >&2; exit 2 ;;
esac

# Per target: the longest input libFuzzer may make (the seeds are smaller;
# plan requests need room for thousands of beams).
max_len() {
    case $1 in
    plan) echo 65536 ;;
    scenario) echo 32768 ;;
    codec) echo 16384 ;;
    *) echo 4096 ;;
    esac
}

command -v clang >/dev/null || {
    echo "run.sh: clang is missing: apt-get install clang libclang-rt-14-dev" >&2
    exit 1
}
if ! echo 'int LLVMFuzzerTestOneInput(const char *d, unsigned long n) { return 0; }' |
    clang -x c -fsanitize=fuzzer - -o /dev/null 2>/dev/null; then
    echo "run.sh: clang cannot link libFuzzer: apt-get install libclang-rt-14-dev" >&2
    exit 1
fi

if [ ! -f "$build/build.ninja" ]; then
    say "configuring $build (clang, -Dfuzz=enabled)"
    CC=clang meson setup "$build" -Dfuzz=enabled -Dtests=disabled -Dipopt=disabled >/dev/null
fi
say "building the fuzz targets in $build"
names=()
for t in "${targets[@]}"; do
    [ -f "tests/fuzz/fuzz_$t.c" ] || { echo "run.sh: no target '$t'" >&2; exit 2; }
    names+=("fuzz_$t")
done
meson compile -C "$build" "${names[@]}" >/dev/null || meson compile -C "$build" "${names[@]}"

scratch=$(mktemp -d "${TMPDIR:-/tmp}/lacuna-fuzz.XXXXXX")
trap 'rm -rf "$scratch"' EXIT
keep=${LACUNA_FUZZ_KEEP:-}

export ASAN_OPTIONS=detect_leaks=1:abort_on_error=1:allocator_may_return_null=0:${ASAN_OPTIONS:-}
export UBSAN_OPTIONS=print_stacktrace=1:halt_on_error=1:${UBSAN_OPTIONS:-}

# One target: fuzz, then report; returns 1 on any finding.
run_one() {
    local t=$1
    local exe=$build/tests/fuzz/fuzz_$t
    local new=$scratch/$t/new art=$scratch/$t/artifacts/ log=$scratch/$t/log
    mkdir -p "$new" "$art"
    local rc=0
    "$exe" "$new" "tests/fuzz/corpus/$t" \
        -max_total_time="$seconds" -max_len="$(max_len "$t")" -timeout=25 \
        -rss_limit_mb=2560 -dict="tests/fuzz/$t.dict" -artifact_prefix="$art" \
        -print_final_stats=1 -print_pcs=0 >"$log" 2>&1 || rc=$?
    local runs eps cov corp
    runs=$(sed -n 's/^stat::number_of_executed_units: *//p' "$log" | tail -1)
    eps=$(sed -n 's/^stat::average_exec_per_sec: *//p' "$log" | tail -1)
    cov=$(grep -o 'cov: [0-9]*' "$log" | tail -1 | cut -d' ' -f2)
    corp=$(grep -o 'corp: [0-9]*/[0-9]*[a-zA-Z]*' "$log" | tail -1 | cut -d' ' -f2)
    printf 'fuzz_%-9s %4s s  runs %-10s execs/s %-7s corpus %-12s cov %s\n' "$t" "$seconds" \
        "${runs:-?}" "${eps:-?}" "${corp:-?}" "${cov:-?}"
    if [ -n "$keep" ]; then
        mkdir -p "$keep/$t"
        cp -n "$new"/* "$keep/$t/" 2>/dev/null || true
    fi
    if [ "$rc" -ne 0 ] || grep -qE '^(==[0-9]+==ERROR|SUMMARY: )' "$log"; then
        mkdir -p "$build/fuzz-artifacts"
        cp "$art"* "$build/fuzz-artifacts/" 2>/dev/null || true
        echo "fuzz_$t FAILED (exit $rc); the report:" >&2
        grep -E -A40 '^(==[0-9]+==ERROR|.*runtime error|.*check failed|==[0-9]+== ERROR|SUMMARY)' \
            "$log" | head -60 >&2 || tail -40 "$log" >&2
        for a in "$art"*; do
            [ -f "$a" ] && echo "reproduce: $exe $build/fuzz-artifacts/$(basename "$a")" >&2
        done
        return 1
    fi
    return 0
}

say "fuzzing ${targets[*]}: $seconds s each, $jobs at a time"
failed=0
pids=()
for t in "${targets[@]}"; do
    if [ "$jobs" -le 1 ]; then
        run_one "$t" || failed=1
    else
        run_one "$t" &
        pids+=($!)
        if [ ${#pids[@]} -ge "$jobs" ]; then
            wait "${pids[0]}" || failed=1
            pids=("${pids[@]:1}")
        fi
    fi
done
for p in "${pids[@]}"; do
    wait "$p" || failed=1
done
if [ "$failed" -ne 0 ]; then
    say "fuzzing found a problem (inputs in $build/fuzz-artifacts)"
    exit 1
fi
say "fuzzing: no crash, leak or sanitizer report"
