#!/bin/sh
# Times a 60-variant `keel sweep` against one `keel backtest` of the same rule
# (the reference), interleaved in the same rounds (tests/bench/interleave.py),
# on a ledger of invented daily closes and monthly figures
# (tests/bench/gen_market.py), and prints each ratio's minimum and median and
# each command's peak resident memory. Target: the sweep takes at most 15
# times one back-test. Pairs: with the rule's fees, and frictionless.
#
#   tests/bench/sweep_bench.sh [KEEL_BINARY] [WORK_DIR]
#   BENCH_SECURITIES=500 BENCH_YEARS=10 (the defaults) set the scale;
#   BENCH_ROUNDS=3 the rounds (at least 3).
#
# Build keel optimized first (Release, the default). Needs Debian's python3
# with numpy (for the generator) and GNU time (/usr/bin/time). Generating and
# importing the data is setup, done once per WORK_DIR and shape, and is not
# timed.
set -eu
here=$(cd "$(dirname "$0")" && pwd)
keel=${1:-$here/../../build/keel}
securities=${BENCH_SECURITIES:-500}
years=${BENCH_YEARS:-10}
rounds=${BENCH_ROUNDS:-3}
work=${2:-${TMPDIR:-/tmp}/keel-sweep-bench-${securities}x${years}}
start=2000-01-03
from=2000-03-01
to=$((2000 + years - 1))-12-31

for tool in /usr/bin/python3 /usr/bin/time; do
  [ -x "$tool" ] || { echo "missing $tool" >&2; exit 1; }
done
. "$here/market_ledger.sh"
market_ledger "$keel" "$work" "$securities" "$years" "$start"
bench_rule "$work/rule.toml"
printf '[trading]\nfee_fixed = 1\nfee_bps = 5\n' >> "$work/rule.toml"

db="$work/keel.db"
period="--from $from --to $to"
# 12 entry thresholds x 5 exit thresholds = 60 variants.
vary="--vary select.z_max=-1.5,-1.4,-1.3,-1.2,-1.1,-1,-0.9,-0.8,-0.7,-0.6,-0.5,-0.4 --vary select.exit_z=0,0.25,0.5,0.75,1"
echo "with the rule's fees:"
/usr/bin/python3 "$here/interleave.py" --pairs "$rounds" \
  --ref "backtest, one rule" "$keel --db $db backtest --rule $work/rule.toml $period" \
  --cmd "sweep, 60 variants" "$keel --db $db sweep --rule $work/rule.toml $period $vary"
echo
echo "frictionless:"
/usr/bin/python3 "$here/interleave.py" --pairs "$rounds" \
  --ref "backtest, one rule" "$keel --db $db backtest --rule $work/rule.toml $period --frictionless" \
  --cmd "sweep, 60 variants" "$keel --db $db sweep --rule $work/rule.toml $period $vary --frictionless"
