#!/usr/bin/env bash
# testdata/slurm/start.sh: start a real single-node Slurm cluster (Debian's
# slurm-wlm 22.05 with munge) on this machine, for clinal's cluster
# integration tests and benchmarks. Run as root. Idempotent: if the cluster
# of this state directory already answers, it does nothing.
#
#   bash testdata/slurm/start.sh        # start (or check) the cluster
#   bash testdata/slurm/stop.sh         # stop the daemons by their pid files
#   bash testdata/slurm/stop.sh --purge # ... and delete the state directory
#
# Everything lives in $CLINAL_SLURM_DIR (default /tmp/clinal-slurm): the
# configuration, spool and state directories, logs and pid files. The
# configuration is also installed as /etc/slurm/slurm.conf (the client
# commands' default) unless a foreign one is there; in that case export
# SLURM_CONF=$CLINAL_SLURM_DIR/slurm.conf before using sbatch/srun.
#
# Settings that work on these machines (../../shared/references.md is the
# team's note; the facts are repeated here so the script stands alone):
# proctrack/linuxproc and task/none (no cgroups in containers), no
# accounting, batch_sched_delay=0 so a job starts within about a second,
# RealMemory at 90% of what slurmd -C reports. The node declares at least 8
# CPUs (SlurmdParameters=config_overrides) so a 2-core machine can run the
# 4-task test allocation; memory is not enforced (task/none).
#
# On failure it retries from a clean state (daemons stopped, state
# deleted) up to 3 times, then prints the daemons' logs and exits 1.
set -uo pipefail

DIR=${CLINAL_SLURM_DIR:-/tmp/clinal-slurm}
HERE=$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)
MARK="# written by clinal testdata/slurm/start.sh"

log() { printf 'slurm-start: %s\n' "$*" >&2; }

# with_timeout SECONDS CMD...: run CMD, failing if it takes longer.
with_timeout() { timeout --kill-after=5 "$@"; }

# wait_for SECONDS DESCRIPTION CMD...: poll CMD every 0.2 s until it succeeds.
wait_for() {
  local secs=$1 what=$2
  shift 2
  local end=$((SECONDS + secs))
  while ((SECONDS < end)); do
    if "$@" >/dev/null 2>&1; then return 0; fi
    sleep 0.2
  done
  log "timed out after ${secs}s waiting for $what"
  return 1
}

need() {
  local c
  for c in "$@"; do
    if ! command -v "$c" >/dev/null 2>&1; then
      log "missing $c (apt-get install -y --no-install-recommends slurmctld slurmd slurm-client munge)"
      exit 1
    fi
  done
}

munge_ok() { munge -n 2>/dev/null | unmunge >/dev/null 2>&1; }

start_munge() {
  if munge_ok; then return 0; fi
  getent passwd munge >/dev/null || { log "no munge user (is the munge package installed?)"; return 1; }
  install -d -o munge -g munge -m 0755 /run/munge
  install -d -o munge -g munge -m 0700 /var/lib/munge /var/log/munge /etc/munge
  if [[ ! -s /etc/munge/munge.key ]]; then
    log "creating /etc/munge/munge.key"
    dd if=/dev/urandom of=/etc/munge/munge.key bs=128 count=1 status=none || return 1
  fi
  chown munge:munge /etc/munge/munge.key
  chmod 0600 /etc/munge/munge.key
  # A stale pid file or socket of a dead munged makes it refuse to start.
  local pf=/run/munge/munged.pid
  if [[ -f $pf ]] && ! kill -0 "$(cat "$pf")" 2>/dev/null; then
    rm -f "$pf" /run/munge/munge.socket.2 /run/munge/munge.socket.2.lock
  fi
  runuser -u munge -- /usr/sbin/munged || { log "munged failed to start"; return 1; }
  # Record that we started it, so stop.sh stops only what we started.
  cp "$pf" "$DIR/munged.pid" 2>/dev/null || true
  wait_for 20 "munged to answer" munge_ok
}

write_conf() {
  local host cpus realmem mem decl defmem
  host=$(hostname -s)
  cpus=$(nproc)
  realmem=$(slurmd -C 2>/dev/null | sed -n 's/.*RealMemory=\([0-9]*\).*/\1/p' | head -1)
  if [[ -z $realmem ]]; then
    realmem=$(awk '/MemTotal/ {print int($2/1024)}' /proc/meminfo)
  fi
  mem=$((realmem * 9 / 10))
  decl=$((cpus < 8 ? 8 : cpus))
  defmem=$((mem / decl))
  mkdir -p "$DIR/ctld" "$DIR/spool" "$DIR/log"
  cat >"$DIR/slurm.conf.tmp" <<EOF
$MARK
# Single-node test cluster for clinal; see testdata/slurm/start.sh.
ClusterName=clinal
SlurmctldHost=$host
SlurmUser=root
SlurmdUser=root
AuthType=auth/munge
CredType=cred/munge
MpiDefault=none
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
SwitchType=switch/none
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
JobCompType=jobcomp/none
SchedulerType=sched/backfill
SchedulerParameters=batch_sched_delay=0
DependencyParameters=kill_invalid_depend
SelectType=select/cons_tres
SelectTypeParameters=CR_CPU
SlurmdParameters=config_overrides
ReturnToService=2
StateSaveLocation=$DIR/ctld
SlurmdSpoolDir=$DIR/spool
SlurmctldPidFile=$DIR/slurmctld.pid
SlurmdPidFile=$DIR/slurmd.pid
SlurmctldLogFile=$DIR/log/slurmctld.log
SlurmdLogFile=$DIR/log/slurmd.log
SlurmctldDebug=info
SlurmdDebug=info
SlurmctldTimeout=30
SlurmdTimeout=60
InactiveLimit=0
KillWait=5
MinJobAge=600
MessageTimeout=20
DefMemPerCPU=$defmem
NodeName=$host CPUs=$decl RealMemory=$mem State=UNKNOWN
PartitionName=debug Nodes=$host Default=YES MaxTime=INFINITE State=UP
EOF
  mv "$DIR/slurm.conf.tmp" "$DIR/slurm.conf"
  if [[ -w /etc/slurm || ! -e /etc/slurm ]]; then
    mkdir -p /etc/slurm
    if [[ ! -e /etc/slurm/slurm.conf ]] || grep -qxF "$MARK" /etc/slurm/slurm.conf; then
      cp "$DIR/slurm.conf" /etc/slurm/slurm.conf
    else
      log "/etc/slurm/slurm.conf is not ours: export SLURM_CONF=$DIR/slurm.conf to use this cluster"
    fi
  fi
}

# alive PIDFILE: the process of the pid file runs (and is not a zombie left
# unreaped in a container without an init).
alive() {
  local pid
  [[ -f $1 ]] || return 1
  pid=$(cat "$1" 2>/dev/null)
  [[ $pid =~ ^[0-9]+$ ]] && kill -0 "$pid" 2>/dev/null || return 1
  ! grep -q '^State:[[:space:]]*Z' "/proc/$pid/status" 2>/dev/null
}

node_state() { sinfo -h -N -o %T 2>/dev/null | head -1; }

node_idle() {
  case $(node_state) in
  idle | mixed | allocated | completing) return 0 ;;
  esac
  return 1
}

cluster_ok() {
  alive "$DIR/slurmctld.pid" && alive "$DIR/slurmd.pid" &&
    with_timeout 10 scontrol ping 2>/dev/null | grep -q UP &&
    with_timeout 10 scontrol show slurmd >/dev/null 2>&1 && node_idle
}

print_logs() {
  local f
  for f in "$DIR"/log/*.log /var/log/munge/munged.log; do
    [[ -f $f ]] || continue
    printf '\n----- %s (last 60 lines)\n' "$f" >&2
    tail -n 60 "$f" >&2
  done
  printf '\n----- sinfo\n' >&2
  with_timeout 10 sinfo -N -l >&2 2>&1 || true
}

attempt() {
  write_conf || return 1
  start_munge || return 1
  export SLURM_CONF=$DIR/slurm.conf
  if ! alive "$DIR/slurmctld.pid"; then
    # -c: cold start, no state from an earlier cluster of this directory.
    with_timeout 30 slurmctld -c -f "$SLURM_CONF" || { log "slurmctld failed to start"; return 1; }
    wait_for 20 "slurmctld's pid file" alive "$DIR/slurmctld.pid" || return 1
  fi
  wait_for 30 "slurmctld to answer scontrol ping" bash -c 'scontrol ping | grep -q UP' || return 1
  if ! alive "$DIR/slurmd.pid"; then
    with_timeout 30 slurmd -f "$SLURM_CONF" || { log "slurmd failed to start"; return 1; }
    wait_for 20 "slurmd's pid file" alive "$DIR/slurmd.pid" || return 1
  fi
  wait_for 30 "slurmd to register" bash -c '[[ -n $(sinfo -h -N -o %T) ]] && [[ $(sinfo -h -N -o %T) != unknown* ]]' || true
  if ! node_idle; then
    # A node remembered as down (or not responding yet) is put back to work.
    scontrol update NodeName="$(hostname -s)" State=RESUME >/dev/null 2>&1 || true
  fi
  wait_for 40 "the node to become idle" node_idle || return 1
  # End-to-end check: one allocation with a step, as the tests use them.
  local out
  out=$(with_timeout 60 srun --ntasks=2 --time=1 --job-name=clinal-smoke bash -c 'echo $SLURM_PROCID' 2>&1 | sort | tr '\n' ' ')
  if [[ $out != "0 1 " ]]; then
    log "smoke test srun --ntasks=2 printed '$out', want '0 1 '"
    return 1
  fi
  # The daemons that answered must be the ones of this directory (not, say,
  # another cluster on the same ports while ours died at start).
  local d
  for d in slurmctld slurmd; do
    if ! alive "$DIR/$d.pid"; then
      log "$d of $DIR is not running after the start (see $DIR/log/$d.log)"
      return 1
    fi
  done
  return 0
}

main() {
  need munge unmunge munged slurmctld slurmd srun sbatch squeue scontrol sinfo
  if [[ $EUID -ne 0 ]]; then
    log "must run as root (slurmd launches jobs as their users)"
    exit 1
  fi
  mkdir -p "$DIR"
  if [[ -f $DIR/slurm.conf ]] && SLURM_CONF=$DIR/slurm.conf cluster_ok; then
    log "cluster already running (state in $DIR)"
    exit 0
  fi
  local i
  for i in 1 2 3; do
    local t0=$SECONDS
    if attempt; then
      log "cluster up in $((SECONDS - t0)) s: node $(hostname -s), $(sinfo -h -N -o '%c CPUs, %m MB'), state in $DIR"
      exit 0
    fi
    log "attempt $i of 3 failed; logs:"
    print_logs
    if ((i < 3)); then
      log "stopping the daemons and deleting $DIR/{ctld,spool,log} before retrying"
      bash "$HERE/stop.sh" >/dev/null 2>&1 || true
      rm -rf "$DIR/ctld" "$DIR/spool" "$DIR/log"
      sleep $((i * 2))
    fi
  done
  log "FAILED to start the Slurm cluster (state and logs kept in $DIR); stopping what did start"
  bash "$HERE/stop.sh" >&2 || true
  exit 1
}

main "$@"
