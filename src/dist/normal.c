/* normal(mean, sd): the Gaussian distribution.
 * Tails from GSL's gsl_cdf_ugaussian_P/_Q (Cody, W.J. (1969). Rational
 * Chebyshev approximations for the error function. Math. Comp. 23(107),
 * 631-637), quantiles from gsl_cdf_ugaussian_Pinv/_Qinv (Wichura, M.J.
 * (1988). Algorithm AS 241: the percentage points of the normal
 * distribution. Applied Statistics 37(3), 477-484). */
#include <math.h>

#include <gsl/gsl_cdf.h>

#include "dist/dist_common.h"

enum { MEAN, SD };

static sp_status check(const double *t, sp_error *err)
{
  sp_status s = sp_dist_check_finite("normal", "mean", t[MEAN], err);
  if (s == SP_OK) s = sp_dist_check_positive("normal", "sd", t[SD], err);
  return s;
}

static void support(const double *t, double *lo, double *hi)
{
  (void)t;
  *lo = -INFINITY;
  *hi = INFINITY;
}

static double logpdf(const double *t, double x)
{
  double z = (x - t[MEAN]) / t[SD];
  return -0.5 * z * z - log(t[SD]) - SP_DIST_LN_SQRT_2PI;
}

static double cdf_P(const double *t, double x)
{
  return gsl_cdf_ugaussian_P((x - t[MEAN]) / t[SD]);
}

static double cdf_Q(const double *t, double x)
{
  return gsl_cdf_ugaussian_Q((x - t[MEAN]) / t[SD]);
}

static double quantile_P(const double *t, double p)
{
  if (!(p >= 0.0 && p <= 1.0)) return NAN;
  return t[MEAN] + t[SD] * gsl_cdf_ugaussian_Pinv(p);
}

static double quantile_Q(const double *t, double q)
{
  if (!(q >= 0.0 && q <= 1.0)) return NAN;
  return t[MEAN] + t[SD] * gsl_cdf_ugaussian_Qinv(q);
}

/* Ziggurat normals (sp_rng_fill_normal: Marsaglia & Tsang 2000, 256
 * layers), mean + sd z: 3.0 ns per draw, against 17 to 23 ns by inversion
 * with gsl_cdf_ugaussian_Pinv (measured on the development machine). */
static void sample(const double *t, sp_pcg64 *g, double *out, size_t n)
{
  sp_rng_fill_normal(g, out, n);
  const double mu = t[MEAN], sd = t[SD];
  for (size_t i = 0; i < n; i++) out[i] = mu + sd * out[i];
}

static double mean(const double *t) { return t[MEAN]; }
static double variance(const double *t) { return t[SD] * t[SD]; }

static sp_status start_impl(const double *x, size_t n, const int *fixed,
                            double *t, sp_error *err)
{
  sp_dist_summary s;
  sp_dist_summarise(x, n, &s);
  sp_status st = sp_dist_need_data("normal", &s, 1, err);
  if (st != SP_OK) return st;
  if (!sp_dist_is_fixed(fixed, MEAN)) t[MEAN] = s.mean;
  if (!sp_dist_is_fixed(fixed, SD)) {
    /* Root mean square about the (possibly fixed) mean. */
    double d = s.mean - t[MEAN];
    double sd = sqrt((s.m2 + (double)n * d * d) / (double)n);
    if (!(sd > 0.0) || !isfinite(sd))
      return sp_dist_spread_failure("normal", &s, err);
    t[SD] = sd;
  }
  return SP_OK;
}

/* Closed form: mean = xbar, sd = sqrt(sum (x - mean)^2 / n) (the MLE, with
 * the n denominator), about the fixed mean if mean is fixed. */
static sp_status mle_impl(const double *x, size_t n, const int *fixed,
                          double *t, sp_error *err)
{
  if (sp_dist_all_fixed(fixed, 2)) return SP_OK;
  return start_impl(x, n, fixed, t, err);
}

/* Every result passes check() (sp_dist_validate_fit). */
static sp_status fit_start(const double *x, size_t n, const int *fixed,
                           double *t, sp_error *err)
{
  return sp_dist_validate_fit(&sp_dist_normal, start_impl(x, n, fixed, t, err), t,
                              err);
}

static sp_status fit_mle(const double *x, size_t n, const int *fixed,
                         double *t, sp_error *err)
{
  return sp_dist_validate_fit(&sp_dist_normal, mle_impl(x, n, fixed, t, err), t,
                              err);
}

const sp_family sp_dist_normal = {
  .name = "normal",
  .title = "Normal",
  .flags = SP_FAMILY_FIT | SP_FAMILY_PROPAGATE | SP_FAMILY_CANDIDATE,
  .nparam = 2,
  .param_names = {"mean", "sd"},
  .param_kinds = {SP_PARAM_REAL, SP_PARAM_POSITIVE},
  .param_defaults = {NAN, NAN},
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
  .fit_mle = fit_mle,
};
