#!/usr/bin/env bash
# A first ledger for the invented Brightwater household, in a scratch folder.
# Usage: examples/first-steps.sh [KEEL_BINARY]
set -euo pipefail
keel=${1:-keel}
dir=$(mktemp -d)
export KEEL_DB="$dir/brightwater.db"
"$keel" init
"$keel" account add "Taxable" --currency EUR
"$keel" security add KESTR --name "Kestrel Looms" --kind stock --currency EUR
"$keel" record deposit --date 2025-01-02 --account Taxable --amount 10000
"$keel" record buy --date 2025-01-06 --account Taxable --symbol KESTR --quantity 100 --price 50 --fee 10
"$keel" record dividend --date 2025-04-15 --account Taxable --symbol KESTR --amount 120
"$keel" record tax --date 2025-04-15 --account Taxable --symbol KESTR --amount 18
"$keel" record sell --date 2025-09-10 --account Taxable --symbol KESTR --quantity 40 --price 58 --fee 10
"$keel" holdings --as-of 2025-12-31
"$keel" gains --year 2025
echo "ledger left at $KEEL_DB"
