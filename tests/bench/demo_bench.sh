#!/bin/sh
# Times the demo: the scenario generator (default scale and --scale 4) and
# `keel demo` on the committed scenario, and prints the figures with the
# committed data's size and keel's peak resident memory. Run by hand.
#
#   tests/bench/demo_bench.sh [KEEL_BINARY] [WORK_DIR]
#
# Target: keel demo under 60 s on the shared build machine, ideally under 15 s.
# Needs Debian's /usr/bin/python3 and GNU time (/usr/bin/time).
set -eu
here=$(cd "$(dirname "$0")" && pwd)
src=$(cd "$here/../.." && pwd)
keel=${1:-$src/build/keel}
work=${2:-${TMPDIR:-/tmp}/keel-demo-bench}
for tool in /usr/bin/python3 /usr/bin/time; do
  [ -x "$tool" ] || { echo "missing $tool" >&2; exit 1; }
done
rm -rf "$work"
mkdir -p "$work"

now() { date +%s.%N; }
since() { echo "$1 $(now)" | awk '{ printf "%.2f", $2 - $1 }'; }

echo "committed scenario: $(du -sh "$src/examples/demo/data" | cut -f1)," \
  "$(cat "$src"/examples/demo/data/*.csv | wc -l) lines"
t=$(now)
/usr/bin/python3 "$src/examples/demo/generate.py" --out "$work/scale1"
echo "generator, scale 1: $(since "$t") s"
t=$(now)
/usr/bin/python3 "$src/examples/demo/generate.py" --out "$work/scale4" --scale 4
echo "generator, scale 4: $(since "$t") s, $(du -sh "$work/scale4" | cut -f1)"

/usr/bin/time -v -o "$work/demo.time" "$keel" demo --dir "$work/ledger" > "$work/demo.out"
wall=$(sed -n 's/.*Elapsed (wall clock) time (h:mm:ss or m:ss): //p' "$work/demo.time")
rss=$(sed -n 's/.*Maximum resident set size (kbytes): //p' "$work/demo.time")
echo "keel demo, scale 1: $wall wall, peak RSS $((rss / 1024)) MiB, ledger $(du -h "$work/ledger/keel.db" | cut -f1)"
/usr/bin/time -v -o "$work/demo4.time" "$keel" demo --data "$work/scale4" --dir "$work/ledger4" \
  > "$work/demo4.out"
wall=$(sed -n 's/.*Elapsed (wall clock) time (h:mm:ss or m:ss): //p' "$work/demo4.time")
rss=$(sed -n 's/.*Maximum resident set size (kbytes): //p' "$work/demo4.time")
echo "keel demo, scale 4: $wall wall, peak RSS $((rss / 1024)) MiB"
