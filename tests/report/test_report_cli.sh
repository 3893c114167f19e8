#!/usr/bin/env bash
# The report command and the --report options: a report for a check, a design and a retune result
# and for a sweep directory (and its shards), the same
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

# Retune: the report of a retune result and retune --report agree; the change table has one row per
# change of the result; an unchanged retune says so.
cat >"$tmp/retune.json" <<'J'
{ "name": "positioning axis, faster",
  "plant": { "gain": 4, "poles": [0, -2] },
  "requirements": { "damping_ratio": { "min": 0.48 }, "natural_frequency_rad_s": { "min": 5.5 } },
  "stages": { "lead": 1, "frequency_range_rad_s": [0.1, 100] },
  "current": { "gain": 4.68, "zeros": [-2.9], "poles": [-5.4] } }
J
"$bin" retune "$tmp/retune.json" -o "$tmp/retune-result.json" --report "$tmp/retune-direct.html" --threads 1 >/dev/null; rc=$?
[ "$rc" -le 1 ] && ok || bad "retune --report exited $rc"
"$bin" report "$tmp/retune-result.json" -o "$tmp/retune.html"; rc=$?
[ "$rc" = 0 ] && ok || bad "report of a retune exited $rc"
cmp -s "$tmp/retune.html" "$tmp/retune-direct.html" && ok || bad "retune report and retune --report differ"
grep -q 'id="changes"' "$tmp/retune.html" && ok || bad "retune report without the changes section"
want=$(/usr/bin/python3 -c 'import json,sys; r=json.load(open(sys.argv[1])); print(len(r["candidates"][0]["changes"]) if r["candidates"] else -1)' "$tmp/retune-result.json")
got=$(grep -o '<tr class="pw-change">' "$tmp/retune.html" | wc -l)
[ "$want" -gt 0 ] && [ "$got" = "$want" ] && ok || bad "change rows: $got in the page, $want in the result"
grep -q 'old design (in service)' "$tmp/retune.html" && ok || bad "the old design is not overlaid"
"$bin" retune "$tmp/met.json" -o "$tmp/unchanged.json" --report "$tmp/unchanged.html" --threads 1 >/dev/null; rc=$?
[ "$rc" = 0 ] && ok || bad "retune of a met spec exited $rc"
grep -q 'the retune changed nothing' "$tmp/unchanged.html" && ok || bad "unchanged retune page does not say so"
grep -q 'old design' "$tmp/unchanged.html" && bad "unchanged retune page overlays an old design" || ok

# Sweep: a report for a sweep directory, for its shards together, and the option checks.
cat >"$tmp/sw.json" <<'J'
{ "name": "axis sweep", "base": { "plant": { "gain": 1, "poles": [0, "-a"] },
    "requirements": { "overshoot_pct": { "max": 25 }, "phase_margin_deg": { "min": 45 } },
    "current": { "gain": "g" } },
  "parameters": { "a": { "from": 1, "to": 8, "count": 4, "scale": "log" }, "g": { "values": [0.5, 2, 8] } },
  "sample": { "method": "grid" }, "job": "check", "seed": 1 }
J
"$bin" sweep "$tmp/sw.json" --out "$tmp/swdir" --quiet; rc=$?
[ "$rc" = 0 ] && ok || bad "sweep exited $rc"
"$bin" report "$tmp/swdir" -o "$tmp/sweep.html"; rc=$?
[ "$rc" = 0 ] && ok || bad "report of a sweep directory exited $rc"
grep -q 'id="sweep-map"' "$tmp/sweep.html" && ok || bad "sweep report without its map"
[ "$(grep -o '<tr class="pw-point">' "$tmp/sweep.html" | wc -l)" = 12 ] && ok || bad "sweep table rows differ from 12 points"
"$bin" report "$tmp/swdir" -o "$tmp/sweep2.html" --x g --y a --metric phase_margin_deg && ok || bad "report with --x --y --metric exited $?"
grep -q 'Smallest phase margin' "$tmp/sweep2.html" && ok || bad "--metric phase_margin_deg not shown as the smallest"
"$bin" sweep "$tmp/sw.json" --out "$tmp/sh1" --shard 1/2 --quiet && "$bin" sweep "$tmp/sw.json" --out "$tmp/sh2" --shard 2/2 --quiet
"$bin" report "$tmp/sh1" "$tmp/sh2" -o "$tmp/shards.html" && ok || bad "report of two shards exited $?"
cmp -s <(sed 's#'"$tmp"'/sh1, '"$tmp"'/sh2#DIRS#' "$tmp/shards.html") <(sed 's#'"$tmp"'/swdir#DIRS#' "$tmp/sweep.html") && ok || bad "two shards and the one-process sweep give different pages"

bad_opts() {  # bad_opts NAME WANTED-TEXT ARGS...
  local name=$1 want=$2; shift 2
  echo keep >"$tmp/out.html"
  "$bin" report "$@" -o "$tmp/out.html" >/dev/null 2>"$tmp/err"; local rc=$?
  local lines; lines=$(wc -l <"$tmp/err")
  if [ "$rc" = 2 ] && [ "$lines" = 1 ] && grep -qF -- "$want" "$tmp/err" && [ "$(cat "$tmp/out.html")" = keep ]; then ok
  else bad "$name: exit $rc, $lines line(s), want '$want':"; cat "$tmp/err"; fi
}
bad_opts unknown-x '--x: "Q" is not a parameter of the sweep (a, g)' "$tmp/swdir" --x Q
bad_opts unknown-y '--y: "b"' "$tmp/swdir" --y b
bad_opts same-axes '--y: "a" is on both axes' "$tmp/swdir" --x a --y a
bad_opts unknown-metric '--metric: "speed" is not a metric' "$tmp/swdir" --metric speed
bad_opts x-on-a-result '--x: applies to sweep directories only' "$tmp/check.json" --x a
mkdir -p "$tmp/empty"
bad_opts not-a-sweep 'is a directory, but not a sweep directory (no sweep.json)' "$tmp/empty"
bad_opts mixed-inputs 'is not a sweep directory' "$tmp/swdir" "$tmp/check.json"
cp -r "$tmp/swdir" "$tmp/other"
/usr/bin/python3 - "$tmp/other/sweep.json" <<'PY'
import json, sys
h = json.load(open(sys.argv[1])); h["sweep"]["seed"] = 2; json.dump(h, open(sys.argv[1], "w"))
PY
bad_opts other-sweep 'holds a different sweep' "$tmp/swdir" "$tmp/other"

echo "keep" >"$tmp/kept.html"
"$bin" report "$tmp/check.json" >/dev/null 2>&1; rc=$?
[ "$rc" = 2 ] && ok || bad "report without -o exited $rc (want 2)"

echo "$pass passed, $fail failed"
[ "$fail" = 0 ]
