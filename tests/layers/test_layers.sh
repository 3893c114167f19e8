#!/usr/bin/env bash
# The library's layering, checked on the sources (DEVELOPERS.md, "Layers"): each layer includes only
# itself and the layers before it (model -> analysis -> requirements -> synthesis -> jobs ->
# outputs), public headers include no private one, and the library names no command-line option
# in the layers that had them (jobs, requirements, outputs: the CLI maps library errors to its flags), and
# the umbrella header polewright/polewright.hpp includes every public header.
#   tests/layers/test_layers.sh SOURCE_DIR
set -uo pipefail
src=$1
cd "$src" || exit 1
layers=(model analysis requirements synthesis jobs outputs)
fail=0; checked=0
for i in "${!layers[@]}"; do
  layer=${layers[$i]}
  allowed=" ${layers[*]:0:$((i + 1))} "
  for f in src/"$layer"/* include/polewright/"$layer"/*; do
    [ -f "$f" ] || continue
    checked=$((checked + 1))
    while IFS=: read -r line inc; do
      [ -n "$line" ] || continue
      used=$(sed -E 's#.*"polewright/([a-z_]+)/.*#\1#' <<<"$inc")
      case "$allowed" in
        *" $used "*) ;;
        *) echo "FAIL $f:$line: the $layer layer includes the $used layer"; fail=$((fail + 1)) ;;
      esac
    done < <(grep -nE '^\s*#\s*include\s+"polewright/[a-z_]+/' "$f")
  done
done
# Public headers: only polewright/... and system headers, never a private src/ header.
while IFS= read -r hit; do
  echo "FAIL $hit: a public header includes a private header"; fail=$((fail + 1))
done < <(grep -rnE '^\s*#\s*include\s+"' include/polewright | grep -vE '#\s*include\s+"polewright/')
# No command-line option names in the jobs, requirements and outputs layers.
while IFS= read -r hit; do
  echo "FAIL $hit: a command-line option name in the library"; fail=$((fail + 1))
done < <(grep -rnE '"--[a-z]' src/jobs src/requirements src/outputs include/polewright/jobs include/polewright/requirements \
           include/polewright/outputs)
# The umbrella header includes every public header.
for h in include/polewright/*/*.hpp; do
  rel=${h#include/}
  grep -qF "#include \"$rel\"" include/polewright/polewright.hpp || { echo "FAIL: polewright.hpp misses $rel"; fail=$((fail + 1)); }
done
echo "$checked files checked, $fail problem(s)"
[ "$fail" -eq 0 ] && [ "$checked" -gt 50 ]
