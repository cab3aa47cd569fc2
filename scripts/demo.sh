#!/usr/bin/env bash
# demo.sh LACUNA - the README's demo: plans the shipped example requests
# (an office corridor corner seen by a 270 degree scanner, a warehouse aisle
# seen by a depth camera) and prints each result for a person.
set -euo pipefail
exe=${1:-build/lacuna}
root=$(cd "$(dirname "$0")/.." && pwd)
for req in office-corner aisle-points; do
    echo "== lacuna plan scenarios/requests/$req.json"
    "$exe" plan --pretty "$root/scenarios/requests/$req.json"
    echo
done
echo "The full JSON of a result: $exe plan --json scenarios/requests/office-corner.json"
