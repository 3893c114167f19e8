#!/bin/bash
# The committed measured-data fixture is what make_measured_fixture.py produces (exit 77 without
# numpy/scipy): a changed case without regenerated files fails here.
set -u
py=$1
src=$2
"$py" -c "import numpy, scipy" 2>/dev/null || exit 77
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
"$py" "$src/tests/reference/make_measured_fixture.py" "$tmp" || exit 1
diff -r "$tmp/measured" "$src/tests/reference/measured" >/dev/null || { echo "tests/reference/measured/ differs from the generator's output"; exit 1; }
"$py" - "$tmp/measured_fixture.json" "$src/tests/reference/measured_fixture.json" <<'PY' || exit 1
import json, math, sys
a, b = (json.load(open(p)) for p in sys.argv[1:3])
def close(x, y):
    if isinstance(x, dict): return x.keys() == y.keys() and all(close(x[k], y[k]) for k in x)
    if isinstance(x, list): return len(x) == len(y) and all(close(u, v) for u, v in zip(x, y))
    if isinstance(x, float): return math.isclose(x, y, rel_tol=1e-9, abs_tol=1e-12)
    return x == y
if not close(a, b):
    print("measured_fixture.json differs from the generator's output")
    sys.exit(1)
PY
echo "measured fixture matches its generator"
