#!/bin/sh
# How the back-test's and the signal check's time grows with names and with
# years: for each shape, a ledger of invented closes and figures
# (market_ledger.sh), then, against the bare sqlite3 scan summing every close
# of the same ledger, interleaved (interleave.py): the frictionless
# back-test, the back-test with the rule's frictions (fee_fixed 1, fee_bps 5,
# as backtest_bench.sh) and `keel signal` with five horizons, all reading the
# closes from their packs. Each shape's rounds are printed as they run; a
# table over all shapes follows (scaling_table.py): processor time's ratio to
# the scan (minimum and median), seconds, wall ratio, peak resident memory,
# and the load averages before and after the shape.
#
#   tests/bench/backtest_scaling.sh [KEEL_BINARY] [WORK_DIR]
#   BENCH_SHAPES="250x20 500x20 1000x20 2000x20 1000x10 1000x5" (securities x
#   years); BENCH_ROUNDS=3 the rounds per shape (3 or more).
#
# Build keel optimized first (-DCMAKE_BUILD_TYPE=Release). Needs Debian's
# python3, sqlite3 and GNU time (/usr/bin/time). Making each ledger is setup,
# done once per WORK_DIR and shape, not timed (2000x20 writes 10 M closes:
# minutes, and about 0.9 GB on disk).
set -eu
here=$(cd "$(dirname "$0")" && pwd)
keel=${1:-$here/../../build/keel}
base=${2:-${TMPDIR:-/tmp}/keel-backtest-scaling}
rounds=${BENCH_ROUNDS:-3}
. "$here/market_ledger.sh"
. "$here/scaling.sh"
for shape in ${BENCH_SHAPES:-250x20 500x20 1000x20 2000x20 1000x10 1000x5}; do
  securities=${shape%x*}
  years=${shape#*x}
  work=$base/$shape
  market_ledger "$keel" "$work" "$securities" "$years" 2000-01-03
  bench_rule "$work/rule.toml"
  cp "$work/rule.toml" "$work/fees.toml"
  printf '[trading]\nfee_fixed = 1\nfee_bps = 5\n' >> "$work/fees.toml"
  span="--from 2000-03-01 --to $((2000 + years - 1))-12-31"
  bt="$keel --db $work/keel.db backtest $span"
  $bt --rule "$work/rule.toml" --frictionless > /dev/null  # keeps the close packs
  echo
  echo "== $securities securities x $years years: $(/usr/bin/sqlite3 "$work/keel.db" 'SELECT count(*) FROM price') closes; load $(cut -d' ' -f1-3 /proc/loadavg)"
  scaling_rounds "$shape" --pairs "$rounds" \
    --ref "sqlite3 sum, every close" "/usr/bin/sqlite3 $work/keel.db 'SELECT sum(close) FROM price'" \
    --cmd "backtest frictionless" "$bt --rule $work/rule.toml --frictionless" \
    --cmd "backtest with frictions" "$bt --rule $work/fees.toml" \
    --cmd "signal, five horizons" "$keel --db $work/keel.db signal --rule $work/rule.toml $span"
done
scaling_table "processor time against the sqlite3 scan of the same ledger"
