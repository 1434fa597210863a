#!/bin/sh
# Times `keel compare` of three rules against `keel backtest` of the first of
# them (the reference), on a ledger of invented daily closes and monthly
# figures (tests/bench/gen_market.py), interleaved (tests/bench/interleave.py):
# each round runs every command once, and the ratio to the reference within
# the round is what counts. Prints the ratios' minimum and median and each
# command's peak resident memory. The target: a comparison of three rules
# within 2x one back-test (it loads the market data once and runs one
# baseline, where three back-tests load it three times and run three).
#
#   tests/bench/compare_bench.sh [KEEL_BINARY] [WORK_DIR]
#   BENCH_SECURITIES=500 BENCH_YEARS=15 (the defaults) set the scale;
#   BENCH_ROUNDS=5 the rounds (at least 3).
#
# Build keel optimized first (Release, the default). Needs Debian's python3
# and GNU time (/usr/bin/time). Generating and importing the data is setup,
# done once per WORK_DIR and shape, and is not timed.
set -eu
here=$(cd "$(dirname "$0")" && pwd)
keel=${1:-$here/../../build/keel}
securities=${BENCH_SECURITIES:-500}
years=${BENCH_YEARS:-15}
rounds=${BENCH_ROUNDS:-5}
work=${2:-${TMPDIR:-/tmp}/keel-compare-bench-${securities}x${years}}
start=2000-01-03
from=2000-03-01
to=$((2000 + years - 1))-12-31

for tool in /usr/bin/python3 /usr/bin/time; do
  [ -x "$tool" ] || { echo "missing $tool" >&2; exit 1; }
done
. "$here/market_ledger.sh"
market_ledger "$keel" "$work" "$securities" "$years" "$start"
screen='[scope]
accounts = ["Simulated"]
[screen]
metric = "earnings_yield"
cheap = "high"
max_age_days = 120
min_names = 5
[trading]
fee_fixed = 1
fee_bps = 5'
printf 'name = "Bench: by z"\n%s\n[select]\nby = "z"\nz_max = -0.5\nexit_z = 0.0\n' \
  "$screen" > "$work/z.toml"
printf 'name = "Bench: twenty cheapest"\n%s\n[select]\nby = "count"\ncount = 20\n' \
  "$screen" > "$work/count.toml"
printf 'name = "Bench: by z, quarterly"\nrebalance_months = 3\n%s\n[select]\nby = "z"\nz_max = -0.5\n' \
  "$screen" > "$work/slow.toml"
echo "prices.csv: $(($(wc -l < "$work/prices.csv") - 1)) rows; metrics.csv: $(($(wc -l < "$work/metrics.csv") - 1)) rows"

k="$keel --db $work/keel.db"
span="--from $from --to $to --benchmark K0009"
/usr/bin/python3 "$here/interleave.py" --pairs "$rounds" \
  --ref "backtest, one rule" "$k backtest --rule $work/z.toml $span" \
  --cmd "compare, three rules" "$k compare $work/z.toml $work/count.toml $work/slow.toml $span" \
  --cmd "three backtests" "$k backtest --rule $work/z.toml $span && $k backtest --rule $work/count.toml $span && $k backtest --rule $work/slow.toml $span"
