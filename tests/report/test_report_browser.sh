#!/usr/bin/env bash
# End-to-end: renders a demo report, opens it in headless Chromium (fresh profile, no network
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

# Well-formed markup (Python's XML parser, an outside reference).
"$py" - "$work/report.html" <<'PY' || fail "the HTML is not well-formed XML"
import sys, xml.dom.minidom
doc = xml.dom.minidom.parse(sys.argv[1])
print("xml: %d svg elements" % len(doc.getElementsByTagName("svg")))
PY

plots=$(grep -o 'class="pw-plot"' "$work/report.html" | wc -l)
[ "$plots" -ge 6 ] || fail "expected at least 6 plots, found $plots"

flags=(--headless --no-sandbox --disable-gpu --disable-background-networking --disable-quic --no-first-run
       --disable-component-update --disable-sync --disable-extensions --hide-scrollbars
       --user-data-dir="$profile" --enable-logging=stderr --v=0)
url="file://$work/report.html"

start=$(date +%s%N)
timeout 90 "$chrome" "${flags[@]}" --dump-dom "$url" >"$work/dom.html" 2>"$work/dom.log" || fail "chromium --dump-dom failed: $(tail -5 "$work/dom.log")"
timeout 90 "$chrome" "${flags[@]}" --window-size=1200,2600 --screenshot="$work/shot.png" "$url" \
  >/dev/null 2>"$work/shot.log" || fail "chromium --screenshot failed: $(tail -5 "$work/shot.log")"
end=$(date +%s%N)
echo "chromium: two runs in $(( (end - start) / 1000000 )) ms"

# No script errors or failed loads in the console log.
if grep -E "CONSOLE|Uncaught|ERR_FILE_NOT_FOUND|Failed to load" "$work/dom.log" "$work/shot.log"; then
  fail "console reported errors"
fi

# The loaded DOM holds every plot, each with a non-empty data path.
"$py" - "$work/dom.html" "$plots" <<'PY' || fail "the DOM check failed"
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

[ -s "$work/shot.png" ] || fail "no screenshot written"
# Not blank: many colours, real variance, and the candidate colour (#0b6e79) and the region fill
# (#d8eadf) both visible.
"$py" "$src/tests/report/png_check.py" "$work/shot.png" 0b6e79 d8eadf || fail "the screenshot looks blank"
echo "ok: report rendered in headless Chromium"
