# Sourced by the back-test benchmarks: makes, once per folder and shape, a
# ledger of invented securities with daily closes and monthly figures
# (gen_market.py). Making it is setup, not timed.
#
#   market_ledger KEEL WORK SECURITIES YEARS START
#
# leaves WORK/keel.db and WORK/shape ("SECURITIES x YEARS"); a ledger of
# another shape in WORK is made again. bench_rule FILE writes the benchmarks'
# rule: hold the names whose earnings yield is high against the universe.
market_ledger() {
  ml_keel=$1 ml_work=$2 ml_securities=$3 ml_years=$4 ml_start=$5
  mkdir -p "$ml_work"
  if [ -f "$ml_work/keel.db" ] &&
    [ "$(cat "$ml_work/shape" 2>/dev/null)" = "$ml_securities x $ml_years" ]; then
    return 0
  fi
  rm -f "$ml_work"/keel.db* "$ml_work/shape"
  echo "generating $ml_securities securities x $ml_years years..."
  /usr/bin/python3 "$(dirname "$0")/gen_market.py" "$ml_work" --securities "$ml_securities" \
    --years "$ml_years" --start "$ml_start"
  "$ml_keel" --db "$ml_work/keel.db" init > /dev/null
  for ml_what in securities prices metrics distributions splits; do
    "$ml_keel" --db "$ml_work/keel.db" import "$ml_what" "$ml_work/$ml_what.csv" --quiet
  done
  echo "$ml_securities x $ml_years" > "$ml_work/shape"
}

bench_rule() {
  cat > "$1" <<'RULE'
name = "Bench: high earnings yield"
[scope]
accounts = ["Simulated"]
[screen]
metric = "earnings_yield"
cheap = "high"
max_age_days = 120
min_names = 5
[select]
by = "z"
z_max = -0.5
exit_z = 0.0
RULE
}
