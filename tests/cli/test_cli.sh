#!/usr/bin/env bash
# Exit codes and one-line errors of the command line (documented in docs/manual.md).
set -u
bin=$1; src=$2
tmp=$(mktemp -d); trap 'rm -rf "$tmp"' EXIT
pass=0; fail=0
expect() {  # expect CODE DESCRIPTION -- command...
  local want=$1 what=$2; shift 3
  "$@" >"$tmp/out" 2>"$tmp/err"; local got=$?
  if [ "$got" = "$want" ]; then pass=$((pass+1)); else fail=$((fail+1)); echo "FAIL: $what: exit $got, want $want"; cat "$tmp/err"; fi
}
one_line() {  # the last command's stderr is exactly one line naming $1
  local n; n=$(wc -l <"$tmp/err")
  if [ "$n" = 1 ] && grep -qF -- "$1" "$tmp/err"; then pass=$((pass+1)); else fail=$((fail+1)); echo "FAIL: stderr should be one line with '$1':"; cat "$tmp/err"; fi
}

expect 1 "wafer demo misses requirements" -- "$bin" check "$src/specs/wafer-stage.json"
grep -q "verdict: NOT MET" "$tmp/out" && pass=$((pass+1)) || { fail=$((fail+1)); echo "FAIL: no verdict line"; }
expect 1 "json to stdout" -- "$bin" check "$src/specs/wafer-stage.json" --json
/usr/bin/python3 -c "import json,sys; d=json.load(open('$tmp/out')); sys.exit(d['status']!='not_met')" 2>/dev/null && pass=$((pass+1)) || { fail=$((fail+1)); echo "FAIL: --json is not JSON with status"; }
expect 1 "-o writes a file" -- "$bin" check "$src/specs/wafer-stage.json" -o "$tmp/r.json"
[ -s "$tmp/r.json" ] && pass=$((pass+1)) || { fail=$((fail+1)); echo "FAIL: -o wrote nothing"; }

# A compensator that meets the wafer spec's requirements is not required here; a met loop:
cat >"$tmp/met.json" <<'J'
{ "plant": { "gain": 4, "poles": [0, -2] },
  "requirements": { "damping_ratio": { "min": 0.48 }, "natural_frequency_rad_s": { "min": 3.9 } },
  "stages": { "lead": 1, "frequency_range_rad_s": [0.1, 100] },
  "current": { "gain": 4.68, "zeros": [-2.9], "poles": [-5.4] } }
J
expect 0 "met loop exits 0" -- "$bin" check "$tmp/met.json"

printf '{ "plant": { "gain": 1, "poles": [-1] }, "requirements": { "overshot_pct": { "max": 5 } }, "current": {"gain": 1} }' >"$tmp/typo.json"
echo keep >"$tmp/existing.json"
expect 2 "misspelled key" -- "$bin" check "$tmp/typo.json" -o "$tmp/existing.json"
one_line '$.requirements.overshot_pct: unknown key (did you mean "overshoot_pct"?)'
[ "$(cat "$tmp/existing.json")" = keep ] && pass=$((pass+1)) || { fail=$((fail+1)); echo "FAIL: output file touched on bad input"; }
expect 2 "directory as spec" -- "$bin" check "$tmp"
one_line "is a directory"
expect 2 "missing file" -- "$bin" check "$tmp/nope.json"
one_line "no such file"
printf '{ "plant": ' >"$tmp/broken.json"
expect 2 "broken json" -- "$bin" check "$tmp/broken.json"
one_line "invalid JSON at line 1"
printf '{ "plant": { "gain": 1, "poles": [-1] }, "requirements": {} }' >"$tmp/nocur.json"
expect 2 "no current compensator" -- "$bin" check "$tmp/nocur.json"
one_line '$.current: is missing'
expect 2 "unknown subcommand" -- "$bin" frobnicate
expect 2 "missing argument" -- "$bin" check
expect 0 "validate a demo" -- "$bin" validate "$src/specs/magnetic-bearing.json"
expect 2 "validate a bad spec" -- "$bin" validate "$tmp/typo.json"
one_line "did you mean"
printf '{"gain": 2, "zeros": [-1], "poles": [-10]}' >"$tmp/comp.json"
expect 1 "--compensator file replaces current (a weaker lead misses)" -- "$bin" check "$tmp/met.json" --compensator "$tmp/comp.json"
printf '{"numerator": [4.68, 13.572], "denominator": [1, 5.4]}' >"$tmp/comp2.json"
expect 0 "--compensator file in polynomial form" -- "$bin" check "$tmp/met.json" --compensator "$tmp/comp2.json"
printf '{"gain": 2, "zeros": [-1, -2], "poles": [-10]}' >"$tmp/improper.json"
expect 2 "improper compensator file" -- "$bin" check "$tmp/met.json" --compensator "$tmp/improper.json"
one_line "improper compensator"

# design: met -> 0 with a ranked table, not met -> 1, bad option -> 2, same JSON on 1 and 2 threads
expect 0 "design meets the textbook lead target" -- "$bin" design "$tmp/met.json" -o "$tmp/d1.json" --threads 1
grep -q "meets all" "$tmp/out" && pass=$((pass+1)) || { fail=$((fail+1)); echo "FAIL: no ranked table"; }
expect 0 "design on two threads" -- "$bin" design "$tmp/met.json" -o "$tmp/d2.json" --threads 2
cmp -s "$tmp/d1.json" "$tmp/d2.json" && pass=$((pass+1)) || { fail=$((fail+1)); echo "FAIL: design JSON differs between 1 and 2 threads"; }
cat >"$tmp/rhp.json" <<'J'
{ "plant": { "gain": -1, "zeros": [2], "poles": [-1, -3] },
  "requirements": { "settling_time_s": { "max": 0.2 } },
  "stages": { "lead": 1, "integrator": true, "frequency_range_rad_s": [0.01, 1000] } }
J
expect 1 "design that cannot meet exits 1" -- "$bin" design "$tmp/rhp.json"
grep -q "BINDING.*right-half-plane zero" "$tmp/out" && pass=$((pass+1)) || { fail=$((fail+1)); echo "FAIL: the zero is not named"; }
expect 2 "design with a bad objective" -- "$bin" design "$tmp/met.json" --objective quickest
expect 0 "design --json" -- "$bin" design "$tmp/met.json" --json --keep 2 --objective most_robust
/usr/bin/python3 -c "import json,sys; d=json.load(open('$tmp/out')); sys.exit(not (d['status']=='met' and len(d['candidates'])<=2 and d['objective']=='most_robust'))" 2>/dev/null && pass=$((pass+1)) || { fail=$((fail+1)); echo "FAIL: --json/--keep/--objective not honoured"; }

expect 2 "an output in a folder that does not exist" -- "$bin" check "$tmp/met.json" -o "$tmp/no/such/dir/out.json"
one_line "cannot write"

# retune: already met -> 0 and unchanged; tightened -> 0 with a change list; no current -> 2
expect 0 "retune of a loop that meets changes nothing" -- "$bin" retune "$tmp/met.json" --json
/usr/bin/python3 -c "import json,sys; d=json.load(open('$tmp/out')); sys.exit(not (d['unchanged'] and d['candidates']==[] and d['tool']['job']=='retune'))" 2>/dev/null && pass=$((pass+1)) || { fail=$((fail+1)); echo "FAIL: retune of a met loop is not unchanged"; }
sed 's/"min": 0.48/"min": 0.6/' "$tmp/met.json" >"$tmp/tight.json"
expect 1 "the tightened loop misses with the current lead" -- "$bin" check "$tmp/tight.json"
expect 0 "retune meets the tightened loop" -- "$bin" retune "$tmp/tight.json" -o "$tmp/rt.json" --threads 1
grep -q "driven by" "$tmp/out" && pass=$((pass+1)) || { fail=$((fail+1)); echo "FAIL: retune table shows no change list"; }
/usr/bin/python3 -c "import json,sys; d=json.load(open('$tmp/rt.json')); c=d['candidates'][0]; sys.exit(not (c['meets'] and [x['item'] for x in c['changes']]==['gain','zero','pole']))" 2>/dev/null && pass=$((pass+1)) || { fail=$((fail+1)); echo "FAIL: retune JSON lacks the change list"; }
expect 0 "retune on two threads" -- "$bin" retune "$tmp/tight.json" -o "$tmp/rt2.json" --threads 2
cmp -s "$tmp/rt.json" "$tmp/rt2.json" && pass=$((pass+1)) || { fail=$((fail+1)); echo "FAIL: retune JSON differs between 1 and 2 threads"; }
expect 2 "retune needs a current compensator" -- "$bin" retune "$tmp/nocur.json"
one_line '$.current: is missing'

# --compensator FILE: an error in that compensator names FILE and its root, not the spec's $.current
# (a zero at +3 on the unstable plant pole at +3: the cancellation is refused).
cat >"$tmp/unstable.json" <<'J'
{ "plant": { "gain": 1, "poles": [3, -1] }, "requirements": { "phase_margin_deg": { "min": 30 } },
  "current": { "gain": 2, "zeros": [-0.5], "poles": [-10] } }
J
echo '{ "gain": 5, "zeros": [3], "poles": [-10] }' >"$tmp/cancels.json"
expect 2 "cancelling --compensator file" -- "$bin" check "$tmp/unstable.json" --compensator "$tmp/cancels.json"
one_line "$tmp/cancels.json: \$: compensator zero"
grep -qF '$.current' "$tmp/err" && { fail=$((fail+1)); echo "FAIL: the error blames the spec's \$.current"; } || pass=$((pass+1))

# check --find-sample-time: the rate line and the slowest sample time, with and without a block.
cat >"$tmp/axis.json" <<'J'
{ "plant": { "gain": 1, "poles": [0] }, "requirements": { "phase_margin_deg": { "min": 60 } },
  "current": { "gain": 10 }, "implementation": { "sample_time_s": 0.02, "compute_delay_samples": 1 } }
J
expect 0 "find-sample-time on a sampled loop that meets" -- "$bin" check "$tmp/axis.json" --find-sample-time
grep -q "^rate         2 pi / T is" "$tmp/out" && grep -q "^slowest T    0.034[0-9]* s meets" "$tmp/out" && pass=$((pass+1)) ||
  { fail=$((fail+1)); echo "FAIL: rate or slowest-T line"; cat "$tmp/out"; }
expect 0 "find-sample-time in the JSON" -- "$bin" check "$tmp/axis.json" --find-sample-time --json
/usr/bin/python3 -c "import json,sys; d=json.load(open('$tmp/out')); s=d['sample_time_search']; sys.exit(not (0.034 < s['slowest_met_s'] < s['first_failed_s'] < 0.0352 and d['sampled']['rate']['rate_ratio'] > 30))" \
  && pass=$((pass+1)) || { fail=$((fail+1)); echo "FAIL: sample_time_search JSON"; }

echo "$pass passed, $fail failed"
[ "$fail" = 0 ]
