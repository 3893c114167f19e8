#!/usr/bin/env bash
# Installs polewright into a temporary prefix, builds examples/library against the installed CMake
# package with find_package(polewright), and runs the program it builds.
set -euo pipefail
build=$1; src=$2
tmp=$(mktemp -d); trap 'rm -rf "$tmp"' EXIT
cmake --install "$build" --prefix "$tmp/prefix" >/dev/null
inc="$tmp/prefix/include/polewright"
# The public API is installed (umbrella and generated version header); the private SVG, text-table
# and atomic-file headers are not.
for f in polewright.hpp version.hpp jobs/design.hpp outputs/report.hpp; do
  [ -f "$inc/$f" ] || { echo "FAIL: $f is not installed"; exit 1; }
done
for f in outputs/svg_plot.hpp outputs/svg_text.hpp outputs/text_table.hpp outputs/atomic_file.hpp; do
  [ ! -e "$inc/$f" ] || { echo "FAIL: the private $f is installed"; exit 1; }
done
cmake -S "$src/examples/library" -B "$tmp/example" -DCMAKE_PREFIX_PATH="$tmp/prefix" -DCMAKE_BUILD_TYPE=Release >/dev/null
cmake --build "$tmp/example" -j2 >/dev/null
"$tmp/example/design_servo" | tee "$tmp/out.txt"
grep -q "meets every requirement: yes" "$tmp/out.txt"
version=$(sed -nE 's/^project\(polewright VERSION ([0-9.]+).*/\1/p' "$src/CMakeLists.txt")
grep -qx "polewright $version" "$tmp/out.txt" || { echo "FAIL: the installed version header does not say $version"; exit 1; }
echo "1 passed, 0 failed"
