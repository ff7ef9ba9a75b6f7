#!/usr/bin/env bash
# benchmarks/import/run.sh: VCF import speed, clinal against bcftools, on the
# same BGZF VCF in one run.
#
# It builds clinal and two helpers (gen: the synthetic VCF writer; peakrss:
# wall time and peak RSS of a child), writes a simulated cohort VCF.gz of
# SAMPLES x MARKERS (invented Meridian Archipelago sample IDs; HWE genotypes,
# 1% missing; written by clinal's own BGZF VCF writer), then, REPS times,
# runs side by side:
#   clinal import --threads THREADS -o OUT.clinal FILE
#   bcftools view -Ou -o /dev/null FILE                 (htslib's full parse)
#   bcftools view --threads 1 -Ou -o /dev/null FILE     (one extra htslib thread)
# and appends one line per run to results.tsv (this directory).
#
# Usage: bash benchmarks/import/run.sh   [env SAMPLES=5000 MARKERS=50000
#        THREADS=2 REPS=3 WORK=bench-out/import CLINAL=path/to/clinal]
set -euo pipefail

here=$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)
root=$(cd "$here/../.." && pwd)
SAMPLES=${SAMPLES:-5000}
MARKERS=${MARKERS:-50000}
THREADS=${THREADS:-2}
REPS=${REPS:-3}
work=${WORK:-$root/bench-out/import}
results=${RESULTS:-$here/results.tsv}
die() { echo "import/run.sh: $*" >&2; exit 1; }
command -v bcftools >/dev/null || die "bcftools not found (Debian package bcftools)"
mkdir -p "$work"

cd "$root"
if [[ -z ${CLINAL:-} ]]; then
  go build -o "$work/clinal" ./cmd/clinal
  CLINAL=$work/clinal
fi
go build -o "$work/gen" ./benchmarks/import/gen
go build -o "$work/peakrss" ./benchmarks/import/peakrss

vcf=$work/cohort-${SAMPLES}x${MARKERS}.vcf.gz
if [[ ! -s $vcf ]]; then
  echo "import/run.sh: generating $vcf"
  "$work/gen" -samples "$SAMPLES" -markers "$MARKERS" -seed 1 -o "$vcf"
fi
bytes=$(stat -c %s "$vcf")
text=$(gzip -dc "$vcf" | wc -c)
cpu=$(awk -F': ' '/^model name/ { print $2; exit }' /proc/cpuinfo)
mem=$(awk '/^MemTotal/ { printf "%.0f GiB", $2 / 1048576 }' /proc/meminfo)
machine="$(nproc) cores, $cpu, $mem, $(bcftools --version | head -1)"
echo "import/run.sh: $vcf: $bytes bytes BGZF, $text bytes of text; $machine"
cat "$vcf" >/dev/null # page cache warm for every contender

if [[ ! -s $results ]]; then
  printf 'date\ttool\tcommand\tsamples\tmarkers\tvcf_bytes\ttext_bytes\twall_s\tuser_s\tsys_s\tpeak_rss_bytes\texit\tmachine\n' >"$results"
fi
measure() { # tool, command...
  local tool=$1
  shift
  "$work/peakrss" -o "$work/last.tsv" "$@" >"$work/$tool.log" 2>&1 || true
  local r
  r=$(cat "$work/last.tsv")
  printf '%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\n' "$(date -u +%FT%TZ)" "$tool" "${*//$work\//}" "$SAMPLES" "$MARKERS" \
    "$bytes" "$text" "$r" "$machine" >>"$results"
  echo "$tool: wall/user/sys/rss/exit = $r"
}
for ((rep = 1; rep <= REPS; rep++)); do
  rm -f "$work/out.clinal"
  measure clinal "$CLINAL" import --threads "$THREADS" -o "$work/out.clinal" "$vcf"
  measure bcftools bcftools view -Ou -o /dev/null "$vcf"
  measure bcftools-t1 bcftools view --threads 1 -Ou -o /dev/null "$vcf"
done
cat "$work/clinal.log"
# Median wall time per tool over this run's lines.
median() { # tool
  tail -n $((3 * REPS)) "$results" | awk -F'\t' -v t="$1" '$2 == t { print $8 }' | sort -g |
    awk '{ a[NR] = $1 } END { print (NR % 2) ? a[(NR + 1) / 2] : (a[NR / 2] + a[NR / 2 + 1]) / 2 }'
}
c=$(median clinal)
b=$(median bcftools)
b1=$(median bcftools-t1)
echo "median wall: clinal $c s, bcftools $b s, bcftools --threads 1 $b1 s"
awk -v c="$c" -v b="$b" -v b1="$b1" 'BEGIN { printf "speed-up over bcftools %.2fx; over bcftools --threads 1 %.2fx\n", b / c, b1 / c }'
