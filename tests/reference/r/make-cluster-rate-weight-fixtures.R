# Reference values for clustered rows, person-time rates and frequency weights, computed
# with base R only (stats, datasets, utils).
#
# Usage (from the repository root):
#   Rscript tests/reference/r/make-cluster-rate-weight-fixtures.R [OUTPUT_DIR]
# OUTPUT_DIR defaults to tests/reference/cluster-rate-weight; the script writes
#   OUTPUT_DIR/data/<dataset>.csv and OUTPUT_DIR/fixtures/<case>.json.
# The helpers (JSON writer, fit_ml, categorical_case, the delta-method and MOVER formulas)
# are the function definitions of make-fixtures.R, read from that file without running it.
# Every glm() is fully converged: glm.control(epsilon = 1e-14, maxit = 100), refitted from
# its own estimate until coef() stops changing.
#   - Rates: glm(falls ~ ... + offset(log(bed_days)), family = poisson).
#   - Cluster-robust CR1 (Liang and Zeger, Biometrika 1986;73:13-22), written by hand:
#     V = G/(G-1) * (n-1)/(n-p) * B %*% crossprod(rowsum(X * w * s, cluster)) %*% B,
#     B = solve(crossprod(X, X * w * W)) at the final fit, s the score factor
#     (y - mu for logistic and Poisson, the residual for lm), W the working weight
#     (mu(1 - mu) logistic, mu Poisson, 1 linear), w the frequency weights (1 without).
#   - HC0 (Poisson, robust): B %*% crossprod(X * (y - mu)) %*% B.
#   - Frequency weights: glm(..., weights = count) on the grouped rows; its coefficients,
#     vcov(), logLik() and deviance equal those of the expanded rows; the residual degrees
#     of freedom are those of the expanded rows (sum(w) - p), written here explicitly.
# Seeded synthetic data (set.seed(20261202), Mersenne-Twister): invented, not patients.

args <- commandArgs(trailingOnly = TRUE)
out <- if (length(args) >= 1) args[1] else "tests/reference/cluster-rate-weight"
dir.create(file.path(out, "data"), recursive = TRUE, showWarnings = FALSE)
dir.create(file.path(out, "fixtures"), recursive = TRUE, showWarnings = FALSE)

# The JSON writer (json.R) and the helper functions of make-fixtures.R (its top-level
# `name <- function(...)` lines only).
here <- dirname(sub("^--file=", "", grep("^--file=", commandArgs(trailingOnly = FALSE), value = TRUE)[1]))
source(file.path(here, "json.R"))
for (e in parse(file.path(here, "make-fixtures.R"))) {
  if (is.call(e) && identical(e[[1]], as.name("<-")) && is.call(e[[3]]) && identical(e[[3]][[1]], as.name("function"))) eval(e)
}
tight <- glm.control(epsilon = 1e-14, maxit = 100)
z95 <- qnorm(0.975)

# ---- seeded synthetic wards: 40 sites ------------------------------------------------------
set.seed(20261202)
G <- 40; n <- 1600
sites <- sprintf("site%02d", 1:G)
site_effect <- rnorm(G, 0, 0.4)
site <- sample(sites, n, replace = TRUE)
u <- site_effect[match(site, sites)]
called <- rbinom(n, 1, 0.5)
frailty <- sample(c("low", "mid", "high"), n, replace = TRUE, prob = c(0.4, 0.35, 0.25))
fmid <- as.integer(frailty == "mid"); fhigh <- as.integer(frailty == "high")
age <- round(rnorm(n, 72, 9))
bed_days <- round(runif(n, 2, 40))
falls <- rpois(n, exp(log(bed_days) - 4.2 + 0.25 * fmid + 0.6 * fhigh - 0.3 * called + 0.2 * called * fhigh + 0.01 * (age - 72) + u))
readmitted <- rbinom(n, 1, plogis(-1.2 + 0.4 * fmid + 0.9 * fhigh - 0.35 * called + 0.3 * called * fhigh + 0.02 * (age - 72) + u))
stay <- round(6 + 1.2 * fmid + 2.5 * fhigh - 0.8 * called + 0.6 * called * fhigh + 0.05 * (age - 72) + 2 * u + rnorm(n, 0, 2), 1)
count <- sample(1:4, n, replace = TRUE)
wards <- data.frame(site, called, frailty, age, bed_days, falls, readmitted, stay, count, stringsAsFactors = FALSE)
path <- file.path(out, "data", "wards.csv")
write.csv(wards, path, row.names = FALSE)
w_csv <- read.csv(path, stringsAsFactors = FALSE)
w_csv$frailty <- relevel(factor(w_csv$frailty), ref = "low")
# The same rows expanded by `count` (for the weighted fixtures' expanded check in the tests).
expanded <- wards[rep(seq_len(n), wards$count), ]
write.csv(expanded, file.path(out, "data", "wards-expanded.csv"), row.names = FALSE)

cr1 <- function(X, s, W, cluster, w = rep(1, nrow(X))) {
  B <- solve(crossprod(X, X * (w * W)))
  U <- rowsum(X * (w * s), cluster)
  G <- nrow(U); nn <- sum(w); p <- ncol(X)
  G / (G - 1) * (nn - 1) / (nn - p) * B %*% crossprod(U) %*% B
}
wald <- function(fit, V, spec) {
  ord <- engine_order(names(coef(fit)), spec$exposure$column, spec$modifier$column)
  idx <- grep(":", names(coef(fit)), fixed = TRUE)
  b <- coef(fit)[idx]; stat <- drop(t(b) %*% solve(V[idx, idx]) %*% b)
  list(statistic = stat, df = length(idx), p = pchisq(stat, length(idx), lower.tail = FALSE))
}
spec_of <- function(outcome, model, extra = list()) c(list(
  outcome = outcome,
  exposure = list(column = "called", reference = "0"),
  modifier = list(column = "frailty", type = "categorical", reference = "low"),
  covariates = arr(list(list(column = "age", type = "continuous"))),
  model = model,
  ci = list(level = 0.95, method = "delta")
), extra)
with_dataset <- function(x, dataset, more = list()) c(x, list(dataset = dataset), more)
# glm(..., weights = count) to the maximum, as fit_ml does without weights.
fit_w <- function(formula, family, data) {
  fit <- glm(formula, family = family, data = data, weights = count, control = tight)
  for (k in 1:20) {
    again <- glm(formula, family = family, data = data, weights = count, start = coef(fit), control = tight)
    change <- max(abs(coef(again) - coef(fit)) / (abs(coef(fit)) + 1e-3))
    fit <- again
    if (change < 1e-13) break
  }
  stopifnot(fit$converged)
  fit
}

# ---- logistic, clusters: glm(readmitted ~ called * frailty + age, binomial) + CR1 by hand ----
spec <- spec_of(list(column = "readmitted", type = "binary"), "logistic", list(cluster = list(column = "site")))
f <- fit_ml(readmitted ~ called * frailty + age, binomial, w_csv)
X <- model.matrix(f); mu <- fitted(f)
V <- cr1(X, w_csv$readmitted - mu, mu * (1 - mu), w_csv$site)
write_json(with_dataset(categorical_case("wards-cluster-logistic", spec, w_csv, f, NULL, V, TRUE, wald(f, V, spec), z95), "wards",
  list(clusters = G)), "wards-cluster-logistic")

# ---- linear, clusters: lm(stay ~ called * frailty + age) + CR1 by hand (t intervals, df n - p) ----
spec <- spec_of(list(column = "stay", type = "continuous"), "linear", list(cluster = list(column = "site")))
l <- lm(stay ~ called * frailty + age, w_csv)
X <- model.matrix(l)
V <- cr1(X, residuals(l), rep(1, n), w_csv$site)
tcrit <- qt(0.975, df.residual(l))
write_json(with_dataset(categorical_case("wards-cluster-linear", spec, w_csv, l, NULL, V, FALSE, wald(l, V, spec), tcrit, df.residual(l)), "wards",
  list(clusters = G)), "wards-cluster-linear")

# ---- Poisson rates: glm(falls ~ called * frailty + age + offset(log(bed_days)), poisson) ----
rate_outcome <- list(column = "falls", type = "count", personTime = "bed_days")
spec <- spec_of(rate_outcome, "poisson")
r_full <- fit_ml(falls ~ called * frailty + age + offset(log(bed_days)), poisson, w_csv)
r_red <- fit_ml(falls ~ called + frailty + age + offset(log(bed_days)), poisson, w_csv)
lrt_r <- anova(r_red, r_full, test = "LRT")
pearson <- sum(residuals(r_full, type = "pearson")^2)
cells <- aggregate(cbind(falls, bed_days) ~ called + frailty, data = w_csv, FUN = sum)
rates <- arr(lapply(seq_len(nrow(cells)), function(i) list(exposure = as.character(cells$called[i]), modifier = as.character(cells$frailty[i]),
  events = cells$falls[i], personTime = cells$bed_days[i], ratePer1000 = 1000 * cells$falls[i] / cells$bed_days[i])))
write_json(with_dataset(categorical_case("wards-rate-poisson", spec, w_csv, r_full, r_red, vcov(r_full), TRUE,
  list(statistic = lrt_r$Deviance[2], df = lrt_r$Df[2], p = lrt_r[["Pr(>Chi)"]][2]), z95), "wards",
  list(pearsonChiSquare = pearson, pearsonDf = df.residual(r_full), rates = rates)), "wards-rate-poisson")

# ---- Poisson rates, robust (HC0 by hand) and cluster-robust (CR1 by hand) ----
X <- model.matrix(r_full); mu <- fitted(r_full)
B <- summary(r_full)$cov.unscaled
V_hc0 <- B %*% crossprod(X * (w_csv$falls - mu)) %*% B
spec <- spec_of(rate_outcome, "poisson", list(standardErrors = "robust"))
write_json(with_dataset(categorical_case("wards-rate-poisson-robust", spec, w_csv, r_full, NULL, V_hc0, TRUE, wald(r_full, V_hc0, spec), z95), "wards"),
  "wards-rate-poisson-robust")
V_cr1 <- cr1(X, w_csv$falls - mu, mu, w_csv$site)
spec <- spec_of(rate_outcome, "poisson", list(cluster = list(column = "site")))
write_json(with_dataset(categorical_case("wards-rate-poisson-cluster", spec, w_csv, r_full, NULL, V_cr1, TRUE, wald(r_full, V_cr1, spec), z95), "wards",
  list(clusters = G)), "wards-rate-poisson-cluster")

# ---- frequency weights: glm(..., weights = count), Poisson rates with CR1 by hand ----
spec <- spec_of(rate_outcome, "poisson", list(cluster = list(column = "site"), weights = list(column = "count")))
rw <- fit_w(falls ~ called * frailty + age + offset(log(bed_days)), poisson, w_csv)
X <- model.matrix(rw); mu <- fitted(rw)
V_w <- cr1(X, w_csv$falls - mu, mu, w_csv$site, w_csv$count)
x <- categorical_case("wards-weights-rate-poisson-cluster", spec, w_csv, rw, NULL, V_w, TRUE, wald(rw, V_w, spec), z95)
x$residualDf <- sum(w_csv$count) - ncol(X)
write_json(with_dataset(x, "wards", list(units = sum(w_csv$count), clusters = G)), "wards-weights-rate-poisson-cluster")

# ---- frequency weights: esoph as grouped counts, glm(case ~ ..., binomial, weights = count) ----
grouped <- rbind(
  data.frame(case = 1L, count = esoph$ncases, alcgp = esoph$alcgp, tobgp = esoph$tobgp, agegp = esoph$agegp),
  data.frame(case = 0L, count = esoph$ncontrols, alcgp = esoph$alcgp, tobgp = esoph$tobgp, agegp = esoph$agegp)
)
grouped <- grouped[grouped$count > 0, ]
esoph_grouped <- data.frame(
  case = grouped$case,
  count = grouped$count,
  alcohol_high = as.integer(as.character(grouped$alcgp) %in% c("80-119", "120+")),
  tobacco = as.character(grouped$tobgp),
  agegp = as.character(grouped$agegp)
)
path <- file.path(out, "data", "esophgrouped.csv")
write.csv(esoph_grouped, path, row.names = FALSE)
eg <- read.csv(path, stringsAsFactors = FALSE)
eg$tobacco <- relevel(factor(eg$tobacco), ref = "0-9g/day")
eg$agegp <- relevel(factor(eg$agegp), ref = "25-34")
spec <- list(
  outcome = list(column = "case", type = "binary"),
  exposure = list(column = "alcohol_high", reference = "0"),
  modifier = list(column = "tobacco", type = "categorical", reference = "0-9g/day"),
  covariates = arr(list(list(column = "agegp", type = "categorical", reference = "25-34"))),
  model = "logistic",
  ci = list(level = 0.95, method = "delta"),
  weights = list(column = "count")
)
gw <- fit_w(case ~ alcohol_high * tobacco + agegp, binomial, eg)
gw_red <- fit_w(case ~ alcohol_high + tobacco + agegp, binomial, eg)
lrt_g <- anova(gw_red, gw, test = "LRT")
x <- categorical_case("esophgrouped-weights-logistic", spec, eg, gw, gw_red, vcov(gw), TRUE,
  list(statistic = lrt_g$Deviance[2], df = lrt_g$Df[2], p = lrt_g[["Pr(>Chi)"]][2]), z95)
x$residualDf <- sum(eg$count) - length(coef(gw))
write_json(with_dataset(x, "esophgrouped", list(units = sum(eg$count))), "esophgrouped-weights-logistic")

# ---- log-binomial, clusters: glm(readmitted ~ called * frailty + age, binomial(link = "log")) + CR1 by hand ----
# Score factor (y - mu)/(1 - mu) (the binomial score under the log link), working weight mu/(1 - mu).
spec <- spec_of(list(column = "readmitted", type = "binary"), "log-binomial", list(cluster = list(column = "site")))
f <- fit_ml(readmitted ~ called * frailty + age, binomial(link = "log"), w_csv, start = c(log(mean(w_csv$readmitted)), rep(0, 6)))
X <- model.matrix(f); mu <- fitted(f)
V <- cr1(X, (w_csv$readmitted - mu) / (1 - mu), mu / (1 - mu), w_csv$site)
write_json(with_dataset(categorical_case("wards-cluster-log-binomial", spec, w_csv, f, NULL, V, TRUE, wald(f, V, spec), z95), "wards",
  list(clusters = G)), "wards-cluster-log-binomial")

# ---- Poisson rates, continuous modifier (age), clusters: slopes, Johnson-Neyman and band with CR1 ----
spec <- list(
  outcome = rate_outcome,
  exposure = list(column = "called", reference = "0"),
  modifier = list(column = "age", type = "continuous"),
  covariates = arr(list(list(column = "frailty", type = "categorical", reference = "low"))),
  model = "poisson",
  ci = list(level = 0.95, method = "delta"),
  cluster = list(column = "site")
)
ra <- fit_ml(falls ~ called * age + frailty + offset(log(bed_days)), poisson, w_csv)
X <- model.matrix(ra); mu <- fitted(ra)
V <- cr1(X, w_csv$falls - mu, mu, w_csv$site)
idx <- grep(":", names(coef(ra)), fixed = TRUE)
stat <- coef(ra)[idx]^2 / V[idx, idx]
write_json(c(continuous_case("wards-rate-poisson-cluster-age", spec, ra, V, z95, z95, "age", TRUE, Inf,
  list(statistic = stat, df = 1, p = pchisq(stat, 1, lower.tail = FALSE))), list(dataset = "wards", clusters = G)), "wards-rate-poisson-cluster-age")
