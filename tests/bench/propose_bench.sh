#!/usr/bin/env bash
# Times `keel propose --json` on a 3,000-name universe with 20 years of monthly
# figures (720,000 metric rows, 720,000 month-end closes) and a two-account
# ledger holding 60 positions. Target: under 100 ms wall time on a 2-core
# machine. Prints the figures; run by hand.
# Usage: tests/bench/propose_bench.sh [KEEL_BIN]   (default build/keel)
set -euo pipefail
here="$(cd "$(dirname "$0")" && pwd)"
keel="${1:-$here/../../build/keel}"
work="$(mktemp -d)"
trap 'rm -rf "$work"' EXIT
db="$work/bench.db"
k() { "$keel" --db "$db" "$@"; }
/usr/bin/python3 "$here/gen_propose_market.py" "$work/data"
k init --currency USD > /dev/null
start=$(date +%s%N)
for kind in securities prices metrics; do k import "$kind" "$work/data/$kind.csv" --quiet > /dev/null; done
end=$(date +%s%N)
echo "import of 3,000 securities, 720,000 closes and 720,000 figures: $(( (end - start) / 1000000 )) ms"
k account add "Taxable" > /dev/null
k account add "Retirement" > /dev/null
k record deposit --date 2004-01-02 --account Taxable --amount 2000000 > /dev/null
k record deposit --date 2004-01-02 --account Retirement --amount 800000 > /dev/null
for i in $(seq 0 59); do
  sym=$(printf 'P%04d' $(( i * 47 % 3000 )))
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
/usr/bin/python3 - "$work/first.json" <<'PY'
import json, sys
j = json.load(open(sys.argv[1]))
passed = sum(1 for s in j["screen"] if s["z"] is not None)
print(f"as of {j['as_of']}: {len(j['screen'])} names screened, {passed} pass, "
      f"{sum(s['selected'] for s in j['screen'])} selected, {len(j['orders'])} orders")
PY
runs=7
times=()
for _ in $(seq "$runs"); do
  start=$(date +%s%N)
  k propose --rule "$work/rule.toml" --json > /dev/null
  end=$(date +%s%N)
  times+=($(( (end - start) / 1000000 )))
done
sorted=($(printf '%s\n' "${times[@]}" | sort -n))
echo "keel propose --json, $runs runs (ms): ${times[*]}"
echo "min ${sorted[0]} ms, median ${sorted[$((runs / 2))]} ms (target < 100 ms)"
