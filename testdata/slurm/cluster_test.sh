#!/usr/bin/env bash
# Cluster test of 'fgauge plan' and 'fgauge merge' on a real single-node
# Slurm cluster on localhost (munged, slurmctld and slurmd started here,
# following the project's single-node notes; the packages slurm-wlm and
# munge must be installed, as .ci/run does). Needs root. Installs nothing.
#
# Steps: start the daemons with a configuration generated into a temporary
# folder, build fgauge, simulate a small three-chromosome cohort with a
# tabix index, scan it in one pass, make a plan of 5 shards (chromosome 1
# split, the others whole), submit the plan's Slurm script (job array +
# dependent merge), wait for the jobs (bounded), check the merged outputs
# equal the single pass, submit again to check that finished shards are
# not rerun, and stop the daemons (trap, by their pid files).
#
# Runs outside 'go test'; .ci/run calls it when it is executable.
# Environment: TIMEOUT (seconds to wait for the jobs, default 300),
# KEEP=1 keeps the temporary folder.
set -euo pipefail
exec </dev/null
here=$(cd "$(dirname "$0")" && pwd)
repo=$(cd "$here/../.." && pwd)
export PATH=$PATH:/usr/local/go/bin:/usr/sbin:/sbin
timeout_s=${TIMEOUT:-300}

say() { echo "cluster_test: $*"; }
fail() { echo "cluster_test: FAIL: $*" >&2; exit 1; }

if [ "$(id -u)" -ne 0 ]; then
  say "skipped: needs root to start munged, slurmctld and slurmd"
  exit 0
fi
for b in munged slurmctld slurmd sbatch squeue sinfo go; do
  command -v "$b" >/dev/null || fail "$b not found (install slurm-wlm and munge)"
done

tmp=$(mktemp -d /tmp/fgauge-slurm.XXXXXX)
chmod 755 "$tmp"
started_munge=""
cleanup() {
  status=$?
  for pidf in "$tmp/slurmd.pid" "$tmp/slurmctld.pid"; do
    if [ -s "$pidf" ]; then
      pid=$(cat "$pidf")
      kill "$pid" 2>/dev/null || true
      for _ in $(seq 1 50); do kill -0 "$pid" 2>/dev/null || break; sleep 0.1; done
      kill -9 "$pid" 2>/dev/null || true
    fi
  done
  if [ -n "$started_munge" ] && [ -s /run/munge/munged.pid ]; then
    kill "$(cat /run/munge/munged.pid)" 2>/dev/null || true
  fi
  if [ "$status" -ne 0 ]; then
    for log in slurmctld.log slurmd.log; do
      [ -f "$tmp/$log" ] && { echo "---- $log (last 30 lines)"; tail -30 "$tmp/$log"; }
    done
    for log in "$tmp"/plan/logs/*.log; do
      [ -f "$log" ] && { echo "---- $log"; tail -20 "$log"; }
    done
  fi
  if [ "${KEEP:-}" = 1 ]; then say "kept $tmp"; else rm -rf "$tmp"; fi
  exit "$status"
}
trap cleanup EXIT

# 1. munge: key and folders owned by munge, daemon run as munge.
munge_running() { [ -s /run/munge/munged.pid ] && kill -0 "$(cat /run/munge/munged.pid)" 2>/dev/null; }
if ! munge_running; then
  mkdir -p /etc/munge /run/munge /var/lib/munge /var/log/munge
  if [ ! -s /etc/munge/munge.key ]; then
    dd if=/dev/urandom of=/etc/munge/munge.key bs=1024 count=1 status=none
  fi
  chown munge:munge /etc/munge/munge.key /run/munge /var/lib/munge /var/log/munge
  chmod 0400 /etc/munge/munge.key
  su -s /bin/sh munge -c /usr/sbin/munged
  started_munge=1
  say "munged started"
fi

# 2. slurm.conf from the template, in the temporary folder.
host=$(hostname -s)
cpus=$(nproc)
mem_mb=$(( $(awk '/^MemTotal:/ {print $2}' /proc/meminfo) / 1024 * 3 / 4 ))
mkdir -p "$tmp/state" "$tmp/spool"
sed -e "s|@HOST@|$host|g" -e "s|@CPUS@|$cpus|g" -e "s|@MEM_MB@|$mem_mb|g" -e "s|@DIR@|$tmp|g" \
    -e "s|@CTLD_PORT@|${CTLD_PORT:-16817}|g" -e "s|@SLURMD_PORT@|${SLURMD_PORT:-16818}|g" \
    "$here/slurm.conf.in" > "$tmp/slurm.conf"
export SLURM_CONF=$tmp/slurm.conf

# 3. The daemons; wait for the node to be idle.
slurmctld
slurmd
ok=""
for _ in $(seq 1 60); do
  if sinfo -h -o '%T' 2>/dev/null | grep -qx idle; then ok=1; break; fi
  sleep 1
done
[ -n "$ok" ] || fail "node not idle after 60 s: $(sinfo 2>&1 || true)"
say "single-node cluster up ($host, $cpus CPUs)"

# 4. fgauge and a fixture with an index.
(cd "$repo" && go build -o "$tmp/fgauge" ./cmd/fgauge)
fg=$tmp/fgauge
"$fg" simulate -o "$tmp/sim" --seed 7 --design full_sib,half_sib --design first_cousin --replicates 2 \
  --chromosomes 1:30e6:30,2:20e6:20,3:12e6:12 --site-spacing 15000 >/dev/null 2>&1
input=$tmp/sim/simulated.vcf.gz
[ -s "$input.tbi" ] || fail "no index written for $input"
"$fg" scan "$input" -o "$tmp/single" --no-progress 2>/dev/null

# 5. Plan and submit.
"$fg" plan "$input" -o "$tmp/plan" --shards 5 --threads 1 --fgauge "$fg"
cat "$tmp/plan/shards.tsv"
n=$(( $(wc -l < "$tmp/plan/shards.tsv") - 1 ))
grep -q "^#SBATCH --array=1-$n\$" "$tmp/plan/shard_array.sbatch" || fail "no job array line for $n shards"

wait_jobs() {
  local waited=0
  while [ -n "$(squeue -h -o '%i' 2>/dev/null)" ]; do
    [ "$waited" -lt "$timeout_s" ] || { squeue; fail "jobs still queued after $timeout_s s"; }
    sleep 2; waited=$((waited + 2))
  done
}
bash "$tmp/plan/submit_slurm.sh"
wait_jobs
[ -s "$tmp/plan/merged/run.json" ] || fail "merge job left no run.json"
say "jobs finished"

# 6. Merged outputs equal the single pass.
compare() {
  local a=$1 b=$2 f
  for f in samples.tsv runs.tsv; do
    cmp -s "$a/$f" "$b/$f" || fail "$f differs between the single pass and the merge"
  done
  cmp -s <(gzip -dc "$a/sites.tsv.gz") <(gzip -dc "$b/sites.tsv.gz") || fail "site tables differ"
  # run.json without wall time, command line and the merge's "shards"
  # section, compared by the same Go helper the unit tests use.
  local res
  res=$(cd "$repo" && FGAUGE_COMPARE_SINGLE="$a" FGAUGE_COMPARE_MERGED="$b" \
    go test -count=1 -v -run '^TestCompareOutputDirs$' ./cmd/fgauge 2>&1) || { echo "$res"; fail "outputs differ"; }
  echo "$res" | grep -q -- "--- PASS: TestCompareOutputDirs" || { echo "$res"; fail "comparison did not run"; }
}
compare "$tmp/single" "$tmp/plan/merged"
say "merged outputs equal the single pass ($n shards)"

# 7. Resubmitting runs no shard again, only the merge.
out=$(bash "$tmp/plan/submit_slurm.sh")
echo "$out"
echo "$out" | grep -q "every state is already intact" || fail "resubmission scheduled shards again"
wait_jobs
compare "$tmp/single" "$tmp/plan/merged"
say "PASS"
