/* exponential2(rate, location): the shifted (two-parameter) exponential,
 * density rate exp(-rate (x - location)), x >= location.
 *
 * Maximum likelihood in closed form: location = min(x) (the likelihood
 * grows with the location up to the smallest value) and rate =
 * 1 / (mean - min).  Both are biased.  Since min - location ~
 * Exp(n rate) and sum(x - min) ~ Gamma(n - 1, 1/rate) independently,
 *   E[min] = location + 1/(n rate)     and   E[1/(mean - min)] = rate n/(n - 2),
 * so min - (mean - min)/(n - 1) is unbiased for the location and
 * (n - 2)/(n (mean - min)) for the rate (n > 2).  The MLE sits on the
 * boundary of the BELOW_DATA kind (location = min x, where the density is
 * still positive); fit_start returns the unbiased location, strictly below
 * the data, as a start for a general minimiser. */
#include <math.h>

#include "dist/dist_common.h"

enum { RATE, LOC };

static sp_status check(const double *t, sp_error *err)
{
  sp_status s = sp_dist_check_positive("exponential2", "rate", t[RATE], err);
  if (s == SP_OK) s = sp_dist_check_finite("exponential2", "location", t[LOC], err);
  return s;
}

static void support(const double *t, double *lo, double *hi)
{
  *lo = t[LOC];
  *hi = INFINITY;
}

static double logpdf(const double *t, double x)
{
  if (isnan(x)) return NAN;
  if (x < t[LOC] || x == INFINITY) return -INFINITY;
  return log(t[RATE]) - t[RATE] * (x - t[LOC]);
}

static double cdf_P(const double *t, double x)
{
  if (isnan(x)) return NAN;
  if (!(x > t[LOC])) return 0.0;
  return -expm1(-t[RATE] * (x - t[LOC]));
}

static double cdf_Q(const double *t, double x)
{
  if (isnan(x)) return NAN;
  if (!(x > t[LOC])) return 1.0;
  return exp(-t[RATE] * (x - t[LOC]));
}

static double quantile_P(const double *t, double p)
{
  if (!(p >= 0.0 && p <= 1.0)) return NAN;
  return t[LOC] - log1p(-p) / t[RATE];
}

static double quantile_Q(const double *t, double q)
{
  if (!(q >= 0.0 && q <= 1.0)) return NAN;
  return t[LOC] - log(q) / t[RATE];
}

/* location + ziggurat exponentials (sp_rng_fill_exponential) / rate. */
static void sample(const double *t, sp_pcg64 *g, double *out, size_t n)
{
  sp_rng_fill_exponential(g, out, n);
  const double loc = t[LOC], rate = t[RATE];
  for (size_t i = 0; i < n; i++) out[i] = loc + out[i] / rate;
}

static double mean(const double *t) { return t[LOC] + 1.0 / t[RATE]; }
static double variance(const double *t) { return 1.0 / (t[RATE] * t[RATE]); }

static sp_status get_data(const double *x, size_t n, sp_dist_summary *s,
                          sp_error *err)
{
  sp_dist_summarise(x, n, s);
  return sp_dist_need_data("exponential2", s, 1, err);
}

static sp_status fixed_loc_ok(const sp_dist_summary *s, double loc, sp_error *err)
{
  if (s->min < loc)
    return sp_fail(err, SP_EDATA,
                   "exponential2: the smallest value %g is below the fixed "
                   "location %g", s->min, loc);
  return SP_OK;
}

/* Rate 1 / (mean - location); SP_EDATA when that is not positive. */
static sp_status rate_from(const sp_dist_summary *s, double loc, double *rate,
                           sp_error *err)
{
  double d = s->mean - loc;
  if (!(d > 0.0))
    return sp_fail(err, SP_EDATA,
                   "exponential2: all %zu values equal the location %g, so the "
                   "rate cannot be estimated", s->n, loc);
  *rate = 1.0 / d;
  return SP_OK;
}

/* Start: the unbiased location min - (mean - min)/(n - 1), strictly below
 * the data, and the rate about it. */
static sp_status start_impl(const double *x, size_t n, const int *fixed,
                            double *t, sp_error *err)
{
  int fr = sp_dist_is_fixed(fixed, RATE), fl = sp_dist_is_fixed(fixed, LOC);
  if (fr && fl) return SP_OK;
  sp_dist_summary s;
  sp_status st = get_data(x, n, &s, err);
  if (st != SP_OK) return st;
  if (fl) {
    st = fixed_loc_ok(&s, t[LOC], err);
    if (st != SP_OK) return st;
    return rate_from(&s, t[LOC], &t[RATE], err);
  }
  if (fr) {
    /* E[min] = location + 1/(n rate). */
    t[LOC] = s.min - 1.0 / ((double)n * t[RATE]);
    return SP_OK;
  }
  st = sp_dist_need_data("exponential2", &s, 2, err);
  if (st == SP_OK) st = sp_dist_need_spread("exponential2", &s, err);
  if (st != SP_OK) return st;
  t[LOC] = s.min - (s.mean - s.min) / (double)(n - 1);
  return rate_from(&s, t[LOC], &t[RATE], err);
}

static sp_status mle_impl(const double *x, size_t n, const int *fixed,
                          double *t, sp_error *err)
{
  int fr = sp_dist_is_fixed(fixed, RATE), fl = sp_dist_is_fixed(fixed, LOC);
  if (fr && fl) return SP_OK;
  sp_dist_summary s;
  sp_status st = get_data(x, n, &s, err);
  if (st != SP_OK) return st;
  if (fl) {
    st = fixed_loc_ok(&s, t[LOC], err);
  } else {
    t[LOC] = s.min;
  }
  if (st != SP_OK || fr) return st;
  return rate_from(&s, t[LOC], &t[RATE], err);
}

/* Every result passes check() (sp_dist_validate_fit). */
static sp_status fit_start(const double *x, size_t n, const int *fixed,
                           double *t, sp_error *err)
{
  return sp_dist_validate_fit(&sp_dist_exponential2, start_impl(x, n, fixed, t, err), t,
                              err);
}

static sp_status fit_mle(const double *x, size_t n, const int *fixed,
                         double *t, sp_error *err)
{
  return sp_dist_validate_fit(&sp_dist_exponential2, mle_impl(x, n, fixed, t, err), t,
                              err);
}

const sp_family sp_dist_exponential2 = {
  .name = "exponential2",
  .title = "Exponential (2-parameter)",
  .flags = SP_FAMILY_FIT | SP_FAMILY_PROPAGATE,
  .nparam = 2,
  .param_names = {"rate", "location"},
  .param_kinds = {SP_PARAM_POSITIVE, SP_PARAM_BELOW_DATA},
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
