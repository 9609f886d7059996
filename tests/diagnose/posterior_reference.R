# Reference values from the R package posterior for posterior_reference_test.cpp.
# Usage: Rscript posterior_reference.R draws.csv out.csv
# draws.csv: case,chain,draw,value (long). out.csv: one row per case.
suppressPackageStartupMessages(library(posterior))
args <- commandArgs(trailingOnly = TRUE)
d <- read.csv(args[1], colClasses = c("character", "integer", "integer", "numeric"))
f <- function(v) sprintf("%.17g", v)
rows <- character()
for (case in unique(d$case)) {
  s <- d[d$case == case, ]
  x <- matrix(s$value[order(s$chain, s$draw)], ncol = length(unique(s$chain)))
  q <- suppressWarnings(mcse_quantile(x, probs = c(0.05, 0.95)))
  v <- suppressWarnings(c(rhat(x), ess_bulk(x), ess_tail(x), mcse_mean(x), q[1], q[2],
                          ess_mean(x), ess_quantile(x, 0.05), ess_quantile(x, 0.95),
                          # the two parts of rhat(), as posterior's rhat.default composes them
                          posterior:::.rhat(posterior:::z_scale(posterior:::.split_chains(x))),
                          posterior:::.rhat(posterior:::z_scale(posterior:::.split_chains(posterior:::fold_draws(x))))))
  rows <- c(rows, paste(case, paste(f(v), collapse = ","), sep = ","))
}
header <- paste0("case,rhat,ess_bulk,ess_tail,mcse_mean,mcse_q05,mcse_q95,ess_mean,ess_q05,ess_q95,",
                 "rhat_bulk,rhat_folded")
writeLines(c(paste0("# posterior ", as.character(packageVersion("posterior"))), header, rows),
           args[2])
