# hwe_exact.R: reference Hardy-Weinberg exact p-values for clinal's qc tests,
# computed by Debian's r-cran-genetics HWE.exact (Wigginton, Cutler &
# Abecasis 2005), which takes a genotype object: one is built from each row's
# counts.
#
# Usage: Rscript hwe_exact.R IN.tsv OUT.tsv
#   IN.tsv:  header "hom_ref het hom_alt", one configuration per row.
#   OUT.tsv: header "hom_ref het hom_alt p near_tie p_ties" where p is
#            HWE.exact's p-value (printed with 17 digits), near_tie is 1 when
#            another configuration with the same allele counts has a density
#            within 1e-8 relative of the observed one (HWE.exact then counts
#            the tied one or not depending on the rounding of lgamma), and
#            p_ties is the sum of the densities <= the observed one times
#            (1 + 1e-8), the definition of the paper with ties included,
#            computed from the same density formula as HWE.exact, and
#            p_mid is the mid-p value (Graffelman & Moreno 2013): p minus
#            half the density of the observed configuration.
# Rows with more than 5000 samples (the robustness checks) skip the genotype
# object, whose construction is slow at that size, and apply HWE.exact's own
# computation (its density, ordering and cumulative sum, copied from the
# package source) to the counts directly; the column "via" says which.
# Exits 3 when the genetics package is not installed.
args <- commandArgs(trailingOnly = TRUE)
if (length(args) != 2) stop("usage: Rscript hwe_exact.R IN.tsv OUT.tsv")
if (!suppressMessages(suppressWarnings(requireNamespace("genetics", quietly = TRUE)))) {
  cat("NO_GENETICS: R package 'genetics' (Debian r-cran-genetics) is not installed\n")
  quit(status = 3)
}
suppressMessages(suppressWarnings(library(genetics)))
x <- read.delim(args[1], header = TRUE)
dens <- function(n11, n12, n22) {
  # The density of HWE.exact's source (genetics 1.3.8), in log space.
  f <- function(v) lgamma(v + 1)
  n <- n11 + n12 + n22
  n1 <- 2 * n11 + n12
  n2 <- 2 * n22 + n12
  exp(log(2) * n12 + f(n) - f(n11) - f(n12) - f(n22) - f(2 * n) + f(n1) + f(n2))
}
# One genotype object of 5000 of each genotype; each configuration is a
# subset of it (building a genotype object per row is 100 times slower).
G <- as.genotype(c(rep("A/A", 5000), rep("A/B", 5000), rep("B/B", 5000)))
out <- data.frame(hom_ref = x$hom_ref, het = x$het, hom_alt = x$hom_alt,
                  p = NA_real_, near_tie = 0L, p_ties = NA_real_, via = "HWE.exact",
                  p_mid = NA_real_)
for (i in seq_len(nrow(x))) {
  a <- x$hom_ref[i]; b <- x$het[i]; c <- x$hom_alt[i]
  n1 <- 2 * a + b; n2 <- 2 * c + b
  x12 <- seq(n1 %% 2, min(n1, n2), 2)
  d <- dens((n1 - x12) / 2, x12, (n2 - x12) / 2)
  if (a + b + c <= 5000) {
    g <- G[c(seq_len(a), 5000 + seq_len(b), 10000 + seq_len(c))]
    out$p[i] <- HWE.exact(g)$p.value
  } else {
    o <- order(d)
    out$p[i] <- cumsum(d[o])[x12[o] == b]
    out$via[i] <- "formula"
  }
  d0 <- dens(a, b, c)
  others <- d[x12 != b]
  out$near_tie[i] <- as.integer(any(abs(others - d0) <= 1e-8 * d0))
  out$p_ties[i] <- sum(d[d <= d0 * (1 + 1e-8)])
  out$p_mid[i] <- out$p[i] - d0 / 2
}
write.table(format(out, digits = 17), args[2], sep = "\t", quote = FALSE, row.names = FALSE)
