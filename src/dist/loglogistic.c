/* loglogistic(shape, scale): log X is logistic(log scale, 1/shape),
 *   F(x) = 1 / (1 + (x/scale)^-shape),  x >= 0.
 * P = 1/(1 + (x/scale)^-shape) and Q = 1/(1 + (x/scale)^shape), both
 * direct; quantiles scale exp(+-logit/shape).  Mean and variance exist for
 * shape > 1 and > 2 (b = pi/shape):
 *   mean = scale b / sin b,
 *   variance = scale^2 (2b / sin 2b - b^2 / sin^2 b);
 * the variance difference loses up to log10(3/b^2) digits for large
 * shapes (measured 5e-14 relative at shape 100). */
#include <float.h>
#include <math.h>

#include "dist/dist_common.h"

enum { SHAPE, SCALE };

static sp_status check(const double *t, sp_error *err)
{
  sp_status s = sp_dist_check_positive("loglogistic", "shape", t[SHAPE], err);
  if (s == SP_OK) s = sp_dist_check_positive("loglogistic", "scale", t[SCALE], err);
  return s;
}

static void support(const double *t, double *lo, double *hi)
{
  (void)t;
  *lo = 0.0;
  *hi = INFINITY;
}

/* log(x / scale), staying finite where the ratio under- or overflows. */
static double log_ratio(const double *t, double x)
{
  double r = x / t[SCALE];
  if (r >= DBL_MIN && r <= DBL_MAX) return log(r);
  return log(x) - log(t[SCALE]);
}

static double logpdf(const double *t, double x)
{
  if (isnan(x)) return NAN;
  if (x < 0.0 || x == INFINITY) return -INFINITY;
  double b = t[SHAPE];
  if (x == 0.0) {
    if (b < 1.0) return INFINITY;
    if (b > 1.0) return -INFINITY;
    return -log(t[SCALE]);
  }
  double az = fabs(b * log_ratio(t, x));
  return log(b) - log(x) - az - 2.0 * log1p(exp(-az));
}

/* (x/scale)^(sign shape): pow of the ratio where the ratio is a normal
 * double (pow is accurate to an ulp, while exp(shape log r) carries the
 * rounding of its argument, |z| eps), through logs otherwise. */
static double power(const double *t, double x, double sign)
{
  double r = x / t[SCALE];
  if (r >= DBL_MIN && r <= DBL_MAX) return pow(r, sign * t[SHAPE]);
  return exp(sign * t[SHAPE] * log_ratio(t, x));
}

static double cdf_P(const double *t, double x)
{
  if (isnan(x)) return NAN;
  if (!(x > 0.0)) return 0.0;
  return 1.0 / (1.0 + power(t, x, -1.0));
}

static double cdf_Q(const double *t, double x)
{
  if (isnan(x)) return NAN;
  if (!(x > 0.0)) return 1.0;
  return 1.0 / (1.0 + power(t, x, 1.0));
}

static double quantile_P(const double *t, double p)
{
  return t[SCALE] * exp(sp_dist_logit(p) / t[SHAPE]);
}

static double quantile_Q(const double *t, double q)
{
  return t[SCALE] * exp(-sp_dist_logit(q) / t[SHAPE]);
}

/* Inversion, scale (u / (1 - u))^(1/shape), of open uniforms u (u and
 * 1 - u exact, so no choice of tail is needed); the ratio's rounding, half
 * an ulp, becomes 1/(2 shape) ulp of the draw, and the power over the block
 * (sp_family_pow_block, block_pow.c) adds some (2 |logit u| / shape + 4)
 * ulps: a relative 1e-14 at worst for shapes of 1 and more. */
static void sample(const double *t, sp_pcg64 *g, double *out, size_t n)
{
  sp_rng_fill_open(g, out, n);
  const double inv_k = 1.0 / t[SHAPE], s = t[SCALE];
  for (size_t i = 0; i < n; i++) out[i] = out[i] / (1.0 - out[i]);
  sp_family_pow_block(out, n, inv_k); /* (u / (1 - u))^(1/k), block_pow.c */
  for (size_t i = 0; i < n; i++) out[i] *= s;
}

static double mean(const double *t)
{
  if (!(t[SHAPE] > 1.0)) return INFINITY;
  double b = SP_DIST_PI / t[SHAPE];
  return t[SCALE] * b / sin(b);
}

static double variance(const double *t)
{
  if (!(t[SHAPE] > 2.0)) return INFINITY;
  double b = SP_DIST_PI / t[SHAPE];
  double r = b / sin(b);
  return t[SCALE] * t[SCALE] * (2.0 * b / sin(2.0 * b) - r * r);
}

/* Starting values from the moments of log x (logistic with location
 * log scale and scale 1/shape): shape = pi / (sd(log x) sqrt 3),
 * scale = exp(mean(log x)). */
static sp_status start_impl(const double *x, size_t n, const int *fixed,
                            double *t, sp_error *err)
{
  sp_dist_summary s;
  sp_dist_summarise(x, n, &s);
  sp_status st = sp_dist_need_data("loglogistic", &s, 1, err);
  if (st == SP_OK) st = sp_dist_need_positive("loglogistic", &s, err);
  if (st != SP_OK) return st;
  double ml, m2;
  sp_dist_log_moments(x, n, &ml, &m2);
  if (!sp_dist_is_fixed(fixed, SHAPE)) {
    if (!(m2 > 0.0)) return sp_dist_spread_failure("loglogistic", &s, err);
    t[SHAPE] = SP_DIST_PI / (sqrt(m2 / (double)n) * sqrt(3.0));
  }
  if (!sp_dist_is_fixed(fixed, SCALE)) t[SCALE] = exp(ml);
  return SP_OK;
}

/* Every result passes check() (sp_dist_validate_fit). */
static sp_status fit_start(const double *x, size_t n, const int *fixed,
                           double *t, sp_error *err)
{
  return sp_dist_validate_fit(&sp_dist_loglogistic, start_impl(x, n, fixed, t, err), t,
                              err);
}

const sp_family sp_dist_loglogistic = {
  .name = "loglogistic",
  .title = "Log-logistic",
  .flags = SP_FAMILY_FIT | SP_FAMILY_PROPAGATE | SP_FAMILY_CANDIDATE,
  .nparam = 2,
  .param_names = {"shape", "scale"},
  .param_kinds = {SP_PARAM_POSITIVE, SP_PARAM_POSITIVE},
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
  .fit_mle = NULL,
};
