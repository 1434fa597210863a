# Sourced by the scaling benchmarks (the caller sets `here` to their folder):
# checks for the tools they need and makes the record file ($scaling_record,
# removed at exit) that scaling_rounds fills and scaling_table prints.
#
#   scaling_rounds SHAPE INTERLEAVE_ARGUMENTS...
#     one shape's interleaved rounds (interleave.py, its output as it runs),
#     recorded with the load averages before and after;
#   scaling_table TITLE
#     the table over all shapes recorded (scaling_table.py).
for sr_tool in /usr/bin/python3 /usr/bin/time /usr/bin/sqlite3; do
  [ -x "$sr_tool" ] || { echo "missing $sr_tool" >&2; exit 1; }
done
scaling_record=$(mktemp)
trap 'rm -f "$scaling_record"' EXIT

scaling_load() {
  printf '%s\tload\t%s\n' "$1" "$(cut -d' ' -f1-3 /proc/loadavg)" >> "$scaling_record"
}

scaling_rounds() {
  sr_shape=$1
  shift
  scaling_load "$sr_shape"
  /usr/bin/python3 "$here/interleave.py" --record "$scaling_record" "$sr_shape" "$@"
  scaling_load "$sr_shape"
}

scaling_table() {
  echo
  echo "== growth ($1)"
  /usr/bin/python3 "$here/scaling_table.py" "$scaling_record"
}
