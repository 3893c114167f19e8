#!/usr/bin/env bash
# CTest golden.json: the JSON of check, design, retune and export for every bundled spec, written
# afresh, must equal the committed files in tests/golden/ byte for byte (the same spec and seed
# give byte-identical output: a promise). After an intended change of figures, regenerate with
#   bash scripts/update-golden
set -uo pipefail
bin=$1; src=$2
tmp=$(mktemp -d); trap 'rm -rf "$tmp"' EXIT
bash "$src/tests/golden/generate.sh" "$bin" "$src" "$tmp" || { echo "golden: generating failed"; exit 1; }
pass=0; fail=0
for f in "$tmp"/*.json; do
  name=$(basename "$f")
  if [ ! -e "$src/tests/golden/$name" ]; then
    echo "FAIL $name: no committed golden file (run scripts/update-golden)"; fail=$((fail + 1)); continue
  fi
  if cmp -s "$f" "$src/tests/golden/$name"; then
    pass=$((pass + 1))
  else
    echo "FAIL $name differs from tests/golden/$name:"
    diff "$src/tests/golden/$name" "$f" | head -n 20
    fail=$((fail + 1))
  fi
done
for g in "$src"/tests/golden/*.json; do
  [ -e "$tmp/$(basename "$g")" ] || { echo "FAIL $(basename "$g"): committed but no longer produced"; fail=$((fail + 1)); }
done
echo "$pass passed, $fail failed"
[ $fail -eq 0 ] && [ $pass -gt 0 ]
