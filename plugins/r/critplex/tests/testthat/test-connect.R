# Connectivity through the C interface against R's own estimators.

test_that("Pearson equals stats::cor on real market series, names and info kept", {
  # reference: stats::cor (R base) on datasets::EuStockMarkets (R base: daily closing
  # prices of four European indices, 1991-1998; real data, not brain signals)
  x <- as.matrix(datasets::EuStockMarkets)
  r <- critplex_connect(x)
  expect_lt(max(abs(r - stats::cor(x))), 1e-12)
  expect_identical(rownames(r), colnames(x))
  expect_identical(colnames(r), colnames(x))
  info <- attr(r, "info")
  expect_type(info, "list")
  expect_identical(info$method, "pearson")
  expect_equal(info$frames_used, nrow(x))
})

test_that("Pearson equals stats::cor on nitime's fMRI region series", {
  # reference: stats::cor (R base) on nitime's data/fmri_timeseries.csv (Debian python3-nitime)
  path <- Sys.getenv("NITIME_CSV", "/usr/lib/python3/dist-packages/nitime/data/fmri_timeseries.csv")
  skip_if_not(file.exists(path), "nitime's fMRI series are not installed")
  x <- as.matrix(utils::read.csv(path, check.names = FALSE))
  r <- critplex_connect(x)
  expect_lt(max(abs(r - stats::cor(x))), 1e-12)
  expect_identical(rownames(r), colnames(x))
})

test_that("a data frame keeps its column names; names can be given", {
  df <- as.data.frame(datasets::EuStockMarkets)
  expect_identical(rownames(critplex_connect(df)), names(df))
  r <- critplex_connect(df, names = c("a", "b", "c", "d"))
  expect_identical(colnames(r), c("a", "b", "c", "d"))
  expect_error(critplex_connect(df, names = c("a", "b")), "one name per region")
})

test_that("options as an R list or as JSON text; Fisher z equals atanh(cor)", {
  x <- as.matrix(datasets::EuStockMarkets)
  z1 <- critplex_connect(x, list(fisher_z = TRUE))
  z2 <- critplex_connect(x, '{"fisher_z": true}')
  expect_identical(unclass(z1)[, ], unclass(z2)[, ])
  off <- row(z1) != col(z1)
  # reference: atanh of stats::cor (R base), the Fisher transform (common practice)
  expect_lt(max(abs(z1[off] - atanh(stats::cor(x))[off])), 1e-12)
})

test_that("shrinkage correlation equals corpcor::cor.shrink", {
  # reference: corpcor::cor.shrink (Debian r-cran-corpcor), matrix and lambda
  skip_if_not_installed("corpcor")
  x <- as.matrix(datasets::EuStockMarkets)[1:40, ]
  r <- critplex_connect(x, list(method = "shrinkage_correlation"))
  ref <- corpcor::cor.shrink(x, verbose = FALSE)
  expect_lt(max(abs(unclass(r)[, ] - unclass(ref)[, ])), 1e-10)
  expect_lt(abs(attr(r, "info")$shrinkage_intensity - attr(ref, "lambda")), 1e-10)
})

test_that("errors name the option at fault", {
  x <- as.matrix(datasets::EuStockMarkets)
  expect_error(critplex_connect(x, list(methd = "pearson")), "unknown option")
  expect_error(critplex_connect("not a matrix"), "numeric matrix")
})

test_that("the ABI is the one the package was built for", {
  expect_identical(critplex_abi_version(), 1L)
  expect_match(critplex_version(), "^[0-9]+\\.[0-9]+\\.[0-9]+$")
})
