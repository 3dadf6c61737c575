/* engine: exceedance probabilities and their confidence intervals.
 *
 * The fraction p = k / n of finite output values that violate a limit, with
 * an interval at confidence c:
 *  - 0 < k < n: the score interval of Wilson, E.B. (1927). Probable
 *    inference, the law of succession, and statistical inference. Journal
 *    of the American Statistical Association 22(158), 209-212:
 *      (p + z^2/(2n) -+ z sqrt(p(1 - p)/n + z^2/(4n^2))) / (1 + z^2/n),
 *    z = Phi^-1(1 - (1 - c)/2).  Its coverage is close to c on average
 *    over p (Brown, L.D., Cai, T.T. & DasGupta, A. (2001). Interval
 *    estimation for a binomial proportion. Statistical Science 16(2),
 *    101-133);
 *  - k = 0: the exact one-sided upper bound of Clopper, C.J. & Pearson, E.S.
 *    (1934). The use of confidence or fiducial limits illustrated in the
 *    case of the binomial. Biometrika 26(4), 404-413: the p with
 *    (1 - p)^n = 1 - c, i.e. 1 - (1 - c)^(1/n) (about 3/n for c = 0.95, the
 *    "rule of three"), with lower bound 0; k = n mirrors it. */
#include "engine_internal.h"

#include <math.h>

#include <gsl/gsl_cdf.h>

int sp_engine_binomial_interval(uint64_t k, uint64_t n, double conf,
                                double *lo, double *hi)
{
  if (n == 0 || k > n || !(conf > 0.0 && conf < 1.0)) {
    *lo = *hi = NAN;
    return 0;
  }
  const double dn = (double)n, alpha = 1.0 - conf;
  if (k == 0) {
    *lo = 0.0;
    *hi = -expm1(log(alpha) / dn);
    return 1;
  }
  if (k == n) {
    *lo = exp(log(alpha) / dn);
    *hi = 1.0;
    return 1;
  }
  const double p = (double)k / dn;
  const double z = gsl_cdf_ugaussian_Qinv(alpha / 2.0), z2 = z * z;
  const double den = 1.0 + z2 / dn;
  const double mid = (p + z2 / (2.0 * dn)) / den;
  const double half = z / den * sqrt(p * (1.0 - p) / dn + z2 / (4.0 * dn * dn));
  *lo = mid - half > 0.0 ? mid - half : 0.0;
  *hi = mid + half < 1.0 ? mid + half : 1.0;
  return 0;
}
