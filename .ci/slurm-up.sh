#!/usr/bin/env bash
# Starts a one-node Slurm cluster on this machine, as root and without
# systemd, for the tests of `tidemark run --slurm` (Debian's slurmctld,
# slurmd, slurm-client and munge). Stop it with .ci/slurm-down.sh.
#
# The daemons keep their state, logs and pid files in $TIDEMARK_SLURM_DIR
# (default /tmp/tidemark-slurm); the configuration goes to
# /etc/slurm/slurm.conf, which is refused if it exists and was not
# written by this script.
set -euo pipefail
dir="${TIDEMARK_SLURM_DIR:-/tmp/tidemark-slurm}"
conf=/etc/slurm/slurm.conf
marker="# written by tidemark's .ci/slurm-up.sh"

if [ "$(id -u)" != 0 ]; then
	echo "slurm-up: expected to run as root (the daemons run as root here), found uid $(id -u)" >&2
	exit 2
fi
for cmd in munged slurmctld slurmd sbatch; do
	if ! command -v "$cmd" >/dev/null 2>&1; then
		echo "slurm-up: $cmd is not installed (apt-get install slurmctld slurmd slurm-client munge)" >&2
		exit 2
	fi
done
if [ -e "$conf" ] && ! grep -qF "$marker" "$conf"; then
	echo "slurm-up: $conf exists and was not written by this script; not touching it" >&2
	exit 2
fi

mkdir -p "$dir/state" "$dir/spool"
cpus="$(nproc)"
# RealMemory: the default of 1 MB refuses every --mem; give Slurm 80% of RAM.
mem="$(awk '/MemTotal/ {printf "%d", $2 / 1024 * 0.8}' /proc/meminfo)"
mkdir -p /etc/slurm
cat >"$conf" <<CONF
$marker
ClusterName=tidemark-ci
SlurmctldHost=localhost
SlurmUser=root
SlurmdUser=root
AuthType=auth/munge
StateSaveLocation=$dir/state
SlurmdSpoolDir=$dir/spool
SlurmctldPidFile=$dir/slurmctld.pid
SlurmdPidFile=$dir/slurmd.pid
SlurmctldLogFile=$dir/slurmctld.log
SlurmdLogFile=$dir/slurmd.log
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
SelectType=select/cons_tres
SelectTypeParameters=CR_Core_Memory
SchedulerParameters=batch_sched_delay=0,sched_min_interval=0
MpiDefault=none
ReturnToService=2
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
JobCompType=jobcomp/filetxt
JobCompLoc=$dir/jobcomp.txt
NodeName=localhost CPUs=$cpus RealMemory=$mem State=UNKNOWN
PartitionName=local Nodes=localhost Default=YES MaxTime=INFINITE State=UP
CONF

# munge: the package's own start-up is blocked without systemd, so run
# munged as its user with its runtime folder made by hand.
mkdir -p /run/munge
chown munge:munge /run/munge
chmod 0755 /run/munge
# $dir/pidfiles lists the daemons this script started, the ones
# slurm-down.sh stops (a munged that was already running is left alone).
: >"$dir/pidfiles"
if [ ! -e /run/munge/munged.pid ] || ! kill -0 "$(cat /run/munge/munged.pid)" 2>/dev/null; then
	runuser -u munge -- /usr/sbin/munged
	echo /run/munge/munged.pid >>"$dir/pidfiles"
fi
# -c: start with a clean state; -N: the node name of slurm.conf, whatever
# the host is called.
slurmctld -c
echo "$dir/slurmctld.pid" >>"$dir/pidfiles"
slurmd -N localhost
echo "$dir/slurmd.pid" >>"$dir/pidfiles"
for _ in $(seq 1 50); do
	if sinfo -h -o %T 2>/dev/null | grep -qE '^(idle|mixed|allocated)'; then
		echo "slurm-up: one-node cluster up ($cpus CPUs, ${mem} MB); state in $dir"
		exit 0
	fi
	sleep 0.2
done
echo "slurm-up: the cluster did not answer within 10 s; see $dir/slurmctld.log and $dir/slurmd.log" >&2
exit 1
