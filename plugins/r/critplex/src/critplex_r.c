/* R glue over the critplex C interface (critplex/critplex.h only).
 *
 * R matrices are column-major, so arrays cross as CPX_COL_MAJOR and are never
 * transposed. Options arrive as JSON text (the R side converts lists with jsonlite).
 * Every function releases the library's handles and strings before it raises an R error,
 * because Rf_error does not return. */
#include <R.h>
#include <Rinternals.h>
#include <R_ext/Rdynload.h>

#include <critplex/critplex.h>

/* The library's message as an R error (call only after everything is released). */
static void stop_on(cpx_status status) {
  if (status != CPX_OK) Rf_error("critplex: %s (%s)", cpx_last_error(), cpx_status_name(status));
}

/* NULL for R NULL, else the one string (options JSON, paths). */
static const char* text_or_null(SEXP s, const char* what) {
  if (Rf_isNull(s)) return NULL;
  if (!Rf_isString(s) || Rf_length(s) != 1 || STRING_ELT(s, 0) == NA_STRING)
    Rf_error("critplex: %s must be one string", what);
  return Rf_translateCharUTF8(STRING_ELT(s, 0));
}

static void require_real_matrix(SEXP x, const char* what) {
  if (!Rf_isReal(x) || !Rf_isMatrix(x)) Rf_error("critplex: %s must be a numeric matrix", what);
}

/* Region names as a C array (R_alloc'd, freed by R), or NULL. */
static const char** name_array(SEXP names, int count, const char* what) {
  const char** out;
  int i;
  if (Rf_isNull(names)) return NULL;
  if (!Rf_isString(names) || Rf_length(names) != count)
    Rf_error("critplex: %s needs one name per region (%d names for %d regions)", what, Rf_length(names), count);
  out = (const char**)R_alloc((size_t)count, sizeof(char*));
  for (i = 0; i < count; ++i) out[i] = Rf_translateCharUTF8(STRING_ELT(names, i));
  return out;
}

/* A library string as an R string, released either way. */
static SEXP take_string(char* s) {
  SEXP out = PROTECT(Rf_mkCharCE(s ? s : "", CE_UTF8));
  SEXP v = PROTECT(Rf_ScalarString(out));
  cpx_string_free(s);
  UNPROTECT(2);
  return v;
}

SEXP cpxr_version(void) { return Rf_mkString(cpx_version()); }

/* c(ABI of the loaded library, ABI this package was compiled against). */
SEXP cpxr_abi(void) {
  SEXP out = PROTECT(Rf_allocVector(INTSXP, 2));
  INTEGER(out)[0] = cpx_abi_version();
  INTEGER(out)[1] = CPX_ABI_VERSION;
  UNPROTECT(1);
  return out;
}

/* list(values, names, info_json) of one matrix handle (the handle stays the caller's). */
static SEXP matrix_to_list(cpx_matrix* matrix, cpx_status* status) {
  size_t n = 0, k;
  char* info = NULL;
  SEXP out, values, names;
  *status = cpx_matrix_size(matrix, &n);
  if (*status != CPX_OK) return R_NilValue;
  out = PROTECT(Rf_allocVector(VECSXP, 3));
  values = PROTECT(Rf_allocMatrix(REALSXP, (int)n, (int)n));
  names = PROTECT(Rf_allocVector(STRSXP, (R_xlen_t)n));
  *status = cpx_matrix_copy(matrix, REAL(values), n * n, CPX_COL_MAJOR);
  for (k = 0; k < n && *status == CPX_OK; ++k) {
    char* name = NULL;
    *status = cpx_matrix_name(matrix, k, &name);
    if (*status == CPX_OK) SET_STRING_ELT(names, (R_xlen_t)k, Rf_mkCharCE(name, CE_UTF8));
    cpx_string_free(name);
  }
  if (*status == CPX_OK) *status = cpx_matrix_info(matrix, &info);
  SET_VECTOR_ELT(out, 0, values);
  SET_VECTOR_ELT(out, 1, names);
  SET_VECTOR_ELT(out, 2, take_string(info));
  UNPROTECT(3);
  return out;
}

static cpx_series* series_from(SEXP x, SEXP names) {
  SEXP dims;
  int frames, regions;
  const char** cnames;
  cpx_series* series = NULL;
  require_real_matrix(x, "x");
  dims = Rf_getAttrib(x, R_DimSymbol);
  frames = INTEGER(dims)[0];
  regions = INTEGER(dims)[1];
  cnames = name_array(names, regions, "x");
  stop_on(cpx_series_create(REAL(x), (size_t)frames, (size_t)regions, CPX_COL_MAJOR, cnames, &series));
  return series;
}

SEXP cpxr_connect(SEXP x, SEXP names, SEXP options) {
  const char* opts = text_or_null(options, "options");
  cpx_series* series = series_from(x, names);
  cpx_matrix* matrix = NULL;
  cpx_status st = cpx_connect(series, opts, &matrix);
  SEXP out = R_NilValue;
  cpx_series_free(series);
  stop_on(st);
  out = PROTECT(matrix_to_list(matrix, &st));
  cpx_matrix_free(matrix);
  stop_on(st);
  UNPROTECT(1);
  return out;
}

/* list(list(band, values, names, info_json), ...) */
SEXP cpxr_connect_bands(SEXP x, SEXP names, SEXP options) {
  const char* opts = text_or_null(options, "options");
  cpx_series* series = series_from(x, names);
  cpx_matrix_set* set = NULL;
  size_t count = 0, i;
  cpx_status st = cpx_connect_bands(series, opts, &set);
  SEXP out;
  cpx_series_free(series);
  stop_on(st);
  st = cpx_matrix_set_count(set, &count);
  out = PROTECT(Rf_allocVector(VECSXP, (R_xlen_t)count));
  for (i = 0; i < count && st == CPX_OK; ++i) {
    char* band = NULL;
    cpx_matrix* matrix = NULL;
    SEXP entry = R_NilValue;
    st = cpx_matrix_set_band(set, i, &band);
    if (st == CPX_OK) st = cpx_matrix_set_get(set, i, &matrix);
    if (st == CPX_OK) entry = PROTECT(matrix_to_list(matrix, &st));
    else PROTECT(entry);
    cpx_matrix_free(matrix);
    if (st == CPX_OK) {
      SEXP pair = PROTECT(Rf_allocVector(VECSXP, 2));
      SET_VECTOR_ELT(pair, 0, take_string(band));
      band = NULL;
      SET_VECTOR_ELT(pair, 1, entry);
      SET_VECTOR_ELT(out, (R_xlen_t)i, pair);
      UNPROTECT(1);
    }
    cpx_string_free(band);
    UNPROTECT(1);
  }
  cpx_matrix_set_free(set);
  UNPROTECT(1);
  stop_on(st);
  return out;
}

/* list(columns, values (points x columns), json, bars (k x 7) or NULL, node curvature or NULL) */
SEXP cpxr_sweep(SEXP m, SEXP names, SEXP options, SEXP want_bars, SEXP want_curvature) {
  const char* opts = text_or_null(options, "options");
  SEXP dims, out, columns, values, bars = R_NilValue, kappa = R_NilValue;
  cpx_matrix* matrix = NULL;
  cpx_sweep* sweep = NULL;
  char* json = NULL;
  size_t points = 0, ncol = 0, c;
  cpx_status st;
  int n;
  require_real_matrix(m, "m");
  dims = Rf_getAttrib(m, R_DimSymbol);
  n = INTEGER(dims)[0];
  if (n != INTEGER(dims)[1]) Rf_error("critplex: m must be square (%d x %d)", n, INTEGER(dims)[1]);
  st = cpx_matrix_create(REAL(m), (size_t)n, CPX_COL_MAJOR, name_array(names, n, "m"), &matrix);
  if (st == CPX_OK) st = cpx_sweep_run(matrix, opts, NULL, NULL, &sweep);
  cpx_matrix_free(matrix);
  stop_on(st);
  st = cpx_sweep_shape(sweep, &points, &ncol);
  out = PROTECT(Rf_allocVector(VECSXP, 5));
  columns = PROTECT(Rf_allocVector(STRSXP, (R_xlen_t)ncol));
  values = PROTECT(Rf_allocMatrix(REALSXP, (int)points, (int)ncol));
  for (c = 0; c < ncol && st == CPX_OK; ++c) {
    char* name = NULL;
    st = cpx_sweep_column_name(sweep, c, &name);
    if (st == CPX_OK) {
      SET_STRING_ELT(columns, (R_xlen_t)c, Rf_mkCharCE(name, CE_UTF8));
      st = cpx_sweep_curve(sweep, name, REAL(values) + c * points, points);
    }
    cpx_string_free(name);
  }
  if (st == CPX_OK) st = cpx_sweep_json(sweep, &json);
  if (st == CPX_OK && Rf_asLogical(want_bars) == TRUE) {
    size_t count = 0;
    st = cpx_sweep_bars(sweep, -1, CPX_COL_MAJOR, NULL, 0, &count);
    if (st == CPX_OK) {
      bars = PROTECT(Rf_allocMatrix(REALSXP, (int)count, CPX_BAR_COLUMNS));
      st = cpx_sweep_bars(sweep, -1, CPX_COL_MAJOR, REAL(bars), count * CPX_BAR_COLUMNS, &count);
      SET_VECTOR_ELT(out, 3, bars);
      UNPROTECT(1);
    }
  }
  if (st == CPX_OK && Rf_asLogical(want_curvature) == TRUE) {
    size_t rows = 0, nodes = 0;
    st = cpx_sweep_node_curvature(sweep, CPX_COL_MAJOR, NULL, 0, &rows, &nodes);
    if (st == CPX_OK) {
      kappa = PROTECT(Rf_allocMatrix(REALSXP, (int)rows, (int)nodes));
      st = cpx_sweep_node_curvature(sweep, CPX_COL_MAJOR, REAL(kappa), rows * nodes, NULL, NULL);
      SET_VECTOR_ELT(out, 4, kappa);
      UNPROTECT(1);
    }
  }
  cpx_sweep_free(sweep);
  SET_VECTOR_ELT(out, 0, columns);
  SET_VECTOR_ELT(out, 1, values);
  SET_VECTOR_ELT(out, 2, take_string(json));
  UNPROTECT(3);
  stop_on(st);
  return out;
}

SEXP cpxr_subject(SEXP config, SEXP out_dir) {
  char* doc = NULL;
  stop_on(cpx_subject_run(text_or_null(config, "config"), text_or_null(out_dir, "out_dir"), NULL, NULL, &doc));
  return take_string(doc);
}

SEXP cpxr_cohort(SEXP manifest, SEXP config, SEXP out_dir, SEXP options) {
  char* summary = NULL;
  stop_on(cpx_cohort_run(text_or_null(manifest, "manifest"), text_or_null(config, "config"),
                         text_or_null(out_dir, "out_dir"), text_or_null(options, "options"), NULL, NULL, &summary));
  return take_string(summary);
}

SEXP cpxr_compare(SEXP dir, SEXP options) {
  char* doc = NULL;
  stop_on(cpx_cohort_compare(text_or_null(dir, "dir"), text_or_null(options, "options"), &doc));
  return take_string(doc);
}

SEXP cpxr_report(SEXP dir, SEXP options) {
  char* path = NULL;
  stop_on(cpx_cohort_report(text_or_null(dir, "dir"), text_or_null(options, "options"), &path));
  return take_string(path);
}

SEXP cpxr_simulate(SEXP options, SEXP dir) {
  char* summary = NULL;
  stop_on(cpx_simulate_study(text_or_null(options, "options"), text_or_null(dir, "dir"), &summary));
  return take_string(summary);
}

static const R_CallMethodDef methods[] = {
    {"cpxr_version", (DL_FUNC)&cpxr_version, 0},
    {"cpxr_abi", (DL_FUNC)&cpxr_abi, 0},
    {"cpxr_connect", (DL_FUNC)&cpxr_connect, 3},
    {"cpxr_connect_bands", (DL_FUNC)&cpxr_connect_bands, 3},
    {"cpxr_sweep", (DL_FUNC)&cpxr_sweep, 5},
    {"cpxr_subject", (DL_FUNC)&cpxr_subject, 2},
    {"cpxr_cohort", (DL_FUNC)&cpxr_cohort, 4},
    {"cpxr_compare", (DL_FUNC)&cpxr_compare, 2},
    {"cpxr_report", (DL_FUNC)&cpxr_report, 2},
    {"cpxr_simulate", (DL_FUNC)&cpxr_simulate, 2},
    {NULL, NULL, 0}};

void R_init_critplex(DllInfo* info) {
  R_registerRoutines(info, NULL, methods, NULL, NULL);
  R_useDynamicSymbols(info, FALSE);
}
