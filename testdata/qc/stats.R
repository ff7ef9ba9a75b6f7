# stats.R: per-marker counts, allele frequencies, call rates and pairwise
# LD r^2 computed by base R, as an independent reference for clinal's qc
# tests.
#
# Usage: Rscript stats.R IN.vcf KEEP MAXLAG OUTDIR
#   IN.vcf  plain-text VCF with unphased or phased GT as the first FORMAT
#           field (0/0, 0/1, 1/1, ./. and the | forms).
#   KEEP    a file of sample IDs (one per line) to restrict to, or "-" for all.
#   MAXLAG  pairs of markers at most MAXLAG apart (in marker order) get r^2.
#   OUTDIR  receives markers.tsv (id hom_ref het hom_alt missing alt_freq maf
#           call_rate) and ld.tsv (i j n r2: 1-based marker numbers, the
#           pairwise complete samples, cor(x, y, use = "pairwise.complete.obs")^2,
#           NA where undefined). Numbers are printed with 17 digits.
args <- commandArgs(trailingOnly = TRUE)
if (length(args) != 4) stop("usage: Rscript stats.R IN.vcf KEEP MAXLAG OUTDIR")
lines <- readLines(args[1])
hdr <- lines[startsWith(lines, "#CHROM")]
body <- lines[!startsWith(lines, "#")]
samples <- strsplit(hdr, "\t")[[1]][-(1:9)]
tab <- do.call(rbind, strsplit(body, "\t"))
gt <- sub(":.*", "", tab[, -(1:9), drop = FALSE])
code <- function(s) {
  s <- gsub("|", "/", s, fixed = TRUE)
  ifelse(s == "0/0", 0, ifelse(s == "0/1" | s == "1/0", 1, ifelse(s == "1/1", 2, NA)))
}
g <- matrix(code(gt), nrow = nrow(gt))
if (args[2] != "-") {
  keep <- readLines(args[2])
  g <- g[, samples %in% keep, drop = FALSE]
}
n <- ncol(g)
called <- rowSums(!is.na(g))
af <- rowSums(g, na.rm = TRUE) / (2 * called)
out <- data.frame(id = tab[, 3],
                  hom_ref = rowSums(g == 0, na.rm = TRUE),
                  het = rowSums(g == 1, na.rm = TRUE),
                  hom_alt = rowSums(g == 2, na.rm = TRUE),
                  missing = rowSums(is.na(g)),
                  alt_freq = af, maf = pmin(af, 1 - af), call_rate = called / n)
write.table(format(out, digits = 17), file.path(args[4], "markers.tsv"), sep = "\t", quote = FALSE, row.names = FALSE)
lag <- as.integer(args[3])
m <- nrow(g)
ii <- integer(0); jj <- integer(0); nn <- integer(0); rr <- numeric(0)
for (i in seq_len(m)) {
  for (j in seq_len(lag)) {
    if (i + j > m) break
    x <- g[i, ]; y <- g[i + j, ]
    ok <- !is.na(x) & !is.na(y)
    r <- suppressWarnings(cor(x, y, use = "pairwise.complete.obs"))
    ii <- c(ii, i); jj <- c(jj, i + j); nn <- c(nn, sum(ok)); rr <- c(rr, r^2)
  }
}
ld <- data.frame(i = ii, j = jj, n = nn, r2 = rr)
write.table(format(ld, digits = 17), file.path(args[4], "ld.tsv"), sep = "\t", quote = FALSE, row.names = FALSE)
