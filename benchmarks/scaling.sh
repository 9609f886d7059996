#!/usr/bin/env bash
# Weak and strong scaling of `planmill run` at 1 and 2 ranks, and the unit costs the model of
# docs/performance.md ("Scaling") is built from: per step, per record, per checkpoint, per swap,
# and the bytes a checkpoint sends to rank 0. Wall times of mpiexec, start included; each case
# is run REPEATS times (default 3) and the median kept.
# Usage: benchmarks/scaling.sh PLANMILL_BINARY [REPEATS]
set -euo pipefail
bin=$(readlink -f "$1")
repeats=${2:-3}
work=$(mktemp -d "${TMPDIR:-/tmp}/planmill-scaling.XXXXXX")
trap 'rm -rf "$work"' EXIT
export OMPI_ALLOW_RUN_AS_ROOT=1 OMPI_ALLOW_RUN_AS_ROOT_CONFIRM=1
"$bin" synth --units 2000 --districts 20 --seed 2026 --out "$work/state" >/dev/null
base=$(cat "$work/state/job.toml")

# job NAME SAMPLER [EXTRA]: a job file on the benchmark state.
job() { printf '%s\n[sampler]\n%s\n%s\n' "$base" "$2" "${3:-[output]
checkpoint_seconds = 600}" >"$work/state/$1.toml"; }
# median wall seconds of `mpiexec -n RANKS planmill run JOB`
timed() {
  local ranks=$1 name=$2 times=()
  for r in $(seq "$repeats"); do
    rm -rf "$work/out"
    local t0 t1
    t0=$(date +%s.%N)
    mpiexec --oversubscribe -n "$ranks" "$bin" run "$work/state/$name.toml" --output "$work/out" --quiet >"$work/log" 2>&1 ||
      { echo "planmill run $name failed:" >&2; cat "$work/log" >&2; exit 1; }
    t1=$(date +%s.%N)
    times+=("$(echo "$t1 - $t0" | bc)")
  done
  printf '%s\n' "${times[@]}" | sort -g | sed -n "$(((repeats + 1) / 2))p"
}

steps=40000
ladder_steps=10000
# recomb NAME CHAINS STEPS RECORD_EVERY [OUTPUT]; ladder NAME CHAINS SWAP_EVERY: jobs of the runs.
recomb() {
  job "$1" "kernel = \"recombination\"
chains = $2
steps = $3
burn_in = 0
record_every = $4
seed = 1" "${5:-}"
}
ladder() {
  job "$1" "kernel = \"merge-split\"
chains = $2
steps = $ladder_steps
burn_in = 0
record_every = 100
seed = 1
[tempering]
rungs = 2
hottest_beta = 0.5
swap_every = $3"
}
echo "# recombination, 2,000 units, 20 districts; $steps steps per chain; median of $repeats"
recomb one 1 $steps 100
recomb two 2 $steps 100
recomb two-half 2 $((steps / 2)) 100
t11=$(timed 1 one); t22=$(timed 2 two); t12=$(timed 1 two)
echo "weak   1 chain/1 rank $t11 s; 2 chains/2 ranks $t22 s; efficiency $(echo "scale=3; $t11 / $t22" | bc)"
echo "strong 2 chains on 1 rank $t12 s, on 2 ranks $t22 s; efficiency $(echo "scale=3; $t12 / (2 * $t22)" | bc)"
t0=$(timed 1 two-half)
echo "per step (1 rank, from 2 x $steps - 2 x $((steps / 2)) steps): $(echo "scale=1; ($t12 - $t0) * 1000000 / $steps" | bc) us"

recomb rec-every 1 $steps 1
trec=$(timed 1 rec-every)
echo "per record (every step vs every 100th, 1 rank): $(echo "scale=1; ($trec - $t11) * 1000000 / ($steps - $steps / 100)" | bc) us"

recomb ckpt 2 $steps 100 "[output]
checkpoint_seconds = 1"
tck=$(timed 2 ckpt)
ck=$(python3 -c 'import json,sys; print(json.load(open(sys.argv[1]))["checkpoints"])' "$work/out/run-state.json")
state_bytes=$(stat -c %s "$work/out/run-state.json")
snapshot=$(python3 -c 'import json,sys; s=json.load(open(sys.argv[1])); print(max(len(c["snapshot"]) for c in s["chains"]))' "$work/out/run-state.json")
files=$(ls "$work/out/plans" | wc -l)
echo "per checkpoint (2 ranks, $ck checkpoints vs 1): $(echo "scale=2; ($tck - $t22) * 1000 / ($ck - 1)" | bc) ms; run-state.json $state_bytes bytes for 2 chains; a chain's snapshot $snapshot bytes; $files plan files"

# A ladder of 2 rungs shared by 2 ranks: a swap round every step against every 1,000 steps.
ladder swap1 1 1
ladder swap1000 1 1000
ts1=$(timed 2 swap1); ts1000=$(timed 2 swap1000)
echo "per swap round (a ladder over 2 ranks): $(echo "scale=1; ($ts1 - $ts1000) * 1000000 / ($ladder_steps - $ladder_steps / 1000)" | bc) us"
ladder ladder1 1 10
ladder ladder2 2 10
tl11=$(timed 1 ladder1); tl22=$(timed 2 ladder2); tl12=$(timed 1 ladder2); tl21=$(timed 2 ladder1)
echo "tempered weak   1 ladder/1 rank $tl11 s; 2 ladders/2 ranks $tl22 s; efficiency $(echo "scale=3; $tl11 / $tl22" | bc)"
echo "tempered strong 2 ladders on 1 rank $tl12 s, on 2 ranks $tl22 s; efficiency $(echo "scale=3; $tl12 / (2 * $tl22)" | bc)"
echo "tempered shared 1 ladder on 1 rank $tl11 s, on 2 ranks $tl21 s; efficiency $(echo "scale=3; $tl11 / (2 * $tl21)" | bc)"
t_empty=$( { rm -rf "$work/out"; t0=$(date +%s.%N); mpiexec -n 1 true; t1=$(date +%s.%N); echo "$t1 - $t0" | bc; } )
echo "mpiexec start and end alone: $t_empty s"
