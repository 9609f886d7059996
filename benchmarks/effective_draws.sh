#!/usr/bin/env bash
# Effective draws per CPU second of each kernel: bulk ESS (planmill diagnose, docs/diagnostics.md)
# of gov seats for party A and of cut edges, over the CPU seconds (user + sys) of `planmill run`,
# with the run's no_cut share. Two states: the kernel benchmark state (synth 10,000 units,
# 100 districts, seed 7) and a two-city state (synth 2,000 units, 20 districts, seed 5,
# --cities 2), both at ±5%.
#   benchmarks/effective_draws.sh PLANMILL [SCALE] [KERNELS]
# SCALE multiplies every run's steps (default 1); KERNELS defaults to "flip recombination
# merge-split". Extra [sampler] lines for every run: env SAMPLER_EXTRA (e.g.
# SAMPLER_EXTRA='balanced_cut_bound = 199'). Prints one tab-separated row per state and kernel.
set -euo pipefail
bin=$(realpath "$1")
scale=${2:-1}
kernels=${3:-"flip recombination merge-split"}
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT

"$bin" synth --units 10000 --districts 100 --seed 7 --out "$work/bench" >/dev/null
"$bin" synth --units 2000 --districts 20 --seed 5 --cities 2 --out "$work/cities" >/dev/null

steps_of() {  # steps per chain by state and kernel, before SCALE
  case "$1/$2" in
    bench/flip) echo 4000000 ;; bench/recombination) echo 200000 ;; bench/merge-split) echo 600000 ;;
    cities/flip) echo 4000000 ;; cities/recombination) echo 200000 ;; cities/merge-split) echo 600000 ;;
  esac
}

printf 'state\tkernel\tsteps/chain\tcpu_s\tno_cut\tess_seats\tess_cut\tess_seats/cpu_s\tess_cut/cpu_s\n'
for state in bench cities; do
  for kernel in $kernels; do
    steps=$(( $(steps_of "$state" "$kernel") * scale ))
    dir="$work/$state-$kernel"
    mkdir -p "$dir"
    cp "$work/$state/job.toml" "$dir/job.toml"
    sed -i "s|\"units.csv\"|\"$work/$state/units.csv\"|; s|\"adjacency.csv\"|\"$work/$state/adjacency.csv\"|; /^geometry/d" "$dir/job.toml"
    cat >> "$dir/job.toml" <<JOB
[sampler]
kernel = "$kernel"
chains = 2
steps = $steps
record_every = $(( steps / 1000 ))
seed = 11
gamma = 1.0
beta = 0.0
${SAMPLER_EXTRA:-}
JOB
    /usr/bin/time -f "%U %S" -o "$dir/time" "$bin" run "$dir/job.toml" --output "$dir/run" --quiet >/dev/null
    cpu=$(awk '{print $1 + $2}' "$dir/time")
    "$bin" diagnose "$dir/run" >"$dir/diag" || true
    ess_seats=$(awk '$2 == "election.gov.seats.A" {print $4}' "$dir/diag")
    ess_cut=$(awk '$2 == "compactness.cut_edges" {print $4}' "$dir/diag")
    no_cut=$(python3 -c "
import json, sys
c = [x['counters'] for x in json.load(open('$dir/run/run-state.json'))['chains']]
print('%.4f' % (sum(x['no_cut'] for x in c) / sum(x['steps'] for x in c)))")
    python3 -c "
s, c, cpu = float('$ess_seats'), float('$ess_cut'), float('$cpu')
print('$state\t$kernel\t$steps\t%.1f\t$no_cut\t%.0f\t%.0f\t%.2f\t%.2f' % (cpu, s, c, s / cpu, c / cpu))"
  done
done
