#!/usr/bin/env bash
# What the translation of a household statement costs: `keel statement --year 2024` of a
# household of N accounts in two currencies (translated: one build for the household and one
# for each account's own check) against the same household with everything in one currency
# (one build), interleaved, each timed over 5 runs back to back. Prints each round and the
# ratio's minimum and median.
# Usage: tests/bench/fx_statement_bench.sh [KEEL_BIN] [ACCOUNTS] [PAIRS]
set -euo pipefail
here="$(cd "$(dirname "$0")" && pwd)"
keel="${1:-$here/../../build/keel}"
accounts="${2:-4}"
pairs="${3:-5}"
work="$(mktemp -d)"
trap 'rm -rf "$work"' EXIT
mkdir "$work/mixed" "$work/single"
/usr/bin/python3 "$here/gen_fx_household.py" "$keel" "$work/mixed/l.db" mixed "$accounts"
/usr/bin/python3 "$here/gen_fx_household.py" "$keel" "$work/single/l.db" single "$accounts"
echo "household of $accounts accounts: $(sqlite3 "$work/mixed/l.db" 'SELECT count(*) FROM txn') transactions"
/usr/bin/python3 "$here/interleave.py" --pairs "$pairs" --repeat 5 \
  --ref one-currency "$keel --db $work/single/l.db statement --year 2024" \
  --cmd translated "$keel --db $work/mixed/l.db statement --year 2024"
