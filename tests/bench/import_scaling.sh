#!/bin/sh
# How `keel import prices` grows with the number of rows: import_bench.sh
# (keel against the sqlite3 shell's .import of the same CSV into a plain
# table, interleaved) at several sizes, each in its own folder, then one
# table over the sizes (scaling_table.py): processor time's ratio to the
# .import (minimum and median), seconds, wall ratio, peak resident memory,
# and the load averages before and after each size.
#
#   tests/bench/import_scaling.sh [KEEL_BINARY] [WORK_DIR]
#   BENCH_SHAPES="250x10 1000x10" (securities x years of weekday closes:
#   0.65 M and 2.6 M rows); BENCH_ROUNDS=3 the rounds per size.
#
# Build keel optimized first (-DCMAKE_BUILD_TYPE=Release). Needs python3,
# sqlite3 and GNU time (/usr/bin/time). Generating each CSV is setup, done
# once per WORK_DIR and size, and is not timed.
set -eu
here=$(cd "$(dirname "$0")" && pwd)
keel=${1:-$here/../../build/keel}
base=${2:-${TMPDIR:-/tmp}/keel-import-scaling}
. "$here/scaling.sh"
for shape in ${BENCH_SHAPES:-250x10 1000x10}; do
  echo
  echo "== $shape; load $(cut -d' ' -f1-3 /proc/loadavg)"
  scaling_load "$shape"
  BENCH_SECURITIES=${shape%x*} BENCH_YEARS=${shape#*x} BENCH_RECORD=$scaling_record \
    "$here/import_bench.sh" "$keel" "$base/$shape"
  scaling_load "$shape"
done
scaling_table "processor time against the sqlite3 shell's .import"
