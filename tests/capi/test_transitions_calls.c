/* The curvature and transitions calls through the public header only: arguments,
 * buffers, errors that name what is wrong, and a worked value. */
#include <critplex/critplex.h>

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static int failures = 0;
#define CHECK(cond)                                                          \
  do {                                                                       \
    if (!(cond)) {                                                           \
      fprintf(stderr, "%s:%d: check failed: %s\n", __FILE__, __LINE__, #cond); \
      ++failures;                                                            \
    }                                                                        \
  } while (0)

int main(void) {
  /* Octahedron: every pair except (0,1), (2,3), (4,5) has weight 1, the rest -1.
   * reference: docs/methods.md worked value, node curvature 1/3 (Knill 2011). */
  double m[36];
  for (int i = 0; i < 6; ++i)
    for (int j = 0; j < 6; ++j) m[i * 6 + j] = (i == j) ? 1.0 : ((i / 2 == j / 2) ? -1.0 : 1.0);
  cpx_matrix* matrix = NULL;
  CHECK(cpx_matrix_create(m, 6, CPX_ROW_MAJOR, NULL, &matrix) == CPX_OK);
  cpx_sweep* sweep = NULL;
  CHECK(cpx_sweep_run(matrix, "{\"grid\": \"every\", \"curvature\": {}}", NULL, NULL, &sweep) == CPX_OK);

  size_t points = 0, nodes = 0;
  CHECK(cpx_sweep_node_curvature(sweep, CPX_COL_MAJOR, NULL, 0, &points, &nodes) == CPX_OK);
  CHECK(nodes == 6);
  CHECK(points >= 2);
  double* kappa = malloc(points * nodes * sizeof(double));
  CHECK(cpx_sweep_node_curvature(sweep, CPX_COL_MAJOR, kappa, points * nodes - 1, NULL, NULL) == CPX_ERR_ARGUMENT);
  CHECK(strstr(cpx_last_error(), "buffer_length") != NULL);
  CHECK(cpx_sweep_node_curvature(sweep, CPX_COL_MAJOR, kappa, points * nodes, NULL, NULL) == CPX_OK);
  for (size_t i = 0; i < nodes; ++i) CHECK(fabs(kappa[i * points + points - 1] - 1.0 / 3.0) < 1e-15);
  free(kappa);
  CHECK(cpx_sweep_node_curvature(NULL, CPX_ROW_MAJOR, NULL, 0, &points, &nodes) == CPX_ERR_ARGUMENT);
  CHECK(strstr(cpx_last_error(), "'sweep'") != NULL);

  char* tsv = NULL;
  CHECK(cpx_sweep_transitions_tsv(sweep, &tsv) == CPX_OK);
  CHECK(tsv != NULL && strncmp(tsv, "kind\tk\tdensity\tdirection", 24) == 0);
  cpx_string_free(tsv);

  /* Transitions of host curves: chi 3, 1, -1, -3 crosses zero at 0.15, downwards.
   * reference: linear interpolation between the bracketing points (common practice). */
  const double density[4] = {0.0, 0.1, 0.2, 0.3}, chi[4] = {3, 1, -1, -3};
  char* json = NULL;
  CHECK(cpx_transitions_from_curves(density, chi, 4, NULL, 0, CPX_ROW_MAJOR, 0, NULL, &json) == CPX_OK);
  CHECK(json != NULL && strstr(json, "\"first_chi_zero\":0.15") != NULL);
  cpx_string_free(json);
  json = NULL;
  CHECK(cpx_transitions_from_curves(NULL, chi, 4, NULL, 0, CPX_ROW_MAJOR, 0, NULL, &json) == CPX_ERR_ARGUMENT);
  CHECK(strstr(cpx_last_error(), "'density'") != NULL);
  CHECK(cpx_transitions_from_curves(density, chi, 4, NULL, 0, CPX_ROW_MAJOR, 0, "{\"colour\": 1}", &json) ==
        CPX_ERR_ARGUMENT);
  CHECK(json == NULL);

  /* E[chi] of G(2, p) = 2 - p. reference: docs/methods.md closed form. */
  const double p[2] = {0.25, 1.0};
  CHECK(cpx_random_graph_expectations(2, p, 2, "{\"zeros\": false}", &json) == CPX_OK);
  CHECK(json != NULL && strstr(json, "\"chi\":1.75") != NULL);
  cpx_string_free(json);
  const double bad[1] = {-0.5};
  CHECK(cpx_random_graph_expectations(10, bad, 1, NULL, &json) == CPX_ERR_ARGUMENT);
  CHECK(strstr(cpx_last_error(), "'p'") != NULL);

  cpx_sweep_free(sweep);
  cpx_matrix_free(matrix);
  if (failures) fprintf(stderr, "%d check(s) failed\n", failures);
  return failures ? 1 : 0;
}
