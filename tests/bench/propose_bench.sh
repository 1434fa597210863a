#!/usr/bin/env bash
# Times `keel propose --json` on an invented universe with monthly figures
# and month-end closes (gen_propose_market.py; by default 3,000 names x 20
# years: 720,000 metric rows, 720,000 closes) and a two-account ledger holding
# 60 positions, against its floor, interleaved (tests/bench/interleave.py):
#  - the floor (the reference): a bare sqlite3 read of what a proposal cannot
#    do without, every stock's latest close on or before the as-of day and its
#    latest 'pe' figure known on it, summed, through the tables' primary keys;
#  - `keel holdings` on the same ledger: keel's start-up, opening the ledger,
#    replaying it and valuing the 60 positions;
#  - `keel propose --json` and `keel propose` (text).
# Prints each ratio's minimum and median (wall and processor time) and each
# command's peak memory, then a table over the shapes (scaling_table.py).
# Earlier target: under 100 ms wall time on a 2-core machine.
#
# Usage: tests/bench/propose_bench.sh [KEEL_BIN]   (default build/keel)
#   BENCH_SHAPES="3000x20" (names x years of monthly data, e.g.
#   "1000x20 3000x20 6000x20 3000x10"); BENCH_ROUNDS=5 the rounds (3 or
#   more); BENCH_REPEAT=5 the runs of each command per measurement (times are
#   per run). Making each ledger is setup, not timed (its import time is
#   printed). BENCH_BEFORE=OTHER_KEEL also times `propose --json` and
#   `--version` of another build (say, the one before a change) in the same
#   rounds, beside this build's `--version`. That build then makes the ledger,
#   and reads a copy of it made before this build opens it: an older build
#   refuses a ledger a newer one has migrated.
set -euo pipefail
here="$(cd "$(dirname "$0")" && pwd)"
keel="${1:-$here/../../build/keel}"
rounds=${BENCH_ROUNDS:-5}
repeat=${BENCH_REPEAT:-5}
. "$here/scaling.sh"
base="$(mktemp -d)"
trap 'rm -rf "$base" "$scaling_record"' EXIT
for shape in ${BENCH_SHAPES:-3000x20}; do
  names=${shape%x*}
  years=${shape#*x}
  work="$base/$shape"
  db="$work/bench.db"
  k() { "${BENCH_BEFORE:-$keel}" --db "$db" "$@"; }
  /usr/bin/python3 "$here/gen_propose_market.py" "$work/data" --securities "$names" --years "$years" \
    --start-year $(( 2024 - years ))  # every shape ends with 2023
  before_db="$work/before.db"
  k init --currency USD > /dev/null
  start=$(date +%s%N)
  for kind in securities prices metrics; do k import "$kind" "$work/data/$kind.csv" --quiet > /dev/null; done
  end=$(date +%s%N)
  echo
  echo "== $names names x $years years: import of $names securities, $(( names * years * 12 )) closes and as many figures: $(( (end - start) / 1000000 )) ms"
  k account add "Taxable" > /dev/null
  k account add "Retirement" > /dev/null
  k record deposit --date 2004-01-02 --account Taxable --amount 2000000 > /dev/null
  k record deposit --date 2004-01-02 --account Retirement --amount 800000 > /dev/null
  for i in $(seq 0 59); do
    sym=$(printf 'P%04d' $(( i * 47 % names )))
    acct=$([ $(( i % 3 )) -eq 0 ] && echo Retirement || echo Taxable)
    k record buy --date 2023-06-0$(( i % 9 + 1 )) --account "$acct" --symbol "$sym" \
      --quantity $(( 20 + i )) --price 50 --fee 1 > /dev/null
  done
  cat > "$work/rule.toml" <<'RULE'
[scope]
accounts = ["Taxable", "Retirement"]
[screen]
metric = "pe"
max_age_days = 120
winsorize_pct = [2, 98]
[select]
z_max = -1.0
exit_z = -0.25
[weights]
max_weight_pct = 2
[trading]
fee_fixed = 1
fee_bps = 5
cash_reserve_pct = 1
drift_pct_points = 0.25
lot_order = "losses-first"
RULE
  k propose --rule "$work/rule.toml" --json > "$work/first.json"  # warm the cache
  if [ -n "${BENCH_BEFORE:-}" ]; then
    /usr/bin/sqlite3 "$db" ".backup '$before_db'"
    "$keel" --db "$db" propose --rule "$work/rule.toml" --json > /dev/null  # may migrate it
  fi
  as_of=$(/usr/bin/python3 - "$work/first.json" <<'PY'
import json, sys
j = json.load(open(sys.argv[1]))
passed = sum(1 for s in j["screen"] if s["z"] is not None)
print(f"as of {j['as_of']}: {len(j['screen'])} names screened, {passed} pass, "
      f"{sum(s['selected'] for s in j['screen'])} selected, {len(j['orders'])} orders",
      file=sys.stderr)
print(j["as_of"])
PY
)
  floor="SELECT sum((SELECT close FROM price p WHERE p.security_id = s.id AND p.date <= '$as_of' ORDER BY p.date DESC LIMIT 1)), sum((SELECT value FROM metric m WHERE m.security_id = s.id AND m.name = 'pe' AND m.known_on <= '$as_of' ORDER BY m.date DESC, m.known_on DESC LIMIT 1)) FROM security s WHERE s.kind = 'stock'"
  echo "floor: $(/usr/bin/sqlite3 "$db" "$floor"); load $(cut -d' ' -f1-3 /proc/loadavg)"
  before=()
  if [ -n "${BENCH_BEFORE:-}" ]; then
    before=(--cmd "before: keel propose --json" "$BENCH_BEFORE --db $before_db propose --rule $work/rule.toml --json"
            --cmd "before: keel --version" "$BENCH_BEFORE --version"
            --cmd "keel --version" "$keel --version")
  fi
  scaling_rounds "$shape" --pairs "$rounds" --repeat "$repeat" \
    --ref "floor: sqlite3 point-in-time read" "/usr/bin/sqlite3 $db \"$floor\"" \
    --cmd "keel holdings" "$keel --db $db holdings" \
    --cmd "keel propose --json" "$keel --db $db propose --rule $work/rule.toml --json" \
    --cmd "keel propose" "$keel --db $db propose --rule $work/rule.toml" \
    ${before[@]+"${before[@]}"}
done
scaling_table "processor time against the floor"
