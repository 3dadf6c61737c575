/* logistic(location, scale): F(x) = 1 / (1 + exp(-(x - location)/scale)).
 * P = 1/(1 + e^-z) and Q = 1/(1 + e^z) are both direct; the quantiles use
 * sp_dist_logit, which keeps its digits near p = 0, 1/2 and 1. */
#include <math.h>

#include "dist/dist_common.h"

enum { LOC, SCALE };

static sp_status check(const double *t, sp_error *err)
{
  sp_status s = sp_dist_check_finite("logistic", "location", t[LOC], err);
  if (s == SP_OK) s = sp_dist_check_positive("logistic", "scale", t[SCALE], err);
  return s;
}

static void support(const double *t, double *lo, double *hi)
{
  (void)t;
  *lo = -INFINITY;
  *hi = INFINITY;
}

/* log f = -|z| - log scale - 2 log1p(exp(-|z|)) (the density is symmetric),
 * which never overflows. */
static double logpdf(const double *t, double x)
{
  double az = fabs((x - t[LOC]) / t[SCALE]);
  return -az - log(t[SCALE]) - 2.0 * log1p(exp(-az));
}

static double cdf_P(const double *t, double x)
{
  return 1.0 / (1.0 + exp(-(x - t[LOC]) / t[SCALE]));
}

static double cdf_Q(const double *t, double x)
{
  return 1.0 / (1.0 + exp((x - t[LOC]) / t[SCALE]));
}

static double quantile_P(const double *t, double p)
{
  return t[LOC] + t[SCALE] * sp_dist_logit(p);
}

static double quantile_Q(const double *t, double q)
{
  return t[LOC] - t[SCALE] * sp_dist_logit(q);
}

/* Half-width of the centre of the unit interval where the sampler's logit
 * uses log1p: outside it (|2u - 1| >= 1/8, so |logit u| >= log(9/7) =
 * 0.25), the rounding of u / (1 - u), at most half an ulp, costs at most
 * 2 ulps of the logit; inside, log1p of an exact difference keeps every
 * digit of a small logit.  Only 1 draw in 8 takes the slower branch. */
#define SAMPLE_CENTRE 0.125

/* Inversion, loc + scale logit(u), of open uniforms u: u and 1 - u are
 * exact, so logit(u) = log(u / (1 - u)) = log1p((2u - 1)/(1 - u)) needs no
 * choice of tail (unlike sp_dist_sample_by_quantile, whose branch on u >
 * 1/2 is mispredicted half the time) and one logarithm. */
static void sample(const double *t, sp_pcg64 *g, double *out, size_t n)
{
  sp_rng_fill_open(g, out, n);
  const double loc = t[LOC], s = t[SCALE];
  for (size_t i = 0; i < n; i++) {
    const double u = out[i], v = 1.0 - u, d = 2.0 * u - 1.0;
    const double z = fabs(d) < SAMPLE_CENTRE ? log1p(d / v) : log(u / v);
    out[i] = loc + s * z;
  }
}

static double mean(const double *t) { return t[LOC]; }

static double variance(const double *t)
{
  return SP_DIST_PI * SP_DIST_PI / 3.0 * t[SCALE] * t[SCALE];
}

/* Starting values from the moments: location = mean, scale = sd sqrt(3)/pi. */
static sp_status start_impl(const double *x, size_t n, const int *fixed,
                            double *t, sp_error *err)
{
  sp_dist_summary s;
  sp_dist_summarise(x, n, &s);
  sp_status st = sp_dist_need_data("logistic", &s, 1, err);
  if (st != SP_OK) return st;
  if (!sp_dist_is_fixed(fixed, LOC)) t[LOC] = s.mean;
  if (!sp_dist_is_fixed(fixed, SCALE)) {
    st = sp_dist_need_spread("logistic", &s, err);
    if (st != SP_OK) return st;
    t[SCALE] = sqrt(s.m2 / (double)n) * sqrt(3.0) / SP_DIST_PI;
  }
  return SP_OK;
}

/* Every result passes check() (sp_dist_validate_fit). */
static sp_status fit_start(const double *x, size_t n, const int *fixed,
                           double *t, sp_error *err)
{
  return sp_dist_validate_fit(&sp_dist_logistic, start_impl(x, n, fixed, t, err), t,
                              err);
}

const sp_family sp_dist_logistic = {
  .name = "logistic",
  .title = "Logistic",
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
  .fit_mle = NULL,
};
