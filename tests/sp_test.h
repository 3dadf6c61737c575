/* Shared helpers for the Check suites. */
#ifndef SP_TEST_H
#define SP_TEST_H

#include <check.h>
#include <float.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>

#include <gsl/gsl_errno.h>

/* Relative tolerance check; tolerances are multiples of DBL_EPSILON or a
 * stated bound with its reason beside the call. */
#define ASSERT_REL(got, want, rtol)                                          \
  ck_assert_msg(fabs((got) - (want)) <= (rtol) * fabs(want),                 \
                "%s = %.17g, want %.17g (rtol %g)", #got, (double)(got),     \
                (double)(want), (double)(rtol))
#define ASSERT_ABS(got, want, atol)                                          \
  ck_assert_msg(fabs((got) - (want)) <= (atol),                              \
                "%s = %.17g, want %.17g (atol %g)", #got, (double)(got),     \
                (double)(want), (double)(atol))
#define EPS DBL_EPSILON

/* Log relative error (number of correct significant digits), as the NIST
 * StRD documentation defines it: LRE = -log10(|got - want| / |want|). */
static inline double sp_lre(double got, double want)
{
  if (got == want) return 17.0;
  return -log10(fabs(got - want) / fabs(want));
}

/* Runs a suite and returns the process exit status. */
static inline int sp_run_suite(Suite *s)
{
  gsl_set_error_handler_off();
  SRunner *sr = srunner_create(s);
  srunner_run_all(sr, CK_NORMAL);
  int failed = srunner_ntests_failed(sr);
  srunner_free(sr);
  return failed == 0 ? EXIT_SUCCESS : EXIT_FAILURE;
}

#endif
