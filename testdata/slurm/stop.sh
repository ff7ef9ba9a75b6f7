#!/usr/bin/env bash
# testdata/slurm/stop.sh: stop the test cluster started by start.sh, by the
# pid files in $CLINAL_SLURM_DIR (default /tmp/clinal-slurm): slurmd, then
# slurmctld, then munged if start.sh started it. Each daemon gets SIGTERM,
# then SIGKILL after 10 s. With --purge the state directory is deleted too.
set -uo pipefail

DIR=${CLINAL_SLURM_DIR:-/tmp/clinal-slurm}
purge=0
for a in "$@"; do
  case $a in
  --purge) purge=1 ;;
  *)
    echo "usage: stop.sh [--purge]" >&2
    exit 2
    ;;
  esac
done

# running PID: the process exists and is not a zombie (a daemon's parent in
# a container may never reap it).
running() {
  kill -0 "$1" 2>/dev/null && ! grep -q '^State:[[:space:]]*Z' "/proc/$1/status" 2>/dev/null
}

stop_pidfile() {
  local name=$1 pf=$2 pid i
  [[ -f $pf ]] || return 0
  pid=$(cat "$pf" 2>/dev/null)
  if [[ ! $pid =~ ^[0-9]+$ ]] || ! running "$pid"; then
    rm -f "$pf"
    return 0
  fi
  kill -TERM "$pid" 2>/dev/null
  for ((i = 0; i < 50; i++)); do
    running "$pid" || break
    sleep 0.2
  done
  if running "$pid"; then
    echo "slurm-stop: $name (pid $pid) ignored SIGTERM; sending SIGKILL" >&2
    kill -KILL "$pid" 2>/dev/null
  fi
  rm -f "$pf"
  echo "slurm-stop: stopped $name (pid $pid)" >&2
}

stop_pidfile slurmd "$DIR/slurmd.pid"
stop_pidfile slurmctld "$DIR/slurmctld.pid"
stop_pidfile munged "$DIR/munged.pid"
if ((purge)); then
  rm -rf "$DIR"
  echo "slurm-stop: removed $DIR" >&2
fi
exit 0
