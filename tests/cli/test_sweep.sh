#!/usr/bin/env bash
# Sweeps end to end: thread counts, shards as concurrent processes + merge, SIGKILL at ten random
# moments with --resume, a torn last line, SIGTERM, the Slurm job-array variables, and bad input.
# Every comparison is byte for byte against one uninterrupted one-process run.
set -u
bin=$1; src=$2
sweep=$src/specs/sweeps/joint-inertia.json
tmp=$(mktemp -d); trap 'rm -rf "$tmp"' EXIT
pass=0; fail=0
ok() { pass=$((pass+1)); }
bad() { fail=$((fail+1)); echo "FAIL: $*"; }
same() {  # same FILE_A FILE_B WHAT
  if cmp -s "$1" "$2"; then ok; else bad "$3 ($1 vs $2)"; diff <(head -c 2000 "$1") <(head -c 2000 "$2") | head -5; fi
}

"$bin" sweep "$sweep" --out "$tmp/ref" --threads 1 --quiet || bad "reference run exited $?"
rows=$(($(wc -l <"$tmp/ref/summary.csv") - 1))
total=$(/usr/bin/python3 -c "import json,sys; print(json.load(open(sys.argv[1]))['points_total'])" "$tmp/ref/sweep.json")
[ "$rows" = "$total" ] && [ "$total" -gt 10 ] && ok || bad "summary has $rows rows for $total points"
[ "$(wc -l <"$tmp/ref/points.jsonl")" = "$total" ] && ok || bad "points.jsonl has the wrong number of lines"
/usr/bin/python3 - "$tmp/ref/summary.csv" <<'PY' && ok || bad "summary.csv does not read as a table with one row per point"
import csv, sys
rows = list(csv.DictReader(open(sys.argv[1], newline="")))
assert [int(r["index"]) for r in rows] == list(range(len(rows)))
assert {"J", "k", "os", "status", "overshoot_pct", "settling_time_s"} <= set(rows[0])
assert all(r["status"] in ("met", "not_met") for r in rows)
PY

# Two threads: the same files.
"$bin" sweep "$sweep" --out "$tmp/t2" --threads 2 --quiet || bad "two-thread run exited $?"
same "$tmp/ref/points.jsonl" "$tmp/t2/points.jsonl" "points.jsonl differs between 1 and 2 threads"
same "$tmp/ref/summary.csv" "$tmp/t2/summary.csv" "summary.csv differs between 1 and 2 threads"

# Three shards as concurrent processes, then merge.
for k in 1 2 3; do "$bin" sweep "$sweep" --out "$tmp/s$k" --shard $k/3 --threads 1 --quiet & done
wait
"$bin" merge "$tmp/s1" "$tmp/s2" "$tmp/s3" -o "$tmp/merged.csv" 2>"$tmp/merge.err" || bad "merge of all shards exited $?"
same "$tmp/ref/summary.csv" "$tmp/merged.csv" "merged shards differ from the one-process run"
"$bin" merge "$tmp/s1" "$tmp/s3" -o "$tmp/partial.csv" 2>"$tmp/merge.err"
[ $? = 1 ] && grep -q "missing" "$tmp/merge.err" && ok || bad "merge with a shard missing should exit 1 and name the missing points"

# The GNU parallel example (three local "hosts") gives the same summary.
if command -v parallel >/dev/null 2>&1; then
  POLEWRIGHT=$bin bash "$src/examples/sweeps/parallel-hosts.sh" "$sweep" "$tmp/gnu" ":,:,:" >"$tmp/gnu.log" 2>&1 || bad "parallel-hosts.sh exited $?: $(tail -3 "$tmp/gnu.log")"
  same "$tmp/ref/summary.csv" "$tmp/gnu/summary.csv" "GNU parallel shards merged differ from the one-process run"
else
  echo "note: GNU parallel not installed; its example was not run"
fi

# The Slurm job-array variables pick the same slice as --shard.
SLURM_ARRAY_TASK_ID=2 SLURM_ARRAY_TASK_MIN=1 SLURM_ARRAY_TASK_MAX=3 "$bin" sweep "$sweep" --out "$tmp/slurm2" --threads 1 --quiet
same "$tmp/s2/points.jsonl" "$tmp/slurm2/points.jsonl" "SLURM_ARRAY_TASK_* do not select shard 2/3"
SLURM_ARRAY_TASK_ID=5 SLURM_ARRAY_TASK_COUNT=3 SLURM_ARRAY_TASK_MIN=4 "$bin" sweep "$sweep" --out "$tmp/slurm2b" --threads 1 --quiet
same "$tmp/s2/points.jsonl" "$tmp/slurm2b/points.jsonl" "SLURM_ARRAY_TASK_COUNT with a MIN offset does not select shard 2/3"

# SIGKILL at ten random moments (50 to 250 ms into each run), resuming each time, on a larger
# variant of the demo (150 points) so that the kills land mid-sweep.
/usr/bin/python3 - "$sweep" "$tmp/long.json" <<'PY'
import json, sys
d = json.load(open(sys.argv[1]))
d["parameters"]["k"] = {"values": [40, 45, 50, 55, 60]}
d["parameters"]["os"]["count"] = 6
json.dump(d, open(sys.argv[2], "w"))
PY
"$bin" sweep "$tmp/long.json" --out "$tmp/longref" --threads 2 --quiet || bad "long reference run exited $?"
killed=0
for i in $(seq 1 10); do
  "$bin" sweep "$tmp/long.json" --out "$tmp/kill" --threads 2 --quiet --resume &
  pid=$!
  sleep "$(printf '0.%03d' $(( (RANDOM % 200) + 50 )))"
  if kill -9 "$pid" 2>/dev/null; then killed=$((killed+1)); fi
  wait "$pid" 2>/dev/null
done
"$bin" sweep "$tmp/long.json" --out "$tmp/kill" --threads 2 --quiet --resume || bad "final resume exited $?"
[ "$killed" -ge 5 ] && ok || bad "only $killed of 10 runs were still running when killed"
echo "SIGKILL: $killed of 10 runs killed mid-sweep"
same "$tmp/longref/summary.csv" "$tmp/kill/summary.csv" "summary.csv after ten SIGKILLs and resumes"
same "$tmp/longref/points.jsonl" "$tmp/kill/points.jsonl" "points.jsonl after ten SIGKILLs and resumes"

# A torn last line (power loss mid-write) is cut and that point redone.
mkdir -p "$tmp/torn"
cp "$tmp/ref/sweep.json" "$tmp/torn/"
head -n 7 "$tmp/ref/points.jsonl" >"$tmp/torn/points.jsonl"
sed -n 8p "$tmp/ref/points.jsonl" | head -c 50 >>"$tmp/torn/points.jsonl"
"$bin" sweep "$sweep" --out "$tmp/torn" --threads 1 --resume 2>"$tmp/torn.err" || bad "resume after a torn line exited $?"
grep -q "torn" "$tmp/torn.err" && ok || bad "the torn line was not reported"
same "$tmp/ref/summary.csv" "$tmp/torn/summary.csv" "summary.csv after a torn last line"

# SIGTERM stops cleanly after the points in flight (exit 4); resume completes it.
"$bin" sweep "$sweep" --out "$tmp/term" --threads 2 --quiet &
pid=$!
sleep 0.3
kill -TERM "$pid"
wait "$pid"; rc=$?
if [ "$rc" = 4 ] || [ "$rc" = 0 ]; then ok; else bad "SIGTERM: exit $rc, want 4 (or 0 if it had finished)"; fi
/usr/bin/python3 -c "
import json, sys
lines = open(sys.argv[1]).read().split('\n')
assert lines[-1] == ''
[json.loads(l) for l in lines[:-1]]" "$tmp/term/points.jsonl" && ok || bad "points.jsonl after SIGTERM is not whole lines"
"$bin" sweep "$sweep" --out "$tmp/term" --threads 2 --quiet --resume
same "$tmp/ref/summary.csv" "$tmp/term/summary.csv" "summary.csv after SIGTERM and resume"

# SIGTERM cancels a point in flight: a design point with a huge search (a minute or more on its
# own) ends within seconds, with exit 4, no line for it, and the cancel (not the grace exit) used.
/usr/bin/python3 - "$src/specs/wafer-stage.json" "$tmp/slow.json" <<'PY'
import json, sys
d = json.load(open(sys.argv[1])); d.pop("$schema", None)
d["stages"] = {"lead": 2, "lag": 2, "notch": 2, "integrator": "auto", "frequency_range_rad_s": [0.5, 600]}
d["search"] = {"keep": 100, "max_evaluations": 100000000}
d["requirements"]["overshoot_pct"] = {"max": "os"}
json.dump({"base": d, "parameters": {"os": {"values": [0.01]}}, "job": "design"}, open(sys.argv[2], "w"))
PY
"$bin" sweep "$tmp/slow.json" --out "$tmp/slow" --threads 1 --quiet 2>"$tmp/slow.err" &
pid=$!
sleep 2
kill -TERM "$pid"
for i in $(seq 1 150); do kill -0 "$pid" 2>/dev/null || break; sleep 0.1; done
if kill -0 "$pid" 2>/dev/null; then bad "SIGTERM: a point in flight was not stopped within 15 s"; kill -9 "$pid"; fi
wait "$pid"; rc=$?
[ "$rc" = 4 ] && ok || bad "SIGTERM with a point in flight: exit $rc, want 4"
[ ! -s "$tmp/slow/points.jsonl" ] && ok || bad "a cancelled point was written"
grep -q "was left" "$tmp/slow.err" && bad "the point was left by the grace exit, not cancelled" || ok

# One writer per directory: a second run on the same --out says who holds it and exits 2.
"$bin" sweep "$tmp/slow.json" --out "$tmp/locked" --threads 1 --quiet &
pid=$!
for i in $(seq 1 50); do [ -s "$tmp/locked/sweep.lock" ] && break; sleep 0.1; done
expect2_lock() {
  "$bin" sweep "$tmp/slow.json" --out "$tmp/locked" --resume --quiet >/dev/null 2>"$tmp/err"; local rc=$?
  if [ $rc = 2 ] && [ "$(wc -l <"$tmp/err")" = 1 ] && grep -qF "is in use by another sweep run (pid $pid on host $(hostname)" "$tmp/err"; then ok
  else bad "second run on a locked directory: exit $rc, stderr: $(cat "$tmp/err")"; fi
}
expect2_lock
kill -TERM "$pid"; wait "$pid"
# The lock goes with the process (also after SIGKILL): the next run may continue.
"$bin" sweep "$tmp/slow.json" --out "$tmp/locked" --threads 1 --quiet --resume &
pid=$!
sleep 0.5
kill -9 "$pid"; wait "$pid" 2>/dev/null
timeout 1 "$bin" sweep "$tmp/slow.json" --out "$tmp/locked" --threads 1 --quiet --resume 2>"$tmp/err"; rc=$?
[ "$rc" = 124 ] && ok || bad "a run after SIGKILL of the lock holder could not start: exit $rc, $(cat "$tmp/err")"

# Damaged points files: resume drops and reports exactly what it cannot use (every line twice, as
# two runs would have written it, a corrupt line, an index outside the sweep) and the result is
# the reference.
mkdir -p "$tmp/dup"
cp "$tmp/ref/sweep.json" "$tmp/dup/"
{ head -n 5 "$tmp/ref/points.jsonl"; echo '{"index": 7, broken'; head -n 5 "$tmp/ref/points.jsonl"; echo '{"index":100000,"status":"met"}'; sed -n '6,$p' "$tmp/ref/points.jsonl"; } >"$tmp/dup/points.jsonl"
"$bin" sweep "$sweep" --out "$tmp/dup" --threads 1 --resume 2>"$tmp/dup.err" || bad "resume of a damaged points file exited $?"
grep -q "dropped 5 repeated identical line(s)" "$tmp/dup.err" && ok || bad "repeated lines not reported: $(cat "$tmp/dup.err")"
grep -q "dropped 1 corrupt line(s) (line 6)" "$tmp/dup.err" && ok || bad "corrupt line not reported: $(cat "$tmp/dup.err")"
grep -q "outside this sweep: line 12 (index 100000)" "$tmp/dup.err" && ok || bad "outside index not reported: $(cat "$tmp/dup.err")"
same "$tmp/ref/summary.csv" "$tmp/dup/summary.csv" "summary.csv after repairing a damaged points file"
same "$tmp/ref/points.jsonl" "$tmp/dup/points.jsonl" "points.jsonl after repairing a damaged points file"
# Merge does not count an index outside the sweep as a point.
{ head -n 3 "$tmp/ref/points.jsonl"; echo '{"index":100000,"status":"met"}'; } >"$tmp/dup2.jsonl"
mkdir -p "$tmp/dup2"; cp "$tmp/ref/sweep.json" "$tmp/dup2/"; mv "$tmp/dup2.jsonl" "$tmp/dup2/points.jsonl"
"$bin" merge "$tmp/dup2" -o "$tmp/dup2.csv" 2>"$tmp/dup2.err"
[ $? = 1 ] && grep -q "index outside the sweep (index 100000)" "$tmp/dup2.err" && grep -q "$((total - 3)) of $total point(s) missing" "$tmp/dup2.err" && ok ||
  bad "merge with an index outside the sweep: $(cat "$tmp/dup2.err")"

# A parameter no expression uses: a warning, and the sweep runs.
/usr/bin/python3 - "$sweep" "$tmp/unused.json" <<'PY'
import json, sys
d = json.load(open(sys.argv[1])); d["job"] = "check"; d["parameters"]["spare"] = {"values": [1, 2]}
json.dump(d, open(sys.argv[2], "w"))
PY
"$bin" sweep "$tmp/unused.json" --out "$tmp/unused" --quiet 2>"$tmp/unused.err"; rc=$?
[ "$rc" -le 1 ] && grep -q 'warning: .*\$.parameters.spare: no expression of the base uses it' "$tmp/unused.err" && ok ||
  bad "unused parameter: exit $rc, stderr: $(cat "$tmp/unused.err")"

# Bad input: exit 2 with one line naming the field; nothing run.
expect2() {  # expect2 WHAT PATTERN -- command...
  local what=$1 pat=$2; shift 3
  "$@" >"$tmp/out" 2>"$tmp/err"; local rc=$?
  if [ $rc = 2 ] && [ "$(wc -l <"$tmp/err")" = 1 ] && grep -qF -- "$pat" "$tmp/err"; then ok; else bad "$what: exit $rc, stderr: $(cat "$tmp/err")"; fi
}
expect2 "a second run into the same directory" "--resume" -- "$bin" sweep "$sweep" --out "$tmp/ref" --quiet
sed 's/"os":  *{ "from": 5/"os2": { "from": 5/' "$sweep" >"$tmp/unknown.json"
expect2 "an expression naming an unknown parameter" '$.base.requirements.overshoot_pct.max' -- "$bin" sweep "$tmp/unknown.json" --out "$tmp/u" --quiet
[ ! -e "$tmp/u/points.jsonl" ] && ok || bad "a bad sweep wrote points"
sed 's|"20 / k"|"20 / (k"|' "$sweep" >"$tmp/syntax.json"
expect2 "a broken expression" '$.base.requirements.peak_effort.max' -- "$bin" sweep "$tmp/syntax.json" --out "$tmp/u2" --quiet
sed 's/"count": 5, "scale": "log"/"count": 5, "scale": "logarithmic"/' "$sweep" >"$tmp/scale.json"
expect2 "a bad scale" '$.parameters.J.scale' -- "$bin" sweep "$tmp/scale.json" --out "$tmp/u3" --quiet
sed 's/"from": 0.5, "to": 2.0/"from": 2.0, "to": 0.5/' "$sweep" >"$tmp/inverted.json"
expect2 "an inverted range" '$.parameters.J.to' -- "$bin" sweep "$tmp/inverted.json" --out "$tmp/u4" --quiet
sed 's/"sample": { "method": "grid" }/"sample": { "method": "sobol" }/' "$sweep" >"$tmp/nocount.json"
expect2 "sobol without a count" '$.sample.count' -- "$bin" sweep "$tmp/nocount.json" --out "$tmp/u5" --quiet
expect2 "a bad shard" "--shard" -- "$bin" sweep "$sweep" --out "$tmp/u6" --shard 4/3 --quiet

# Latin hypercube with the check job: each parameter range is cut into `count` equal strata (log
# strata on a log scale) and every stratum holds exactly one point (the defining property).
/usr/bin/python3 - "$sweep" "$tmp/latin.json" <<'PY'
import json, sys
d = json.load(open(sys.argv[1]))
d["job"] = "check"; d["sample"] = {"method": "latin", "count": 12}
d["parameters"]["k"] = {"from": 40, "to": 60}
json.dump(d, open(sys.argv[2], "w"))
PY
"$bin" sweep "$tmp/latin.json" --out "$tmp/latin" --quiet || bad "latin check sweep exited $?"
/usr/bin/python3 - "$tmp/latin/summary.csv" <<'PY' && ok || bad "latin sample does not put one point in every stratum"
import csv, math, sys
rows = list(csv.DictReader(open(sys.argv[1], newline="")))
assert len(rows) == 12
def strata(vals, lo, hi, log):
    f = (lambda v: math.log(v)) if log else (lambda v: v)
    return sorted(int((f(v) - f(lo)) / (f(hi) - f(lo)) * 12) for v in vals)
assert strata([float(r["J"]) for r in rows], 0.5, 2.0, True) == list(range(12))
assert strata([float(r["k"]) for r in rows], 40, 60, False) == list(range(12))
assert strata([float(r["os"]) for r in rows], 5, 20, False) == list(range(12))
assert all(r["structure"] == "current" for r in rows)
PY

echo "$pass passed, $fail failed"
[ "$fail" = 0 ]
