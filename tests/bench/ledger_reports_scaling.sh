#!/bin/sh
# How `keel statement --year` and `keel returns --year` grow with years and
# with securities: for each shape, an invented daily ledger
# (gen_returns_ledger.py: closes of every security on every weekday, 1,000
# transactions a year of the ledger's span), then each report, text and
# --json, against a bare sqlite3 scan summing every close of the same ledger
# file, interleaved (interleave.py). The year reported is the ledger's last
# (2024) in every shape. Each shape's rounds are printed as they run; a table
# over all shapes follows (scaling_table.py): processor time's ratio to the
# scan (minimum and median), seconds per run, wall ratio, peak resident
# memory, and the load averages before and after the shape.
#
#   tests/bench/ledger_reports_scaling.sh [KEEL_BINARY] [WORK_DIR]
#   BENCH_SHAPES="50x5 50x10 50x20 50x40 25x20 100x20" (securities x years);
#   BENCH_ROUNDS=3 the rounds per shape (3 or more); BENCH_REPEAT=10 the runs
#   of each command per measurement (times are per run).
#
# Build keel optimized first. Needs Debian's python3, sqlite3 and GNU time
# (/usr/bin/time). Making each ledger is setup, done once per WORK_DIR and
# shape, and is not timed.
set -eu
here=$(cd "$(dirname "$0")" && pwd)
keel=${1:-$here/../../build/keel}
base=${2:-${TMPDIR:-/tmp}/keel-ledger-reports-scaling}
rounds=${BENCH_ROUNDS:-3}
repeat=${BENCH_REPEAT:-10}
. "$here/scaling.sh"
for shape in ${BENCH_SHAPES:-50x5 50x10 50x20 50x40 25x20 100x20}; do
  securities=${shape%x*}
  years=${shape#*x}
  db=$base/$shape/bench.db
  if [ ! -f "$db" ]; then
    mkdir -p "$base/$shape"
    /usr/bin/python3 "$here/gen_returns_ledger.py" "$keel" "$db" --securities "$securities" \
      --years "$years" --transactions $((1000 * years))
  fi
  "$keel" --db "$db" statement --year 2024 > /dev/null  # keeps the close packs
  echo
  echo "== $securities securities x $years years: $(/usr/bin/sqlite3 "$db" 'SELECT count(*) FROM price') closes, $(/usr/bin/sqlite3 "$db" 'SELECT count(*) FROM txn') transactions; load $(cut -d' ' -f1-3 /proc/loadavg)"
  scaling_rounds "$shape" --pairs "$rounds" --repeat "$repeat" \
    --ref "sqlite3 sum, every close" "/usr/bin/sqlite3 $db 'SELECT sum(close) FROM price'" \
    --cmd "statement --year 2024" "$keel --db $db statement --year 2024" \
    --cmd "statement --year 2024 --json" "$keel --db $db statement --year 2024 --json" \
    --cmd "returns --year 2024" "$keel --db $db returns --year 2024" \
    --cmd "returns --year 2024 --json" "$keel --db $db returns --year 2024 --json"
done
scaling_table "processor time against the sqlite3 scan of the same ledger"
