#!/usr/bin/env bash
# Start a single-node Slurm cluster on this machine (Debian's slurmctld,
# slurmd and munge packages), for the opt-in array-job test. Needs root.
set -euo pipefail
if ! command -v slurmctld >/dev/null; then
    DEBIAN_FRONTEND=noninteractive apt-get install -y -qq slurmctld slurmd slurm-client munge >/dev/null
fi
host="$(hostname -s)"
cpus="$(nproc)"
mem_mb="$(awk '/MemTotal/ {print int($2 / 1024 * 0.8)}' /proc/meminfo)"
mkdir -p /etc/slurm /var/spool/slurmd /var/spool/slurmctld /var/log/slurm /run/munge
cat > /etc/slurm/slurm.conf <<CONF
ClusterName=tidewater-test
SlurmctldHost=${host}
AuthType=auth/munge
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
SchedulerType=sched/backfill
SelectType=select/cons_tres
SelectTypeParameters=CR_Core
SlurmUser=root
SlurmdUser=root
SlurmctldPidFile=/run/slurmctld.pid
SlurmdPidFile=/run/slurmd.pid
SlurmdSpoolDir=/var/spool/slurmd
StateSaveLocation=/var/spool/slurmctld
SlurmctldLogFile=/var/log/slurm/slurmctld.log
SlurmdLogFile=/var/log/slurm/slurmd.log
ReturnToService=2
MpiDefault=none
NodeName=${host} CPUs=${cpus} RealMemory=${mem_mb} State=UNKNOWN
PartitionName=local Nodes=ALL Default=YES MaxTime=INFINITE State=UP
CONF
if [ ! -s /etc/munge/munge.key ]; then
    mkdir -p /etc/munge
    dd if=/dev/urandom bs=1 count=1024 of=/etc/munge/munge.key 2>/dev/null
fi
chown -R munge:munge /etc/munge /run/munge /var/lib/munge /var/log/munge 2>/dev/null || true
chmod 400 /etc/munge/munge.key
pgrep -x munged >/dev/null || su -s /bin/sh munge -c "munged"
pgrep -x slurmctld >/dev/null || slurmctld
pgrep -x slurmd >/dev/null || slurmd
for _ in $(seq 1 30); do
    if sinfo -h -o '%T' 2>/dev/null | grep -qE 'idle|mixed|allocated'; then
        sinfo
        exit 0
    fi
    scontrol update nodename="${host}" state=resume >/dev/null 2>&1 || true
    sleep 1
done
echo "Slurm did not come up; see /var/log/slurm/" >&2
sinfo || true
exit 1
