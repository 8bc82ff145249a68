/* Permutation tests and t quantiles from several threads at once give the same results as
 * one thread alone. Under ThreadSanitizer (tests/run.sh, third pass) this also checks that
 * the statistics use only reentrant libm calls (lgamma writes the global signgam;
 * lgamma_r does not). */
#include <critplex/critplex.h>

#include <pthread.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "check.h"

#define ROUNDS 6

typedef struct {
  int index;
  char* results[ROUNDS];
  double quantiles[ROUNDS];
  int failed;
} job;

static void* run(void* arg) {
  job* j = (job*)arg;
  int k;
  for (k = 0; k < ROUNDS; ++k) {
    double a[7], b[6];
    int i;
    for (i = 0; i < 7; ++i) a[i] = 1.0 + 0.37 * i + 0.11 * k;
    for (i = 0; i < 6; ++i) b[i] = 1.4 + 0.29 * i;
    j->failed |= cpx_stats_permutation_test(a, 7, b, 6, "{\"statistic\": \"welch_t\", \"seed\": 5}", &j->results[k]) != CPX_OK;
    j->failed |= cpx_stats_t_quantile(0.975, 3.0 + k, &j->quantiles[k]) != CPX_OK;
  }
  if (j->failed) fprintf(stderr, "thread %d: %s\n", j->index, cpx_last_error());
  return NULL;
}

int main(void) {
  enum { N = 4 };
  job alone, together[N];
  pthread_t threads[N];
  int t, k;
  memset(&alone, 0, sizeof alone);
  memset(together, 0, sizeof together);
  run(&alone);
  EXPECT(!alone.failed);
  for (t = 0; t < N; ++t) {
    together[t].index = t;
    EXPECT(pthread_create(&threads[t], NULL, run, &together[t]) == 0);
  }
  for (t = 0; t < N; ++t) EXPECT(pthread_join(threads[t], NULL) == 0);
  for (t = 0; t < N; ++t) {
    EXPECT(!together[t].failed);
    for (k = 0; k < ROUNDS && !together[t].failed; ++k) {
      EXPECT(strcmp(together[t].results[k], alone.results[k]) == 0);
      EXPECT(together[t].quantiles[k] == alone.quantiles[k]);
      cpx_string_free(together[t].results[k]);
    }
  }
  /* reference: scipy.stats.t.ppf(0.975, 3) = 3.182446305284263 (Debian python3-scipy) */
  EXPECT(alone.quantiles[0] > 3.18244630 && alone.quantiles[0] < 3.18244631);
  for (k = 0; k < ROUNDS; ++k) cpx_string_free(alone.results[k]);
  if (failures == 0) printf("concurrent statistics: %d threads x %d rounds agree with one thread\n", N, ROUNDS);
  return failures == 0 ? 0 : 1;
}
