#!/bin/sh
# Times `keel import transactions` of the same generated file with two keel
# binaries, interleaved (A B A B ...), and prints each run's seconds and the
# ratio B/A per pair, with the minimum and the median ratio. Use it to see
# what a change to the transaction intake costs against a reference build
# (for example one built from main), both built the same way (Release).
#
#   tests/bench/txn_import_bench.sh KEEL_A KEEL_B [ROWS [PAIRS [WORK_DIR]]]
#
# The file is invented: one account, a deposit, then buys, sells, dividends,
# taxes and fees of 20 invented symbols, each row with a ref.
set -eu
[ $# -ge 2 ] || { sed -n '2,10p' "$0" >&2; exit 2; }
a=$1
b=$2
rows=${3:-20000}
pairs=${4:-3}
work=${5:-${TMPDIR:-/tmp}/keel-txn-bench}
mkdir -p "$work"
/usr/bin/python3 - "$work" "$rows" <<'PY'
import os, sys, datetime
work, rows = sys.argv[1], int(sys.argv[2])
syms = [f"ZB{i:02d}" for i in range(20)]
with open(os.path.join(work, "securities.csv"), "w") as f:
    f.write("symbol,name,kind,currency\n")
    for s in syms:
        f.write(f"{s},Bench {s} (invented),stock,USD\n")
with open(os.path.join(work, "txns.csv"), "w") as f:
    f.write("date,account,kind,symbol,quantity,price,amount,fee,ref\n")
    f.write(f"2000-01-03,Bench,deposit,,,,1000000000,,r0\n")
    day = datetime.date(2000, 1, 4)
    held = {s: 0 for s in syms}
    for i in range(1, rows):
        s = syms[i % len(syms)]
        k = i % 5
        if k in (0, 1) or held[s] < 10:
            f.write(f"{day},Bench,buy,{s},10,{50 + i % 7}.25,,1.5,r{i}\n"); held[s] += 10
        elif k == 2:
            f.write(f"{day},Bench,sell,{s},5,{51 + i % 5}.5,,1.5,r{i}\n"); held[s] -= 5
        elif k == 3:
            f.write(f"{day},Bench,dividend,{s},,,{3 + i % 4}.1,,r{i}\n")
        else:
            f.write(f"{day},Bench,fee,,,,0.75,,r{i}\n")
        if i % 7 == 0:
            day += datetime.timedelta(days=1)
PY
run() {
  rm -f "$work/bench.db" "$work/bench.db-wal" "$work/bench.db-shm"
  "$1" --db "$work/bench.db" init > /dev/null
  "$1" --db "$work/bench.db" account add Bench > /dev/null
  "$1" --db "$work/bench.db" import securities "$work/securities.csv" > /dev/null
  t0=$(date +%s.%N)
  "$1" --db "$work/bench.db" import transactions "$work/txns.csv" > /dev/null
  t1=$(date +%s.%N)
  echo "$t0 $t1" | awk '{ printf "%.3f", $2 - $1 }'
}
echo "transactions import, $rows rows: A = $a, B = $b"
ratios=""
i=1
while [ "$i" -le "$pairs" ]; do
  ta=$(run "$a")
  tb=$(run "$b")
  r=$(echo "$ta $tb" | awk '{ printf "%.3f", $2 / $1 }')
  echo "pair $i: A ${ta} s, B ${tb} s, B/A $r"
  ratios="$ratios $r"
  i=$((i + 1))
done
echo "$ratios" | tr ' ' '\n' | sed '/^$/d' | sort -n | awk '
  { v[NR] = $1 } END { m = (NR % 2) ? v[(NR + 1) / 2] : (v[NR / 2] + v[NR / 2 + 1]) / 2;
  printf "B/A: minimum %.3f, median %.3f over %d pairs\n", v[1], m, NR }'
