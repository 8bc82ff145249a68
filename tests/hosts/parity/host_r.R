# Parity run in R: cohort, compare and report through the installed package, then the
# group-test table as this host holds it, written to TABLE.
#   Rscript host_r.R MANIFEST CONFIG OUT TABLE
args <- commandArgs(trailingOnly = TRUE)
library(critplex)
run <- critplex_cohort(args[1], args[2], args[3])
stopifnot(run$failed == 0)
comparison <- critplex_compare(args[3], list(covariates = I("age")))
report <- critplex_report(args[3], list(created = "parity"))
stopifnot(file.exists(report))
tests <- comparison$tests
cells <- lapply(tests, function(v) {
  out <- if (is.logical(v)) ifelse(v, "true", "false") else if (is.numeric(v)) sprintf("%.17g", v) else as.character(v)
  out[is.na(v)] <- "n/a"
  out
})
lines <- c(paste(names(tests), collapse = "\t"), do.call(paste, c(cells, sep = "\t")))
writeLines(lines, args[4])
cat(sprintf("R: %d tests, report %s\n", nrow(tests), report))
