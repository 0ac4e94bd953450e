# Writes test/fixtures/proportions-degenerate.json: R's reference values for yes/no tables in which an arm answered all
# yes or all no, a second source beside SciPy/statsmodels (make-proportion-fixtures.py) for src/proportions.test.ts.
#
#   Rscript packages/stats/scripts/make-degenerate-proportion-fixtures.R
#
# Debian packages: r-base-core (R 4.2), r-cran-jsonlite. Per arm, the Wilson score interval is prop.test(yes, n,
# correct = FALSE)$conf.int (R's one-sample score interval without continuity correction is Wilson's). Fisher's exact
# two-sided p is fisher.test on the arm × answer table (R sums the tables with P <= P(observed) * (1 + 1e-7), SciPy's rule
# with a wider tolerance; for these tables no probability lies between the two bounds, so they agree). R's sample odds
# ratio (a·d)/(b·c) is recorded as JSON null when it is 0/0, 0 or infinite: the odds ratio is undefined there. Numbers
# are written with 15 significant digits (jsonlite digits = NA), so the checks allow a relative error of 1e-13.
library(jsonlite)

script_dir <- local({
  arg <- grep("^--file=", commandArgs(trailingOnly = FALSE), value = TRUE)
  if (length(arg)) dirname(normalizePath(sub("^--file=", "", arg))) else "packages/stats/scripts"
})
out_path <- file.path(script_dir, "..", "test", "fixtures", "proportions-degenerate.json")

# (id, yes1, n1, yes2, n2): intervention first.
tables <- list(
  list("all-yes-intervention", 15, 15, 10, 14),
  list("all-yes-comparison", 7, 12, 9, 9),
  list("no-yes-intervention", 0, 20, 5, 20),
  list("all-yes-against-all-no", 11, 11, 0, 13),
  list("all-no-both", 0, 10, 0, 12),
  list("all-yes-both", 8, 8, 9, 9),
  list("one-student-each", 1, 1, 0, 1)
)

wilson <- function(y, n, level) {
  ci <- suppressWarnings(prop.test(y, n, correct = FALSE, conf.level = level)$conf.int)
  as.numeric(ci)
}


cases <- lapply(tables, function(t) {
  id <- t[[1]]; y1 <- t[[2]]; n1 <- t[[3]]; y2 <- t[[4]]; n2 <- t[[5]]
  m <- matrix(c(y1, n1 - y1, y2, n2 - y2), 2, byrow = TRUE)
  or <- (m[1, 1] * m[2, 2]) / (m[1, 2] * m[2, 1])
  list(
    id = id,
    intervention = list(yes = y1, n = n1),
    comparison = list(yes = y2, n = n2),
    wilson = lapply(c(`0.95` = 0.95, `0.9` = 0.9), function(level) list(wilson(y1, n1, level), wilson(y2, n2, level))),
    fisher = list(
      `two-sided` = fisher.test(m)$p.value,
      less = fisher.test(m, alternative = "less")$p.value,
      greater = fisher.test(m, alternative = "greater")$p.value
    ),
    sampleOddsRatio = if (is.finite(or) && or > 0) or else NULL,
    source = "R prop.test(correct = FALSE) conf.int (Wilson); R fisher.test; sample odds ratio a*d/(b*c)"
  )
})

out <- list(generator = "packages/stats/scripts/make-degenerate-proportion-fixtures.R", r = R.version.string, tables = cases)
writeLines(toJSON(out, auto_unbox = TRUE, digits = NA, null = "null", pretty = TRUE), out_path)
cat("wrote", normalizePath(out_path), "\n")
