#!/usr/bin/env bash
# Runs every go test -fuzz target of clinal for a given time each, one after
# the other, and prints one summary line per target: package, target,
# duration, executions, new corpus entries, result.
#
#   bash testdata/fuzz/run.sh 30s            # every target, 30 s each
#   bash testdata/fuzz/run.sh 10m Store      # targets whose name matches Store
#   FUZZ_PARALLEL=2 bash testdata/fuzz/run.sh 60s
#
# A crash makes go test write the failing input to
# PKG/testdata/fuzz/FuzzXxx/HASH, where a plain `go test` replays it from
# then on: commit it as the regression test once the bug is fixed. The
# seed corpora live in the same directories. Exit status 1 if any target
# failed.
set -euo pipefail

dur=${1:?usage: run.sh DURATION [NAME-REGEXP]}
filter=${2:-.}
par=${FUZZ_PARALLEL:-1}
cd "$(dirname "$0")/../.."

# package:target, in the order they are run.
targets=(
	matrixio:FuzzImportVCF
	matrixio:FuzzImportDense
	matrixio:FuzzOpenStore
	matrixio:FuzzOpenStoreRepaired
	matrixio:FuzzStoreDeclared
	qc:FuzzReadBED
	qc:FuzzSampleList
	randsvd:FuzzReadCheckpoint
)

log=$(mktemp)
trap 'rm -f "$log"' EXIT
status=0
printf '%-9s %-22s %-8s %12s %8s  %s\n' package target time execs new result
for pt in "${targets[@]}"; do
	pkg=${pt%%:*} name=${pt#*:}
	[[ $name =~ $filter ]] || continue
	# -fuzzminimizetime bounds the time spent shrinking each new input, which
	# otherwise (60 s per input) takes most of a short run.
	if go test -run '^$' -fuzz "^${name}\$" -fuzztime "$dur" -fuzzminimizetime 50x \
		-parallel "$par" "./$pkg" >"$log" 2>&1; then
		result=ok
	elif grep -q 'context deadline exceeded' "$log" && ! grep -q 'Failing input written' "$log"; then
		# go test -fuzz can report "context deadline exceeded" when the time
		# runs out while a worker is still on an input (seen on a loaded
		# machine): no input failed and none was written, so it is not a
		# finding.
		result="ok (deadline)"
	else
		result=FAIL
		status=1
	fi
	last=$(grep -E 'execs: [0-9]+' "$log" | tail -1 || true)
	execs=$(sed -nE 's/.*execs: ([0-9]+).*/\1/p' <<<"$last")
	new=$(sed -nE 's/.*new interesting: ([0-9]+).*/\1/p' <<<"$last")
	if [[ -z $execs ]]; then
		# The time went on replaying the cached corpus (gathering baseline
		# coverage) before any new input was tried.
		execs=baseline:$(grep -oE 'baseline coverage: [0-9]+/[0-9]+' "$log" | tail -1 | sed 's/.*: //' || true)
	fi
	printf '%-9s %-22s %-8s %12s %8s  %s\n' "$pkg" "$name" "$dur" "$execs" "${new:--}" "$result"
	if [[ $result == FAIL ]]; then
		grep -vE '^fuzz: elapsed' "$log" | tail -20 | sed 's/^/    /'
	fi
done
exit $status
