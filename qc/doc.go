// Package qc computes per-sample and per-marker statistics and applies the
// quality-control filters that come before PCA: call rates, minor allele
// frequency, the Hardy-Weinberg exact test, chromosome selection, sample
// lists, region exclusion and LD pruning. Its result is a Selection of
// samples and markers, with the marker counts over the kept samples, that
// the PCA operator applies while decoding; Write saves it as tables and
// Load reads them back without touching the genotypes.
//
// # Order of the filters
//
// Samples first, each sample marked with the first filter it fails:
//
//  1. keep-list: not named in --keep-samples (when given);
//  2. drop-list: named in --drop-samples;
//  3. call-rate: call rate below --min-sample-call-rate, computed over all
//     markers of the store from the per-sample missing counts stored at
//     import (no pass).
//
// Then markers, over the kept samples:
//
//  4. chromosome: not in --chromosomes;
//  5. region: inside an --exclude-regions interval;
//  6. call-rate: call rate below --min-marker-call-rate;
//  7. monomorphic: no call, one allele only, or (dosages) a constant value:
//     always applied, such a marker cannot be standardized;
//  8. maf: minor allele frequency below --min-maf;
//  9. hwe: HWE exact p-value below --min-hwe-p;
//  10. ld: removed by LD pruning of the markers that passed 4-9.
//
// When a sample was removed, the counts stored at import describe the
// wrong set of samples, so they are recomputed over the kept samples in one
// pass over the store, which does the LD pruning at the same time (markers
// removed by 4 or 5 are counted too, so every row of the statistics table
// refers to the same samples). When no sample was removed the stored counts
// are used as they are and only the LD pruning reads chunks, those holding
// candidates. Selection.Counts are always over the kept samples.
//
// Sample lists hold one ID per line (the first field; blank lines and '#'
// comments skipped). IDs that are not samples of the store are counted and
// reported as a warning; a list naming no sample of the store at all is an
// error. BED files follow the UCSC convention: 0-based start, exclusive end,
// so [start, end) covers the 1-based VCF positions start+1 .. end.
//
// # Chromosome names
//
// Names are compared after NormalizeChrom: "chr1", "1" and "01" are the
// same; "chrM", "M" and "MT" are MT; X, Y, XY and MT are case-insensitive.
// A selection is a comma list of names, numeric ranges ("1-22"),
// "autosomes" (every name that is a positive integer, so any species'
// autosome count works), "sex" (X, Y, XY) and "all". Numbers are never
// taken as codes for X, Y or MT.
//
// # Hardy-Weinberg exact test
//
// HWEExact implements Wigginton, Cutler & Abecasis 2005 (Am J Hum Genet
// 76:887) with an optional mid-p (Graffelman & Moreno 2013). It is computed
// over the kept samples, all of them: clinal knows no case/control status,
// so a study that wants the test on controls only runs clinal qc with
// --keep-samples on the controls first. Float (dosage) stores skip it: the
// test needs hard calls.
//
// # LD pruning
//
// Greedy pairwise r^2 in a sliding window, per chromosome, on the markers
// that passed every other filter (the candidates). The window of candidate
// s holds the candidates from s up to, not including, the first at a
// position >= pos(s) + W (W in bp: "500kb", "1mb", "250000bp"), or the next
// W candidates (a plain number); windows start at candidates 0, step,
// 2*step, ... Within a window, for i ascending and j > i ascending over the
// markers still present, a pair with r^2 > --ld-r2 removes the marker with
// the lower MAF, the later one (j) on equal MAF; once i is removed the scan
// goes on with the next i. With step 1 every pair of candidates closer than
// the window is compared at most once, in this order.
//
// r is the Pearson correlation of the genotypes over the samples called in
// both markers (pairwise complete, as R's cor(x, y, use =
// "pairwise.complete.obs")); correlation does not change under the
// per-marker standardization of PCA, so this is the r^2 of the standardized
// genotypes with missing values left out pairwise. A pair where either
// marker is constant over those samples has no r and never prunes.
// Genotypes are held as bit planes (called, ALT >= 1, ALT == 2) so one pair
// costs a few population counts per 64 samples; dosages are held as float32.
//
// One goroutine handles each chromosome, up to --threads at once, each
// streaming its chunks in order; the result depends only on the data, not
// on the number of threads. Markers must be grouped by chromosome and, for
// a window in bp, sorted by position (an error says otherwise). Memory is
// bounded: each goroutine keeps at most the rows of one window, capped by
// Options.LDMemory (--ld-memory, default 512 MiB per window, so about twice
// that at two threads); a longer window is cut short, and the report counts
// the windows so cut. The cap does not depend on the number of threads, so
// neither does the result.
//
// # Defaults
//
// DefaultOptions (and the command-line flags) use thresholds that are
// common practice, from no single source:
//
//   - --min-sample-call-rate 0.95: a sample missing more than 5% of its calls
//     usually has poor DNA or a failed array; lenient enough for imputed or
//     sequencing-derived calls.
//   - --min-marker-call-rate 0.98: markers missing more than 2% are often
//     badly clustered, and missingness correlated with batch creates false
//     structure in PCs.
//   - --min-maf 0.01: rare variants carry little information on ancestry
//     axes and their standardized values are large and noisy.
//   - --min-hwe-p 1e-6: strong departures from HWE flag genotyping errors;
//     the threshold is low because population structure itself causes mild
//     departures, and those are what PCA should see.
//   - --chromosomes autosomes: sex chromosomes differ in copy number between
//     sexes, so they would put sex on a PC; MT and unplaced contigs are not
//     diploid autosomal data.
//   - --ld-r2 0.2 in 500 kb windows, step 1: PCs on unpruned data follow a
//     few long LD blocks instead of ancestry; r^2 0.2 thins markers to
//     roughly independent ones while keeping enough of them.
//
// --exclude-regions has no default file: long-range LD regions depend on
// the species and genome build, so supply a BED for yours.
package qc
