#!/bin/sh
# How the frictionless back-test's time grows with names and with years: for
# each shape, a ledger of invented closes and figures (market_ledger.sh), then
# the back-test (closes from their packs) against the bare sqlite3 scan of
# the same ledger, interleaved (interleave.py), ratio minimum and median.
#
#   tests/bench/backtest_scaling.sh [KEEL_BINARY] [WORK_DIR]
#   BENCH_SHAPES="250x20 500x20 1000x20 1000x10 1000x5" (securities x years)
#   BENCH_ROUNDS=3 the rounds per shape.
#
# Build keel optimized first (-DCMAKE_BUILD_TYPE=Release). Needs Debian's
# python3, sqlite3 and GNU time (/usr/bin/time). Making each ledger is setup,
# not timed.
set -eu
here=$(cd "$(dirname "$0")" && pwd)
keel=${1:-$here/../../build/keel}
base=${2:-${TMPDIR:-/tmp}/keel-backtest-scaling}
rounds=${BENCH_ROUNDS:-3}
for tool in /usr/bin/python3 /usr/bin/time /usr/bin/sqlite3; do
  [ -x "$tool" ] || { echo "missing $tool" >&2; exit 1; }
done
. "$here/market_ledger.sh"
for shape in ${BENCH_SHAPES:-250x20 500x20 1000x20 1000x10 1000x5}; do
  securities=${shape%x*}
  years=${shape#*x}
  work=$base/$shape
  market_ledger "$keel" "$work" "$securities" "$years" 2000-01-03
  bench_rule "$work/rule.toml"
  bt="$keel --db $work/keel.db backtest --rule $work/rule.toml --from 2000-03-01 --to $((2000 + years - 1))-12-31 --frictionless"
  $bt > /dev/null  # keeps the close packs
  echo
  echo "== $securities securities x $years years: $(/usr/bin/sqlite3 "$work/keel.db" 'SELECT count(*) FROM price') closes"
  /usr/bin/python3 "$here/interleave.py" --pairs "$rounds" \
    --ref "sqlite3 sum, every close" "/usr/bin/sqlite3 $work/keel.db 'SELECT sum(close) FROM price'" \
    --cmd "backtest frictionless" "$bt"
done
