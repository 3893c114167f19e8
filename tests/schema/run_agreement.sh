#!/usr/bin/env bash
# Runs the schema/parser agreement check; exit 77 (skipped) when python3-jsonschema is missing.
py=$1; script=$2; bin=$3
if ! "$py" -c "import jsonschema" 2>/dev/null; then
  echo "python3-jsonschema is not installed: skipping"
  exit 77
fi
exec "$py" "$script" "$bin"
