#!/bin/sh
# What writing an export through OutputFile costs: `keel export prices --out
# FILE` (temporary file, checked writes, fsync, rename, folder fsync) against
# the same export sent to standard output redirected to a file (no sync), and
# against Debian's sqlite3 shell writing the same rows as CSV (no sync).
# Interleaved in one run, PAIRS rounds; prints each time and the minimum and
# median of the ratios.
#
#   tests/bench/export_bench.sh [KEEL_BINARY] [WORK_DIR]
#
# Build keel optimized for figures that mean something
# (-DCMAKE_BUILD_TYPE=Release). Needs python3 and sqlite3.
set -eu
here=$(cd "$(dirname "$0")" && pwd)
keel=${1:-$here/../../build/keel}
work=${2:-${TMPDIR:-/tmp}/keel-export-bench}
securities=${BENCH_SECURITIES:-200}
years=${BENCH_YEARS:-5}
pairs=${PAIRS:-5}

for tool in /usr/bin/python3 /usr/bin/sqlite3; do
  [ -x "$tool" ] || { echo "missing $tool" >&2; exit 1; }
done
mkdir -p "$work"
rm -f "$work"/keel.db* "$work"/out-*
/usr/bin/python3 "$here/gen_market.py" "$work" --securities "$securities" --years "$years" \
  --prices-only > /dev/null
"$keel" --db "$work/keel.db" init > /dev/null
"$keel" --db "$work/keel.db" import securities "$work/securities.csv" > /dev/null
"$keel" --db "$work/keel.db" import prices "$work/prices.csv" --quiet > /dev/null
rows=$(($(wc -l < "$work/prices.csv") - 1))
echo "ledger: $rows closes of $securities securities"

now() { date +%s.%N; }
secs() { echo "$1 $2" | awk '{ printf "%.3f", $2 - $1 }'; }
ratios_file="$work/ratios"
: > "$ratios_file"
i=1
while [ "$i" -le "$pairs" ]; do
  t0=$(now)
  "$keel" --db "$work/keel.db" export prices --out "$work/out-file.csv" 2> /dev/null
  t1=$(now)
  "$keel" --db "$work/keel.db" export prices > "$work/out-stdout.csv"
  t2=$(now)
  /usr/bin/sqlite3 -csv -header "$work/keel.db" \
    "SELECT p.date, s.symbol, p.close FROM price p JOIN security s ON s.id = p.security_id \
     ORDER BY s.symbol, p.date" > "$work/out-sqlite3.csv"
  t3=$(now)
  f=$(secs "$t0" "$t1"); o=$(secs "$t1" "$t2"); q=$(secs "$t2" "$t3")
  echo "round $i: --out FILE $f s, > FILE $o s, sqlite3 shell $q s"
  echo "$f $o $q" | awk '{ printf "%.4f %.4f\n", $1 / $2, $1 / $3 }' >> "$ratios_file"
  i=$((i + 1))
done
cmp -s "$work/out-file.csv" "$work/out-stdout.csv" || { echo "the two keel exports differ" >&2; exit 1; }
summary() {
  sort -n | awk '{ v[NR] = $1 } END { m = (NR % 2) ? v[(NR + 1) / 2] : (v[NR / 2] + v[NR / 2 + 1]) / 2;
    printf "min %.3f, median %.3f", v[1], m }'
}
echo "--out FILE / > FILE (the writer's cost):     $(cut -d' ' -f1 "$ratios_file" | summary)"
echo "--out FILE / sqlite3 shell (outside reference): $(cut -d' ' -f2 "$ratios_file" | summary)"
