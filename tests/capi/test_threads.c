/* Independent handles from different threads at once give the same results as one
 * thread alone (the thread-safety promise of the C interface). */
#include <critplex/critplex.h>

#include <pthread.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define FRAMES 120
#define REGIONS 24

typedef struct {
  unsigned seed;
  char* json; /* the sweep document */
  int failed;
} job;

static double next_uniform(unsigned* state) {
  *state = *state * 1103515245u + 12345u;
  return ((*state >> 8) & 0xffff) / 65536.0 - 0.5;
}

static void* run(void* arg) {
  job* j = (job*)arg;
  double data[FRAMES * REGIONS];
  unsigned state = j->seed;
  cpx_series* s = NULL;
  cpx_matrix* m = NULL;
  cpx_sweep* w = NULL;
  int t, r;
  for (t = 0; t < FRAMES; ++t) {
    double shared = next_uniform(&state);
    for (r = 0; r < REGIONS; ++r) data[t * REGIONS + r] = (r % 3 == 0 ? shared : 0.0) + next_uniform(&state);
  }
  j->failed = cpx_series_create(data, FRAMES, REGIONS, CPX_ROW_MAJOR, NULL, &s) != CPX_OK ||
              cpx_connect(s, NULL, &m) != CPX_OK ||
              cpx_sweep_run(m, "{\"max_density\": 0.6, \"grid\": 0.05, \"homology\": {\"max_dimension\": 2}}", NULL,
                            NULL, &w) != CPX_OK ||
              cpx_sweep_json(w, &j->json) != CPX_OK;
  if (j->failed) fprintf(stderr, "thread %u: %s\n", j->seed, cpx_last_error());
  cpx_sweep_free(w);
  cpx_matrix_free(m);
  cpx_series_free(s);
  return NULL;
}

int main(void) {
  enum { N = 4 };
  job alone[N], together[N];
  pthread_t threads[N];
  int i, failures = 0;
  for (i = 0; i < N; ++i) {
    alone[i].seed = together[i].seed = 17u + (unsigned)i;
    alone[i].json = together[i].json = NULL;
    run(&alone[i]);
  }
  for (i = 0; i < N; ++i) pthread_create(&threads[i], NULL, run, &together[i]);
  for (i = 0; i < N; ++i) pthread_join(threads[i], NULL);
  for (i = 0; i < N; ++i) {
    if (alone[i].failed || together[i].failed || strcmp(alone[i].json, together[i].json) != 0) {
      fprintf(stderr, "job %d differs between one thread and %d threads\n", i, N);
      failures++;
    }
    cpx_string_free(alone[i].json);
    cpx_string_free(together[i].json);
  }
  if (failures == 0) printf("threads: %d concurrent sweeps equal the sequential ones\n", N);
  return failures == 0 ? 0 : 1;
}
