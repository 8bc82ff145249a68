/* A long sweep is cancelled through its progress callback: the call returns
 * CPX_ERR_CANCELLED soon after the callback asks, leaves its output untouched and says
 * why in cpx_last_error (the cancellation promise of the C interface). */
#include <critplex/critplex.h>

#include <stdio.h>
#include <string.h>

#include "check.h"

#define REGIONS 150

typedef struct {
  int calls;
  int calls_after_cancel;
  double fraction_at_cancel;
} watch;

/* Cancels at the first report that comes before the end of the sweep. */
static int cancel_midway(double fraction, void* user) {
  watch* w = (watch*)user;
  ++w->calls;
  if (w->fraction_at_cancel >= 0) {
    ++w->calls_after_cancel;
    return 1;
  }
  if (fraction >= 1.0) return 0;
  w->fraction_at_cancel = fraction;
  return 1;
}

static int count_all(double fraction, void* user) {
  (void)fraction;
  ++((watch*)user)->calls;
  return 0;
}

int main(void) {
  /* An invented matrix: every pair strongly and differently correlated, so the clique
   * counts up to density 0.7 take the engine seconds on one thread. */
  static double values[REGIONS * REGIONS];
  unsigned state = 2026u;
  int i, j;
  for (i = 0; i < REGIONS; ++i) {
    values[i * REGIONS + i] = 1.0;
    for (j = 0; j < i; ++j) {
      state = state * 1103515245u + 12345u;
      values[i * REGIONS + j] = values[j * REGIONS + i] = 0.2 + 0.6 * ((state >> 8) & 0xffff) / 65536.0;
    }
  }
  cpx_matrix* m = NULL;
  EXPECT(cpx_matrix_create(values, REGIONS, CPX_ROW_MAJOR, NULL, &m) == CPX_OK);

  const char* options = "{\"max_density\": 0.7, \"grid\": 0.05, \"cliques\": {\"threads\": 1}}";
  watch w = {0, 0, -1.0};
  cpx_sweep* sweep = NULL;
  const cpx_status status = cpx_sweep_run(m, options, cancel_midway, &w, &sweep);
  EXPECT(status == CPX_ERR_CANCELLED);
  EXPECT(sweep == NULL); /* outputs untouched on failure */
  EXPECT(w.fraction_at_cancel >= 0.0 && w.fraction_at_cancel < 1.0);
  EXPECT(strstr(cpx_last_error(), "cancelled") != NULL);
  if (status != CPX_ERR_CANCELLED) fprintf(stderr, "status %s: %s\n", cpx_status_name(status), cpx_last_error());

  /* The same call with a callback that never cancels runs to the end: what cancelled
   * the first one was the callback. A small range keeps it short. */
  watch quiet = {0, 0, -1.0};
  EXPECT(cpx_sweep_run(m, "{\"max_density\": 0.05, \"cliques\": {\"threads\": 1}}", count_all, &quiet, &sweep) ==
         CPX_OK);
  EXPECT(sweep != NULL);
  EXPECT(quiet.calls >= 1);
  cpx_sweep_free(sweep);
  cpx_matrix_free(m);
  if (failures == 0)
    printf("cancel: cancelled at progress %.3f (%d reports, %d after the request)\n", w.fraction_at_cancel, w.calls,
           w.calls_after_cancel);
  return failures == 0 ? 0 : 1;
}
