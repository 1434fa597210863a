#!/bin/sh
# Times `keel backtest --frictionless` on a ledger already holding invented
# daily closes and monthly figures against the pandas reference
# (tests/reference/backtest_reference.py) reading the same CSV files, and
# prints wall time and peak resident memory of each and their ratios.
#
#   tests/bench/backtest_bench.sh [KEEL_BINARY] [WORK_DIR]
#   BENCH_SECURITIES=1000 BENCH_YEARS=20 (the defaults) set the scale.
#
# Build keel optimized first (-DCMAKE_BUILD_TYPE=Release). Needs Debian's
# python3 with pandas and GNU time (/usr/bin/time). Generating and importing
# the data is setup and is not timed.
set -eu
here=$(cd "$(dirname "$0")" && pwd)
keel=${1:-$here/../../build/keel}
work=${2:-${TMPDIR:-/tmp}/keel-backtest-bench}
securities=${BENCH_SECURITIES:-1000}
years=${BENCH_YEARS:-20}
start=2000-01-03
from=2000-03-01
to=$((2000 + years - 1))-12-31

for tool in /usr/bin/python3 /usr/bin/time; do
  [ -x "$tool" ] || { echo "missing $tool" >&2; exit 1; }
done
mkdir -p "$work"
if [ ! -f "$work/keel.db" ] || [ "$(cat "$work/shape" 2>/dev/null)" != "$securities x $years" ]; then
  rm -f "$work"/keel.db* "$work/shape"
  echo "generating $securities securities x $years years..."
  /usr/bin/python3 "$here/gen_market.py" "$work" --securities "$securities" --years "$years" \
    --start "$start"
  "$keel" --db "$work/keel.db" init > /dev/null
  for what in securities prices metrics distributions splits; do
    "$keel" --db "$work/keel.db" import "$what" "$work/$what.csv" --quiet
  done
  echo "$securities x $years" > "$work/shape"
fi
cat > "$work/rule.toml" <<'RULE'
name = "Bench: high earnings yield"
[scope]
accounts = ["Simulated"]
[screen]
metric = "earnings_yield"
cheap = "high"
max_age_days = 120
min_names = 5
[select]
by = "z"
z_max = -0.5
exit_z = 0.0
RULE
echo "prices.csv: $(($(wc -l < "$work/prices.csv") - 1)) rows; metrics.csv: $(($(wc -l < "$work/metrics.csv") - 1)) rows"

/usr/bin/time -v -o "$work/keel.time" "$keel" --db "$work/keel.db" backtest \
  --rule "$work/rule.toml" --from "$from" --to "$to" --frictionless --json > "$work/keel.json"
/usr/bin/time -v -o "$work/ref.time" /usr/bin/python3 "$here/../reference/backtest_reference.py" \
  "$work" --metric earnings_yield --cheap high --z-max -0.5 --exit-z 0 --max-age-days 120 \
  --min-names 5 --from "$from" --to "$to" > "$work/ref.json"

wall() { awk -F': ' '/Elapsed \(wall clock\)/ { n = split($2, p, ":"); s = 0;
  for (i = 1; i <= n; i++) s = s * 60 + p[i]; printf "%.2f", s }' "$1"; }
rss() { awk -F': ' '/Maximum resident set size/ { printf "%.0f", $2 / 1024 }' "$1"; }
kw=$(wall "$work/keel.time"); rw=$(wall "$work/ref.time")
km=$(rss "$work/keel.time"); rm_=$(rss "$work/ref.time")
printf '%-36s %10s %14s\n' "" "wall (s)" "peak RSS (MiB)"
printf '%-36s %10s %14s\n' "keel backtest --frictionless" "$kw" "$km"
printf '%-36s %10s %14s\n' "pandas reference (from CSV)" "$rw" "$rm_"
echo "$kw $rw $km $rm_" | awk '{ printf "keel / reference: time %.3f (target <= 0.100), memory %.3f (target <= 0.200)\n", $1 / $2, $3 / $4 }'
/usr/bin/python3 - "$work/keel.json" "$work/ref.json" <<'PY'
import json, sys
k, r = (json.load(open(p)) for p in sys.argv[1:3])
print("TWR keel %.12f, reference %.12f, difference %.2e" % (
    k["rule_run"]["twr"], r["rule"]["twr"], abs(k["rule_run"]["twr"] - r["rule"]["twr"])))
PY
