#!/usr/bin/env bash
# run.sh - the browser test of the viewer page (meson suite 'web').
#
# Needs LACUNA_EXE (the built lacuna) and LACUNA_SOURCE_ROOT; screenshots and
# logs go to LACUNA_WEB_SHOTS (default: web-shots/ beside LACUNA_EXE).
# Exits 77 (meson: skipped) only when Debian's chromium, node or this
# folder's node_modules (npm ci --prefix tests/web) are missing.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
: "${LACUNA_EXE:?set LACUNA_EXE to the built lacuna}"
: "${LACUNA_SOURCE_ROOT:?set LACUNA_SOURCE_ROOT to the source tree}"
export LACUNA_WEB_SHOTS=${LACUNA_WEB_SHOTS:-$(dirname "$LACUNA_EXE")/web-shots}
chromium=${LACUNA_CHROMIUM:-/usr/bin/chromium}

skip() { echo "web test skipped: $*" >&2; exit 77; }
[ -x "$chromium" ] || skip "no $chromium (apt-get install chromium)"
command -v node >/dev/null || skip "no node (apt-get install nodejs)"
[ -d "$here/node_modules/playwright-core" ] ||
    skip "no $here/node_modules/playwright-core (npm ci --prefix tests/web)"

export LACUNA_CHROMIUM=$chromium
exec node "$here/viewer_test.js"
