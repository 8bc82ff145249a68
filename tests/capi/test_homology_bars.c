/* The homology engine from C99 with the public header only: a circle of six nodes
 * (Betti numbers 1, 1 over Z/2: standard algebraic topology, docs/methods.md) through
 * cpx_sweep_run with a "homology" section, its bars by the two-call cpx_sweep_bars in
 * both layouts, the betti columns, and the error for a sweep without homology. */
#include <critplex/critplex.h>

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "check.h"

int main(void) {
  enum { N = 6 };
  double m[N * N];
  size_t i, j;
  /* A 6-cycle: edge i,i+1 has weight 0.9 - 0.1 i, so it enters at rank i + 1. */
  for (i = 0; i < N; ++i)
    for (j = 0; j < N; ++j) m[i * N + j] = i == j ? 1.0 : 0.0;
  for (i = 0; i < N; ++i) {
    j = (i + 1) % N;
    m[i * N + j] = m[j * N + i] = 0.9 - 0.1 * (double)i;
  }
  cpx_matrix* matrix = NULL;
  EXPECT(cpx_matrix_create(m, N, CPX_ROW_MAJOR, NULL, &matrix) == CPX_OK);
  cpx_sweep* sweep = NULL;
  EXPECT(cpx_sweep_run(matrix, "{\"grid\": \"every\", \"homology\": {\"max_dimension\": 2}}", NULL, NULL, &sweep) ==
         CPX_OK);

  size_t bars = 0;
  EXPECT(cpx_sweep_bars(sweep, -1, CPX_ROW_MAJOR, NULL, 0, &bars) == CPX_OK);
  EXPECT(bars == 6 + 1); /* five merges, one essential component, one essential loop */
  double* table = malloc(bars * CPX_BAR_COLUMNS * sizeof(double));
  EXPECT(cpx_sweep_bars(sweep, -1, CPX_ROW_MAJOR, table, bars * CPX_BAR_COLUMNS, &bars) == CPX_OK);
  /* Bars come sorted by dimension; the last one is the loop, born when the sixth edge
   * closes the circle and never dying. */
  EXPECT(table[(bars - 1) * CPX_BAR_COLUMNS + 0] == 1.0);
  EXPECT(table[(bars - 1) * CPX_BAR_COLUMNS + 1] == 6.0);
  EXPECT(isinf(table[(bars - 1) * CPX_BAR_COLUMNS + 2]));
  EXPECT(fabs(table[(bars - 1) * CPX_BAR_COLUMNS + 3] - 6.0 / 15.0) < 1e-15);
  EXPECT(fabs(table[(bars - 1) * CPX_BAR_COLUMNS + 5] - 0.4) < 1e-15); /* the weight of the closing edge */
  EXPECT(isnan(table[(bars - 1) * CPX_BAR_COLUMNS + 6]));
  free(table);

  /* One dimension, column-major: the single loop. */
  double loop[CPX_BAR_COLUMNS];
  size_t loops = 0;
  EXPECT(cpx_sweep_bars(sweep, 1, CPX_COL_MAJOR, loop, CPX_BAR_COLUMNS, &loops) == CPX_OK && loops == 1);
  EXPECT(loop[1] == 6.0);
  /* Too small a buffer: an argument error naming it. */
  EXPECT(cpx_sweep_bars(sweep, -1, CPX_ROW_MAJOR, loop, CPX_BAR_COLUMNS, &loops) == CPX_ERR_ARGUMENT);
  EXPECT(strstr(cpx_last_error(), "buffer_length") != NULL);

  /* The Betti curves are columns of the sweep: after the last edge, (1, 1, 0). */
  size_t points = 0;
  EXPECT(cpx_sweep_shape(sweep, &points, NULL) == CPX_OK && points == 7);
  double curve[7];
  EXPECT(cpx_sweep_curve(sweep, "betti_0", curve, 7) == CPX_OK && curve[0] == 6.0 && curve[6] == 1.0);
  EXPECT(cpx_sweep_curve(sweep, "betti_1", curve, 7) == CPX_OK && curve[5] == 0.0 && curve[6] == 1.0);
  EXPECT(cpx_sweep_curve(sweep, "betti_2", curve, 7) == CPX_OK && curve[6] == 0.0);
  cpx_sweep_free(sweep);

  /* Without a "homology" section there are no bars to ask for. */
  EXPECT(cpx_sweep_run(matrix, "{}", NULL, NULL, &sweep) == CPX_OK);
  EXPECT(cpx_sweep_bars(sweep, -1, CPX_ROW_MAJOR, NULL, 0, &bars) == CPX_ERR_ARGUMENT);
  EXPECT(strstr(cpx_last_error(), "homology") != NULL);
  cpx_sweep_free(sweep);
  /* Unknown homology options are refused, naming the key. */
  sweep = NULL;
  EXPECT(cpx_sweep_run(matrix, "{\"homology\": {\"dimension\": 2}}", NULL, NULL, &sweep) == CPX_ERR_ARGUMENT);
  EXPECT(sweep == NULL && strstr(cpx_last_error(), "dimension") != NULL);
  cpx_matrix_free(matrix);

  if (failures) fprintf(stderr, "%d failure(s)\n", failures);
  return failures ? 1 : 0;
}
