#!/bin/bash
# A polewright sweep over a few hosts with GNU parallel (Debian package `parallel`): one shard per
# host, each into its own directory on a shared file system, then one merge. Re-running the same
# line after a crash or a lost host continues every shard where it stopped (--resume).
#
#   bash examples/sweeps/parallel-hosts.sh SWEEP.json OUTDIR host1,host2,host3
#
# With ':' as the host list, every shard runs on this machine.
set -euo pipefail
sweep=$(realpath "$1")
out=$(realpath -m "$2")
hosts=$3
n=$(tr ',' '\n' <<<"$hosts" | grep -c .)
bin=${POLEWRIGHT:-polewright}
mkdir -p "$out"
seq 1 "$n" | parallel --will-cite --jobs 1 --sshlogin "$hosts" --halt now,fail=1 \
  "$bin" sweep "$sweep" --out "$out/shard-{}" --shard "{}/$n" --resume --quiet
"$bin" merge "$out"/shard-* -o "$out/summary.csv"
