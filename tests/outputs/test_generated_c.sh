#!/usr/bin/env bash
# The generated C (double, float, clamped in double and float) is compiled with gcc, run on a step, and compared sample
# by sample with scipy (tests/outputs/check_generated_c.py): scipy.signal.sosfilt of the exported
# JSON sections, and scipy.signal.cont2discrete(method="bilinear") + dlsim of the continuous
# compensator. Skips (77) without gcc or Debian's python3-scipy.
set -u
bin=$1; py=$2; here=$(cd "$(dirname "$0")" && pwd)
command -v gcc >/dev/null || { echo "gcc not installed: skipping"; exit 77; }
"$py" -c "import scipy" 2>/dev/null || { echo "python3-scipy not installed: skipping"; exit 77; }
tmp=$(mktemp -d); trap 'rm -rf "$tmp"' EXIT
fail=0
# A greenhouse heater loop: PI + lead on 0.5 / ((s + 0.2)(s + 1)).
cat >"$tmp/result.json" <<'J'
{ "tool": { "job": "check" },
  "spec": { "name": "greenhouse heater, zone 2",
            "plant": { "gain": 0.5, "poles": [-0.2, -1] },
            "requirements": { "phase_margin_deg": { "min": 40 } } },
  "compensator": { "gain": 2, "zeros": [-0.3, -1], "poles": [0, -5] } }
J
T=0.05
run() {  # run NAME ARGS... : export, expect exit 0 or 1
  "$bin" export "$tmp/result.json" --sample-time $T "$@" >"$tmp/log" 2>&1; local rc=$?
  if [ $rc -gt 1 ]; then echo "FAIL: export $* exited $rc"; cat "$tmp/log"; fail=1; fi
}
run --format json -o "$tmp/sections.json"
run --format c -o "$tmp/heater"
run --format c --precision float -o "$tmp/heaterf.c"
run --format c --clamp -2.5 2.5 -o "$tmp/heaterc"
run --format c --clamp -2.5 2.5 --precision float -o "$tmp/heatercf"
for f in heater.h heater.c heaterf.h heaterf.c heaterc.h heaterc.c heatercf.h heatercf.c; do
  [ -s "$tmp/$f" ] || { echo "FAIL: $f not written"; fail=1; }
done
# Driver: N samples of e = +1, then M samples of e = -1 (M = 0 for the plain step).
driver() {  # driver NAME N M
  cat >"$tmp/drv_$1.c" <<C
#include <stdio.h>
#include "$1.h"
int main(void) {
  $1_state st;
  int k;
  $1_init(&st);
  for (k = 0; k < $2 + $3; ++k) printf("%.17g\n", (double)$1_step(&st, k < $2 ? 1 : -1));
  return 0;
}
C
  gcc -std=c99 -Wall -Wextra -Wconversion -Wdouble-promotion -Werror -pedantic -I"$tmp" "$tmp/drv_$1.c" "$tmp/$1.c" -o "$tmp/drv_$1" -lm ||
    { echo "FAIL: gcc could not compile $1.c"; fail=1; return; }
  "$tmp/drv_$1" >"$tmp/$1.out"
}
driver heater 400 0
driver heaterf 400 0
driver heaterc 1200 100
driver heatercf 1200 100
[ $fail = 0 ] || exit 1
"$py" "$here/check_generated_c.py" "$tmp/sections.json" "$tmp/heater.out" "$tmp/heaterf.out" "$tmp/heaterc.out" -2.5 2.5 1200 "$tmp/heatercf.out"
