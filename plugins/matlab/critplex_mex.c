/* MEX gateway for MATLAB and GNU Octave over the critplex C interface (critplex.h only).
 * The critplex_*.m functions call it; build it with critplex_build_mex.m.
 *   v = critplex_mex('version')                 [runtime, built_for] = critplex_mex('abi')
 *   [R, info_json, names] = critplex_mex('connect', X, options_json, names)
 *   [columns, values, json, bars, kappa] = critplex_mex('sweep', M, options_json, names, want_bars, want_kappa)
 *   doc_json = critplex_mex('subject', config_json, out_dir)      (out_dir '' for none)
 *   summary_json = critplex_mex('cohort', manifest, config_json, out_dir, options_json)
 *   comparison_json = critplex_mex('compare', dir, options_json)
 *   path = critplex_mex('report', dir, options_json)
 *   summary_json = critplex_mex('simulate', dir, options_json)
 * MATLAB arrays are column-major, so matrices cross as CPX_COL_MAJOR without copies, and
 * doubles (Inf, -Inf, NaN included) arrive as they are: no text in between. */
#include "mex.h"

#include <critplex/critplex.h>
#include <string.h>

/* Text arguments are copied into mxMalloc'd strings, released by MATLAB after the call. */
static char* text_arg(int nrhs, const mxArray* prhs[], int index, const char* what) {
  if (index >= nrhs) mexErrMsgIdAndTxt("critplex:argument", "critplex: %s is missing", what);
  if (mxIsEmpty(prhs[index])) return NULL;
  if (!mxIsChar(prhs[index])) mexErrMsgIdAndTxt("critplex:argument", "critplex: %s must be text", what);
  return mxArrayToString(prhs[index]);
}

static const mxArray* real_matrix(int nrhs, const mxArray* prhs[], int index, const char* what) {
  const mxArray* a;
  if (index >= nrhs) mexErrMsgIdAndTxt("critplex:argument", "critplex: %s is missing", what);
  a = prhs[index];
  if (!mxIsDouble(a) || mxIsComplex(a) || mxIsSparse(a) || mxGetNumberOfDimensions(a) != 2)
    mexErrMsgIdAndTxt("critplex:argument", "critplex: %s must be a real double matrix", what);
  return a;
}

/* Region names from a cell array of char (one per region), or NULL for an empty argument. */
static const char** name_array(int nrhs, const mxArray* prhs[], int index, size_t count) {
  const mxArray* cell;
  const char** names;
  size_t i;
  if (index >= nrhs || mxIsEmpty(prhs[index])) return NULL;
  cell = prhs[index];
  if (!mxIsCell(cell) || mxGetNumberOfElements(cell) != count)
    mexErrMsgIdAndTxt("critplex:argument", "critplex: names must be a cell array with one name per region (%d)",
                      (int)count);
  names = (const char**)mxMalloc(count * sizeof(char*));
  for (i = 0; i < count; ++i) {
    const mxArray* e = mxGetCell(cell, i);
    if (e == NULL || !mxIsChar(e)) mexErrMsgIdAndTxt("critplex:argument", "critplex: name %d is not text", (int)i + 1);
    names[i] = mxArrayToString(e);
  }
  return names;
}

static int flag_arg(int nrhs, const mxArray* prhs[], int index) {
  return index < nrhs && !mxIsEmpty(prhs[index]) && mxIsLogicalScalarTrue(prhs[index]);
}

/* A library string as a MATLAB char array; the library's copy is released. */
static mxArray* take_string(char* s) {
  mxArray* out = mxCreateString(s ? s : "");
  cpx_string_free(s);
  return out;
}

/* Raises the library's message (after the caller released its handles). */
static void fail_on(cpx_status st) {
  if (st != CPX_OK) mexErrMsgIdAndTxt("critplex:failed", "critplex: %s (%s)", cpx_last_error(), cpx_status_name(st));
}

static mxArray* matrix_names(const cpx_matrix* matrix, size_t n, cpx_status* st) {
  mxArray* names = mxCreateCellMatrix(1, n);
  size_t i;
  for (i = 0; i < n && *st == CPX_OK; ++i) {
    char* name = NULL;
    *st = cpx_matrix_name(matrix, i, &name);
    if (*st == CPX_OK) mxSetCell(names, i, mxCreateString(name));
    cpx_string_free(name);
  }
  return names;
}

static void do_connect(int nlhs, mxArray* plhs[], int nrhs, const mxArray* prhs[]) {
  const mxArray* x = real_matrix(nrhs, prhs, 1, "X");
  char* options = text_arg(nrhs, prhs, 2, "options");
  const char** names = name_array(nrhs, prhs, 3, mxGetN(x));
  cpx_series* series = NULL;
  cpx_matrix* matrix = NULL;
  char* info = NULL;
  size_t n = 0;
  cpx_status st = cpx_series_create(mxGetPr(x), mxGetM(x), mxGetN(x), CPX_COL_MAJOR, names, &series);
  if (st == CPX_OK) st = cpx_connect(series, options, &matrix);
  cpx_series_free(series);
  if (st == CPX_OK) st = cpx_matrix_size(matrix, &n);
  if (st == CPX_OK) {
    plhs[0] = mxCreateDoubleMatrix(n, n, mxREAL);
    st = cpx_matrix_copy(matrix, mxGetPr(plhs[0]), n * n, CPX_COL_MAJOR);
  }
  if (st == CPX_OK) st = cpx_matrix_info(matrix, &info);
  if (st == CPX_OK && nlhs > 1) plhs[1] = mxCreateString(info);
  cpx_string_free(info);
  if (st == CPX_OK && nlhs > 2) plhs[2] = matrix_names(matrix, n, &st);
  cpx_matrix_free(matrix);
  fail_on(st);
}

static mxArray* sweep_bars(const cpx_sweep* sweep, cpx_status* st) {
  size_t count = 0;
  mxArray* bars;
  *st = cpx_sweep_bars(sweep, -1, CPX_COL_MAJOR, NULL, 0, &count);
  if (*st != CPX_OK) return mxCreateDoubleMatrix(0, 0, mxREAL);
  bars = mxCreateDoubleMatrix(count, CPX_BAR_COLUMNS, mxREAL);
  *st = cpx_sweep_bars(sweep, -1, CPX_COL_MAJOR, mxGetPr(bars), count * CPX_BAR_COLUMNS, &count);
  return bars;
}

static mxArray* sweep_kappa(const cpx_sweep* sweep, cpx_status* st) {
  size_t points = 0, nodes = 0;
  mxArray* kappa;
  *st = cpx_sweep_node_curvature(sweep, CPX_COL_MAJOR, NULL, 0, &points, &nodes);
  if (*st != CPX_OK) return mxCreateDoubleMatrix(0, 0, mxREAL);
  kappa = mxCreateDoubleMatrix(points, nodes, mxREAL);
  *st = cpx_sweep_node_curvature(sweep, CPX_COL_MAJOR, mxGetPr(kappa), points * nodes, NULL, NULL);
  return kappa;
}

/* Bars and node curvature are filled only when asked (want_bars, want_kappa), because
 * they exist only when the options ran those engines; otherwise they are []. */
static void do_sweep(int nlhs, mxArray* plhs[], int nrhs, const mxArray* prhs[]) {
  const mxArray* m = real_matrix(nrhs, prhs, 1, "M");
  char* options;
  const char** names;
  cpx_matrix* matrix = NULL;
  cpx_sweep* sweep = NULL;
  char* json = NULL;
  size_t points = 0, columns = 0, c;
  cpx_status st;
  if (mxGetM(m) != mxGetN(m)) mexErrMsgIdAndTxt("critplex:argument", "critplex: M must be square");
  options = text_arg(nrhs, prhs, 2, "options");
  names = name_array(nrhs, prhs, 3, mxGetM(m));
  st = cpx_matrix_create(mxGetPr(m), mxGetM(m), CPX_COL_MAJOR, names, &matrix);
  if (st == CPX_OK) st = cpx_sweep_run(matrix, options, NULL, NULL, &sweep);
  cpx_matrix_free(matrix);
  if (st == CPX_OK) st = cpx_sweep_shape(sweep, &points, &columns);
  if (st == CPX_OK) {
    plhs[0] = mxCreateCellMatrix(1, columns);
    plhs[1] = mxCreateDoubleMatrix(points, columns, mxREAL);
  }
  for (c = 0; c < columns && st == CPX_OK; ++c) {
    char* name = NULL;
    st = cpx_sweep_column_name(sweep, c, &name);
    if (st == CPX_OK) {
      mxSetCell(plhs[0], c, mxCreateString(name));
      st = cpx_sweep_curve(sweep, name, mxGetPr(plhs[1]) + c * points, points);
    }
    cpx_string_free(name);
  }
  if (st == CPX_OK && nlhs > 2) {
    st = cpx_sweep_json(sweep, &json);
    if (st == CPX_OK) plhs[2] = take_string(json);
  }
  if (st == CPX_OK && nlhs > 3)
    plhs[3] = flag_arg(nrhs, prhs, 4) ? sweep_bars(sweep, &st) : mxCreateDoubleMatrix(0, 0, mxREAL);
  if (st == CPX_OK && nlhs > 4)
    plhs[4] = flag_arg(nrhs, prhs, 5) ? sweep_kappa(sweep, &st) : mxCreateDoubleMatrix(0, 0, mxREAL);
  cpx_sweep_free(sweep);
  fail_on(st);
}

void mexFunction(int nlhs, mxArray* plhs[], int nrhs, const mxArray* prhs[]) {
  char* command;
  char* out = NULL;
  cpx_status st = CPX_OK;
  if (nrhs < 1 || !mxIsChar(prhs[0]))
    mexErrMsgIdAndTxt("critplex:argument", "critplex: the first argument is a command name");
  command = mxArrayToString(prhs[0]);
  /* The ABI check: the library loaded with this gateway must speak the ABI it was built for. */
  if (cpx_abi_version() != CPX_ABI_VERSION && strcmp(command, "abi") != 0)
    mexErrMsgIdAndTxt("critplex:abi",
                      "critplex: this MEX gateway was built for ABI %d of libcritplex, but the library loaded (%s) "
                      "reports ABI %d: rebuild it with critplex_build_mex",
                      CPX_ABI_VERSION, cpx_version(), cpx_abi_version());
  if (strcmp(command, "version") == 0) {
    plhs[0] = mxCreateString(cpx_version());
  } else if (strcmp(command, "abi") == 0) {
    plhs[0] = mxCreateDoubleScalar((double)cpx_abi_version());
    if (nlhs > 1) plhs[1] = mxCreateDoubleScalar((double)CPX_ABI_VERSION);
  } else if (strcmp(command, "connect") == 0) {
    do_connect(nlhs, plhs, nrhs, prhs);
  } else if (strcmp(command, "sweep") == 0) {
    do_sweep(nlhs, plhs, nrhs, prhs);
  } else if (strcmp(command, "subject") == 0) {
    st = cpx_subject_run(text_arg(nrhs, prhs, 1, "config"), text_arg(nrhs, prhs, 2, "out_dir"), NULL, NULL, &out);
  } else if (strcmp(command, "cohort") == 0) {
    st = cpx_cohort_run(text_arg(nrhs, prhs, 1, "manifest"), text_arg(nrhs, prhs, 2, "config"),
                        text_arg(nrhs, prhs, 3, "out_dir"), text_arg(nrhs, prhs, 4, "options"), NULL, NULL, &out);
  } else if (strcmp(command, "compare") == 0) {
    st = cpx_cohort_compare(text_arg(nrhs, prhs, 1, "dir"), text_arg(nrhs, prhs, 2, "options"), &out);
  } else if (strcmp(command, "report") == 0) {
    st = cpx_cohort_report(text_arg(nrhs, prhs, 1, "dir"), text_arg(nrhs, prhs, 2, "options"), &out);
  } else if (strcmp(command, "simulate") == 0) {
    st = cpx_simulate_study(text_arg(nrhs, prhs, 2, "options"), text_arg(nrhs, prhs, 1, "dir"), &out);
  } else {
    mexErrMsgIdAndTxt("critplex:argument",
                      "critplex: unknown command '%s' (version, abi, connect, sweep, subject, cohort, compare, "
                      "report, simulate)", command);
  }
  if (st == CPX_OK && out != NULL) plhs[0] = take_string(out);
  fail_on(st);
}
