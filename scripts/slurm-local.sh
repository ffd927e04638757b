#!/usr/bin/env bash
# A single-node Slurm on this machine, for CI and for trying `--engine slurm`
# by hand (Debian 12: slurm-wlm 22.05 and munge; run as root).
#
#   scripts/slurm-local.sh start   install what is missing, configure, start munged, slurmctld, slurmd
#   scripts/slurm-local.sh stop    stop them by the process ids they started with, remove what start
#                                  wrote or installed, put back any configuration it moved aside
#
# No accounting storage (so no sacct): job state comes from squeue and scontrol.
# Everything start changes is recorded under $SHEAF_SLURM_STATE (default
# /tmp/sheaf-slurm-local), so stop can leave the machine as it was found.
set -euo pipefail
state=${SHEAF_SLURM_STATE:-/tmp/sheaf-slurm-local}
export DEBIAN_FRONTEND=noninteractive

say() { echo "slurm-local: $*" >&2; }

start() {
  if [ "$(id -u)" != 0 ]; then say "needs root (it installs packages and starts daemons)"; exit 1; fi
  if [ -e "$state/started" ]; then say "already started (state in $state); run stop first"; exit 1; fi
  if pgrep -x slurmctld > /dev/null || pgrep -x slurmd > /dev/null; then say "a Slurm already runs on this machine: use it, or stop it first"; exit 1; fi
  mkdir -p "$state"
  : > "$state/created"   # files and folders start made, removed by stop
  : > "$state/moved"     # files start moved aside, put back by stop

  # Packages: install what is missing, without letting their scripts start services.
  local missing=()
  for p in slurm-wlm munge; do dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q 'install ok installed' || missing+=("$p"); done
  if [ ${#missing[@]} -gt 0 ]; then
    dpkg-query -W -f='${Package}\n' | sort > "$state/packages-before"
    if [ ! -e /usr/sbin/policy-rc.d ]; then
      printf '#!/bin/sh\nexit 101\n' > /usr/sbin/policy-rc.d && chmod +x /usr/sbin/policy-rc.d
      echo /usr/sbin/policy-rc.d >> "$state/created"
    fi
    say "installing ${missing[*]}"
    apt-get update -qq && apt-get install -y -qq --no-install-recommends "${missing[@]}" > "$state/apt.log" 2>&1 || { say "apt-get failed (see $state/apt.log)"; exit 1; }
    if grep -qx /usr/sbin/policy-rc.d "$state/created"; then rm -f /usr/sbin/policy-rc.d; sed -i '\#^/usr/sbin/policy-rc.d$#d' "$state/created"; fi
    dpkg-query -W -f='${Package}\n' | sort > "$state/packages-after"
    comm -13 "$state/packages-before" "$state/packages-after" > "$state/installed"
  fi

  local host; host=$(hostname)
  local mem; mem=$(awk '/MemTotal/ { print int($2 / 1024 * 0.9) }' /proc/meminfo)
  local cpus; cpus=$(nproc)
  if [ ! -e /etc/slurm ]; then mkdir -p /etc/slurm; echo /etc/slurm >> "$state/created"; fi
  if [ -e /etc/slurm/slurm.conf ]; then mv /etc/slurm/slurm.conf "$state/slurm.conf.before"; echo /etc/slurm/slurm.conf >> "$state/moved"; fi
  cat > /etc/slurm/slurm.conf <<EOF
# Written by sheaf's scripts/slurm-local.sh (a single-node Slurm for CI); removed by its stop.
ClusterName=sheaf-local
SlurmctldHost=$host
SlurmUser=root
SlurmdUser=root
AuthType=auth/munge
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
SelectType=select/cons_tres
SelectTypeParameters=CR_Core
ReturnToService=2
StateSaveLocation=/var/spool/slurmctld
SlurmdSpoolDir=/var/spool/slurmd
SlurmctldPidFile=$state/slurmctld.pid
SlurmdPidFile=$state/slurmd.pid
SlurmctldLogFile=$state/slurmctld.log
SlurmdLogFile=$state/slurmd.log
NodeName=$host CPUs=$cpus RealMemory=$mem State=UNKNOWN
PartitionName=main Nodes=$host Default=YES MaxTime=INFINITE State=UP
EOF
  echo /etc/slurm/slurm.conf >> "$state/created"
  for d in /var/spool/slurmctld /var/spool/slurmd; do
    if [ ! -e "$d" ]; then mkdir -p "$d"; echo "$d" >> "$state/created"; fi
  done

  # munge: a key if there is none, its run folder, the daemon as user munge.
  if [ ! -e /etc/munge/munge.key ]; then
    mkdir -p /etc/munge
    dd if=/dev/urandom of=/etc/munge/munge.key bs=1024 count=1 status=none
    chown munge:munge /etc/munge/munge.key && chmod 400 /etc/munge/munge.key
    echo /etc/munge/munge.key >> "$state/created"
  fi
  if [ ! -e /run/munge ]; then mkdir -p /run/munge; echo /run/munge >> "$state/created"; fi
  chown munge:munge /run/munge
  if munge -n 2>/dev/null | unmunge > /dev/null 2>&1; then
    say "a munged already runs here: using it (stop leaves it running)"
  else
    su -s /bin/sh munge -c /usr/sbin/munged
    for _ in $(seq 50); do [ -s /run/munge/munged.pid ] && break; sleep 0.1; done
    cp /run/munge/munged.pid "$state/munged.pid"
    munge -n | unmunge > /dev/null || { say "munge does not work (munge -n | unmunge failed)"; exit 1; }
  fi

  /usr/sbin/slurmctld
  /usr/sbin/slurmd
  touch "$state/started"
  for _ in $(seq 60); do
    if sinfo -h -o '%a %t' 2>/dev/null | grep -q '^up idle'; then
      say "up: $(sinfo -h -o 'partition %P, %D node(s), %c CPUs each, %t')"
      return 0
    fi
    sleep 1
  done
  say "the node did not become idle within 60 s; sinfo says: $(sinfo 2>&1 | tr '\n' ' ')"
  exit 1
}

stop_pid() { # NAME PIDFILE: TERM, wait, then KILL
  local name=$1 file=$2 pid
  [ -s "$file" ] || return 0
  pid=$(cat "$file")
  if kill -0 "$pid" 2>/dev/null; then
    kill "$pid" 2>/dev/null || true
    for _ in $(seq 100); do kill -0 "$pid" 2>/dev/null || break; sleep 0.1; done
    if kill -0 "$pid" 2>/dev/null; then say "$name ($pid) did not stop: killing it"; kill -9 "$pid" 2>/dev/null || true; fi
  fi
}

stop() {
  if [ ! -d "$state" ]; then say "nothing to stop (no $state)"; return 0; fi
  # Daemons, by the process ids they started with (slurmd's and slurmctld's own pid files, munged's copied).
  stop_pid slurmd "$state/slurmd.pid"
  stop_pid slurmctld "$state/slurmctld.pid"
  stop_pid munged "$state/munged.pid"
  # What start wrote, newest first; what it moved aside, back.
  if [ -e "$state/created" ]; then
    tac "$state/created" | while read -r f; do [ -n "$f" ] && rm -rf -- "$f"; done
  fi
  if [ -e "$state/moved" ] && grep -qx /etc/slurm/slurm.conf "$state/moved"; then mv "$state/slurm.conf.before" /etc/slurm/slurm.conf; fi
  # Packages start installed (and only those), purged.
  if [ -s "$state/installed" ] && [ "${SHEAF_SLURM_KEEP_PACKAGES:-0}" != 1 ]; then
    say "removing the packages start installed ($(wc -l < "$state/installed"))"
    xargs apt-get purge -y -qq < "$state/installed" > "$state/apt-purge.log" 2>&1 || say "apt-get purge failed (see $state/apt-purge.log)"
  fi
  rm -rf "$state"
  say "stopped"
}

case "${1:-}" in
  start) start ;;
  stop) stop ;;
  *) echo "usage: $0 start|stop" >&2; exit 1 ;;
esac
