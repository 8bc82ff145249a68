/* The C interface's conventions, exercised from C99 with the public header only:
 * versions, status codes, thread-local errors, layouts, two-call copies, JSON options. */
#include <critplex/critplex.h>

#include <math.h>
#include <pthread.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "check.h"

static void* error_in_thread(void* arg) {
  /* Each thread sees only its own last error. */
  cpx_series* s = NULL;
  const char* path = (const char*)arg;
  int i;
  for (i = 0; i < 200; ++i) {
    if (cpx_series_read(path, NULL, &s) != CPX_ERR_IO) return (void*)1;
    if (strstr(cpx_last_error(), path) == NULL) return (void*)1;
  }
  return NULL;
}

int main(void) {
  /* 4 frames x 3 regions, row-major; region c = -a exactly. */
  const double rows[12] = {1, 2, -1, 2, 4, -2, 3, 1, -3, 4, 3, -4};
  double cols[12];
  double back[12];
  double r[9];
  size_t t = 0, n = 0, i, j;
  char* text = NULL;
  cpx_series* a = NULL;
  cpx_series* b = NULL;
  cpx_matrix* m = NULL;
  pthread_t th1, th2;
  void* res1;
  void* res2;
  const char* names[3] = {"alpha", "beta", "gamma"};

  EXPECT(cpx_abi_version() == CPX_ABI_VERSION);
  EXPECT(strcmp(cpx_version(), CPX_VERSION_STRING) == 0);
  EXPECT(strcmp(cpx_status_name(CPX_ERR_PARSE), "CPX_ERR_PARSE") == 0);
  cpx_string_free(NULL);
  cpx_series_free(NULL);
  cpx_matrix_free(NULL);
  cpx_sweep_free(NULL);

  /* NULL arguments are named. */
  EXPECT(cpx_series_create(NULL, 4, 3, CPX_ROW_MAJOR, NULL, &a) == CPX_ERR_ARGUMENT);
  EXPECT(strstr(cpx_last_error(), "'data'") != NULL);
  EXPECT(cpx_series_create(rows, 4, 3, (cpx_layout)7, NULL, &a) == CPX_ERR_ARGUMENT);
  EXPECT(strstr(cpx_last_error(), "layout") != NULL);
  EXPECT(a == NULL);

  /* Row-major and column-major inputs give the same series. */
  for (i = 0; i < 4; ++i)
    for (j = 0; j < 3; ++j) cols[j * 4 + i] = rows[i * 3 + j];
  EXPECT(cpx_series_create(rows, 4, 3, CPX_ROW_MAJOR, names, &a) == CPX_OK);
  EXPECT(cpx_series_create(cols, 4, 3, CPX_COL_MAJOR, NULL, &b) == CPX_OK);
  EXPECT(cpx_series_shape(b, &t, &n) == CPX_OK && t == 4 && n == 3);
  EXPECT(cpx_series_copy(b, back, 11, CPX_ROW_MAJOR) == CPX_ERR_ARGUMENT); /* short buffer */
  EXPECT(strstr(cpx_last_error(), "12 values") != NULL);
  EXPECT(cpx_series_copy(b, back, 12, CPX_ROW_MAJOR) == CPX_OK);
  EXPECT(memcmp(back, rows, sizeof rows) == 0);
  EXPECT(cpx_series_region_name(a, 1, &text) == CPX_OK && strcmp(text, "beta") == 0);
  cpx_string_free(text);
  EXPECT(cpx_series_region_name(b, 2, &text) == CPX_OK && strcmp(text, "R3") == 0);
  cpx_string_free(text);
  EXPECT(cpx_series_region_name(b, 3, &text) == CPX_ERR_ARGUMENT);

  /* JSON options: unknown keys and bad JSON are errors. */
  EXPECT(cpx_connect(a, "{\"methd\": \"pearson\"}", &m) == CPX_ERR_ARGUMENT);
  EXPECT(strstr(cpx_last_error(), "unknown option \"methd\"") != NULL);
  EXPECT(cpx_connect(a, "{method", &m) == CPX_ERR_ARGUMENT);
  EXPECT(m == NULL);

  /* Pearson: r(a, c) = -1 exactly (c = -a); the matrix is symmetric with unit diagonal. */
  EXPECT(cpx_connect(a, "", &m) == CPX_OK);
  EXPECT(cpx_matrix_size(m, &n) == CPX_OK && n == 3);
  EXPECT(cpx_matrix_copy(m, r, 9, CPX_COL_MAJOR) == CPX_OK);
  EXPECT(fabs(r[6] + 1.0) < 1e-15 && r[0] == 1.0 && r[1] == r[3]);
  EXPECT(cpx_matrix_info(m, &text) == CPX_OK && strstr(text, "\"pearson\"") != NULL);
  cpx_string_free(text);
  cpx_matrix_free(m);

  /* Constant region: a data error naming the region. */
  {
    const double flat[6] = {1, 5, 2, 5, 3, 5};
    cpx_series* c = NULL;
    EXPECT(cpx_series_create(flat, 3, 2, CPX_ROW_MAJOR, NULL, &c) == CPX_ERR_DATA);
    EXPECT(strstr(cpx_last_error(), "'R2'") != NULL && strstr(cpx_last_error(), "constant") != NULL);
  }

  /* Errors are per thread. */
  pthread_create(&th1, NULL, error_in_thread, (void*)"/nonexistent/first.tsv");
  pthread_create(&th2, NULL, error_in_thread, (void*)"/nonexistent/second.tsv");
  pthread_join(th1, &res1);
  pthread_join(th2, &res2);
  EXPECT(res1 == NULL && res2 == NULL);

  /* The two-call shape of cpx_build_info and cpx_options_schema: ask the size, then copy;
   * a short buffer is CPX_ERR_BUFFER and stays untouched. */
  {
    size_t needed = 0, again = 0;
    char small[4] = {'x', 'x', 'x', 0};
    char* text;
    EXPECT(cpx_build_info(NULL, 0, &needed) == CPX_OK && needed > 10);
    EXPECT(cpx_build_info(small, sizeof small, &again) == CPX_ERR_BUFFER && again == needed);
    EXPECT(strcmp(small, "xxx") == 0);
    text = (char*)malloc(needed);
    EXPECT(cpx_build_info(text, needed, &again) == CPX_OK && strlen(text) + 1 == needed);
    EXPECT(strstr(text, "\"abi\":") != NULL && strstr(text, cpx_version()) != NULL);
    free(text);
    EXPECT(cpx_build_info(NULL, 0, NULL) == CPX_ERR_ARGUMENT);
    EXPECT(cpx_options_schema("sweep.cliques", NULL, 0, &needed) == CPX_OK);
    text = (char*)malloc(needed);
    EXPECT(cpx_options_schema("sweep.cliques", text, needed, &again) == CPX_OK);
    EXPECT(strstr(text, "\"sweep.cliques\"") != NULL && strstr(text, "\"max_dimension\"") != NULL);
    free(text);
    EXPECT(cpx_options_schema("no.such.section", NULL, 0, &needed) == CPX_ERR_ARGUMENT);
    EXPECT(strstr(cpx_last_error(), "sweep.cliques") != NULL);
  }

  cpx_series_free(a);
  cpx_series_free(b);
  if (failures == 0) printf("C interface conventions: all checks passed\n");
  return failures == 0 ? 0 : 1;
}
