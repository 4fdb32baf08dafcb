# Reference values for the rank-normalised split-R-hat, bulk ESS and tail ESS
# of Vehtari, Gelman, Simpson, Carpenter & Buerkner (2021, Bayesian Analysis
# 16, 667), computed with the R package 'posterior' (Debian r-cran-posterior
# 1.4.0), written by the paper's authors.
#
# Run from this folder:  Rscript rhat_reference.R
# Writes rhat_chains.csv (case,chain,draw,value) and rhat_reference.csv
# (case,rhat,ess_bulk,ess_tail); mcmc/rhat_test.go reads both.
suppressMessages(library(posterior))
set.seed(20210667)

ar1 <- function(n, rho, shift = 0) {
  x <- numeric(n)
  x[1] <- rnorm(1)
  for (i in 2:n) x[i] <- rho * x[i - 1] + sqrt(1 - rho^2) * rnorm(1)
  x + shift
}

cases <- list(
  # A: four agreeing chains, positively autocorrelated.
  A = sapply(1:4, function(m) ar1(1000, 0.7)),
  # B: one chain of four shifted by half a standard deviation.
  B = sapply(1:4, function(m) ar1(1000, 0.3, if (m == 4) 0.5 else 0)),
  # C: odd length, heavy tails, one chain twice as wide.
  C = sapply(1:3, function(m) rt(501, df = 3) * (if (m == 1) 2 else 1)),
  # D: values rounded to one decimal, so there are many ties.
  D = sapply(1:2, function(m) round(ar1(200, 0.5), 1)),
  # E: antithetic chains (negative autocorrelation), ESS above the draw count.
  E = sapply(1:8, function(m) ar1(100, -0.6))
)

long <- do.call(rbind, lapply(names(cases), function(k) {
  x <- cases[[k]]
  data.frame(case = k, chain = rep(seq_len(ncol(x)) - 1, each = nrow(x)),
             draw = rep(seq_len(nrow(x)) - 1, times = ncol(x)),
             value = sprintf("%.17g", as.vector(x)))
}))
write.csv(long, "rhat_chains.csv", row.names = FALSE, quote = FALSE)

ref <- do.call(rbind, lapply(names(cases), function(k) {
  x <- cases[[k]]
  data.frame(case = k, rhat = sprintf("%.17g", rhat(x)),
             ess_bulk = sprintf("%.17g", ess_bulk(x)),
             ess_tail = sprintf("%.17g", ess_tail(x)))
}))
write.csv(ref, "rhat_reference.csv", row.names = FALSE, quote = FALSE)
