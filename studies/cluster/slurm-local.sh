#!/usr/bin/env bash
# A throw-away one-node Slurm cluster on localhost, to try the recipes in
# this folder and for CI. Debian or Ubuntu, run as root.
#
#   slurm-local.sh install   # apt-get install slurm-wlm munge, if missing
#   slurm-local.sh up        # start munged (if not running), slurmctld, slurmd; idempotent
#   slurm-local.sh status    # what runs, and sinfo
#   slurm-local.sh env       # prints: export SLURM_CONF=...   (eval "$(slurm-local.sh env)")
#   slurm-local.sh down      # cancel our jobs, stop the daemons `up` started (by recorded PID)
#
# Everything lives under $SWEEPSTAT_SLURM_BASE (default /tmp/sweepstat-slurm).
# Ports 6817/6818 and /etc/munge are machine-wide: one such cluster per machine.
# Waits are bounded: SWEEPSTAT_SLURM_WAIT seconds (default 30) for the node.
set -euo pipefail

BASE=${SWEEPSTAT_SLURM_BASE:-/tmp/sweepstat-slurm}
CONF=$BASE/etc/slurm.conf
RUN=$BASE/run
WAIT=${SWEEPSTAT_SLURM_WAIT:-30}
export SLURM_CONF=$CONF

say() { printf 'slurm-local: %s\n' "$*" >&2; }
die() { say "$*"; exit 1; }

need_root() {
  [ "$(id -u)" = 0 ] || die "$1 needs root (the daemons run as root here); try: sudo $0 $1"
}

# alive NAME PIDFILE: the PID recorded in PIDFILE runs a program called NAME.
alive() {
  local pid
  [ -s "$2" ] || return 1
  pid=$(cat "$2")
  [ -r "/proc/$pid/comm" ] && [ "$(cat "/proc/$pid/comm")" = "$1" ]
}

# wait_for SECONDS COMMAND...: retry COMMAND every 0.1 s for up to SECONDS.
wait_for() {
  local n=$(($1 * 10)); shift
  for _ in $(seq "$n"); do "$@" && return 0; sleep 0.1; done
  "$@"
}

cmd_install() {
  if command -v slurmctld >/dev/null && command -v slurmd >/dev/null &&
     command -v sbatch >/dev/null && command -v munged >/dev/null; then
    say "slurm-wlm and munge are installed"
    return
  fi
  need_root install
  command -v apt-get >/dev/null || die "no apt-get: install Slurm (slurmctld, slurmd, client tools) and munge by hand"
  export DEBIAN_FRONTEND=noninteractive
  say "installing slurm-wlm and munge"
  apt-get update -qq
  # Images with a policy-rc.d that forbids starting services are fine:
  # `up` starts the daemons itself.
  apt-get install -y -qq slurm-wlm munge >/dev/null
}

write_conf() {
  local host mem hw
  host=$(hostname -s)
  mem=$(awk '/^MemTotal:/ {print int($2 / 1024 * 0.9)}' /proc/meminfo)
  # The layout slurmd detects itself, so that it does not complain that the
  # node's sockets/cores differ from the configuration.
  hw=$(slurmd -C | head -n1 | grep -o 'CPUs=.*ThreadsPerCore=[0-9]*')
  mkdir -p "$BASE/etc" "$BASE/state/ctld" "$BASE/state/d" "$RUN" "$BASE/log"
  cat >"$CONF" <<EOF
# Written by studies/cluster/slurm-local.sh: one node, localhost, no accounting.
ClusterName=sweepstat-local
SlurmctldHost=${host}(127.0.0.1)
SlurmUser=root
SlurmdUser=root
AuthType=auth/munge
CredType=cred/munge
SlurmctldPort=6817
SlurmdPort=6818
StateSaveLocation=$BASE/state/ctld
SlurmdSpoolDir=$BASE/state/d
SlurmctldPidFile=$RUN/slurmctld.pid
SlurmdPidFile=$RUN/slurmd.pid
SlurmctldLogFile=$BASE/log/slurmctld.log
SlurmdLogFile=$BASE/log/slurmd.log
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
SwitchType=switch/none
MpiDefault=none
MailProg=/bin/true
SelectType=select/cons_tres
SelectTypeParameters=CR_Core
SchedulerType=sched/backfill
# Start array tasks at once (the defaults space them about 3 s apart).
SchedulerParameters=batch_sched_delay=0,sched_min_interval=0
# Cancel a job whose afterok dependency can no longer be met, instead of
# leaving it pending for ever.
DependencyParameters=kill_invalid_depend
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
JobCompType=jobcomp/none
ReturnToService=2
NodeName=${host} NodeAddr=127.0.0.1 ${hw} RealMemory=${mem} State=UNKNOWN
PartitionName=local Nodes=ALL Default=YES MaxTime=INFINITE State=UP
EOF
}

node_ready() {
  local st
  st=$(sinfo -h -o '%t' 2>/dev/null) || return 1
  [ "$st" = idle ] || [ "$st" = mix ] || [ "$st" = alloc ]
}

# start NAME COMMAND...: run a daemon that forks and writes its PID file
# $RUN/NAME.pid; keep a copy of the PID as ours.
start() {
  local name=$1; shift
  rm -f "$RUN/$name.pid"
  "$@"
  # The parent returns before the daemon has written its PID file.
  wait_for 5 test -s "$RUN/$name.pid" || die "$name wrote no PID file; see $BASE/log/$name.log"
  cp "$RUN/$name.pid" "$RUN/$name.ours"
}

cmd_up() {
  need_root up
  command -v slurmctld >/dev/null || die "Slurm is not installed: run '$0 install' first"
  if alive slurmctld "$RUN/slurmctld.ours" && alive slurmd "$RUN/slurmd.ours" && node_ready; then
    say "already up (SLURM_CONF=$CONF)"
    return
  fi
  # A half-started cluster of ours: stop what is left, start again.
  cmd_down 2>/dev/null || true
  if pgrep -x slurmctld >/dev/null || pgrep -x slurmd >/dev/null; then
    die "another Slurm daemon runs on this machine (ports 6817/6818 are taken); stop it first"
  fi
  mkdir -p "$RUN"

  # munge: reuse a running munged (the system's); else start one of ours.
  if ! munge -n 2>/dev/null | unmunge >/dev/null 2>&1; then
    if [ ! -s /etc/munge/munge.key ]; then
      mungekey --create --keyfile /etc/munge/munge.key
      chown munge:munge /etc/munge/munge.key
      chmod 0400 /etc/munge/munge.key
    fi
    install -d -o munge -g munge -m 0755 /run/munge
    runuser -u munge -- /usr/sbin/munged
    wait_for 5 sh -c 'munge -n | unmunge >/dev/null 2>&1' || die "munged does not answer"
    wait_for 5 test -s /run/munge/munged.pid || die "munged wrote no PID file"
    cp /run/munge/munged.pid "$RUN/munged.ours"
  fi

  write_conf
  rm -rf "$BASE/state/ctld"/* "$BASE/state/d"/*   # no jobs from an earlier cluster
  start slurmctld slurmctld -f "$CONF"
  start slurmd slurmd -f "$CONF"
  wait_for "$WAIT" node_ready || {
    sinfo -R 2>&1 | sed 's/^/  /' >&2 || true
    die "the node is not ready after ${WAIT} s; logs in $BASE/log"
  }
  say "up: slurmctld $(cat "$RUN/slurmctld.ours"), slurmd $(cat "$RUN/slurmd.ours"); export SLURM_CONF=$CONF"
}

# stop NAME: stop the daemon whose PID we recorded, only if it is still
# that program.
stop() {
  local name=$1 f=$RUN/$1.ours pid
  if alive "$name" "$f"; then
    pid=$(cat "$f")
    kill -TERM "$pid"
    wait_for 10 sh -c "! kill -0 $pid 2>/dev/null" || { say "$name ($pid) did not stop, killing it"; kill -KILL "$pid"; }
  fi
  rm -f "$f"
}

cmd_down() {
  # Jobs first: stopping slurmd leaves running job steps behind.
  if alive slurmctld "$RUN/slurmctld.ours" && squeue -h >/dev/null 2>&1; then
    local jobs
    jobs=$(squeue -h -o '%A' 2>/dev/null | sort -u | tr '\n' ' ')
    if [ -n "${jobs// }" ]; then
      # shellcheck disable=SC2086
      scancel --full $jobs 2>/dev/null || true
      wait_for 10 sh -c '[ -z "$(squeue -h 2>/dev/null)" ]' || say "jobs still listed: $(squeue -h | wc -l)"
    fi
  fi
  stop slurmd
  stop slurmctld
  stop munged
  say "down"
}

cmd_status() {
  local name
  for name in munged slurmctld slurmd; do
    if alive "$name" "$RUN/$name.ours"; then say "$name: running ($(cat "$RUN/$name.ours"))"; else say "$name: not ours or not running"; fi
  done
  sinfo 2>&1 || true
}

case ${1:-} in
  install) cmd_install ;;
  up) cmd_up ;;
  down) need_root down; cmd_down ;;
  status) cmd_status ;;
  env) echo "export SLURM_CONF=$CONF" ;;
  *) echo "usage: $0 install|up|status|env|down" >&2; exit 2 ;;
esac
