# critplex from R (plugins/r/critplex; install with R CMD INSTALL after installing libcritplex).
library(critplex)
x <- as.matrix(read.delim("examples/demo-output/study/timeseries/sub-rested01_timeseries.tsv"))
r <- critplex_connect(x, '{"method": "shrinkage_correlation"}')
curves <- critplex_sweep(r, '{"max_density": 0.4, "grid": 0.02}')
print(head(curves[, c("density", "edges", "chi")]))
