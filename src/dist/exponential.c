/* exponential(rate): density rate exp(-rate x), x >= 0.
 * Q = exp(-rate x) and P = -expm1(-rate x) are both computed directly;
 * quantiles -log1p(-p)/rate and -log(q)/rate keep tiny p and q exact. */
#include <math.h>

#include "dist/dist_common.h"

enum { RATE };

static sp_status check(const double *t, sp_error *err)
{
  return sp_dist_check_positive("exponential", "rate", t[RATE], err);
}

static void support(const double *t, double *lo, double *hi)
{
  (void)t;
  *lo = 0.0;
  *hi = INFINITY;
}

static double logpdf(const double *t, double x)
{
  if (isnan(x)) return NAN;
  if (x < 0.0 || x == INFINITY) return -INFINITY;
  return log(t[RATE]) - t[RATE] * x;
}

static double cdf_P(const double *t, double x)
{
  if (isnan(x)) return NAN;
  if (!(x > 0.0)) return 0.0;
  return -expm1(-t[RATE] * x);
}

static double cdf_Q(const double *t, double x)
{
  if (isnan(x)) return NAN;
  if (!(x > 0.0)) return 1.0;
  return exp(-t[RATE] * x);
}

static double quantile_P(const double *t, double p)
{
  if (!(p >= 0.0 && p <= 1.0)) return NAN;
  return -log1p(-p) / t[RATE];
}

static double quantile_Q(const double *t, double q)
{
  if (!(q >= 0.0 && q <= 1.0)) return NAN;
  return -log(q) / t[RATE];
}

/* Ziggurat exponentials (sp_rng_fill_exponential) over the rate. */
static void sample(const double *t, sp_pcg64 *g, double *out, size_t n)
{
  sp_rng_fill_exponential(g, out, n);
  const double rate = t[RATE];
  for (size_t i = 0; i < n; i++) out[i] = out[i] / rate;
}

static double mean(const double *t) { return 1.0 / t[RATE]; }
static double variance(const double *t) { return 1.0 / (t[RATE] * t[RATE]); }

/* Closed-form MLE: rate = 1 / mean. */
static sp_status start_impl(const double *x, size_t n, const int *fixed,
                            double *t, sp_error *err)
{
  if (sp_dist_is_fixed(fixed, RATE)) return SP_OK;
  sp_dist_summary s;
  sp_dist_summarise(x, n, &s);
  sp_status st = sp_dist_need_data("exponential", &s, 1, err);
  if (st == SP_OK) st = sp_dist_need_nonnegative("exponential", &s, err);
  if (st != SP_OK) return st;
  if (!(s.mean > 0.0))
    return sp_fail(err, SP_EDATA,
                   "exponential: all %zu values are 0, so the rate cannot be "
                   "estimated", n);
  t[RATE] = 1.0 / s.mean;
  return SP_OK;
}

static sp_status mle_impl(const double *x, size_t n, const int *fixed,
                          double *t, sp_error *err)
{
  return start_impl(x, n, fixed, t, err);
}

/* Every result passes check() (sp_dist_validate_fit). */
static sp_status fit_start(const double *x, size_t n, const int *fixed,
                           double *t, sp_error *err)
{
  return sp_dist_validate_fit(&sp_dist_exponential, start_impl(x, n, fixed, t, err), t,
                              err);
}

static sp_status fit_mle(const double *x, size_t n, const int *fixed,
                         double *t, sp_error *err)
{
  return sp_dist_validate_fit(&sp_dist_exponential, mle_impl(x, n, fixed, t, err), t,
                              err);
}

const sp_family sp_dist_exponential = {
  .name = "exponential",
  .title = "Exponential",
  .flags = SP_FAMILY_FIT | SP_FAMILY_PROPAGATE,
  .nparam = 1,
  .param_names = {"rate"},
  .param_kinds = {SP_PARAM_POSITIVE},
  .param_defaults = {NAN},
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
