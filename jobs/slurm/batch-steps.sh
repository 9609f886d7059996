# Sourced by the Slurm templates in this folder (jobs/slurm/*.sbatch): the steps every batch
# job of a planmill run takes. Read it once; the templates say only what differs.
#
#   pm_run OUT JOB [OPTIONS...]   runs `planmill run JOB --output OUT` under the launcher,
#                                 with --resume when OUT holds a run already, and passes the
#                                 scheduler's warning signal on to the ranks
#   pm_next OUT                   asks `planmill status OUT`: finished -> 0; unfinished -> this
#                                 script is submitted again (the same resources, the same array
#                                 task) and the job ends; damaged or anything else -> that status
#
# Settings (environment, all optional):
#   PLANMILL          the planmill program                               (default: planmill)
#   PLANMILL_LAUNCH   how ranks are started                  (default: srun --mpi=pmix)
#                     Debian's OpenMPI needs --mpi=pmix under srun; "mpiexec" (which
#                     reads the allocation from Slurm) works as well
#   PLANMILL_ROUNDS   most submissions of one run, this one included     (default: 20)
#   PLANMILL_ROUND    which submission this is (set by pm_next)          (default: 1)
#   PLANMILL_NEXT_TIME  time limit of the resubmissions, as sbatch --time takes it
#                     (default: this job's own)
#
# Why SIGUSR2: the templates ask Slurm for `--signal=B:USR2@SECONDS`, a SIGUSR2 to this script
# that many seconds before the time limit. The script passes it to the launcher; srun and OpenMPI's
# mpiexec both pass SIGUSR2 on to every rank, and each rank writes a checkpoint and stops with exit
# status 4. (SIGTERM would do the same in the ranks, but mpiexec answers SIGTERM by killing them a
# second later and exits 1.) If no warning comes, the time limit's own SIGTERM still makes the
# ranks checkpoint when they can do it within Slurm's KillWait; the next submission resumes from
# whatever checkpoint is last.

PLANMILL=${PLANMILL:-planmill}
PLANMILL_LAUNCH=${PLANMILL_LAUNCH:-srun --mpi=pmix}
PLANMILL_ROUNDS=${PLANMILL_ROUNDS:-20}
PLANMILL_ROUND=${PLANMILL_ROUND:-1}

pm_run() {
  local out=$1 job=$2
  shift 2
  local resume=()
  [ -f "$out/run-state.json" ] && resume=(--resume)
  echo "planmill batch: round $PLANMILL_ROUND of at most $PLANMILL_ROUNDS, $out ${resume[*]}"
  # The launcher runs in the background: bash runs a trap only between commands, and `wait`
  # returns as soon as a trapped signal arrives.
  $PLANMILL_LAUNCH "$PLANMILL" run "$job" --output "$out" "${resume[@]}" --quiet "$@" &
  local launcher=$!
  trap 'echo "planmill batch: warning signal, asking the ranks to checkpoint"; kill -USR2 $launcher 2>/dev/null' USR2
  trap 'kill -USR2 $launcher 2>/dev/null' TERM
  local status=0
  wait $launcher || status=$?
  while kill -0 $launcher 2>/dev/null; do  # a trap ended the wait, not the launcher
    status=0
    wait $launcher || status=$?
  done
  trap - USR2 TERM
  echo "planmill batch: planmill run exited $status (4: checkpointed on the signal)"
  return $status
}

pm_next() {
  local out=$1 status=0
  "$PLANMILL" status "$out" || status=$?
  case $status in
    0) echo "planmill batch: $out has finished"; return 0 ;;
    7) ;;
    *) echo "planmill batch: planmill status exited $status; not submitting again" >&2
       return $status ;;
  esac
  if [ "$PLANMILL_ROUND" -ge "$PLANMILL_ROUNDS" ]; then
    echo "planmill batch: $out is unfinished after $PLANMILL_ROUND submissions; giving up" >&2
    return 7
  fi
  # The same request again: this script (as submitted, not Slurm's copy), its task count and time
  # limit, and only this task of an array. --signal comes from the script's #SBATCH lines.
  local script limit
  script=$(scontrol show job "$SLURM_JOB_ID" | sed -n 's/^ *Command=//p' | head -n 1)
  limit=${PLANMILL_NEXT_TIME:-$(squeue -h -j "$SLURM_JOB_ID" -o %l | head -n 1)}
  local again=(--ntasks="$SLURM_NTASKS" --time="$limit" --export=ALL,PLANMILL_ROUND=$((PLANMILL_ROUND + 1)))
  [ -n "${SLURM_ARRAY_TASK_ID:-}" ] && again+=(--array="$SLURM_ARRAY_TASK_ID")
  local id
  id=$(sbatch --parsable "${again[@]}" "$script") || return 1
  echo "planmill batch: $out is unfinished; submitted $script again as job $id"
  return 0
}
