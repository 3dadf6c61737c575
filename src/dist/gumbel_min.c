/* gumbel_min(location, scale): the extreme value distribution of the
 * smallest value, F(x) = 1 - exp(-exp((x - location)/scale)); -X is
 * gumbel_max(-location, scale).  Q = exp(-e^z) and P = -expm1(-e^z) are
 * both direct; the quantiles are location + scale log(-log1p(-p)) and
 * location + scale log(-log q).  Maximum likelihood: sp_dist_gumbel_mle
 * (gumbel_max.c) on -x. */
#include <math.h>

#include "dist/dist_common.h"

enum { LOC, SCALE };

static sp_status check(const double *t, sp_error *err)
{
  sp_status s = sp_dist_check_finite("gumbel_min", "location", t[LOC], err);
  if (s == SP_OK) s = sp_dist_check_positive("gumbel_min", "scale", t[SCALE], err);
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
  double z = (x - t[LOC]) / t[SCALE];
  if (isinf(z)) return -INFINITY;
  return -log(t[SCALE]) + z - exp(z);
}

static double cdf_P(const double *t, double x)
{
  return -expm1(-exp((x - t[LOC]) / t[SCALE]));
}

static double cdf_Q(const double *t, double x)
{
  return exp(-exp((x - t[LOC]) / t[SCALE]));
}

static double quantile_P(const double *t, double p)
{
  if (!(p >= 0.0 && p <= 1.0)) return NAN;
  return t[LOC] + t[SCALE] * log(-log1p(-p));
}

static double quantile_Q(const double *t, double q)
{
  if (!(q >= 0.0 && q <= 1.0)) return NAN;
  return t[LOC] + t[SCALE] * log(-log(q));
}

/* location + scale log E for standard exponential E from the ziggurat
 * (sp_rng_fill_exponential): P(log E > x) = P(E > exp(x)) = exp(-exp(x)),
 * the smallest-value law.  One log per draw; E > 0. */
static void sample(const double *t, sp_pcg64 *g, double *out, size_t n)
{
  sp_rng_fill_exponential(g, out, n);
  const double loc = t[LOC], s = t[SCALE];
  for (size_t i = 0; i < n; i++) out[i] = loc + s * log(out[i]);
}

static double mean(const double *t) { return t[LOC] - SP_DIST_EULER * t[SCALE]; }

static double variance(const double *t)
{
  return SP_DIST_PI * SP_DIST_PI / 6.0 * t[SCALE] * t[SCALE];
}

/* Starting values from the moments: scale = sd sqrt(6)/pi,
 * location = mean + gamma scale. */
static sp_status start_impl(const double *x, size_t n, const int *fixed,
                            double *t, sp_error *err)
{
  sp_dist_summary s;
  sp_dist_summarise(x, n, &s);
  sp_status st = sp_dist_need_data("gumbel_min", &s, 1, err);
  if (st != SP_OK) return st;
  if (!sp_dist_is_fixed(fixed, SCALE)) {
    st = sp_dist_need_spread("gumbel_min", &s, err);
    if (st != SP_OK) return st;
    t[SCALE] = sqrt(s.m2 / (double)n) * sqrt(6.0) / SP_DIST_PI;
  }
  if (!sp_dist_is_fixed(fixed, LOC)) t[LOC] = s.mean + SP_DIST_EULER * t[SCALE];
  return SP_OK;
}

static sp_status mle_impl(const double *x, size_t n, const int *fixed,
                          double *t, sp_error *err)
{
  return sp_dist_gumbel_mle("gumbel_min", x, n, -1.0, sp_dist_is_fixed(fixed, LOC),
                            sp_dist_is_fixed(fixed, SCALE), &t[LOC], &t[SCALE],
                            err);
}

/* Every result passes check() (sp_dist_validate_fit). */
static sp_status fit_start(const double *x, size_t n, const int *fixed,
                           double *t, sp_error *err)
{
  return sp_dist_validate_fit(&sp_dist_gumbel_min, start_impl(x, n, fixed, t, err), t,
                              err);
}

static sp_status fit_mle(const double *x, size_t n, const int *fixed,
                         double *t, sp_error *err)
{
  return sp_dist_validate_fit(&sp_dist_gumbel_min, mle_impl(x, n, fixed, t, err), t,
                              err);
}

const sp_family sp_dist_gumbel_min = {
  .name = "gumbel_min",
  .title = "Gumbel (smallest extreme value)",
  .flags = SP_FAMILY_FIT | SP_FAMILY_PROPAGATE | SP_FAMILY_CANDIDATE,
  .nparam = 2,
  .param_names = {"location", "scale"},
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
