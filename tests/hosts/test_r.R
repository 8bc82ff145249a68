# The R binding against R's own stats::cor on real fMRI region time series
# (nitime's data/fmri_timeseries.csv, Debian python3-nitime; path in NITIME_CSV).
library(critplex, lib.loc = Sys.getenv("R_TEST_LIBRARY"))
x <- as.matrix(read.csv(Sys.getenv("NITIME_CSV")))
r <- critplex_connect(x)
# reference: stats::cor (R base), Pearson
stopifnot(max(abs(r - cor(x))) < 1e-12)
stopifnot(identical(rownames(r), colnames(x)))
# Errors arrive as R errors with the library's message.
msg <- tryCatch(critplex_connect(x, '{"methd": "pearson"}'), error = function(e) conditionMessage(e))
stopifnot(grepl("unknown option", msg))
# A sweep returns curves with density and edges; edges never decrease.
s <- critplex_sweep(r, '{"max_density": 0.2, "grid": 0.05}')
stopifnot(all(diff(s$edges) >= 0), nrow(s) == 5)
cat("R binding ok:", critplex_version(), "\n")
