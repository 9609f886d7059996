#!/usr/bin/env bash
# The Slurm templates of jobs/slurm on a real scheduler: Debian's slurm-wlm and munge, a one-node
# Slurm of the test's own (one_node_slurm.sh), tiny jobs on synth's invented state.
#  1. independent-chains.sbatch under srun, with a one-minute time limit the run cannot meet: the
#     warning signal makes it checkpoint (exit 4), it submits itself again with --resume, and the
#     finished run's plans and observables equal, record for record, those of the same job run
#     straight through without Slurm (both exported as CSV and compared byte for byte);
#  2. tempered-ladder.sbatch under mpiexec: a ladder of 2 rungs over 2 tasks finishes in one round;
#  3. pooled-array.sbatch, an array of 2 pieces: distinct seeds, each finished, pooled by the last;
#  4. sweep-array.sbatch, an array of a sweep's 2 settings: each finished, compared by the last.
# The daemons it started are stopped on every way out (trap).
# Usage: slurm_test.sh PLANMILL_BINARY JOBS_SLURM_DIR
set -euo pipefail
bin=$(readlink -f "$1")
templates=$(readlink -f "$2")
here=$(dirname "$(readlink -f "$0")")
fail() { echo "FAIL: $*" >&2; exit 1; }

if [ "$(id -u)" -ne 0 ]; then echo "the Slurm test starts slurmd, which needs root" >&2; exit 1; fi
missing=()
for p in slurm-wlm munge; do
  dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed" || missing+=("$p")
done
if [ ${#missing[@]} -gt 0 ]; then
  DEBIAN_FRONTEND=noninteractive apt-get install -y -qq --no-install-recommends "${missing[@]}" >/dev/null
fi

work=$(mktemp -d "${TMPDIR:-/tmp}/planmill-slurm.XXXXXX")
slurm_dir=$work/slurm
. "$here/one_node_slurm.sh"
cleanup() {
  local status=$?
  slurm_stop
  if [ $status -ne 0 ]; then
    echo "--- batch outputs (kept in $work):" >&2
    tail -n 30 "$work"/*.out >&2 2>/dev/null || true
  else
    rm -rf "$work"
  fi
}
trap cleanup EXIT
export OMPI_ALLOW_RUN_AS_ROOT=1 OMPI_ALLOW_RUN_AS_ROOT_CONFIRM=1
slurm_start 2

"$bin" synth --units 200 --districts 4 --seed 5 --out "$work/state" >/dev/null
base=$(cat "$work/state/job.toml")
# The stopped run must outlast the warning, which comes 15 to 45 s into a one-minute job (Slurm
# looks at time limits every 30 s): steps for about 75 s at the speed measured here and now.
printf '%s\n[sampler]\nchains = 1\nsteps = 100000\nseed = 1\n' "$base" >"$work/state/speed.toml"
t0=$(date +%s%N)
"$bin" run "$work/state/speed.toml" --output "$work/speed" --quiet >/dev/null
t1=$(date +%s%N)
steps=$((100000 * 75 * 1000000000 / (t1 - t0)))
echo "slurm test: $((100000 * 1000000000 / (t1 - t0))) steps/s here; the stopped run takes $steps steps per chain"
printf '%s\n[sampler]\nchains = 2\nsteps = %s\nburn_in = 100\nrecord_every = %s\nseed = 8\n[output]\ncheckpoint_seconds = 600\n' \
  "$base" "$steps" "$((steps / 1000))" >"$work/state/chains.toml"
printf '%s\n[sampler]\nkernel = "flip"\nchains = 1\nsteps = 4000\nburn_in = 200\nrecord_every = 20\nseed = 9\n[tempering]\nrungs = 2\nhottest_beta = 0.5\n[output]\ncheckpoint_seconds = 600\n' \
  "$base" >"$work/state/ladder.toml"
printf '%s\n[sampler]\nchains = 1\nsteps = 2000\nburn_in = 100\nrecord_every = 20\nseed = 30\n[output]\ncheckpoint_seconds = 600\n' \
  "$base" >"$work/state/pieces.toml"
printf '%s\n[sampler]\nchains = 1\nsteps = 1000\nburn_in = 100\nrecord_every = 20\nseed = 40\n[output]\ncheckpoint_seconds = 600\n' \
  "$base" >"$work/state/sweep-base.toml"
printf 'job = "sweep-base.toml"\n[[axis]]\nkey = "rules.population_tolerance"\nvalues = [0.02, 0.05]\n' \
  >"$work/state/sweep.toml"

cd "$work"
common=(--export=ALL,PLANMILL=$bin,PLANMILL_BATCH_STEPS=$templates/batch-steps.sh)
# 1. A run the time limit stops; the warning 45 s before it; the resubmission finishes.
# SBATCH_SIGNAL, not --signal: the resubmissions inherit it (the template's own asks 300 s early).
# PLANMILL_NEXT_TIME: the resubmission may take 10 minutes, so that the test ends.
first=$(PLANMILL_JOB=state/chains.toml PLANMILL_OUT=runs/chains PLANMILL_ROUNDS=4 SBATCH_SIGNAL=B:USR2@45 \
  PLANMILL_NEXT_TIME=10 \
  sbatch --parsable "${common[@]}" --ntasks=2 --time=1 --output="$work/chains-%j.out" \
  "$templates/independent-chains.sbatch")
# 2. and 3. queue behind it (the node has 2 CPUs).
ladder=$(PLANMILL_JOB=state/ladder.toml PLANMILL_OUT=runs/ladder PLANMILL_LAUNCH=mpiexec \
  sbatch --parsable "${common[@]}" --ntasks=2 --time=5 --output="$work/ladder-%j.out" \
  "$templates/tempered-ladder.sbatch")
pieces=$(PLANMILL_JOB=state/pieces.toml PLANMILL_OUT=runs/pieces \
  sbatch --parsable "${common[@]}" --array=0-1 --ntasks=1 --time=5 --output="$work/pieces-%A-%a.out" \
  "$templates/pooled-array.sbatch")
"$bin" sweep plan state/sweep.toml --out runs/sweep >/dev/null || fail "sweep plan failed"
sweep=$(PLANMILL_SWEEP=runs/sweep \
  sbatch --parsable "${common[@]}" --array=0-1 --ntasks=1 --time=5 --output="$work/sweep-%A-%a.out" \
  "$templates/sweep-array.sbatch")


# Every submission has ended once the queue is empty (a resubmission enters before its parent ends).
for _ in $(seq 900); do
  [ -z "$(squeue -h -o %i)" ] && break
  sleep 0.2
done
[ -z "$(squeue -h -o %i)" ] || fail "jobs still queued after the wait: $(squeue -h)"

# The straight run, outside Slurm, once the node is free again.
mpiexec --oversubscribe -n 2 "$bin" run state/chains.toml --output runs/straight --quiet >straight.log 2>&1 ||
  fail "the straight run failed"
status=0
"$bin" status runs/chains >chains-status.txt || status=$?
[ $status -eq 0 ] || fail "planmill status says $status for the resubmitted run: $(cat chains-status.txt)"
sessions=$(python3 -c 'import json,sys; print(len(json.load(open(sys.argv[1]))["sessions"]))' runs/chains/run-state.json)
[ "$sessions" -ge 2 ] || fail "the chain run finished in one submission; it was not stopped by the time limit"
grep -q 'planmill run exited 4' chains-*.out || fail "no submission saw exit status 4 from the stopped run"
grep -q 'submitted .* again as job' chains-*.out || fail "the stopped run did not submit itself again"
grep -q -- '--resume' chains-*.out || fail "no submission resumed"
"$bin" export runs/chains --out export-chains --every 1 --plan-layout wide >/dev/null
"$bin" export runs/straight --out export-straight --every 1 --plan-layout wide >/dev/null
[ "$(wc -l <export-chains/observables.csv)" -gt 100 ] || fail "too few records exported"
cmp export-chains/plans-wide.csv export-straight/plans-wide.csv ||
  fail "the stopped and resubmitted run drew other plans than the straight run"
cmp export-chains/observables.csv export-straight/observables.csv ||
  fail "the stopped and resubmitted run recorded other observables than the straight run"

"$bin" status runs/ladder >/dev/null || fail "the tempered run did not finish: $(cat ladder-*.out)"
grep -q 'rungs\|ladder' runs/ladder/job.toml || fail "the tempered run's job has no ladder"

for i in 0 1; do
  "$bin" status "runs/pieces/piece-$i" >/dev/null || fail "piece $i did not finish"
  grep -q "^seed = $((30 + i))\$" "state/pieces.piece-$i.toml" || fail "piece $i has not its own seed"
done
[ -f runs/pieces/pool/run-state.json ] || fail "the last piece did not pool the pieces: $(cat pieces-*.out)"
seeds=$(python3 -c 'import json,sys; print(" ".join(str(p["seed"]) for p in json.load(open(sys.argv[1]))["pieces"]))' runs/pieces/pool/pool.json)
[ "$seeds" = "30 31" ] || fail "the pool holds pieces with seeds '$seeds', not '30 31'"
"$bin" diagnose runs/pieces/pool --json pool-diagnose.json >/dev/null || [ $? -eq 3 ] || fail "diagnose of the pool failed"
chains=$(python3 -c 'import json,sys; print(len(json.load(open(sys.argv[1]))["chains"]))' pool-diagnose.json)
[ "$chains" -eq 2 ] || fail "diagnose sees $chains chains in the pool of 2 one-chain pieces"
while IFS=, read -r i folder _; do
  "$bin" status "runs/sweep/$folder/run" >/dev/null || fail "sweep setting $i did not finish: $(cat sweep-*.out)"
done < <(tail -n +2 runs/sweep/settings.csv)
[ -f runs/sweep/compare.html ] || fail "the last setting did not compare the sweep: $(cat sweep-*.out)"
compared=$(python3 -c 'import csv,sys; print(" ".join(sorted({r["index"] for r in csv.DictReader(open(sys.argv[1]))})))' runs/sweep/compare.csv)
[ "$compared" = "0 1" ] || fail "the sweep comparison holds settings '$compared', not '0 1'"
echo "slurm test: $sessions submissions for the stopped run; ladder finished; 2 pieces pooled; 2 sweep settings compared"
