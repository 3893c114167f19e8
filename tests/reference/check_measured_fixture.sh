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
# The frequency of a maximum (a key ending in _at) is fixed only to about the square root of the
# optimiser's tolerance on a flat peak, so it may move by ~1e-8 relative between machines (seen:
# 4e-9 on peak_sensitivity_at); every other figure keeps 1e-9.
def close(x, y, rel=1e-9):
    if isinstance(x, dict): return x.keys() == y.keys() and all(close(x[k], y[k], 1e-6 if k.endswith("_at") else rel) for k in x)
    if isinstance(x, list): return len(x) == len(y) and all(close(u, v, rel) for u, v in zip(x, y))
    if isinstance(x, float): return math.isclose(x, y, rel_tol=rel, abs_tol=1e-12)
    return x == y
if not close(a, b):
    print("measured_fixture.json differs from the generator's output")
    sys.exit(1)
PY
echo "measured fixture matches its generator"
