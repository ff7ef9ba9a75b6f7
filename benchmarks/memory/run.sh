#!/usr/bin/env bash
# benchmarks/memory/run.sh: does `clinal pca --memory 512MiB` keep its
# promise on a cohort whose dense float64 matrix would need 8 GiB?
#
# Simulates SAMPLES x MARKERS straight to a .clinal store (default 20,000 x
# 53,687: 8 * 20,000 * 53,687 = 8,589,920,000 bytes = 8.0 GiB as dense
# float64), then runs
#   clinal pca STORE -k K --memory MEMORY          (must finish within it)
#   clinal pca STORE -k K --memory SMALL           (must refuse up front,
#                                                   naming the minimum)
# under benchmarks/import/peakrss, which reads the child's peak RSS from
# getrusage (ru_maxrss). Appends one line per run to results.tsv here.
#
# Usage: bash benchmarks/memory/run.sh
#   env SAMPLES=20000 MARKERS=53687 K=10 MEMORY=512MiB SMALL=16MiB THREADS=2
#       WORK=bench-out/memory CLINAL=path/to/clinal
set -euo pipefail

here=$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)
root=$(cd "$here/../.." && pwd)
SAMPLES=${SAMPLES:-20000}
MARKERS=${MARKERS:-53687}
K=${K:-10}
MEMORY=${MEMORY:-512MiB}
SMALL=${SMALL:-16MiB}
THREADS=${THREADS:-2}
work=${WORK:-$root/bench-out/memory}
out=${RESULTS:-$here/results.tsv}
mkdir -p "$work"
cd "$root"
if [[ -z ${CLINAL:-} ]]; then
	go build -o "$work/clinal" ./cmd/clinal
	CLINAL=$work/clinal
fi
go build -o "$work/peakrss" ./benchmarks/import/peakrss

store=$work/cohort-${SAMPLES}x${MARKERS}.clinal
if [[ ! -s $store ]]; then
	"$work/peakrss" -o "$work/sim.tsv" "$CLINAL" simulate -o "$store" --samples "$SAMPLES" --markers "$MARKERS" \
		--populations 5 --fst 0.02 --seed 1 --threads "$THREADS"
	echo "simulate: wall_s user_s sys_s peak_rss_bytes exit = $(cat "$work/sim.tsv")"
fi
dense=$((8 * SAMPLES * MARKERS))
[[ -s $out ]] || printf 'date\tsamples\tmarkers\tdense_f64_bytes\tstore_bytes\tk\tthreads\tmemory\twall_s\tuser_s\tsys_s\tpeak_rss_bytes\texit\tmessage\n' >"$out"
for mem in "$MEMORY" "$SMALL"; do
	rm -f "$work"/pca-"$mem".*
	set +e
	"$work/peakrss" -o "$work/last.tsv" "$CLINAL" pca "$store" -k "$K" --memory "$mem" --threads "$THREADS" \
		-o "$work/pca-$mem" >"$work/pca-$mem.stdout" 2>"$work/pca-$mem.stderr"
	set -e
	msg=$(tail -n 1 "$work/pca-$mem.stdout" "$work/pca-$mem.stderr" | grep -v '^==>' | grep -v '^$' | tail -n 1 | tr '\t' ' ')
	printf '%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\n' "$(date -u +%FT%TZ)" "$SAMPLES" "$MARKERS" "$dense" \
		"$(stat -c %s "$store")" "$K" "$THREADS" "$mem" "$(cat "$work/last.tsv")" "$msg" | tee -a "$out"
done
