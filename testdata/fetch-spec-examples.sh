#!/usr/bin/env bash
# fetch-spec-examples.sh: extract the VCF specification's own example into
# testdata/ref/vcf-spec/ (gitignored; nothing fetched is committed).
#
# Source (references.md, "Format examples"): Debian package
# golang-github-brentp-vcfgo-dev (MIT), file
# usr/share/gocode/src/github.com/brentp/vcfgo/header_test.go, sha256 pinned
# below. Its Go string `vcfStr` holds the example of the VCF 4.x
# specification (section 1.1, "An example": the header lines and the five
# records of samples NA00001-NA00003 on chromosome 20) followed by two
# records vcfgo adds for its own tests (a haploid chrX record with ALT '.'
# and a triploid record). The package is downloaded with `apt-get
# download` and unpacked with `dpkg-deb -x`; it is never installed.
#
# Output:
#   vcfgo-example.vcf  the whole vcfStr text (spec example + vcfgo's two extra records)
#   spec-example.vcf   the header and the five records of the specification only
#   SOURCE             the .deb the files came from
#
# Usage: bash testdata/fetch-spec-examples.sh [OUTDIR]  (default testdata/ref/vcf-spec)
# Idempotent: a stamp file makes a second run a no-op.
set -euo pipefail

here=$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)
out=${1:-$here/ref/vcf-spec}
pkg=golang-github-brentp-vcfgo-dev
member=usr/share/gocode/src/github.com/brentp/vcfgo/header_test.go
want_sha=88797f264e672afee1fdfb66447e569777ac4d2c20fdbc591ecb8253b63dc0ca

die() { echo "fetch-spec-examples.sh: $*" >&2; exit 1; }
for tool in apt-get dpkg-deb sha256sum awk; do
  command -v "$tool" >/dev/null || die "$tool not found"
done

stamp="$want_sha $(sha256sum "${BASH_SOURCE[0]}" | cut -d' ' -f1)"
if [[ -f $out/.stamp && $(cat "$out/.stamp") == "$stamp" ]]; then
  echo "fetch-spec-examples.sh: $out is up to date"
  exit 0
fi

tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
chmod 755 "$tmp" # lets apt's unprivileged _apt user write the download

if ! (cd "$tmp" && apt-get download -q "$pkg" >"$tmp/apt.log" 2>&1); then
  echo "fetch-spec-examples.sh: apt-get download $pkg failed; running apt-get update and retrying" >&2
  apt-get update -q >"$tmp/update.log" 2>&1 || { cat "$tmp/update.log" >&2; die "apt-get update failed"; }
  (cd "$tmp" && apt-get download -q "$pkg" >"$tmp/apt.log" 2>&1) || { cat "$tmp/apt.log" >&2; die "apt-get download $pkg failed"; }
fi
deb=$(ls "$tmp"/"$pkg"_*.deb)
dpkg-deb -x "$deb" "$tmp/x"
src=$tmp/x/$member
[[ -f $src ]] || die "$(basename "$deb") has no $member"
got_sha=$(sha256sum "$src" | cut -d' ' -f1)
[[ $got_sha == "$want_sha" ]] || die "$member from $(basename "$deb"): sha256 $got_sha, expected $want_sha"

mkdir -p "$(dirname "$out")"
stage=$(mktemp -d "$(dirname "$out")/.vcf-spec.XXXXXX")
trap 'rm -rf "$tmp" "$stage"' EXIT

# The raw string runs from the line "var vcfStr = `##fileformat..." to the
# first line that ends with a backtick.
awk '
  /^var vcfStr = `/ { on = 1; sub(/^var vcfStr = `/, "") }
  on {
    if ($0 ~ /`$/) { sub(/`$/, ""); print; exit }
    print
  }' "$src" >"$stage/vcfgo-example.vcf"
grep -q $'^20\t14370\trs6054257' "$stage/vcfgo-example.vcf" || die "vcfStr not found in $member"
# The specification's part: everything up to its last record (microsat1).
awk '{ print } /^20\t1234567\tmicrosat1/ { exit }' "$stage/vcfgo-example.vcf" >"$stage/spec-example.vcf"
[[ $(grep -vc '^#' "$stage/spec-example.vcf") == 5 ]] || die "expected 5 records in the specification example"

echo "$(basename "$deb") $member" >"$stage/SOURCE"
echo "$stamp" >"$stage/.stamp"
chmod 755 "$stage"
rm -rf "$out"
mv "$stage" "$out"
echo "fetch-spec-examples.sh: wrote $out"
