# Reference values for the engine, computed with base R only (stats, datasets, utils).
#
# Usage (from the repository root):
#   Rscript tests/reference/r/make-fixtures.R [OUTPUT_DIR]
# OUTPUT_DIR defaults to tests/reference. The script writes
#   OUTPUT_DIR/data/<dataset>.csv        open datasets shipped with R, exported as CSV
#   OUTPUT_DIR/fixtures/<case>.json      the analysis specification and R's numbers
# Every model is fitted to the CSV as read back by read.csv, so R and the engine see the
# same doubles. Coefficients, SEs and log-likelihoods come from glm()/lm(), vcov(),
# logLik(), anova(), mantelhaen.test() and p.adjust(); derived measures (RERI, AP, AP*, S,
# MOVER limits, Johnson-Neyman boundaries, sandwich and HC3 variances) are computed here
# from coef() and vcov() with the published formulas, written out independently of the
# engine (Hosmer-Lemeshow gradients over (b1, b2, b3), Zou's MOVER, Bauer-Curran).
# Every glm() is fully converged (fit_ml below): glm.control(epsilon = 1e-14, maxit = 100),
# then refitted from its own estimate until coef() stops changing, so that the reference is
# the maximum-likelihood estimate itself and not where R's default rule stops (up to ~1e-4
# away in the standard errors). Each fixture also records glm()$iter under R's default
# glm.control() (iterationsDefault); infert-logistic records the default fit's numbers too.
# A seeded synthetic cohort (set.seed below) is generated here, needing 6 or more IRLS
# iterations under R's default rule, and fitted with every model family.
# Note: esoph's control counts changed in R 4.1.0; these fixtures record R.version.string.

args <- commandArgs(trailingOnly = TRUE)
out <- if (length(args) >= 1) args[1] else "tests/reference"
dir.create(file.path(out, "data"), recursive = TRUE, showWarnings = FALSE)
dir.create(file.path(out, "fixtures"), recursive = TRUE, showWarnings = FALSE)

# arr() and json(): a small JSON writer (base R has none), shared by the fixture scripts.
script_dir <- dirname(normalizePath(sub("^--file=", "", grep("^--file=", commandArgs(FALSE), value = TRUE))))
source(file.path(script_dir, "json.R"))
write_json <- function(x, name) writeLines(json(x), file.path(out, "fixtures", paste0(name, ".json")), useBytes = TRUE)

export_csv <- function(frame, name) {
  path <- file.path(out, "data", paste0(name, ".csv"))
  write.csv(frame, path, row.names = FALSE, na = "")
  read.csv(path, stringsAsFactors = FALSE)
}

# ---- datasets (all from R's datasets package) ------------------------------------------
# infert: case-control study of infertility after induced and spontaneous abortion.
infert_frame <- data.frame(
  case = infert$case,
  induced_any = as.integer(infert$induced > 0),
  spontaneous = infert$spontaneous,
  spontaneous_any = as.integer(infert$spontaneous > 0),
  education = as.character(infert$education),
  age = infert$age,
  parity = infert$parity
)
infert_csv <- export_csv(infert_frame, "infert")

# esoph: oesophageal cancer case-control study, grouped counts expanded to one row per person.
esoph_rows <- esoph[rep(seq_len(nrow(esoph)), esoph$ncases + esoph$ncontrols), ]
esoph_rows$case <- unlist(lapply(seq_len(nrow(esoph)), function(i) c(rep(1L, esoph$ncases[i]), rep(0L, esoph$ncontrols[i]))))
esoph_frame <- data.frame(
  case = esoph_rows$case,
  alcohol_high = as.integer(as.character(esoph_rows$alcgp) %in% c("80-119", "120+")),
  tobacco = as.character(esoph_rows$tobgp),
  agegp = as.character(esoph_rows$agegp)
)
esoph_csv <- export_csv(esoph_frame, "esoph")

# UCBAdmissions: graduate admissions at Berkeley, 1973, expanded to one row per applicant.
ucb <- as.data.frame(UCBAdmissions)
ucb_rows <- ucb[rep(seq_len(nrow(ucb)), ucb$Freq), ]
ucb_frame <- data.frame(
  admitted = as.integer(ucb_rows$Admit == "Admitted"),
  female = as.integer(ucb_rows$Gender == "Female"),
  dept = as.character(ucb_rows$Dept)
)
ucb_csv <- export_csv(ucb_frame, "ucbadmissions")

# mtcars: Motor Trend road tests; am is 0 automatic, 1 manual.
mtcars_csv <- export_csv(data.frame(mpg = mtcars$mpg, am = mtcars$am, wt = mtcars$wt, hp = mtcars$hp), "mtcars")

# ToothGrowth: guinea-pig odontoblast length by supplement (OJ, VC) and dose.
tooth_csv <- export_csv(data.frame(len = ToothGrowth$len, supp = as.character(ToothGrowth$supp), dose = ToothGrowth$dose), "toothgrowth")

# ---- helpers -----------------------------------------------------------------------------
# glm() to the maximum: tight control, then restarts from the estimate while coef() moves
# (under a non-canonical link Fisher scoring converges linearly, and a deviance rule of
# 1e-14 can still stop ~1e-8 short of the maximum). fit$iter stays the first fit's count;
# fit$iterDefault is glm()$iter under glm.control() defaults (epsilon = 1e-8, maxit = 25).
tight <- glm.control(epsilon = 1e-14, maxit = 100)
fit_ml <- function(formula, family, data, start = NULL) {
  fit <- glm(formula, family = family, data = data, start = start, control = tight)
  stopifnot(fit$converged)
  iter <- fit$iter
  for (k in 1:20) {
    again <- glm(formula, family = family, data = data, start = coef(fit), control = tight)
    change <- max(abs(coef(again) - coef(fit)) / (abs(coef(fit)) + 1e-3))
    fit <- again
    if (change < 1e-13) break
  }
  fit$iter <- iter
  fit$iterDefault <- glm(formula, family = family, data = data, start = start)$iter
  fit
}

# Reorder R's coefficients to the engine's term order: intercept, exposure, modifier terms,
# exposure × modifier products, covariates.
engine_order <- function(names, exposure, modifier) {
  product <- grepl(":", names, fixed = TRUE)
  expo <- !product & startsWith(names, exposure)
  mod <- !product & !expo & startsWith(names, modifier)
  c(1, which(expo), which(mod), which(product), which(!product & !mod & !expo & seq_along(names) > 1))
}

interval <- function(est, se, crit, ratio) {
  if (ratio) list(estimate = exp(est), lower = exp(est - crit * se), upper = exp(est + crit * se))
  else list(estimate = est, lower = est - crit * se, upper = est + crit * se)
}

contrast_effect <- function(b, V, cvec, crit, ratio, df = Inf) {
  est <- sum(cvec * b)
  se <- sqrt(drop(t(cvec) %*% V %*% cvec))
  p <- if (is.finite(df)) 2 * pt(-abs(est / se), df) else 2 * pnorm(-abs(est / se))
  c(interval(est, se, crit, ratio), list(se = se, p = p))
}

# Hosmer and Lemeshow (1992) delta method over (b1, b2, b3); Zou (2008) MOVER for RERI.
additive_measures <- function(b1, b2, b3, V3, z) {
  e10 <- exp(b1); e01 <- exp(b2); e11 <- exp(b1 + b2 + b3)
  dm <- function(est, h) { se <- sqrt(drop(t(h) %*% V3 %*% h)); list(estimate = est, se = se, lower = est - z * se, upper = est + z * se) }
  reri <- dm(e11 - e10 - e01 + 1, c(e11 - e10, e11 - e01, e11))
  ap <- dm((e11 - e10 - e01 + 1) / e11, c((e01 - 1) / e11, (e10 - 1) / e11, (e10 + e01 - 1) / e11))
  # AP* = RERI / (E11 - 1): gradient by the quotient rule over (b1, b2, b3).
  g_reri <- c(e11 - e10, e11 - e01, e11); g_e11 <- c(e11, e11, e11)
  apstar_est <- (e11 - e10 - e01 + 1) / (e11 - 1)
  apstar <- dm(apstar_est, (g_reri * (e11 - 1) - (e11 - e10 - e01 + 1) * g_e11) / (e11 - 1)^2)
  D <- e10 + e01 - 2; k <- e11 / (e11 - 1)
  s <- NULL
  if (D > 0 && e11 > 1) {
    h <- c(k - e10 / D, k - e01 / D, k)
    lse <- sqrt(drop(t(h) %*% V3 %*% h))
    ls <- log((e11 - 1) / D)
    s <- list(estimate = exp(ls), se = lse, lower = exp(ls - z * lse), upper = exp(ls + z * lse))
  }
  # MOVER: log-scale covariance of (ln θ10, ln θ01, ln θ11).
  C <- rbind(c(1, 0, 0), c(0, 1, 0), c(1, 1, 1))
  L <- C %*% V3 %*% t(C)
  se <- sqrt(diag(L)); r <- L / outer(se, se)
  th <- c(e10, e01, e11); lo <- exp(log(th) - z * se); hi <- exp(log(th) + z * se)
  est <- th[3] - th[1] - th[2] + 1
  lower <- est - sqrt((th[3] - lo[3])^2 + (hi[1] - th[1])^2 + (hi[2] - th[2])^2 -
    2 * r[3, 1] * (th[3] - lo[3]) * (hi[1] - th[1]) - 2 * r[3, 2] * (th[3] - lo[3]) * (hi[2] - th[2]) +
    2 * r[1, 2] * (hi[1] - th[1]) * (hi[2] - th[2]))
  upper <- est + sqrt((hi[3] - th[3])^2 + (th[1] - lo[1])^2 + (th[2] - lo[2])^2 -
    2 * r[3, 1] * (hi[3] - th[3]) * (th[1] - lo[1]) - 2 * r[3, 2] * (hi[3] - th[3]) * (th[2] - lo[2]) +
    2 * r[1, 2] * (th[1] - lo[1]) * (th[2] - lo[2]))
  list(reri = reri, ap = ap, apStar = apstar, s = s, reriMover = list(lower = lower, upper = upper))
}

# Everything the engine reports for a binary exposure × categorical modifier model.
categorical_case <- function(name, spec, frame, fit, reduced, V, ratio, omnibus, crit, df = Inf, extra = list()) {
  y <- model.response(model.frame(fit))
  nm <- names(coef(fit))
  ord <- engine_order(nm, spec$exposure$column, spec$modifier$column)
  b <- coef(fit)[ord]; V <- V[ord, ord]
  p <- length(b)
  mod_levels <- c(spec$modifier$reference, setdiff(unique(frame[[spec$modifier$column]]), spec$modifier$reference))
  K <- length(mod_levels)
  levels_in_order <- c(spec$modifier$reference, sub(paste0("^", spec$modifier$column), "", nm[ord][3:(K + 1)]))
  e <- function(...) { v <- numeric(p); for (j in c(...)) v[j] <- v[j] + 1; v }
  strata <- lapply(seq_len(K), function(k) contrast_effect(b, V, if (k == 1) e(2) else e(2, 1 + K + k - 1), crit, ratio, df))
  strata_p <- vapply(strata, function(s) s$p, 0)
  modifier_effects <- list()
  for (arm in 0:1) for (k in 2:K) {
    cv <- if (arm == 0) e(k + 1) else e(k + 1, 1 + K + k - 1)
    modifier_effects[[length(modifier_effects) + 1]] <- c(list(arm = arm, level = levels_in_order[k]), contrast_effect(b, V, cv, crit, ratio, df))
  }
  joint <- list()
  for (k in seq_len(K)) for (arm in 0:1) {
    if (k == 1 && arm == 0) next
    cv <- numeric(p)
    if (arm == 1) cv[2] <- 1
    if (k > 1) cv[k + 1] <- 1
    if (arm == 1 && k > 1) cv[1 + K + k - 1] <- 1
    joint[[length(joint) + 1]] <- c(list(arm = arm, level = levels_in_order[k]), contrast_effect(b, V, cv, crit, ratio, df))
  }
  multiplicative <- list(); additive <- list(); diffs <- list()
  for (k in 2:K) {
    b1 <- b[2]; b2 <- b[k + 1]; b3 <- b[1 + K + k - 1]
    idx <- c(2, k + 1, 1 + K + k - 1)
    if (ratio) {
      multiplicative[[k - 1]] <- c(list(level = levels_in_order[k]), contrast_effect(b, V, e(1 + K + k - 1), crit, TRUE, df))
      additive[[k - 1]] <- c(list(level = levels_in_order[k]), additive_measures(b1, b2, b3, V[idx, idx], crit))
    } else {
      diffs[[k - 1]] <- c(list(level = levels_in_order[k]), contrast_effect(b, V, e(1 + K + k - 1), crit, FALSE, df))
    }
  }
  product_se <- sqrt(diag(V))[(K + 2):(2 * K)]
  base <- list(
    name = name,
    r = R.version.string,
    spec = spec,
    levels = arr(levels_in_order),
    coefficients = list(term = arr(nm[ord]), estimate = arr(unname(b)), se = arr(unname(sqrt(diag(V))))),
    covariance = arr(lapply(seq_len(p), function(i) arr(unname(V[i, ])))),
    logLik = as.numeric(logLik(fit)),
    aic = AIC(fit),
    deviance = deviance(fit),
    iterations = if (is.null(fit$iter)) 0 else fit$iter,
    iterationsDefault = if (is.null(fit$iterDefault)) 0 else fit$iterDefault,
    residualDf = df.residual(fit),
    omnibus = omnibus,
    strata = arr(strata),
    strataHolm = arr(p.adjust(strata_p, "holm")),
    strataBH = arr(p.adjust(strata_p, "BH")),
    modifierEffects = arr(modifier_effects),
    joint = arr(joint),
    multiplicative = arr(multiplicative),
    additive = arr(additive),
    differenceInDifferences = arr(diffs),
    productSe = arr(unname(product_se))
  )
  c(base, extra)
}

z95 <- qnorm(0.975)

# ---- case: infert, logistic, number of spontaneous abortions (0, 1, 2) as modifier -------------
# (education is not used as the modifier: its 0-5yrs stratum has no unexposed cases, so
# its product term is not estimable.)
spec_infert <- function(model, method = "delta") list(
  outcome = list(column = "case", type = "binary"),
  exposure = list(column = "induced_any", reference = "0"),
  modifier = list(column = "spontaneous", type = "categorical", reference = "0"),
  covariates = arr(list(list(column = "age", type = "continuous"), list(column = "parity", type = "continuous"),
    list(column = "education", type = "categorical", reference = "6-11yrs"))),
  model = model,
  ci = list(level = 0.95, method = method)
)
d <- infert_csv
d$education <- relevel(factor(d$education), ref = "6-11yrs")
d$spontaneous <- factor(d$spontaneous)
f_full <- fit_ml(case ~ induced_any * spontaneous + age + parity + education, binomial, d)
f_red <- fit_ml(case ~ induced_any + spontaneous + age + parity + education, binomial, d)
lrt <- anova(f_red, f_full, test = "LRT")
write_json(categorical_case("infert-logistic", spec_infert("logistic"), d, f_full, f_red, vcov(f_full), TRUE,
  list(statistic = lrt$Deviance[2], df = lrt$Df[2], p = lrt[["Pr(>Chi)"]][2]), z95), "infert-logistic")

# ---- case: infert, modified Poisson (HC0 sandwich, no finite-sample factor) -------------------
f_pois <- fit_ml(case ~ induced_any * spontaneous + age + parity + education, poisson, d)
X <- model.matrix(f_pois)
B <- summary(f_pois)$cov.unscaled
U <- X * (d$case - fitted(f_pois))
V_sand <- B %*% crossprod(U) %*% B
prod_idx <- which(grepl(":", colnames(X), fixed = TRUE))
wald <- drop(t(coef(f_pois)[prod_idx]) %*% solve(V_sand[prod_idx, prod_idx]) %*% coef(f_pois)[prod_idx])
write_json(categorical_case("infert-modified-poisson", spec_infert("modified-poisson"), d, f_pois, NULL, V_sand, TRUE,
  list(statistic = wald, df = length(prod_idx), p = pchisq(wald, length(prod_idx), lower.tail = FALSE)), z95), "infert-modified-poisson")

# ---- case: esoph, logistic, tobacco as modifier, age group as covariate ------------------------
e <- esoph_csv
e$tobacco <- relevel(factor(e$tobacco), ref = "0-9g/day")
e$agegp <- relevel(factor(e$agegp), ref = "25-34")
spec_esoph <- list(
  outcome = list(column = "case", type = "binary"),
  exposure = list(column = "alcohol_high", reference = "0"),
  modifier = list(column = "tobacco", type = "categorical", reference = "0-9g/day"),
  covariates = arr(list(list(column = "agegp", type = "categorical", reference = "25-34"))),
  model = "logistic",
  ci = list(level = 0.95, method = "delta")
)
g_full <- fit_ml(case ~ alcohol_high * tobacco + agegp, binomial, e)
g_red <- fit_ml(case ~ alcohol_high + tobacco + agegp, binomial, e)
lrt_e <- anova(g_red, g_full, test = "LRT")
# Stratified tables by tobacco: rows exposure (1 first), columns outcome (1 first).
tab_e <- table(factor(e$alcohol_high, levels = c(1, 0)), factor(e$case, levels = c(1, 0)), e$tobacco)
mh_e <- mantelhaen.test(tab_e)
woolf <- function(tab) {
  y <- apply(tab, 3, function(t) log(t[1, 1] * t[2, 2] / (t[1, 2] * t[2, 1])))
  w <- apply(tab, 3, function(t) 1 / sum(1 / t))
  stat <- sum(w * (y - sum(w * y) / sum(w))^2)
  list(statistic = stat, df = dim(tab)[3] - 1, p = pchisq(stat, dim(tab)[3] - 1, lower.tail = FALSE))
}
# Mantel-Haenszel risk difference (Greenland and Robins 1985) with Sato's (1989) variance and
# Greenland and Robins' (1985) variance, written out from the published formulas.
mh_risk_difference <- function(tab, z) {
  a <- tab[1, 1, ]; b <- tab[1, 2, ]; c <- tab[2, 1, ]; d <- tab[2, 2, ]
  n1 <- a + b; n0 <- c + d; N <- n1 + n0
  W <- n1 * n0 / N
  rd <- sum((a * n0 - c * n1) / N) / sum(W)
  P <- (n1^2 * c - n0^2 * a + n1 * n0 * (n0 - n1) / 2) / N^2
  Q <- (a * (n0 - c) + c * (n1 - a)) / (2 * N)
  se_sato <- sqrt((rd * sum(P) + sum(Q)) / sum(W)^2)
  se_gr <- sqrt(sum(W^2 * (a * b / n1^3 + c * d / n0^3)) / sum(W)^2)
  list(estimate = rd,
    sato = list(se = se_sato, lower = rd - z * se_sato, upper = rd + z * se_sato),
    greenlandRobins = list(se = se_gr, lower = rd - z * se_gr, upper = rd + z * se_gr))
}
mh_block <- function(mh, tab) list(
  oddsRatio = list(estimate = unname(mh$estimate), lower = mh$conf.int[1], upper = mh$conf.int[2]),
  riskDifference = mh_risk_difference(tab, qnorm(0.975)),
  chiSquare = list(statistic = unname(mh$statistic), df = unname(mh$parameter), p = mh$p.value),
  woolf = woolf(tab),
  counts = arr(lapply(seq_len(dim(tab)[3]), function(k) list(level = dimnames(tab)[[3]][k], a = tab[1, 1, k], b = tab[1, 2, k], c = tab[2, 1, k], d = tab[2, 2, k])))
)
write_json(categorical_case("esoph-logistic", spec_esoph, e, g_full, g_red, vcov(g_full), TRUE,
  list(statistic = lrt_e$Deviance[2], df = lrt_e$Df[2], p = lrt_e[["Pr(>Chi)"]][2]), z95,
  extra = list(mantelHaenszel = mh_block(mh_e, tab_e))), "esoph-logistic")

# ---- case: UCBAdmissions, logistic, department as modifier ------------------------------------
u <- ucb_csv
u$dept <- factor(u$dept)
spec_ucb <- list(
  outcome = list(column = "admitted", type = "binary"),
  exposure = list(column = "female", reference = "0"),
  modifier = list(column = "dept", type = "categorical", reference = "A"),
  covariates = arr(list()),
  model = "logistic",
  ci = list(level = 0.95, method = "mover")
)
h_full <- fit_ml(admitted ~ female * dept, binomial, u)
h_red <- fit_ml(admitted ~ female + dept, binomial, u)
lrt_u <- anova(h_red, h_full, test = "LRT")
tab_u <- table(factor(u$female, levels = c(1, 0)), factor(u$admitted, levels = c(1, 0)), u$dept)
mh_u <- mantelhaen.test(tab_u)
write_json(categorical_case("ucbadmissions-logistic", spec_ucb, u, h_full, h_red, vcov(h_full), TRUE,
  list(statistic = lrt_u$Deviance[2], df = lrt_u$Df[2], p = lrt_u[["Pr(>Chi)"]][2]), z95,
  extra = list(mantelHaenszel = mh_block(mh_u, tab_u))), "ucbadmissions-logistic")

# ---- case: ToothGrowth, linear, dose as categorical modifier (classical and HC3) -------------------
tg <- tooth_csv
tg$supp <- relevel(factor(tg$supp), ref = "VC")
tg$dose <- relevel(factor(tg$dose), ref = "0.5")
spec_tooth <- function(se) list(
  outcome = list(column = "len", type = "continuous"),
  exposure = list(column = "supp", reference = "VC"),
  modifier = list(column = "dose", type = "categorical", reference = "0.5"),
  covariates = arr(list()),
  model = "linear",
  ci = list(level = 0.95, method = "delta"),
  standardErrors = se
)
hc3 <- function(fit) {
  X <- model.matrix(fit); h <- hatvalues(fit); r <- residuals(fit)
  XtXi <- solve(crossprod(X))
  XtXi %*% crossprod(X * (r / (1 - h))) %*% XtXi
}
l_full <- lm(len ~ supp * dose, data = tg)
l_red <- lm(len ~ supp + dose, data = tg)
ft <- anova(l_red, l_full)
tcrit <- qt(0.975, df.residual(l_full))
omni_tooth <- list(statistic = ft$F[2], df = ft$Df[2], df2 = ft$Res.Df[2], p = ft[["Pr(>F)"]][2])
write_json(categorical_case("toothgrowth-linear", spec_tooth("model"), tg, l_full, l_red, vcov(l_full), FALSE, omni_tooth, tcrit, df.residual(l_full)), "toothgrowth-linear")
write_json(categorical_case("toothgrowth-linear-hc3", spec_tooth("hc3"), tg, l_full, l_red, hc3(l_full), FALSE, omni_tooth, tcrit, df.residual(l_full)), "toothgrowth-linear-hc3")

# ---- continuous modifiers: slopes, Johnson-Neyman, band ----------------------------------------
continuous_case <- function(name, spec, fit, V, crit, jn_crit, modifier, ratio, df, omnibus) {
  nm <- names(coef(fit))
  expo <- spec$exposure$column
  ord <- c(1, which(nm == expo), which(nm == modifier), which(grepl(":", nm, fixed = TRUE)),
    which(!(nm %in% c("(Intercept)", expo, modifier)) & !grepl(":", nm, fixed = TRUE)))
  b <- coef(fit)[ord]; V <- V[ord, ord]; p <- length(b)
  x <- model.frame(fit)[[modifier]]
  m <- mean(x); s <- sd(x)
  slope <- function(at) { cv <- numeric(p); cv[2] <- 1; cv[4] <- at; contrast_effect(b, V, cv, crit, ratio, df) }
  slopes <- lapply(c(m - s, m, m + s), function(at) c(list(at = at), slope(at)))
  # Bauer and Curran (2005): (b3² − t²V33)x² + 2(b1b3 − t²V13)x + (b1² − t²V11) = 0.
  A <- b[4]^2 - jn_crit^2 * V[4, 4]; Bq <- 2 * (b[2] * b[4] - jn_crit^2 * V[2, 4]); Cq <- b[2]^2 - jn_crit^2 * V[2, 2]
  disc <- Bq^2 - 4 * A * Cq
  roots <- if (disc >= 0) sort(c((-Bq - sqrt(disc)) / (2 * A), (-Bq + sqrt(disc)) / (2 * A))) else numeric(0)
  grid <- seq(min(x), max(x), length.out = 100)
  band <- lapply(c(1, 50, 100), function(i) c(list(index = i - 1, x = grid[i]), slope(grid[i])))
  # Additive measures for a +1 SD contrast from the mean (ratio models only).
  additive <- NULL
  if (ratio) {
    pad <- rep(0, p - 4)
    C <- rbind(c(0, 1, 0, m, pad), c(0, 0, s, 0, pad), c(0, 1, s, m + s, pad))
    l <- drop(C %*% b); L <- C %*% V %*% t(C)
    # Over (l10, l01, l11), with the chain rule from (b1, b2, b3)-space formulas: use the same
    # Hosmer-Lemeshow expressions with b1 = l10, b2 = l01, b3 = l11 - l10 - l01.
    T <- rbind(c(1, 0, 0), c(0, 1, 0), c(-1, -1, 1))
    additive <- additive_measures(l[1], l[2], l[3] - l[1] - l[2], T %*% L %*% t(T), crit)
  }
  list(
    name = name, r = R.version.string, spec = spec,
    coefficients = list(term = arr(nm[ord]), estimate = arr(unname(b)), se = arr(unname(sqrt(diag(V))))),
    logLik = as.numeric(logLik(fit)), aic = AIC(fit), deviance = deviance(fit),
    iterations = if (is.null(fit$iter)) 0 else fit$iter,
    iterationsDefault = if (is.null(fit$iterDefault)) 0 else fit$iterDefault, residualDf = df.residual(fit),
    omnibus = omnibus,
    mean = m, sd = s, observed = arr(range(x)),
    multiplicative = if (ratio) contrast_effect(b, V, c(0, 0, 0, 1, rep(0, p - 4)), crit, TRUE, df) else NULL,
    slopes = arr(slopes),
    johnsonNeyman = list(leading = A, bounds = arr(roots), critical = jn_crit),
    band = arr(band),
    additive = additive
  )
}
mt <- mtcars_csv
spec_mt <- function(se) list(
  outcome = list(column = "mpg", type = "continuous"),
  exposure = list(column = "am", reference = "0"),
  modifier = list(column = "wt", type = "continuous"),
  covariates = arr(list(list(column = "hp", type = "continuous"))),
  model = "linear",
  ci = list(level = 0.95, method = "delta"),
  standardErrors = se
)
m_full <- lm(mpg ~ am * wt + hp, data = mt)
m_red <- lm(mpg ~ am + wt + hp, data = mt)
fm <- anova(m_red, m_full)
tm <- qt(0.975, df.residual(m_full))
omni_mt <- list(statistic = fm$F[2], df = fm$Df[2], df2 = fm$Res.Df[2], p = fm[["Pr(>F)"]][2])
write_json(continuous_case("mtcars-linear", spec_mt("model"), m_full, vcov(m_full), tm, tm, "wt", FALSE, df.residual(m_full), omni_mt), "mtcars-linear")
write_json(continuous_case("mtcars-linear-hc3", spec_mt("hc3"), m_full, hc3(m_full), tm, tm, "wt", FALSE, df.residual(m_full), omni_mt), "mtcars-linear-hc3")

d$spontaneous <- as.numeric(as.character(d$spontaneous))
spec_infert_age <- list(
  outcome = list(column = "case", type = "binary"),
  exposure = list(column = "spontaneous_any", reference = "0"),
  modifier = list(column = "age", type = "continuous"),
  covariates = arr(list(list(column = "parity", type = "continuous"))),
  model = "logistic",
  ci = list(level = 0.95, method = "delta")
)
k_full <- fit_ml(case ~ spontaneous_any * age + parity, binomial, d)
k_red <- fit_ml(case ~ spontaneous_any + age + parity, binomial, d)
lk <- anova(k_red, k_full, test = "LRT")
# What an analyst's own glm() call with R's default glm.control() gives (engine compared at 1e-5).
k_default <- glm(case ~ spontaneous_any * age + parity, family = binomial, data = d)
write_json(c(continuous_case("infert-logistic-continuous", spec_infert_age, k_full, vcov(k_full), z95, z95, "age", TRUE, Inf,
  list(statistic = lk$Deviance[2], df = lk$Df[2], p = lk[["Pr(>Chi)"]][2])),
  list(defaultGlm = list(control = "glm.control() defaults: epsilon = 1e-8, maxit = 25", term = arr(names(coef(k_default))),
    estimate = arr(unname(coef(k_default))), se = arr(unname(sqrt(diag(vcov(k_default)))))))), "infert-logistic-continuous")
# ---- case: UCBAdmissions, log-binomial from the start (log mean(y), 0, ...) ---------------------
spec_ucb_lb <- spec_ucb
spec_ucb_lb$model <- "log-binomial"
spec_ucb_lb$ci$method <- "delta"
p_full <- length(coef(h_full)); p_red <- length(coef(h_red))
lb_full <- fit_ml(admitted ~ female * dept, binomial(link = "log"), u, start = c(log(mean(u$admitted)), rep(0, p_full - 1)))
lb_red <- fit_ml(admitted ~ female + dept, binomial(link = "log"), u, start = c(log(mean(u$admitted)), rep(0, p_red - 1)))
stopifnot(lb_full$converged, lb_red$converged, max(fitted(lb_full)) < 1 - 1e-6)
lrt_lb <- anova(lb_red, lb_full, test = "LRT")
write_json(categorical_case("ucbadmissions-log-binomial", spec_ucb_lb, u, lb_full, lb_red, vcov(lb_full), TRUE,
  list(statistic = lrt_lb$Deviance[2], df = lrt_lb$Df[2], p = lrt_lb[["Pr(>Chi)"]][2]), z95), "ucbadmissions-log-binomial")

# ---- case: seeded synthetic cohort (invented data; the generator below sets the truth) ----------
# R's Mersenne-Twister, set.seed(20240609, kind = "Mersenne-Twister", normal.kind = "Inversion",
# sample.kind = "Rejection"). 3,000 synthetic patients: treated (0/1), frailty (low, mid, high),
# age (years) and creatinine (µmol/L, deliberately on a large scale); readmitted drawn from a
# log-linear risk (baseline 1 %, risk ratios 0.5 for treatment, 4 and 12 for frailty, 1.5 for
# treatment × high frailty); a continuous length of stay for the linear models. Under R's
# default rule the logistic fit needs 8 IRLS iterations, the Poisson fit 7, the log-binomial 6.
set.seed(20240609, kind = "Mersenne-Twister", normal.kind = "Inversion", sample.kind = "Rejection")
n_seeded <- 3000
treated <- rbinom(n_seeded, 1, 0.4)
frailty <- sample(c("low", "mid", "high"), n_seeded, replace = TRUE, prob = c(0.5, 0.3, 0.2))
age <- round(rnorm(n_seeded, 68, 12))
creatinine <- round(exp(rnorm(n_seeded, log(90), 0.35)))
risk_lp <- log(0.01) + log(0.5) * treated + c(low = 0, mid = log(4), high = log(12))[frailty] +
  log(1.5) * treated * (frailty == "high") + 0.02 * (age - 68) + 0.004 * (creatinine - 90)
readmitted <- rbinom(n_seeded, 1, pmin(exp(risk_lp), 0.95))
stay <- round(3 + 1.5 * treated + c(low = 0, mid = 2, high = 5)[frailty] - treated * (frailty == "high") +
  0.05 * (age - 68) + 0.01 * creatinine + rnorm(n_seeded, 0, 2), 2)
s_csv <- export_csv(data.frame(readmitted, stay, treated, frailty, age, creatinine), "seeded")
s_csv$frailty <- relevel(factor(s_csv$frailty), ref = "low")
spec_seeded <- function(model, outcome = "readmitted", se = NULL) {
  spec <- list(
    outcome = list(column = outcome, type = if (outcome == "readmitted") "binary" else "continuous"),
    exposure = list(column = "treated", reference = "0"),
    modifier = list(column = "frailty", type = "categorical", reference = "low"),
    covariates = arr(list(list(column = "age", type = "continuous"), list(column = "creatinine", type = "continuous"))),
    model = model,
    ci = list(level = 0.95, method = "delta")
  )
  if (!is.null(se)) spec$standardErrors <- se
  spec
}
s_full_f <- readmitted ~ treated * frailty + age + creatinine
s_red_f <- readmitted ~ treated + frailty + age + creatinine
lrt_of <- function(red, full) { a <- anova(red, full, test = "LRT"); list(statistic = a$Deviance[2], df = a$Df[2], p = a[["Pr(>Chi)"]][2]) }
s_logit <- fit_ml(s_full_f, binomial, s_csv)
write_json(categorical_case("seeded-logistic", spec_seeded("logistic"), s_csv, s_logit, NULL, vcov(s_logit), TRUE,
  lrt_of(fit_ml(s_red_f, binomial, s_csv), s_logit), z95), "seeded-logistic")
s_pois <- fit_ml(s_full_f, poisson, s_csv)
X_s <- model.matrix(s_pois)
V_s <- summary(s_pois)$cov.unscaled %*% crossprod(X_s * (s_csv$readmitted - fitted(s_pois))) %*% summary(s_pois)$cov.unscaled
prod_s <- which(grepl(":", colnames(X_s), fixed = TRUE))
wald_s <- drop(t(coef(s_pois)[prod_s]) %*% solve(V_s[prod_s, prod_s]) %*% coef(s_pois)[prod_s])
write_json(categorical_case("seeded-modified-poisson", spec_seeded("modified-poisson"), s_csv, s_pois, NULL, V_s, TRUE,
  list(statistic = wald_s, df = length(prod_s), p = pchisq(wald_s, length(prod_s), lower.tail = FALSE)), z95), "seeded-modified-poisson")
s_lb <- fit_ml(s_full_f, binomial(link = "log"), s_csv, start = c(log(mean(s_csv$readmitted)), rep(0, 7)))
s_lb_red <- fit_ml(s_red_f, binomial(link = "log"), s_csv, start = c(log(mean(s_csv$readmitted)), rep(0, 5)))
stopifnot(max(fitted(s_lb)) < 1 - 1e-6, max(fitted(s_lb_red)) < 1 - 1e-6)
write_json(categorical_case("seeded-log-binomial", spec_seeded("log-binomial"), s_csv, s_lb, NULL, vcov(s_lb), TRUE,
  lrt_of(s_lb_red, s_lb), z95), "seeded-log-binomial")
s_lm <- lm(stay ~ treated * frailty + age + creatinine, data = s_csv)
f_s <- anova(lm(stay ~ treated + frailty + age + creatinine, data = s_csv), s_lm)
omni_s <- list(statistic = f_s$F[2], df = f_s$Df[2], df2 = f_s$Res.Df[2], p = f_s[["Pr(>F)"]][2])
t_s <- qt(0.975, df.residual(s_lm))
write_json(categorical_case("seeded-linear", spec_seeded("linear", "stay", "model"), s_csv, s_lm, NULL, vcov(s_lm), FALSE, omni_s, t_s, df.residual(s_lm)), "seeded-linear")
write_json(categorical_case("seeded-linear-hc3", spec_seeded("linear", "stay", "hc3"), s_csv, s_lm, NULL, hc3(s_lm), FALSE, omni_s, t_s, df.residual(s_lm)), "seeded-linear-hc3")
cat("fixtures written to", out, "\n")
