#!/usr/bin/env bash
# End-to-end check of `polewright design` against independent numpy/scipy recomputation.
#
#   bash tests/reference/run_design_checks.sh POLEWRIGHT_BINARY
#
# For every tests/reference/design_problems/*.json: runs
#   POLEWRIGHT_BINARY design SPEC -o $tmp/NAME.json --threads 1
# and for every tests/reference/retune_problems/*.json (a loop that met its requirements, with one
# of them tightened so that it no longer does) the same with `retune`,
# (exit 0 = met, 1 = not met, anything else is a failure), counts a problem whose result
# status is not "met" as a failure, then runs verify_designs.py (Debian's /usr/bin/python3
# with numpy/scipy) on all results. The last line is "N passed, M failed" over both parts.
# Exit status: 0 when everything passed, 1 on any failure, 2 on bad usage, 77 (skip) when
# /usr/bin/python3 has no scipy.

set -u

PY=/usr/bin/python3
here=$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)

if [ $# -ne 1 ]; then
  echo "usage: bash $(basename "$0") POLEWRIGHT_BINARY" >&2
  exit 2
fi
bin=$1
if [ ! -x "$bin" ]; then
  echo "not an executable: $bin" >&2
  exit 2
fi
if ! "$PY" -c "import numpy, scipy" >/dev/null 2>&1; then
  echo "skip: $PY has no numpy/scipy (install python3-scipy)"
  exit 77
fi

shopt -s nullglob
specs=("$here"/design_problems/*.json "$here"/retune_problems/*.json)
if [ ${#specs[@]} -eq 0 ]; then
  echo "no design problems in $here/design_problems"
  echo "0 passed, 1 failed"
  exit 1
fi

tmp=$(mktemp -d "${TMPDIR:-/tmp}/polewright-design-checks.XXXXXX")
trap 'rm -rf "$tmp"' EXIT

passed=0
failed=0
results=()
for spec in "${specs[@]}"; do
  job=design
  case "$spec" in */retune_problems/*) job=retune ;; esac
  name=$job-$(basename "$spec" .json)
  out="$tmp/$name.json"
  start=$(date +%s)
  timeout 900 "$bin" "$job" "$spec" -o "$out" --threads 1 >"$tmp/$name.stdout" 2>"$tmp/$name.stderr"
  rc=$?
  secs=$(( $(date +%s) - start ))
  if [ $rc -ne 0 ] && [ $rc -ne 1 ]; then
    if [ $rc -eq 124 ]; then why="timed out"; else why="exit code $rc"; fi
    echo "FAIL $name: $job failed ($why, ${secs}s): $(head -c 400 "$tmp/$name.stderr" | tr '\n' ' ')"
    failed=$((failed + 1))
    continue
  fi
  if [ ! -s "$out" ]; then
    echo "FAIL $name: $job exited $rc but wrote no result file"
    failed=$((failed + 1))
    continue
  fi
  status=$("$PY" -c 'import json, sys; print(json.load(open(sys.argv[1])).get("status"))' "$out" 2>/dev/null)
  if [ -z "$status" ]; then
    echo "FAIL $name: result is not valid JSON"
    failed=$((failed + 1))
    continue
  fi
  results+=("$out")
  if [ "$status" != "met" ]; then
    echo "FAIL $name: status $status (exit $rc, ${secs}s): no compensator of the allowed structure found"
    failed=$((failed + 1))
  elif [ $rc -ne 0 ]; then
    echo "FAIL $name: status met but exit code $rc (expected 0)"
    failed=$((failed + 1))
  else
    echo "PASS $name: status met (${secs}s)"
    passed=$((passed + 1))
  fi
done

if [ ${#results[@]} -gt 0 ]; then
  "$PY" "$here/verify_designs.py" "${results[@]}" | tee "$tmp/verify.log"
  vrc=${PIPESTATUS[0]}
  line=$(tail -n 1 "$tmp/verify.log")
  if [[ "$line" =~ ^([0-9]+)\ passed,\ ([0-9]+)\ failed$ ]]; then
    passed=$((passed + BASH_REMATCH[1]))
    failed=$((failed + BASH_REMATCH[2]))
    if [ "$vrc" -ne 0 ] && [ "${BASH_REMATCH[2]}" -eq 0 ]; then
      failed=$((failed + 1))        # e.g. a file without a meeting candidate
    fi
  else
    echo "FAIL verify_designs.py ended without a summary line (exit $vrc)"
    failed=$((failed + 1))
  fi
fi

echo "$passed passed, $failed failed"
[ "$failed" -eq 0 ]
