#!/usr/bin/env bash
# Recombination proposals per second of planmill against a floor kernel: a minimal recombination
# loop with no rules and no recording (the team's recom_floor.cpp, outside this repository; this
# comparison is optional and skipped when the file is absent). Both run on the same graph (synth
# 10,000 units, 100 districts, seed 7), from the same seed plan, at the same tolerance (±5%), one
# chain / one run each, on one core.
#   benchmarks/recom_vs_floor.sh PLANMILL [STEPS] [FLOOR.cpp] [RUNS]
# STEPS defaults to 200000, FLOOR.cpp to ../shared/bench/recom_floor.cpp beside the checkout, RUNS (alternating
# pairs) to 3. Each rate is taken over the steps alone, in CPU time (user + sys, so a shared
# machine slows both alike): the CPU seconds of a run of STEPS minus those of a run of STEPS/10
# (same input otherwise), so map loading and start-up cancel. Prints one row per run and the
# ratio of the medians.
set -euo pipefail
bin=$(realpath "$1")
steps=${2:-200000}
floor_src=${3:-"$(dirname "$0")/../../shared/bench/recom_floor.cpp"}
runs=${4:-3}
floor_src=$(realpath -m "$floor_src")
if [ ! -f "$floor_src" ]; then
  echo "recom_vs_floor: no floor source at $floor_src; nothing to compare (optional benchmark)" >&2
  exit 0
fi
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
export OMPI_ALLOW_RUN_AS_ROOT=1 OMPI_ALLOW_RUN_AS_ROOT_CONFIRM=1

g++ -O3 -o "$work/floor" "$floor_src"
"$bin" synth --units 10000 --districts 100 --seed 7 --out "$work/state" >/dev/null

write_job() {  # write_job DIR STEPS START
  mkdir -p "$1"
  sed "s|\"units.csv\"|\"$work/state/units.csv\"|; s|\"adjacency.csv\"|\"$work/state/adjacency.csv\"|; /^geometry/d; /^start/d" \
    "$work/state/job.toml" >"$1/job.toml"
  sed -i "/^\[districts\]/a start = \"$3\"\nstarts = \"given\"" "$1/job.toml"
  cat >>"$1/job.toml" <<JOB
[sampler]
kernel = "recombination"
chains = 1
steps = $2
record_every = $2
seed = 11
[measures]
elections = []
groups = []
county_splits = false
municipality_splits = false
JOB
}

# The seed plan: the first record of a short run from a random start (1 step from planmill's seed
# plan), exported as unit,district; both kernels start from it.
mkdir -p "$work/seed"
sed "s|\"units.csv\"|\"$work/state/units.csv\"|; s|\"adjacency.csv\"|\"$work/state/adjacency.csv\"|; /^geometry/d" \
  "$work/state/job.toml" >"$work/seed/job.toml"
printf '[sampler]\nkernel = "recombination"\nchains = 1\nsteps = 1\nrecord_every = 1\nseed = 3\n' >>"$work/seed/job.toml"
"$bin" run "$work/seed/job.toml" --output "$work/seed/run" --quiet >/dev/null || [ $? -eq 3 ]
"$bin" export "$work/seed/run" --out "$work/seed/out" --plans 0:0 >/dev/null
plan="$work/seed/out/plans/chain-0-record-0.csv"
popcol=$(awk -F' *= *' '$1 == "population" {gsub(/"/, "", $2); print $2; exit}' "$work/state/job.toml")

write_job "$work/long" "$steps" "$plan"
write_job "$work/short" "$((steps / 10))" "$plan"
cpu_of() {  # user + sys seconds of one planmill run of the job in $1
  rm -rf "$1/run"
  /usr/bin/time -f "%U %S" -o "$1/time" "$bin" run "$1/job.toml" --output "$1/run" --quiet >/dev/null || [ $? -eq 3 ]
  awk '{print $1 + $2}' "$1/time"
}

floor_cpu() {  # user + sys seconds of one floor run of $1 steps
  /usr/bin/time -f "%U %S" -o "$work/floor.time" "$work/floor" "$1" "$work/state/adjacency.csv" "$plan" \
    "$work/state/units.csv" "$popcol" 0.05 >/dev/null
  awk '{print $1 + $2}' "$work/floor.time"
}

printf 'run\tfloor_proposals/s\tplanmill_proposals/s\tratio\n'
: >"$work/rates"
for r in $(seq 1 "$runs"); do
  floor_long=$(floor_cpu "$steps")
  floor_short=$(floor_cpu "$((steps / 10))")
  floor_rate=$(python3 -c "print('%.0f' % (0.9 * $steps / ($floor_long - $floor_short)))")
  long=$(cpu_of "$work/long")
  short=$(cpu_of "$work/short")
  ours=$(python3 -c "print('%.0f' % (0.9 * $steps / ($long - $short)))")
  printf '%s\t%s\t%s\t%s\n' "$r" "$floor_rate" "$ours" "$(python3 -c "print('%.2f' % ($ours / $floor_rate))")"
  echo "$floor_rate $ours" >>"$work/rates"
done
python3 - "$work/rates" <<'PY'
import statistics, sys
rows = [tuple(map(float, l.split())) for l in open(sys.argv[1])]
f = statistics.median(r[0] for r in rows); o = statistics.median(r[1] for r in rows)
print('median\t%.0f\t%.0f\t%.2f' % (f, o, o / f))
PY
echo "load average: $(cut -d' ' -f1-3 /proc/loadavg)"
