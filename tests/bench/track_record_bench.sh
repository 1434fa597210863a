#!/bin/sh
# Times a back-test and a signal check of a rule with a [track_record]
# against the same rule without one (the reference), on a ledger of invented
# daily closes and monthly figures (tests/bench/gen_market.py), interleaved
# (tests/bench/interleave.py): each ratio's minimum and median and each
# command's peak resident memory. The track record scores every month-end
# once per run; the ratio shows what that costs on top of the back-test.
#
#   tests/bench/track_record_bench.sh [KEEL_BINARY] [WORK_DIR]
#   BENCH_SECURITIES=300 BENCH_YEARS=12 (the defaults) set the scale;
#   BENCH_ROUNDS=5 the rounds.
#
# Build keel optimized first (Release, the default). Needs Debian's python3
# and GNU time (/usr/bin/time). Generating and importing the data is setup,
# done once per WORK_DIR and shape, and is not timed.
set -eu
here=$(cd "$(dirname "$0")" && pwd)
keel=${1:-$here/../../build/keel}
securities=${BENCH_SECURITIES:-300}
years=${BENCH_YEARS:-12}
rounds=${BENCH_ROUNDS:-5}
work=${2:-${TMPDIR:-/tmp}/keel-track-record-bench-${securities}x${years}}
start=2000-01-03
from=2004-01-01
to=$((2000 + years - 1))-12-31

for tool in /usr/bin/python3 /usr/bin/time; do
  [ -x "$tool" ] || { echo "missing $tool" >&2; exit 1; }
done
. "$here/market_ledger.sh"
market_ledger "$keel" "$work" "$securities" "$years" "$start"
cat > "$work/plain.toml" <<'RULE'
name = "Bench: high earnings yield"
[scope]
accounts = ["Simulated"]
[screen]
metric = "earnings_yield"
cheap = "high"
max_age_days = 120
min_names = 5
[select]
by = "count"
count = 20
RULE
cp "$work/plain.toml" "$work/track.toml"
printf '[track_record]\nmin_observations = 12\n' >> "$work/track.toml"

db="$work/keel.db"
/usr/bin/python3 "$here/interleave.py" --pairs "$rounds" \
  --ref "backtest, no track record" "$keel --db $db backtest --rule $work/plain.toml --from $from --to $to --frictionless" \
  --cmd "backtest, track record" "$keel --db $db backtest --rule $work/track.toml --from $from --to $to --frictionless" \
  --cmd "signal, no track record" "$keel --db $db signal --rule $work/plain.toml --from $from --to $to" \
  --cmd "signal, track record" "$keel --db $db signal --rule $work/track.toml --from $from --to $to" \
  --cmd "signal --by-name" "$keel --db $db signal --rule $work/plain.toml --from $from --to $to --by-name"
