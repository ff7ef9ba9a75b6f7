#!/usr/bin/env bash
# benchmarks/cluster/run.sh: wall time of `clinal cluster` with S shards on
# Slurm against single-process `clinal pca` on the same store, and the
# scheduler overhead per pass.
#
# Needs a running Slurm cluster (bash testdata/slurm/start.sh starts a
# single-node one) and /usr/bin/python3 (Debian's, standard library only) to
# read the JSON the runs leave.
#
# Usage: bash benchmarks/cluster/run.sh
#   env: SAMPLES=4000 MARKERS=100000 K=10 SHARDS=4 CPUS_PER_TASK=1 THREADS=2
#        SRUN_PROBES=20 WORK=bench-out/cluster CLINAL=path/to/clinal
# Appends one line per run to results.tsv in this directory and prints a
# summary.
#
# What is timed:
#   pca      `clinal pca --threads THREADS`: the report's solve phase and
#            passes (per-pass time = solve / passes).
#   cluster  `clinal cluster plan` (QC + shard plan) once, then submit ->
#            job COMPLETED, polled with scontrol every 0.1 s. From the run's
#            events.jsonl, per pass: step = srun launch until every partial
#            is written, shard = the slowest shard's own compute time,
#            reduce = reading and summing the S partials. overhead = step -
#            shard is what the scheduler and the task start cost a pass.
#   srun     a job of SHARDS tasks that runs SRUN_PROBES empty steps
#            (`srun --ntasks=SHARDS true`): the bare srun step latency.
#   sbatch   submit -> RUNNING of the cluster job: the queueing latency,
#            paid once per job (not per pass).
# Both runs use --tw off (no trace(K^2) passes) and --ld-r2 0, so both make
# the same solver passes over the same markers.
set -euo pipefail

here=$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)
root=$(cd "$here/../.." && pwd)
SAMPLES=${SAMPLES:-4000}
MARKERS=${MARKERS:-100000}
K=${K:-10}
SHARDS=${SHARDS:-4}
CPUS_PER_TASK=${CPUS_PER_TASK:-1}
THREADS=${THREADS:-2}
SRUN_PROBES=${SRUN_PROBES:-20}
work=${WORK:-$root/bench-out/cluster}
out=${RESULTS:-$here/results.tsv}
PY=/usr/bin/python3

for c in sbatch srun scontrol "$PY"; do
  command -v "$c" >/dev/null || { echo "run.sh: $c not found (start a cluster with testdata/slurm/start.sh)" >&2; exit 1; }
done
mkdir -p "$work"
cd "$root"
if [[ -z ${CLINAL:-} ]]; then
  go build -o "$work/clinal" ./cmd/clinal
  CLINAL=$work/clinal
fi

store=$work/cohort-${SAMPLES}x${MARKERS}.clinal
if [[ ! -s $store ]]; then
  "$CLINAL" simulate -o "$store" --samples "$SAMPLES" --markers "$MARKERS" --populations 5 --fst 0.02 --seed 1 >/dev/null
fi
flags=(-k "$K" --seed 1 --tw off --ld-r2 0 --chromosomes all)

# wait_job ID: poll until the job leaves the active states; print its state.
wait_job() {
  local s
  while :; do
    s=$(scontrol show job -o "$1" 2>/dev/null | sed -n 's/.*JobState=\([A-Z_]*\).*/\1/p')
    case $s in
    COMPLETED | FAILED | CANCELLED | TIMEOUT | NODE_FAIL | OUT_OF_MEMORY | PREEMPTED | BOOT_FAIL | DEADLINE)
      echo "$s"
      return
      ;;
    esac
    sleep 0.1
  done
}

now() { date +%s.%N; }

# 1. single process
rm -f "$work"/pca.*
"$CLINAL" pca "$store" -o "$work/pca" --threads "$THREADS" "${flags[@]}" >/dev/null

# 2. cluster
rd=$work/run
rm -rf "$rd" "$work"/clu.*
t0=$(now)
"$CLINAL" cluster plan "$store" -o "$work/clu" --shards "$SHARDS" --cpus-per-task "$CPUS_PER_TASK" --run-dir "$rd" --threads "$THREADS" "${flags[@]}" >"$work/plan.txt"
t1=$(now)
job=$("$CLINAL" cluster submit "$rd" --time 60 2>/dev/null)
t2=$(now)
until [[ $(scontrol show job -o "$job" | sed -n 's/.*JobState=\([A-Z_]*\).*/\1/p') != PENDING ]]; do sleep 0.05; done
t3=$(now)
state=$(wait_job "$job")
t4=$(now)
[[ $state == COMPLETED ]] || { echo "run.sh: cluster job $job ended $state; see $rd/logs" >&2; exit 1; }

# 3. bare srun step latency inside an allocation of SHARDS tasks
rm -f "$work/srun-probe.out"
probe=$(sbatch --parsable --ntasks="$SHARDS" --chdir="$work" --output="$work/srun-probe.out" --wrap \
  "t0=\$(date +%s.%N); for i in \$(seq $SRUN_PROBES); do srun --ntasks=$SHARDS true; done; t1=\$(date +%s.%N); echo \"\$t0 \$t1\"")
[[ $(wait_job "$probe") == COMPLETED ]] || { echo "run.sh: srun probe job failed" >&2; exit 1; }

"$PY" - "$work" "$rd" "$out" "$SAMPLES" "$MARKERS" "$K" "$SHARDS" "$CPUS_PER_TASK" "$THREADS" "$SRUN_PROBES" \
  "$t0" "$t1" "$t2" "$t3" "$t4" <<'EOF'
import json, os, statistics, sys, time
work, rd, out = sys.argv[1:4]
n, m, k, S, cpt, thr, probes = map(int, sys.argv[4:11])
t0, t1, t2, t3, t4 = map(float, sys.argv[11:16])
pca = json.load(open(os.path.join(work, "pca.report.json")))
clu = json.load(open(os.path.join(work, "clu.report.json")))
solve = next(p["wall_seconds"] for p in pca["phases"] if p["name"] == "solve")
evs = [json.loads(l) for l in open(os.path.join(rd, "events.jsonl"))]
man = json.load(open(os.path.join(rd, "manifest.json")))
chunks = man["shards"][-1]["end_chunk"]
passes = [e for e in evs if e["event"] == "pass"]
def ts(e):
    s = e["time"].rstrip("Z")
    base, frac = (s.split(".") + ["0"])[:2]
    return time.mktime(time.strptime(base, "%Y-%m-%dT%H:%M:%S")) + float("0." + frac)
start = next(e for e in evs if e["event"] == "start")
done = next(e for e in evs if e["event"] == "done")
driver_solve = ts(passes[-1]) - ts(start)
step = [e["step_seconds"] for e in passes]
shard = [e["shard_seconds"] for e in passes]
red = [e["reduce_seconds"] for e in passes]
over = [a - b for a, b in zip(step, shard)]
# srun may print notes ("step creation temporarily disabled, retrying")
# before the timing line, which is the last.
p0, p1 = map(float, open(os.path.join(work, "srun-probe.out")).read().split("\n")[-2].split())
srun = (p1 - p0) / probes
ev_rel = max(abs(a - b) / a for a, b in zip(pca["eigenvalues"], clu["eigenvalues"]))
row = dict(date=time.strftime("%Y-%m-%dT%H:%M:%SZ", time.gmtime()), samples=n, markers=m, k=k,
           shards=len(man["shards"]), chunks=chunks,
           cpus_per_task=cpt, pca_threads=thr, passes_pca=pca["passes"], passes_cluster=clu["passes"],
           pca_solve_s=round(solve, 3), pca_per_pass_s=round(solve / pca["passes"], 4),
           cluster_plan_s=round(t1 - t0, 3), cluster_queue_s=round(t3 - t2, 3), cluster_job_s=round(t4 - t3, 3),
           cluster_submit_to_done_s=round(t4 - t2, 3), cluster_solve_s=round(driver_solve, 3),
           cluster_per_pass_s=round(statistics.median(step) + statistics.median(red), 4),
           step_median_s=round(statistics.median(step), 4), shard_median_s=round(statistics.median(shard), 4),
           reduce_median_s=round(statistics.median(red), 4), overhead_median_s=round(statistics.median(over), 4),
           srun_empty_step_s=round(srun, 4), max_rel_eigen_diff=f"{ev_rel:.2e}")
new = not os.path.exists(out) or os.path.getsize(out) == 0
with open(out, "a") as f:
    if new:
        f.write("\t".join(row) + "\n")
    f.write("\t".join(str(v) for v in row.values()) + "\n")
for key, v in row.items():
    print(f"{key:26s} {v}")
EOF
