/* A progress callback that asks to stop is never called again, and the call ends with
 * CPX_ERR_CANCELLED (issue 13: one callback used to arrive after the cancelling one). */
#include <critplex/critplex.h>

#include <stdio.h>

#include "check.h"

#define N 30

typedef struct {
  int calls;
  int cancel_at;     /* the call (1-based) that asks to stop */
  int after_cancel;  /* calls that arrived after it */
  double last;
} counter;

static int count_and_cancel(double fraction, void* user) {
  counter* c = (counter*)user;
  c->calls++;
  if (c->cancel_at > 0 && c->calls > c->cancel_at) c->after_cancel++;
  c->last = fraction;
  return c->cancel_at > 0 && c->calls >= c->cancel_at;
}

int main(void) {
  double data[N * N];
  cpx_matrix* m = NULL;
  cpx_sweep* w = NULL;
  int i, j, k;
  unsigned state = 7u;
  for (i = 0; i < N; ++i)
    for (j = 0; j <= i; ++j) {
      state = state * 1103515245u + 12345u;
      data[i * N + j] = data[j * N + i] = i == j ? 1.0 : ((state >> 8) & 0xffff) / 65536.0;
    }
  EXPECT(cpx_matrix_create(data, N, CPX_ROW_MAJOR, NULL, &m) == CPX_OK);
  {
    counter all = {0, 0, 0, 0.0};
    EXPECT(cpx_sweep_run(m, "{\"grid\": 0.02, \"homology\": {\"max_dimension\": 1}}", count_and_cancel, &all, &w) == CPX_OK);
    EXPECT(all.calls > 3);
    EXPECT(all.last == 1.0);
    cpx_sweep_free(w);
    w = NULL;
    for (k = 1; k <= 3 && k < all.calls; ++k) {
      counter c = {0, k, 0, 0.0};
      EXPECT(cpx_sweep_run(m, "{\"grid\": 0.02, \"homology\": {\"max_dimension\": 1}}", count_and_cancel, &c, &w) ==
             CPX_ERR_CANCELLED);
      EXPECT(w == NULL);
      EXPECT(c.calls == k);
      EXPECT(c.after_cancel == 0);
    }
  }
  cpx_matrix_free(m);
  if (failures == 0) printf("progress: no callback after a cancel\n");
  return failures == 0 ? 0 : 1;
}
