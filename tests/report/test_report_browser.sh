#!/usr/bin/env bash
# End-to-end: renders demo reports (check, retune, sweep), opens each in headless Chromium (fresh profile, no network
# services), and checks the console has no script errors, the DOM holds every plot with drawn data,
# and the screenshot is not blank. Exit 77 (skipped) when Chromium is not installed.
#   test_report_browser.sh POLEWRIGHT SOURCE_DIR [PYTHON]
set -uo pipefail
pw=$1
src=$2
py=${3:-/usr/bin/python3}
chrome=/usr/bin/chromium
[ -x "$chrome" ] || { echo "skip: $chrome not installed (Debian package chromium)"; exit 77; }
[ -x "$py" ] || { echo "skip: $py not found"; exit 77; }

work=$(mktemp -d)
profile=$(mktemp -d)
trap 'rm -rf "$work" "$profile"' EXIT
fail() { echo "FAIL: $*"; exit 1; }

# The report through both paths: check --report and the report command on the check's JSON.
"$pw" check "$src/specs/wafer-stage.json" -o "$work/check.json" --report "$work/direct.html" >/dev/null
rc=$?
[ "$rc" -le 1 ] || fail "check exited $rc"
"$pw" report "$work/check.json" -o "$work/report.html" || fail "report exited $?"
cmp -s "$work/direct.html" "$work/report.html" || fail "check --report and report differ"

flags=(--headless --no-sandbox --disable-gpu --disable-background-networking --disable-quic --no-first-run
       --disable-component-update --disable-sync --disable-extensions --hide-scrollbars
       --user-data-dir="$profile" --enable-logging=stderr --v=0)

# check_page NAME HTML MIN_PLOTS HEIGHT COLOUR...: well-formed, rendered without console errors, every
# plot drawn in the loaded DOM, a screenshot that is not blank and shows the named colours.
check_page() {
  local name=$1 html=$2 min=$3 height=$4; shift 4
  # Well-formed markup (Python's XML parser, an outside reference).
  "$py" - "$html" <<'PY' || fail "$name: the HTML is not well-formed XML"
import sys, xml.dom.minidom
doc = xml.dom.minidom.parse(sys.argv[1])
print("xml: %d svg elements" % len(doc.getElementsByTagName("svg")))
PY
  local plots; plots=$(grep -o 'class="pw-plot"' "$html" | wc -l)
  [ "$plots" -ge "$min" ] || fail "$name: expected at least $min plots, found $plots"
  local url="file://$html" start end
  start=$(date +%s%N)
  timeout 90 "$chrome" "${flags[@]}" --dump-dom "$url" >"$work/$name.dom" 2>"$work/$name.dom.log" || fail "$name: chromium --dump-dom failed: $(tail -5 "$work/$name.dom.log")"
  timeout 90 "$chrome" "${flags[@]}" --window-size=1200,"$height" --screenshot="$work/$name.png" "$url" \
    >/dev/null 2>"$work/$name.shot.log" || fail "$name: chromium --screenshot failed: $(tail -5 "$work/$name.shot.log")"
  end=$(date +%s%N)
  echo "$name: chromium, two runs in $(( (end - start) / 1000000 )) ms"
  # No script errors or failed loads in the console log.
  if grep -E "CONSOLE|Uncaught|ERR_FILE_NOT_FOUND|Failed to load" "$work/$name.dom.log" "$work/$name.shot.log"; then
    fail "$name: console reported errors"
  fi
  # The loaded DOM holds every plot, each with a non-empty data path.
  "$py" - "$work/$name.dom" "$plots" <<'PY' || fail "$name: the DOM check failed"
import re, sys
dom = open(sys.argv[1], encoding="utf-8").read()
want = int(sys.argv[2])
parts = dom.split('class="pw-plot"')[1:]
print("dom: %d plots (want %d)" % (len(parts), want))
assert len(parts) == want, "plot count"
for i, p in enumerate(parts):
    assert re.search(r'class="pw-data[^"]*"[^>]* d="M[^"]+"', p), "plot %d has no drawn data" % i
assert "Cautions." in dom, "cautions missing"
assert not re.search(r"\b(nan|inf)\b", dom, re.I), "nan or inf in the page"
PY
  [ -s "$work/$name.png" ] || fail "$name: no screenshot written"
  "$py" "$src/tests/report/png_check.py" "$work/$name.png" "$@" || fail "$name: the screenshot looks blank"
  [ -z "${PW_REPORT_SHOTS:-}" ] || cp "$work/$name.png" "$PW_REPORT_SHOTS/$name.png"
}

# Not blank: many colours, real variance, and the candidate colour (#0b6e79) and the region fill
# (#d8eadf) both visible.
check_page check "$work/report.html" 6 2600 0b6e79 d8eadf

# A retune report: the old design (grey, #69737a) under the new one (#0b6e79).
"$pw" retune "$src/specs/wafer-stage.json" -o "$work/retune.json" --threads 1 >/dev/null
rc=$?
[ "$rc" -le 1 ] || fail "retune exited $rc"
"$pw" report "$work/retune.json" -o "$work/retune.html" || fail "report of the retune exited $?"
check_page retune "$work/retune.html" 6 2600 0b6e79 69737a
grep -q 'old design (in service)' "$work/retune.dom" || fail "retune: the old design is not overlaid in the loaded page"
grep -q 'id="changes"' "$work/retune.dom" || fail "retune: no changes section"

# A sweep report: the joint-inertia demo; the status map shows met (#2f7d55) and not met (#b3261e).
"$pw" sweep "$src/specs/sweeps/joint-inertia.json" --out "$work/sweep" --quiet --threads 2 || fail "sweep exited $?"
"$pw" report "$work/sweep" -o "$work/sweep.html" || fail "report of the sweep exited $?"
check_page sweep "$work/sweep.html" 2 1800 2f7d55 b3261e
grep -q 'boundary of the feasible area' "$work/sweep.dom" || fail "sweep: no feasible boundary on the grid map"
echo "ok: check, retune and sweep reports rendered in headless Chromium"
