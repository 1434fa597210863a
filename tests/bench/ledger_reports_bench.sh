#!/bin/sh
# Times `keel statement --year` and `keel returns --year` on the invented
# 20-year daily ledger of gen_returns_ledger.py (50 securities with daily
# closes, 20,000 transactions) against a bare sqlite3 scan summing every close
# of the same ledger file, interleaved (tests/bench/interleave.py): each
# ratio's minimum and median, and each command's peak resident memory.
#
#   tests/bench/ledger_reports_bench.sh [KEEL_BINARY] [WORK_DIR]
#   BENCH_ROUNDS=5 the rounds (3 or more); BENCH_REPEAT=10 the runs of each
#   command per measurement (times are per run); BENCH_YEAR=2024 the year reported.
#
# Build keel optimized first. Needs Debian's python3, sqlite3 and GNU time
# (/usr/bin/time). Making the ledger is setup, done once per WORK_DIR, and is
# not timed.
set -eu
here=$(cd "$(dirname "$0")" && pwd)
keel=${1:-$here/../../build/keel}
work=${2:-${TMPDIR:-/tmp}/keel-ledger-reports-bench}
rounds=${BENCH_ROUNDS:-5}
repeat=${BENCH_REPEAT:-10}  # runs per measurement: each takes tens of milliseconds
year=${BENCH_YEAR:-2024}
for tool in /usr/bin/python3 /usr/bin/time /usr/bin/sqlite3; do
  [ -x "$tool" ] || { echo "missing $tool" >&2; exit 1; }
done
mkdir -p "$work"
db="$work/bench.db"
[ -f "$db" ] || /usr/bin/python3 "$here/gen_returns_ledger.py" "$keel" "$db"
echo "closes: $(/usr/bin/sqlite3 "$db" 'SELECT count(*) FROM price'); transactions: $(/usr/bin/sqlite3 "$db" 'SELECT count(*) FROM txn')"
/usr/bin/python3 "$here/interleave.py" --pairs "$rounds" --repeat "$repeat" \
  --ref "sqlite3 sum, every close" "/usr/bin/sqlite3 $db 'SELECT sum(close) FROM price'" \
  --cmd "statement --year $year" "$keel --db $db statement --year $year" \
  --cmd "statement --year $year --json" "$keel --db $db statement --year $year --json" \
  --cmd "returns --year $year" "$keel --db $db returns --year $year" \
  --cmd "returns --year $year --json" "$keel --db $db returns --year $year --json"
