# Reference values for the subgroup screen, computed with base R only (stats, utils).
#
# Usage (from the repository root, after make-fixtures.R has written the data CSVs):
#   Rscript tests/reference/r/make-screen-fixtures.R [OUTPUT_DIR]
# Reads tests/reference/data/seeded.csv (the seeded synthetic cohort of make-fixtures.R;
# invented data) and writes OUTPUT_DIR/screen/<case>.json (OUTPUT_DIR defaults to
# tests/reference).
# Each modifier gets a model of its own: outcome ~ treated * modifier + covariates.
#   GLMs: glm(..., control = glm.control(epsilon = 1e-14, maxit = 100)), refitted from its own
#         estimate until coef() stops changing (fit_ml, as in make-fixtures.R); the interaction
#         test is anova(reduced, full, test = "LRT") with reduced = treated + modifier + covariates.
#   lm:   anova(reduced, full) F test.
# Stratum effects (categorical): b_treated + b_treated:level, se sqrt(c' vcov c), limits
# est ± qnorm(0.975) se (qt for lm), exponentiated for the logistic model.
# Slopes (continuous): b_treated + b_product * x at x = mean − sd, mean, mean + sd.
# Across the modifiers: p.adjust(p, method = "holm") and p.adjust(p, method = "BH").

args <- commandArgs(trailingOnly = TRUE)
out <- if (length(args) >= 1) args[1] else "tests/reference"
dir.create(file.path(out, "screen"), recursive = TRUE, showWarnings = FALSE)

# arr() and json(): a small JSON writer (base R has none), shared by the fixture scripts.
script_dir <- dirname(normalizePath(sub("^--file=", "", grep("^--file=", commandArgs(FALSE), value = TRUE))))
source(file.path(script_dir, "json.R"))

tight <- glm.control(epsilon = 1e-14, maxit = 100)
fit_ml <- function(formula, family, data) {
  fit <- glm(formula, family = family, data = data, control = tight)
  stopifnot(fit$converged)
  for (k in 1:20) {
    again <- glm(formula, family = family, data = data, start = coef(fit), control = tight)
    change <- max(abs(coef(again) - coef(fit)) / (abs(coef(fit)) + 1e-3))
    fit <- again
    if (change < 1e-13) break
  }
  fit
}

seeded <- read.csv("tests/reference/data/seeded.csv", stringsAsFactors = FALSE)
seeded$frailty <- relevel(factor(seeded$frailty), ref = "low")

effect <- function(fit, cvec, ratio, df) {
  b <- coef(fit); V <- vcov(fit)
  est <- sum(cvec * b); se <- sqrt(drop(t(cvec) %*% V %*% cvec))
  crit <- if (is.finite(df)) qt(0.975, df) else qnorm(0.975)
  p <- if (is.finite(df)) 2 * pt(-abs(est / se), df) else 2 * pnorm(-abs(est / se))
  lo <- est - crit * se; hi <- est + crit * se
  if (ratio) list(estimate = exp(est), lower = exp(lo), upper = exp(hi), se = se, p = p)
  else list(estimate = est, lower = lo, upper = hi, se = se, p = p)
}

screen_case <- function(spec, data, linear) {
  outcome <- spec$outcome$column
  covs <- vapply(unclass(spec$covariates), function(c) c$column, "")
  rhs_cov <- if (length(covs)) paste("+", paste(covs, collapse = " + ")) else ""
  entries <- lapply(unclass(spec$modifiers), function(m) {
    full_f <- as.formula(paste(outcome, "~ treated *", m$column, rhs_cov))
    red_f <- as.formula(paste(outcome, "~ treated +", m$column, rhs_cov))
    if (linear) {
      full <- lm(full_f, data = data); red <- lm(red_f, data = data)
      a <- anova(red, full)
      test <- list(test = "F", statistic = a$F[2], df = a$Df[2], df2 = a$Res.Df[2], p = a[["Pr(>F)"]][2])
      df <- df.residual(full)
    } else {
      full <- fit_ml(full_f, binomial, data); red <- fit_ml(red_f, binomial, data)
      a <- anova(red, full, test = "LRT")
      test <- list(test = "likelihood-ratio", statistic = a$Deviance[2], df = a$Df[2], df2 = NULL, p = a[["Pr(>Chi)"]][2])
      df <- Inf
    }
    nm <- names(coef(full))
    unit <- function(...) { v <- numeric(length(nm)); v[match(c(...), nm)] <- 1; v }
    strata <- list(); slopes <- list()
    if (m$type == "categorical") {
      levels <- c(m$reference, setdiff(levels(factor(data[[m$column]])), m$reference))
      strata <- lapply(levels, function(l) c(list(level = l),
        effect(full, if (l == m$reference) unit("treated") else unit("treated", paste0("treated:", m$column, l)), !linear, df)))
    } else {
      x <- data[[m$column]]; mu <- mean(x); s <- sd(x)
      slopes <- lapply(c(mu - s, mu, mu + s), function(at) {
        cvec <- unit("treated"); cvec[match(paste0("treated:", m$column), nm)] <- at
        c(list(at = at), effect(full, cvec, !linear, df))
      })
    }
    list(column = m$column, n = nobs(full), interaction = test, strata = arr(strata), slopes = arr(slopes))
  })
  p <- vapply(entries, function(e) e$interaction$p, 0)
  holm <- p.adjust(p, method = "holm"); bh <- p.adjust(p, method = "BH")
  for (i in seq_along(entries)) { entries[[i]]$holm <- holm[i]; entries[[i]]$bh <- bh[i] }
  list(r = R.version.string, spec = spec, modifiers = arr(entries))
}

modifier <- function(column, type, reference = NULL) {
  m <- list(column = column, type = type)
  if (!is.null(reference)) m$reference <- reference
  m
}
spec_logistic <- list(
  outcome = list(column = "readmitted", type = "binary"),
  exposure = list(column = "treated", reference = "0"),
  modifiers = arr(list(modifier("frailty", "categorical", "low"), modifier("age", "continuous"), modifier("creatinine", "continuous"))),
  covariates = arr(list()),
  model = "logistic",
  ci = list(level = 0.95, method = "delta")
)
spec_linear <- list(
  outcome = list(column = "stay", type = "continuous"),
  exposure = list(column = "treated", reference = "0"),
  modifiers = arr(list(modifier("frailty", "categorical", "low"), modifier("age", "continuous"))),
  covariates = arr(list(list(column = "creatinine", type = "continuous"))),
  model = "linear",
  ci = list(level = 0.95, method = "delta")
)
writeLines(json(screen_case(spec_logistic, seeded, FALSE)), file.path(out, "screen", "seeded-logistic-screen.json"))
writeLines(json(screen_case(spec_linear, seeded, TRUE)), file.path(out, "screen", "seeded-linear-screen.json"))
cat("screen fixtures written to", out, "\n")
