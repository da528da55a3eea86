# Reference values for a continuous intervention (dose), the test for trend across an
# ordered modifier, and predictions at stated covariate values; base R only (stats, utils).
#
# Usage (from the repository root):
#   Rscript tests/reference/r/make-dose-fixtures.R [OUTPUT_DIR]
# OUTPUT_DIR defaults to tests/reference/dose. Writes OUTPUT_DIR/cohort.csv (a seeded
# synthetic cohort: invented data whose truth the generator below sets) and
# OUTPUT_DIR/fixtures.json (each case: the analysis specification and R's numbers, every
# number named by the R call that made it).
# Every glm() is fully converged: glm.control(epsilon = 1e-14, maxit = 100), refitted from
# its estimate until coef() stops changing (as make-fixtures.R does).
#   - slopes per level: hand-written from coef() and vcov(): b_A + b_{A:m},
#     Var = V_AA + 2 V_{A,A:m} + V_{A:m,A:m}; limits with qnorm (glm) or qt on df.residual (lm)
#   - omnibus: anova(reduced, full, test = "LRT") (glm) or anova(reduced, full) F (lm)
#   - conditional slopes and Johnson-Neyman (continuous x continuous): hand-written from
#     coef() and vcov() (Bauer and Curran 2005 quadratic)
#   - trend: glm()/lm() with the product term I(A * score), its coef() and vcov(), and
#     anova(reduced, trend, test = "LRT")
#   - predictions: predict(fit, newdata, type = "link", se.fit = TRUE) with newdata holding
#     continuous covariates at mean() and categorical ones at the most frequent level

args <- commandArgs(trailingOnly = TRUE)
out <- if (length(args) >= 1) args[1] else "tests/reference/dose"
dir.create(out, recursive = TRUE, showWarnings = FALSE)

json <- function(x) {
  if (is.null(x)) return("null")
  if (is.list(x)) {
    keys <- names(x)
    if (is.null(keys)) return(paste0("[", paste(vapply(x, json, ""), collapse = ","), "]"))
    body <- vapply(seq_along(x), function(i) paste0(json(keys[i]), ":", json(x[[i]])), "")
    return(paste0("{", paste(body, collapse = ","), "}"))
  }
  if (length(x) != 1) return(json(as.list(x)))
  if (is.na(x)) return("null")
  if (is.logical(x)) return(if (x) "true" else "false")
  if (is.numeric(x)) return(sprintf("%.17g", x))
  paste0("\"", gsub("\"", "\\\\\"", as.character(x)), "\"")
}

# ---- seeded synthetic cohort (invented; the generator sets the truth) ---------------------
set.seed(20261202)
n <- 900
minutes <- round(runif(n, 0, 120))
frailty <- sample(c("low", "mid", "high"), n, replace = TRUE, prob = c(0.45, 0.35, 0.2))
score <- c(low = 0, mid = 1, high = 2)[frailty]
severity <- round(rnorm(n, 50, 15), 1)
age <- round(rnorm(n, 72, 9))
sex <- sample(c("F", "M"), n, replace = TRUE, prob = c(0.56, 0.44))
treated <- rbinom(n, 1, 0.5)
lp <- -1.2 - 0.008 * minutes + 0.6 * score + 0.004 * minutes * score + 0.02 * (age - 72) + 0.01 * (severity - 50) +
  0.3 * (sex == "M") - 0.4 * treated + 0.15 * treated * score
readmitted <- rbinom(n, 1, plogis(lp))
stay <- round(6 + 0.02 * minutes - 0.01 * minutes * score + 1.1 * score + 0.05 * (age - 72) + 0.03 * severity +
  0.5 * treated - 0.3 * treated * score + rnorm(n, 0, 2), 2)
path <- file.path(out, "cohort.csv")
write.csv(data.frame(readmitted, stay, minutes, treated, frailty, severity, age, sex), path, row.names = FALSE)
d <- read.csv(path, stringsAsFactors = FALSE)
d$frailty <- factor(d$frailty, levels = c("low", "mid", "high"))
d$sex <- factor(d$sex, levels = c("F", "M"))
scores <- list(low = 1, mid = 2, high = 4) # unequal spacing and a non-zero reference score
d$frailty_score <- unlist(scores[as.character(d$frailty)])

tight <- glm.control(epsilon = 1e-14, maxit = 100)
fit_ml <- function(formula, family) {
  fit <- glm(formula, family = family, data = d, control = tight)
  for (k in 1:20) {
    again <- glm(formula, family = family, data = d, start = coef(fit), control = tight)
    change <- max(abs(coef(again) - coef(fit)) / (abs(coef(fit)) + 1e-3))
    fit <- again
    if (change < 1e-13) break
  }
  stopifnot(fit$converged)
  fit
}
wald <- function(est, se, crit, df) {
  p <- if (is.finite(df)) 2 * pt(-abs(est / se), df) else 2 * pnorm(-abs(est / se))
  list(estimate = est, se = se, lower = est - crit * se, upper = est + crit * se, p = p)
}
coefs <- function(fit) list(term = as.list(names(coef(fit))), estimate = unname(coef(fit)), se = unname(sqrt(diag(vcov(fit)))))
level_slopes <- function(fit, expo, crit, df) {
  b <- coef(fit); V <- vcov(fit)
  out <- list(low = wald(b[[expo]], sqrt(V[expo, expo]), crit, df))
  for (lv in c("mid", "high")) {
    am <- paste0(expo, ":frailty", lv)
    out[[lv]] <- wald(b[[expo]] + b[[am]], sqrt(V[expo, expo] + 2 * V[expo, am] + V[am, am]), crit, df)
  }
  out
}
level_differences <- function(fit, expo, crit, df) {
  b <- coef(fit); V <- vcov(fit)
  out <- list()
  for (lv in c("mid", "high")) { am <- paste0(expo, ":frailty", lv); out[[lv]] <- wald(b[[am]], sqrt(V[am, am]), crit, df) }
  out
}
z <- qnorm(0.975)
held <- data.frame(age = mean(d$age), sex = factor(names(which.max(table(d$sex))), levels = levels(d$sex)))
cases <- list()

# ---- dose, logistic, categorical modifier ------------------------------------------------
full <- fit_ml(readmitted ~ minutes * frailty + age + sex, binomial)
reduced <- fit_ml(readmitted ~ minutes + frailty + age + sex, binomial)
lr <- anova(reduced, full, test = "LRT")
grid <- expand.grid(frailty = factor(c("low", "mid", "high"), levels = levels(d$frailty)))
m_dose <- mean(d$minutes); s_dose <- sd(d$minutes)
pred_lines <- lapply(c(m_dose - s_dose, m_dose, m_dose + s_dose), function(a) {
  nd <- cbind(grid, held, minutes = a)
  pr <- predict(full, newdata = nd, type = "link", se.fit = TRUE)
  list(exposure = a, fit = unname(pr$fit), se = unname(pr$se.fit))
})
cases[["dose-logistic-categorical"]] <- list(
  spec = list(outcome = list(column = "readmitted", type = "binary"), exposure = list(column = "minutes", type = "continuous"),
    modifier = list(column = "frailty", type = "categorical", reference = "low"),
    covariates = list(list(column = "age", type = "continuous"), list(column = "sex", type = "categorical", reference = "F")),
    model = "logistic", ci = list(level = 0.95, method = "delta")),
  coefficients = coefs(full), slopes = level_slopes(full, "minutes", z, Inf), differences = level_differences(full, "minutes", z, Inf),
  omnibus = list(statistic = lr$Deviance[2], df = lr$Df[2], p = lr$`Pr(>Chi)`[2]),
  held = list(age = mean(d$age), sex = as.character(held$sex)), predictions = pred_lines)

# ---- dose, linear, categorical modifier --------------------------------------------------
lfull <- lm(stay ~ minutes * frailty + age + sex, data = d)
lred <- lm(stay ~ minutes + frailty + age + sex, data = d)
ftest <- anova(lred, lfull)
tcrit <- qt(0.975, df.residual(lfull))
lpred <- predict(lfull, newdata = cbind(grid, held, minutes = m_dose), se.fit = TRUE)
cases[["dose-linear-categorical"]] <- list(
  spec = list(outcome = list(column = "stay", type = "continuous"), exposure = list(column = "minutes", type = "continuous"),
    modifier = list(column = "frailty", type = "categorical", reference = "low"),
    covariates = list(list(column = "age", type = "continuous"), list(column = "sex", type = "categorical", reference = "F")),
    model = "linear", ci = list(level = 0.95, method = "delta")),
  coefficients = coefs(lfull), slopes = level_slopes(lfull, "minutes", tcrit, df.residual(lfull)),
  differences = level_differences(lfull, "minutes", tcrit, df.residual(lfull)),
  omnibus = list(statistic = ftest$F[2], df = ftest$Df[2], df2 = ftest$Res.Df[2], p = ftest$`Pr(>F)`[2]),
  held = list(age = mean(d$age), sex = as.character(held$sex)),
  predictions = list(list(exposure = m_dose, fit = unname(lpred$fit), se = unname(lpred$se.fit))))

# ---- dose x continuous modifier, logistic: conditional slopes and Johnson-Neyman ----------
cfull <- fit_ml(readmitted ~ minutes * severity + age, binomial)
b <- coef(cfull); V <- vcov(cfull)
ms <- mean(d$severity); ss <- sd(d$severity)
cond <- lapply(c(ms - ss, ms, ms + ss), function(at) c(list(at = at),
  wald(b[["minutes"]] + at * b[["minutes:severity"]], sqrt(V["minutes", "minutes"] + 2 * at * V["minutes", "minutes:severity"] + at^2 * V["minutes:severity", "minutes:severity"]), z, Inf)))
A <- b[["minutes:severity"]]^2 - z^2 * V["minutes:severity", "minutes:severity"]
B <- 2 * (b[["minutes"]] * b[["minutes:severity"]] - z^2 * V["minutes", "minutes:severity"])
C <- b[["minutes"]]^2 - z^2 * V["minutes", "minutes"]
disc <- B^2 - 4 * A * C
roots <- if (disc >= 0) sort(c((-B - sqrt(disc)) / (2 * A), (-B + sqrt(disc)) / (2 * A))) else numeric(0)
sgrid <- seq(min(d$severity), max(d$severity), length.out = 41)
cpred <- lapply(c(m_dose - s_dose, m_dose, m_dose + s_dose), function(a) {
  pr <- predict(cfull, newdata = data.frame(severity = sgrid, age = mean(d$age), minutes = a), type = "link", se.fit = TRUE)
  list(exposure = a, fit = unname(pr$fit), se = unname(pr$se.fit))
})
cases[["dose-logistic-continuous"]] <- list(
  spec = list(outcome = list(column = "readmitted", type = "binary"), exposure = list(column = "minutes", type = "continuous"),
    modifier = list(column = "severity", type = "continuous"), covariates = list(list(column = "age", type = "continuous")),
    model = "logistic", ci = list(level = 0.95, method = "delta")),
  coefficients = coefs(cfull), conditionalSlopes = cond, johnsonNeyman = list(leading = A, bounds = roots),
  held = list(age = mean(d$age)), predictions = cpred)

# ---- trend across an ordered modifier: binary intervention, logistic and linear ------------
tfull <- fit_ml(readmitted ~ treated + frailty + I(treated * frailty_score) + age + sex, binomial)
tred <- fit_ml(readmitted ~ treated + frailty + age + sex, binomial)
tlr <- anova(tred, tfull, test = "LRT")
term <- "I(treated * frailty_score)"
bfull <- fit_ml(readmitted ~ treated * frailty + age + sex, binomial)
bpred <- lapply(c(0, 1), function(a) {
  pr <- predict(bfull, newdata = cbind(grid, held, treated = a), type = "link", se.fit = TRUE)
  list(exposure = a, fit = unname(pr$fit), se = unname(pr$se.fit))
})
cases[["trend-logistic"]] <- list(
  spec = list(outcome = list(column = "readmitted", type = "binary"), exposure = list(column = "treated", reference = "0"),
    modifier = list(column = "frailty", type = "categorical", reference = "low", ordered = list(scores = scores)),
    covariates = list(list(column = "age", type = "continuous"), list(column = "sex", type = "categorical", reference = "F")),
    model = "logistic", ci = list(level = 0.95, method = "delta")),
  trend = wald(coef(tfull)[[term]], sqrt(vcov(tfull)[term, term]), z, Inf),
  likelihoodRatio = list(statistic = tlr$Deviance[2], df = tlr$Df[2], p = tlr$`Pr(>Chi)`[2]),
  held = list(age = mean(d$age), sex = as.character(held$sex)), predictions = bpred)

tl <- lm(stay ~ treated + frailty + I(treated * frailty_score) + age + sex, data = d)
cases[["trend-linear"]] <- list(
  spec = list(outcome = list(column = "stay", type = "continuous"), exposure = list(column = "treated", reference = "0"),
    modifier = list(column = "frailty", type = "categorical", reference = "low", ordered = list(scores = scores)),
    covariates = list(list(column = "age", type = "continuous"), list(column = "sex", type = "categorical", reference = "F")),
    model = "linear", ci = list(level = 0.95, method = "delta")),
  trend = wald(coef(tl)[[term]], sqrt(vcov(tl)[term, term]), qt(0.975, df.residual(tl)), df.residual(tl)))

dt <- fit_ml(readmitted ~ minutes + frailty + I(minutes * frailty_score) + age + sex, binomial)
dlr <- anova(reduced, dt, test = "LRT")
dterm <- "I(minutes * frailty_score)"
cases[["trend-dose-logistic"]] <- list(
  spec = list(outcome = list(column = "readmitted", type = "binary"), exposure = list(column = "minutes", type = "continuous"),
    modifier = list(column = "frailty", type = "categorical", reference = "low", ordered = list(scores = scores)),
    covariates = list(list(column = "age", type = "continuous"), list(column = "sex", type = "categorical", reference = "F")),
    model = "logistic", ci = list(level = 0.95, method = "delta")),
  trend = wald(coef(dt)[[dterm]], sqrt(vcov(dt)[dterm, dterm]), z, Inf),
  likelihoodRatio = list(statistic = dlr$Deviance[2], df = dlr$Df[2], p = dlr$`Pr(>Chi)`[2]))

writeLines(json(c(list(r = R.version.string), cases)), file.path(out, "fixtures.json"), useBytes = TRUE)
