# critplex from R. Install once from an installed prefix:
#   PKG_CONFIG_PATH=PREFIX/lib/pkgconfig R CMD INSTALL PREFIX/share/critplex/r/critplex
library(critplex)
dir <- tempfile("sleep-lab")   # an invented study (README: the demo study)
study <- critplex_simulate(dir, list(regions = 20, frames = 200, groups = list(
  list(name = "rested", subjects = 4), list(name = "deprived", subjects = 4))))
x <- as.matrix(read.delim(file.path(dir, "timeseries", "sub-rested01_timeseries.tsv"), check.names = FALSE))
r <- critplex_connect(x, list(method = "shrinkage_correlation"))
attr(r, "info")$shrinkage_intensity
s <- critplex_sweep(r, list(max_density = 0.4, grid = 0.02, homology = list(max_dimension = 2)))
print(head(s$curves[, c("density", "edges", "chi", "betti_1")]))
critplex_cohort(study$manifest, study$config, file.path(dir, "results"))
print(critplex_compare(file.path(dir, "results"))$tests[, c("summary", "hedges_g", "p_value")])
critplex_report(file.path(dir, "results"))
