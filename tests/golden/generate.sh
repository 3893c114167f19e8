#!/usr/bin/env bash
# Writes the JSON of check, design, retune and export for every bundled spec (specs/*.json that is
# not a schema) into OUTDIR: <spec>.check.json, <spec>.design.json, <spec>.retune.json and
# <spec>.export.json (the design's top candidate at the sample time listed below, Tustin).
#   tests/golden/generate.sh BINARY SOURCE_DIR OUTDIR
# Used by scripts/update-golden (writes tests/golden/) and by the CTest golden.json (compares).
set -uo pipefail
bin=$1; src=$2; out=$3
mkdir -p "$out"

# Sample times for the export: about 20 to 100 times the crossover each design lands at
# (common practice: 10 to 20 times or more).
sample_time() {
  case "$1" in
    greenhouse-heater) echo 1 ;;
    magnetic-bearing) echo 0.0005 ;;
    wafer-stage) echo 0.002 ;;
    *) echo "golden: no sample time for spec $1 (add one to tests/golden/generate.sh)" >&2; return 1 ;;
  esac
}

# Exit codes 0 (met) and 1 (not met) are results; anything else is a failure.
run() {
  "$@" >/dev/null 2>"$out/.stderr"
  local rc=$?
  if [ $rc -gt 1 ]; then
    echo "golden: '$*' exited $rc:" >&2
    cat "$out/.stderr" >&2
    return 1
  fi
}

status=0
for spec in "$src"/specs/*.json "$src"/examples/*.json; do
  [ -e "$spec" ] || continue
  case "$spec" in *.schema.json) continue ;; esac
  name=$(basename "$spec" .json)
  T=$(sample_time "$name") || { status=1; continue; }
  run "$bin" check "$spec" -o "$out/$name.check.json" || status=1
  run "$bin" design "$spec" --threads 1 -o "$out/$name.design.json" || status=1
  run "$bin" retune "$spec" --threads 1 -o "$out/$name.retune.json" || status=1
  run "$bin" export "$out/$name.design.json" --sample-time "$T" --format json -o "$out/$name.export.json" || status=1
done
rm -f "$out/.stderr"
exit $status
