#!/usr/bin/env bash
# Table-driven bad input: every case must give exit code 2, exactly one line on stderr naming a JSON
# path ("$" or "$.field..."), and leave an existing output file untouched.
set -u
bin=$1; src=$2
tmp=$(mktemp -d); trap 'rm -rf "$tmp"' EXIT
pass=0; fail=0
good='{ "plant": { "gain": 4, "poles": [0, -2] }, "requirements": { "overshoot_pct": { "max": 10 } }, "current": { "gain": 1 } }'

run_case() {  # run_case NAME EXPECTED_PATH_PREFIX -- command...
  local name=$1 want=$2; shift 3
  echo keep >"$tmp/out.json"
  "$@" -o "$tmp/out.json" >/dev/null 2>"$tmp/err"; local rc=$?
  local lines; lines=$(wc -l <"$tmp/err")
  if [ "$rc" = 2 ] && [ "$lines" = 1 ] && grep -qF -- "$want" "$tmp/err" && [ "$(cat "$tmp/out.json")" = keep ]; then
    pass=$((pass+1))
  else
    fail=$((fail+1)); echo "FAIL: $name: exit $rc, $lines line(s), want path '$want':"; cat "$tmp/err"
  fi
}
spec_case() {  # spec_case NAME PATH JSON-TEXT
  printf '%s' "$3" >"$tmp/$1.json"
  run_case "$1" "$2" -- "$bin" check "$tmp/$1.json"
}
comp_case() {  # comp_case NAME PATH JSON-TEXT (a --compensator file)
  printf '%s' "$good" >"$tmp/good.json"
  printf '%s' "$3" >"$tmp/$1.json"
  run_case "$1" "$2" -- "$bin" check "$tmp/good.json" --compensator "$tmp/$1.json"
}

# Every bad case of the schema agreement suite (one thing wrong each).
for f in "$src"/tests/schema/cases/bad-*.json; do run_case "$(basename "$f")" '$' -- "$bin" check "$f"; done

spec_case broken-json '$: invalid JSON at line 1' '{ "plant": '
spec_case trailing-garbage '$: invalid JSON' "$good x"
spec_case not-an-object '$: must be an object' '[1, 2]'
spec_case nan-string '$.plant.gain: must be a number, not the string' '{ "plant": { "gain": "NaN", "poles": [-1] }, "requirements": {} }'
spec_case inf-string '$.plant.poles[0]' '{ "plant": { "poles": ["Infinity"] }, "requirements": {} }'
spec_case huge-number '$.plant.numerator[0]: magnitude' '{ "plant": { "numerator": [1e308], "denominator": [1, 1] }, "requirements": {} }'
spec_case overflow-number '$: invalid JSON: number overflow' '{ "plant": { "numerator": [1e777], "denominator": [1, 1] }, "requirements": {} }'
# Coefficient ratios beyond double range used to hang root finding (balancing looped on inf):
# now one line naming the polynomial, within the test's time (issue 18).
spec_case ratio-overflow-den '$.plant.denominator: polynomial roots: the coefficients span more' '{ "plant": { "numerator": [1], "denominator": [1e-200, 0, 1e200] }, "requirements": {}, "current": { "gain": 1 } }'
spec_case subnormal-lead-den '$.plant.denominator: polynomial roots: the coefficients span more' '{ "plant": { "numerator": [1], "denominator": [1e-320, 0, -1089] }, "requirements": {}, "current": { "gain": 1 } }'
spec_case ratio-overflow-num '$.current.numerator: polynomial roots' '{ "plant": { "gain": 1, "poles": [-1, -2] }, "requirements": {}, "current": { "numerator": [1e-150, 1e180], "denominator": [1, 1] } }'
spec_case missing-plant '$.plant: is missing' '{ "requirements": {} }'
spec_case improper-plant '$.plant.numerator: improper plant' '{ "plant": { "numerator": [1, 0, 0], "denominator": [1, 1] }, "requirements": {} }'
spec_case all-zero-den '$.plant.denominator: is all zero' '{ "plant": { "numerator": [1], "denominator": [0, 0, 0] }, "requirements": {} }'
spec_case zero-lead-den '$.plant.denominator[0]' '{ "plant": { "numerator": [1], "denominator": [0, 1, 2] }, "requirements": {} }'
spec_case zero-numerator '$.plant.numerator: is all zero' '{ "plant": { "numerator": [0], "denominator": [1, 2] }, "requirements": {} }'
spec_case negative-delay '$.plant.delay_s: must be >= 0' '{ "plant": { "gain": 1, "poles": [-1], "delay_s": -0.1 }, "requirements": {} }'
spec_case negative-limit '$.requirements.settling_time_s.max' '{ "plant": { "gain": 1, "poles": [-1] }, "requirements": { "settling_time_s": { "max": -1 } } }'
spec_case empty-limit '$.requirements.phase_margin_deg: needs a "min"' '{ "plant": { "gain": 1, "poles": [-1] }, "requirements": { "phase_margin_deg": {} } }'
spec_case inverted-range '$.stages.frequency_range_rad_s[1]' '{ "plant": { "gain": 1, "poles": [-1] }, "requirements": {}, "stages": { "frequency_range_rad_s": [100, 1] } }'
spec_case empty-range '$.stages.frequency_range_rad_s[1]' '{ "plant": { "gain": 1, "poles": [-1] }, "requirements": {}, "stages": { "frequency_range_rad_s": [5, 5] } }'
spec_case notch-no-range '$.stages.frequency_range_rad_s: is needed' '{ "plant": { "gain": 1, "poles": [-1] }, "requirements": {}, "stages": { "notch": 1 } }'
spec_case inverted-bounds '$.requirements.bandwidth_rad_s.min: must be below max' '{ "plant": { "gain": 1, "poles": [-1] }, "requirements": { "bandwidth_rad_s": { "min": 10, "max": 1 } } }'
spec_case impossible-band '$.requirements.settling_time_s.band_pct' '{ "plant": { "gain": 1, "poles": [-1] }, "requirements": { "settling_time_s": { "max": 1, "band_pct": 150 } } }'
spec_case did-you-mean '$.plant.denominater: unknown key (did you mean "denominator"?)' '{ "plant": { "numerator": [1], "denominater": [1, 1] }, "requirements": {} }'
spec_case did-you-mean-unit '$.requirements.overshoot: unknown key (did you mean "overshoot_pct"?)' '{ "plant": { "gain": 1, "poles": [-1] }, "requirements": { "overshoot": { "max": 10 } } }'
spec_case did-you-mean-band '$.requirements.settling_time_s.band: unknown key (did you mean "band_pct"?)' '{ "plant": { "gain": 1, "poles": [-1] }, "requirements": { "settling_time_s": { "max": 1, "band": 2 } } }'
spec_case did-you-mean-stages '$.stages.frequency_range: unknown key (did you mean "frequency_range_rad_s"?)' '{ "plant": { "gain": 1, "poles": [-1] }, "requirements": {}, "stages": { "frequency_range": [1, 10] } }'
spec_case did-you-mean-search '$.search.seeds: unknown key (did you mean "seed"?)' '{ "plant": { "gain": 1, "poles": [-1] }, "requirements": {}, "search": { "seeds": 1 } }'
spec_case did-you-mean-analysis '$.analysis.pade: unknown key (did you mean "pade_order"?)' '{ "plant": { "gain": 1, "poles": [-1] }, "requirements": {}, "analysis": { "pade": 4 } }'
spec_case did-you-mean-variant '$.plant.variants[0].delay: unknown key (did you mean "delay_s"?)' '{ "plant": { "gain": 1, "poles": [-1], "variants": [ { "gain": 2, "delay": 0.1 } ] }, "requirements": {} }'
spec_case misplaced-band '$.requirements.band_pct: unknown key here (it belongs in $.requirements.settling_time_s)' '{ "plant": { "gain": 1, "poles": [-1] }, "requirements": { "band_pct": 2 } }'
spec_case misplaced-seed '$.seed: unknown key here (it belongs in $.search)' '{ "plant": { "gain": 1, "poles": [-1] }, "requirements": {}, "seed": 3 }'
spec_case wrong-type-keep '$.search.keep: must be a whole number' '{ "plant": { "gain": 1, "poles": [-1] }, "requirements": {}, "search": { "keep": "five" } }'
order=$(printf -- '-%s,' $(seq 1 31)); order=${order%,}
spec_case order-too-high '$.plant.poles: plant order 31 is above the limit of 30' "{ \"plant\": { \"poles\": [$order] }, \"requirements\": {} }"
deep=$(printf '[%.0s' $(seq 1 100)); deepc=$(printf ']%.0s' $(seq 1 100))
spec_case deep-nesting '$: nesting deeper than 64' "{ \"plant\": $deep$deepc, \"requirements\": {} }"
spec_case unstable-cancellation '$.current: compensator zero at 3' '{ "plant": { "gain": 1, "poles": [3, -1] }, "requirements": {}, "current": { "zeros": [3], "poles": [-10] } }'
spec_case variant-both-forms '$.plant.variants[0]' '{ "plant": { "gain": 1, "poles": [-1], "variants": [ { "numerator": [1], "denominator": [1, 1] } ] }, "requirements": {} }'
# Duplicate keys (nlohmann would keep the last one silently): refused, naming the key.
spec_case dup-plant '$.plant: appears twice in one object' '{ "plant": { "gain": 1, "poles": [-1] }, "plant": { "gain": 2, "poles": [-1] }, "requirements": {} }'
spec_case dup-max '$.requirements.overshoot_pct.max: appears twice' '{ "plant": { "gain": 1, "poles": [-1] }, "requirements": { "overshoot_pct": { "max": 10, "max": 50 } } }'
spec_case dup-in-variant '$.plant.variants[1].gain: appears twice' '{ "plant": { "gain": 1, "poles": [-1], "variants": [ { "gain": 2 }, { "gain": 3, "gain": 4 } ] }, "requirements": {} }'

comp_case comp-improper '$.zeros: improper compensator' '{ "gain": 1, "zeros": [-1, -2], "poles": [-3] }'
comp_case comp-zero-gain '$.gain: must be non-zero' '{ "gain": 0, "poles": [-3] }'
comp_case comp-delay '$.delay_s: unknown key' '{ "gain": 1, "poles": [-3], "delay_s": 1 }'
comp_case comp-broken '$: invalid JSON' '{ "gain": 1, '
comp_case comp-root-missing-im '$.poles[0].im: is missing' '{ "poles": [{ "re": -1 }] }'
comp_case comp-order-too-high '$.poles: compensator order 21' "{ \"poles\": [$(printf -- '-%s,' $(seq 1 20))-21] }"
comp_case comp-dup-gain '$.gain: appears twice in one object' '{ "gain": 1, "poles": [-3], "gain": 5 }'

# Files that are not readable JSON files.
mkdir -p "$tmp/dir.json"
run_case directory 'is a directory' -- "$bin" check "$tmp/dir.json"
run_case missing-file 'no such file' -- "$bin" check "$tmp/none.json"
head -c $((9 * 1024 * 1024)) /dev/zero | tr '\0' ' ' >"$tmp/huge.json"
run_case huge-file 'larger than 8 MiB' -- "$bin" check "$tmp/huge.json"
printf '%s' "$good" >"$tmp/good.json"
run_case design-bad-keep 'usage error' -- "$bin" design "$tmp/good.json" --keep 0

# Sweep files: exit 2, one line naming the field, and no point written.
sweep_case() {  # sweep_case NAME PATH JSON-TEXT
  printf '%s' "$3" >"$tmp/$1.json"
  rm -rf "$tmp/sweep-out"
  "$bin" sweep "$tmp/$1.json" --out "$tmp/sweep-out" --quiet >/dev/null 2>"$tmp/err"; local rc=$?
  local lines; lines=$(wc -l <"$tmp/err")
  if [ "$rc" = 2 ] && [ "$lines" = 1 ] && grep -qF -- "$2" "$tmp/err" && [ ! -s "$tmp/sweep-out/points.jsonl" ]; then
    pass=$((pass+1))
  else
    fail=$((fail+1)); echo "FAIL: $1: exit $rc, $lines line(s), want path '$2':"; cat "$tmp/err"
  fi
}
base='"base": { "plant": { "numerator": ["k"], "denominator": [1, "a", 0] }, "requirements": { "overshoot_pct": { "max": 10 } }, "current": { "gain": 1 } }'
sweep_case sweep-broken '$: invalid JSON' "{ $base, "
sweep_case sweep-no-base '$.base: is missing' '{ "parameters": { "k": { "values": [1] } } }'
sweep_case sweep-base-not-object '$.base: must be a spec object' '{ "base": [1], "parameters": { "k": { "values": [1] } } }'
sweep_case sweep-no-parameters '$.parameters: is missing' "{ $base }"
sweep_case sweep-empty-parameters '$.parameters: must be an object with at least one' "{ $base, \"parameters\": {} }"
sweep_case sweep-unknown-key '$.sampel: unknown key (did you mean "sample"?)' "{ $base, \"parameters\": { \"k\": { \"values\": [1] }, \"a\": { \"values\": [2] } }, \"sampel\": {} }"
sweep_case sweep-did-you-mean-param '$.parameters.k.value: unknown key (did you mean "values"?)' "{ $base, \"parameters\": { \"k\": { \"values\": [1], \"value\": [1] }, \"a\": { \"values\": [2] } } }"
sweep_case sweep-did-you-mean-range '$.parameters.k.counts: unknown key (did you mean "count"?)' "{ $base, \"parameters\": { \"k\": { \"from\": 1, \"to\": 2, \"counts\": 3 }, \"a\": { \"values\": [2] } } }"
sweep_case sweep-did-you-mean-sample '$.sample.methods: unknown key (did you mean "method"?)' "{ $base, \"parameters\": { \"k\": { \"values\": [1] }, \"a\": { \"values\": [2] } }, \"sample\": { \"methods\": \"grid\" } }"
sweep_case sweep-did-you-mean-base '$.base.requirements.overshoot: unknown key (did you mean "overshoot_pct"?)' "{ \"base\": { \"plant\": { \"numerator\": [\"k\"], \"denominator\": [1, 1] }, \"requirements\": { \"overshoot\": { \"max\": 5 } } }, \"parameters\": { \"k\": { \"values\": [1] } } }"
sweep_case sweep-did-you-mean-band '$.base.requirements.settling_time_s.band: unknown key (did you mean "band_pct"?)' "{ \"base\": { \"plant\": { \"numerator\": [\"k\"], \"denominator\": [1, 1] }, \"requirements\": { \"settling_time_s\": { \"max\": 5, \"band\": 2 } } }, \"parameters\": { \"k\": { \"values\": [1] } } }"
sweep_case sweep-spec-key-beside-base '$.requirements: unknown key here (a spec key: it belongs in $.base)' "{ $base, \"parameters\": { \"k\": { \"values\": [1] }, \"a\": { \"values\": [2] } }, \"requirements\": {} }"
sweep_case sweep-unknown-name '$.base.plant.denominator[1]: expression "a" uses the unknown name "a"' "{ $base, \"parameters\": { \"k\": { \"values\": [1] } } }"
sweep_case sweep-bad-expression '$.base.plant.numerator[0]: expression "k*"' "{ \"base\": { \"plant\": { \"numerator\": [\"k*\"], \"denominator\": [1, 1] }, \"requirements\": {} }, \"parameters\": { \"k\": { \"values\": [1] } } }"
sweep_case sweep-expression-nan '$.base.plant.numerator[0]: expression "sqrt(k)" is not finite' "{ \"base\": { \"plant\": { \"numerator\": [\"sqrt(k)\"], \"denominator\": [1, 1] }, \"requirements\": {} }, \"parameters\": { \"k\": { \"values\": [-1] } } }"
sweep_case sweep-nan-value '$.parameters.k.values[0]: must be a number, not the string' "{ $base, \"parameters\": { \"k\": { \"values\": [\"NaN\"] }, \"a\": { \"values\": [2] } } }"
sweep_case sweep-huge-value '$.parameters.k.values[0]: magnitude' "{ $base, \"parameters\": { \"k\": { \"values\": [1e308] }, \"a\": { \"values\": [2] } } }"
sweep_case sweep-empty-values '$.parameters.k.values: must be a non-empty array' "{ $base, \"parameters\": { \"k\": { \"values\": [] }, \"a\": { \"values\": [2] } } }"
sweep_case sweep-inverted-range '$.parameters.k.to: must be greater than from' "{ $base, \"parameters\": { \"k\": { \"from\": 5, \"to\": 1, \"count\": 3 }, \"a\": { \"values\": [2] } } }"
sweep_case sweep-empty-range '$.parameters.k.to: must be greater than from' "{ $base, \"parameters\": { \"k\": { \"from\": 5, \"to\": 5, \"count\": 3 }, \"a\": { \"values\": [2] } } }"
sweep_case sweep-log-negative '$.parameters.k.from: must be > 0 on a log scale' "{ $base, \"parameters\": { \"k\": { \"from\": -1, \"to\": 5, \"count\": 3, \"scale\": \"log\" }, \"a\": { \"values\": [2] } } }"
sweep_case sweep-count-one '$.parameters.k.count' "{ $base, \"parameters\": { \"k\": { \"from\": 1, \"to\": 5, \"count\": 1 }, \"a\": { \"values\": [2] } } }"
sweep_case sweep-no-count '$.parameters.k.count: is missing' "{ $base, \"parameters\": { \"k\": { \"from\": 1, \"to\": 5 }, \"a\": { \"values\": [2] } } }"
sweep_case sweep-mixed-parameter '$.parameters.k.from: unknown key' "{ $base, \"parameters\": { \"k\": { \"values\": [1], \"from\": 1 }, \"a\": { \"values\": [2] } } }"
sweep_case sweep-bad-name '$.parameters.1k: is not a usable parameter name' "{ $base, \"parameters\": { \"1k\": { \"values\": [1] }, \"k\": { \"values\": [1] }, \"a\": { \"values\": [2] } } }"
sweep_case sweep-bad-method '$.sample.method' "{ $base, \"parameters\": { \"k\": { \"values\": [1] }, \"a\": { \"values\": [2] } }, \"sample\": { \"method\": \"random\" } }"
sweep_case sweep-sobol-no-count '$.sample.count: is missing' "{ $base, \"parameters\": { \"k\": { \"values\": [1] }, \"a\": { \"values\": [2] } }, \"sample\": { \"method\": \"sobol\" } }"
sweep_case sweep-grid-count '$.sample.count: is for sobol and latin' "{ $base, \"parameters\": { \"k\": { \"values\": [1] }, \"a\": { \"values\": [2] } }, \"sample\": { \"method\": \"grid\", \"count\": 5 } }"
sweep_case sweep-too-many '$.parameters: make more than 10000000 grid points' "{ $base, \"parameters\": { \"k\": { \"from\": 1, \"to\": 2, \"count\": 5000 }, \"a\": { \"from\": 1, \"to\": 2, \"count\": 5000 } } }"
sweep_case sweep-bad-job '$.job: must be' "{ $base, \"parameters\": { \"k\": { \"values\": [1] }, \"a\": { \"values\": [2] } }, \"job\": \"plot\" }"
sweep_case sweep-check-no-current '$.base.current: is missing' "{ \"base\": { \"plant\": { \"numerator\": [\"k\"], \"denominator\": [1, 1] }, \"requirements\": {} }, \"parameters\": { \"k\": { \"values\": [1] } }, \"job\": \"check\" }"
sweep_case sweep-negative-seed '$.seed' "{ $base, \"parameters\": { \"k\": { \"values\": [1] }, \"a\": { \"values\": [2] } }, \"seed\": -3 }"
sweep_case sweep-base-typo '$.base.plant.denominatr: unknown key' "{ \"base\": { \"plant\": { \"numerator\": [\"k\"], \"denominatr\": [1, 1] }, \"requirements\": {} }, \"parameters\": { \"k\": { \"values\": [1] } } }"
sweep_case sweep-base-improper '$.base.plant.numerator: improper plant' "{ \"base\": { \"plant\": { \"numerator\": [\"k\", 1, 1], \"denominator\": [1, 1] }, \"requirements\": {} }, \"parameters\": { \"k\": { \"values\": [1] } } }"
sweep_case sweep-base-negative-limit '$.base.requirements.settling_time_s.max' "{ \"base\": { \"plant\": { \"numerator\": [1], \"denominator\": [1, 1] }, \"requirements\": { \"settling_time_s\": { \"max\": \"-t\" } } }, \"parameters\": { \"t\": { \"values\": [1] } } }"
sweep_case sweep-search-not-object '$.base.search: must be an object' "{ \"base\": { \"plant\": { \"numerator\": [\"k\"], \"denominator\": [1, 1] }, \"requirements\": {}, \"search\": 3 }, \"parameters\": { \"k\": { \"values\": [1] } } }"
sweep_case sweep-sample-too-many '$.sample.count' "{ $base, \"parameters\": { \"k\": { \"values\": [1] }, \"a\": { \"values\": [2] } }, \"sample\": { \"method\": \"latin\", \"count\": 2000000 } }"
sweep_case sweep-deep '$: nesting deeper than 64' "{ \"base\": $deep$deepc, \"parameters\": {} }"
sweep_case sweep-dup-parameter '$.parameters.k: appears twice in one object' "{ $base, \"parameters\": { \"k\": { \"values\": [1] }, \"a\": { \"values\": [2] }, \"k\": { \"values\": [3] } } }"
mkdir -p "$tmp/sweepdir.json"
rm -rf "$tmp/sweep-out"
"$bin" sweep "$tmp/sweepdir.json" --out "$tmp/sweep-out" --quiet >/dev/null 2>"$tmp/err"
[ $? = 2 ] && [ "$(wc -l <"$tmp/err")" = 1 ] && grep -q "is a directory" "$tmp/err" && pass=$((pass+1)) || { fail=$((fail+1)); echo "FAIL: sweep file that is a directory"; cat "$tmp/err"; }
echo file >"$tmp/a-file"
"$bin" sweep "$src/specs/sweeps/joint-inertia.json" --out "$tmp/a-file" --quiet >/dev/null 2>"$tmp/err"
[ $? = 2 ] && [ "$(wc -l <"$tmp/err")" = 1 ] && grep -qF -- "--out" "$tmp/err" && [ "$(cat "$tmp/a-file")" = file ] && pass=$((pass+1)) || { fail=$((fail+1)); echo "FAIL: sweep --out naming a file"; cat "$tmp/err"; }

# Retune: the same spec checks, and a current compensator it needs.
printf '{ "plant": { "gain": 1, "poles": [-1] }, "requirements": {} }' >"$tmp/retune-nocur.json"
run_case retune-no-current '$.current: is missing' -- "$bin" retune "$tmp/retune-nocur.json"
printf '{ "plant": { "gain": 1, "poles": [-1] }, "requirements": {}, "current": { "gain": 1, "zeros": [-1, -2] } }' >"$tmp/retune-improper.json"
run_case retune-improper-current '$.current.zeros: improper compensator' -- "$bin" retune "$tmp/retune-improper.json"
run_case retune-unstable-cancellation '$.current: compensator zero at 3' -- "$bin" retune "$tmp/unstable-cancellation.json"

# Result files read back (report; export reads them the same way): exit 2, one line, nothing written.
"$bin" check "$src/specs/greenhouse-heater.json" -o "$tmp/check-result.json" >/dev/null
result_case() {  # result_case NAME PATH PYTHON-EDIT (applied to the check result as `d`)
  /usr/bin/python3 -c "
import json, sys
d = json.load(open(sys.argv[1]))
$3
open(sys.argv[2], 'w').write(d if isinstance(d, str) else json.dumps(d))" "$tmp/check-result.json" "$tmp/$1.json"
  run_case "$1" "$2" -- "$bin" report "$tmp/$1.json"
}
result_case result-not-object '$: must be a JSON object' 'd = [1, 2]'
result_case result-broken '$: invalid JSON' 'd = json.dumps(d)[:-20]'
result_case result-unknown-job '$.tool.job: is "plot"' 'd["tool"]["job"] = "plot"'
result_case result-no-job '$.tool.job: is missing' 'del d["tool"]["job"]'
result_case result-no-spec '$.spec: is missing' 'del d["spec"]'
result_case result-null-spec '$.spec: is missing' 'd["spec"] = None'
result_case result-bad-spec '$.spec.plant.denominator' 'd["spec"]["plant"]["denominator"] = [0, 0]'
result_case result-spec-typo '$.spec.requirements.overshot_pct: unknown key' 'd["spec"]["requirements"]["overshot_pct"] = {"max": 5}'
result_case result-no-compensator '$.compensator: is missing' 'del d["compensator"]'
result_case result-improper-compensator '$.compensator.zeros: improper compensator' 'd["compensator"] = {"gain": 1, "zeros": [-1, -2], "poles": [-3]}'
result_case result-nan-gain '$.compensator.gain: must be a number, not the string' 'd["compensator"]["gain"] = "NaN"'
result_case result-bare-compensator '$.tool.job' 'd = d["compensator"]'
result_case result-dup-key '$.compensator.gain: appears twice in one object' 'd = json.dumps(d).replace("\"compensator\": {", "\"compensator\": {\"gain\": 3, ", 1)'
"$bin" design "$src/specs/greenhouse-heater.json" -o "$tmp/design-result.json" --threads 1 >/dev/null
/usr/bin/python3 -c "
import json, sys
d = json.load(open(sys.argv[1])); d['candidates'][0]['compensator'] = {'gain': 1, 'zeros': [-1, -2], 'poles': [-3]}
json.dump(d, open(sys.argv[2], 'w'))" "$tmp/design-result.json" "$tmp/design-bad-candidate.json"
run_case result-bad-candidate '$.candidates[0].compensator.zeros' -- "$bin" report "$tmp/design-bad-candidate.json"
/usr/bin/python3 -c "
import json, sys
d = json.load(open(sys.argv[1])); d['candidates'] = {'rank': 1}
json.dump(d, open(sys.argv[2], 'w'))" "$tmp/design-result.json" "$tmp/design-candidates-object.json"
run_case result-candidates-not-array '$.candidates: is missing or not an array' -- "$bin" report "$tmp/design-candidates-object.json"
mkdir -p "$tmp/result-dir.json"
run_case result-directory 'is a directory' -- "$bin" report "$tmp/result-dir.json"
# A sweep file is not a result: said so (not "unknown key $.base").
run_case report-sweep-file '$: is a sweep file, not a result' -- "$bin" report "$src/specs/sweeps/joint-inertia.json"
# A retune result whose change item is a number: named, exit 2 (it was an internal error).
printf '{ "plant": { "gain": 1, "poles": [0, -1] }, "requirements": { "phase_margin_deg": { "min": 60 } }, "current": { "gain": 4 } }' >"$tmp/retune-spec.json"
"$bin" retune "$tmp/retune-spec.json" -o "$tmp/retune-result.json" >/dev/null
/usr/bin/python3 -c "
import json, sys
d = json.load(open(sys.argv[1])); d['candidates'][0]['changes'][0]['item'] = 7
json.dump(d, open(sys.argv[2], 'w'))" "$tmp/retune-result.json" "$tmp/retune-bad-item.json"
run_case retune-item-number '$.candidates[0].changes[0].item: must be a string' -- "$bin" report "$tmp/retune-bad-item.json"
# NUL characters never reach the outputs.
spec_case nul-in-name '$.name: holds a NUL character' '{ "name": "wafer\u0000stage", "plant": { "gain": 1, "poles": [-1] }, "requirements": {} }'
# Integer options and environment variables: range-checked, never wrapped or saturated.
printf '%s' "$good" >"$tmp/good.json"
run_case seed-2-63 '--seed' -- "$bin" design "$tmp/good.json" --seed 9223372036854775808
run_case seed-above-spec-range '--seed' -- "$bin" design "$tmp/good.json" --seed 9007199254740992
run_case threads-wrap '--threads' -- "$bin" design "$tmp/good.json" --threads 4294967297
run_case keep-wrap '--keep' -- "$bin" retune "$tmp/good.json" --keep 4294967298
shard_case() {  # shard_case NAME WANT ENV... -- SWEEP-ARGS...
  local name=$1 want=$2; shift 2
  rm -rf "$tmp/shard-out"
  env "$@" --quiet >/dev/null 2>"$tmp/err"; local rc=$?
  if [ "$rc" = 2 ] && [ "$(wc -l <"$tmp/err")" = 1 ] && grep -qF -- "$want" "$tmp/err" && [ ! -s "$tmp/shard-out/points.jsonl" ]; then
    pass=$((pass+1))
  else
    fail=$((fail+1)); echo "FAIL: $name: exit $rc, want '$want':"; cat "$tmp/err"
  fi
}
sw="$src/specs/sweeps/joint-inertia.json"
shard_case shard-wrap '--shard: is "4294967297/4294967298"' -- "$bin" sweep "$sw" --out "$tmp/shard-out" --shard 4294967297/4294967298
shard_case shard-zero '--shard' -- "$bin" sweep "$sw" --out "$tmp/shard-out" --shard 0/2
shard_case shard-tail '--shard' -- "$bin" sweep "$sw" --out "$tmp/shard-out" --shard 1/2x
shard_case slurm-wrap 'SLURM_ARRAY_TASK_ID' SLURM_ARRAY_TASK_ID=4294967297 SLURM_ARRAY_TASK_COUNT=2 SLURM_ARRAY_TASK_MIN=4294967296 "$bin" sweep "$sw" --out "$tmp/shard-out"
shard_case slurm-huge 'SLURM_ARRAY_TASK_COUNT' SLURM_ARRAY_TASK_ID=1 SLURM_ARRAY_TASK_COUNT=99999999999999999999 "$bin" sweep "$sw" --out "$tmp/shard-out"

echo "$pass passed, $fail failed"
[ "$fail" = 0 ]
