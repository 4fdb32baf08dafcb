#!/usr/bin/env bash
# Starts or stops a one-node Slurm cluster on this machine for the end-to-end batch test:
# munged, slurmctld and slurmd, with a minimal configuration written under a state folder.
#
#   cluster.sh start DIR   writes DIR/slurm.conf, starts the daemons, waits until the node is
#                          idle, and prints "export SLURM_CONF=DIR/slurm.conf"
#   cluster.sh stop DIR    stops the daemons it started, by the process ids kept in DIR
#
# Needs Debian's slurm-wlm and munge, and root (slurmd runs jobs as their submitting user).
set -euo pipefail

cmd=${1:?usage: cluster.sh start|stop DIR}
dir=${2:?usage: cluster.sh start|stop DIR}

stop() {
	for name in slurmd slurmctld munged; do
		if [ -f "$dir/$name.pid" ]; then
			pid=$(cat "$dir/$name.pid")
			kill "$pid" 2>/dev/null || true
			for _ in $(seq 50); do kill -0 "$pid" 2>/dev/null || break; sleep 0.1; done
			kill -9 "$pid" 2>/dev/null || true
			rm -f "$dir/$name.pid"
		fi
	done
}

case "$cmd" in
stop)
	stop
	exit 0
	;;
start) ;;
*)
	echo "usage: cluster.sh start|stop DIR" >&2
	exit 2
	;;
esac

mkdir -p "$dir"
dir=$(cd "$dir" && pwd)
mkdir -p "$dir/munge" "$dir/state" "$dir/spool" "$dir/log"
chmod 0700 "$dir/munge"

host=$(hostname -s)
cpus=$(nproc)
mem=$(awk '/MemTotal/ {print int($2/1024) - 1024}' /proc/meminfo)

# munge: a key of our own and a socket in the state folder.
dd if=/dev/urandom of="$dir/munge/munge.key" bs=1 count=1024 status=none
chmod 0400 "$dir/munge/munge.key"
mkdir -p /run/munge
munged --key-file="$dir/munge/munge.key" --socket="$dir/munge/munge.socket" \
	--pid-file="$dir/munged.pid" --log-file="$dir/log/munged.log" --seed-file="$dir/munge/seed" \
	--force

cat >"$dir/slurm.conf" <<CONF
ClusterName=local
SlurmctldHost=$host
SlurmctldPort=16817
SlurmdPort=16818
AuthType=auth/munge
AuthInfo=socket=$dir/munge/munge.socket
CredType=cred/munge
MpiDefault=none
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
ReturnToService=2
SchedulerType=sched/backfill
SelectType=select/cons_tres
SelectTypeParameters=CR_Core
SlurmUser=root
SlurmdUser=root
StateSaveLocation=$dir/state
SlurmdSpoolDir=$dir/spool
SlurmctldPidFile=$dir/slurmctld.pid
SlurmdPidFile=$dir/slurmd.pid
SlurmctldLogFile=$dir/log/slurmctld.log
SlurmdLogFile=$dir/log/slurmd.log
AccountingStorageType=accounting_storage/none
JobAcctGatherType=jobacct_gather/none
JobCompType=jobcomp/none
InactiveLimit=0
KillWait=10
MinJobAge=300
SlurmctldTimeout=30
SlurmdTimeout=60
Waittime=0
NodeName=$host CPUs=$cpus RealMemory=$mem State=UNKNOWN
PartitionName=batch Nodes=$host Default=YES MaxTime=INFINITE State=UP OverSubscribe=NO
CONF
chmod 0644 "$dir/slurm.conf"
export SLURM_CONF="$dir/slurm.conf"

slurmctld -f "$SLURM_CONF" -i
slurmd -f "$SLURM_CONF"

for _ in $(seq 120); do
	state=$(sinfo -h -N -o '%T' 2>/dev/null | head -n1 || true)
	case "$state" in
	idle*) echo "export SLURM_CONF=$SLURM_CONF"; exit 0 ;;
	esac
	sleep 0.5
done
echo "cluster.sh: the node did not become idle; state '${state:-none}'" >&2
tail -n 20 "$dir/log/slurmctld.log" "$dir/log/slurmd.log" >&2 || true
stop
exit 1
