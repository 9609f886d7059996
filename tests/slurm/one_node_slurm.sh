# Sourced by the Slurm tests: starts a one-node Slurm (munged, slurmctld, slurmd) of its own in
# the folder $slurm_dir, on ports nobody else listens on, so that it neither needs nor disturbs a
# system Slurm or another test's. slurm_stop stops what it started, by the PIDs it recorded.
# Needs root (slurmd launches jobs as their user) and Debian's slurm-wlm and munge.

slurm_pids=()

slurm_free_port() {  # a TCP port in 20000-59999 that nothing listens on now
  local port
  for _ in $(seq 50); do
    port=$((20000 + RANDOM % 40000))
    ss -Htln "sport = :$port" 2>/dev/null | grep -q . || { echo "$port"; return 0; }
  done
  return 1
}

slurm_stop() {
  local pid
  for ((i = ${#slurm_pids[@]} - 1; i >= 0; i--)); do
    pid=${slurm_pids[i]}
    kill -TERM "$pid" 2>/dev/null || true
  done
  for pid in "${slurm_pids[@]}"; do
    for _ in $(seq 50); do kill -0 "$pid" 2>/dev/null || break; sleep 0.1; done
    kill -KILL "$pid" 2>/dev/null || true
  done
  slurm_pids=()
  [ -n "${slurm_socket_dir:-}" ] && rm -rf "$slurm_socket_dir"
  slurm_socket_dir=
}

# slurm_start CPUS: starts the daemons and waits until the node is idle.
slurm_start() {
  local cpus=$1 host
  host=$(hostname)
  mkdir -p "$slurm_dir"/{munge,state,spool,log,run}
  # munged's socket must sit in folders that all may enter, which a private TMPDIR is not.
  slurm_socket_dir=$(mktemp -d /run/planmill-munge.XXXXXX)
  chmod 711 "$slurm_socket_dir"
  # munged wants its key and folders writable by its user alone; it runs as root here, since the
  # scratch folder's parents (a private TMPDIR) need not be open to the munge user.
  chmod 700 "$slurm_dir/munge"
  dd if=/dev/urandom of="$slurm_dir/munge/munge.key" bs=1024 count=1 status=none
  chmod 400 "$slurm_dir/munge/munge.key"
  /usr/sbin/munged --socket="$slurm_socket_dir/socket" \
    --key-file="$slurm_dir/munge/munge.key" --pid-file="$slurm_dir/munge/munged.pid" \
    --log-file="$slurm_dir/munge/munged.log" --seed-file="$slurm_dir/munge/seed" \
    || { echo "munged did not start:" >&2; cat "$slurm_dir/munge/munged.log" >&2; return 1; }
  for _ in $(seq 50); do [ -s "$slurm_dir/munge/munged.pid" ] && break; sleep 0.1; done
  slurm_pids+=("$(cat "$slurm_dir/munge/munged.pid")")

  local ctld_port slurmd_port
  ctld_port=$(slurm_free_port) && slurmd_port=$(slurm_free_port) || return 1
  export SLURM_CONF=$slurm_dir/slurm.conf
  cat >"$SLURM_CONF" <<CONF
ClusterName=pm$$
SlurmctldHost=$host
SlurmctldPort=$ctld_port
SlurmdPort=$slurmd_port
SlurmUser=root
SlurmdUser=root
AuthType=auth/munge
CredType=cred/munge
AuthInfo=socket=$slurm_socket_dir/socket
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
SelectType=select/cons_tres
SelectTypeParameters=CR_Core
AccountingStorageType=accounting_storage/none
JobCompType=jobcomp/filetxt
JobCompLoc=$slurm_dir/log/jobcomp.txt
JobAcctGatherType=jobacct_gather/none
MailProg=/bin/true
EnforcePartLimits=ALL
MpiDefault=none
ReturnToService=2
StateSaveLocation=$slurm_dir/state
SlurmdSpoolDir=$slurm_dir/spool
SlurmctldLogFile=$slurm_dir/log/slurmctld.log
SlurmdLogFile=$slurm_dir/log/slurmd.log
SlurmctldPidFile=$slurm_dir/run/slurmctld.pid
SlurmdPidFile=$slurm_dir/run/slurmd.pid
SlurmctldTimeout=30
SlurmdTimeout=30
MinJobAge=300
KillWait=10
NodeName=$host NodeAddr=127.0.0.1 CPUs=$cpus RealMemory=1000 State=UNKNOWN
PartitionName=debug Nodes=$host Default=YES MaxTime=INFINITE State=UP
CONF
  setsid /usr/sbin/slurmctld -D -f "$SLURM_CONF" >"$slurm_dir/log/slurmctld.out" 2>&1 &
  slurm_pids+=($!)
  setsid /usr/sbin/slurmd -D -f "$SLURM_CONF" >"$slurm_dir/log/slurmd.out" 2>&1 &
  slurm_pids+=($!)
  for _ in $(seq 100); do
    sinfo -h -o %t 2>/dev/null | grep -qx idle && return 0
    sleep 0.2
  done
  echo "the Slurm node did not come up; its logs:" >&2
  tail -n 20 "$slurm_dir"/log/*.log >&2
  return 1
}

# slurm_wait JOBID SECONDS: waits until the job has left the queue (any end).
slurm_wait() {
  local id=$1 limit=$2 state
  for _ in $(seq $((limit * 5))); do
    state=$(squeue -h -j "$id" -o %T 2>/dev/null || true)
    [ -z "$state" ] && return 0
    sleep 0.2
  done
  echo "job $id still $state after $limit s" >&2
  return 1
}
