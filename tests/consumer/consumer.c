/* A program outside the project: builds against the installed header and library only. */
#include <critplex/critplex.h>
#include <stdio.h>

int main(void) {
  /* Two regions over four time points, perfectly anti-correlated. */
  const double data[8] = {1, 4, 2, 3, 3, 2, 4, 1};
  cpx_series* series = NULL;
  cpx_matrix* matrix = NULL;
  double r[4];
  if (cpx_abi_version() != CPX_ABI_VERSION) return 1;
  if (cpx_series_create(data, 4, 2, CPX_ROW_MAJOR, NULL, &series) != CPX_OK) {
    fprintf(stderr, "%s\n", cpx_last_error());
    return 1;
  }
  if (cpx_connect(series, NULL, &matrix) != CPX_OK || cpx_matrix_copy(matrix, r, 4, CPX_ROW_MAJOR) != CPX_OK) {
    fprintf(stderr, "%s\n", cpx_last_error());
    return 1;
  }
  cpx_matrix_free(matrix);
  cpx_series_free(series);
  if (r[1] > -0.999999) return 1;
  printf("consumer ok: critplex %s, r = %.3f\n", cpx_version(), r[1]);
  return 0;
}
