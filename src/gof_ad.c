/* scatterprop gof: the null distribution of the Anderson-Darling A^2 for a
 * fully specified F.
 *
 * Marsaglia, G. & Marsaglia, J. (2004). Evaluating the Anderson-Darling
 * distribution. Journal of Statistical Software 9(2), 1-5.
 *
 * adinf(z) is the paper's short two-piece approximation of the limiting
 * distribution (its long series version is not used); errfix(n, x) is the
 * paper's correction for finite n, a function of x = adinf(z), so that
 * x + errfix(n, x) is P(A_n^2 <= z).  The coefficients are the paper's
 * published C code as we recall it (from memory); they are checked in
 * tests/check_gof.c against the exact limiting distribution (Anderson &
 * Darling 1954 series, to 2.0e-5), the exact n = 1 distribution and a
 * simulation at n = 10.
 *
 * Deviation from the paper: the upper tail 1 - adinf(z) for z >= 2 is
 * computed as -expm1(-exp(...)) so that it keeps its relative precision
 * instead of being formed as 1 - x. */
#include "scatterprop/gof.h"

#include <math.h>

/* Coefficients of adinf for z < 2: exp(-a/z)/sqrt(z) times a quintic. */
static double adinf_low(double z)
{
  return exp(-1.2337141 / z) / sqrt(z) *
         (2.00012 + (.247105 - (.0649821 - (.0347962 - (.011672 - .00168691 * z)
                                                           * z) * z) * z) * z);
}

/* For z >= 2, adinf(z) = exp(-exp(g(z))) with g the quintic below. */
static double adinf_high_g(double z)
{
  return 1.0776 - (2.30695 - (.43424 - (.082433 - (.008056 - .0003146 * z)
                                                     * z) * z) * z) * z;
}

double sp_gof_ad_inf_P(double z)
{
  if (isnan(z)) return NAN;
  if (z <= 0.0) return 0.0;
  if (z < 2.0) return adinf_low(z);
  return exp(-exp(adinf_high_g(z)));
}

double sp_gof_ad_inf_Q(double z)
{
  if (isnan(z)) return NAN;
  if (z <= 0.0) return 1.0;
  if (z < 2.0) return 1.0 - adinf_low(z);
  return -expm1(-exp(adinf_high_g(z)));
}

/* errfix(n, x) of the paper: three pieces in x, split at c(n) and 0.8. */
static double errfix(double n, double x)
{
  if (x > 0.8) {
    return (-130.2137 + (745.2337 - (1705.091 - (1950.646 - (1116.360 - 255.7844 * x)
                                                             * x) * x) * x) * x) / n;
  }
  double c = 0.01265 + 0.1757 / n;
  if (x < c) {
    double t = x / c;
    t = sqrt(t) * (1.0 - t) * (49.0 * t - 102.0);
    return t * (0.0037 / (n * n) + 0.00078 / n + 0.00006) / n;
  }
  double t = (x - c) / (0.8 - c);
  t = -0.00022633 + (6.54034 - (14.6538 - (14.458 - (8.259 - 1.91864 * t) * t)
                                             * t) * t) * t;
  return t * (0.04213 + 0.01365 / n) / n;
}

static double clamp01(double p)
{
  if (p < 0.0) return 0.0;
  if (p > 1.0) return 1.0;
  return p;
}

double sp_gof_ad_P(size_t n, double z)
{
  if (n == 0 || isnan(z)) return NAN;
  if (z <= 0.0) return 0.0;
  if (isinf(z)) return 1.0;
  double x = sp_gof_ad_inf_P(z);
  return clamp01(x + errfix((double)n, x));
}

double sp_gof_ad_Q(size_t n, double z)
{
  if (n == 0 || isnan(z)) return NAN;
  if (z <= 0.0) return 1.0;
  if (isinf(z)) return 0.0;
  double x = sp_gof_ad_inf_P(z);
  return clamp01(sp_gof_ad_inf_Q(z) - errfix((double)n, x));
}
