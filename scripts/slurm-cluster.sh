#!/usr/bin/env bash
# A single-node Slurm cluster on this machine, for testing `noblescope sweep --slurm` for real:
#   scripts/slurm-cluster.sh start   installs Debian's slurm-wlm and munge if missing, writes a
#                                    minimal slurm.conf naming this host as controller and only
#                                    node, starts munged (as the munge user), slurmctld and slurmd
#                                    (as root), and waits for the node to be idle
#   scripts/slurm-cluster.sh stop    stops the daemons this script started
# Needs root. State lives in /tmp/noblescope-slurm.
set -euo pipefail
state=/tmp/noblescope-slurm
conf=/etc/slurm/slurm.conf

start() {
    if ! command -v slurmctld >/dev/null || ! command -v munged >/dev/null; then
        apt-get update -qq
        DEBIAN_FRONTEND=noninteractive apt-get install -y -qq slurm-wlm munge >/dev/null
    fi
    mkdir -p "$state"/{spool,ctld,log} /run/munge /var/log/munge /var/lib/munge /etc/munge
    chown munge:munge /run/munge /var/log/munge /var/lib/munge /etc/munge
    if [ ! -s /etc/munge/munge.key ]; then
        mungekey --create --keyfile=/etc/munge/munge.key
    fi
    chown munge:munge /etc/munge/munge.key
    chmod 0400 /etc/munge/munge.key
    if ! pgrep -x munged >/dev/null; then
        runuser -u munge -- /usr/sbin/munged
        touch "$state/started-munged"
    fi
    local host cpus
    host=$(hostname -s)
    cpus=$(nproc)
    if [ -f "$conf" ] && ! grep -q "noblescope-ci" "$conf"; then
        cp "$conf" "$state/slurm.conf.before"
    fi
    cat > "$conf" <<CONF
# Written by noblescope's scripts/slurm-cluster.sh: one machine as controller and only node.
ClusterName=noblescope-ci
SlurmctldHost=$host
SlurmUser=root
AuthType=auth/munge
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
SelectType=select/cons_tres
SelectTypeParameters=CR_Core
SchedulerType=sched/backfill
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
MpiDefault=none
ReturnToService=2
SlurmctldPidFile=$state/slurmctld.pid
SlurmdPidFile=$state/slurmd.pid
SlurmdSpoolDir=$state/spool
StateSaveLocation=$state/ctld
SlurmctldLogFile=$state/log/slurmctld.log
SlurmdLogFile=$state/log/slurmd.log
NodeName=$host CPUs=$cpus State=UNKNOWN
PartitionName=ci Nodes=$host Default=YES MaxTime=INFINITE State=UP
CONF
    slurmctld
    slurmd
    touch "$state/started-slurm"
    for _ in $(seq 60); do
        if sinfo -h -o '%T' 2>/dev/null | grep -qE '^(idle|mixed|allocated)'; then
            echo "slurm: node $host up ($(sinfo -h -o '%T %c'))"
            return 0
        fi
        sleep 1
    done
    echo "slurm: the node did not come up; logs:" >&2
    tail -n 30 "$state"/log/*.log >&2 || true
    return 1
}

stop() {
    if [ -f "$state/started-slurm" ]; then
        scontrol shutdown >/dev/null 2>&1 || true
        for _ in $(seq 20); do
            pgrep -x slurmctld >/dev/null || pgrep -x slurmd >/dev/null || break
            sleep 0.5
        done
        pkill -x slurmd 2>/dev/null || true
        pkill -x slurmctld 2>/dev/null || true
        rm -f "$state/started-slurm"
    fi
    if [ -f "$state/started-munged" ]; then
        pkill -x munged 2>/dev/null || true
        rm -f "$state/started-munged"
    fi
    if [ -f "$state/slurm.conf.before" ]; then
        mv "$state/slurm.conf.before" "$conf"
    elif grep -q "noblescope-ci" "$conf" 2>/dev/null; then
        rm -f "$conf"
    fi
}

case "${1:-}" in
    start) start ;;
    stop) stop ;;
    *) echo "usage: $0 start|stop" >&2; exit 2 ;;
esac
