/* weibull3(shape, scale, location): the three-parameter Weibull,
 *   F(x) = 1 - exp(-((x - location)/scale)^shape),  x >= location.
 * Every function is weibull's on x - location (weibull.c).  Maximum
 * likelihood is left to the fitter's general minimiser (fit_mle is NULL):
 * for shape < 1 the likelihood is unbounded as the location approaches the
 * smallest value, so no closed form or specialised equation applies.
 *
 * Starting values: the location from the method of moments, solving the
 * sample skewness for the shape (the skewness of the Weibull depends on the
 * shape only), kept below the smallest value; then the two-parameter
 * maximum likelihood on x - location for shape and scale. */
#include <math.h>

#include "dist/dist_common.h"

enum { SHAPE, SCALE, LOC };

static sp_status check(const double *t, sp_error *err)
{
  sp_status s = sp_dist_check_positive("weibull3", "shape", t[SHAPE], err);
  if (s == SP_OK) s = sp_dist_check_positive("weibull3", "scale", t[SCALE], err);
  if (s == SP_OK) s = sp_dist_check_finite("weibull3", "location", t[LOC], err);
  return s;
}

static void support(const double *t, double *lo, double *hi)
{
  *lo = t[LOC];
  *hi = INFINITY;
}

static double logpdf(const double *t, double x)
{
  return sp_dist_weibull.logpdf(t, x - t[LOC]);
}

static double cdf_P(const double *t, double x)
{
  return sp_dist_weibull.cdf_P(t, x - t[LOC]);
}

static double cdf_Q(const double *t, double x)
{
  return sp_dist_weibull.cdf_Q(t, x - t[LOC]);
}

static double quantile_P(const double *t, double p)
{
  return t[LOC] + sp_dist_weibull.quantile_P(t, p);
}

static double quantile_Q(const double *t, double q)
{
  return t[LOC] + sp_dist_weibull.quantile_Q(t, q);
}

/* location + the two-parameter Weibull draw (its sampler reads shape and
 * scale, the first two parameters). */
static void sample(const double *t, sp_pcg64 *g, double *out, size_t n)
{
  sp_dist_weibull.sample(t, g, out, n);
  const double loc = t[LOC];
  for (size_t i = 0; i < n; i++) out[i] = loc + out[i];
}

static double mean(const double *t) { return t[LOC] + sp_dist_weibull.mean(t); }
static double variance(const double *t) { return sp_dist_weibull.variance(t); }

/* Skewness of the Weibull with shape k:
 *   (G3 - 3 G1 G2 + 2 G1^3) / (G2 - G1^2)^(3/2),  Gi = Gamma(1 + i/k). */
static double skewness(double k)
{
  double g1 = tgamma(1.0 + 1.0 / k), g2 = tgamma(1.0 + 2.0 / k),
         g3 = tgamma(1.0 + 3.0 / k);
  double v = g2 - g1 * g1;
  return (g3 - 3.0 * g1 * g2 + 2.0 * g1 * g1 * g1) / (v * sqrt(v));
}

/* The shape range searched for the moment start: skewness decreases from
 * 6.6 at k = 0.5 to -0.95 at k = 30, beyond which the Gamma-function
 * differences above lose their digits; the maximum likelihood refines the
 * start anyway. */
#define W3_KMIN 0.5
#define W3_KMAX 30.0

static sp_status start_impl(const double *x, size_t n, const int *fixed,
                            double *t, sp_error *err)
{
  sp_dist_summary s;
  sp_dist_summarise(x, n, &s);
  sp_status st = sp_dist_need_data("weibull3", &s, 3, err);
  if (st != SP_OK) return st;
  int fs = sp_dist_is_fixed(fixed, SHAPE), fc = sp_dist_is_fixed(fixed, SCALE);
  if (sp_dist_is_fixed(fixed, LOC)) {
    if (!(t[LOC] < s.min))
      return sp_fail(err, SP_EDATA,
                     "weibull3: the fixed location %g is not below the smallest "
                     "value %g", t[LOC], s.min);
  } else {
    st = sp_dist_need_spread("weibull3", &s, err);
    if (st != SP_OK) return st;
    double var = s.m2 / (double)n;
    double g1 = (s.m3 / (double)n) / (var * sqrt(var));
    double lo = log(W3_KMIN), hi = log(W3_KMAX), k;
    if (g1 >= skewness(W3_KMIN)) {
      k = W3_KMIN;
    } else if (g1 <= skewness(W3_KMAX)) {
      k = W3_KMAX;
    } else {
      /* Bisection on log k: 60 halvings shrink the bracket below 1e-16. */
      for (int i = 0; i < 60; i++) {
        double mid = 0.5 * (lo + hi);
        if (skewness(exp(mid)) > g1)
          lo = mid;
        else
          hi = mid;
      }
      k = exp(0.5 * (lo + hi));
    }
    if (fs) k = t[SHAPE];
    double ga = tgamma(1.0 + 1.0 / k), gb = tgamma(1.0 + 2.0 / k);
    double scale = sqrt(var / (gb - ga * ga));
    if (fc) scale = t[SCALE];
    double loc = s.mean - scale * ga;
    /* Keep the start strictly below the data: at least a 1/n-th of the
     * range below the smallest value (the spacing expected between the
     * smallest value and the location). */
    double gap = (s.max - s.min) / (double)n;
    if (!(loc < s.min - gap)) loc = s.min - gap;
    t[LOC] = loc;
  }
  if (fs && fc) return SP_OK;
  return sp_dist_weibull_mle("weibull3", x, n, t[LOC], fs, fc, &t[SHAPE],
                             &t[SCALE], err);
}

/* Every result passes check() (sp_dist_validate_fit). */
static sp_status fit_start(const double *x, size_t n, const int *fixed,
                           double *t, sp_error *err)
{
  return sp_dist_validate_fit(&sp_dist_weibull3, start_impl(x, n, fixed, t, err), t,
                              err);
}

const sp_family sp_dist_weibull3 = {
  .name = "weibull3",
  .title = "Weibull (3-parameter)",
  .flags = SP_FAMILY_FIT | SP_FAMILY_PROPAGATE | SP_FAMILY_CANDIDATE,
  .nparam = 3,
  .param_names = {"shape", "scale", "location"},
  .param_kinds = {SP_PARAM_POSITIVE, SP_PARAM_POSITIVE, SP_PARAM_BELOW_DATA},
  .param_defaults = {NAN, NAN, NAN},
  .check = check,
  .support = support,
  .logpdf = logpdf,
  .cdf_P = cdf_P,
  .cdf_Q = cdf_Q,
  .quantile_P = quantile_P,
  .quantile_Q = quantile_Q,
  .sample = sample,
  .mean = mean,
  .variance = variance,
  .fit_start = fit_start,
  .fit_mle = NULL,
};
