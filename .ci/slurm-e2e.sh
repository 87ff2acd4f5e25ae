#!/usr/bin/env bash
# End-to-end archive test on a real single-node Slurm cluster on loopback:
# a job array processes a set of generated files with automatic sharding and
# a shared manifest; one task is cancelled part-way; a second submission of
# the same array resumes and completes the set. Run as root (CI).
set -euo pipefail
cd "$(dirname "$0")/.."
REPO=$PWD
pass=0 fail=0
ok()  { pass=$((pass + 1)); echo "ok   - $*"; }
bad() { fail=$((fail + 1)); echo "FAIL - $*"; }

LOCAL_SLURM_INSTALL=${LOCAL_SLURM_INSTALL:-1} bash .ci/slurm/start-local-slurm.sh
trap 'bash .ci/slurm/stop-local-slurm.sh >/dev/null 2>&1 || true' EXIT

go build -o bin/warmrain ./cmd/warmrain
go build -o bin/gensample ./samples/cmd/gensample
W=$(mktemp -d /tmp/warmrain-slurm.XXXXXX)
mkdir -p "$W/in/east" "$W/in/west" "$W/out" "$W/logs"
n=0
for side in east west; do
  for d in 1 2 3 4 5 6; do
    bin/gensample -o "$W/in/$side/day$d.nc" -seed $((d * 7 + ${#side})) -cells 400 -days 2 >/dev/null
    n=$((n + 1))
  done
done
ls "$W"/in/*/*.nc > "$W/list.txt"
sha256sum "$W"/in/*/*.nc > "$W/inputs.sha256"
ok "generated $n input files"

cat > "$W/job.sh" <<JOB
#!/bin/bash
# One task of the array: warmrain picks its shard from SLURM_ARRAY_TASK_*.
exec "$REPO/bin/warmrain" process @"$W/list.txt" -o "$W/out/" --name '{parent}_{stem}.nc' \
  --manifest "$W/out/manifest.jsonl" --no-progress
JOB
chmod +x "$W/job.sh"

# wait_array JOBID SECONDS (see .ci/slurm/README in the shared recipe)
wait_array() {
  local jid=$1 deadline=$((SECONDS + $2)) states
  while ((SECONDS < deadline)); do
    if states=$(squeue -r -h -j "$jid" -t all -o %T 2>/dev/null) && [ -n "$states" ] &&
       ! grep -qE 'PENDING|RUNNING|CONFIGURING|COMPLETING|SUSPENDED|REQUEUED' <<<"$states"; then
      return 0
    fi
    sleep 0.5
  done
  return 1
}
count_outputs() { find "$W/out" -maxdepth 1 -name '*_day*.nc' | wc -l; }
count_tmp() { find "$W/out" -maxdepth 1 -name '.*tmp*' | wc -l; }

# 1. First submission; task 2 is cancelled once it has finished its first file.
JID=$(sbatch --parsable --array=0-3 --output="$W/logs/first_%a.out" "$W/job.sh")
cancelled=no
for _ in $(seq 1 600); do
  if grep -q -- ' -> ' "$W/logs/first_2.out" 2>/dev/null; then
    scancel "${JID}_2" && cancelled=yes
    break
  fi
  sleep 0.1
done
wait_array "$JID" 300 && ok "first array $JID finished" || bad "first array $JID did not finish"
[ $cancelled = yes ] && ok "task 2 cancelled part-way" || bad "task 2 was not cancelled part-way"
got=$(count_outputs)
if [ "$got" -lt "$n" ] && [ "$got" -ge 9 ]; then ok "$got of $n outputs after the cancelled run"; else bad "$got of $n outputs after the cancelled run"; fi
[ "$(count_tmp)" = 0 ] && ok "no temporary files left" || bad "temporary files left: $(find "$W/out" -name '.*tmp*')"
grep -q '"status":"interrupted"' "$W/out/manifest.jsonl" && ok "manifest records the interrupted file" \
  || bad "manifest has no interrupted record"
for f in "$W"/out/*_day*.nc; do
  ncdump -h "$f" >/dev/null 2>&1 || bad "$f is not a valid netCDF file"
done
sha256sum "$W"/out/*_day*.nc > "$W/first.sha256"

# 2. Second submission of the same array: resumes and completes the set.
if sbatch --wait --quiet --array=0-3 --output="$W/logs/second_%a.out" "$W/job.sh"; then
  ok "second array exited 0"
else bad "second array exited non-zero"; fi
got=$(count_outputs)
[ "$got" = "$n" ] && ok "all $n outputs present after resume" || bad "$got of $n outputs after resume"
bad_out=0
for f in "$W"/out/*_day*.nc; do
  "$REPO/bin/warmrain" lint --ours "$f" >/dev/null 2>&1 || { bad "lint failed on $f"; bad_out=1; }
done
[ $bad_out = 0 ] && ok "every output passes the CF lint"
sha256sum --quiet -c "$W/first.sha256" && ok "outputs of the first run were kept (skipped, not rewritten)" \
  || bad "outputs of the first run changed"
sha256sum --quiet -c "$W/inputs.sha256" && ok "inputs unchanged" || bad "inputs changed"
python3 - "$W/out/manifest.jsonl" "$n" <<'PY' && ok "manifest: every input done exactly once, the rest skipped" || bad "manifest check"
import json, sys, collections
recs = [json.loads(l) for l in open(sys.argv[1])]
n = int(sys.argv[2])
done = collections.Counter(r["input"] for r in recs if r["status"] == "done")
skipped = collections.Counter(r["input"] for r in recs if r["status"] == "skipped")
assert len(done) == n and all(c == 1 for c in done.values()), done
assert len(skipped) >= n - 3 - 1, skipped
assert all(r["columns"] > 0 for r in recs if r["status"] == "done")
PY
[ "$(count_tmp)" = 0 ] && ok "no temporary files after resume" || bad "temporary files after resume"

# 3. The README's job-array script, exactly as printed, in a fresh folder: only the
#    array size is given on the command line (it overrides the script's #SBATCH line).
R=$W/readme
mkdir -p "$R"
awk '/^A ready job-array script/ {f=1} f && /^```bash$/ {g=1; next} g && /^```$/ {exit} g {print}' README.md > "$R/archive.sbatch"
if grep -q '^srun warmrain process' "$R/archive.sbatch"; then ok "README job script extracted"; else bad "README job script not found"; fi
( cd "$R" && ls "$W"/in/*/*.nc > files.txt &&
  PATH="$REPO/bin:$PATH" sbatch --wait --quiet --array=0-2 archive.sbatch ) \
  && ok "README job script exited 0" || bad "README job script failed: $(cat "$R"/warmrain_*.out 2>/dev/null | tail -5)"
got=$(find "$R/results" -maxdepth 1 -name '*_warmrain.nc' 2>/dev/null | wc -l)
[ "$got" = "$n" ] && ok "README job script wrote all $n outputs into results/" || bad "README job script wrote $got of $n outputs"
[ "$(grep -c '"status":"done"' "$R/results/manifest.jsonl" 2>/dev/null)" = "$n" ] \
  && ok "README job script's manifest has $n done records" || bad "README job script's manifest"

trap - EXIT
bash .ci/slurm/stop-local-slurm.sh >/dev/null 2>&1 || true
rm -rf "$W"
echo "slurm e2e: $pass passed, $fail failed"
[ "$fail" = 0 ]
