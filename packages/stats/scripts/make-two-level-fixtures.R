# Reference values for the two-level model (packages/stats/src/two-level.ts).
#
# Run from the repository root with Debian's R (r-base-core 4.2, r-cran-lme4 1.1-31, r-cran-lmertest 3.1-3,
# r-cran-jsonlite):
#   Rscript packages/stats/scripts/make-two-level-fixtures.R
#   /usr/bin/python3 packages/stats/scripts/two-level-high-precision.py   # adds the 50-digit solution
#
# Builds invented data sets deterministically (R's Mersenne-Twister with inversion, fixed seeds), writes them with
# the results of lmer(y ~ arm + covariates + block + (1 | unit), REML = TRUE) and lmerTest's Satterthwaite df to
# packages/stats/test/fixtures/two-level.json. The data are rounded to 2 decimals (outcome) and 1 decimal
# (covariates), written to JSON, read back and fitted as read, so R and the TypeScript tests see the same doubles.
# lme4's default optimiser stops early on flat or badly scaled likelihoods, so the fit uses centred data and bobyqa
# with rhoend = 1e-12.

suppressPackageStartupMessages({
  library(lme4)
  library(lmerTest)
  library(jsonlite)
})

out_path <- "packages/stats/test/fixtures/two-level.json"
RNGkind("Mersenne-Twister", "Inversion", "Rejection")

# One invented study: units alternate arms unless `arms` is given; `blocks` gives each unit's block label.
make_data <- function(seed, sizes, arms, tau, sigma, effect = 3, slope = 0.6, offset = 0, covariates = 1,
                      blocks = NULL, block_sd = 0, squeeze = 0, unit_covariate = FALSE) {
  set.seed(seed)
  J <- length(sizes)
  u <- rnorm(J, 0, tau)
  block_effect <- if (is.null(blocks)) rep(0, J) else rnorm(length(unique(blocks)), 0, block_sd)[as.integer(factor(blocks))]
  rows <- list()
  for (j in seq_len(J)) {
    n <- sizes[j]
    pre <- rnorm(n, 0, 10) + 0.5 * u[j] / max(slope, 0.1)
    e <- rnorm(n, 0, sigma)
    # squeeze > 0 pulls every unit's residual mean towards 0, so the unit means vary less than chance: τ² at 0.
    if (n > 1 && squeeze > 0) e <- e - squeeze * mean(e)
    y <- 100 + effect * arms[j] + slope * pre + u[j] + block_effect[j] + e
    d <- data.frame(y = round(offset + y, 2), arm = arms[j], unit = j,
                    pretest = round(offset + 250 + pre, 1))
    if (covariates >= 2) d$attendance <- round(rnorm(n, 90, 5) + 0.3 * u[j], 1)
    # A unit-level covariate (the same for every student of a unit), e.g. last year's class mean.
    if (unit_covariate) d$priorClassMean <- round(rnorm(1, 250, 6) + 0.8 * u[j], 1)
    if (!is.null(blocks)) d$block <- blocks[j]
    rows[[j]] <- d
  }
  do.call(rbind, rows)
}

alternate <- function(J) rep_len(c(1, 0), J)

cases <- list()
add <- function(id, description, data, covariates, blocks) {
  cases[[length(cases) + 1]] <<- list(id = id, description = description, data = data,
                                      covariates = covariates, blocks = blocks)
}

add("balanced-pretest", "20 units of 15 students, 10 per arm, pretest",
    make_data(101, rep(15, 20), alternate(20), tau = 3, sigma = 8), c("pretest"), FALSE)
add("balanced-no-covariate", "20 units of 15 students, 10 per arm, no covariate",
    make_data(102, rep(15, 20), alternate(20), tau = 3, sigma = 8), character(0), FALSE)
sizes_unb <- c(3, 40, 12, 7, 25, 31, 2, 18, 9, 22, 14, 5, 36, 11, 27, 8, 19)
add("unbalanced-unequal-arms", "17 units of 2 to 40 students, 6 intervention and 11 comparison units, pretest",
    make_data(103, sizes_unb, c(1, 0, 0, 1, 0, 0, 1, 0, 0, 1, 0, 0, 1, 0, 0, 1, 0), tau = 4, sigma = 9),
    c("pretest"), FALSE)
add("boundary-pretest", "12 units of 10, unit means less variable than chance (REML τ² at 0), pretest",
    make_data(104, rep(10, 12), alternate(12), tau = 0, sigma = 8, squeeze = 0.8), c("pretest"), FALSE)
add("boundary-no-covariate", "10 units of 4 to 12, τ² at 0, no covariate",
    make_data(105, c(4, 12, 6, 9, 8, 5, 11, 7, 10, 6), alternate(10), tau = 0, sigma = 6, squeeze = 0.9),
    character(0), FALSE)
add("near-boundary", "24 units of 8, small τ² inside the parameter space (ICC about 0.013), pretest",
    make_data(202, rep(8, 24), alternate(24), tau = 1.5, sigma = 8), c("pretest"), FALSE)
add("large-icc", "16 units of 12, τ = 12 and σ = 1.5 (ICC above 0.95), pretest",
    make_data(107, rep(12, 16), alternate(16), tau = 12, sigma = 1.5, slope = 0.05), c("pretest"), FALSE)
add("offset-1e6", "as balanced-pretest with a different draw, outcome and pretest offset by 1e6",
    make_data(108, rep(15, 20), alternate(20), tau = 3, sigma = 8, offset = 1e6), c("pretest"), FALSE)
add("few-large-units", "6 units of 150 students, 3 per arm, pretest",
    make_data(109, rep(150, 6), alternate(6), tau = 2, sigma = 10), c("pretest"), FALSE)
set.seed(110)
sizes_small <- sample(1:4, 480, replace = TRUE)
add("many-small-units", "480 units of 1 to 4 students (singletons included), pretest",
    make_data(111, sizes_small, alternate(480), tau = 3, sigma = 7), c("pretest"), FALSE)
blocks8 <- sprintf("b%02d", rep(1:8, each = 6))
set.seed(112)
sizes_b8 <- sample(5:25, 48, replace = TRUE)
add("blocks-pretest", "8 blocks (schools) of 6 classrooms, 3 per arm in each, 5 to 25 students, pretest",
    make_data(113, sizes_b8, rep(c(1, 0), 24), tau = 3, sigma = 8, blocks = blocks8, block_sd = 6),
    c("pretest"), TRUE)
blocks5 <- c("east", "east", "east", "east", "hill", "hill", "hill", "lake", "lake", "lake", "lake", "lake",
             "mill", "mill", "mill", "park", "park", "park", "park")
arms5 <- c(1, 0, 0, 0, 1, 1, 0, 1, 0, 1, 0, 0, 0, 1, 1, 1, 0, 1, 0)
set.seed(114)
sizes_b5 <- sample(6:28, 19, replace = TRUE)
add("blocks-unequal-no-covariate", "5 blocks with 3 to 5 classrooms and unequal arms within blocks, no covariate",
    make_data(115, sizes_b5, arms5, tau = 4, sigma = 9, blocks = blocks5, block_sd = 5), character(0), TRUE)
add("blocks-two-covariates", "5 blocks as above, pretest and attendance",
    make_data(116, sizes_b5, arms5, tau = 4, sigma = 9, blocks = blocks5, block_sd = 5, covariates = 2),
    c("pretest", "attendance"), TRUE)
add("unit-level-covariate", "30 units of 6 to 20 with a pretest and a covariate constant within units (prior class mean)",
    make_data(119, rep(c(6, 20, 11, 15, 9), 6), alternate(30), tau = 4, sigma = 8, unit_covariate = TRUE),
    c("pretest", "priorClassMean"), FALSE)
blocks20 <- sprintf("s%02d", rep(1:20, each = 40))
set.seed(117)
sizes_b20 <- sample(2:14, 800, replace = TRUE)
add("many-blocks-many-units", "20 blocks of 40 classrooms (800 units, 2 to 14 students), pretest",
    make_data(118, sizes_b20, rep(c(1, 0), 400), tau = 2.5, sigma = 8, blocks = blocks20, block_sd = 4),
    c("pretest"), TRUE)

fit_case <- function(cs) {
  d <- cs$data
  # Centre the outcome and covariates (the arm effect, variances and df do not change; the optimiser converges).
  d$y <- d$y - mean(d$y)
  for (v in cs$covariates) d[[v]] <- d[[v]] - mean(d[[v]])
  d$unit <- factor(d$unit)
  terms <- c("arm", cs$covariates)
  if (cs$blocks) {
    d$block <- factor(d$block)
    terms <- c(terms, "block")
  }
  f <- as.formula(paste("y ~", paste(terms, collapse = " + "), "+ (1 | unit)"))
  ctrl <- lmerControl(optimizer = "bobyqa", optCtrl = list(rhobeg = 2e-3, rhoend = 1e-12))
  fit <- lmerTest::lmer(f, data = d, REML = TRUE, control = ctrl)
  co <- summary(fit)$coefficients
  L <- as.numeric(names(fixef(fit)) == "arm")
  ci95 <- contest1D(fit, L, confint = TRUE, level = 0.95)
  ci90 <- contest1D(fit, L, confint = TRUE, level = 0.90)
  vc <- as.data.frame(VarCorr(fit))
  tv <- co["arm", "t value"]
  dfv <- co["arm", "df"]
  cov_rows <- lapply(cs$covariates, function(v) list(name = v, estimate = unname(co[v, "Estimate"]), se = unname(co[v, "Std. Error"])))
  list(
    estimate = unname(co["arm", "Estimate"]),
    se = unname(co["arm", "Std. Error"]),
    df = unname(dfv),
    t = unname(tv),
    p = unname(co["arm", "Pr(>|t|)"]),
    pGreater = pt(tv, dfv, lower.tail = FALSE),
    ci95 = c(ci95$lower, ci95$upper),
    ci90 = c(ci90$lower, ci90$upper),
    tau2 = vc$vcov[vc$grp == "unit"],
    sigma2 = sigma(fit)^2,
    theta = unname(getME(fit, "theta")),
    remlLogLik = as.numeric(logLik(fit, REML = TRUE)),
    singular = isSingular(fit, tol = 1e-8),
    fixedEffects = length(fixef(fit)),
    n = nrow(d),
    covariateCoefficients = cov_rows,
    optimizerMessages = as.list(c(fit@optinfo$message, unlist(fit@optinfo$conv$lme4$messages)))
  )
}

# Data as written and read back: the JSON holds exactly the doubles R fits.
case_json <- function(cs) {
  d <- cs$data
  x <- list(id = cs$id, description = cs$description,
            y = d$y, arm = d$arm, unit = d$unit,
            covariateNames = I(cs$covariates),
            covariates = lapply(cs$covariates, function(v) d[[v]]))
  if (cs$blocks) x$block <- d$block
  x
}
tmp <- tempfile(fileext = ".json")
writeLines(toJSON(lapply(cases, case_json), auto_unbox = TRUE, digits = NA), tmp)
reread <- fromJSON(tmp, simplifyVector = TRUE, simplifyDataFrame = FALSE, simplifyMatrix = FALSE)
for (i in seq_along(cases)) {
  r <- reread[[i]]
  d <- cases[[i]]$data
  stopifnot(identical(as.numeric(r$y), as.numeric(d$y)), identical(as.numeric(r$arm), as.numeric(d$arm)))
  for (k in seq_along(cases[[i]]$covariates)) {
    stopifnot(identical(as.numeric(r$covariates[[k]]), as.numeric(d[[cases[[i]]$covariates[k]]])))
  }
  nd <- data.frame(y = as.numeric(r$y), arm = as.numeric(r$arm), unit = r$unit)
  for (k in seq_along(cases[[i]]$covariates)) nd[[cases[[i]]$covariates[k]]] <- as.numeric(r$covariates[[k]])
  if (!is.null(r$block)) nd$block <- r$block
  cases[[i]]$data <- nd
}

out <- lapply(cases, function(cs) {
  x <- case_json(cs)
  x$lme4 <- fit_case(cs)
  x
})
versions <- list(
  R = R.version.string,
  lme4 = as.character(packageVersion("lme4")),
  lmerTest = as.character(packageVersion("lmerTest")),
  Matrix = as.character(packageVersion("Matrix")),
  jsonlite = as.character(packageVersion("jsonlite")),
  control = "lmerControl(optimizer = 'bobyqa', optCtrl = list(rhobeg = 2e-3, rhoend = 1e-12)), centred y and covariates",
  model = "lmer(y ~ arm + covariates + block + (1 | unit), REML = TRUE); arm df and p from lmerTest (Satterthwaite)"
)
writeLines(toJSON(list(generatedBy = "packages/stats/scripts/make-two-level-fixtures.R", versions = versions, cases = out),
                  auto_unbox = TRUE, digits = NA, pretty = FALSE), out_path)
for (o in out) {
  cat(sprintf("%-28s n=%5d est=%9.5f se=%8.5f df=%9.4f tau2=%9.5f sigma2=%9.4f singular=%s %s\n", o$id, o$lme4$n,
              o$lme4$estimate, o$lme4$se, o$lme4$df, o$lme4$tau2, o$lme4$sigma2, o$lme4$singular,
              paste(unlist(o$lme4$optimizerMessages), collapse = "; ")))
}
cat("wrote", out_path, "\n")
