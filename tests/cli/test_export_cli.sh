#!/usr/bin/env bash
# Exit codes and one-line errors of `polewright export` (documented in docs/manual.md).
set -u
bin=$1
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
untouched() {
  if [ "$(cat "$tmp/keep.json")" = keep ]; then pass=$((pass+1)); else fail=$((fail+1)); echo "FAIL: output touched on bad input"; fi
}

cat >"$tmp/r.json" <<'J'
{ "tool": { "job": "check" },
  "spec": { "plant": { "gain": 4, "poles": [0, -2] },
            "requirements": { "phase_margin_deg": { "min": 45 }, "overshoot_pct": { "max": 25 } } },
  "compensator": { "gain": 4.68, "zeros": [-2.9], "poles": [-5.4] } }
J
echo '{ "gain": 2, "zeros": [-1], "poles": [0] }' >"$tmp/bare.json"
echo keep >"$tmp/keep.json"

expect 0 "fast sampling meets" -- "$bin" export "$tmp/r.json" --sample-time 0.001 --format json -o "$tmp/a.json"
grep -q "MEETS" "$tmp/out" && pass=$((pass+1)) || { fail=$((fail+1)); echo "FAIL: no verdict line"; }
/usr/bin/python3 -c "import json,sys; d=json.load(open('$tmp/a.json')); sys.exit(not (d['method']=='tustin' and d['sample_time_s']==0.001 and len(d['sections'])>=1))" \
  && pass=$((pass+1)) || { fail=$((fail+1)); echo "FAIL: JSON format"; }
expect 1 "slow sampling with a computation delay does not meet" -- "$bin" export "$tmp/r.json" --sample-time 0.2 --compute-delay 1 --format csv -o "$tmp/a.csv"
grep -q "^warning: the sample rate" "$tmp/out" && pass=$((pass+1)) || { fail=$((fail+1)); echo "FAIL: no sample-rate warning"; cat "$tmp/out"; }
expect 0 "bare compensator: written, not re-verified" -- "$bin" export "$tmp/bare.json" --sample-time 0.01 -o "$tmp/pi"
[ -s "$tmp/pi.h" ] && [ -s "$tmp/pi.c" ] && pass=$((pass+1)) || { fail=$((fail+1)); echo "FAIL: OUT.h / OUT.c not written"; }
grep -q "not re-verified" "$tmp/out" && pass=$((pass+1)) || { fail=$((fail+1)); echo "FAIL: no note for a bare compensator"; }
cat >"$tmp/spec.json" <<'J'
{ "plant": { "gain": 1, "poles": [-1] }, "requirements": { "phase_margin_deg": { "min": 45 } } }
J
expect 0 "bare compensator with --spec is re-verified" -- "$bin" export "$tmp/bare.json" --sample-time 0.01 --spec "$tmp/spec.json" --format json -o "$tmp/b.json"
grep -q "MEETS" "$tmp/out" && pass=$((pass+1)) || { fail=$((fail+1)); echo "FAIL: --spec did not re-verify"; }

# Bad input: exit 2, one line naming the option, the output untouched.
for t in 0 -0.01 nan NaN inf abc ""; do
  expect 2 "--sample-time '$t'" -- "$bin" export "$tmp/r.json" --sample-time "$t" --format json -o "$tmp/keep.json"
  one_line "--sample-time"; untouched
done
# The library names ExportOptions fields; the command line turns them into its options.
expect 2 "warp point above Nyquist (judged by the library)" -- "$bin" export "$tmp/r.json" --sample-time 0.001 --method prewarp --prewarp-rad-s 5000 --format json -o "$tmp/keep.json"
one_line "--prewarp-rad-s: must be below the Nyquist frequency pi / T"
grep -qE 'prewarp_rad_s|sample_time_s' "$tmp/err" && { fail=$((fail+1)); echo "FAIL: a library field name reached the user"; } || pass=$((pass+1))
expect 2 "rank 2 of a check result (judged by the library)" -- "$bin" export "$tmp/r.json" --rank 2 --sample-time 0.001 --format json -o "$tmp/keep.json"
one_line ": --rank: is 2: the result holds ranks 1 to 1"
for k in 0 2 -1 x 1.5; do
  expect 2 "--rank '$k'" -- "$bin" export "$tmp/r.json" --rank "$k" --sample-time 0.001 --format json -o "$tmp/keep.json"
  one_line "--rank"; untouched
done
expect 2 "unknown method" -- "$bin" export "$tmp/r.json" --sample-time 0.001 --method bilinear --format json -o "$tmp/keep.json"
one_line '--method: is "bilinear": expected tustin, prewarp, zoh or matched'; untouched
expect 2 "unknown format" -- "$bin" export "$tmp/r.json" --sample-time 0.001 --format xml -o "$tmp/keep.json"
one_line "--format"; untouched
expect 2 "unknown precision" -- "$bin" export "$tmp/r.json" --sample-time 0.001 --precision half -o "$tmp/keep"
one_line "--precision"
expect 2 "negative computation delay" -- "$bin" export "$tmp/r.json" --sample-time 0.001 --compute-delay -1 --format json -o "$tmp/keep.json"
one_line "--compute-delay"; untouched
expect 2 "clamp LO >= HI" -- "$bin" export "$tmp/r.json" --sample-time 0.001 --clamp 2 1 --format json -o "$tmp/keep.json"
one_line "--clamp"; untouched
expect 2 "prewarp above Nyquist" -- "$bin" export "$tmp/r.json" --sample-time 0.001 --method prewarp --prewarp-rad-s 5000 --format json -o "$tmp/keep.json"
one_line "--prewarp-rad-s"; untouched
expect 2 "prewarp without a spec needs a warp point" -- "$bin" export "$tmp/bare.json" --sample-time 0.01 --method prewarp --format json -o "$tmp/keep.json"
one_line "--prewarp-rad-s"; untouched
expect 2 "a dead time of too many samples" -- "$bin" export "$tmp/bare.json" --spec <(echo '{ "plant": { "gain": 1, "poles": [-1], "delay_s": 10 }, "requirements": { "phase_margin_deg": { "min": 45 } } }') --sample-time 0.01 --format json -o "$tmp/keep.json"
one_line "--sample-time"; untouched
expect 2 "missing --sample-time" -- "$bin" export "$tmp/r.json" --format json -o "$tmp/keep.json"
one_line "sample-time"; untouched
expect 2 "missing result file" -- "$bin" export "$tmp/nope.json" --sample-time 0.001 --format json -o "$tmp/keep.json"
[ "$(wc -l <"$tmp/err")" = 1 ] && pass=$((pass+1)) || { fail=$((fail+1)); echo "FAIL: missing file: not one line"; cat "$tmp/err"; }
# Tiny sample times: a step cut at the sample cap gives no figure (and cannot pass); a crossover
# that moves less than 1e-8 rad per sample is beyond double precision: refused.
expect 1 "a step cut at the sample cap" -- "$bin" export "$tmp/r.json" --sample-time 1e-6 --format json -o "$tmp/tiny.json"
grep -q "^warning: .*the sampled step stops at 200000 samples .*no step figure is given" "$tmp/out" && pass=$((pass+1)) || { fail=$((fail+1)); echo "FAIL: no warning for a cut step"; cat "$tmp/out"; }
grep -E "^  overshoot +<= 25 % +[0-9.]+ % +- +NO" "$tmp/out" >/dev/null && pass=$((pass+1)) || { fail=$((fail+1)); echo "FAIL: a cut step still shows an overshoot figure or a pass"; grep overshoot "$tmp/out"; }
/usr/bin/python3 -c "import json,sys; d=json.load(open('$tmp/tiny.json')); o=[q for q in d['reverification']['requirements'] if q['requirement'] == 'overshoot_pct']; sys.exit(not (len(o) == 1 and o[0]['met'] is False and o[0]['discrete'] is None))" \
  && pass=$((pass+1)) || { fail=$((fail+1)); echo "FAIL: the JSON of a cut step says met"; }
for t in 1e-11 1e-14; do
  expect 2 "--sample-time $t beyond double precision" -- "$bin" export "$tmp/r.json" --sample-time $t --format json -o "$tmp/keep.json"
  one_line "--sample-time: is too short for double precision"; untouched
done

# C file names as given; one sanitised identifier; the source includes its own header by name,
# and every case compiles (gcc -std=c99 -pedantic -Werror).
mkdir -p "$tmp/c"
for name in axis-x "my axis" "Äxis ünit" v1.2-axis 9lives _hidden x; do
  expect 0 "C export as '$name'" -- "$bin" export "$tmp/r.json" --sample-time 0.001 -o "$tmp/c/$name"
  if [ -s "$tmp/c/$name.h" ] && [ -s "$tmp/c/$name.c" ] && grep -qF "#include \"$name.h\"" "$tmp/c/$name.c"; then pass=$((pass+1))
  else fail=$((fail+1)); echo "FAIL: C export '$name': files not named as given or the include is wrong"; ls "$tmp/c"; fi
  if command -v gcc >/dev/null; then
    gcc -std=c99 -pedantic -Wall -Wextra -Werror -c "$tmp/c/$name.c" -I"$tmp/c" -o "$tmp/c/obj.o" && pass=$((pass+1)) ||
      { fail=$((fail+1)); echo "FAIL: '$name.c' does not compile"; }
  fi
done
grep -q "^void axis_x_init(axis_x_state\* st);" "$tmp/c/axis-x.h" && grep -q "my_axis_step" "$tmp/c/my axis.h" &&
  grep -q "pw_9lives_step" "$tmp/c/9lives.h" && grep -q "pw__hidden_step" "$tmp/c/_hidden.h" && grep -q " v1_step(" "$tmp/c/v1.2-axis.h" &&
  pass=$((pass+1)) || { fail=$((fail+1)); echo "FAIL: C identifiers"; grep -h "_step(" "$tmp/c/"*.h; }
for o in .c .h "$tmp/c/" "$tmp/c/.c" "$tmp/c/a\"b" "$tmp/c/a\\b"; do
  expect 2 "-o '$o' names no usable C file" -- "$bin" export "$tmp/r.json" --sample-time 0.001 -o "$o"
  one_line "-o: is"
done
ls -a "$tmp/c" | grep -q '^\.[ch]$' && { fail=$((fail+1)); echo "FAIL: hidden .h/.c written"; } || pass=$((pass+1))
( cd "$tmp" && ls -a | grep -q '^\.[ch]$' ) && { fail=$((fail+1)); echo "FAIL: hidden .h/.c written"; } || pass=$((pass+1))

# The spec's implementation block gives the defaults: no --sample-time needed, the sampled loop is
# check's (same verdict); an option overrides one setting and warns. Without a block and without
# --sample-time: exit 2 naming the option.
expect 2 "no --sample-time and no implementation block" -- "$bin" export "$tmp/r.json" --format json -o "$tmp/keep.json"
one_line "--sample-time"; untouched
/usr/bin/python3 - "$tmp/r.json" "$tmp/ri.json" <<'P'
import json, sys
d = json.load(open(sys.argv[1]))
d["spec"]["implementation"] = {"sample_time_s": 0.004, "method": "zoh", "compute_delay_samples": 0.5}
json.dump(d, open(sys.argv[2], "w"))
P
"$bin" check <(/usr/bin/python3 -c "import json; d=json.load(open('$tmp/ri.json')); s=d['spec']; s['current']=d['compensator']; print(json.dumps(s))") >"$tmp/check.txt" 2>&1
check_rc=$?
expect "$check_rc" "export at the spec's implementation: check's verdict" -- "$bin" export "$tmp/ri.json" --format json -o "$tmp/i.json"
/usr/bin/python3 -c "import json,sys; d=json.load(open('$tmp/i.json')); sys.exit(not (d['sample_time_s']==0.004 and d['method']=='zoh' and d['compute_delay_samples']==0.5))" \
  && pass=$((pass+1)) || { fail=$((fail+1)); echo "FAIL: implementation defaults not taken"; head -c 600 "$tmp/i.json"; }
grep -q "implementation block" "$tmp/out" && pass=$((pass+1)) || { fail=$((fail+1)); echo "FAIL: no note naming the implementation block"; cat "$tmp/out"; }
"$bin" export "$tmp/ri.json" --sample-time 0.002 --format json -o "$tmp/j.json" >"$tmp/out" 2>&1
grep -q "^warning: the spec's implementation block" "$tmp/out" && pass=$((pass+1)) || { fail=$((fail+1)); echo "FAIL: no warning for an override"; cat "$tmp/out"; }

# Same input, byte-identical output.
"$bin" export "$tmp/r.json" --sample-time 0.002 --method zoh --format json -o "$tmp/d1.json" >/dev/null
"$bin" export "$tmp/r.json" --sample-time 0.002 --method zoh --format json -o "$tmp/d2.json" >/dev/null
cmp -s "$tmp/d1.json" "$tmp/d2.json" && pass=$((pass+1)) || { fail=$((fail+1)); echo "FAIL: output not deterministic"; }

echo "export cli: $pass passed, $fail failed"
[ "$fail" = 0 ]
