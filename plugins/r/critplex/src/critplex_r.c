/* R glue over the critplex C interface. R matrices are column-major, so every array
 * crosses as CPX_COL_MAJOR and nothing is transposed. Options travel as JSON text. */
#include <R.h>
#include <Rinternals.h>
#include <R_ext/Rdynload.h>

#include <critplex/critplex.h>

/* Raises an R error with the library's message (after the caller released its handles). */
static void stop_on(cpx_status status) {
  if (status != CPX_OK) Rf_error("critplex: %s", cpx_last_error());
}

static const char* options_text(SEXP options) {
  if (Rf_isNull(options)) return NULL;
  if (!Rf_isString(options) || Rf_length(options) != 1) Rf_error("critplex: options must be one JSON string");
  return CHAR(STRING_ELT(options, 0));
}

SEXP critplex_r_version(void) { return Rf_mkString(cpx_version()); }

SEXP critplex_r_connect(SEXP x, SEXP names, SEXP options) {
  cpx_series* series = NULL;
  cpx_matrix* matrix = NULL;
  const char** cnames = NULL;
  cpx_status st;
  SEXP dims, out, dimnames;
  int frames, regions, i;
  size_t n;
  if (!Rf_isReal(x) || !Rf_isMatrix(x)) Rf_error("critplex: x must be a numeric matrix (time points x regions)");
  dims = Rf_getAttrib(x, R_DimSymbol);
  frames = INTEGER(dims)[0];
  regions = INTEGER(dims)[1];
  if (!Rf_isNull(names)) {
    if (Rf_length(names) != regions) Rf_error("critplex: one name per column is needed");
    cnames = (const char**)R_alloc((size_t)regions, sizeof(char*));
    for (i = 0; i < regions; ++i) cnames[i] = CHAR(STRING_ELT(names, i));
  }
  st = cpx_series_create(REAL(x), (size_t)frames, (size_t)regions, CPX_COL_MAJOR, cnames, &series);
  if (st == CPX_OK) st = cpx_connect(series, options_text(options), &matrix);
  cpx_series_free(series);
  stop_on(st);
  cpx_matrix_size(matrix, &n);
  out = PROTECT(Rf_allocMatrix(REALSXP, (int)n, (int)n));
  st = cpx_matrix_copy(matrix, REAL(out), n * n, CPX_COL_MAJOR);
  dimnames = PROTECT(Rf_allocVector(VECSXP, 2));
  {
    SEXP nm = PROTECT(Rf_allocVector(STRSXP, (R_xlen_t)n));
    size_t k;
    for (k = 0; k < n && st == CPX_OK; ++k) {
      char* name = NULL;
      st = cpx_matrix_name(matrix, k, &name);
      if (st == CPX_OK) SET_STRING_ELT(nm, (R_xlen_t)k, Rf_mkChar(name));
      cpx_string_free(name);
    }
    SET_VECTOR_ELT(dimnames, 0, nm);
    SET_VECTOR_ELT(dimnames, 1, nm);
    UNPROTECT(1);
  }
  Rf_setAttrib(out, R_DimNamesSymbol, dimnames);
  cpx_matrix_free(matrix);
  UNPROTECT(2);
  stop_on(st);
  return out;
}

/* Returns c(curves_tsv, json) for a symmetric matrix. */
SEXP critplex_r_sweep(SEXP m, SEXP options) {
  cpx_matrix* matrix = NULL;
  cpx_sweep* sweep = NULL;
  char* tsv = NULL;
  char* json = NULL;
  cpx_status st;
  SEXP dims, out;
  if (!Rf_isReal(m) || !Rf_isMatrix(m)) Rf_error("critplex: m must be a numeric square matrix");
  dims = Rf_getAttrib(m, R_DimSymbol);
  if (INTEGER(dims)[0] != INTEGER(dims)[1]) Rf_error("critplex: m must be square");
  st = cpx_matrix_create(REAL(m), (size_t)INTEGER(dims)[0], CPX_COL_MAJOR, NULL, &matrix);
  if (st == CPX_OK) st = cpx_sweep_run(matrix, options_text(options), NULL, NULL, &sweep);
  if (st == CPX_OK) st = cpx_sweep_curves_tsv(sweep, &tsv);
  if (st == CPX_OK) st = cpx_sweep_json(sweep, &json);
  cpx_sweep_free(sweep);
  cpx_matrix_free(matrix);
  if (st != CPX_OK) {
    cpx_string_free(tsv);
    cpx_string_free(json);
    stop_on(st);
  }
  out = PROTECT(Rf_allocVector(STRSXP, 2));
  SET_STRING_ELT(out, 0, Rf_mkChar(tsv));
  SET_STRING_ELT(out, 1, Rf_mkChar(json));
  cpx_string_free(tsv);
  cpx_string_free(json);
  UNPROTECT(1);
  return out;
}

static const R_CallMethodDef methods[] = {
    {"critplex_r_version", (DL_FUNC)&critplex_r_version, 0},
    {"critplex_r_connect", (DL_FUNC)&critplex_r_connect, 3},
    {"critplex_r_sweep", (DL_FUNC)&critplex_r_sweep, 2},
    {NULL, NULL, 0}};

void R_init_critplex(DllInfo* info) {
  R_registerRoutines(info, NULL, methods, NULL, NULL);
  R_useDynamicSymbols(info, FALSE);
}
