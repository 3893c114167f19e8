#!/usr/bin/env bash
# Installs polewright into a temporary prefix, builds examples/library against the installed CMake
# package with find_package(polewright), and runs the program it builds.
set -euo pipefail
build=$1; src=$2
tmp=$(mktemp -d); trap 'rm -rf "$tmp"' EXIT
cmake --install "$build" --prefix "$tmp/prefix" >/dev/null
cmake -S "$src/examples/library" -B "$tmp/example" -DCMAKE_PREFIX_PATH="$tmp/prefix" -DCMAKE_BUILD_TYPE=Release >/dev/null
cmake --build "$tmp/example" -j2 >/dev/null
"$tmp/example/design_servo" | tee "$tmp/out.txt"
grep -q "meets every requirement: yes" "$tmp/out.txt"
echo "1 passed, 0 failed"
