/* The check macro shared by the C-interface test programs: reports and counts a
 * failed expectation without stopping, so one run lists every failure. */
#ifndef CRITPLEX_TEST_CHECK_H
#define CRITPLEX_TEST_CHECK_H
#include <stdio.h>

static int failures = 0;
#define EXPECT(cond)                                                      \
  do {                                                                    \
    if (!(cond)) {                                                        \
      fprintf(stderr, "%s:%d: expected %s\n", __FILE__, __LINE__, #cond); \
      failures++;                                                         \
    }                                                                     \
  } while (0)

#endif
