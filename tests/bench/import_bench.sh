#!/bin/sh
# Times `keel import prices` against Debian's sqlite3 shell `.import` of the
# same CSV into a plain three-column table, interleaved in one run
# (tests/bench/interleave.py: at least 3 rounds, each ratio's minimum and
# median, wall and processor time, and each command's peak resident memory).
#
#   tests/bench/import_bench.sh [KEEL_BINARY] [WORK_DIR]
#   BENCH_SECURITIES=1916 BENCH_YEARS=10 (5.0 M rows) set the size;
#   BENCH_ROUNDS=3 the rounds; BENCH_RECORD=FILE appends the figures to FILE
#   for a table over several sizes (import_scaling.sh).
#   KEEL_BASELINE=/path/to/another/keel times that binary too, in the same
#   rounds (before and after a change in one run).
#
# Build keel optimized first (-DCMAKE_BUILD_TYPE=Release). Needs python3,
# sqlite3 and GNU time (/usr/bin/time; Debian package 'time').
# Both loads write a database file in WORK_DIR; the file system is the same.
# Each keel round starts from a copy of a ledger holding only the securities
# (made once, not timed); each sqlite3 round from no file.
set -eu
here=$(cd "$(dirname "$0")" && pwd)
keel=${1:-$here/../../build/keel}
work=${2:-${TMPDIR:-/tmp}/keel-import-bench}
securities=${BENCH_SECURITIES:-1916}  # x 10 years of weekdays = 5.0 M rows
years=${BENCH_YEARS:-10}
rounds=${BENCH_ROUNDS:-3}

for tool in /usr/bin/python3 /usr/bin/sqlite3 /usr/bin/time; do
  [ -x "$tool" ] || { echo "missing $tool" >&2; exit 1; }
done
mkdir -p "$work"
if [ ! -f "$work/prices.csv" ] || [ "$(cat "$work/shape" 2>/dev/null)" != "$securities x $years" ]; then
  echo "generating $securities securities x $years years of daily closes..."
  /usr/bin/python3 "$here/gen_market.py" "$work" --securities "$securities" --years "$years" \
    --prices-only
  echo "$securities x $years" > "$work/shape"
fi
rows=$(($(wc -l < "$work/prices.csv") - 1))
echo "prices.csv: $rows rows, $(du -m "$work/prices.csv" | cut -f1) MiB"

rm -f "$work"/base.db*
"$keel" --db "$work/base.db" init > /dev/null
"$keel" --db "$work/base.db" import securities "$work/securities.csv" > /dev/null
sync
set -- --cmd "keel import prices" "rm -f $work/keel.db*; cp $work/base.db $work/keel.db; $keel --db $work/keel.db import prices $work/prices.csv --quiet"
if [ -n "${KEEL_BASELINE:-}" ]; then
  set -- "$@" --cmd "baseline keel import prices" "rm -f $work/baseline.db*; cp $work/base.db $work/baseline.db; $KEEL_BASELINE --db $work/baseline.db import prices $work/prices.csv --quiet"
fi
if [ -n "${BENCH_RECORD:-}" ]; then
  set -- --record "$BENCH_RECORD" "${securities}x${years}" "$@"
fi
/usr/bin/python3 "$here/interleave.py" --pairs "$rounds" \
  --ref "sqlite3 .import, file db" "rm -f $work/plain.db*; /usr/bin/sqlite3 $work/plain.db 'CREATE TABLE price (date TEXT, symbol TEXT, close TEXT)' '.mode csv' '.import --skip 1 $work/prices.csv price'" \
  "$@"
echo "rows stored: keel $(/usr/bin/sqlite3 "$work/keel.db" 'SELECT count(*) FROM price'), sqlite3 $(/usr/bin/sqlite3 "$work/plain.db" 'SELECT count(*) FROM price')"
if [ -n "${KEEL_BASELINE:-}" ]; then
  digest() { /usr/bin/sqlite3 "$1" 'SELECT * FROM price ORDER BY 1, 2' | md5sum | cut -d' ' -f1; }
  echo "stored rows' md5: keel $(digest "$work/keel.db"), baseline $(digest "$work/baseline.db")"
fi
