/* MEX gateway for MATLAB and GNU Octave over the critplex C interface.
 *   v = critplex_mex('version')
 *   [R, info_json] = critplex_mex('connect', X, options_json)   X: time points x regions
 *   [curves_tsv, json] = critplex_mex('sweep', M, options_json)
 * MATLAB arrays are column-major, so they cross as CPX_COL_MAJOR without copies here.
 * Build: mex critplex_mex.c -lcritplex   (or: mkoctfile --mex critplex_mex.c -lcritplex) */
#include "mex.h"

#include <critplex/critplex.h>
#include <string.h>

static void fail_with(cpx_status st) {
  if (st != CPX_OK) mexErrMsgIdAndTxt("critplex:error", "critplex: %s", cpx_last_error());
}

static char* text_arg(const mxArray* a, const char* what) {
  char* s;
  if (!mxIsChar(a)) mexErrMsgIdAndTxt("critplex:argument", "critplex: %s must be text", what);
  s = mxArrayToString(a);
  return s;
}

static const double* real_matrix(const mxArray* a, const char* what) {
  if (!mxIsDouble(a) || mxIsComplex(a) || mxIsSparse(a) || mxGetNumberOfDimensions(a) != 2)
    mexErrMsgIdAndTxt("critplex:argument", "critplex: %s must be a real double matrix", what);
  return mxGetPr(a);
}

void mexFunction(int nlhs, mxArray* plhs[], int nrhs, const mxArray* prhs[]) {
  char* command;
  char* options = NULL;
  cpx_status st = CPX_OK;
  (void)nlhs;
  if (nrhs < 1) mexErrMsgIdAndTxt("critplex:argument", "critplex: first argument is a command");
  command = text_arg(prhs[0], "the command");
  if (nrhs >= 3) options = text_arg(prhs[2], "options");

  if (strcmp(command, "version") == 0) {
    plhs[0] = mxCreateString(cpx_version());
  } else if (strcmp(command, "connect") == 0) {
    cpx_series* series = NULL;
    cpx_matrix* matrix = NULL;
    char* info = NULL;
    size_t n = 0;
    const double* x;
    if (nrhs < 2) mexErrMsgIdAndTxt("critplex:argument", "critplex: connect needs X");
    x = real_matrix(prhs[1], "X");
    st = cpx_series_create(x, mxGetM(prhs[1]), mxGetN(prhs[1]), CPX_COL_MAJOR, NULL, &series);
    if (st == CPX_OK) st = cpx_connect(series, options, &matrix);
    cpx_series_free(series);
    if (st == CPX_OK) st = cpx_matrix_size(matrix, &n);
    if (st == CPX_OK) {
      plhs[0] = mxCreateDoubleMatrix(n, n, mxREAL);
      st = cpx_matrix_copy(matrix, mxGetPr(plhs[0]), n * n, CPX_COL_MAJOR);
    }
    if (st == CPX_OK) st = cpx_matrix_info(matrix, &info);
    if (st == CPX_OK) plhs[1] = mxCreateString(info);
    cpx_string_free(info);
    cpx_matrix_free(matrix);
  } else if (strcmp(command, "sweep") == 0) {
    cpx_matrix* matrix = NULL;
    cpx_sweep* sweep = NULL;
    char* tsv = NULL;
    char* json = NULL;
    const double* m;
    if (nrhs < 2) mexErrMsgIdAndTxt("critplex:argument", "critplex: sweep needs M");
    m = real_matrix(prhs[1], "M");
    if (mxGetM(prhs[1]) != mxGetN(prhs[1])) mexErrMsgIdAndTxt("critplex:argument", "critplex: M must be square");
    st = cpx_matrix_create(m, mxGetM(prhs[1]), CPX_COL_MAJOR, NULL, &matrix);
    if (st == CPX_OK) st = cpx_sweep_run(matrix, options, NULL, NULL, &sweep);
    if (st == CPX_OK) st = cpx_sweep_curves_tsv(sweep, &tsv);
    if (st == CPX_OK) st = cpx_sweep_json(sweep, &json);
    if (st == CPX_OK) {
      plhs[0] = mxCreateString(tsv);
      plhs[1] = mxCreateString(json);
    }
    cpx_string_free(tsv);
    cpx_string_free(json);
    cpx_sweep_free(sweep);
    cpx_matrix_free(matrix);
  } else {
    mxFree(command);
    mexErrMsgIdAndTxt("critplex:argument", "critplex: unknown command (expected version, connect or sweep)");
  }
  mxFree(command);
  if (options) mxFree(options);
  fail_with(st);
}
