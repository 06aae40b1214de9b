#!/usr/bin/env bash
# A real single-node Slurm on localhost (munge + slurmctld + slurmd, configured in a temp dir,
# loopback only) runs a 3-task job array of `stethogen generate`; the merged shards must equal a
# single run. Usage: slurm_array.sh BINARY RECIPE COMPARE_PY PYTHON. Exit 77 if Slurm is absent.
set -euo pipefail
bin=$1 recipe=$2 compare=$3 py=$4
for tool in munged slurmctld slurmd sbatch squeue; do
  command -v "$tool" >/dev/null || { [ -x "/usr/sbin/$tool" ] || { echo "skip: $tool not installed"; exit 77; }; }
done
PATH=$PATH:/usr/sbin
dir=$(mktemp -d /tmp/stethogen-slurm-XXXXXX)
cleanup() {
  for p in slurmd slurmctld munged; do [ -f "$dir/$p.pid" ] && kill "$(cat "$dir/$p.pid")" 2>/dev/null || true; done
  sleep 1
  rm -rf "$dir"
}
trap cleanup EXIT
mkdir -p "$dir/state" "$dir/spool" "$dir/munge" "$dir/out"
chmod 700 "$dir/munge"
dd if=/dev/urandom of="$dir/munge/munge.key" bs=1024 count=1 status=none
chmod 400 "$dir/munge/munge.key"
munged --key-file="$dir/munge/munge.key" --socket="$dir/munge/socket" --pid-file="$dir/munged.pid" \
  --log-file="$dir/munge/log" --seed-file="$dir/munge/seed" --force
port=$((20000 + RANDOM % 20000))
user=$(id -un)
cat > "$dir/slurm.conf" <<CONF
ClusterName=stethogen-test
SlurmctldHost=localhost(127.0.0.1)
SlurmctldPort=$port
SlurmdPort=$((port + 1))
SlurmUser=$user
SlurmdUser=$user
AuthType=auth/munge
AuthInfo=socket=$dir/munge/socket
CredType=cred/munge
StateSaveLocation=$dir/state
SlurmdSpoolDir=$dir/spool
SlurmctldPidFile=$dir/slurmctld.pid
SlurmdPidFile=$dir/slurmd.pid
SlurmctldLogFile=$dir/slurmctld.log
SlurmdLogFile=$dir/slurmd.log
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
SchedulerType=sched/builtin
SelectType=select/cons_tres
SelectTypeParameters=CR_CPU
MpiDefault=none
ReturnToService=2
NodeName=localhost NodeAddr=127.0.0.1 CPUs=$(nproc) State=UNKNOWN
PartitionName=test Nodes=localhost Default=YES MaxTime=10 State=UP
CONF
export SLURM_CONF=$dir/slurm.conf
slurmctld -f "$SLURM_CONF"
slurmd -f "$SLURM_CONF" -N localhost
for i in $(seq 1 60); do sinfo -h -o %T 2>/dev/null | grep -qE "idle|mixed" && break; sleep 1; done
sinfo -h -o %T | grep -qE "idle|mixed" || { echo "slurm node never became idle"; tail -5 "$dir"/*.log; exit 1; }

cat > "$dir/job.sh" <<JOB
#!/bin/bash
export SOURCE_DATE_EPOCH=1700000000
exec "$bin" generate "$recipe" -o "$dir/out/part-{shard}.h5" --threads 1 --quiet
JOB
chmod +x "$dir/job.sh"
jid=$(sbatch --parsable --array=0-2 --cpus-per-task=1 --output="$dir/out/task-%a.log" "$dir/job.sh")
for i in $(seq 1 240); do [ -z "$(squeue -h -j "$jid" 2>/dev/null)" ] && break; sleep 1; done
ls "$dir/out"
for k in 1 2 3; do [ -f "$dir/out/part-$k-of-3.h5" ] || { echo "shard $k missing"; cat "$dir"/out/task-*.log; exit 1; }; done
SOURCE_DATE_EPOCH=1700000000 "$bin" merge "$dir"/out/part-*-of-3.h5 -o "$dir/merged.h5"
SOURCE_DATE_EPOCH=1700000000 "$bin" generate "$recipe" -o "$dir/single.h5" --quiet
"$py" "$compare" "$dir/merged.h5" "$dir/single.h5"
echo "slurm: merged 3-task array equals a single run"
