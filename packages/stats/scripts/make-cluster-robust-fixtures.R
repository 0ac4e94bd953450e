# Writes test/fixtures/cluster-robust.json: CR2 cluster-robust inference for the arm coefficient of a least-squares fit,
# computed by R's clubSandwich on invented data, as the reference for src/cluster-robust.test.ts.
#
#   Rscript packages/stats/scripts/make-cluster-robust-fixtures.R
#
# Debian packages: r-base-core (R 4.2), r-cran-clubsandwich (0.5.8), r-cran-jsonlite. The data come from R's default
# Mersenne-Twister generator with fixed seeds and are rounded to 0.01 (0/1 for the yes/no outcome), so the JSON holds
# them exactly; the results are written with 15 significant digits. Every case is fitted as
#   lm(y ~ arm [+ factor(block)] [+ covariates])
# and clubSandwich's defaults for an lm fit are used: vcovCR(type = "CR2") (working model identity, generalised
# inverse square root for a singular I - H_jj), coef_test(test = "Satterthwaite") and conf_int(test = "Satterthwaite").

suppressMessages(library(clubSandwich))
library(jsonlite)

script_dir <- local({
  arg <- grep("^--file=", commandArgs(trailingOnly = FALSE), value = TRUE)
  if (length(arg)) dirname(normalizePath(sub("^--file=", "", arg))) else "packages/stats/scripts"
})
out_path <- file.path(script_dir, "..", "test", "fixtures", "cluster-robust.json")

# One assigned unit per entry of `sizes`; `arms` 1 (intervention) / 0 (comparison) per unit; `blocks` a label per unit
# or NULL. Scores: unit effect (SD tau) + arm effect + pretest slope + student noise, rounded to 0.01.
simulate <- function(seed, sizes, arms, blocks = NULL, pretest = TRUE, tau = 4, effect = 3, offset = 0,
                     binary = FALSE, unit_covariate = FALSE) {
  set.seed(seed)
  J <- length(sizes)
  unit <- rep(sprintf("u%03d", seq_len(J)), times = sizes)
  arm <- rep(arms, times = sizes)
  block <- if (is.null(blocks)) NULL else rep(blocks, times = sizes)
  block_effect <- if (is.null(blocks)) 0 else (match(block, sort(unique(blocks))) - 1) * 1.5
  u <- rnorm(J, 0, tau)[match(unit, sprintf("u%03d", seq_len(J)))]
  N <- sum(sizes)
  pre <- round(50 + 0.6 * u + rnorm(N, 0, 9), 2)
  lin <- 50 + effect * arm + u + block_effect + 0.7 * (pre - 50) + rnorm(N, 0, 7)
  y <- if (binary) as.numeric(lin + rnorm(N, 0, 4) > 53) else round(lin, 2)
  d <- data.frame(y = y + offset, arm = arm, unit = unit, stringsAsFactors = FALSE)
  if (!is.null(blocks)) d$block <- block
  covs <- list()
  if (pretest) covs$pretest <- pre + offset
  if (unit_covariate) covs$unitSize <- rep(sizes, times = sizes) + 0
  list(d = d, covs = covs)
}

run_case <- function(id, description, sim, confidence = 0.95, note = NULL) {
  d <- sim$d
  for (nm in names(sim$covs)) d[[nm]] <- sim$covs[[nm]]
  rhs <- c("arm", if (!is.null(d$block)) "factor(block)", names(sim$covs))
  fit <- lm(as.formula(paste("y ~", paste(rhs, collapse = " + "))), data = d)
  if (any(is.na(coef(fit)))) stop(id, ": aliased coefficients")
  ct <- coef_test(fit, vcov = "CR2", cluster = d$unit, test = "Satterthwaite", coefs = "arm")
  ci <- conf_int(fit, vcov = "CR2", cluster = d$unit, test = "Satterthwaite", coefs = "arm", level = confidence)
  V <- vcovCR(fit, cluster = d$unit, type = "CR2")
  adj <- attr(V, "adjustments")
  # Units whose I - H_jj has an eigenvalue at or below clubSandwich's threshold (1e-12).
  X <- model.matrix(fit)
  M <- chol2inv(qr.R(fit$qr))  # (X'X)^-1 from the fit's QR: no squared condition number
  singular <- sum(vapply(split(seq_len(nrow(d)), d$unit), function(rows) {
    Xj <- X[rows, , drop = FALSE]
    ev <- eigen(diag(length(rows)) - Xj %*% M %*% t(Xj), symmetric = TRUE, only.values = TRUE)$values
    any(ev <= 1e-12)
  }, logical(1)))
  units <- unique(d[, c("unit", "arm")])
  cat(sprintf("%-28s N=%4d J=%3d est=%.6f se=%.6f df=%.4f p=%.4g singular=%d\n", id, nrow(d), nrow(units),
              ct$beta, ct$SE, ct$df_Satt, ct$p_Satt, singular))
  list(
    id = id,
    description = description,
    note = note,
    confidence = confidence,
    rows = list(
      y = d$y, arm = d$arm, cluster = d$unit,
      block = if (is.null(d$block)) NULL else d$block,
      covariates = if (length(sim$covs)) unname(lapply(names(sim$covs), function(nm) d[[nm]])) else NULL,
      covariateNames = if (length(sim$covs)) I(names(sim$covs)) else NULL
    ),
    expected = list(
      estimate = ct$beta, se = ct$SE, t = ct$tstat, df = ct$df_Satt, p = ct$p_Satt,
      ci = c(ci$CI_L, ci$CI_U),
      olsSe = unname(summary(fit)$coefficients["arm", "Std. Error"]),
      olsDf = fit$df.residual,
      n = nrow(d), unitsIntervention = sum(units$arm == 1), unitsComparison = sum(units$arm == 0),
      singularUnits = singular
    )
  )
}

set.seed(20260601)
sizes_unbalanced <- sample(3:40, 14, replace = TRUE)
arms_unbalanced <- c(rep(1, 5), rep(0, 9))
sizes_many <- sample(1:4, 120, replace = TRUE)
arms_many <- rep(c(1, 0), 60)
sizes_ones <- c(rep(1, 10), sample(2:6, 10, replace = TRUE))
arms_ones <- rep(c(1, 0), 10)
# Blocks (schools) of 2-4 units, plus one block holding a single unit: its I - H_jj is singular.
block_sizes <- c(S1 = 4, S2 = 3, S3 = 2, S4 = 4, S5 = 1, S6 = 3)
blocks <- rep(names(block_sizes), times = block_sizes)
arms_blocks <- unlist(lapply(block_sizes, function(m) rep(c(1, 0), length.out = m)), use.names = FALSE)
sizes_blocks <- sample(8:25, length(blocks), replace = TRUE)

cases <- list(
  run_case("balanced-no-pretest", "6 + 6 units of 15 students, no covariate",
           simulate(101, rep(15, 12), rep(c(1, 0), each = 6), pretest = FALSE)),
  run_case("balanced-pretest", "6 + 6 units of 15 students, adjusted for a pretest",
           simulate(102, rep(15, 12), rep(c(1, 0), each = 6))),
  run_case("unbalanced-pretest", "5 intervention and 9 comparison units of 3-40 students, pretest",
           simulate(103, sizes_unbalanced, arms_unbalanced)),
  run_case("unbalanced-no-pretest", "5 intervention and 9 comparison units of 3-40 students, no covariate",
           simulate(103, sizes_unbalanced, arms_unbalanced, pretest = FALSE)),
  run_case("few-large-units", "2 + 2 units of 150 students, pretest",
           simulate(104, rep(150, 4), c(1, 0, 1, 0))),
  run_case("few-large-units-3-3", "3 + 3 units of 60-140 students, no covariate, large ICC",
           simulate(105, c(60, 140, 90, 120, 75, 100), c(1, 1, 1, 0, 0, 0), pretest = FALSE, tau = 12)),
  run_case("many-small-units", "60 + 60 units of 1-4 students (some of size 1), pretest",
           simulate(106, sizes_many, arms_many)),
  run_case("units-of-size-one", "10 units of one student and 10 of 2-6, pretest",
           simulate(107, sizes_ones, arms_ones)),
  run_case("units-of-size-one-no-pretest", "10 units of one student and 10 of 2-6, no covariate",
           simulate(107, sizes_ones, arms_ones, pretest = FALSE)),
  run_case("offset-1e6", "the unbalanced-pretest data with 1e6 added to scores and pretest",
           simulate(103, sizes_unbalanced, arms_unbalanced, offset = 1e6),
           note = "clubSandwich inverts X'X of the uncentred design; compare with unbalanced-pretest"),
  run_case("blocks-pretest", "6 schools as blocks, one with a single unit (singular I - H_jj), pretest",
           simulate(108, sizes_blocks, arms_blocks, blocks = blocks)),
  run_case("blocks-no-pretest", "6 schools as blocks, one with a single unit, no covariate",
           simulate(108, sizes_blocks, arms_blocks, blocks = blocks, pretest = FALSE)),
  run_case("blocks-single-student-unit", "blocks with a single-unit block whose unit has one student, pretest",
           simulate(109, replace(sizes_blocks, which(blocks == "S5"), 1), arms_blocks, blocks = blocks)),
  run_case("binary-outcome", "0/1 outcome (linear probability model), blocks and pretest",
           simulate(110, sizes_blocks * 2, arms_blocks, blocks = blocks, binary = TRUE)),
  run_case("binary-outcome-no-blocks", "0/1 outcome, many small units, pretest",
           simulate(111, sizes_many + 2, arms_many, binary = TRUE)),
  run_case("unit-level-covariate", "a covariate constant within units (unit size) beside the pretest",
           simulate(112, sizes_unbalanced, arms_unbalanced, unit_covariate = TRUE)),
  run_case("confidence-90", "the unbalanced-pretest data with a 90 % interval",
           simulate(103, sizes_unbalanced, arms_unbalanced), confidence = 0.90)
)

fixture <- list(
  generatedBy = "packages/stats/scripts/make-cluster-robust-fixtures.R",
  versions = list(
    R = R.version.string,
    clubSandwich = as.character(packageVersion("clubSandwich")),
    jsonlite = as.character(packageVersion("jsonlite"))
  ),
  cases = cases
)
writeLines(toJSON(fixture, auto_unbox = TRUE, digits = NA, null = "null", pretty = FALSE), out_path)
cat("wrote", normalizePath(out_path), "\n")
