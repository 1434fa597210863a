#!/usr/bin/env bash
# Times `keel statement` on the invented 20-year daily ledger of
# gen_returns_ledger.py (50 securities with daily closes, 20,000
# transactions): the terminal form, JSON, and all files (HTML, XLSX, CSV; PDF
# too when Chromium is installed). No target is set; prints the figures.
# Usage: tests/bench/statement_bench.sh [KEEL_BIN]   (default build/keel)
set -euo pipefail
here="$(cd "$(dirname "$0")" && pwd)"
keel="${1:-$here/../../build/keel}"
work="$(mktemp -d)"
trap 'rm -rf "$work"' EXIT
db="$work/bench.db"
/usr/bin/python3 "$here/gen_returns_ledger.py" "$keel" "$db"
"$keel" --db "$db" statement --year 2024 --benchmark SYN00 > /dev/null  # warm the cache

time_ms() {
  local runs=$1
  shift
  local times=()
  for _ in $(seq "$runs"); do
    local start end
    start=$(date +%s%N)
    "$@" > /dev/null
    end=$(date +%s%N)
    times+=($(( (end - start) / 1000000 )))
  done
  local sorted=($(printf '%s\n' "${times[@]}" | sort -n))
  echo "  $runs runs (ms): ${times[*]}; min ${sorted[0]}, median ${sorted[$((runs / 2))]}"
}

echo "keel statement --year 2024 --benchmark SYN00 (terminal)"
time_ms 5 "$keel" --db "$db" statement --year 2024 --benchmark SYN00
echo "keel statement --year 2024 --benchmark SYN00 --json"
time_ms 5 "$keel" --db "$db" statement --year 2024 --benchmark SYN00 --json
echo "keel statement ... --html --xlsx --csv"
time_ms 3 "$keel" --db "$db" statement --year 2024 --benchmark SYN00 --html "$work/s.html" \
  --xlsx "$work/s.xlsx" --csv "$work/csv"
ls -l "$work/s.html" "$work/s.xlsx" | awk '{print "  " $5 " bytes  " $9}'
if command -v chromium > /dev/null; then
  echo "keel statement ... --pdf"
  time_ms 1 "$keel" --db "$db" statement --year 2024 --benchmark SYN00 --pdf "$work/s.pdf"
fi
/usr/bin/time -f "  peak resident memory of one --json run: %M KiB" \
  "$keel" --db "$db" statement --year 2024 --benchmark SYN00 --json > /dev/null
