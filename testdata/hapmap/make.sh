#!/usr/bin/env bash
# make.sh: prepare the HapMap CEU/YRI reference fixture in testdata/ref/hapmap/
# (gitignored; nothing converted is ever committed).
#
# Source (references.md): Debian package r-bioc-snpstats (GPL-3), file
# usr/lib/R/site-library/snpStats/data/ld.example.RData, sha256 pinned below.
# The package is downloaded with `apt-get download` and unpacked with
# `dpkg -x`; it is never installed. testdata/hapmap/convert.R (base R only)
# writes the VCF and the reference values; see its header for every file.
#
# Usage: bash testdata/hapmap/make.sh [OUTDIR]   (default testdata/ref/hapmap)
# Idempotent: does nothing when OUTDIR already holds a fixture made from the
# same input and the same convert.R. Needs apt-get, dpkg-deb, sha256sum and
# Rscript (r-base-core); bcftools, when present, validates the VCF.
set -euo pipefail

here=$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)
root=$(cd "$here/../.." && pwd)
out=${1:-$root/testdata/ref/hapmap}
pkg=r-bioc-snpstats
member=usr/lib/R/site-library/snpStats/data/ld.example.RData
want_sha=08d158fdf1efec4c7245b519c5c82e3e661c3d07643fb4313d4c44cb3ee1fb38

die() { echo "hapmap/make.sh: $*" >&2; exit 1; }
for tool in apt-get dpkg-deb sha256sum Rscript; do
  command -v "$tool" >/dev/null || die "$tool not found (Rscript comes with Debian's r-base-core)"
done

stamp="$want_sha $(sha256sum "$here/convert.R" | cut -d' ' -f1)"
if [[ -f $out/.stamp && $(cat "$out/.stamp") == "$stamp" ]]; then
  echo "hapmap/make.sh: $out is up to date"
  exit 0
fi

tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
chmod 755 "$tmp" # lets apt's unprivileged _apt user write the download

# apt-get download needs the package lists; refresh them only if it fails.
if ! (cd "$tmp" && apt-get download -q "$pkg" >"$tmp/apt.log" 2>&1); then
  echo "hapmap/make.sh: apt-get download $pkg failed; running apt-get update and retrying" >&2
  apt-get update -q >"$tmp/update.log" 2>&1 || { cat "$tmp/update.log" >&2; die "apt-get update failed"; }
  (cd "$tmp" && apt-get download -q "$pkg" >"$tmp/apt.log" 2>&1) || { cat "$tmp/apt.log" >&2; die "apt-get download $pkg failed"; }
fi
deb=$(ls "$tmp"/"$pkg"_*.deb)
dpkg-deb -x "$deb" "$tmp/x"
rdata=$tmp/x/$member
[[ -f $rdata ]] || die "$(basename "$deb") has no $member"
got_sha=$(sha256sum "$rdata" | cut -d' ' -f1)
[[ $got_sha == "$want_sha" ]] || die "$member from $(basename "$deb"): sha256 $got_sha, expected $want_sha (references.md)"

# Convert into a fresh directory, then swap it into place, so that a failed
# run never leaves a half-made fixture behind.
mkdir -p "$(dirname "$out")"
stage=$(mktemp -d "$(dirname "$out")/.hapmap.XXXXXX")
trap 'rm -rf "$tmp" "$stage"' EXIT
Rscript --vanilla "$here/convert.R" "$rdata" "$stage"

if command -v bcftools >/dev/null; then
  # htslib is the reference VCF reader (references.md): exit 0, empty stderr.
  err=$(bcftools view -Ou -o /dev/null "$stage/hapmap.vcf" 2>&1) || die "bcftools rejects hapmap.vcf: $err"
  [[ -z $err ]] || die "bcftools warns on hapmap.vcf: $err"
fi

echo "$(basename "$deb")" >"$stage/SOURCE"
echo "$stamp" >"$stage/.stamp"
chmod 755 "$stage"
rm -rf "$out"
mv "$stage" "$out"
echo "hapmap/make.sh: wrote $out"
