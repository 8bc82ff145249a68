# Whole subjects and cohorts through the C interface (invented data from the simulator).

study <- function() {
  dir <- tempfile("critplex-study")
  st <- critplex_simulate(dir, list(regions = 12, frames = 160, seed = 5, groups = list(
    list(name = "rested", subjects = 4), list(name = "deprived", subjects = 4))))
  list(dir = dir, st = st)
}

test_that("subject, cohort, compare and report return R values", {
  s <- study()
  on.exit(unlink(s$dir, recursive = TRUE))
  config <- jsonlite::fromJSON(s$st$config, simplifyVector = FALSE)
  config$null <- list(model = "none")
  config$timeseries <- file.path(s$dir, "timeseries", "sub-rested01_timeseries.tsv")
  config$id <- "rested01"
  one <- critplex_subject(config)
  expect_s3_class(one, "critplex_subject")
  expect_s3_class(one$curves, "data.frame")
  expect_true(all(c("density", "chi", "betti_1") %in% names(one$curves)))

  out <- file.path(s$dir, "results")
  run <- critplex_cohort(s$st$manifest, s$st$config, out, workers = 1)
  expect_equal(run$done, 8)
  expect_s3_class(run$subjects, "data.frame")
  expect_setequal(run$subjects$subject, c(paste0("rested0", 1:4), paste0("deprived0", 1:4)))
  again <- critplex_cohort(s$st$manifest, s$st$config, out, workers = 1)
  expect_equal(again$skipped, 8)

  cmp <- critplex_compare(out, list(covariates = I("age")))
  expect_s3_class(cmp$tests, "data.frame")
  expect_identical(cmp$groups, c("rested", "deprived"))
  # The table holds the tests of the comparison document, row for row, with numbers as numbers.
  tests <- cmp$document$tests
  expect_identical(nrow(cmp$tests), length(tests))
  expect_identical(cmp$tests$summary, vapply(tests, function(t) t$summary, character(1)))
  tested <- !vapply(tests, function(t) is.null(t$p_value), logical(1))
  expect_gt(sum(tested), 0)
  expect_type(cmp$tests$p_value, "double")
  expect_equal(cmp$tests$p_value[tested], vapply(tests[tested], function(t) t$p_value, numeric(1)), tolerance = 1e-15)
  expect_true(all(is.na(cmp$tests$p_value[!tested])))

  path <- critplex_report(out, list(created = "test"))
  expect_true(file.exists(path))
  expect_match(paste(readLines(path, warn = FALSE), collapse = "\n"), "<svg")
})

test_that("a bad config is an R error naming the key", {
  expect_error(critplex_subject(list(id = "x", timeseries = "none.tsv", sweeep = list())), "sweeep")
})
