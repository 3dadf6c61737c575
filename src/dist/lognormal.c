/* lognormal(meanlog, sdlog): log X ~ normal(meanlog, sdlog).
 * Tails and quantiles through GSL's standard normal functions on
 * z = (log x - meanlog) / sdlog (see normal.c for their sources). */
#include <math.h>

#include <gsl/gsl_cdf.h>

#include "dist/dist_common.h"

enum { MEANLOG, SDLOG };

static sp_status check(const double *t, sp_error *err)
{
  sp_status s = sp_dist_check_finite("lognormal", "meanlog", t[MEANLOG], err);
  if (s == SP_OK) s = sp_dist_check_positive("lognormal", "sdlog", t[SDLOG], err);
  return s;
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
  if (!(x > 0.0) || x == INFINITY) return -INFINITY;
  double lx = log(x);
  double z = (lx - t[MEANLOG]) / t[SDLOG];
  return -0.5 * z * z - lx - log(t[SDLOG]) - SP_DIST_LN_SQRT_2PI;
}

static double cdf_P(const double *t, double x)
{
  if (isnan(x)) return NAN;
  if (!(x > 0.0)) return 0.0;
  return gsl_cdf_ugaussian_P((log(x) - t[MEANLOG]) / t[SDLOG]);
}

static double cdf_Q(const double *t, double x)
{
  if (isnan(x)) return NAN;
  if (!(x > 0.0)) return 1.0;
  return gsl_cdf_ugaussian_Q((log(x) - t[MEANLOG]) / t[SDLOG]);
}

static double quantile_P(const double *t, double p)
{
  if (!(p >= 0.0 && p <= 1.0)) return NAN;
  return exp(t[MEANLOG] + t[SDLOG] * gsl_cdf_ugaussian_Pinv(p));
}

static double quantile_Q(const double *t, double q)
{
  if (!(q >= 0.0 && q <= 1.0)) return NAN;
  return exp(t[MEANLOG] + t[SDLOG] * gsl_cdf_ugaussian_Qinv(q));
}

/* exp(meanlog + sdlog z) with ziggurat normals z (sp_rng_fill_normal). */
static void sample(const double *t, sp_pcg64 *g, double *out, size_t n)
{
  sp_rng_fill_normal(g, out, n);
  const double m = t[MEANLOG], s = t[SDLOG];
  for (size_t i = 0; i < n; i++) out[i] = exp(m + s * out[i]);
}

static double mean(const double *t)
{
  return exp(t[MEANLOG] + 0.5 * t[SDLOG] * t[SDLOG]);
}

/* (exp(s^2) - 1) exp(2m + s^2), with expm1 so small sdlog keeps its digits. */
static double variance(const double *t)
{
  double s2 = t[SDLOG] * t[SDLOG];
  return expm1(s2) * exp(2.0 * t[MEANLOG] + s2);
}

/* The normal MLE on log x, which is also the lognormal MLE (closed form);
 * sdlog uses the n denominator. */
static sp_status start_impl(const double *x, size_t n, const int *fixed,
                            double *t, sp_error *err)
{
  sp_dist_summary s;
  sp_dist_summarise(x, n, &s);
  sp_status st = sp_dist_need_data("lognormal", &s, 1, err);
  if (st == SP_OK) st = sp_dist_need_positive("lognormal", &s, err);
  if (st != SP_OK) return st;
  double ml, m2;
  sp_dist_log_moments(x, n, &ml, &m2);
  if (!sp_dist_is_fixed(fixed, MEANLOG)) t[MEANLOG] = ml;
  if (!sp_dist_is_fixed(fixed, SDLOG)) {
    double d = ml - t[MEANLOG];
    double sd = sqrt((m2 + (double)n * d * d) / (double)n);
    if (!(sd > 0.0) || !isfinite(sd)) return sp_dist_spread_failure("lognormal", &s, err);
    t[SDLOG] = sd;
  }
  return SP_OK;
}

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
  return sp_dist_validate_fit(&sp_dist_lognormal, start_impl(x, n, fixed, t, err), t,
                              err);
}

static sp_status fit_mle(const double *x, size_t n, const int *fixed,
                         double *t, sp_error *err)
{
  return sp_dist_validate_fit(&sp_dist_lognormal, mle_impl(x, n, fixed, t, err), t,
                              err);
}

const sp_family sp_dist_lognormal = {
  .name = "lognormal",
  .title = "Lognormal",
  .flags = SP_FAMILY_FIT | SP_FAMILY_PROPAGATE | SP_FAMILY_CANDIDATE,
  .nparam = 2,
  .param_names = {"meanlog", "sdlog"},
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
