# convert.R: turn the HapMap CEU/YRI example of Debian's r-bioc-snpstats
# (usr/lib/R/site-library/snpStats/data/ld.example.RData) into a VCF and a set
# of reference values computed here, in base R, independently of clinal.
#
# Usage: Rscript convert.R LD_EXAMPLE_RDATA OUTDIR
#
# Source (references.md): Debian r-bioc-snpstats 1.48.0+dfsg-1, GPL-3. Its
# documentation: HapMap data, 603 SNPs over 1 Mb of chromosome 22, 90 CEU
# (object ceph.1mb) and 90 YRI (object yri.1mb) samples; support.ld gives
# positions and the allele assignment. The genotype objects are S4 SnpMatrix
# objects whose data part is a raw matrix (samples x SNPs) with codes
# 0 = missing and 1/2/3 = 0/1/2 copies of the second allele of
# support.ld$Assignment. Only base R is used: the snpStats package is not
# installed, so the S4 class is never touched; unclass()/attr() reach the raw
# data directly.
#
# Outputs in OUTDIR (all tab separated, header first):
#   hapmap.vcf         VCF 4.2, chromosome "22", unphased GT. REF/ALT are
#                      alleles 1/2 of support.ld$Assignment (ALT is the
#                      counted allele), which need not be the genome
#                      reference base. Sample IDs are neutral (ceu-001..,
#                      yri-001..): the original IDs are not carried over.
#   hapmap.labels.tsv  sample_id group (CEU or YRI)
#   counts.tsv         per marker: id chrom pos ref alt hom_ref het hom_alt
#                      missing alt_freq maf call_rate used_in_pca
#   samples.tsv        per sample: sample_id group called missing call_rate
#   excluded.tsv       markers left out of the PCA reference and why
#   eigen.tsv          pc eigenvalue variance_fraction (top 10) of
#                      K = Z^T Z / M; the last line is the trace
#   scores.tsv         sample_id PC1..PC10: unit-norm eigenvectors of K
#   ld.tsv.gz          id1 id2 pos1 pos2 n r2 for every marker pair at most
#                      50 markers apart (n = pairwise complete samples)
#
# PCA convention (Patterson, Price & Reich 2006, PLoS Genet 2:e190):
# z = (g - 2p) / sqrt(2p(1-p)), p the ALT frequency over non-missing calls,
# missing -> 0, markers with p in {0, 1} (monomorphic, or nothing called)
# excluded, K = Z^T Z / M with Z the M x N standardized matrix, M the number
# of markers kept. Eigenvector signs: each is flipped so that its entry of
# largest absolute value is positive (ties: the first such entry).
# r^2 = cor(x, y, use = "pairwise.complete.obs")^2 over all 180 samples on
# ALT-allele counts; NA where a pair is constant on its complete samples.

args <- commandArgs(trailingOnly = TRUE)
if (length(args) != 2) stop("usage: Rscript convert.R LD_EXAMPLE_RDATA OUTDIR")
rdata <- args[1]
outdir <- args[2]
dir.create(outdir, showWarnings = FALSE, recursive = TRUE)

e <- new.env()
load(rdata, envir = e)
for (n in c("ceph.1mb", "yri.1mb", "support.ld")) {
  if (!exists(n, envir = e, inherits = FALSE)) stop("object ", n, " not in ", rdata)
}

# genotypes returns an integer matrix (samples x SNPs) of ALT counts 0/1/2
# with NA for missing, from a SnpMatrix without loading its class.
genotypes <- function(obj, what) {
  raw <- unclass(obj)
  if (typeof(raw) != "raw") stop(what, ": data part is ", typeof(raw), ", expected raw")
  d <- attr(obj, "dimnames")
  codes <- matrix(as.integer(raw), nrow = dim(raw)[1], ncol = dim(raw)[2])
  if (any(codes > 3L)) stop(what, ": codes above 3 (uncertain calls) are not handled")
  g <- codes - 1L
  g[codes == 0L] <- NA_integer_
  list(g = g, snps = d[[2]])
}

ceu <- genotypes(e$ceph.1mb, "ceph.1mb")
yri <- genotypes(e$yri.1mb, "yri.1mb")
sup <- e$support.ld
if (!identical(ceu$snps, yri$snps)) stop("ceph.1mb and yri.1mb have different SNPs")
if (!identical(ceu$snps, rownames(sup))) stop("support.ld rows differ from the SNP columns")
if (any(diff(sup$Position) <= 0)) stop("positions are not strictly increasing")
if (any(as.character(sup$Strand) != "+")) stop("unexpected strand")

G <- rbind(ceu$g, yri$g)            # N x M, ALT counts, NA missing
N <- nrow(G)
M <- ncol(G)
ids <- c(sprintf("ceu-%03d", seq_len(nrow(ceu$g))), sprintf("yri-%03d", seq_len(nrow(yri$g))))
group <- c(rep("CEU", nrow(ceu$g)), rep("YRI", nrow(yri$g)))
alleles <- strsplit(as.character(sup$Assignment), "/", fixed = TRUE)
ref <- vapply(alleles, `[`, "", 1)
alt <- vapply(alleles, `[`, "", 2)
chrom <- sub("^chr", "", as.character(sup$Chromosome))
pos <- sup$Position
snp <- ceu$snps

num <- function(x) ifelse(is.na(x), "NA", sprintf("%.17g", x))
wtsv <- function(df, file) {
  write.table(df, file.path(outdir, file), sep = "\t", quote = FALSE,
              row.names = FALSE, col.names = TRUE)
}

# VCF.
gt <- matrix("./.", N, M)
gt[!is.na(G) & G == 0L] <- "0/0"
gt[!is.na(G) & G == 1L] <- "0/1"
gt[!is.na(G) & G == 2L] <- "1/1"
head <- c(
  "##fileformat=VCFv4.2",
  "##source=clinal testdata/hapmap/convert.R from Debian r-bioc-snpstats ld.example.RData (HapMap CEU/YRI)",
  "##contig=<ID=22>",
  "##FORMAT=<ID=GT,Number=1,Type=String,Description=\"Genotype; ALT is allele 2 of snpStats support.ld Assignment\">",
  paste(c("#CHROM", "POS", "ID", "REF", "ALT", "QUAL", "FILTER", "INFO", "FORMAT", ids), collapse = "\t"))
body <- paste(chrom, pos, snp, ref, alt, ".", "PASS", ".", "GT",
              apply(gt, 2, paste, collapse = "\t"), sep = "\t")
writeLines(c(head, body), file.path(outdir, "hapmap.vcf"))
wtsv(data.frame(sample_id = ids, group = group), "hapmap.labels.tsv")

# Per-marker counts and frequencies.
hom_ref <- colSums(!is.na(G) & G == 0L)
het <- colSums(!is.na(G) & G == 1L)
hom_alt <- colSums(!is.na(G) & G == 2L)
miss <- colSums(is.na(G))
called <- N - miss
p <- ifelse(called > 0, (het + 2 * hom_alt) / (2 * called), NA)
used <- !is.na(p) & p > 0 & p < 1
wtsv(data.frame(id = snp, chrom = chrom, pos = pos, ref = ref, alt = alt,
                hom_ref = hom_ref, het = het, hom_alt = hom_alt, missing = miss,
                alt_freq = num(p), maf = num(pmin(p, 1 - p)),
                call_rate = num(called / N), used_in_pca = ifelse(used, "yes", "no")),
     "counts.tsv")
smiss <- rowSums(is.na(G))
wtsv(data.frame(sample_id = ids, group = group, called = M - smiss, missing = smiss,
                call_rate = num((M - smiss) / M)), "samples.tsv")
why <- ifelse(called == 0, "no_calls", "monomorphic")
wtsv(data.frame(id = snp[!used], pos = pos[!used], why = why[!used]), "excluded.tsv")

# PCA reference: K = Z^T Z / M over the kept markers.
Gk <- G[, used, drop = FALSE]
pk <- p[used]
Z <- sweep(Gk, 2, 2 * pk, "-")
Z <- sweep(Z, 2, sqrt(2 * pk * (1 - pk)), "/")
Z[is.na(Z)] <- 0
Mk <- ncol(Z)
K <- tcrossprod(Z) / Mk               # N x N (Z is N x Mk here)
ev <- eigen(K, symmetric = TRUE)
k <- 10
vals <- ev$values[1:k]
vecs <- ev$vectors[, 1:k]
for (j in 1:k) {
  i <- which.max(abs(vecs[, j]))
  if (vecs[i, j] < 0) vecs[, j] <- -vecs[, j]
}
tr <- sum(diag(K))
# Cross-check with references.md: an earlier independent base-R computation
# on the same file gave top eigenvalues about 23.29, 8.67, 7.88.
if (any(abs(vals[1:3] - c(23.29, 8.67, 7.88)) > 0.01)) {
  stop("top eigenvalues ", paste(format(vals[1:3]), collapse = ", "),
       " differ from the expected 23.29, 8.67, 7.88 (references.md)")
}
eig <- data.frame(pc = as.character(1:k), eigenvalue = num(vals), variance_fraction = num(vals / tr))
eig <- rbind(eig, data.frame(pc = "trace", eigenvalue = num(tr), variance_fraction = num(1)))
wtsv(eig, "eigen.tsv")
sc <- data.frame(sample_id = ids)
for (j in 1:k) sc[[paste0("PC", j)]] <- num(vecs[, j])
wtsv(sc, "scores.tsv")

# LD: r^2 for marker pairs at most 50 markers apart.
w <- 50
R <- suppressWarnings(cor(G, use = "pairwise.complete.obs"))
C <- crossprod(!is.na(G)) # pairwise complete counts
pairs <- which(row(R) < col(R) & col(R) - row(R) <= w, arr.ind = TRUE)
pairs <- pairs[order(pairs[, 1], pairs[, 2]), , drop = FALSE]
ld <- data.frame(id1 = snp[pairs[, 1]], id2 = snp[pairs[, 2]],
                 pos1 = pos[pairs[, 1]], pos2 = pos[pairs[, 2]],
                 n = C[pairs], r2 = num(R[pairs]^2))
con <- gzfile(file.path(outdir, "ld.tsv.gz"), "w")
write.table(ld, con, sep = "\t", quote = FALSE, row.names = FALSE, col.names = TRUE)
close(con)

cat(sprintf("hapmap: %d samples (CEU %d, YRI %d), %d markers, %d used in PCA (%d excluded), %d LD pairs\n",
            N, sum(group == "CEU"), sum(group == "YRI"), M, Mk, M - Mk, nrow(ld)))
cat(sprintf("hapmap: top eigenvalues of K: %s; trace %.4f\n",
            paste(sprintf("%.4f", vals[1:3]), collapse = ", "), tr))
