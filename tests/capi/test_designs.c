/* cpx_stats_design_test from C99 with the public header only. Checks against the exact
 * sign-flip distribution (a textbook fact of the trade, e.g. Good 2005, Permutation,
 * Parametric and Bootstrap Tests of Hypotheses, ch. 3; from memory): when all n paired
 * differences are positive, only the identity of the 2^n flips reaches the observed mean,
 * so the one-sided p is 2^-n and the two-sided p is 2 * 2^-n. Likewise for a perfectly
 * ordered score, only the identity of the n! permutations reaches the observed slope. */
#include <critplex/critplex.h>

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "check.h"

/* The number after "key": in a JSON text (first occurrence), or NAN. */
static double number_after(const char* json, const char* key) {
  char pattern[64];
  const char* at;
  snprintf(pattern, sizeof pattern, "\"%s\":", key);
  at = strstr(json, pattern);
  return at ? strtod(at + strlen(pattern), NULL) : NAN;
}

int main(void) {
  const char* paired_data =
      "{\"subject\": [\"v1\",\"v2\",\"v3\",\"v4\",\"v5\",\"v1\",\"v2\",\"v3\",\"v4\",\"v5\"],"
      " \"session\": [\"rested\",\"rested\",\"rested\",\"rested\",\"rested\","
      "\"deprived\",\"deprived\",\"deprived\",\"deprived\",\"deprived\"],"
      " \"measures\": [{\"name\": \"first_chi_zero\", \"values\": [0.20,0.22,0.25,0.21,0.24,0.23,0.26,0.27,0.25,0.30]}]}";
  const char* regression_data =
      "{\"subject\": [\"v1\",\"v2\",\"v3\",\"v4\",\"v5\",\"v6\"],"
      " \"columns\": {\"sleepiness\": [1, 2, 3, 5, 7, 9]},"
      " \"measures\": [{\"name\": \"first_chi_zero\", \"values\": [0.20, 0.21, 0.23, 0.24, 0.26, 0.30]}]}";
  char* out = NULL;

  EXPECT(cpx_stats_design_test(paired_data, "{\"design\": \"paired\"}", &out) == CPX_OK);
  if (out) {
    EXPECT(fabs(number_after(out, "p_value") - 2.0 / 32.0) < 1e-15);
    EXPECT(number_after(out, "null_size") == 32.0);
    EXPECT(fabs(number_after(out, "estimate") - 0.038) < 1e-12); /* mean of the differences */
    cpx_string_free(out);
    out = NULL;
  }
  EXPECT(cpx_stats_design_test(regression_data, "{\"design\": \"regression\", \"score\": \"sleepiness\"}", &out) ==
         CPX_OK);
  if (out) {
    EXPECT(fabs(number_after(out, "p_value") - 2.0 / 720.0) < 1e-15);
    EXPECT(fabs(number_after(out, "spearman_rho") - 1.0) < 1e-15);
    cpx_string_free(out);
    out = NULL;
  }
  /* Errors name the key or the column, and leave the result untouched. */
  EXPECT(cpx_stats_design_test(regression_data, "{\"design\": \"regression\", \"score\": \"age\"}", &out) ==
         CPX_ERR_ARGUMENT);
  EXPECT(out == NULL && strstr(cpx_last_error(), "age") != NULL);
  EXPECT(cpx_stats_design_test(regression_data, "{\"design\": \"paired\", \"permutatons\": 5}", &out) != CPX_OK);
  EXPECT(strstr(cpx_last_error(), "permutatons") != NULL);
  EXPECT(cpx_stats_design_test(NULL, "{}", &out) != CPX_OK);
  if (failures) fprintf(stderr, "%d failed\n", failures);
  return failures ? 1 : 0;
}
