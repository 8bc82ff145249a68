/* The connectivity calls from C99 with the public header only: one matrix per band,
 * the set's accessors, freeing in any order, errors that name the argument. */
#include <critplex/critplex.h>

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "check.h"

int main(void) {
  /* Invented test input: 4 channels at 100 Hz, a 10 Hz rhythm with lags plus a 25 Hz one. */
  enum { T = 1000, N = 4 };
  static double data[T * N];
  unsigned state = 12345u;
  size_t t, j;
  for (t = 0; t < T; ++t)
    for (j = 0; j < N; ++j) {
      state = state * 1103515245u + 12345u;
      data[t * N + j] = sin(2 * 3.141592653589793 * 10.0 * (double)t / 100.0 + 0.3 * (double)j) +
                        0.5 * sin(2 * 3.141592653589793 * 25.0 * (double)t / 100.0 * (1.0 + 0.01 * (double)j)) +
                        ((double)(state >> 16) / 65536.0 - 0.5);
    }
  cpx_series* series = NULL;
  EXPECT(cpx_series_create(data, T, N, CPX_ROW_MAJOR, NULL, &series) == CPX_OK);

  const char* options = "{\"method\": \"wpli\", \"sampling_interval\": 0.01,"
                        " \"bands\": {\"beta\": [20, 30], \"alpha\": [8, 12]}}";
  cpx_matrix_set* set = NULL;
  EXPECT(cpx_connect_bands(series, options, &set) == CPX_OK);
  size_t count = 0;
  EXPECT(cpx_matrix_set_count(set, &count) == CPX_OK && count == 2);
  char* name = NULL;
  EXPECT(cpx_matrix_set_band(set, 0, &name) == CPX_OK && strcmp(name, "alpha") == 0);  /* low to high */
  cpx_string_free(name);
  cpx_matrix* alpha = NULL;
  EXPECT(cpx_matrix_set_get(set, 0, &alpha) == CPX_OK);
  /* Out of range: an argument error naming the index; the output stays NULL. */
  cpx_matrix* none = NULL;
  EXPECT(cpx_matrix_set_get(set, 2, &none) == CPX_ERR_ARGUMENT && none == NULL);
  EXPECT(strstr(cpx_last_error(), "index") != NULL);
  /* The matrix outlives the set. */
  cpx_matrix_set_free(set);
  double m[N * N];
  EXPECT(cpx_matrix_copy(alpha, m, N * N, CPX_ROW_MAJOR) == CPX_OK);
  for (j = 0; j < N; ++j) EXPECT(m[j * N + j] == 1.0);
  EXPECT(m[1] >= 0.0 && m[1] <= 1.0 && m[1] == m[N]);
  char* info = NULL;
  EXPECT(cpx_matrix_info(alpha, &info) == CPX_OK && strstr(info, "\"alpha\"") != NULL);
  cpx_string_free(info);
  cpx_matrix_free(alpha);

  /* Several bands through cpx_connect: an error that points to cpx_connect_bands. */
  cpx_matrix* single = NULL;
  EXPECT(cpx_connect(series, options, &single) == CPX_ERR_ARGUMENT && single == NULL);
  EXPECT(strstr(cpx_last_error(), "cpx_connect_bands") != NULL);
  /* A cut-off above Nyquist (50 Hz here) names the problem. */
  EXPECT(cpx_connect(series, "{\"sampling_interval\": 0.01, \"filter\": {\"high_hz\": 60}}", &single) ==
         CPX_ERR_ARGUMENT);
  EXPECT(strstr(cpx_last_error(), "Nyquist") != NULL);
  /* NULL handles and NULL outputs. */
  EXPECT(cpx_connect_bands(NULL, NULL, &set) == CPX_ERR_ARGUMENT);
  EXPECT(cpx_matrix_set_count(NULL, &count) == CPX_ERR_ARGUMENT);
  EXPECT(cpx_series_read_image("absent.nii.gz", "absent_labels.nii.gz", NULL, NULL) == CPX_ERR_ARGUMENT);
  cpx_series* image = NULL;
  EXPECT(cpx_series_read_image("absent.nii.gz", "absent_labels.nii.gz", NULL, &image) == CPX_ERR_IO && image == NULL);
  cpx_matrix_set_free(NULL);
  double dt = 0.0;
  EXPECT(cpx_series_sampling_interval(series, &dt) == CPX_OK && isnan(dt));
  cpx_series_free(series);
  if (failures) fprintf(stderr, "%d failure(s)\n", failures);
  return failures ? 1 : 0;
}
