#!/bin/sh
# Times `keel backtest` and `keel signal` on a ledger of invented daily closes
# and monthly figures (tests/bench/gen_market.py) against references run in
# the same rounds, interleaved (tests/bench/interleave.py), and prints each
# ratio's minimum and median and each command's peak resident memory:
#  - a bare sqlite3 scan summing every close of the ledger file (the
#    reference), and one summing only the closes the back-test reads (the
#    stocks, over the period);
#  - the frictionless back-test (text report, and --json with every trade),
#    the back-test with the rule's frictions, and `keel signal` with five
#    horizons, all reading the closes from their packs (close_pack, kept by
#    the first load: the setup runs one back-test first);
#  - the frictionless back-test cold: the packs dropped first (sqlite3
#    DELETE FROM close_pack, inside the timed command), so it reads the
#    price rows and keeps the packs again;
#  - the frictionless back-test after one new close per name: a sqlite3
#    command inside the timed one adds a close of every security on the day
#    after its last (its last close repeated), as a daily price update would
#    (each run one more day, after the span); the packs keep the closes after
#    their last day as their tail (a keel whose packs do not, reads the price
#    rows and packs them again);
#  - then the frictionless back-test against the pandas recomputation
#    (tests/reference/backtest_reference.py, reading the CSV files), and the
#    two results' time-weighted returns.
#
#   tests/bench/backtest_bench.sh [KEEL_BINARY] [WORK_DIR]
#   BENCH_SECURITIES=1000 BENCH_YEARS=20 (the defaults) set the scale;
#   BENCH_ROUNDS=5 the rounds; BENCH_PANDAS=0 skips the pandas comparison.
#
# Build keel optimized first (-DCMAKE_BUILD_TYPE=Release). Needs Debian's
# python3 with pandas, sqlite3 and GNU time (/usr/bin/time). Generating and
# importing the data is setup, done once per WORK_DIR and shape, and is not
# timed.
set -eu
here=$(cd "$(dirname "$0")" && pwd)
keel=${1:-$here/../../build/keel}
securities=${BENCH_SECURITIES:-1000}
years=${BENCH_YEARS:-20}
rounds=${BENCH_ROUNDS:-5}
work=${2:-${TMPDIR:-/tmp}/keel-backtest-bench-${securities}x${years}}
start=2000-01-03
from=2000-03-01
to=$((2000 + years - 1))-12-31

for tool in /usr/bin/python3 /usr/bin/time /usr/bin/sqlite3; do
  [ -x "$tool" ] || { echo "missing $tool" >&2; exit 1; }
done
. "$here/market_ledger.sh"
market_ledger "$keel" "$work" "$securities" "$years" "$start"
bench_rule "$work/rule.toml"
cp "$work/rule.toml" "$work/fees.toml"
printf '[trading]\nfee_fixed = 1\nfee_bps = 5\n' >> "$work/fees.toml"
echo "prices.csv: $(($(wc -l < "$work/prices.csv") - 1)) rows; metrics.csv: $(($(wc -l < "$work/metrics.csv") - 1)) rows"

db="$work/keel.db"
bt="$keel --db $db backtest --rule $work/rule.toml --from $from --to $to"
first=$(date -d "$from - 1 day" +%F)
# One close per security on the day after its last (its last close repeated).
append="/usr/bin/sqlite3 $db \"INSERT INTO price (security_id, date, close) SELECT s.id, date(p.date, '+1 day'), p.close FROM security s CROSS JOIN price p ON p.security_id = s.id AND p.date = (SELECT max(date) FROM price WHERE security_id = s.id)\""
$bt --frictionless > /dev/null  # keeps the close packs, if the ledger has none yet
/usr/bin/python3 "$here/interleave.py" --pairs "$rounds" \
  --ref "sqlite3 sum, every close" "/usr/bin/sqlite3 $db 'SELECT sum(close) FROM price'" \
  --cmd "sqlite3 sum, same closes" "/usr/bin/sqlite3 $db \"SELECT sum(p.close) FROM security s JOIN price p ON p.security_id = s.id WHERE s.kind = 'stock' AND p.date >= '$first' AND p.date <= '$to'\"" \
  --cmd "backtest frictionless" "$bt --frictionless" \
  --cmd "backtest frictionless --json" "$bt --frictionless --json" \
  --cmd "backtest with frictions" "$keel --db $db backtest --rule $work/fees.toml --from $from --to $to" \
  --cmd "signal, five horizons" "$keel --db $db signal --rule $work/rule.toml --from $from --to $to" \
  --cmd "backtest frictionless, cold" "/usr/bin/sqlite3 $db 'DELETE FROM close_pack' && $bt --frictionless" \
  --cmd "backtest frictionless, after one new close per name" "$append && $bt --frictionless"
# The cold run keeps the packs again: every other command, in either order
# of a round, reads them.

[ "${BENCH_PANDAS:-1}" = 0 ] && exit 0
echo
/usr/bin/python3 "$here/interleave.py" --pairs 3 \
  --ref "pandas reference" "/usr/bin/python3 $here/../reference/backtest_reference.py $work --metric earnings_yield --cheap high --z-max -0.5 --exit-z 0 --max-age-days 120 --min-names 5 --from $from --to $to > $work/ref.json" \
  --cmd "backtest frictionless --json" "$bt --frictionless --json > $work/keel.json"
/usr/bin/python3 - "$work/keel.json" "$work/ref.json" <<'PY'
import json, sys
k, r = (json.load(open(p)) for p in sys.argv[1:3])
print("TWR keel %.12g, reference %.12g, relative difference %.2e" % (
    k["rule_run"]["twr"], r["rule"]["twr"],
    abs(k["rule_run"]["twr"] - r["rule"]["twr"]) / abs(r["rule"]["twr"])))
PY
