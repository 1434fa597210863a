#!/bin/sh
# Times `keel demo` (without Chromium, so no PDF) from two builds of keel,
# interleaved in one run, and prints each run, the minimum and median of each
# and the ratio of the medians: for instance an optimised (Release) build
# against one configured without a build type (-O0).
#
#   tests/bench/demo_bench.sh KEEL_A KEEL_B [PAIRS]
#
# PAIRS defaults to 5 (at least 3). Each run builds a fresh demo ledger in a
# scratch folder, which is removed.
set -eu
a=$1
b=$2
pairs=${3:-5}
[ "$pairs" -ge 3 ] || { echo "PAIRS must be 3 or more" >&2; exit 1; }
work=$(mktemp -d "${TMPDIR:-/tmp}/keel-demo-bench-XXXXXX")
trap 'rm -rf "$work"' EXIT

run() {  # prints the seconds one demo took
  rm -rf "$work/demo"
  t0=$(date +%s.%N)
  PATH=/nonexistent "$1" demo --dir "$work/demo" > /dev/null
  t1=$(date +%s.%N)
  echo "$t0 $t1" | awk '{ printf "%.3f\n", $2 - $1 }'
}

: > "$work/a"
: > "$work/b"
i=1
while [ "$i" -le "$pairs" ]; do
  run "$a" >> "$work/a"
  run "$b" >> "$work/b"
  i=$((i + 1))
done
stats() {  # min median
  sort -n "$1" | awk '{ v[NR] = $1 } END { m = (NR % 2) ? v[(NR + 1) / 2] : (v[NR / 2] + v[NR / 2 + 1]) / 2;
    printf "%.3f %.3f\n", v[1], m }'
}
set -- $(stats "$work/a") $(stats "$work/b")
echo "keel demo, $pairs interleaved pairs (seconds)"
echo "A $a: $(tr '\n' ' ' < "$work/a")"
echo "B $b: $(tr '\n' ' ' < "$work/b")"
printf 'A min %s median %s\nB min %s median %s\n' "$1" "$2" "$3" "$4"
echo "$2 $4" | awk '{ printf "median B / median A: %.2f\n", $2 / $1 }'
echo "$1 $3" | awk '{ printf "min B / min A: %.2f\n", $2 / $1 }'
