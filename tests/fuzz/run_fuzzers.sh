#!/bin/sh
# Builds the libFuzzer targets and runs each for SECONDS (default 60),
# printing executions, executions per second and crashes per target. Exits
# non-zero if any target found a crash.
#
#   tests/fuzz/run_fuzzers.sh [SECONDS [BUILD_DIR]]
#
# Without BUILD_DIR the targets are built with clang, optimized, in
# build-fuzz/. With it, they are built in that existing build folder, which
# must have been configured with clang and -DKEEL_FUZZ=ON (CI reuses its
# sanitizer build this way instead of compiling the library a third time).
#
# The seed corpus in tests/fuzz/corpus/<target>/ is only read; inputs the
# fuzzer finds go to BUILD/corpus/<target>/, crashing inputs to
# BUILD/artifacts/<target>/. KEEL_FUZZ_JOBS (default 2) targets run at once.
set -eu
seconds=${1:-60}
case $seconds in '' | *[!0-9]*)
  echo "run_fuzzers.sh: SECONDS must be a whole number, got '$seconds'" >&2
  exit 2
  ;;
esac
root=$(cd "$(dirname "$0")/../.." && pwd)
targets="csv decimal date mapping rule ofx"

if [ $# -ge 2 ]; then
  build=$(cd "$2" 2>/dev/null && pwd) || {
    echo "run_fuzzers.sh: BUILD_DIR '$2' is not a folder" >&2
    exit 2
  }
  if ! grep -q '^KEEL_FUZZ:BOOL=ON$' "$build/CMakeCache.txt" 2>/dev/null; then
    echo "run_fuzzers.sh: '$2' is not a build folder configured with -DKEEL_FUZZ=ON" >&2
    exit 2
  fi
else
  build=$root/build-fuzz
  mkdir -p "$build"
  cmake -S "$root" -B "$build" -G Ninja -DCMAKE_CXX_COMPILER=clang++ -DKEEL_FUZZ=ON \
    -DCMAKE_BUILD_TYPE=RelWithDebInfo >"$build/configure.log" 2>&1 ||
    { cat "$build/configure.log" >&2; exit 1; }
fi
set --
for t in $targets; do set -- "$@" "fuzz_$t"; done
cmake --build "$build" -j2 --target "$@"

# Each target runs in its own process; JOBS of them at once (default 2, the
# cores of a small machine), so the whole run takes about
# SECONDS * targets / JOBS. Results are printed in the order of $targets.
jobs=${KEEL_FUZZ_JOBS:-2}
case $jobs in '' | *[!0-9]* | 0)
  echo "run_fuzzers.sh: KEEL_FUZZ_JOBS must be a whole number above 0, got '$jobs'" >&2
  exit 2
  ;;
esac

# Runs one target and writes "executions rate status" to BUILD/fuzz_T.result.
run_target() {
  t=$1
  corpus=$build/corpus/$t
  artifacts=$build/artifacts/$t
  mkdir -p "$corpus" "$artifacts"
  log=$build/fuzz_$t.log
  # Count only crashes of this run, not artifacts left by earlier ones.
  touch "$artifacts/.run-start"
  status=0
  "$build/tests/fuzz/fuzz_$t" -max_total_time="$seconds" -print_final_stats=1 \
    -artifact_prefix="$artifacts/" "$corpus" "$root/tests/fuzz/corpus/$t" >"$log" 2>&1 ||
    status=$?
  echo "$status" >"$build/fuzz_$t.status"
}

running=0
for t in $targets; do
  run_target "$t" &
  running=$((running + 1))
  if [ "$running" -ge "$jobs" ]; then
    wait
    running=0
  fi
done
wait

failed=0
printf '%-10s %14s %10s %8s\n' target executions execs/s crashes
for t in $targets; do
  artifacts=$build/artifacts/$t
  log=$build/fuzz_$t.log
  status=$(cat "$build/fuzz_$t.status" 2>/dev/null || echo 1)
  execs=$(sed -n 's/^stat::number_of_executed_units: *//p' "$log" | tail -n 1)
  rate=$(sed -n 's/^stat::average_exec_per_sec: *//p' "$log" | tail -n 1)
  crashes=$(find "$artifacts" -type f -newer "$artifacts/.run-start" \( -name 'crash-*' \
    -o -name 'leak-*' -o -name 'oom-*' -o -name 'timeout-*' \) | wc -l)
  if [ "$status" -ne 0 ] && [ "$crashes" -eq 0 ]; then crashes=1; fi
  printf '%-10s %14s %10s %8s\n' "$t" "${execs:-?}" "${rate:-?}" "$crashes"
  if [ "$crashes" -ne 0 ]; then
    failed=1
    echo "  fuzz_$t: see $log and $artifacts/" >&2
    grep -m 3 -E 'ERROR|invariant failed|runtime error' "$log" | sed 's/^/  /' >&2 || true
  fi
done
exit $failed
