#!/usr/bin/env bash
# A real one-node SLURM, started here, runs scripts/slurm/submit.sh (a job array of parts, then the combine step
# with --dependency=afterok) on an invented recording (samples/odour_spikes.csv); the combined result must be the
# single run's, byte for byte (JSON, printed text, figures and tables). Then one part is deleted, as if killed, and
# the same submission runs that part alone and combines again.
#
# Needs root and Debian's slurm-wlm (22.05) and munge; scripts/test.sh skips it, saying so, without them. munged
# (as the munge user, with a key made here), slurmctld and slurmd run on private sockets, ports, state and log
# files under a temporary folder, and are stopped by their pid files when the test ends, passing or failing.
set -euo pipefail
root=$(cd "$(dirname "$0")/.." && pwd)
bin=${POPDECODE_BIN:-$root/target/release/popdecode}
[ -x "$bin" ] || { echo "build the CLI first: cargo build --release" >&2; exit 1; }
work=$(mktemp -d /tmp/popdecode-slurm.XXXXXX)
chmod 755 "$work"
mkdir -p "$work"/{munge,state,spool,run,log}

stop() {
  local status=$?
  if [ $status -ne 0 ]; then
    echo "failed; the last lines of each daemon's log:"
    for f in "$work"/log/*.log "$work"/munge/munged.log; do
      [ -e "$f" ] && { echo "-- $f"; tail -n 15 "$f"; }
    done
    for f in "$work"/out/logs/*.log; do [ -e "$f" ] && { echo "-- $f"; tail -n 5 "$f"; }; done
  fi
  for pidfile in "$work/run/slurmd.pid" "$work/run/slurmctld.pid" "$work/munge/munged.pid"; do
    if [ -s "$pidfile" ]; then
      local pid
      pid=$(cat "$pidfile")
      kill "$pid" 2>/dev/null || true
      for _ in $(seq 50); do kill -0 "$pid" 2>/dev/null || break; sleep 0.1; done
      kill -9 "$pid" 2>/dev/null || true
    fi
  done
  rm -rf "$work"
  exit $status
}
trap stop EXIT

wait_for() { # wait_for SECONDS DESCRIPTION COMMAND...: until the command succeeds
  local limit=$1 what=$2; shift 2
  for _ in $(seq $((limit * 5))); do "$@" >/dev/null 2>&1 && return 0; sleep 0.2; done
  echo "timed out after ${limit}s waiting for $what" >&2
  return 1
}

echo "== munge"
chown munge:munge "$work/munge"
chmod 755 "$work/munge" # munged requires others to be able to reach its socket
mungekey --create --keyfile="$work/munge/munge.key"
chown munge:munge "$work/munge/munge.key"
chmod 400 "$work/munge/munge.key"
runuser -u munge -- munged --key-file="$work/munge/munge.key" --socket="$work/munge/munge.socket" \
  --pid-file="$work/munge/munged.pid" --log-file="$work/munge/munged.log" --seed-file="$work/munge/munged.seed"
wait_for 10 munged test -S "$work/munge/munge.socket"

echo "== slurm"
host=$(hostname -s)
port=$((20000 + RANDOM % 20000)) # two free-looking ports, so that runs side by side do not meet
memory=$(awk '/MemTotal/ {print int($2 / 1024 / 2)}' /proc/meminfo)
export SLURM_CONF="$work/slurm.conf"
cat > "$SLURM_CONF" <<CONF
ClusterName=popdecodetest
SlurmctldHost=$host
SlurmctldPort=$port
SlurmdPort=$((port + 1))
SlurmUser=root
SlurmdUser=root
AuthType=auth/munge
CredType=cred/munge
AuthInfo=socket=$work/munge/munge.socket
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
SelectType=select/cons_tres
SelectTypeParameters=CR_Core
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
MpiDefault=none
ReturnToService=2
StateSaveLocation=$work/state
SlurmdSpoolDir=$work/spool
SlurmctldPidFile=$work/run/slurmctld.pid
SlurmdPidFile=$work/run/slurmd.pid
SlurmctldLogFile=$work/log/slurmctld.log
SlurmdLogFile=$work/log/slurmd.log
NodeName=$host CPUs=2 RealMemory=$memory State=UNKNOWN
PartitionName=test Nodes=$host Default=YES MaxTime=INFINITE State=UP
CONF
slurmctld -c -f "$SLURM_CONF"
wait_for 20 slurmctld scontrol ping
slurmd -f "$SLURM_CONF"
node_idle() { sinfo -h -N -o '%T' | grep -qx idle; }
wait_for 30 "the node to be idle" node_idle

echo "== a single run"
analysis=(timecourse --events "$root/samples/odour_spikes.csv" --trials "$root/samples/odour_trials.csv"
  --label odour --start -0.5 --end 1 --width 0.25 --step 0.25 --classifier shrinkage-lda --repeats 3
  --shuffles 9 --generalize)
"$bin" "${analysis[@]}" --quiet --json "$work/single.json" --plots "$work/single" > "$work/single.txt"

finished() { # finished JOBID: the job has left the queue
  [ -z "$(squeue -h -j "$1" 2>/dev/null)" ]
}
submit() { # the submission a user makes; prints the combine job's id
  POPDECODE=$bin "$root/scripts/slurm/submit.sh" 4 "$work/out" --time=0:05:00 --mem=500M --cpus-per-task=1 \
    -- "${analysis[@]}" | tee "$work/submit.txt" >&2
  sed -n 's/^combine: job \([0-9]*\)$/\1/p' "$work/submit.txt"
}
same_as_single() {
  cmp "$work/single.json" "$work/out/result.json"
  cmp "$work/single.txt" "$work/out/result.txt"
  diff -r "$work/single" "$work/out/figures"
}

echo "== 4 parts and the combine step"
combine=$(submit)
grep -q "^parts: job array [0-9]* (parts 1,2,3,4 of 4)$" "$work/submit.txt"
wait_for 90 "the combine job" finished "$combine"
for k in 1 2 3 4; do grep -q "^Part $k of 4: " "$work/out/logs/part-$k.log"; done # each part ran as an array task
same_as_single
echo "combined result = single run"

echo "== part 3 lost: the same submission runs it alone"
rm "$work/out/part-3-of-4.json" "$work/out/result.json"
before=$(stat -c %Y "$work/out/part-1-of-4.json" "$work/out/part-2-of-4.json" "$work/out/part-4-of-4.json")
combine=$(submit)
grep -q "^parts: job array [0-9]* (parts 3 of 4)$" "$work/submit.txt"
wait_for 90 "the combine job" finished "$combine"
[ "$before" = "$(stat -c %Y "$work/out/part-1-of-4.json" "$work/out/part-2-of-4.json" "$work/out/part-4-of-4.json")" ]
same_as_single
echo "resumed result = single run"
