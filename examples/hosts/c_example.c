/* critplex from C: cc c_example.c $(pkg-config --cflags --libs critplex) */
#include <critplex/critplex.h>
#include <stdio.h>

int main(int argc, char** argv) {
  cpx_series* s = NULL;
  cpx_matrix* m = NULL;
  cpx_sweep* w = NULL;
  char* tsv = NULL;
  if (argc < 2) {
    fprintf(stderr, "usage: %s TIMESERIES.tsv\n", argv[0]);
    return 2;
  }
  if (cpx_series_read(argv[1], NULL, &s) != CPX_OK || cpx_connect(s, NULL, &m) != CPX_OK ||
      cpx_sweep_run(m, "{\"max_density\": 0.3, \"grid\": 0.05}", NULL, NULL, &w) != CPX_OK ||
      cpx_sweep_curves_tsv(w, &tsv) != CPX_OK) {
    fprintf(stderr, "critplex: %s\n", cpx_last_error());
    cpx_sweep_free(w);
    cpx_matrix_free(m);
    cpx_series_free(s);
    return 1;
  }
  fputs(tsv, stdout);
  cpx_string_free(tsv);
  cpx_sweep_free(w);
  cpx_matrix_free(m);
  cpx_series_free(s);
  return 0;
}
