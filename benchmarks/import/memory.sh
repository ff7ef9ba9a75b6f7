#!/usr/bin/env bash
# benchmarks/import/memory.sh: peak RSS of `clinal import` for two marker
# counts at a fixed number of samples. The importer's memory is bounded by
# samples and threads (parse groups of a few MiB, store chunks of about
# 2 MiB), so the two figures should be close; only the store's marker
# table (a few dozen bytes per marker) grows with M.
#
# Usage: bash benchmarks/import/memory.sh  [env SAMPLES=5000 MARKERS_LIST="40000 160000"
#        THREADS=2 WORK=bench-out/import CLINAL=path/to/clinal]
# Appends to memory.tsv in this directory.
set -euo pipefail

here=$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)
root=$(cd "$here/../.." && pwd)
SAMPLES=${SAMPLES:-5000}
MARKERS_LIST=${MARKERS_LIST:-"40000 160000"}
THREADS=${THREADS:-2}
work=${WORK:-$root/bench-out/import}
out=${RESULTS:-$here/memory.tsv}
mkdir -p "$work"
cd "$root"
if [[ -z ${CLINAL:-} ]]; then
  go build -o "$work/clinal" ./cmd/clinal
  CLINAL=$work/clinal
fi
go build -o "$work/gen" ./benchmarks/import/gen
go build -o "$work/peakrss" ./benchmarks/import/peakrss
[[ -s $out ]] || printf 'date\tsamples\tmarkers\tthreads\twall_s\tuser_s\tsys_s\tpeak_rss_bytes\texit\n' >"$out"
for m in $MARKERS_LIST; do
  vcf=$work/cohort-${SAMPLES}x${m}.vcf.gz
  [[ -s $vcf ]] || "$work/gen" -samples "$SAMPLES" -markers "$m" -seed 1 -o "$vcf"
  rm -f "$work/mem.clinal"
  "$work/peakrss" -o "$work/last.tsv" "$CLINAL" import --threads "$THREADS" -o "$work/mem.clinal" "$vcf" >/dev/null
  printf '%s\t%s\t%s\t%s\t%s\n' "$(date -u +%FT%TZ)" "$SAMPLES" "$m" "$THREADS" "$(cat "$work/last.tsv")" | tee -a "$out"
done
