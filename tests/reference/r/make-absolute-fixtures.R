# Reference values for standardized absolute effects and E-values, computed with base R only.
#
# Usage (from the repository root, after make-fixtures.R has written the data CSVs):
#   Rscript tests/reference/r/make-absolute-fixtures.R [OUTPUT_DIR]
# Reads tests/reference/data/<dataset>.csv and writes OUTPUT_DIR/absolute/<case>.json
# (OUTPUT_DIR defaults to tests/reference). Methods: shared/design/methods.md, "Rates, doses,
# absolute effects".
#
# Standardization (g-formula within each modifier level m), written out by hand:
#   r_a(m) = mean(predict(fit, newdata = rows of m with the intervention set to a, type = "response"))
#   gradient of r_a(m): colMeans(dmu * model.matrix(newdata)), dmu = mu(1 - mu) (logit),
#   mu (log), 1 (identity); RD(m) = r_1 - r_0 with gradient g_1 - g_0; IC(m) = RD(m) - RD(ref)
#   with gradient g(m) - g(ref); every se = sqrt(t(g) %*% V %*% g) with the fit's V: vcov() for
#   model-based fits, the HC0 sandwich written out for modified Poisson.
# E-values (VanderWeele and Ding, Ann Intern Med 2017;167:268-274) from the published formula:
#   RR >= 1: RR + sqrt(RR (RR - 1)); RR < 1: the same of 1/RR; interval: the limit nearer 1,
#   or 1 when the interval includes 1; odds ratios square-rooted when the level's outcome
#   proportion exceeds 0.15.
# Every glm() is fully converged: glm.control(epsilon = 1e-14, maxit = 100), refitted from its
# own estimate until coef() stops changing (as fit_ml in make-fixtures.R).

args <- commandArgs(trailingOnly = TRUE)
out <- if (length(args) >= 1) args[1] else "tests/reference"
data_dir <- "tests/reference/data"
dir.create(file.path(out, "absolute"), recursive = TRUE, showWarnings = FALSE)

# arr() and json(): a small JSON writer (base R has none), shared by the fixture scripts.
script_dir <- dirname(normalizePath(sub("^--file=", "", grep("^--file=", commandArgs(FALSE), value = TRUE))))
source(file.path(script_dir, "json.R"))
write_json <- function(x, name) writeLines(json(x), file.path(out, "absolute", paste0(name, ".json")), useBytes = TRUE)

tight <- glm.control(epsilon = 1e-14, maxit = 100)
fit_ml <- function(formula, family, data, start = NULL) {
  fit <- glm(formula, family = family, data = data, start = start, control = tight)
  stopifnot(fit$converged)
  for (k in 1:20) {
    again <- glm(formula, family = family, data = data, start = coef(fit), control = tight)
    change <- max(abs(coef(again) - coef(fit)) / (abs(coef(fit)) + 1e-3))
    fit <- again
    if (change < 1e-13) break
  }
  fit
}
hc0 <- function(fit, y) {
  X <- model.matrix(fit)
  B <- summary(fit)$cov.unscaled
  B %*% crossprod(X * (y - fitted(fit))) %*% B
}

# ---- standardization by hand ----------------------------------------------------------------
wald <- function(est, g, V, crit, df) {
  se <- sqrt(drop(t(g) %*% V %*% g))
  p <- if (is.finite(df)) 2 * pt(-abs(est / se), df) else 2 * pnorm(-abs(est / se))
  list(estimate = est, lower = est - crit * se, upper = est + crit * se, se = se, p = p)
}
standardized <- function(fit, V, data, exposure, modifier, link, crit, df = Inf) {
  tt <- delete.response(terms(fit))
  arm <- function(rows, a) {
    nd <- rows
    nd[[exposure]] <- a
    mu <- predict(fit, newdata = nd, type = "response")
    X <- model.matrix(tt, model.frame(tt, nd, xlev = fit$xlevels))
    dmu <- switch(link, logit = mu * (1 - mu), log = mu, identity = rep(1, length(mu)))
    list(risk = mean(mu), g = colMeans(X * dmu))
  }
  levels_m <- levels(data[[modifier]])
  parts <- lapply(levels_m, function(m) {
    rows <- data[data[[modifier]] == m, ]
    list(n = nrow(rows), a0 = arm(rows, 0), a1 = arm(rows, 1))
  })
  rd_g <- lapply(parts, function(x) x$a1$g - x$a0$g)
  rd <- vapply(parts, function(x) x$a1$risk - x$a0$risk, 0)
  arr(lapply(seq_along(levels_m), function(k) {
    x <- parts[[k]]
    list(
      level = levels_m[k], n = x$n,
      riskUnexposed = wald(x$a0$risk, x$a0$g, V, crit, df),
      riskExposed = wald(x$a1$risk, x$a1$g, V, crit, df),
      riskDifference = wald(rd[k], rd_g[[k]], V, crit, df),
      interactionContrast = if (k == 1) NULL else wald(rd[k] - rd[1], rd_g[[k]] - rd_g[[1]], V, crit, df)
    )
  }))
}

# ---- E-values from the published formula ----------------------------------------------------
evalue <- function(rr) { if (rr < 1) rr <- 1 / rr; rr + sqrt(rr * (rr - 1)) }
evalue_interval <- function(lo, hi) if (lo <= 1 && hi >= 1) 1 else evalue(if (lo > 1) lo else hi)
e_values <- function(fit, V, data, outcome, exposure, modifier, odds, crit) {
  b <- coef(fit)
  levels_m <- levels(data[[modifier]])
  arr(lapply(seq_along(levels_m), function(k) {
    cvec <- as.numeric(names(b) == exposure)
    if (k > 1) cvec <- cvec + as.numeric(names(b) == paste0(exposure, ":", modifier, levels_m[k]))
    est <- sum(cvec * b)
    se <- sqrt(drop(t(cvec) %*% V %*% cvec))
    ratio <- exp(c(est, est - crit * se, est + crit * se))
    prevalence <- mean(data[[outcome]][data[[modifier]] == levels_m[k]])
    conversion <- if (!odds) "none" else if (prevalence > 0.15) "square-root" else "rare-outcome"
    if (conversion == "square-root") ratio <- sqrt(ratio)
    list(level = levels_m[k], prevalence = prevalence, conversion = conversion, ratio = exp(est),
      estimate = evalue(ratio[1]), limit = evalue_interval(ratio[2], ratio[3]))
  }))
}

z95 <- qnorm(0.975)
case <- function(name, spec, std, ev = NULL) {
  spec$standardize <- TRUE
  write_json(list(name = name, r = R.version.string, spec = spec, standardized = std, eValues = ev), name)
}

# ---- seeded synthetic cohort (written by make-fixtures.R; invented data) -------------------------
s <- read.csv(file.path(data_dir, "seeded.csv"), stringsAsFactors = FALSE)
s$frailty <- relevel(factor(s$frailty), ref = "low")
spec_seeded <- function(model) list(
  outcome = list(column = "readmitted", type = "binary"),
  exposure = list(column = "treated", reference = "0"),
  modifier = list(column = "frailty", type = "categorical", reference = "low"),
  covariates = arr(list(list(column = "age", type = "continuous"), list(column = "creatinine", type = "continuous"))),
  model = model,
  ci = list(level = 0.95, method = "delta")
)
s_f <- readmitted ~ treated * frailty + age + creatinine
s_logit <- fit_ml(s_f, binomial, s)
case("seeded-logistic", spec_seeded("logistic"),
  standardized(s_logit, vcov(s_logit), s, "treated", "frailty", "logit", z95),
  e_values(s_logit, vcov(s_logit), s, "readmitted", "treated", "frailty", TRUE, z95))
s_pois <- fit_ml(s_f, poisson, s)
V_pois <- hc0(s_pois, s$readmitted)
case("seeded-modified-poisson", spec_seeded("modified-poisson"),
  standardized(s_pois, V_pois, s, "treated", "frailty", "log", z95),
  e_values(s_pois, V_pois, s, "readmitted", "treated", "frailty", FALSE, z95))
s_lb <- fit_ml(s_f, binomial(link = "log"), s, start = c(log(mean(s$readmitted)), rep(0, 7)))
stopifnot(max(fitted(s_lb)) < 1 - 1e-6)
case("seeded-log-binomial", spec_seeded("log-binomial"),
  standardized(s_lb, vcov(s_lb), s, "treated", "frailty", "log", z95),
  e_values(s_lb, vcov(s_lb), s, "readmitted", "treated", "frailty", FALSE, z95))
s_lm <- lm(s_f, data = s)
case("seeded-linear", spec_seeded("linear"),
  standardized(s_lm, vcov(s_lm), s, "treated", "frailty", "identity", qt(0.975, df.residual(s_lm)), df.residual(s_lm)))

# ---- infert: logistic, common outcome (E-values of square-rooted odds ratios) --------------------
d <- read.csv(file.path(data_dir, "infert.csv"), stringsAsFactors = FALSE)
d$education <- relevel(factor(d$education), ref = "6-11yrs")
d$spontaneous <- factor(d$spontaneous)
spec_infert <- list(
  outcome = list(column = "case", type = "binary"),
  exposure = list(column = "induced_any", reference = "0"),
  modifier = list(column = "spontaneous", type = "categorical", reference = "0"),
  covariates = arr(list(list(column = "age", type = "continuous"), list(column = "parity", type = "continuous"),
    list(column = "education", type = "categorical", reference = "6-11yrs"))),
  model = "logistic",
  ci = list(level = 0.95, method = "delta")
)
i_fit <- fit_ml(case ~ induced_any * spontaneous + age + parity + education, binomial, d)
case("infert-logistic", spec_infert,
  standardized(i_fit, vcov(i_fit), d, "induced_any", "spontaneous", "logit", z95),
  e_values(i_fit, vcov(i_fit), d, "case", "induced_any", "spontaneous", TRUE, z95))

# ---- esoph: logistic, four tobacco levels, categorical covariate -------------------------------
e <- read.csv(file.path(data_dir, "esoph.csv"), stringsAsFactors = FALSE)
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
e_fit <- fit_ml(case ~ alcohol_high * tobacco + agegp, binomial, e)
case("esoph-logistic", spec_esoph,
  standardized(e_fit, vcov(e_fit), e, "alcohol_high", "tobacco", "logit", z95),
  e_values(e_fit, vcov(e_fit), e, "case", "alcohol_high", "tobacco", TRUE, z95))

# ---- UCBAdmissions: log-binomial without covariates (risk ratios) -------------------------------
u <- read.csv(file.path(data_dir, "ucbadmissions.csv"), stringsAsFactors = FALSE)
u$dept <- factor(u$dept)
spec_ucb <- list(
  outcome = list(column = "admitted", type = "binary"),
  exposure = list(column = "female", reference = "0"),
  modifier = list(column = "dept", type = "categorical", reference = "A"),
  covariates = arr(list()),
  model = "log-binomial",
  ci = list(level = 0.95, method = "delta")
)
u_fit <- fit_ml(admitted ~ female * dept, binomial(link = "log"), u, start = c(log(mean(u$admitted)), rep(0, 11)))
stopifnot(max(fitted(u_fit)) < 1 - 1e-6)
case("ucbadmissions-log-binomial", spec_ucb,
  standardized(u_fit, vcov(u_fit), u, "female", "dept", "log", z95),
  e_values(u_fit, vcov(u_fit), u, "admitted", "female", "dept", FALSE, z95))
cat("absolute-effect fixtures written to", file.path(out, "absolute"), "\n")
