#!/usr/bin/env bash
# A real Slurm job array on this host: brings up munged, slurmctld and slurmd from Debian's packages
# (slurm-wlm, munge) with a minimal configuration in a temporary directory, submits the demo sweep
# as a 3-task array with the example batch script, merges the shards and compares the result byte
# for byte with a one-process run. Stops the daemons it started, by their process ids.
# Exit 77 (skipped) when Slurm or munge is not installed or this is not run as root.
set -u
bin=$(realpath "$1"); src=$(realpath "$2")
for c in munged slurmctld slurmd sbatch sinfo; do
  command -v "$c" >/dev/null 2>&1 || [ -x "/usr/sbin/$c" ] || { echo "skip: $c not installed (slurm-wlm, munge)"; exit 77; }
done
[ "$(id -u)" = 0 ] || { echo "skip: starting the Slurm daemons needs root"; exit 77; }
[ -r /etc/munge/munge.key ] || { echo "skip: no /etc/munge/munge.key"; exit 77; }

tmp=$(mktemp -d /tmp/polewright-slurm.XXXXXX)
chmod 755 "$tmp"
pids=()
cleanup() {
  for f in "$tmp/slurmd.pid" "$tmp/slurmctld.pid" "$tmp/munge/munged.pid"; do
    [ -s "$f" ] && kill "$(cat "$f")" 2>/dev/null
  done
  sleep 1
  for f in "$tmp/slurmd.pid" "$tmp/slurmctld.pid" "$tmp/munge/munged.pid"; do
    [ -s "$f" ] && kill -9 "$(cat "$f")" 2>/dev/null
  done
  rm -rf "$tmp"
}
trap cleanup EXIT

host=$(hostname -s)
base=$(( 20000 + ($$ % 2000) * 2 ))
mkdir -p "$tmp/munge" "$tmp/state" "$tmp/spool" "$tmp/log" "$tmp/out"
chown munge:munge "$tmp/munge"
chmod 755 "$tmp/munge"
runuser -u munge -- /usr/sbin/munged --socket="$tmp/munge/munge.socket.2" --pid-file="$tmp/munge/munged.pid" \
  --log-file="$tmp/munge/munged.log" --seed-file="$tmp/munge/munged.seed" || { echo "FAIL: munged did not start"; exit 1; }
cat >"$tmp/slurm.conf" <<CONF
ClusterName=polewright-test
SlurmctldHost=$host
SlurmUser=root
AuthType=auth/munge
AuthInfo=socket=$tmp/munge/munge.socket.2
CredType=cred/munge
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
SelectType=select/cons_tres
SelectTypeParameters=CR_Core
StateSaveLocation=$tmp/state
SlurmdSpoolDir=$tmp/spool
SlurmctldPidFile=$tmp/slurmctld.pid
SlurmdPidFile=$tmp/slurmd.pid
SlurmctldLogFile=$tmp/log/slurmctld.log
SlurmdLogFile=$tmp/log/slurmd.log
SlurmctldPort=$base
SlurmdPort=$((base + 1))
ReturnToService=2
MpiDefault=none
JobCompType=jobcomp/none
AccountingStorageType=accounting_storage/none
NodeName=$host CPUs=$(nproc) State=UNKNOWN
PartitionName=sweeps Nodes=ALL Default=YES MaxTime=INFINITE State=UP
CONF
export SLURM_CONF=$tmp/slurm.conf
/usr/sbin/slurmctld -f "$SLURM_CONF" || { echo "FAIL: slurmctld did not start"; exit 1; }
/usr/sbin/slurmd -f "$SLURM_CONF" || { echo "FAIL: slurmd did not start"; exit 1; }
for i in $(seq 1 60); do
  sinfo -h -o %t 2>/dev/null | grep -q idle && break
  sleep 0.5
done
sinfo -h -o %t 2>/dev/null | grep -q idle || { echo "FAIL: the node never became idle"; tail -5 "$tmp/log/"*.log; exit 1; }

sweep=$src/specs/sweeps/joint-inertia.json
"$bin" sweep "$sweep" --out "$tmp/one" --threads 1 --quiet || { echo "FAIL: one-process run"; exit 1; }
cd "$tmp/out"
POLEWRIGHT=$bin timeout 600 sbatch --wait --array=1-3 --cpus-per-task=1 --export=ALL -o "$tmp/out/task-%a.log" \
  "$src/examples/sweeps/slurm-array.sbatch" "$sweep" "$tmp/out"
rc=$?
[ $rc = 0 ] || { echo "FAIL: sbatch --wait exited $rc"; cat "$tmp/out"/task-*.log 2>/dev/null | tail -20; exit 1; }
ls -d "$tmp/out"/shard-* | wc -l | grep -qx 3 || { echo "FAIL: expected 3 shard directories"; ls "$tmp/out"; exit 1; }
"$bin" merge "$tmp/out"/shard-* -o "$tmp/merged.csv" || { echo "FAIL: merge exited $?"; exit 1; }
if cmp -s "$tmp/one/summary.csv" "$tmp/merged.csv"; then
  echo "PASS: 3-task Slurm job array merged equals the one-process run ($(($(wc -l <"$tmp/merged.csv") - 1)) points)"
else
  echo "FAIL: merged job-array summary differs from the one-process run"
  diff "$tmp/one/summary.csv" "$tmp/merged.csv" | head -5
  exit 1
fi
