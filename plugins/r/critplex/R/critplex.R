# R binding of critplex: every function goes through the C interface (src/critplex_r.c).
# Options are R lists (sent as JSON with jsonlite) or JSON text; results are matrices,
# data frames and lists. Research software, not a medical device.

# Options as JSON text: NULL stays NULL (the library's defaults), text passes unchanged.
options_json <- function(options, what = "options") {
  if (is.null(options)) return(NULL)
  if (is.character(options)) {
    if (length(options) != 1L) stop(sprintf("critplex: %s must be a list or one JSON string", what), call. = FALSE)
    return(options)
  }
  if (!is.list(options)) stop(sprintf("critplex: %s must be a list or one JSON string", what), call. = FALSE)
  if (length(options) == 0L) return(NULL)
  as.character(jsonlite::toJSON(empty_lists_as_objects(options), auto_unbox = TRUE, digits = NA,
                                null = "null", na = "null"))
}

# list() is written as {} (an empty options section), not as [].
empty_lists_as_objects <- function(x) {
  if (!is.list(x)) return(x)
  if (length(x) == 0L) return(structure(list(), names = character(0)))
  x[] <- lapply(x, empty_lists_as_objects)
  x
}

parse_json <- function(text) jsonlite::fromJSON(text, simplifyVector = TRUE, simplifyDataFrame = FALSE,
                                                simplifyMatrix = FALSE)

as_numeric_matrix <- function(x, what) {
  if (is.data.frame(x)) x <- as.matrix(x)
  if (!is.matrix(x) || !is.numeric(x)) stop(sprintf("critplex: %s must be a numeric matrix or data frame", what),
                                            call. = FALSE)
  storage.mode(x) <- "double"
  x
}

as_names <- function(names) if (is.null(names)) NULL else as.character(names)

connectivity_matrix <- function(res) {
  m <- res[[1]]
  dimnames(m) <- list(res[[2]], res[[2]])
  attr(m, "info") <- parse_json(res[[3]])
  m
}

# A data frame from JSON records: one column per scalar key (NA where a record lacks it),
# the columns that name a row first.
records_frame <- function(records) {
  is_scalar <- function(v) is.atomic(v) && length(v) == 1L
  keys <- unique(unlist(lapply(records, function(r) names(r)[vapply(r, is_scalar, logical(1))])))
  keys <- c(intersect(c("summary", "subject", "group_a", "group_b"), keys),
            setdiff(keys, c("summary", "subject", "group_a", "group_b")))
  columns <- lapply(keys, function(k) unlist(lapply(records, function(r) if (is_scalar(r[[k]])) r[[k]] else NA)))
  names(columns) <- keys
  as.data.frame(columns, stringsAsFactors = FALSE, check.names = FALSE)
}

curves_frame <- function(curves) {
  curves <- curves[vapply(curves, function(v) is.atomic(v) && length(v) > 0L, logical(1))]
  curves <- lapply(curves, as.numeric)  # exact counts may arrive as decimal text
  as.data.frame(curves, check.names = FALSE)
}

# A config as JSON text from a list, JSON text or a JSON file. With anchor_at_file, a
# file's folder anchors its relative paths, as `critplex subject` does; a cohort's paths
# come from its manifest instead.
config_json <- function(config, anchor_at_file = FALSE) {
  if (is.character(config) && length(config) == 1L && !grepl("^\\s*\\{", config)) {
    if (!file.exists(config)) stop(sprintf("critplex: config file '%s' does not exist", config), call. = FALSE)
    parsed <- jsonlite::fromJSON(config, simplifyVector = FALSE)
    if (anchor_at_file && is.null(parsed$base_dir)) parsed$base_dir <- dirname(normalizePath(config))
    config <- parsed
  }
  options_json(config, "config")
}

critplex_version <- function() .Call(cpxr_version)

critplex_abi_version <- function() .Call(cpxr_abi)[1L]

critplex_connect <- function(x, options = NULL, names = colnames(x)) {
  x <- as_numeric_matrix(x, "x")
  connectivity_matrix(.Call(cpxr_connect, x, as_names(names), options_json(options)))
}

critplex_connect_bands <- function(x, options = NULL, names = colnames(x)) {
  x <- as_numeric_matrix(x, "x")
  res <- .Call(cpxr_connect_bands, x, as_names(names), options_json(options))
  out <- lapply(res, function(entry) connectivity_matrix(entry[[2]]))
  names(out) <- vapply(res, function(entry) entry[[1]], character(1))
  out
}

critplex_sweep <- function(m, options = NULL, names = colnames(m)) {
  m <- as_numeric_matrix(m, "m")
  opts <- options_json(options)
  asked <- if (is.null(opts)) list() else jsonlite::fromJSON(opts, simplifyVector = FALSE)
  res <- .Call(cpxr_sweep, m, as_names(names), opts, !is.null(asked$homology), !is.null(asked$curvature))
  values <- res[[2]]
  colnames(values) <- res[[1]]
  bars <- NULL
  if (!is.null(res[[4]])) {
    bars <- as.data.frame(res[[4]])
    names(bars) <- c("dimension", "birth_rank", "death_rank", "birth_density", "death_density",
                     "birth_threshold", "death_threshold")
    bars$dimension <- as.integer(bars$dimension)
  }
  result <- parse_json(res[[3]])
  kappa <- res[[5]]
  if (!is.null(kappa)) colnames(kappa) <- result$names
  structure(list(curves = as.data.frame(values, check.names = FALSE), bars = bars, node_curvature = kappa,
                 transitions = result$transitions, result = result), class = "critplex_sweep")
}

print.critplex_sweep <- function(x, ...) {
  cat(sprintf("critplex sweep: %d grid points, curves %s\n", nrow(x$curves), paste(names(x$curves), collapse = ", ")))
  if (!is.null(x$bars)) cat(sprintf("  %d persistence bars\n", nrow(x$bars)))
  invisible(x)
}

subject_result <- function(doc) {
  bands <- lapply(doc$bands, function(b) list(name = b$band, curves = curves_frame(b$curves),
                                               connectivity = b$connectivity, null = b$null, sweep = b$sweep))
  structure(list(subject = doc$subject, group = doc$group, covariates = doc$covariates, bands = bands,
                 curves = if (length(bands)) bands[[1]]$curves else NULL, document = doc),
            class = "critplex_subject")
}

critplex_subject <- function(config, out_dir = NULL) {
  subject_result(parse_json(.Call(cpxr_subject, config_json(config, anchor_at_file = TRUE), out_dir)))
}

print.critplex_subject <- function(x, ...) {
  cat(sprintf("critplex subject %s (group %s): %d band(s), %d grid points\n", x$subject,
              if (is.null(x$group)) "none" else x$group, length(x$bands), NROW(x$curves)))
  invisible(x)
}

critplex_cohort <- function(manifest, config, out_dir, workers = 0L, force = FALSE) {
  opts <- options_json(list(workers = as.integer(workers), force = isTRUE(force)))
  summary <- jsonlite::fromJSON(.Call(cpxr_cohort, manifest, config_json(config), out_dir, opts),
                                simplifyVector = FALSE)
  structure(list(out_dir = out_dir, done = summary$done, skipped = summary$skipped, failed = summary$failed,
                 seconds = summary$seconds, subjects = records_frame(summary$subjects), summary = summary),
            class = "critplex_cohort")
}

print.critplex_cohort <- function(x, ...) {
  cat(sprintf("critplex cohort in %s: %d done, %d skipped, %d failed\n", x$out_dir, x$done, x$skipped, x$failed))
  invisible(x)
}

critplex_compare <- function(dir, options = NULL) {
  text <- .Call(cpxr_compare, dir, options_json(options))
  doc <- jsonlite::fromJSON(text, simplifyVector = FALSE)
  structure(list(dir = dir, tests = read_group_tests(file.path(dir, "group_tests.tsv")),
                 groups = vapply(doc$groups, function(g) g$name, character(1)), document = parse_json(text)),
            class = "critplex_comparison")
}

# The group-test table the comparison call wrote (the C interface has no typed accessor
# for it yet): its columns exactly, numbers as numbers, missing values as NA.
read_group_tests <- function(path) {
  utils::read.delim(path, check.names = FALSE, stringsAsFactors = FALSE, na.strings = c("n/a", "NA", "NaN"),
                    quote = "", comment.char = "")
}

print.critplex_comparison <- function(x, ...) {
  cat(sprintf("critplex comparison of %s: %d tests\n", paste(x$groups, collapse = " vs "), nrow(x$tests)))
  invisible(x)
}

critplex_report <- function(dir, options = NULL) .Call(cpxr_report, dir, options_json(options))

critplex_simulate <- function(out_dir, options = NULL) {
  parse_json(.Call(cpxr_simulate, options_json(options), out_dir))
}
