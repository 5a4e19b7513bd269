#!/usr/bin/env bash
# Shards on a real engine: start a throw-away single-node Slurm cluster (Debian's slurm-wlm and
# munge; scripts/setup --tests installs them), run a suite as a 4-task job array with one shard
# per task, merge the shards and require the merge to equal a one-machine run of the same suite,
# timestamps, timings, host facts and the shard field aside.
#
# Usage: slurm_array.sh STEPGATE [SUITE]     (SUITE defaults to tests/cluster/suite.json)
#
# Everything (munge key and socket, slurm.conf, state, spool, logs, results) lives in one
# temporary folder, and the daemons use their own ports, so nothing of a system-wide munge or
# Slurm is read or changed. Exit 0 equal, 1 a failure, 77 skipped: the packages are missing, we
# are not root, or the daemons cannot start here (ctest reports 77 as skipped).
set -euo pipefail

here=$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)
stepgate=${1:?usage: slurm_array.sh STEPGATE [SUITE]}
suite=${2:-$here/suite.json}
tasks=4
array_limit=300  # seconds for the job array: below ctest's TIMEOUT (600), so that our cleanup, not
                 # ctest's kill, ends a stuck array and stops the daemons
python=/usr/bin/python3

skip() { echo "SKIP: $*" >&2; exit 77; }
fail() { echo "FAIL: $*" >&2; exit 1; }

[[ -x $stepgate ]] || fail "stepgate binary not found or not executable: $stepgate"
[[ -f $suite ]] || fail "suite not found: $suite"
stepgate=$(cd "$(dirname "$stepgate")" && pwd)/$(basename "$stepgate")
suite=$(cd "$(dirname "$suite")" && pwd)/$(basename "$suite")
[[ -x $python ]] || skip "$python is missing (needed to compare results)"

PATH=$PATH:/usr/sbin:/sbin  # the daemons and mungekey live in sbin, often not on a user's PATH
missing=()
for prog in munged mungekey slurmctld slurmd sbatch sinfo scontrol; do
  command -v "$prog" > /dev/null || missing+=("$prog")
done
((${#missing[@]} == 0)) || skip "Slurm/munge programs missing: ${missing[*]} (apt-get install slurm-wlm munge)"
# slurmd must start job steps as their user, and our slurm.conf makes root the SlurmUser.
[[ $(id -u) == 0 ]] || skip "not root: slurmd must run as root to start job steps"

# A short path: the munge socket path must stay below the 108 bytes of a Unix socket address.
work=$(mktemp -d "${TMPDIR:-/tmp}/sg-slurm.XXXXXX")
# munged wants the socket's folders open to all (clients must reach it) and the key's private.
chmod 0755 "$work"
pids=() names=()  # munged, slurmctld, slurmd: ended in the reverse order
ctld_pid=
sbatch_pid=
show_logs=1  # until the array's results are in: later failures are stepgate's, not the cluster's
cleanup() {
  local status=$?
  set +e        # a failing step (or a closed reader of our output: PIPE is ignored) must not
  trap '' PIPE  # stop the cleanup half-way
  # Cancel our jobs while slurmctld still runs, so slurmd ends their job steps (slurmstepd
  # outlives slurmd otherwise), then stop the daemons.
  if [[ -n $ctld_pid ]] && kill -0 "$ctld_pid" 2> /dev/null; then
    [[ -n $sbatch_pid ]] && kill -TERM "$sbatch_pid" 2> /dev/null
    timeout 10 scancel --quiet --name=stepgate-shards 2> /dev/null || true
    for _ in $(seq 50); do
      [[ -z $(timeout 5 squeue --noheader --name=stepgate-shards 2> /dev/null) ]] && break
      sleep 0.2
    done
  fi
  local i
  for ((i = ${#pids[@]} - 1; i >= 0; i--)); do kill -TERM "${pids[i]}" 2> /dev/null || true; done
  for _ in $(seq 50); do
    local alive=0
    for pid in "${pids[@]}"; do kill -0 "$pid" 2> /dev/null && alive=1; done
    ((alive)) || break
    sleep 0.1
  done
  for pid in "${pids[@]}"; do kill -KILL "$pid" 2> /dev/null || true; done
  wait 2> /dev/null || true
  if ((status != 0 && show_logs)); then  # the folder goes away: show what daemons and tasks said
    for log in "$work"/log/*.log "$work"/out/*.log; do
      [[ -s $log ]] || continue
      [[ $log == *.out.log && -s ${log%.out.log}.log ]] && continue  # the same lines, -D echoes them
      echo "---- last lines of ${log#"$work"/}" >&2
      tail -n 25 "$log" >&2
    done
  fi
  rm -rf "$work"
  exit "$status"
}
trap cleanup EXIT
trap 'exit 130' INT TERM
mkdir -p "$work"/{log,state,spool,run,out}
mkdir -m 0755 "$work/socket"
mkdir -m 0700 "$work/munge"

# Two free TCP ports on loopback for slurmctld and slurmd: the usual 6817/6818 may be taken by
# a real Slurm or another run of this test.
read -r ctld_port slurmd_port < <("$python" - << 'EOF'
import socket
socks = [socket.socket() for _ in range(2)]
for s in socks:
    s.bind(("127.0.0.1", 0))
print(*(s.getsockname()[1] for s in socks))
EOF
)

# ---- munge: a fresh key and a private socket.
key=$work/munge/munge.key
socket=$work/socket/munge.socket
if ! mungekey --create --keyfile="$key" > "$work/log/mungekey.log" 2>&1; then
  dd if=/dev/urandom of="$key" bs=1 count=1024 status=none
fi
chmod 0400 "$key"
start_munged() {
  munged --foreground "$@" --key-file="$key" --socket="$socket" \
    --pid-file="$work/munge/munged.pid" --log-file="$work/log/munged.log" \
    --seed-file="$work/munge/munged.seed" >> "$work/log/munged.log" 2>&1 &
  local pid=$!
  pids+=("$pid") names+=(munged)
  for _ in $(seq 100); do
    [[ -S $socket ]] && return 0
    kill -0 "$pid" 2> /dev/null || break
    sleep 0.1
  done
  kill -KILL "$pid" 2> /dev/null || true
  wait "$pid" 2> /dev/null || true
  pids=("${pids[@]:0:${#pids[@]}-1}") names=("${names[@]:0:${#names[@]}-1}")
  return 1
}
# Where a folder above the temporary one fails munged's permission checks, --force relaxes them.
start_munged || start_munged --force ||
  skip "munged did not start: $(grep -i error "$work/log/munged.log" | tail -n 1 || true)"
if ! munge --socket="$socket" -n | unmunge --socket="$socket" > /dev/null 2>&1; then
  skip "munged started but a credential does not round-trip through its socket"
fi

# ---- slurm.conf: one node with this machine's CPUs, layout and memory as slurmd itself detects
# them (so it does not drain the node for a mismatch); nproc and /proc/meminfo where it cannot.
host=$(hostname -s)
hw=$(slurmd -C 2> /dev/null | grep -m 1 '^NodeName=' | sed 's/^NodeName=[^ ]* //; s/ *UpTime=.*//' || true)
if [[ ! $hw =~ CPUs=[0-9]+ || ! $hw =~ RealMemory=[0-9]+ ]]; then
  hw="CPUs=$(nproc) RealMemory=$(($(awk '/^MemTotal:/ {print $2}' /proc/meminfo) / 1024))"
fi
# Settings of an outer Slurm (this test may itself run inside a job) must not reach our cluster.
for var in $(compgen -e | grep -E '^(SLURM|SBATCH|SQUEUE|SINFO|SCANCEL)_' || true); do unset "$var"; done
export SLURM_CONF=$work/slurm.conf
cat > "$SLURM_CONF" << EOF
# Generated by tests/cluster/slurm_array.sh for one test run.
ClusterName=stepgate-test
SlurmctldHost=$host(127.0.0.1)
SlurmctldPort=$ctld_port
SlurmdPort=$slurmd_port
SlurmUser=root
SlurmdUser=root
AuthType=auth/munge
AuthInfo=socket=$socket
CredType=cred/munge
MpiDefault=none
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
JobCompType=jobcomp/none
SelectType=select/cons_tres
SelectTypeParameters=CR_CPU
SchedulerType=sched/builtin
ReturnToService=2
# Use the configured CPUs and memory even where a container reports its hardware oddly.
SlurmdParameters=config_overrides
StateSaveLocation=$work/state
SlurmdSpoolDir=$work/spool
SlurmctldPidFile=$work/run/slurmctld.pid
SlurmdPidFile=$work/run/slurmd.pid
SlurmctldLogFile=$work/log/slurmctld.log
SlurmdLogFile=$work/log/slurmd.log
SlurmctldDebug=info
SlurmdDebug=info
PlugStackConfig=$work/plugstack.conf
MailProg=/bin/true
SlurmctldTimeout=30
SlurmdTimeout=30
InactiveLimit=0
KillWait=5
# sbatch --wait polls after 2 s, then 4 times longer while that stays below MinJobAge/2 (up to
# 32 s): at 16 it polls every 8 s, and a finished task is kept twice as long as that.
MinJobAge=16
SchedulerParameters=batch_sched_delay=0
NodeName=$host NodeAddr=127.0.0.1 $hw State=UNKNOWN
PartitionName=test Nodes=$host Default=YES MaxTime=30 State=UP
EOF
: > "$work/plugstack.conf"  # no SPANK plugins from /etc/slurm

slurmctld -D -i -f "$SLURM_CONF" > "$work/log/slurmctld.out.log" 2>&1 &
ctld_pid=$!
pids+=($!) names+=(slurmctld)
slurmd -D -f "$SLURM_CONF" -N "$host" > "$work/log/slurmd.out.log" 2>&1 &
pids+=($!) names+=(slurmd)

# Bounded wait (60 s) for the node to register and become idle.
state=
for _ in $(seq 120); do
  for i in "${!pids[@]}"; do
    kill -0 "${pids[i]}" 2> /dev/null ||
      skip "${names[i]} exited at start: $(grep -hi 'error\|fatal' "$work/log/${names[i]}"*.log | tail -n 1 || true)"
  done
  state=$(timeout 10 sinfo --noheader --nodes="$host" --format=%T 2> /dev/null | head -n 1 || true)
  [[ $state == idle ]] && break
  sleep 0.5
done
[[ $state == idle ]] || skip "the Slurm node did not become idle within 60 s (state: '${state:-no answer}')"
echo "slurm: node $host idle ($hw; ports $ctld_port, $slurmd_port)"

# ---- the job array: one shard per task.
out=$work/out
job=$work/shard-job.sh
# Where stepgate knows --shard slurm it reads the array variables itself; else name the shard.
if "$stepgate" run --help 2>&1 | grep -qi slurm; then
  shard_arg='slurm'
else
  # shellcheck disable=SC2016 # expanded in the job script, not here
  shard_arg='$((SLURM_ARRAY_TASK_ID + 1))/$SLURM_ARRAY_TASK_COUNT'
fi
cat > "$job" << EOF
#!/usr/bin/env bash
#SBATCH --job-name=stepgate-shards
#SBATCH --ntasks=1
#SBATCH --cpus-per-task=1
#SBATCH --time=10
#SBATCH --output=$out/shard-%a.log
set -euo pipefail
# One CPU a task: --jobs 1 (results do not depend on it).
exec $(printf '%q' "$stepgate") run $(printf '%q' "$suite") \\
  --out $(printf '%q' "$out")/shard-\$SLURM_ARRAY_TASK_ID --shard $shard_arg --jobs 1 --quiet
EOF
chmod +x "$job"

t0=$(date +%s.%N)
# In the background and waited for, so a signal to this script is handled at once; bounded, so
# our cleanup (not ctest's kill at its TIMEOUT) is what ends a stuck array.
timeout "$array_limit" sbatch --array=0-$((tasks - 1)) --wait --quiet --chdir="$work" "$job" &
sbatch_pid=$!
if wait "$sbatch_pid"; then
  sbatch_pid=
else
  status=$?
  sbatch_pid=
  ((status == 124)) && fail "the job array did not finish within $array_limit s"
  fail "the job array failed (sbatch --wait exit status $status; see the task logs below)"
fi
t1=$(date +%s.%N)
echo "slurm: $tasks array tasks done in $("$python" -c "print(f'{$t1 - $t0:.1f}')") s (--shard $shard_arg)"

shards=()
for ((i = 0; i < tasks; i++)); do
  [[ -f $out/shard-$i/results.json ]] || fail "array task $i wrote no results.json"
  shards+=("$out/shard-$i/results.json")
done
# The shards must each say which part they are.
"$python" - "${shards[@]}" << 'EOF' || fail "a shard's results.json does not carry its shard K/N"
import json, sys
n = len(sys.argv) - 1
for k, path in enumerate(sys.argv[1:], start=1):
    got = json.load(open(path, encoding="utf-8")).get("shard")
    if got != f"{k}/{n}":
        sys.exit(f"{path}: shard {got!r}, expected '{k}/{n}'")
EOF

show_logs=0
"$stepgate" merge "${shards[@]}" --out "$out/merged" || fail "stepgate merge failed"
"$stepgate" run "$suite" --out "$out/single" --quiet || fail "the one-machine run failed"
"$python" "$here/compare_results.py" "$out/merged/results.json" "$out/single/results.json" ||
  fail "the merged job-array results differ from the one-machine run"
