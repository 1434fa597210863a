#!/bin/sh
# Times `keel import prices` against Debian's sqlite3 shell `.import` of the
# same CSV, in one run, and prints rows/s of each, their ratio and keel's
# peak resident memory.
#
#   tests/bench/import_bench.sh [KEEL_BINARY] [WORK_DIR]
#
# Build keel optimized first (-DCMAKE_BUILD_TYPE=Release). Needs python3,
# sqlite3 and GNU time (/usr/bin/time; Debian package 'time').
# Both loads write a database file in WORK_DIR; the file system is the same.
set -eu
here=$(cd "$(dirname "$0")" && pwd)
keel=${1:-$here/../../build/keel}
work=${2:-${TMPDIR:-/tmp}/keel-import-bench}
securities=${BENCH_SECURITIES:-1916}  # x 10 years of weekdays = 5.0 M rows
years=${BENCH_YEARS:-10}

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

now() { date +%s.%N; }
rate() { echo "$1 $2" | awk '{ printf "%.0f", $1 / $2 }'; }

# keel: a fresh ledger with the securities, then the timed price import.
rm -f "$work"/keel.db*
"$keel" --db "$work/keel.db" init > /dev/null
"$keel" --db "$work/keel.db" import securities "$work/securities.csv" > /dev/null
sync
/usr/bin/time -v -o "$work/keel.time" "$keel" --db "$work/keel.db" import prices \
  "$work/prices.csv" --quiet > "$work/keel.out"
keel_s=$(awk -F': ' '/Elapsed \(wall clock\)/ { n = split($2, t, ":"); s = 0;
  for (i = 1; i <= n; i++) s = s * 60 + t[i]; print s }' "$work/keel.time")
keel_rss=$(awk -F': ' '/Maximum resident set size/ { print $2 }' "$work/keel.time")
cat "$work/keel.out"

# sqlite3: the same CSV into a plain three-column text table in a file db.
rm -f "$work"/plain.db*
sync
t0=$(now)
/usr/bin/sqlite3 "$work/plain.db" "CREATE TABLE price (date TEXT, symbol TEXT, close TEXT)" \
  ".mode csv" ".import --skip 1 $work/prices.csv price"
t1=$(now)
sqlite_s=$(echo "$t0 $t1" | awk '{ printf "%.3f", $2 - $1 }')
sqlite_rows=$(/usr/bin/sqlite3 "$work/plain.db" "SELECT count(*) FROM price")

# sqlite3 into :memory: as well, for reference (no disk writes at all).
t0=$(now)
/usr/bin/sqlite3 :memory: "CREATE TABLE price (date TEXT, symbol TEXT, close TEXT)" \
  ".mode csv" ".import --skip 1 $work/prices.csv price"
t1=$(now)
mem_s=$(echo "$t0 $t1" | awk '{ printf "%.3f", $2 - $1 }')

echo
printf '%-34s %10s %12s\n' "load of $rows price rows" "seconds" "rows/s"
printf '%-34s %10s %12s\n' "keel import prices (validated)" "$keel_s" "$(rate "$rows" "$keel_s")"
printf '%-34s %10s %12s\n' "sqlite3 .import, file db" "$sqlite_s" "$(rate "$sqlite_rows" "$sqlite_s")"
printf '%-34s %10s %12s\n' "sqlite3 .import, :memory:" "$mem_s" "$(rate "$rows" "$mem_s")"
echo "ratio keel / sqlite3 file (rows/s): $(echo "$sqlite_s $keel_s" | awk '{ printf "%.2f", $1 / $2 }')"
echo "ratio keel / sqlite3 :memory:     : $(echo "$mem_s $keel_s" | awk '{ printf "%.2f", $1 / $2 }')"
echo "keel peak RSS: $((keel_rss / 1024)) MiB"
