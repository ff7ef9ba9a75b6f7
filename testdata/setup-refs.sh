#!/usr/bin/env bash
# setup-refs.sh: prepare ALL reference data that clinal's tests compare
# against, under testdata/ref/ (gitignored: converted data is never
# committed). It runs, in name order, every testdata/fetch-*.sh and then
# every testdata/*/make.sh that exists; each script is idempotent and owns
# its own directory under testdata/ref/. See testdata/README.md.
#
# Usage: bash testdata/setup-refs.sh
#
# A script that fails (no network, no Rscript, ...) is reported and the rest
# still run. The tests that need its data then skip with a message, unless
# CLINAL_REQUIRE_REFS=1 (CI sets it), in which case this script exits 1 after
# running all of them, and the tests would fail too.
set -uo pipefail

here=$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)
mkdir -p "$here/ref"

shopt -s nullglob
scripts=("$here"/fetch-*.sh "$here"/*/make.sh)
failed=()
for s in "${scripts[@]}"; do
  name=${s#"$here"/}
  echo "setup-refs: $name"
  if ! bash "$s"; then
    echo "setup-refs: $name FAILED" >&2
    failed+=("$name")
  fi
done

if ((${#scripts[@]} == 0)); then
  echo "setup-refs: no fetch-*.sh or */make.sh scripts found in $here"
fi
if ((${#failed[@]} > 0)); then
  if [[ ${CLINAL_REQUIRE_REFS:-} == 1 ]]; then
    echo "setup-refs: failed: ${failed[*]} (CLINAL_REQUIRE_REFS=1)" >&2
    exit 1
  fi
  echo "setup-refs: failed: ${failed[*]}; tests that need them will skip" >&2
fi
exit 0
