# Reference values for Pareto-smoothed importance-sampling leave-one-out
# cross-validation (Vehtari, Gelman & Gabry 2017, Stat. Comput. 27, 1413;
# Vehtari et al. 2024, JMLR 25, 72), WAIC and the paired elpd difference,
# computed with the R package 'loo' (Debian r-cran-loo 2.5.1; R 4.2.2),
# written by the papers' authors.
#
# Run from this folder:  Rscript loo_reference.R
# Reads  fit_a.csv, fit_b.csv (pointwise log-likelihood matrices written by
#                             `mirabilis compare straight kinked --pointwise`
#                             for two short fits of a kinked-arm mock drawn
#                             as in model/fit's TestCompareFindsKink (150 sources,
#                             32 walkers, 500 steps): fit_a with a straight
#                             arm, fit_b with the kinked one; one row per
#                             draw, one named column per source)
# Writes synthetic_a.csv, synthetic_b.csv (synthetic matrices, same layout),
#        gpd_samples.csv     (case,value: heavy-tailed exceedances, sorted),
#        gpd_reference.csv   (case,n,k,sigma: loo's generalised Pareto fit),
#        psis_weights.csv    (case,draw,log_ratio,log_weight,k),
#        loo_reference.csv   (matrix,quantity,value),
#        loo_pointwise.csv   (matrix,column,elpd_loo,p_loo,pareto_k,elpd_waic),
#        loo_compare.csv     (first,second,elpd_diff,se_diff).
# mcmc/psis_test.go and model/fit's comparison tests read them.
suppressMessages(library(loo))
set.seed(20170413)
num <- function(x) sprintf("%.17g", x)

# Matrices are written with 10 significant digits and read back, so that R
# and the Go tests start from the same numbers.
write_matrix <- function(x, path) {
  write.csv(matrix(sprintf("%.10g", x), nrow(x), dimnames = list(NULL, colnames(x))), path,
            row.names = FALSE, quote = FALSE)
}
read_matrix <- function(path) as.matrix(read.csv(path, comment.char = "#", check.names = FALSE))

# Synthetic matrices: a normal model's log-likelihoods of 40 observations at
# 1000 draws of (mu, sigma); four observations lie far out, so that their
# importance ratios are heavy-tailed (large k-hat), and one column is
# exp(t_2)-like, with no finite moments.
S <- 1000
mu <- rnorm(S, 0, 0.15)
sigma <- sqrt(1 / rgamma(S, 20, 20))
y <- c(rnorm(36), 3.5, -4.5, 6, 9)
a <- sapply(y, function(yi) dnorm(yi, mu, sigma, log = TRUE))
a <- cbind(a, -abs(rt(S, df = 2)))
colnames(a) <- c(sprintf("obs%02d", seq_along(y)), "wild")
# A second model of the same data: a Student t with 4 degrees of freedom.
b <- sapply(c(y, 0), function(yi) dt((yi - mu) / sigma, df = 4, log = TRUE) - log(sigma))
b[, ncol(b)] <- a[, ncol(a)] + rnorm(S, 0, 0.1)
colnames(b) <- colnames(a)
write_matrix(a, "synthetic_a.csv")
write_matrix(b, "synthetic_b.csv")

mats <- list(synthetic_a = read_matrix("synthetic_a.csv"),
             synthetic_b = read_matrix("synthetic_b.csv"))
if (file.exists("fit_a.csv")) mats$fit_a <- read_matrix("fit_a.csv")
if (file.exists("fit_b.csv")) mats$fit_b <- read_matrix("fit_b.csv")

loos <- lapply(mats, function(x) suppressWarnings(loo(x, r_eff = NA)))
waics <- lapply(mats, function(x) suppressWarnings(waic(x)))

ref <- do.call(rbind, lapply(names(mats), function(m) {
  e <- loos[[m]]$estimates
  w <- waics[[m]]$estimates
  data.frame(matrix = m,
             quantity = c("elpd_loo", "se_elpd_loo", "p_loo", "se_p_loo", "looic", "se_looic",
                          "elpd_waic", "se_elpd_waic", "p_waic", "se_p_waic", "waic", "se_waic"),
             value = num(c(c(t(e[c("elpd_loo", "p_loo", "looic"), ])),
                           c(t(w[c("elpd_waic", "p_waic", "waic"), ])))))
}))
write.csv(ref, "loo_reference.csv", row.names = FALSE, quote = FALSE)

pw <- do.call(rbind, lapply(names(mats), function(m) {
  p <- loos[[m]]$pointwise
  data.frame(matrix = m, column = colnames(mats[[m]]),
             elpd_loo = num(p[, "elpd_loo"]), p_loo = num(p[, "p_loo"]),
             pareto_k = num(loos[[m]]$diagnostics$pareto_k),
             elpd_waic = num(waics[[m]]$pointwise[, "elpd_waic"]))
}))
write.csv(pw, "loo_pointwise.csv", row.names = FALSE, quote = FALSE)

pairs <- list(c("synthetic_a", "synthetic_b"))
if (!is.null(mats$fit_b)) pairs[[2]] <- c("fit_a", "fit_b")
cmp <- do.call(rbind, lapply(pairs, function(p) {
  # loo_compare gives the difference of the worse model from the better one.
  d <- loo_compare(loos[[p[1]]], loos[[p[2]]])
  data.frame(first = p[1], second = p[2], elpd_diff = num(d[2, "elpd_diff"]),
             se_diff = num(d[2, "se_diff"]))
}))
write.csv(cmp, "loo_compare.csv", row.names = FALSE, quote = FALSE)

# Heavy-tailed exceedances for the generalised Pareto fit: samples of a
# generalised Pareto distribution (inverse CDF), of a log-normal and of a
# half-Cauchy, of several sizes.
rgpd <- function(n, k, s) s * ((1 - runif(n))^(-k) - 1) / k
samples <- list(gpd_k0.3_n50 = rgpd(50, 0.3, 1), gpd_k0.7_n200 = rgpd(200, 0.7, 2),
                gpd_k1.2_n1000 = rgpd(1000, 1.2, 0.5), gpd_kneg0.2_n100 = rgpd(100, -0.2, 1),
                lognormal_n300 = rlnorm(300, 0, 2), halfcauchy_n80 = abs(rcauchy(80)))
samples <- lapply(samples, sort)
write.csv(do.call(rbind, lapply(names(samples), function(k)
  data.frame(case = k, value = num(samples[[k]])))), "gpd_samples.csv",
  row.names = FALSE, quote = FALSE)
write.csv(do.call(rbind, lapply(names(samples), function(k) {
  f <- loo:::gpdfit(samples[[k]], sort_x = FALSE)
  data.frame(case = k, n = length(samples[[k]]), k = num(f$k), sigma = num(f$sigma))
})), "gpd_reference.csv", row.names = FALSE, quote = FALSE)

# Smoothed log weights of whole vectors of log ratios (not normalised).
ratios <- list(lognormal_s400 = rnorm(400, 0, 1.5), tdist_s2000 = rt(2000, df = 3),
               short_s20 = rnorm(20))
write.csv(do.call(rbind, lapply(names(ratios), function(k) {
  p <- suppressWarnings(psis(ratios[[k]], r_eff = NA))
  data.frame(case = k, draw = seq_along(ratios[[k]]) - 1, log_ratio = num(ratios[[k]]),
             log_weight = num(as.vector(weights(p, log = TRUE, normalize = FALSE))),
             k = num(p$diagnostics$pareto_k))
})), "psis_weights.csv", row.names = FALSE, quote = FALSE)
