# Times the R package posterior on the benchmark data of bench_diagnostics, computing the same
# set as planmill's diagnose_observable: rhat (bulk and folded), ess_bulk, ess_tail, mcse_mean,
# mcse_quantile(0.05, 0.95), mean, sd.
# Usage: Rscript diagnostics_posterior.R draws.bin quantities chains draws
# draws.bin: little-endian doubles, quantity-major, each quantity column-major draws x chains.
suppressPackageStartupMessages(library(posterior))
args <- commandArgs(trailingOnly = TRUE)
nq <- as.integer(args[2]); nc <- as.integer(args[3]); nd <- as.integer(args[4])
con <- file(args[1], "rb")
elapsed <- 0
for (q in seq_len(nq)) {
  x <- matrix(readBin(con, "double", n = nd * nc, size = 8, endian = "little"), ncol = nc)
  t <- system.time({
    v <- c(rhat(x), ess_bulk(x), ess_tail(x), mcse_mean(x), mcse_quantile(x, c(0.05, 0.95)),
           mean(x), sd(x))
  })
  elapsed <- elapsed + t[["elapsed"]]
}
close(con)
cat(sprintf("posterior %s seconds %.3f\n", as.character(packageVersion("posterior")), elapsed))
