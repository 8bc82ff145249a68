# R binding of critplex. Options are JSON text (see the README of critplex); R matrices
# go over column-major without copies in R. Research software, not a medical device.

#' Version of the loaded libcritplex.
critplex_version <- function() .Call(critplex_r_version)

#' Connectivity matrix of a time series matrix (time points down the rows, regions across).
#' @param x numeric matrix, T x N
#' @param options JSON text, e.g. '{"method": "ledoit_wolf"}'
critplex_connect <- function(x, options = NULL) {
  x <- as.matrix(x)
  storage.mode(x) <- "double"
  .Call(critplex_r_connect, x, colnames(x), options)
}

#' Density sweep of a square matrix: returns a data frame of curves on the grid
#' (columns density, threshold, edges, chi, ...) with the full JSON result in attr "json".
critplex_sweep <- function(m, options = NULL) {
  m <- as.matrix(m)
  storage.mode(m) <- "double"
  res <- .Call(critplex_r_sweep, m, options)
  curves <- utils::read.delim(text = res[1], check.names = FALSE, colClasses = "character")
  # Exact counts beyond 2^53 stay exact as text in attr "json"; columns here are numeric.
  curves[] <- lapply(curves, as.numeric)
  attr(curves, "json") <- res[2]
  curves
}

#' Runs the critplex command (for the whole-subject and cohort steps) and returns its status.
critplex_run <- function(args, command = Sys.getenv("CRITPLEX_CLI", "critplex")) {
  system2(command, args)
}
