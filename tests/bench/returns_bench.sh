#!/usr/bin/env bash
# Times `keel returns --period inception --json` on an invented 20-year daily
# ledger: 50 securities with daily closes, 20,000 transactions.
# Target: under 100 ms wall time on a 2-core machine. Prints the figures.
# Usage: tests/bench/returns_bench.sh [KEEL_BIN]   (default build/keel)
set -euo pipefail
here="$(cd "$(dirname "$0")" && pwd)"
keel="${1:-$here/../../build/keel}"
work="$(mktemp -d)"
trap 'rm -rf "$work"' EXIT
db="$work/bench.db"
/usr/bin/python3 "$here/gen_returns_ledger.py" "$keel" "$db"
"$keel" --db "$db" returns --period inception --json > "$work/first.json"  # warm the cache
runs=7
times=()
for _ in $(seq "$runs"); do
  start=$(date +%s%N)
  "$keel" --db "$db" returns --period inception --json > /dev/null
  end=$(date +%s%N)
  times+=($(( (end - start) / 1000000 )))
done
sorted=($(printf '%s\n' "${times[@]}" | sort -n))
echo "keel returns --period inception --json, $runs runs (ms): ${times[*]}"
echo "min ${sorted[0]} ms, median ${sorted[$((runs / 2))]} ms (target < 100 ms)"
