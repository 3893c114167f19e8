#!/usr/bin/env bash
# The report command and the --report options: a report for a check and a design result, the same
# bytes through every path, and bad input giving exit 2 with one stderr line naming the field, with
# an existing output file left untouched.
#   test_report_cli.sh POLEWRIGHT SOURCE_DIR
set -u
bin=$1; src=$2
tmp=$(mktemp -d); trap 'rm -rf "$tmp"' EXIT
pass=0; fail=0
ok() { pass=$((pass+1)); }
bad() { fail=$((fail+1)); echo "FAIL: $*"; }

cat >"$tmp/met.json" <<'J'
{ "name": "positioning axis <demo> & co",
  "plant": { "gain": 4, "poles": [0, -2] },
  "requirements": { "damping_ratio": { "min": 0.48 }, "natural_frequency_rad_s": { "min": 3.9 } },
  "stages": { "lead": 1, "frequency_range_rad_s": [0.1, 100] },
  "current": { "gain": 4.68, "zeros": [-2.9], "poles": [-5.4] } }
J

"$bin" check "$tmp/met.json" -o "$tmp/check.json" --report "$tmp/check-direct.html" >/dev/null; rc=$?
[ "$rc" = 0 ] && ok || bad "check --report exited $rc"
"$bin" report "$tmp/check.json" -o "$tmp/check.html"; rc=$?
[ "$rc" = 0 ] && ok || bad "report exited $rc"
cmp -s "$tmp/check.html" "$tmp/check-direct.html" && ok || bad "report and check --report differ"
head -c 15 "$tmp/check.html" | grep -q '<!DOCTYPE html>' && ok || bad "not an HTML page"
grep -q 'positioning axis &lt;demo&gt; &amp; co' "$tmp/check.html" && ok || bad "spec name not escaped"
"$bin" report "$tmp/check.json" -o "$tmp/again.html"
cmp -s "$tmp/check.html" "$tmp/again.html" && ok || bad "report not byte-identical on a second run"

"$bin" design "$tmp/met.json" -o "$tmp/design.json" --report "$tmp/design-direct.html" --threads 1 >/dev/null; rc=$?
[ "$rc" = 0 ] && ok || bad "design --report exited $rc"
"$bin" report "$tmp/design.json" -o "$tmp/design.html" && ok || bad "report of a design exited $?"
cmp -s "$tmp/design.html" "$tmp/design-direct.html" && ok || bad "design report and design --report differ"
grep -q 'id="candidates"' "$tmp/design.html" && ok || bad "design report without the candidates section"

bad_case() {  # bad_case NAME WANTED-TEXT FILE
  echo keep >"$tmp/out.html"
  "$bin" report "$3" -o "$tmp/out.html" >/dev/null 2>"$tmp/err"; local rc=$?
  local lines; lines=$(wc -l <"$tmp/err")
  if [ "$rc" = 2 ] && [ "$lines" = 1 ] && grep -qF -- "$2" "$tmp/err" && [ "$(cat "$tmp/out.html")" = keep ]; then ok
  else bad "$1: exit $rc, $lines line(s), want '$2':"; cat "$tmp/err"; fi
}
printf '{ "tool": ' >"$tmp/broken.json"
bad_case broken-json '$: invalid JSON' "$tmp/broken.json"
bad_case missing-file "$tmp/none.json" "$tmp/none.json"
printf '{"gain": 2, "zeros": [-1], "poles": [-10]}' >"$tmp/bare.json"
bad_case bare-compensator '$.tool.job: is missing' "$tmp/bare.json"
printf '{"tool": {"job": "sweep"}}' >"$tmp/sweep.json"
bad_case unknown-job '$.tool.job: is "sweep"' "$tmp/sweep.json"
/usr/bin/python3 - "$tmp" <<'PY'
import json, sys
t = sys.argv[1]
r = json.load(open(t + "/check.json"))
no_spec = dict(r); del no_spec["spec"]; json.dump(no_spec, open(t + "/nospec.json", "w"))
bad_spec = json.loads(json.dumps(r)); bad_spec["spec"]["plant"]["gain"] = "four"; json.dump(bad_spec, open(t + "/badspec.json", "w"))
no_comp = dict(r); del no_comp["compensator"]; json.dump(no_comp, open(t + "/nocomp.json", "w"))
d = json.load(open(t + "/design.json"))
d["candidates"][0]["compensator"] = {"gain": 1, "zeros": [-1, -2, -3], "poles": [-1]}; json.dump(d, open(t + "/improper.json", "w"))
PY
bad_case no-spec '$.spec: is missing' "$tmp/nospec.json"
bad_case bad-spec '$.spec.plant.gain' "$tmp/badspec.json"
bad_case no-compensator '$.compensator: is missing' "$tmp/nocomp.json"
bad_case improper-candidate '$.candidates[0].compensator' "$tmp/improper.json"

echo "keep" >"$tmp/kept.html"
"$bin" report "$tmp/check.json" >/dev/null 2>&1; rc=$?
[ "$rc" = 2 ] && ok || bad "report without -o exited $rc (want 2)"

echo "$pass passed, $fail failed"
[ "$fail" = 0 ]
